//! JSON and JSON Lines sources, streamed record by record.
//!
//! Rows: each line of JSON Lines; each element of a top-level array; a lone
//! object or scalar is one row. An object is a row as it stands; any other
//! value becomes a row with one field named `value`.

pub mod frame;
pub mod parse;
pub mod records;

use std::io::{BufRead, Read};

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};

use super::decompress::{Compression, open_decompressed};
use super::error::{Position, SourceError, read_failure};
use super::limits::MAX_RECORD_BYTES;
use super::{Batch, Facts, Format, Progress, Source, SourceInfo, TEXT_BATCH_ROWS};
use crate::value::Value;
use frame::{ArrayFramer, FrameError, LineFramer, Start};
pub use records::RawRecords;

/// Name of the single field holding a row that is not an object.
pub const VALUE_FIELD: &str = "value";

/// Bytes of text after which a batch is closed even if it has few rows.
const BATCH_BYTES: usize = 8 * 1024 * 1024;

enum Framer {
    Lines(LineFramer<Box<dyn BufRead + Send>>),
    Array(ArrayFramer<Box<dyn BufRead + Send>>),
    /// A single document that is not an array; taken on the first call.
    Single(Option<Box<dyn BufRead + Send>>),
}

pub struct JsonSource {
    info: SourceInfo,
    framer: Framer,
    file_bytes_read: Arc<AtomicU64>,
    shared_path: Arc<PathBuf>,
    finished: bool,
    /// An error met after some rows of a batch: those rows go out first.
    pending_error: Option<SourceError>,
    /// Where this reader stops, when it reads one chunk of the file.
    range_end: Option<u64>,
}

impl JsonSource {
    pub fn open(path: &Path, format: Format, compression: Compression, bytes: u64) -> Result<Self, SourceError> {
        let opened = open_decompressed(path, compression)?;
        let mut reader = opened.reader;
        let framer = match format {
            Format::JsonLines => Framer::Lines(LineFramer::new(reader)),
            _ => {
                if first_significant_byte(&mut reader, path)? == Some(b'[') {
                    Framer::Array(ArrayFramer::new(reader))
                } else {
                    Framer::Single(Some(reader))
                }
            }
        };
        let info = SourceInfo {
            path: path.to_path_buf(),
            format,
            compression,
            bytes,
            parts: 1,
            rows: None,
            schema: None,
            parquet_leaves: None,
            facts: Facts::default(),
        };
        Ok(JsonSource {
            info,
            framer,
            file_bytes_read: opened.file_bytes_read,
            shared_path: Arc::new(path.to_path_buf()),
            finished: false,
            pending_error: None,
            range_end: None,
        })
    }

    /// The lines of `path` from byte `start` (a line start) to `end`, as
    /// one chunk of a JSON Lines file (see [`crate::source::chunks`]).
    pub fn open_lines_range(path: &Path, start: u64, end: u64) -> Result<Self, SourceError> {
        let reader = super::chunks::range_reader(path, start, Some(end - start))?;
        let info = SourceInfo {
            path: path.to_path_buf(),
            format: Format::JsonLines,
            compression: Compression::None,
            bytes: end - start,
            parts: 1,
            rows: None,
            schema: None,
            parquet_leaves: None,
            facts: Facts::default(),
        };
        Ok(JsonSource {
            info,
            framer: Framer::Lines(LineFramer::starting_at(reader, start)),
            file_bytes_read: Arc::new(AtomicU64::new(0)),
            shared_path: Arc::new(path.to_path_buf()),
            finished: false,
            pending_error: None,
            range_end: Some(end),
        })
    }

    fn path(&self) -> PathBuf {
        self.info.path.clone()
    }

    fn frame_error(&self, e: FrameError) -> SourceError {
        let path = self.path();
        let format = self.info.format;
        match e {
            FrameError::Io(io, at) => read_failure(&path, format, text_position(at), io),
            FrameError::Syntax(msg, at) => SourceError::malformed(&path, format, text_position(at), msg),
            FrameError::TooLong(at) => SourceError::Limit {
                path,
                position: text_position(at),
                message: format!("a record is longer than {MAX_RECORD_BYTES} bytes (limit against hostile files)"),
            },
        }
    }

    fn read_single(&mut self, mut reader: Box<dyn BufRead + Send>) -> Result<Value, SourceError> {
        let mut doc = Vec::new();
        let limit = MAX_RECORD_BYTES as u64 + 1;
        reader
            .by_ref()
            .take(limit)
            .read_to_end(&mut doc)
            .map_err(|e| read_failure(&self.info.path, self.info.format, Position::Byte(doc.len() as u64), e))?;
        if doc.len() as u64 >= limit {
            return Err(SourceError::Limit {
                path: self.path(),
                position: Position::File,
                message: format!(
                    "a single JSON document larger than {MAX_RECORD_BYTES} bytes that is not an array (limit against hostile files)"
                ),
            });
        }
        let (body, bom) = match doc.strip_prefix(&[0xEF, 0xBB, 0xBF][..]) {
            Some(rest) => (rest, 3u64),
            None => (&doc[..], 0),
        };
        let start = Start { byte: bom, line: 1, column: 1 + bom };
        let body_len = body.len();
        let text = body.to_vec();
        RawRecords::new(text, vec![(0, body_len, start)], self.shared_path.clone(), self.info.format).row(0)
    }
}

/// Wraps a parsed value as a row.
pub fn as_row(value: Value) -> Value {
    match value {
        Value::Object(_) => value,
        other => Value::Object(vec![(VALUE_FIELD.to_string(), other)]),
    }
}

