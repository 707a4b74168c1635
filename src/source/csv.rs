//! CSV and TSV sources: delimiter sniffing, header detection and per-cell
//! kind inference, streamed record by record.
//!
//! Cells become values: empty → null; `true`/`false` (any case) → bool;
//! canonical integers → int (a leading zero keeps the text, e.g. codes like
//! "007"); decimal numbers → float; everything else stays text, where the
//! Shape recognises dates and timestamps.

use std::path::Path;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};

use super::decompress::{Compression, open_decompressed};
use super::error::{Position, SourceError, read_failure};
use super::facts::DelimitedFacts;
use super::limits::MAX_RECORD_BYTES;
use super::{Batch, Facts, Format, Progress, Source, SourceInfo, TEXT_BATCH_ROWS};
use crate::value::Value;

const CANDIDATE_DELIMITERS: [u8; 4] = [b',', b'\t', b';', b'|'];
/// Records looked at to decide the header.
const HEADER_SAMPLE_RECORDS: usize = 200;

/// Picks the delimiter whose count per line is most consistent over the
/// first lines (quotes respected); a comma when nothing stands out.
pub fn sniff_delimiter(text: &[u8]) -> u8 {
    let lines: Vec<&[u8]> = text.split(|&b| b == b'\n').take(50).filter(|l| !l.is_empty()).collect();
    let complete = if text.ends_with(b"\n") || lines.len() <= 1 { lines.len() } else { lines.len() - 1 };
    let lines = &lines[..complete.max(1).min(lines.len())];
    let mut best = (b',', 0usize, 0usize); // (delimiter, lines agreeing, count)
    for &d in &CANDIDATE_DELIMITERS {
        let counts: Vec<usize> = lines.iter().map(|l| count_outside_quotes(l, d)).collect();
        let Some(&first) = counts.first() else {
            continue;
        };
        if first == 0 {
            continue;
        }
        let agreeing = counts.iter().filter(|&&c| c == first).count();
        if (agreeing, first) > (best.1, best.2) {
            best = (d, agreeing, first);
        }
    }
    best.0
}

fn count_outside_quotes(line: &[u8], delimiter: u8) -> usize {
    let mut in_quotes = false;
    let mut n = 0;
    for &b in line {
        if b == b'"' {
            in_quotes = !in_quotes;
        } else if b == delimiter && !in_quotes {
            n += 1;
        }
    }
    n
}

/// Types one cell (see the module comment).
pub fn type_cell(cell: &str) -> Value {
    if cell.is_empty() {
        return Value::Null;
    }
    if cell.eq_ignore_ascii_case("true") {
        return Value::Bool(true);
    }
    if cell.eq_ignore_ascii_case("false") {
        return Value::Bool(false);
    }
    if is_canonical_integer(cell) {
        if let Ok(i) = cell.parse::<i64>() {
            return Value::Int(i);
        }
        if let Ok(u) = cell.parse::<u64>() {
            return Value::UInt(u);
        }
        return Value::BigInt(cell.into());
    }
    if is_decimal_number(cell)
        && let Ok(f) = cell.parse::<f64>()
    {
        return Value::Float(f);
    }
    Value::Str(cell.to_string())
}

fn is_canonical_integer(s: &str) -> bool {
    let digits = s.strip_prefix('-').unwrap_or(s).as_bytes();
    !digits.is_empty() && digits.iter().all(u8::is_ascii_digit) && (digits[0] != b'0' || digits.len() == 1)
}

/// `-?digits.digits`, `-?digits(.digits)?[eE][+-]?digits`: numbers as a
/// person writes them, without "inf"/"nan" words or a leading zero run.
fn is_decimal_number(s: &str) -> bool {
    let b = s.strip_prefix('-').unwrap_or(s).as_bytes();
    let int_len = b.iter().take_while(|c| c.is_ascii_digit()).count();
    if int_len == 0 || (int_len > 1 && b[0] == b'0') {
        return false;
    }
    let mut i = int_len;
    let mut fraction_or_exponent = false;
    if b.get(i) == Some(&b'.') {
        let frac = b[i + 1..].iter().take_while(|c| c.is_ascii_digit()).count();
        if frac == 0 {
            return false;
        }
        i += 1 + frac;
        fraction_or_exponent = true;
    }
    if matches!(b.get(i), Some(b'e' | b'E')) {
        i += 1;
        if matches!(b.get(i), Some(b'+' | b'-')) {
            i += 1;
        }
        let exp = b[i..].iter().take_while(|c| c.is_ascii_digit()).count();
        if exp == 0 {
            return false;
        }
        i += exp;
        fraction_or_exponent = true;
    }
    fraction_or_exponent && i == b.len()
}

