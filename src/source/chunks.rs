//! Cutting one uncompressed text file (JSON Lines, CSV, TSV) into byte
//! ranges that start at line boundaries, so the ranges can be read in
//! parallel, each by its own reader, opened only when read.
//!
//! JSON Lines cannot hold a raw line break inside a record, so every line
//! boundary is a record boundary. A CSV line break may sit inside a quoted
//! field, and no local test can tell (a quote in an unquoted field is a
//! literal, so counting quotes proves nothing); a CSV chunk therefore
//! reports where the record after its last one starts, and the scan checks
//! that against the next chunk's start, reading the next chunk again from
//! the right place when they differ (see [`Seam`]).

use std::fs::File;
use std::io::{BufRead, BufReader, Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};
use std::sync::{Arc, OnceLock};

use super::csv::{CsvLayout, CsvSource};
use super::json::JsonSource;
use super::{Batch, Progress, Seam, Source, SourceError, SourceInfo};

/// Bytes per chunk; a file smaller than two chunks is read as one. Our own
/// choice: large enough that merging a chunk's sketches costs nothing next
/// to reading it, small enough that two cores share even a 100 MB file.
pub const CHUNK_BYTES: u64 = 32 * 1024 * 1024;

/// The start of every chunk of `path` between `from` and `to`, the first
/// being `from`; each later one is the first line start at least `target`
/// bytes after the one before.
pub fn line_starts(path: &Path, from: u64, to: u64, target: u64) -> Result<Vec<u64>, SourceError> {
    let mut file = File::open(path).map_err(|e| SourceError::io(path, e))?;
    let mut starts = vec![from];
    loop {
        let guess = starts.last().expect("starts is never empty") + target.max(1);
        if guess >= to {
            return Ok(starts);
        }
        match next_line_start(&mut file, path, guess)? {
            Some(start) if start < to => starts.push(start),
            _ => return Ok(starts),
        }
    }
}

/// The first line start at or after byte `at` (`at` itself when the byte
/// before it is a line break), or `None` past the last line break.
pub fn next_line_start(file: &mut File, path: &Path, at: u64) -> Result<Option<u64>, SourceError> {
    if at == 0 {
        return Ok(Some(0));
    }
    file.seek(SeekFrom::Start(at - 1)).map_err(|e| SourceError::io(path, e))?;
    let mut buf = vec![0u8; 64 * 1024];
    let mut offset = at - 1;
    loop {
        let n = file.read(&mut buf).map_err(|e| SourceError::io(path, e))?;
        if n == 0 {
            return Ok(None);
        }
        if let Some(i) = memchr::memchr(b'\n', &buf[..n]) {
            return Ok(Some(offset + i as u64 + 1));
        }
        offset += n as u64;
    }
}

/// Line breaks in `path` before byte `end`: the lines a chunk starting at
/// `end` must add to its own line numbers. Counted only when an error needs
/// it, so a clean read never pays for it.
pub fn lines_before(path: &Path, end: u64) -> Result<u64, SourceError> {
    let file = File::open(path).map_err(|e| SourceError::io(path, e))?;
    let mut reader = BufReader::with_capacity(256 * 1024, file.take(end));
    let mut lines = 0u64;
    loop {
        let chunk = reader.fill_buf().map_err(|e| SourceError::io(path, e))?;
        if chunk.is_empty() {
            return Ok(lines);
        }
        lines += memchr::memchr_iter(b'\n', chunk).count() as u64;
        let n = chunk.len();
        reader.consume(n);
    }
}

/// The bytes of `path` from `start`, at most `limit` of them.
pub fn range_reader(path: &Path, start: u64, limit: Option<u64>) -> Result<Box<dyn BufRead + Send>, SourceError> {
    let mut file = File::open(path).map_err(|e| SourceError::io(path, e))?;
    file.seek(SeekFrom::Start(start)).map_err(|e| SourceError::io(path, e))?;
    const BUF: usize = 256 * 1024;
    Ok(match limit {
        Some(limit) => Box::new(BufReader::with_capacity(BUF, file.take(limit))),
        None => Box::new(BufReader::with_capacity(BUF, file)),
    })
}

