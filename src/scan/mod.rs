//! Reading a source into its Shape: the one driver both the CLI and the
//! window call, with progress, stop, and an honest account of how complete
//! the result is.

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};

mod parts;
mod sample;

use crate::shape::{Shape, ShapeBuilder};
use crate::source::{self, OpenOptions, Progress, Source, SourceError, SourceInfo};

/// Rows read for a schema-less format when only the shape is asked for.
pub const SHAPE_ONLY_ROWS: u64 = 1000;

/// Most rows a first look reads, and the most values (rows × leaf fields)
/// it reads from a declared schema, so a wide file gets fewer rows. Our own
/// choice, sized to answer within a second on two cores.
pub const FIRST_LOOK_ROWS: u64 = 10_000;
pub const FIRST_LOOK_VALUES: u64 = 2_000_000;
/// The fewest rows a first look reads, however wide the source.
pub const FIRST_LOOK_MIN_ROWS: u64 = 100;

/// Rows a first look at `info` reads: [`FIRST_LOOK_ROWS`], fewer for a
/// source with many declared leaf fields.
pub fn first_look_rows(info: &SourceInfo) -> u64 {
    let leaves = info.schema.as_ref().map_or(1, |s| s.fields().iter().map(|f| leaf_fields(f.data_type())).sum());
    (FIRST_LOOK_VALUES / leaves.max(1) as u64).clamp(FIRST_LOOK_MIN_ROWS, FIRST_LOOK_ROWS)
}

fn leaf_fields(data_type: &arrow_schema::DataType) -> usize {
    use arrow_schema::DataType as D;
    match data_type {
        D::Struct(fields) => fields.iter().map(|f| leaf_fields(f.data_type())).sum::<usize>().max(1),
        D::List(f) | D::LargeList(f) | D::ListView(f) | D::LargeListView(f) | D::FixedSizeList(f, _) | D::Map(f, _) => {
            leaf_fields(f.data_type())
        }
        _ => 1,
    }
}

#[derive(Debug, Clone, Copy, Default)]
pub struct ScanOptions {
    /// Read only the schema and metadata; for JSON and CSV (which declare no
    /// schema) infer from the first [`SHAPE_ONLY_ROWS`] rows.
    pub shape_only: bool,
    /// Profile a uniform sample of this many rows instead of every row.
    pub sample: Option<SampleOptions>,
    /// Read every row for the shape (kinds, nulls, missing keys) but keep
    /// no statistics (record types need only the shape).
    pub skip_statistics: bool,
    /// Profile only the first rows (see [`first_look_rows`]): the footer
    /// and the start of the first row group, or the first lines.
    pub first_look: bool,
}

impl ScanOptions {
    /// Whether the Shape's fields gather statistics.
    pub fn profiles(&self) -> bool {
        !self.shape_only && !self.skip_statistics
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SampleOptions {
    pub rows: usize,
    pub seed: u64,
}

/// How a sampled Shape was drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Sampled {
    /// Rows the sample was drawn from (every row read).
    pub from_rows: u64,
    pub seed: u64,
}

impl Sampled {
    /// A sentence for people about a sample of `rows` rows.
    pub fn describe(&self, rows: u64) -> String {
        format!(
            "a uniform sample of {} of the {} rows read (seed {}); statistics describe the sample",
            crate::format::group_digits(rows),
            crate::format::group_digits(self.from_rows),
            self.seed
        )
    }
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
    /// A first look: statistics of the first rows only.
    FirstLook(u64),
    /// Stopped by the user after this many rows.
    Stopped(u64),
    /// The source broke after this many rows; the message says where.
    Broken { rows: u64, error: String },
    /// Read from a partial report, which says why in its own words.
    PartialReport(String),
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
            Coverage::FirstLook(n) => {
                Some(format!("a first look: the first {} rows only; the rest of the source was not read", crate::format::group_digits(*n)))
            }
            Coverage::Stopped(n) => Some(format!("stopped by the user after {n} rows")),
            Coverage::Broken { rows, error } => Some(format!("the source broke after {rows} rows: {error}")),
            Coverage::PartialReport(note) => Some(note.clone()),
        }
    }
}

#[derive(Debug, Clone)]
pub struct Scan {
    pub info: SourceInfo,
    pub shape: Shape,
    pub coverage: Coverage,
    /// Set when the Shape describes a sample smaller than the rows read.
    pub sample: Option<Sampled>,
    /// Set when the scan was read back from a report rather than the data.
    pub from_report: Option<FromReport>,
}