/// Decides whether the first record is a header: every cell non-empty and
/// distinct, no cell typed as a number or bool, and either some column whose
/// later cells are mostly typed (numbers, bools) or no header cell repeated
/// among its column's values.
pub fn has_header(records: &[Vec<String>]) -> bool {
    let Some(first) = records.first() else {
        return false;
    };
    let rest = &records[1..];
    let distinct: std::collections::HashSet<&String> = first.iter().collect();
    if first.iter().any(|c| c.trim().is_empty()) || distinct.len() != first.len() {
        return false;
    }
    if first.iter().any(|c| !matches!(type_cell(c), Value::Str(_))) {
        return false;
    }
    if rest.is_empty() {
        return true;
    }
    let typed_column = (0..first.len()).any(|col| {
        let cells: Vec<&String> = rest.iter().filter_map(|r| r.get(col)).filter(|c| !c.is_empty()).collect();
        let typed = cells.iter().filter(|c| !matches!(type_cell(c), Value::Str(_))).count();
        !cells.is_empty() && typed * 10 >= cells.len() * 9
    });
    let header_repeated = (0..first.len()).any(|col| rest.iter().any(|r| r.get(col) == Some(&first[col])));
    typed_column || !header_repeated
}

pub struct CsvSource {
    info: SourceInfo,
    reader: csv::Reader<Box<dyn std::io::BufRead + Send>>,
    columns: Vec<String>,
    delimiter: u8,
    /// Where the first record after the header starts.
    data_start: u64,
    file_bytes_read: Arc<AtomicU64>,
    record: csv::StringRecord,
    finished: bool,
    /// An error met after some rows of a batch: those rows go out first.
    pending_error: Option<SourceError>,
    /// For one chunk of the file: where its bytes start, and the byte at
    /// or after which a record belongs to the next chunk.
    base: u64,
    range_end: Option<u64>,
    /// Where the record after the last one read starts (chunks only).
    next_record: Option<u64>,
}

/// What every chunk of one delimited file shares: its format, delimiter
/// and column names (the header is read once, by the whole-file reader).
#[derive(Debug, Clone)]
pub struct CsvLayout {
    pub format: Format,
    pub delimiter: u8,
    pub columns: Vec<String>,
}

fn csv_reader(
    reader: Box<dyn std::io::BufRead + Send>,
    delimiter: u8,
) -> csv::Reader<Box<dyn std::io::BufRead + Send>> {
    // Flexible: record lengths are checked against the columns here, so a
    // chunk checks them as the whole file would.
    csv::ReaderBuilder::new().delimiter(delimiter).has_headers(false).flexible(true).from_reader(reader)
}

impl CsvSource {
    pub fn open(path: &Path, format: Format, compression: Compression, bytes: u64) -> Result<Self, SourceError> {
        let sample = read_sample(path, compression)?;
        let delimiter = if format == Format::Tsv { b'\t' } else { sniff_delimiter(&sample) };
        let delimiter = if format == Format::Csv && delimiter == b'\t' { b',' } else { delimiter };
        let sample_records = parse_sample(&sample, delimiter);
        let header = has_header(&sample_records);

        let opened = open_decompressed(path, compression)?;
        let mut reader = csv_reader(opened.reader, delimiter);
        let mut record = csv::StringRecord::new();
        let mut columns: Vec<String> = Vec::new();
        let mut data_start = 0;
        if header {
            let got = reader.read_record(&mut record).map_err(|e| csv_error(path, format, e))?;
            if got {
                columns = dedupe_names(record.iter().map(|s| s.trim_start_matches('\u{feff}').to_string()).collect());
                data_start = reader.position().byte();
            }
        } else if let Some(first) = sample_records.first() {
            columns = (1..=first.len()).map(|i| format!("column_{i}")).collect();
        }
        let info = SourceInfo {
            path: path.to_path_buf(),
            format,
            compression,
            bytes,
            parts: 1,
            rows: None,
            schema: None,
            parquet_leaves: None,
            facts: Facts {
                delimited: Some(DelimitedFacts { delimiter: delimiter_name(delimiter), header }),
                ..Facts::default()
            },
        };
        Ok(CsvSource {
            info,
            reader,
            columns,
            delimiter,
            data_start,
            file_bytes_read: opened.file_bytes_read,
            record,
            finished: false,
            pending_error: None,
            base: 0,
            range_end: None,
            next_record: None,
        })
    }

