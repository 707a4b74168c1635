//! A directory of part files read as one source.
//!
//! Every data file below the directory is a part; `_SUCCESS`, `*.crc`,
//! hidden (`.`/`_`-prefixed) and zero-byte files are skipped. All parts must
//! be of one format. `key=value` path segments (Hive-style partitions)
//! become fields of every row of the parts beneath them; a value of
//! `__HIVE_DEFAULT_PARTITION__` is null. Parts whose declared schemas differ
//! from the first part's are reported field by field in the facts.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use arrow_array::{ArrayRef, Int64Array, RecordBatch, StringArray};
use arrow_schema::{DataType, Field, Schema, SchemaRef};

use super::error::SourceError;
use super::lazy::LazyPart;
use super::{Batch, Format, OpenOptions, Progress, Source, SourceInfo, detect, open_file};
use crate::value::Value;

const NULL_PARTITION: &str = "__HIVE_DEFAULT_PARTITION__";

#[derive(Debug, Clone)]
struct Part {
    path: PathBuf,
    bytes: u64,
    /// Rows when the part states them (Parquet and Arrow footers).
    rows: Option<u64>,
    /// `key=value` segments between the directory and the file.
    partitions: Vec<(String, Option<String>)>,
}

/// A partition field and whether all its values are integers.
#[derive(Debug, Clone)]
struct PartitionField {
    name: String,
    integer: bool,
}

pub struct DirSource {
    info: SourceInfo,
    parts: Vec<Part>,
    partition_fields: Arc<Vec<PartitionField>>,
    options: OpenOptions,
    next_part: usize,
    current: Option<Box<dyn Source>>,
    /// Bytes of the parts already finished, for progress.
    bytes_done: u64,
}

pub fn open_directory(dir: &Path, options: OpenOptions) -> Result<Box<dyn Source>, SourceError> {
    let mut files = Vec::new();
    collect_files(dir, &mut files)?;
    files.sort();
    if files.is_empty() {
        return Err(SourceError::Directory {
            path: dir.to_path_buf(),
            message: "no data files (skipping _SUCCESS, *.crc, hidden and empty files)".into(),
        });
    }
    let first_format = detect::detect(&files[0], options.format)?.format;
    let mut parts = Vec::new();
    let mut bytes = 0;
    let mut schemas: Vec<(PathBuf, Option<SchemaRef>, Option<u64>)> = Vec::new();
    let mut parquet_leaves = None;
    let peeks = peek_all(&files, first_format, options);
    for (file, peek) in files.into_iter().zip(peeks) {
        let peek = peek?;
        bytes += peek.bytes;
        if parquet_leaves.is_none() {
            parquet_leaves = peek.parquet_leaves;
        }
        schemas.push((file.clone(), peek.schema, peek.rows));
        let partitions = partition_segments(dir, &file);
        parts.push(Part { path: file, bytes: peek.bytes, rows: peek.rows, partitions });
    }
    let format = first_format;
    let partition_fields = partition_fields(&parts);
    let first_schema = schemas[0].1.clone();
    let schema = first_schema.as_ref().map(|s| with_partition_fields(s, &partition_fields));
    let rows = schemas.iter().map(|(_, _, r)| *r).sum::<Option<u64>>();
    let facts = super::Facts {
        part_files: parts.iter().map(|p| relative(dir, &p.path)).collect(),
        partition_fields: partition_fields.iter().map(|f| f.name.clone()).collect(),
        schema_differences: schema_differences(dir, &schemas),
        ..super::Facts::default()
    };
    let info = SourceInfo {
        path: dir.to_path_buf(),
        format,
        compression: super::Compression::None,
        bytes,
        parts: parts.len(),
        rows,
        schema,
        parquet_leaves,
        facts,
    };
    let partition_fields = Arc::new(partition_fields);
    Ok(Box::new(DirSource { info, parts, partition_fields, options, next_part: 0, current: None, bytes_done: 0 }))
}

/// What opening a directory needs to know of one part file.
struct Peek {
    bytes: u64,
    /// Declared schema and rows: from the footer of a Parquet or Arrow part.
    schema: Option<SchemaRef>,
    rows: Option<u64>,
    parquet_leaves: Option<Arc<std::collections::HashMap<String, super::parquet::ParquetLeaf>>>,
}

/// Part files peeked at once. Opening thousands of parts is mostly waiting
/// on the disk for each footer (a few small reads per part), and a disk
/// serves many reads at a time. With a cold page cache, a `--sample 10000`
/// of 5,000 Parquet parts took 2.2 s peeking one part at a time, 1.0 s eight
/// at a time and 0.8 s 32 at a time (medians; peak memory the same 78 MB
/// once mimalloc stopped asking for huge pages, see Cargo.toml). Our own
/// choice, from those figures.
const PEEKS_AT_ONCE: usize = 32;