impl JsonSource {
    /// The file in chunks of about `target` bytes (tests use small ones).
    /// Whether this reads a whole uncompressed JSON Lines file and has not
    /// started: only then can it be cut by byte offsets.
    fn is_unread_lines_file(&self) -> bool {
        let untouched = self.file_bytes_read.load(Ordering::Relaxed) == 0 && !self.finished;
        let whole_file = self.range_end.is_none();
        self.info.format == Format::JsonLines && self.info.compression == Compression::None && untouched && whole_file
    }

    pub(crate) fn split_every(&mut self, target: u64) -> Option<Vec<Box<dyn Source>>> {
        super::chunks::TextChunk::split(&self.info, super::chunks::ChunkFormat::JsonLines, 0, target)
    }
}

fn text_position(at: Start) -> Position {
    Position::Text { line: at.line, column: at.column, byte: at.byte }
}

/// Peeks past a BOM and whitespace without consuming anything.
fn first_significant_byte(reader: &mut Box<dyn BufRead + Send>, path: &Path) -> Result<Option<u8>, SourceError> {
    let chunk = reader.fill_buf().map_err(|e| read_failure(path, Format::Json, Position::Byte(0), e))?;
    let chunk = super::detect::strip_bom(chunk);
    Ok(chunk.iter().copied().find(|&b| !parse::is_json_ws(b)))
}

impl super::chunks::ChunkReader for JsonSource {
    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        Source::next_batch(self)
    }

    /// A JSON Lines chunk ends at a line start, where the next one begins.
    fn next_record(&self) -> Option<u64> {
        self.range_end
    }
}

impl Source for JsonSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    /// An uncompressed JSON Lines file of at least two chunks, in chunks
    /// read in parallel (a line break never sits inside a JSON record).
    fn split(&mut self) -> Option<Vec<Box<dyn Source>>> {
        if !self.is_unread_lines_file() || self.info.bytes < 2 * super::chunks::CHUNK_BYTES {
            return None;
        }
        self.split_every(super::chunks::CHUNK_BYTES)
    }

    fn pieces(&mut self, rows: u64) -> Option<Box<dyn super::Pieces>> {
        if !self.is_unread_lines_file() {
            return None;
        }
        // A file that cannot be probed is read whole, which reports the error.
        let pieces = super::pieces::LinePieces::new(&self.info, rows).ok()?;
        Some(Box::new(pieces))
    }

    fn progress(&self) -> Progress {
        Progress { done: self.file_bytes_read.load(Ordering::Relaxed), total: self.info.bytes }
    }

    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        if let Some(e) = self.pending_error.take() {
            return Err(e);
        }
        if self.finished {
            return Ok(None);
        }
        if let Framer::Single(reader) = &mut self.framer {
            self.finished = true;
            let Some(reader) = reader.take() else {
                return Ok(None);
            };
            let row = self.read_single(reader)?;
            return Ok(Some(Batch::Rows(vec![row])));
        }
        // Only cut the records here; the consumer parses them in parallel.
        // Each batch owns its text: the records hand it to their consumer.
        let mut text = Vec::new();
        let mut records: Vec<(usize, usize, Start)> = Vec::new();
        while records.len() < TEXT_BATCH_ROWS && text.len() < BATCH_BYTES {
            let from = text.len();
            let next = match &mut self.framer {
                Framer::Lines(f) => f.append_record(&mut text),
                Framer::Array(f) => f.append_record(&mut text),
                Framer::Single(_) => unreachable!("handled above"),
            };
            match next {
                Ok(Some(start)) => records.push((from, text.len(), start)),
                Ok(None) => {
                    self.finished = true;
                    break;
                }
                Err(e) => {
                    self.finished = true;
                    self.pending_error = Some(self.frame_error(e));
                    break;
                }
            }
        }
        if records.is_empty() {
            return match self.pending_error.take() {
                Some(e) => Err(e),
                None => Ok(None),
            };
        }
        Ok(Some(Batch::Json(RawRecords::new(text, records, self.shared_path.clone(), self.info.format))))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read_all(name: &str, text: &str, format: Format) -> Result<Vec<Value>, SourceError> {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(name);
        std::fs::write(&path, text).unwrap();
        let mut src = JsonSource::open(&path, format, Compression::None, text.len() as u64)?;
        let mut rows = Vec::new();
        while let Some(b) = src.next_batch()? {
            match b {
                Batch::Rows(r) => rows.extend(r),
                Batch::Json(raw) => {
                    let (r, error) = raw.rows();
                    rows.extend(r);
                    if let Some(e) = error {
                        return Err(e);
                    }
                }
                Batch::Arrow(_) => panic!("json gives no Arrow batches"),
            }
        }
        Ok(rows)
    }

    #[test]
    fn top_level_scalars_and_arrays_become_value_rows() {
        let rows = read_all("a.json", "[{\"a\":1}, 2, [3]]", Format::Json).unwrap();
        assert_eq!(rows.len(), 3);
        assert_eq!(rows[1], Value::Object(vec![("value".into(), Value::Int(2))]));
        let rows = read_all("s.json", " \"x\" ", Format::Json).unwrap();
        assert_eq!(rows, vec![Value::Object(vec![("value".into(), Value::Str("x".into()))])]);
    }

    #[test]
    fn errors_point_into_the_file() {
        let e = read_all("l.jsonl", "{\"a\":1}\n{\"a\" 2}\n", Format::JsonLines).unwrap_err();
        assert_eq!(e.to_string().split(": ").nth(1), Some("line 2, column 6 (byte 13)"), "{e}");
        let e = read_all("a.json", "[\n {\"a\":1},\n {\"a\":}\n]", Format::Json).unwrap_err();
        assert!(e.to_string().contains("line 3, column 7"), "{e}");
        let e = read_all("d.json", "{\"a\":\n  tru}", Format::Json).unwrap_err();
        assert!(e.to_string().contains("line 2, column 3"), "{e}");
    }
}
