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
    /// The first rows, to look at while the rest is read.
    FirstLook(Box<Scan>),
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
    /// window repaints (it is `Context::request_repaint` in the app). With
    /// `first_look`, a first look at the first rows comes before the whole
    /// read (a source no longer than a first look is read once).
    pub fn start(path: PathBuf, first_look: bool, wake: impl Fn() + Send + 'static) -> Self {
        let (tx, rx) = channel();
        let stop = Arc::new(AtomicBool::new(false));
        let thread_stop = stop.clone();
        let thread_path = path.clone();
        std::thread::Builder::new()
            .name("plumbline-scan".into())
            .spawn(move || run(thread_path, first_look, thread_stop, tx, wake))
            .expect("spawning a thread");
        ScanJob { path, messages: rx, stop }
    }

    pub fn stop(&self) {
        self.stop.store(true, Ordering::Relaxed);
    }
}

fn run(path: PathBuf, first_look: bool, stop: Arc<AtomicBool>, tx: Sender<JobMessage>, wake: impl Fn()) {
    if first_look {
        let options = ScanOptions { first_look: true, ..Default::default() };
        match read(&path, options, &stop, &tx, &wake) {
            Ok(scan) if matches!(scan.coverage, scan::Coverage::FirstLook(_)) && !stop.load(Ordering::Relaxed) => {
                let _ = tx.send(JobMessage::FirstLook(scan));
                wake();
            }
            // Read whole already, or broken: nothing more to read.
            done => {
                let _ = tx.send(JobMessage::Finished(done));
                wake();
                return;
            }
        }
    }
    let result = read(&path, ScanOptions::default(), &stop, &tx, &wake);
    let _ = tx.send(JobMessage::Finished(result));
    wake();
}

fn read(
    path: &std::path::Path,
    options: ScanOptions,
    stop: &AtomicBool,
    tx: &Sender<JobMessage>,
    wake: &impl Fn(),
) -> Result<Box<Scan>, String> {
    let outcome = crate::source::guard::catch(|| {
        scan::scan_path(path, OpenOptions::default(), options, stop, &mut |p| {
            let _ = tx.send(JobMessage::Progress(p));
            wake();
        })
    });
    match outcome {
        Ok(Ok(scan)) => Ok(Box::new(scan)),
        Ok(Err(e)) => Err(e.to_string()),
        Err(panic) => Err(format!("{}: reading stopped unexpectedly: {panic}", path.display())),
    }
}