/// Peeks at every file, [`PEEKS_AT_ONCE`] at a time; results in file order.
fn peek_all(files: &[PathBuf], first_format: Format, options: OpenOptions) -> Vec<Result<Peek, SourceError>> {
    use std::sync::atomic::{AtomicUsize, Ordering};
    let next = AtomicUsize::new(0);
    let mut results: Vec<(usize, Result<Peek, SourceError>)> = std::thread::scope(|scope| {
        let workers: Vec<_> = (0..PEEKS_AT_ONCE.min(files.len()))
            .map(|_| {
                scope.spawn(|| {
                    let mut done = Vec::new();
                    loop {
                        let i = next.fetch_add(1, Ordering::Relaxed);
                        let Some(file) = files.get(i) else { break done };
                        done.push((i, peek(file, &files[0], first_format, options)));
                    }
                })
            })
            .collect();
        // Decoders' panics are caught where they are called; one that is
        // not goes on as it would have in this thread.
        workers.into_iter().flat_map(|w| w.join().unwrap_or_else(|panic| std::panic::resume_unwind(panic))).collect()
    });
    results.sort_by_key(|(i, _)| *i);
    results.into_iter().map(|(_, r)| r).collect()
}

/// Detects `file`'s format, checks it against the first part's, and reads
/// its footer when it has one.
fn peek(file: &Path, first_path: &Path, first_format: Format, options: OpenOptions) -> Result<Peek, SourceError> {
    let detected = detect::detect(file, options.format)?;
    if !same_family(first_format, detected.format) {
        return Err(SourceError::Directory {
            path: file.to_path_buf(),
            message: format!(
                "this part is {} but {} is {}; all parts of a directory must be one format",
                detected.format.label(),
                first_path.display(),
                first_format.label()
            ),
        });
    }
    let bytes = std::fs::metadata(file).map_err(|e| SourceError::io(file, e))?.len();
    if detected.format.is_text() {
        return Ok(Peek { bytes, schema: None, rows: None, parquet_leaves: None });
    }
    let source = open_file(file, options)?;
    let info = source.info();
    Ok(Peek { bytes, schema: info.schema.clone(), rows: info.rows, parquet_leaves: info.parquet_leaves.clone() })
}

/// A one-line JSON Lines part looks like a JSON document; both give the same rows.
fn same_family(a: Format, b: Format) -> bool {
    let json = |f| matches!(f, Format::Json | Format::JsonLines);
    a == b || (json(a) && json(b))
}

fn skipped(name: &str) -> bool {
    name.starts_with('.') || name.starts_with('_') || name.ends_with(".crc")
}

fn collect_files(dir: &Path, out: &mut Vec<PathBuf>) -> Result<(), SourceError> {
    let entries = std::fs::read_dir(dir).map_err(|e| SourceError::io(dir, e))?;
    for entry in entries {
        let entry = entry.map_err(|e| SourceError::io(dir, e))?;
        let name = entry.file_name().to_string_lossy().to_string();
        if skipped(&name) {
            continue;
        }
        let path = entry.path();
        let meta = std::fs::metadata(&path).map_err(|e| SourceError::io(&path, e))?;
        if meta.is_dir() {
            collect_files(&path, out)?;
        } else if meta.len() > 0 {
            out.push(path);
        }
    }
    Ok(())
}

fn relative(dir: &Path, file: &Path) -> String {
    file.strip_prefix(dir).unwrap_or(file).display().to_string()
}

fn partition_segments(dir: &Path, file: &Path) -> Vec<(String, Option<String>)> {
    let rel = file.strip_prefix(dir).unwrap_or(file);
    let parent = rel.parent().map(Path::to_path_buf).unwrap_or_default();
    parent
        .components()
        .filter_map(|c| {
            let seg = c.as_os_str().to_string_lossy();
            let (k, v) = seg.split_once('=')?;
            let value = (v != NULL_PARTITION).then(|| percent_decode(v));
            Some((k.to_string(), value))
        })
        .collect()
}

/// Hive escapes special characters in partition values as `%XX`.
fn percent_decode(s: &str) -> String {
    let bytes = s.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        let hex = |b: u8| (b as char).to_digit(16);
        if bytes[i] == b'%'
            && i + 2 < bytes.len()
            && let (Some(hi), Some(lo)) = (hex(bytes[i + 1]), hex(bytes[i + 2]))
        {
            out.push((hi * 16 + lo) as u8);
            i += 3;
            continue;
        }
        out.push(bytes[i]);
        i += 1;
    }
    String::from_utf8_lossy(&out).into_owned()
}

