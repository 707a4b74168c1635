//! Long work off the UI thread: a scan runs on its own thread and reports
//! progress and its result through a channel, waking the UI each time.

use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{Receiver, Sender, channel};

use crate::scan::{self, Scan, ScanOptions};
use crate::source::{OpenOptions, Progress};

pub enum JobMessage {
    Progress(Progress),
    Finished(Result<Box<Scan>, String>),
}

/// A running scan: its messages and its stop switch.
pub struct ScanJob {
    pub path: PathBuf,
    pub messages: Receiver<JobMessage>,
    stop: Arc<AtomicBool>,
}

impl ScanJob {
    /// Starts scanning `path`; `wake` is called after every message so the
    /// window repaints (it is `Context::request_repaint` in the app).
    pub fn start(path: PathBuf, wake: impl Fn() + Send + 'static) -> Self {
        let (tx, rx) = channel();
        let stop = Arc::new(AtomicBool::new(false));
        let thread_stop = stop.clone();
        let thread_path = path.clone();
        std::thread::Builder::new()
            .name("plumbline-scan".into())
            .spawn(move || run(thread_path, thread_stop, tx, wake))
            .expect("spawning a thread");
        ScanJob { path, messages: rx, stop }
    }

    pub fn stop(&self) {
        self.stop.store(true, Ordering::Relaxed);
    }
}

fn run(path: PathBuf, stop: Arc<AtomicBool>, tx: Sender<JobMessage>, wake: impl Fn()) {
    let progress_tx = tx.clone();
    let outcome = crate::source::guard::catch(|| {
        scan::scan_path(&path, OpenOptions::default(), ScanOptions::default(), &stop, &mut |p| {
            let _ = progress_tx.send(JobMessage::Progress(p));
            wake();
        })
    });
    let result = match outcome {
        Ok(Ok(scan)) => Ok(Box::new(scan)),
        Ok(Err(e)) => Err(e.to_string()),
        Err(panic) => Err(format!("{}: reading stopped unexpectedly: {panic}", path.display())),
    };
    let _ = tx.send(JobMessage::Finished(result));
    wake();
}