    /// The records of `path` starting from byte `start` (a line start)
    /// before byte `end`, as one chunk (see [`crate::source::chunks`]).
    /// The last record may run past `end`; the first one starting at or
    /// after it belongs to the next chunk.
    pub fn open_range(path: &Path, layout: Arc<CsvLayout>, start: u64, end: u64) -> Result<Self, SourceError> {
        let reader = csv_reader(super::chunks::range_reader(path, start, None)?, layout.delimiter);
        let info = SourceInfo {
            path: path.to_path_buf(),
            format: layout.format,
            compression: Compression::None,
            bytes: end - start,
            parts: 1,
            rows: None,
            schema: None,
            parquet_leaves: None,
            facts: Facts::default(),
        };
        Ok(CsvSource {
            info,
            reader,
            columns: layout.columns.clone(),
            delimiter: layout.delimiter,
            data_start: 0,
            file_bytes_read: Arc::new(AtomicU64::new(0)),
            record: csv::StringRecord::new(),
            finished: false,
            pending_error: None,
            base: start,
            range_end: Some(end),
            next_record: None,
        })
    }

    /// The file in chunks of about `target` bytes (tests use small ones).
    pub(crate) fn split_every(&mut self, target: u64) -> Option<Vec<Box<dyn Source>>> {
        let layout = CsvLayout { format: self.info.format, delimiter: self.delimiter, columns: self.columns.clone() };
        let format = super::chunks::ChunkFormat::Delimited(Arc::new(layout));
        super::chunks::TextChunk::split(&self.info, format, self.data_start, target)
    }
}

fn delimiter_name(d: u8) -> String {
    match d {
        b'\t' => "tab".into(),
        other => (other as char).to_string(),
    }
}

/// Column names must be unique to be fields; a repeated name gets `_2`, `_3`…
/// (reported in the name itself, never silently dropped).
fn dedupe_names(names: Vec<String>) -> Vec<String> {
    let mut seen = std::collections::HashSet::new();
    names
        .into_iter()
        .map(|name| {
            let mut candidate = name.clone();
            let mut n = 2;
            while !seen.insert(candidate.clone()) {
                candidate = format!("{name}_{n}");
                n += 1;
            }
            candidate
        })
        .collect()
}

fn read_sample(path: &Path, compression: Compression) -> Result<Vec<u8>, SourceError> {
    use std::io::Read;
    let mut reader = open_decompressed(path, compression)?.reader;
    let mut sample = Vec::new();
    reader
        .by_ref()
        .take(256 * 1024)
        .read_to_end(&mut sample)
        .map_err(|e| read_failure(path, Format::Csv, Position::Byte(0), e))?;
    Ok(sample)
}

fn parse_sample(sample: &[u8], delimiter: u8) -> Vec<Vec<String>> {
    let mut reader =
        csv::ReaderBuilder::new().delimiter(delimiter).has_headers(false).flexible(true).from_reader(sample);
    reader
        .records()
        .take(HEADER_SAMPLE_RECORDS)
        .map_while(Result::ok)
        .map(|r| r.iter().map(str::to_string).collect())
        .collect()
}

fn csv_error(path: &Path, format: Format, e: csv::Error) -> SourceError {
    let position = e.position().map(|p| Position::Text { line: p.line(), column: 1, byte: p.byte() });
    let position = position.unwrap_or(Position::File);
    match e.kind() {
        csv::ErrorKind::UnequalLengths { expected_len, len, .. } => SourceError::malformed(
            path,
            format,
            position,
            format!("expected {expected_len} fields like the first record, found {len}"),
        ),
        csv::ErrorKind::Utf8 { err, .. } => {
            SourceError::malformed(path, format, position, format!("invalid UTF-8 in field {}", err.field() + 1))
        }
        csv::ErrorKind::Io(_) => {
            let csv::ErrorKind::Io(io) = e.into_kind() else { unreachable!() };
            read_failure(path, format, position, io)
        }
        _ => SourceError::malformed(path, format, position, e.to_string()),
    }
}

impl super::chunks::ChunkReader for CsvSource {
    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        Source::next_batch(self)
    }

    fn next_record(&self) -> Option<u64> {
        self.next_record
    }
}