fn partition_fields(parts: &[Part]) -> Vec<PartitionField> {
    let mut fields: Vec<PartitionField> = Vec::new();
    for part in parts {
        for (key, value) in &part.partitions {
            let is_int = value.as_deref().is_none_or(|v| v.parse::<i64>().is_ok());
            match fields.iter_mut().find(|f| &f.name == key) {
                Some(f) => f.integer &= is_int,
                None => fields.push(PartitionField { name: key.clone(), integer: is_int }),
            }
        }
    }
    fields
}

fn partition_type(f: &PartitionField) -> DataType {
    if f.integer { DataType::Int64 } else { DataType::Utf8 }
}

fn with_partition_fields(schema: &Schema, fields: &[PartitionField]) -> SchemaRef {
    let mut all: Vec<Field> = schema.fields().iter().map(|f| f.as_ref().clone()).collect();
    for f in fields {
        if schema.field_with_name(&f.name).is_err() {
            all.push(Field::new(&f.name, partition_type(f), true));
        }
    }
    Arc::new(Schema::new_with_metadata(all, schema.metadata().clone()))
}

fn schema_differences(dir: &Path, schemas: &[(PathBuf, Option<SchemaRef>, Option<u64>)]) -> Vec<String> {
    let Some((first_path, Some(first), _)) = schemas.first() else {
        return Vec::new();
    };
    let first_name = relative(dir, first_path);
    let mut out = Vec::new();
    for (path, schema, _) in &schemas[1..] {
        let Some(schema) = schema else { continue };
        let name = relative(dir, path);
        for field in first.fields() {
            match schema.field_with_name(field.name()) {
                Err(_) => out.push(format!("{name}: lacks field `{}` (present in {first_name})", field.name())),
                Ok(other) if other.data_type() != field.data_type() => out.push(format!(
                    "{name}: field `{}` is {} here but {} in {first_name}",
                    field.name(),
                    other.data_type(),
                    field.data_type()
                )),
                Ok(other) if other.is_nullable() != field.is_nullable() => out.push(format!(
                    "{name}: field `{}` is {} here but {} in {first_name}",
                    field.name(),
                    nullability(other.is_nullable()),
                    nullability(field.is_nullable())
                )),
                Ok(_) => {}
            }
        }
        for field in schema.fields() {
            if first.field_with_name(field.name()).is_err() {
                out.push(format!("{name}: adds field `{}` ({}) not in {first_name}", field.name(), field.data_type()));
            }
        }
    }
    out
}

fn nullability(nullable: bool) -> &'static str {
    if nullable { "nullable" } else { "not nullable" }
}

/// Adds the partition fields of `part` to every row of `batch`.
fn add_partitions(partition_fields: &[PartitionField], part: &Part, batch: Batch) -> Result<Batch, SourceError> {
    if part.partitions.is_empty() {
        return Ok(batch);
    }
    let value_of =
        |field: &PartitionField| part.partitions.iter().find(|(k, _)| *k == field.name).and_then(|(_, v)| v.clone());
    let partition_values: Vec<(String, Value)> = partition_fields
        .iter()
        .map(|field| {
            let value = match value_of(field) {
                None => Value::Null,
                Some(v) if field.integer => v.parse().map(Value::Int).unwrap_or(Value::Str(v)),
                Some(v) => Value::Str(v),
            };
            (field.name.clone(), value)
        })
        .collect();
    match batch {
        Batch::Json(mut records) => {
            records.add_members(partition_values);
            Ok(Batch::Json(records))
        }
        Batch::Rows(mut rows) => {
            for row in &mut rows {
                let Value::Object(members) = row else {
                    continue;
                };
                for (name, value) in &partition_values {
                    if !members.iter().any(|(k, _)| k == name) {
                        members.push((name.clone(), value.clone()));
                    }
                }
            }
            Ok(Batch::Rows(rows))
        }
        Batch::Arrow(batch) => {
            let n = batch.num_rows();
            let mut fields: Vec<Field> = batch.schema().fields().iter().map(|f| f.as_ref().clone()).collect();
            let mut columns: Vec<ArrayRef> = batch.columns().to_vec();
            for field in partition_fields {
                if batch.schema().field_with_name(&field.name).is_ok() {
                    continue;
                }
                let value = value_of(field);
                let column: ArrayRef = if field.integer {
                    let v = value.and_then(|v| v.parse::<i64>().ok());
                    Arc::new(Int64Array::from(vec![v; n]))
                } else {
                    Arc::new(StringArray::from(vec![value; n]))
                };
                fields.push(Field::new(&field.name, partition_type(field), true));
                columns.push(column);
            }
            let schema = Arc::new(Schema::new_with_metadata(fields, batch.schema().metadata().clone()));
            RecordBatch::try_new(schema, columns).map(Batch::Arrow).map_err(|e| SourceError::Directory {
                path: part.path.clone(),
                message: format!("cannot add partition fields: {e}"),
            })
        }
    }
}

