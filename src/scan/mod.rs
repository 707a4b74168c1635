//! Reading a source into its Shape: the one driver both the CLI and the
//! window call, with progress, stop, and an honest account of how complete
//! the result is.

use std::path::Path;
use std::sync::atomic::{AtomicBool, Ordering};

mod parts;
mod sample;
pub mod spread;

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
    /// Draw from every row, even where a spread sample (see [`spread`])
    /// would read only pieces of the source.
    pub every_row: bool,
}

/// How a sampled Shape was drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Sampled {
    /// Rows the sample was drawn from (every row read).
    pub from_rows: u64,
    pub seed: u64,
    /// Set when only some pieces of the source were read.
    pub spread: Option<Spread>,
}

/// The pieces a spread sample read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Spread {
    pub pieces_read: u64,
    pub pieces: u64,
}

impl Sampled {
    /// A sentence for people about a sample of `rows` rows.
    pub fn describe(&self, rows: u64) -> String {
        use crate::format::group_digits;
        match self.spread {
            None => format!(
                "a uniform sample of {} of the {} rows read (seed {}); statistics describe the sample",
                group_digits(rows),
                group_digits(self.from_rows),
                self.seed
            ),
            Some(spread) => format!(
                "a spread sample of {} rows, drawn uniformly from the {} rows in {} of the source's {} pieces, \
                 picked at random (seed {}); the other pieces were not read, and statistics describe the sample",
                group_digits(rows),
                group_digits(self.from_rows),
                group_digits(spread.pieces_read),
                group_digits(spread.pieces),
                self.seed
            ),
        }
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
            Coverage::FirstLook(n) => Some(format!(
                "a first look: the first {} rows only; the rest of the source was not read",
                crate::format::group_digits(*n)
            )),
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
        if !sample.every_row
            && let Some(pieces) = spread::plan(source, sample)
        {
            return spread::scan_spread(info, pieces, sample, options.profiles(), stop, progress);
        }
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

    fn spread(rows: usize, seed: u64, every_row: bool) -> ScanOptions {
        ScanOptions { sample: Some(SampleOptions { rows, seed, every_row }), ..Default::default() }
    }

    /// Lines whose `even` is a string every tenth row (a mixed kind).
    fn mixed_lines(dir: &Path, n: usize) -> std::path::PathBuf {
        let path = dir.join("mixed.jsonl");
        let text: String = (0..n)
            .map(|i| {
                if i % 10 == 3 {
                    format!("{{\"id\":{i},\"even\":\"odd\"}}\n")
                } else {
                    format!("{{\"id\":{i},\"even\":{}}}\n", i % 2 == 0)
                }
            })
            .collect();
        std::fs::write(&path, text).unwrap();
        path
    }

    #[test]
    fn a_spread_sample_reads_pieces_from_all_over_a_large_file_and_says_so() {
        let dir = tempfile::tempdir().unwrap();
        let path = mixed_lines(dir.path(), 200_000);
        let scan = scan_file(&path, spread(1_000, 5, false));
        assert_eq!((scan.coverage.clone(), scan.shape.rows), (Coverage::Full, 1_000));
        let sample = scan.sample.expect("sampled");
        let pieces = sample.spread.expect("a spread sample");
        assert!(pieces.pieces_read * 10 < pieces.pieces, "{pieces:?}");
        let wanted = 1_000 * spread::READ_FACTOR;
        assert!((wanted..wanted + 1_000).contains(&sample.from_rows), "read {} rows", sample.from_rows);
        let id = &scan.shape.find("id").unwrap().stats.as_ref().unwrap().numbers.as_ref().unwrap().moments;
        assert!(
            id.max().unwrap() - id.min().unwrap() > 100_000.0,
            "rows from all over: {:?}..{:?}",
            id.min(),
            id.max()
        );
        // The lines before a piece were never counted: its examples name no row.
        let even = scan.shape.find("even").unwrap();
        let examples = even.minority_examples();
        assert!(!examples.is_empty() && examples.iter().any(|(_, e)| e.row.is_none()), "{examples:?}");
        assert!(sample.describe(1_000).contains("a spread sample of 1,000 rows"), "{}", sample.describe(1_000));
        // The same seed draws the same sample.
        let again = scan_file(&path, spread(1_000, 5, false));
        assert_eq!(again.shape, scan.shape);
    }

    #[test]
    fn a_sample_from_every_row_reads_the_whole_file() {
        let dir = tempfile::tempdir().unwrap();
        let scan = scan_file(&mixed_lines(dir.path(), 200_000), spread(100, 5, true));
        let sample = scan.sample.expect("sampled");
        assert_eq!((sample.from_rows, sample.spread), (200_000, None));
        let examples =
            scan.shape.find("even").unwrap().minority_examples().into_iter().map(|(_, e)| e.row).collect::<Vec<_>>();
        assert!(!examples.is_empty() && examples.iter().all(|r| r.is_some_and(|r| r % 10 == 3)), "{examples:?}");
    }

    #[test]
    fn a_source_too_small_to_spread_is_sampled_from_every_row() {
        let dir = tempfile::tempdir().unwrap();
        // 3,000 rows hold fewer than 16 times the 4 × 100 rows a spread would read.
        let scan = scan_file(&mixed_lines(dir.path(), 3_000), spread(100, 5, false));
        let sample = scan.sample.expect("sampled");
        assert_eq!((sample.from_rows, sample.spread), (3_000, None));
    }

    /// Every piece of `path` in order: the `id`s it holds, and the row it says it starts at.
    fn pieces_of(path: &Path, rows: u64) -> Vec<(Vec<i64>, Option<u64>)> {
        use arrow_array::Array;
        let mut source = source::open(path, OpenOptions::default()).unwrap();
        let pieces = source.pieces(rows).expect("pieces");
        (0..pieces.count())
            .map(|i| {
                let (mut piece, first) = pieces.piece(i).unwrap();
                let mut ids = Vec::new();
                while let Some(batch) = piece.next_batch().unwrap() {
                    let source::Batch::Arrow(b) = batch else { panic!("Parquet gives Arrow batches") };
                    let column = b.column_by_name("id").unwrap();
                    let column = column.as_any().downcast_ref::<arrow_array::Int64Array>().unwrap();
                    ids.extend((0..column.len()).map(|r| column.value(r)));
                }
                (ids, first)
            })
            .collect()
    }

    fn parquet_of_ids(path: &Path, ids: std::ops::Range<i64>, group_rows: usize) {
        let batch = arrow_array::RecordBatch::try_from_iter([(
            "id",
            std::sync::Arc::new(arrow_array::Int64Array::from_iter_values(ids)) as arrow_array::ArrayRef,
        )])
        .unwrap();
        let props = parquet::file::properties::WriterProperties::builder()
            .set_max_row_group_row_count(Some(group_rows))
            .build();
        let file = std::fs::File::create(path).unwrap();
        let mut writer = parquet::arrow::ArrowWriter::try_new(file, batch.schema(), Some(props)).unwrap();
        writer.write(&batch).unwrap();
        writer.close().unwrap();
    }

    #[test]
    fn parquet_pieces_are_row_ranges_within_row_groups_that_know_their_first_row() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("ids.parquet");
        parquet_of_ids(&path, 0..2_500, 1_000);
        let pieces = pieces_of(&path, 300);
        // Each row group of 1,000 rows gives 4 pieces (300, 300, 300, 100); the last of 500, 2.
        assert_eq!(pieces.len(), 4 + 4 + 2);
        for (ids, first) in &pieces {
            assert_eq!(Some(ids[0] as u64), *first);
            assert!(ids.len() <= 300);
        }
        let all: Vec<i64> = pieces.into_iter().flat_map(|(ids, _)| ids).collect();
        assert_eq!(all, (0..2_500).collect::<Vec<_>>());
    }

    #[test]
    fn directory_pieces_are_its_parts_and_know_their_first_row_when_parts_state_their_rows() {
        let dir = tempfile::tempdir().unwrap();
        parquet_of_ids(&dir.path().join("a.parquet"), 0..70, 1_000);
        parquet_of_ids(&dir.path().join("b.parquet"), 70..100, 1_000);
        let pieces = pieces_of(dir.path(), 300);
        let firsts: Vec<Option<u64>> = pieces.iter().map(|(_, first)| *first).collect();
        assert_eq!(firsts, [Some(0), Some(70)]);
        assert_eq!(pieces[1].0[0], 70);
    }
}
