//! Parquet source: facts from the footer alone, batches one row group at a
//! time through `parquet`'s Arrow reader (so errors name the row group);
//! `split` gives one reader per row group so a scan can read them in parallel.

use std::collections::{BTreeMap, BTreeSet, HashMap};
use std::fs::File;
use std::path::Path;
use std::sync::Arc;

use arrow_schema::{DataType, Field, Schema};
use parquet::arrow::arrow_reader::{
    ArrowReaderMetadata, ArrowReaderOptions, ParquetRecordBatchReader, ParquetRecordBatchReaderBuilder, RowSelection,
    RowSelector,
};
use parquet::basic::{ConvertedType, LogicalType, Repetition};
use parquet::errors::ParquetError;
use parquet::file::metadata::ParquetMetaData;
use parquet::schema::types::Type;

use super::error::{Position, SourceError};
use super::facts::{ColumnFacts, shorten_metadata_value};
use super::guard;
use super::lazy::LazyPart;
use super::{ARROW_BATCH_ROWS, Batch, Compression, Facts, Format, Progress, Source, SourceInfo};
use crate::path;

/// The Parquet side of a leaf column's declared type.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct ParquetLeaf {
    pub physical: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub logical: Option<String>,
    pub repetition: String,
}

pub struct ParquetSource {
    info: SourceInfo,
    file: File,
    metadata: ArrowReaderMetadata,
    next_group: usize,
    /// One past the last row group this reader reads (all, unless split).
    end_group: usize,
    current: Option<GroupReader>,
    rows_done: u64,
    failed: bool,
    /// Columns encrypted under a plaintext footer: the schema is readable,
    /// the data is not.
    encrypted_columns: bool,
    /// Only rows `from..to` of the one row group read (a piece of a spread
    /// sample); `None` reads whole row groups.
    rows_in_group: Option<(u64, u64)>,
}

/// The row group being read, and how many rows it has given so far.
struct GroupReader {
    group: usize,
    reader: ParquetRecordBatchReader,
    rows: u64,
    /// Strings and binaries are read with 64-bit offsets (after an overflow).
    large_offsets: bool,
}

const ENCRYPTED_FOOTER_MAGIC: &[u8] = b"PARE";

impl ParquetSource {
    pub fn open(path: &Path, bytes: u64) -> Result<Self, SourceError> {
        let file = File::open(path).map_err(|e| SourceError::io(path, e))?;
        if has_encrypted_footer(&file, bytes) {
            return Err(SourceError::Encrypted { path: path.to_path_buf() });
        }
        let options = ArrowReaderOptions::new();
        let metadata = guard::catch(|| ArrowReaderMetadata::load(&file, options))
            .map_err(|panic| SourceError::malformed(path, Format::Parquet, Position::Footer, panic))?
            .map_err(|e| footer_error(path, e))?;
        let schema = metadata.schema().clone();
        let parquet_meta = metadata.metadata().clone();
        let facts = footer_facts(&parquet_meta);
        let encrypted_columns =
            parquet_meta.row_groups().iter().flat_map(|g| g.columns()).any(|c| c.crypto_metadata().is_some());
        let leaves = leaf_annotations(parquet_meta.file_metadata().schema_descr().root_schema());
        let info = SourceInfo {
            path: path.to_path_buf(),
            format: Format::Parquet,
            compression: Compression::None,
            bytes,
            parts: 1,
            rows: Some(parquet_meta.file_metadata().num_rows().max(0) as u64),
            schema: Some(schema),
            parquet_leaves: Some(Arc::new(leaves)),
            facts,
        };
        let end_group = parquet_meta.num_row_groups();
        Ok(ParquetSource {
            info,
            file,
            metadata,
            next_group: 0,
            end_group,
            current: None,
            rows_done: 0,
            failed: false,
            encrypted_columns,
            rows_in_group: None,
        })
    }

    fn num_groups(&self) -> usize {
        self.end_group
    }

