//! A part of a split source that opens its file only when first read and
//! closes it at its end, so splitting a source into thousands of parts
//! (row groups, line chunks, part files) holds only the parts being read
//! open, never all of them.

use super::{Batch, Progress, Source, SourceError, SourceInfo};

type Opener = Box<dyn FnOnce() -> Result<Box<dyn Source>, SourceError> + Send>;

pub struct LazyPart {
    info: SourceInfo,
    opener: Option<Opener>,
    inner: Option<Box<dyn Source>>,
    finished: bool,
}

impl LazyPart {
    /// `info` describes the part before it is opened (its path and bytes).
    pub fn new(info: SourceInfo, open: impl FnOnce() -> Result<Box<dyn Source>, SourceError> + Send + 'static) -> Self {
        LazyPart { info, opener: Some(Box::new(open)), inner: None, finished: false }
    }

    /// Whether the part's file is open now (for tests of the bound).
    pub fn is_open(&self) -> bool {
        self.inner.is_some()
    }
}

impl Source for LazyPart {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn progress(&self) -> Progress {
        match &self.inner {
            Some(inner) => inner.progress(),
            None if self.finished => Progress { done: self.info.bytes, total: self.info.bytes },
            None => Progress { done: 0, total: self.info.bytes },
        }
    }

    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        if self.finished {
            return Ok(None);
        }
        if self.inner.is_none() {
            let open = self.opener.take().expect("a part not finished still has its opener");
            match open() {
                Ok(inner) => self.inner = Some(inner),
                Err(e) => {
                    self.finished = true;
                    return Err(e);
                }
            }
        }
        let inner = self.inner.as_mut().expect("opened above");
        let next = inner.next_batch();
        if !matches!(next, Ok(Some(_))) {
            // The end or an error: the part is done, and its file closed.
            self.finished = true;
            self.inner = None;
        }
        next
    }
}
