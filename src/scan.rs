//! Reading a source into its Shape: the one driver both the CLI and the
//! window call, with progress, stop, and an honest account of how complete
//! the result is.

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};

use crate::shape::{Shape, ShapeBuilder};
use crate::source::{self, OpenOptions, Progress, Source, SourceError, SourceInfo};

/// Rows read for a schema-less format when only the shape is asked for.
pub const SHAPE_ONLY_ROWS: u64 = 1000;

#[derive(Debug, Clone, Copy, Default)]
pub struct ScanOptions {
    /// Read only the schema and metadata; for JSON and CSV (which declare no
    /// schema) infer from the first [`SHAPE_ONLY_ROWS`] rows.
    pub shape_only: bool,
}

/// How much of the source the Shape covers.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Coverage {
    /// Every row.
    Full,
    /// Schema and metadata only; no rows read.
    SchemaOnly,
    /// The first rows only (shape-only on a schema-less format).
    FirstRows(u64),
    /// Stopped by the user after this many rows.
    Stopped(u64),
    /// The source broke after this many rows; the message says where.
    Broken { rows: u64, error: String },
}

impl Coverage {
    pub fn is_partial(&self) -> bool {
        !matches!(self, Coverage::Full | Coverage::SchemaOnly)
    }

    /// A sentence for people, or `None` when the shape is complete.
    pub fn describe(&self) -> Option<String> {
        match self {
            Coverage::Full => None,
            Coverage::SchemaOnly => Some("schema and metadata only; no rows were read".into()),
            Coverage::FirstRows(n) => Some(format!("inferred from the first {n} rows only")),
            Coverage::Stopped(n) => Some(format!("stopped by the user after {n} rows")),
            Coverage::Broken { rows, error } => Some(format!("the source broke after {rows} rows: {error}")),
        }
    }
}

#[derive(Debug, Clone)]
pub struct Scan {
    pub info: SourceInfo,
    pub shape: Shape,
    pub coverage: Coverage,
}

/// Opens `path` and reads its Shape. Errors opening the source are returned;
/// errors part-way are kept in the scan as [`Coverage::Broken`].
pub fn scan_path(
    path: &Path,
    open: OpenOptions,
    options: ScanOptions,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Result<Scan, SourceError> {
    let mut source = source::open(path, open)?;
    Ok(scan_source(source.as_mut(), options, stop, progress))
}

pub fn scan_source(
    source: &mut dyn Source,
    options: ScanOptions,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Scan {
    let info = source.info().clone();
    let mut builder = ShapeBuilder::new(&info, !options.shape_only);
    let has_schema = info.schema.is_some();
    if options.shape_only && has_schema {
        return Scan { info, shape: builder.finish(), coverage: Coverage::SchemaOnly };
    }
    if !options.shape_only
        && let Some(parts) = source.split()
    {
        return scan_parts(info, parts, stop, progress);
    }
    let row_limit = options.shape_only.then_some(SHAPE_ONLY_ROWS);
    let mut next = source.next_batch();
    let coverage = loop {
        if stop.load(Ordering::Relaxed) {
            break Coverage::Stopped(builder.rows());
        }
        if let Some(limit) = row_limit
            && builder.rows() >= limit
        {
            break Coverage::FirstRows(builder.rows());
        }
        let batch = match next {
            Ok(Some(batch)) => batch,
            Ok(None) => break Coverage::Full,
            Err(e) => break Coverage::Broken { rows: builder.rows(), error: e.to_string() },
        };
        let (added, following) = match row_limit {
            Some(limit) => {
                let added = builder.add(&truncate_batch(batch, (limit - builder.rows()) as usize));
                (added, if builder.rows() < limit { source.next_batch() } else { Ok(None) })
            }
            // Read the next batch while this one is observed.
            None => rayon::join(|| builder.add(&batch), || source.next_batch()),
        };
        progress(source.progress());
        if let Err(e) = added {
            break Coverage::Broken { rows: builder.rows(), error: e.to_string() };
        }
        next = following;
    };
    Scan { info, shape: builder.finish(), coverage }
}

/// Reads independent parts (row groups) a few at a time in parallel, each
/// into its own builder, merging each window into the result in order so
/// memory holds only a window's builders. A part that breaks or is stopped
/// ends the scan there, keeping everything before it.
fn scan_parts(info: SourceInfo, parts: Vec<Box<dyn Source>>, stop: &AtomicBool, progress: &mut dyn FnMut(Progress)) -> Scan {
    use rayon::prelude::*;

    let window = 2 * rayon::current_num_threads().max(1);
    let total = info.rows.unwrap_or(0);
    let mut merged = ShapeBuilder::new(&info, true);
    let mut parts = parts.into_iter();
    let mut coverage = Coverage::Full;
    'windows: loop {
        let batch: Vec<Box<dyn Source>> = parts.by_ref().take(window).collect();
        if batch.is_empty() {
            break;
        }
        let results: Vec<(ShapeBuilder, Option<String>, bool)> = batch
            .into_par_iter()
            .map(|mut part| {
                let mut builder = ShapeBuilder::new(&info, true);
                loop {
                    if stop.load(Ordering::Relaxed) {
                        return (builder, None, true);
                    }
                    match part.next_batch() {
                        Ok(Some(b)) => {
                            if let Err(e) = builder.add(&b) {
                                return (builder, Some(e.to_string()), false);
                            }
                        }
                        Ok(None) => return (builder, None, false),
                        Err(e) => return (builder, Some(e.to_string()), false),
                    }
                }
            })
            .collect();
        for (builder, error, stopped) in results {
            merged.merge_after(builder);
            if let Some(error) = error {
                coverage = Coverage::Broken { rows: merged.rows(), error };
                break 'windows;
            }
            if stopped {
                coverage = Coverage::Stopped(merged.rows());
                break 'windows;
            }
        }
        progress(Progress { done: merged.rows(), total });
    }
    Scan { info, shape: merged.finish(), coverage }
}

fn truncate_batch(batch: source::Batch, keep: usize) -> source::Batch {
    match batch {
        source::Batch::Arrow(b) if b.num_rows() > keep => source::Batch::Arrow(b.slice(0, keep)),
        source::Batch::Rows(mut r) if r.len() > keep => {
            r.truncate(keep);
            source::Batch::Rows(r)
        }
        source::Batch::Json(mut r) if r.len() > keep => {
            r.truncate(keep);
            source::Batch::Json(r)
        }
        other => other,
    }
}