/// How a chunk's records are read.
#[derive(Debug, Clone)]
pub enum ChunkFormat {
    JsonLines,
    Delimited(Arc<CsvLayout>),
}

/// One byte range of a text file, read on its own; `start` lies past
/// `end` when the part before ran past this whole range.
pub struct TextChunk {
    info: SourceInfo,
    file: Arc<PathBuf>,
    format: ChunkFormat,
    start: u64,
    end: u64,
    inner: Option<Box<dyn ChunkReader>>,
    opened: bool,
    finished: bool,
    next_record: Option<u64>,
    lines_before: Arc<OnceLock<Result<u64, String>>>,
}

/// What a chunk needs from the reader of its format.
pub trait ChunkReader: Send {
    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError>;
    /// Where the record after the last one read starts, once at the end.
    fn next_record(&self) -> Option<u64>;
}

impl TextChunk {
    pub fn new(whole: &SourceInfo, format: ChunkFormat, start: u64, end: u64) -> Self {
        let info = SourceInfo { bytes: end.saturating_sub(start), parts: 1, rows: None, ..whole.clone() };
        TextChunk {
            file: Arc::new(whole.path.clone()),
            info,
            format,
            start,
            end,
            inner: None,
            opened: false,
            finished: false,
            next_record: None,
            lines_before: Arc::new(OnceLock::new()),
        }
    }

    /// The chunks of a whole file, read from `first` (past any header).
    pub fn split(whole: &SourceInfo, format: ChunkFormat, first: u64, target: u64) -> Option<Vec<Box<dyn Source>>> {
        let starts = line_starts(&whole.path, first, whole.bytes, target).ok()?;
        if starts.len() < 2 {
            return None;
        }
        let ends = starts.iter().skip(1).copied().chain([whole.bytes]);
        let parts = starts
            .iter()
            .zip(ends)
            .map(|(&start, end)| Box::new(TextChunk::new(whole, format.clone(), start, end)) as Box<dyn Source>)
            .collect();
        Some(parts)
    }

    fn open(&self) -> Result<Box<dyn ChunkReader>, SourceError> {
        let path: &Path = &self.file;
        Ok(match &self.format {
            ChunkFormat::JsonLines => Box::new(JsonSource::open_lines_range(path, self.start, self.end)?),
            ChunkFormat::Delimited(layout) => {
                Box::new(CsvSource::open_range(path, layout.clone(), self.start, self.end)?)
            }
        })
    }
}

impl Source for TextChunk {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn progress(&self) -> Progress {
        let done = if self.finished { self.info.bytes } else { 0 };
        Progress { done, total: self.info.bytes }
    }

    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        if self.finished {
            return Ok(None);
        }
        if self.start >= self.end {
            // The part before ran past this whole chunk (one long quoted
            // field): nothing starts here.
            self.finished = true;
            self.next_record = Some(self.start);
            return Ok(None);
        }
        if !self.opened {
            self.opened = true;
            match self.open() {
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
            // The end or an error: close the file, keep where it stopped.
            self.next_record = inner.next_record();
            self.finished = true;
            self.inner = None;
        }
        next.map_err(|e| self.place_error(e))
    }

    fn seam(&self) -> Option<Seam> {
        Some(Seam { start: self.start, next_record: self.next_record })
    }

    fn reread_from(&self, byte: u64) -> Option<Box<dyn Source>> {
        Some(Box::new(TextChunk::new(&self.info, self.format.clone(), byte, self.end)))
    }

    /// Positions inside a chunk count lines (and, for CSV, bytes) from its
    /// own start; the lines before it are counted from the file once, on
    /// the first error. Errors of `next_batch` are placed already.
    fn place_error(&self, e: SourceError) -> SourceError {
        if self.start == 0 {
            return e;
        }
        let counted = self.lines_before.get_or_init(|| lines_before(&self.file, self.start).map_err(|e| e.to_string()));
        let relative_bytes = matches!(self.format, ChunkFormat::Delimited(_));
        match counted {
            Ok(lines) => e.shifted(*lines, if relative_bytes { self.start } else { 0 }),
            Err(_) => e,
        }
    }
}