/// One part file read on its own, with its partition fields.
fn open_part(
    part: Part,
    partition_fields: Arc<Vec<PartitionField>>,
    options: OpenOptions,
) -> Result<Box<dyn Source>, SourceError> {
    let inner = open_file(&part.path, options)?;
    Ok(Box::new(PartSource { inner, part, partition_fields }))
}

/// A directory's part files as the pieces of a spread sample.
struct PartPieces {
    parts: Vec<Part>,
    partition_fields: Arc<Vec<PartitionField>>,
    options: OpenOptions,
    estimated_rows: u64,
}

impl super::Pieces for PartPieces {
    fn count(&self) -> usize {
        self.parts.len()
    }

    fn estimated_rows(&self) -> u64 {
        self.estimated_rows
    }

    fn piece(&self, i: usize) -> Result<(Box<dyn Source>, Option<u64>), SourceError> {
        let rows_before: Option<u64> = self.parts[..i].iter().map(|p| p.rows).sum();
        Ok((open_part(self.parts[i].clone(), self.partition_fields.clone(), self.options)?, rows_before))
    }
}

struct PartSource {
    inner: Box<dyn Source>,
    part: Part,
    partition_fields: Arc<Vec<PartitionField>>,
}

impl Source for PartSource {
    fn info(&self) -> &SourceInfo {
        self.inner.info()
    }

    fn progress(&self) -> Progress {
        self.inner.progress()
    }

    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        match self.inner.next_batch()? {
            Some(batch) => add_partitions(&self.partition_fields, &self.part, batch).map(Some),
            None => Ok(None),
        }
    }
}