impl Source for CsvSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    /// An uncompressed file of at least two chunks with a known column
    /// count, in chunks read in parallel.
    fn split(&mut self) -> Option<Vec<Box<dyn Source>>> {
        let untouched = self.reader.position().byte() == self.data_start && !self.finished;
        let whole_file = self.range_end.is_none();
        if self.info.compression != Compression::None || !untouched || !whole_file || self.columns.is_empty() {
            return None;
        }
        if self.info.bytes < 2 * super::chunks::CHUNK_BYTES {
            return None;
        }
        self.split_every(super::chunks::CHUNK_BYTES)
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
        let mut rows = Vec::with_capacity(TEXT_BATCH_ROWS);
        while rows.len() < TEXT_BATCH_ROWS {
            match self.read_row() {
                Ok(Some(row)) => rows.push(row),
                Ok(None) => {
                    self.finished = true;
                    break;
                }
                Err(e) => {
                    self.finished = true;
                    self.pending_error = Some(e);
                    break;
                }
            }
        }
        if rows.is_empty() {
            return match self.pending_error.take() {
                Some(e) => Err(e),
                None => Ok(None),
            };
        }
        Ok(Some(Batch::Rows(rows)))
    }
}

impl CsvSource {
    fn read_row(&mut self) -> Result<Option<Value>, SourceError> {
        let got =
            self.reader.read_record(&mut self.record).map_err(|e| csv_error(&self.info.path, self.info.format, e))?;
        if !got {
            self.next_record = Some(self.base + self.reader.position().byte());
            return Ok(None);
        }
        let starts_at = self.record.position().map_or(0, |p| p.byte());
        if let Some(end) = self.range_end
            && self.base + starts_at >= end
        {
            self.next_record = Some(self.base + starts_at);
            return Ok(None);
        }
        let position = || {
            self.record.position().map_or(Position::File, |p| Position::Text {
                line: p.line(),
                column: 1,
                byte: p.byte(),
            })
        };
        if self.record.as_slice().len() > MAX_RECORD_BYTES {
            let position = position();
            return Err(SourceError::Limit {
                path: self.info.path.clone(),
                position,
                message: format!("a record is longer than {MAX_RECORD_BYTES} bytes (limit against hostile files)"),
            });
        }
        if self.columns.is_empty() {
            self.columns = (1..=self.record.len()).map(|i| format!("column_{i}")).collect();
        }
        if self.record.len() != self.columns.len() {
            let message =
                format!("expected {} fields like the first record, found {}", self.columns.len(), self.record.len());
            return Err(SourceError::malformed(&self.info.path, self.info.format, position(), message));
        }
        let row = self.columns.iter().zip(self.record.iter()).map(|(name, cell)| (name.clone(), type_cell(cell)));
        Ok(Some(Value::Object(row.collect())))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_are_typed_conservatively() {
        assert_eq!(type_cell(""), Value::Null);
        assert_eq!(type_cell("TRUE"), Value::Bool(true));
        assert_eq!(type_cell("-42"), Value::Int(-42));
        assert_eq!(type_cell("007"), Value::Str("007".into()));
        assert_eq!(type_cell("1.50"), Value::Float(1.5));
        assert_eq!(type_cell("2e3"), Value::Float(2000.0));
        assert_eq!(type_cell("inf"), Value::Str("inf".into()));
        assert_eq!(type_cell("1."), Value::Str("1.".into()));
        assert_eq!(type_cell("99999999999999999999"), Value::BigInt("99999999999999999999".into()));
    }

    #[test]
    fn delimiters_are_sniffed_outside_quotes() {
        assert_eq!(sniff_delimiter(b"a;b;c\n1;2;3\n"), b';');
        assert_eq!(sniff_delimiter(b"a\tb\n\"x,y\"\t2\n"), b'\t');
        assert_eq!(sniff_delimiter(b"a|b\n1|2\n"), b'|');
        assert_eq!(sniff_delimiter(b"single\ncolumn\n"), b',');
    }

    fn recs(rows: &[&[&str]]) -> Vec<Vec<String>> {
        rows.iter().map(|r| r.iter().map(|s| s.to_string()).collect()).collect()
    }

    #[test]
    fn header_is_detected_from_typed_columns_or_distinct_names() {
        assert!(has_header(&recs(&[&["id", "name"], &["1", "ann"], &["2", "bo"]])));
        assert!(!has_header(&recs(&[&["1", "ann"], &["2", "bo"]])));
        assert!(has_header(&recs(&[&["city", "zone"], &["north", "a"], &["south", "b"]])));
        assert!(!has_header(&recs(&[&["north", "a"], &["south", "a"], &["north", "b"]])));
    }

    #[test]
    fn duplicate_column_names_are_numbered() {
        assert_eq!(dedupe_names(vec!["a".into(), "a".into(), "b".into()]), vec!["a", "a_2", "b"]);
    }
}
