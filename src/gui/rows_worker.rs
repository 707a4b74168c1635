//! The Rows area's queries run on their own thread, which owns the polars
//! scan. The UI sends what it needs (a count, pages) tagged with the filters'
//! version; the thread answers the newest first and drops pages nobody is
//! looking at any more, so fast scrolling never builds a queue.

use std::sync::mpsc::{Receiver, Sender, channel};

use crate::explore::{ExploreError, Page, RowFilter, RowSource};
use crate::source::SourceInfo;

/// Rows per page.
pub const PAGE_ROWS: usize = 100;
/// Pages answered per round; older requests are handed back as dropped.
const PAGES_PER_ROUND: usize = 3;

pub enum Request {
    Count { version: u64, filters: Vec<RowFilter> },
    Page { version: u64, filters: Vec<RowFilter>, index: usize },
}

pub enum Answer {
    /// The scan is ready: its columns.
    Opened(Result<Vec<String>, String>),
    Count { version: u64, result: Result<u64, String> },
    Page { version: u64, index: usize, result: Result<Page, String> },
    /// Not answered because newer requests came first; ask again if still needed.
    Dropped { version: u64, index: usize },
}

pub struct RowsWorker {
    requests: Sender<Request>,
    pub answers: Receiver<Answer>,
}

impl RowsWorker {
    pub fn start(info: SourceInfo, wake: impl Fn() + Send + 'static) -> Self {
        let (request_tx, request_rx) = channel();
        let (answer_tx, answer_rx) = channel();
        std::thread::Builder::new()
            .name("plumbline-rows".into())
            .spawn(move || run(info, request_rx, answer_tx, wake))
            .expect("spawning a thread");
        RowsWorker { requests: request_tx, answers: answer_rx }
    }

    pub fn send(&self, request: Request) {
        // A closed channel means the thread ended after a failure it reported.
        let _ = self.requests.send(request);
    }
}

fn run(info: SourceInfo, requests: Receiver<Request>, answers: Sender<Answer>, wake: impl Fn()) {
    let opened = guarded(&info, || RowSource::open(&info));
    let source = match opened {
        Ok(source) => {
            let _ = answers.send(Answer::Opened(Ok(source.columns().to_vec())));
            source
        }
        Err(e) => {
            let _ = answers.send(Answer::Opened(Err(e)));
            wake();
            return;
        }
    };
    wake();
    while let Ok(first) = requests.recv() {
        let mut batch = vec![first];
        batch.extend(requests.try_iter());
        for answer in answer_round(&info, &source, batch) {
            if answers.send(answer).is_err() {
                return;
            }
            wake();
        }
    }
}

/// Answers one round of requests: only the newest version counts; its count
/// first, then its most recent pages.
fn answer_round(info: &SourceInfo, source: &RowSource, batch: Vec<Request>) -> Vec<Answer> {
    let newest = batch.iter().map(version_of).max().unwrap_or(0);
    let mut out = Vec::new();
    let mut pages = Vec::new();
    for request in batch {
        match request {
            Request::Count { version, filters } if version == newest => {
                let result = guarded(info, || source.count(&filters));
                out.push(Answer::Count { version, result });
            }
            Request::Page { version, filters, index } if version == newest => pages.push((index, filters)),
            Request::Page { version, index, .. } => out.push(Answer::Dropped { version, index }),
            Request::Count { .. } => {}
        }
    }
    let keep_from = pages.len().saturating_sub(PAGES_PER_ROUND);
    for (i, (index, filters)) in pages.into_iter().enumerate().rev() {
        if i < keep_from {
            out.push(Answer::Dropped { version: newest, index });
            continue;
        }
        let result = guarded(info, || source.page(&filters, (index * PAGE_ROWS) as u64, PAGE_ROWS));
        out.push(Answer::Page { version: newest, index, result });
    }
    out
}

fn version_of(request: &Request) -> u64 {
    match request {
        Request::Count { version, .. } | Request::Page { version, .. } => *version,
    }
}

/// Runs a query, turning an error or a panic inside polars into a message.
fn guarded<T>(info: &SourceInfo, query: impl FnOnce() -> Result<T, ExploreError>) -> Result<T, String> {
    match crate::source::guard::catch(query) {
        Ok(Ok(value)) => Ok(value),
        Ok(Err(e)) => Err(e.to_string()),
        Err(panic) => Err(format!("{}: the row query stopped unexpectedly: {panic}", info.path.display())),
    }
}