    fn fail(&mut self, group: usize, message: String) -> SourceError {
        self.failed = true;
        SourceError::malformed(&self.info.path, Format::Parquet, Position::RowGroup(group), message)
    }
}

fn has_encrypted_footer(file: &File, bytes: u64) -> bool {
    use std::os::unix::fs::FileExt;
    let mut tail = [0u8; 4];
    bytes >= 8 && file.read_exact_at(&mut tail, bytes - 4).is_ok() && tail == ENCRYPTED_FOOTER_MAGIC
}

fn footer_error(path: &Path, e: ParquetError) -> SourceError {
    let message = e.to_string();
    if message.to_lowercase().contains("encrypt") {
        return SourceError::Encrypted { path: path.to_path_buf() };
    }
    SourceError::malformed(path, Format::Parquet, Position::Footer, message)
}

/// Short codec name: "ZSTD" rather than "ZSTD(ZstdLevel(1))".
fn codec_name(c: parquet::basic::Compression) -> String {
    let full = format!("{c:?}");
    full.split('(').next().unwrap_or(&full).to_string()
}

fn footer_facts(meta: &ParquetMetaData) -> Facts {
    let mut codecs = BTreeSet::new();
    let mut columns: Vec<ColumnFacts> = Vec::new();
    for group in meta.row_groups() {
        for (i, chunk) in group.columns().iter().enumerate() {
            codecs.insert(codec_name(chunk.compression()));
            if columns.len() <= i {
                columns.push(ColumnFacts {
                    path: chunk.column_path().string(),
                    physical_type: chunk.column_type().to_string(),
                    compressed_bytes: 0,
                    uncompressed_bytes: 0,
                });
            }
            columns[i].compressed_bytes += chunk.compressed_size().max(0) as u64;
            columns[i].uncompressed_bytes += chunk.uncompressed_size().max(0) as u64;
        }
    }
    let file_meta = meta.file_metadata();
    let metadata: BTreeMap<String, String> = file_meta
        .key_value_metadata()
        .into_iter()
        .flatten()
        .map(|kv| (kv.key.clone(), shorten_metadata_value(kv.value.as_deref().unwrap_or(""))))
        .collect();
    Facts {
        row_groups: Some(meta.num_row_groups()),
        codecs: codecs.into_iter().collect(),
        columns,
        writer: file_meta.created_by().map(str::to_string),
        metadata,
        ..Facts::default()
    }
}

/// Walks the Parquet schema tree and names each leaf with the field path
/// the Arrow schema gives it, following the list and map layouts of the
/// Parquet format's LogicalTypes.md (including its backward-compatibility
/// rules for lists written without the three-level structure).
pub fn leaf_annotations(root: &Type) -> HashMap<String, ParquetLeaf> {
    let mut out = HashMap::new();
    for field in root.get_fields() {
        walk_field(field, &path::member("", field.name()), &mut out);
    }
    out
}

fn is_list(t: &Type) -> bool {
    let info = t.get_basic_info();
    matches!(info.logical_type_ref(), Some(LogicalType::List)) || info.converted_type() == ConvertedType::LIST
}

fn is_map(t: &Type) -> bool {
    let info = t.get_basic_info();
    matches!(info.logical_type_ref(), Some(LogicalType::Map))
        || matches!(info.converted_type(), ConvertedType::MAP | ConvertedType::MAP_KEY_VALUE)
}

fn is_repeated(t: &Type) -> bool {
    let info = t.get_basic_info();
    info.has_repetition() && info.repetition() == Repetition::REPEATED
}

fn walk_field(t: &Type, at: &str, out: &mut HashMap<String, ParquetLeaf>) {
    if is_repeated(t) {
        // A repeated field outside a LIST annotation is a list of itself.
        walk_inner(t, &path::element(at), out);
    } else {
        walk_inner(t, at, out);
    }
}

