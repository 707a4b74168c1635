//! Opening a path as a source of rows: format detection, decompression,
//! one reader per format behind the [`Source`] trait, and directories of
//! part files.
//!
//! A source yields its declared schema (where the format has one), facts
//! about the file read from metadata alone, and batches of rows. Nothing here
//! knows about shapes or profiles.

pub mod chunks;
pub mod csv;
pub mod decompress;
pub mod detect;
pub mod dir;
pub mod error;
pub mod facts;
pub mod guard;
pub mod ipc;
pub mod ipc_big_endian;
pub mod json;
pub mod lazy;
pub mod limits;
pub mod parquet;
pub mod pieces;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use arrow_array::RecordBatch;
use arrow_schema::SchemaRef;

pub use decompress::Compression;
pub use detect::{Format, FormatChoice};
pub use error::{Position, SourceError};
pub use facts::Facts;

use crate::value::Value;

/// Rows a text reader puts in one batch.
pub const TEXT_BATCH_ROWS: usize = 8192;
/// Rows an Arrow-backed reader asks for per batch.
pub const ARROW_BATCH_ROWS: usize = 8192;

/// What is known about a source before any row is read.
#[derive(Debug, Clone)]
pub struct SourceInfo {
    pub path: PathBuf,
    pub format: Format,
    pub compression: Compression,
    /// Size on disk of all files read.
    pub bytes: u64,
    /// Number of part files (1 for a single file).
    pub parts: usize,
    /// Row count when metadata states it (Parquet footer, IPC file blocks).
    pub rows: Option<u64>,
    /// The schema the file declares; `None` for JSON and CSV.
    pub schema: Option<SchemaRef>,
    /// Parquet physical/logical types by field path (first part for directories).
    pub parquet_leaves: Option<Arc<HashMap<String, parquet::ParquetLeaf>>>,
    pub facts: Facts,
}

/// A slice of rows: Arrow columns for typed formats, values for the rest.
#[derive(Debug, Clone)]
pub enum Batch {
    Arrow(RecordBatch),
    /// One [`Value::Object`] per row.
    Rows(Vec<Value>),
    /// JSON records cut but not yet parsed (see [`json::RawRecords`]).
    Json(json::RawRecords),
}

impl Batch {
    pub fn num_rows(&self) -> usize {
        match self {
            Batch::Arrow(b) => b.num_rows(),
            Batch::Rows(r) => r.len(),
            Batch::Json(r) => r.len(),
        }
    }
}

/// How far a read has come, in the unit the reader can count cheaply.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Progress {
    pub done: u64,
    pub total: u64,
}

/// One reader over one file or directory.
pub trait Source: Send {
    fn info(&self) -> &SourceInfo;
    /// The next batch, `Ok(None)` at the end. After an error the source is
    /// finished; what was yielded before it stands as a partial result.
    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError>;
    /// Bytes (or rows) of input consumed so far, of the total.
    fn progress(&self) -> Progress;
    /// Independent readers covering the source in order (e.g. one per
    /// Parquet row group), so they can be read in parallel; `None` when the
    /// source cannot be split or has started reading.
    fn split(&mut self) -> Option<Vec<Box<dyn Source>>> {
        None
    }
    /// For a part cut at a guessed record boundary (a CSV chunk): where it
    /// starts, and once read, where the record after its last one starts.
    fn seam(&self) -> Option<Seam> {
        None
    }
    /// This part read again from `byte`, when the part before it showed
    /// that its guessed start fell inside a record.
    fn reread_from(&self, _byte: u64) -> Option<Box<dyn Source>> {
        None
    }
    /// An error its consumer found in this part's rows (JSON is parsed
    /// after it is cut), placed in the whole file rather than the part.
    fn place_error(&self, e: SourceError) -> SourceError {
        e
    }
    /// The source cut into pieces of about `rows` rows each, any one of
    /// which can be read alone, for a spread sample; `None` when the format
    /// cannot be cut so (compressed streams, CSV, whose line breaks may sit
    /// inside quotes) or the source has started reading.
    fn pieces(&mut self, _rows: u64) -> Option<Box<dyn Pieces>> {
        None
    }
}

/// A source cut into many small pieces for a spread sample: reading a few
/// pieces picked at random touches only those places of the file.
pub trait Pieces: Send {
    /// How many pieces there are.
    fn count(&self) -> usize;
    /// About how many rows the whole source holds (exact when stated).
    fn estimated_rows(&self) -> u64;
    /// Piece `i` (of [`Pieces::count`]) as a source of its own, with the
    /// source row its first row is, when the rows before it are known.
    fn piece(&self, i: usize) -> Result<(Box<dyn Source>, Option<u64>), SourceError>;
}

/// Where a part of a split text file begins and where its reading ended
/// (see [`chunks`]): a part is valid when it begins where the part before
/// it ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Seam {
    pub start: u64,
    pub next_record: Option<u64>,
}

/// Options for opening a source.
#[derive(Debug, Clone, Copy, Default)]
pub struct OpenOptions {
    /// A format the user forced; checked against the content, never trusted.
    pub format: Option<FormatChoice>,
}

/// Opens a file or a directory of part files.
pub fn open(path: &Path, options: OpenOptions) -> Result<Box<dyn Source>, SourceError> {
    let meta = std::fs::metadata(path).map_err(|e| SourceError::io(path, e))?;
    if meta.is_dir() {
        return dir::open_directory(path, options);
    }
    open_file(path, options)
}

/// Opens a single file.
pub fn open_file(path: &Path, options: OpenOptions) -> Result<Box<dyn Source>, SourceError> {
    let detected = detect::detect(path, options.format)?;
    let bytes = std::fs::metadata(path).map_err(|e| SourceError::io(path, e))?.len();
    Ok(match detected.format {
        Format::Parquet => Box::new(parquet::ParquetSource::open(path, bytes)?),
        Format::ArrowFile | Format::ArrowStream => Box::new(ipc::IpcSource::open(path, detected.format, bytes)?),
        Format::Json | Format::JsonLines => {
            Box::new(json::JsonSource::open(path, detected.format, detected.compression, bytes)?)
        }
        Format::Csv | Format::Tsv => {
            Box::new(csv::CsvSource::open(path, detected.format, detected.compression, bytes)?)
        }
    })
}