impl Source for DirSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn progress(&self) -> Progress {
        let current = self.current.as_ref().map_or(0, |c| {
            let p = c.progress();
            if p.total == 0 { 0 } else { c.info().bytes * p.done.min(p.total) / p.total }
        });
        Progress { done: self.bytes_done + current, total: self.info.bytes }
    }

    /// One part per file, read in parallel, each opened only when read.
    fn split(&mut self) -> Option<Vec<Box<dyn Source>>> {
        if self.next_part != 0 || self.current.is_some() || self.parts.len() < 2 {
            return None;
        }
        // Without the directory's facts: they list every part, and a copy
        // in each part made memory grow with the square of the parts.
        let shared = SourceInfo { facts: super::Facts::default(), ..self.info.clone() };
        let parts = self.parts.iter().map(|part| {
            let info = SourceInfo { path: part.path.clone(), bytes: part.bytes, parts: 1, ..shared.clone() };
            let (part, partition_fields, options) = (part.clone(), self.partition_fields.clone(), self.options);
            Box::new(LazyPart::new(info, move || open_part(part, partition_fields, options))) as Box<dyn Source>
        });
        Some(parts.collect())
    }

    /// Whole part files are the pieces: a part is read alone anyway.
    fn pieces(&mut self, _rows: u64) -> Option<Box<dyn super::Pieces>> {
        if self.next_part != 0 || self.current.is_some() {
            return None;
        }
        let estimated_rows = match self.info.rows {
            Some(rows) => rows,
            None => self.info.bytes / super::pieces::estimate_line_bytes(&self.parts.first()?.path).ok()?,
        };
        Some(Box::new(PartPieces {
            parts: self.parts.clone(),
            partition_fields: self.partition_fields.clone(),
            options: self.options,
            estimated_rows,
        }))
    }

    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        loop {
            if self.current.is_none() {
                if self.next_part >= self.parts.len() {
                    return Ok(None);
                }
                let part = &self.parts[self.next_part];
                self.current = Some(open_file(&part.path, self.options)?);
            }
            let current = self.current.as_mut().expect("set above");
            match current.next_batch()? {
                Some(batch) => {
                    let part = &self.parts[self.next_part];
                    return add_partitions(&self.partition_fields, part, batch).map(Some);
                }
                None => {
                    self.bytes_done += current.info().bytes;
                    self.current = None;
                    self.next_part += 1;
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn partition_segments_are_parsed_and_decoded() {
        let dir = Path::new("/data");
        let file = Path::new("/data/year=2024/city=North%20Bay/part-0.json");
        assert_eq!(
            partition_segments(dir, file),
            vec![("year".into(), Some("2024".into())), ("city".into(), Some("North Bay".into()))]
        );
        let file = Path::new("/data/year=__HIVE_DEFAULT_PARTITION__/p.json");
        assert_eq!(partition_segments(dir, file), vec![("year".into(), None)]);
    }

    #[test]
    fn split_parts_do_not_carry_the_list_of_every_part() {
        let dir = tempfile::tempdir().unwrap();
        for i in 0..3 {
            std::fs::write(dir.path().join(format!("part-{i}.jsonl")), format!("{{\"id\":{i}}}\n")).unwrap();
        }
        let mut source = open_directory(dir.path(), OpenOptions::default()).unwrap();
        assert_eq!(source.info().facts.part_files.len(), 3);
        let parts = source.split().expect("one part per file");
        assert_eq!(parts.len(), 3);
        for part in &parts {
            assert_eq!(part.info().parts, 1);
            assert!(part.info().facts.part_files.is_empty(), "{:?}", part.info().facts.part_files);
        }
    }

    /// A Parquet file with one Int64 field `field` holding `rows` values.
    fn write_parquet(path: &Path, field: &str, rows: usize) {
        let schema = Arc::new(Schema::new(vec![Field::new(field, DataType::Int64, false)]));
        let column: ArrayRef = Arc::new(Int64Array::from_iter_values(0..rows as i64));
        let batch = RecordBatch::try_new(schema.clone(), vec![column]).unwrap();
        let file = std::fs::File::create(path).unwrap();
        let mut writer = parquet::arrow::ArrowWriter::try_new(file, schema, None).unwrap();
        writer.write(&batch).unwrap();
        writer.close().unwrap();
    }

    #[test]
    fn parts_peeked_at_once_keep_their_order_and_footers() {
        let dir = tempfile::tempdir().unwrap();
        let count = 3 * PEEKS_AT_ONCE + 5;
        for i in 0..count {
            let field = if i == 2 * PEEKS_AT_ONCE + 1 { "other" } else { "id" };
            write_parquet(&dir.path().join(format!("part-{i:03}.parquet")), field, i + 1);
        }
        let source = open_directory(dir.path(), OpenOptions::default()).unwrap();
        let info = source.info();
        assert_eq!(info.parts, count);
        assert_eq!(info.rows, Some((1..=count as u64).sum()));
        let names: Vec<String> = (0..count).map(|i| format!("part-{i:03}.parquet")).collect();
        assert_eq!(info.facts.part_files, names);
        let odd = format!("part-{:03}.parquet", 2 * PEEKS_AT_ONCE + 1);
        assert_eq!(info.facts.schema_differences.len(), 2, "{:?}", info.facts.schema_differences);
        assert!(
            info.facts.schema_differences.iter().all(|d| d.starts_with(&odd)),
            "{:?}",
            info.facts.schema_differences
        );
        let files: Vec<PathBuf> = names.iter().map(|n| dir.path().join(n)).collect();
        let rows: Vec<Option<u64>> =
            peek_all(&files, Format::Parquet, OpenOptions::default()).into_iter().map(|p| p.unwrap().rows).collect();
        assert_eq!(rows, (1..=count as u64).map(Some).collect::<Vec<_>>());
    }

    #[test]
    fn of_several_bad_parts_the_first_in_file_order_is_named() {
        let dir = tempfile::tempdir().unwrap();
        let count = 3 * PEEKS_AT_ONCE;
        for i in 0..count {
            let path = dir.path().join(format!("part-{i:03}.parquet"));
            if i == PEEKS_AT_ONCE + 3 || i == count - 1 {
                std::fs::write(&path, "id\n1\n").unwrap();
            } else {
                write_parquet(&path, "id", 1);
            }
        }
        let error = open_directory(dir.path(), OpenOptions::default()).err().expect("a text part among Parquet parts");
        let message = error.to_string();
        let first_bad = format!("part-{:03}.parquet", PEEKS_AT_ONCE + 3);
        assert!(message.contains(&first_bad) && message.contains("one format"), "{message}");
    }

    #[test]
    fn bookkeeping_files_are_skipped() {
        for name in ["_SUCCESS", ".part-0.crc", "part-0.parquet.crc", ".hidden", "_common_metadata"] {
            assert!(skipped(name), "{name}");
        }
        assert!(!skipped("part-00000.parquet"));
    }
}