/// Like `walk_field` but ignoring the field's own repetition.
fn walk_inner(t: &Type, at: &str, out: &mut HashMap<String, ParquetLeaf>) {
    if !t.is_group() {
        out.insert(at.to_string(), leaf_of(t));
        return;
    }
    let fields = t.get_fields();
    if is_list(t) && fields.len() == 1 {
        let repeated = &fields[0];
        let element_at = path::element(at);
        let two_level = !repeated.is_group()
            || repeated.get_fields().len() > 1
            || repeated.name() == "array"
            || repeated.name() == format!("{}_tuple", t.name());
        if two_level {
            walk_inner(repeated, &element_at, out);
        } else {
            walk_field(&repeated.get_fields()[0], &element_at, out);
        }
        return;
    }
    if is_map(t) && fields.len() == 1 && fields[0].is_group() {
        let kv = fields[0].get_fields();
        if let Some(key) = kv.first() {
            walk_field(key, &path::map_key(at), out);
        }
        if let Some(value) = kv.get(1) {
            walk_field(value, &path::map_value(at), out);
        }
        return;
    }
    for child in fields {
        walk_field(child, &path::member(at, child.name()), out);
    }
}

fn leaf_of(t: &Type) -> ParquetLeaf {
    let info = t.get_basic_info();
    let logical = info.logical_type_ref().map(logical_name).or_else(|| match info.converted_type() {
        ConvertedType::NONE => None,
        c => Some(format!("{c}")),
    });
    let repetition = if info.has_repetition() { format!("{}", info.repetition()) } else { "REQUIRED".into() };
    ParquetLeaf { physical: format!("{}", t.get_physical_type()), logical, repetition }
}

fn logical_name(l: &LogicalType) -> String {
    let unit = |u: &parquet::basic::TimeUnit| {
        let full = format!("{u:?}");
        full.split('(').next().unwrap_or(&full).to_string()
    };
    match l {
        LogicalType::String => "STRING".into(),
        LogicalType::Enum => "ENUM".into(),
        LogicalType::Decimal(d) => format!("DECIMAL({}, {})", d.precision, d.scale),
        LogicalType::Date => "DATE".into(),
        LogicalType::Time(t) => format!("TIME({}, adjusted_to_utc={})", unit(&t.unit), t.is_adjusted_to_u_t_c),
        LogicalType::Timestamp(t) => {
            format!("TIMESTAMP({}, adjusted_to_utc={})", unit(&t.unit), t.is_adjusted_to_u_t_c)
        }
        LogicalType::Integer(i) => {
            format!("INTEGER({}, {})", i.bit_width, if i.is_signed { "signed" } else { "unsigned" })
        }
        LogicalType::Json => "JSON".into(),
        LogicalType::Bson => "BSON".into(),
        LogicalType::Uuid => "UUID".into(),
        LogicalType::Float16 => "FLOAT16".into(),
        other => {
            let full = format!("{other:?}");
            full.split(['(', ' ', '{']).next().unwrap_or(&full).to_uppercase()
        }
    }
}