/// Where a scan read from a report came from: there are no rows behind
/// it to page through or check, only the report's statistics.
#[derive(Debug, Clone, PartialEq)]
pub struct FromReport {
    pub file: std::path::PathBuf,
    /// The engine that computed it (`spark`), or `None` for Plumbline.
    pub engine: Option<String>,
    /// What the engine estimated, and within what error.
    pub approximations: Vec<String>,
    /// When the report was made (RFC 3339).
    pub generated_at: String,
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
    // A report stands for its source (unless a data format is forced).
    if open.format.is_none() && crate::report::read::looks_like_report(path) {
        return crate::report::read::read(path);
    }
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
    let mut builder = ShapeBuilder::new(&info, options.profiles());
    let has_schema = info.schema.is_some();
    if options.shape_only && has_schema {
        return Scan { info, shape: builder.finish(), coverage: Coverage::SchemaOnly, sample: None, from_report: None };
    }
    let reads_all = !options.shape_only && !options.first_look;
    if reads_all && let Some(sample) = options.sample {
        return sample::scan_sample(source, info, sample, options.profiles(), stop, progress);
    }
    if reads_all && let Some(parts) = source.split() {
        return parts::scan_parts(info, parts, options.profiles(), stop, progress);
    }
    let (row_limit, limited): (Option<u64>, fn(u64) -> Coverage) = if options.shape_only {
        (Some(SHAPE_ONLY_ROWS), Coverage::FirstRows)
    } else if options.first_look {
        (Some(first_look_rows(&info)), Coverage::FirstLook)
    } else {
        (None, Coverage::FirstRows)
    };
    let mut next = source.next_batch();
    let coverage = loop {
        if stop.load(Ordering::Relaxed) {
            break Coverage::Stopped(builder.rows());
        }
        if let Some(limit) = row_limit
            && builder.rows() >= limit
        {
            // A source that states its row count may have had no more.
            break if info.rows == Some(builder.rows()) { Coverage::Full } else { limited(builder.rows()) };
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
    Scan { info, shape: builder.finish(), coverage, sample: None, from_report: None }
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


#[cfg(test)]
mod tests {
    use super::*;

    fn scan_file(path: &Path, options: ScanOptions) -> Scan {
        scan_path(path, OpenOptions::default(), options, &AtomicBool::new(false), &mut |_| {}).unwrap()
    }

    fn lines(dir: &Path, n: usize) -> std::path::PathBuf {
        let path = dir.join(format!("{n}.jsonl"));
        let text: String = (0..n).map(|i| format!("{{\"id\":{i},\"even\":{}}}\n", i % 2 == 0)).collect();
        std::fs::write(&path, text).unwrap();
        path
    }

    #[test]
    fn a_first_look_reads_the_first_rows_and_says_so() {
        let dir = tempfile::tempdir().unwrap();
        let first_look = ScanOptions { first_look: true, ..Default::default() };
        let long = scan_file(&lines(dir.path(), 25_000), first_look);
        assert_eq!(long.coverage, Coverage::FirstLook(FIRST_LOOK_ROWS));
        assert_eq!(long.shape.rows, FIRST_LOOK_ROWS);
        let id = long.shape.find("id").unwrap();
        let numbers = id.stats.as_ref().unwrap().numbers.as_ref().unwrap();
        assert_eq!(numbers.moments.max(), Some((FIRST_LOOK_ROWS - 1) as f64), "statistics of the rows read");
        assert!(long.coverage.describe().unwrap().contains("first look: the first 10,000 rows"));
        // A source no longer than a first look is read whole.
        let short = scan_file(&lines(dir.path(), 300), first_look);
        assert_eq!((short.coverage, short.shape.rows), (Coverage::Full, 300));
    }

    #[test]
    fn a_first_look_at_a_wide_source_reads_fewer_rows() {
        use arrow_schema::{DataType, Field, Schema};
        let info = |fields: usize| SourceInfo {
            path: "wide.parquet".into(),
            format: source::Format::Parquet,
            compression: source::Compression::None,
            bytes: 1,
            parts: 1,
            rows: None,
            schema: Some(std::sync::Arc::new(Schema::new(
                (0..fields).map(|i| Field::new(format!("f{i}"), DataType::Int64, true)).collect::<Vec<_>>(),
            ))),
            parquet_leaves: None,
            facts: Default::default(),
        };
        assert_eq!(first_look_rows(&info(3)), FIRST_LOOK_ROWS);
        assert_eq!(first_look_rows(&info(2_000)), 1_000);
        assert_eq!(first_look_rows(&info(1_000_000)), FIRST_LOOK_MIN_ROWS);
    }
}