impl ParquetSource {
    fn group_reader(&self, group: usize, large_offsets: bool, skip: u64) -> Result<GroupReader, String> {
        let file = self.file.try_clone().map_err(|e| e.to_string())?;
        let metadata = if large_offsets {
            let schema = Arc::new(with_large_offsets(self.metadata.schema()));
            let options = ArrowReaderOptions::new().with_schema(schema);
            ArrowReaderMetadata::try_new(self.metadata.metadata().clone(), options).map_err(|e| e.to_string())?
        } else {
            keeping_dictionaries(&self.metadata, group).unwrap_or_else(|| self.metadata.clone())
        };
        let total = self.metadata.metadata().row_group(group).num_rows().max(0) as usize;
        let (from, to) = self.rows_in_group.map_or((0, total), |(from, to)| (from as usize, to as usize));
        let from = from.max(skip as usize);
        let batch_rows = if large_offsets { 16 } else { ARROW_BATCH_ROWS };
        let built = guard::catch(move || {
            let mut builder = ParquetRecordBatchReaderBuilder::new_with_metadata(file, metadata)
                .with_row_groups(vec![group])
                .with_batch_size(batch_rows);
            if from > 0 || to < total {
                let selectors = [
                    RowSelector::skip(from),
                    RowSelector::select(to.saturating_sub(from)),
                    RowSelector::skip(total.saturating_sub(to)),
                ];
                builder = builder.with_row_selection(RowSelection::from(
                    selectors.into_iter().filter(|s| s.row_count > 0).collect::<Vec<_>>(),
                ));
            }
            builder.build()
        });
        match built {
            Ok(Ok(reader)) => Ok(GroupReader { group, reader, rows: from as u64, large_offsets }),
            Ok(Err(e)) => Err(e.to_string()),
            Err(panic) => Err(panic),
        }
    }
}

/// The reader's metadata for row group `group` with each text column whose
/// chunk there is dictionary-encoded throughout read as an Arrow dictionary,
/// or `None` when no column is. The profile then sees each distinct text
/// once per chunk with its count (see `shape/dictionary.rs`) instead of
/// every value copied out of the dictionary. Chunks with plain pages are read
/// plainly: the reader would hash every value to build a dictionary.
fn keeping_dictionaries(metadata: &ArrowReaderMetadata, group: usize) -> Option<ArrowReaderMetadata> {
    let chunks = metadata.metadata().row_group(group).columns();
    let mut column = 0;
    let mut kept = false;
    let fields: Vec<Field> = metadata
        .schema()
        .fields()
        .iter()
        .map(|f| hint_dictionaries(f, chunks, &mut column, &mut kept))
        .collect();
    // Arrow leaves follow the Parquet columns one for one, in order; if they
    // do not, read as declared.
    if !kept || column != chunks.len() {
        return None;
    }
    let schema = Schema::new_with_metadata(fields, metadata.schema().metadata().clone());
    let options = ArrowReaderOptions::new().with_schema(Arc::new(schema));
    ArrowReaderMetadata::try_new(metadata.metadata().clone(), options).ok()
}

/// `field` with its `Utf8` leaves made dictionaries where their chunk (the
/// `column`-th, counting leaves in order) has only dictionary-encoded pages.
fn hint_dictionaries(
    field: &Field,
    chunks: &[parquet::file::metadata::ColumnChunkMetaData],
    column: &mut usize,
    kept: &mut bool,
) -> Field {
    let data_type = match field.data_type() {
        DataType::Struct(fields) => {
            DataType::Struct(fields.iter().map(|f| hint_dictionaries(f, chunks, column, kept)).collect())
        }
        DataType::List(f) => DataType::List(Arc::new(hint_dictionaries(f, chunks, column, kept))),
        DataType::LargeList(f) => DataType::LargeList(Arc::new(hint_dictionaries(f, chunks, column, kept))),
        DataType::FixedSizeList(f, n) => DataType::FixedSizeList(Arc::new(hint_dictionaries(f, chunks, column, kept)), *n),
        DataType::Map(f, sorted) => DataType::Map(Arc::new(hint_dictionaries(f, chunks, column, kept)), *sorted),
        leaf => {
            let chunk = chunks.get(*column);
            *column += 1;
            match leaf {
                DataType::Utf8 if chunk.is_some_and(dictionary_throughout) => {
                    *kept = true;
                    DataType::Dictionary(Box::new(DataType::Int32), Box::new(DataType::Utf8))
                }
                other => other.clone(),
            }
        }
    };
    field.clone().with_data_type(data_type)
}

/// Every data page of the chunk is dictionary-encoded (as the page encoding
/// statistics in the footer say; without them, assume not).
fn dictionary_throughout(chunk: &parquet::file::metadata::ColumnChunkMetaData) -> bool {
    use parquet::basic::{Encoding, PageType};
    let is_dictionary = |e: Encoding| matches!(e, Encoding::PLAIN_DICTIONARY | Encoding::RLE_DICTIONARY);
    if chunk.dictionary_page_offset().is_none() {
        return false;
    }
    if let Some(mask) = chunk.page_encoding_stats_mask() {
        return mask.encodings().all(is_dictionary);
    }
    chunk.page_encoding_stats().is_some_and(|stats| {
        stats
            .iter()
            .filter(|s| matches!(s.page_type, PageType::DATA_PAGE | PageType::DATA_PAGE_V2))
            .all(|s| is_dictionary(s.encoding))
    })
}

fn is_offset_overflow(message: &str) -> bool {
    message.contains("index overflow decoding byte array") || message.contains("offset overflow")
}

/// The same schema with `Utf8`/`Binary` widened to their 64-bit-offset forms.
fn with_large_offsets(schema: &Schema) -> Schema {
    let fields: Vec<Field> = schema.fields().iter().map(|f| widen_field(f)).collect();
    Schema::new_with_metadata(fields, schema.metadata().clone())
}

fn widen_field(f: &Field) -> Field {
    f.clone().with_data_type(widen(f.data_type()))
}

fn widen(t: &DataType) -> DataType {
    match t {
        DataType::Utf8 => DataType::LargeUtf8,
        DataType::Binary => DataType::LargeBinary,
        DataType::List(f) => DataType::List(Arc::new(widen_field(f))),
        DataType::LargeList(f) => DataType::LargeList(Arc::new(widen_field(f))),
        DataType::FixedSizeList(f, n) => DataType::FixedSizeList(Arc::new(widen_field(f)), *n),
        DataType::Struct(fields) => DataType::Struct(fields.iter().map(|f| widen_field(f)).collect()),
        DataType::Map(f, sorted) => DataType::Map(Arc::new(widen_field(f)), *sorted),
        other => other.clone(),
    }
}

impl Source for ParquetSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn progress(&self) -> Progress {
        Progress { done: self.rows_done, total: self.info.rows.unwrap_or(0) }
    }

    /// One reader per row group, to be read in parallel.
    fn split(&mut self) -> Option<Vec<Box<dyn Source>>> {
        if self.next_group != 0 || self.current.is_some() || self.end_group < 2 {
            return None;
        }
        let mut parts: Vec<Box<dyn Source>> = Vec::with_capacity(self.end_group);
        for group in 0..self.end_group {
            let (info, metadata, encrypted_columns) =
                (self.info.clone(), self.metadata.clone(), self.encrypted_columns);
            let path = self.info.path.clone();
            // A file of its own, opened when read: a cloned handle would
            // share the read offset with the other parts' threads, and a
            // file of thousands of row groups must not open thousands.
            parts.push(Box::new(LazyPart::new(self.info.clone(), move || {
                let file = File::open(&path).map_err(|e| SourceError::io(&path, e))?;
                Ok(Box::new(ParquetSource {
                    info,
                    file,
                    metadata,
                    next_group: group,
                    end_group: group + 1,
                    current: None,
                    rows_done: 0,
                    failed: false,
                    encrypted_columns,
                    rows_in_group: None,
                }) as Box<dyn Source>)
            })));
        }
        Some(parts)
    }

    fn pieces(&mut self, rows: u64) -> Option<Box<dyn super::Pieces>> {
        if self.next_group != 0 || self.current.is_some() || self.rows_in_group.is_some() {
            return None;
        }
        let mut first_piece = Vec::with_capacity(self.end_group);
        let mut first_row = Vec::with_capacity(self.end_group);
        let (mut pieces, mut rows_before) = (0, 0);
        for group in 0..self.end_group {
            first_piece.push(pieces);
            first_row.push(rows_before);
            let group_rows = self.metadata.metadata().row_group(group).num_rows().max(0) as u64;
            pieces += group_rows.div_ceil(rows.max(1)) as usize;
            rows_before += group_rows;
        }
        Some(Box::new(RowPieces {
            info: self.info.clone(),
            metadata: self.metadata.clone(),
            encrypted_columns: self.encrypted_columns,
            rows_per_piece: rows.max(1),
            first_piece,
            first_row,
            pieces,
            rows: rows_before,
        }))
    }

    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        if self.encrypted_columns && !self.failed {
            self.failed = true;
            return Err(SourceError::Encrypted { path: self.info.path.clone() });
        }
        loop {
            if self.failed {
                return Ok(None);
            }
            if self.current.is_none() {
                if self.next_group >= self.num_groups() {
                    return Ok(None);
                }
                let group = self.next_group;
                self.next_group += 1;
                match self.group_reader(group, false, 0) {
                    Ok(reader) => self.current = Some(reader),
                    Err(message) => return Err(self.fail(group, message)),
                }
            }
            let current = self.current.as_mut().expect("set above");
            let group = current.group;
            match guard::catch(|| current.reader.next()) {
                Ok(Some(Ok(batch))) => {
                    current.rows += batch.num_rows() as u64;
                    self.rows_done += batch.num_rows() as u64;
                    return Ok(Some(Batch::Arrow(batch)));
                }
                Ok(Some(Err(e))) if !current.large_offsets && is_offset_overflow(&e.to_string()) => {
                    // A string column chunk beyond 2 GiB: read this row group
                    // again with 64-bit offsets, after the rows already given.
                    let skip = current.rows;
                    match self.group_reader(group, true, skip) {
                        Ok(reader) => self.current = Some(reader),
                        Err(message) => return Err(self.fail(group, message)),
                    }
                }
                Ok(Some(Err(e))) => return Err(self.fail(group, e.to_string())),
                Ok(None) => {
                    let read = current.rows;
                    let stated = self.metadata.metadata().row_group(group).num_rows().max(0) as u64;
                    let end = self.rows_in_group.map_or(stated, |(_, to)| to);
                    if read != end {
                        let message = format!("its metadata states {stated} rows but the reader produced {read}");
                        return Err(self.fail(group, message));
                    }
                    self.current = None;
                }
                Err(panic) => return Err(self.fail(group, panic)),
            }
        }
    }
}

/// A Parquet file as pieces of `rows_per_piece` rows within its row groups
/// (the last piece of a group may be shorter), for a spread sample.
struct RowPieces {
    info: SourceInfo,
    metadata: ArrowReaderMetadata,
    encrypted_columns: bool,
    rows_per_piece: u64,
    /// Per row group: the index of its first piece, and of its first row.
    first_piece: Vec<usize>,
    first_row: Vec<u64>,
    pieces: usize,
    rows: u64,
}

impl super::Pieces for RowPieces {
    fn count(&self) -> usize {
        self.pieces
    }

    fn estimated_rows(&self) -> u64 {
        self.rows
    }

    fn piece(&self, i: usize) -> Result<(Box<dyn Source>, Option<u64>), SourceError> {
        let group = self.first_piece.partition_point(|&first| first <= i) - 1;
        let group_rows = self.metadata.metadata().row_group(group).num_rows().max(0) as u64;
        let from = (i - self.first_piece[group]) as u64 * self.rows_per_piece;
        let to = (from + self.rows_per_piece).min(group_rows);
        let path = &self.info.path;
        let file = File::open(path).map_err(|e| SourceError::io(path, e))?;
        let source = ParquetSource {
            info: self.info.clone(),
            file,
            metadata: self.metadata.clone(),
            next_group: group,
            end_group: group + 1,
            current: None,
            rows_done: 0,
            failed: false,
            encrypted_columns: self.encrypted_columns,
            rows_in_group: Some((from, to)),
        };
        Ok((Box::new(source), Some(self.first_row[group] + from)))
    }
}
