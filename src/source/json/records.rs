//! A batch of JSON records cut from the stream but not yet parsed.
//!
//! Parsing is most of the cost of reading JSON, and each record stands
//! alone, so the consumer parses them — in parallel, in the thread that then
//! uses and drops each value (keeping allocation thread-local).

use std::path::PathBuf;
use std::sync::Arc;

use rayon::prelude::*;

use super::frame::Start;
use super::{as_row, parse};
use crate::source::error::{Position, SourceError, line_column};
use crate::source::Format;
use crate::value::Value;

#[derive(Debug, Clone)]
pub struct RawRecords {
    text: Arc<Vec<u8>>,
    /// Byte range in `text` and file position of each record.
    records: Vec<(usize, usize, Start)>,
    path: Arc<PathBuf>,
    format: Format,
    /// Members added to every row that lacks them (partition fields).
    extra_members: Vec<(String, Value)>,
}

impl RawRecords {
    pub(super) fn new(text: Vec<u8>, records: Vec<(usize, usize, Start)>, path: Arc<PathBuf>, format: Format) -> Self {
        RawRecords { text: Arc::new(text), records, path, format, extra_members: Vec::new() }
    }

    pub fn len(&self) -> usize {
        self.records.len()
    }

    pub fn is_empty(&self) -> bool {
        self.records.is_empty()
    }

    /// Keeps the first `n` records.
    pub fn truncate(&mut self, n: usize) {
        self.records.truncate(n);
    }

    /// Adds `members` to every row that lacks them.
    pub fn add_members(&mut self, members: Vec<(String, Value)>) {
        self.extra_members.extend(members);
    }

    /// Parses record `i` into a row, or the error with its place in the file.
    pub fn row(&self, i: usize) -> Result<Value, SourceError> {
        let (from, to, start) = self.records[i];
        let bytes = &self.text[from..to];
        let mut row = as_row(parse::parse_value(bytes).map_err(|e| self.syntax_error(bytes, start, e))?);
        if let Value::Object(members) = &mut row {
            for (k, v) in &self.extra_members {
                if !members.iter().any(|(existing, _)| existing == k) {
                    members.push((k.clone(), v.clone()));
                }
            }
        }
        Ok(row)
    }

    /// Folds the records into one accumulator per parallel chunk, in order:
    /// `fold(acc, index, row)` for each row. A chunk stops at its first bad
    /// record; the result holds the accumulators up to and including that
    /// chunk, and the first error (records after it are not used).
    pub fn fold_chunks<A: Send>(
        &self,
        make: impl Fn() -> A + Sync,
        fold: impl Fn(&mut A, usize, Value) + Sync,
    ) -> (Vec<A>, Option<SourceError>) {
        const CHUNK: usize = 512;
        let chunks: Vec<(A, Option<SourceError>)> = (0..self.len())
            .collect::<Vec<usize>>()
            .par_chunks(CHUNK)
            .map(|indices| {
                let mut acc = make();
                for &i in indices {
                    match self.row(i) {
                        Ok(row) => fold(&mut acc, i, row),
                        Err(e) => return (acc, Some(e)),
                    }
                }
                (acc, None)
            })
            .collect();
        let mut out = Vec::with_capacity(chunks.len());
        for (acc, error) in chunks {
            out.push(acc);
            if error.is_some() {
                return (out, error);
            }
        }
        (out, None)
    }

    /// Every row, parsed (in parallel), and the first error if one stopped them.
    pub fn rows(&self) -> (Vec<Value>, Option<SourceError>) {
        let (chunks, error) = self.fold_chunks(Vec::new, |rows: &mut Vec<Value>, _, row| rows.push(row));
        (chunks.into_iter().flatten().collect(), error)
    }

    fn syntax_error(&self, record: &[u8], start: Start, e: parse::SyntaxError) -> SourceError {
        let (line, column) = line_column(record, e.offset);
        let position = Position::Text {
            line: start.line + line - 1,
            column: if line == 1 { start.column + column - 1 } else { column },
            byte: start.byte + e.offset as u64,
        };
        SourceError::malformed(&self.path, self.format, position, e.message)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::source::json::frame::LineFramer;

    fn records_of(text: &str) -> RawRecords {
        let mut framer = LineFramer::new(text.as_bytes());
        let mut buf = Vec::new();
        let mut records = Vec::new();
        loop {
            let from = buf.len();
            match framer.append_record(&mut buf).unwrap() {
                Some(start) => records.push((from, buf.len(), start)),
                None => break,
            }
        }
        RawRecords::new(buf, records, Arc::new("t.jsonl".into()), Format::JsonLines)
    }

    #[test]
    fn parallel_chunks_stop_at_the_first_bad_record_and_keep_the_rows_before() {
        let mut text: String = (0..1500).map(|i| format!("{{\"i\":{i}}}\n")).collect();
        text = text.replacen("{\"i\":1000}", "{\"i\":}", 1).replacen("{\"i\":1400}", "{oops}", 1);
        let (rows, error) = records_of(&text).rows();
        assert_eq!(rows.len(), 1000, "every row before the first bad one, in order");
        assert_eq!(rows[999], Value::Object(vec![("i".into(), Value::Int(999))]));
        let message = error.expect("the first error").to_string();
        assert!(message.starts_with("t.jsonl: line 1001, column 6"), "{message}");
    }

    #[test]
    fn extra_members_fill_rows_that_lack_them() {
        let mut records = records_of("{\"a\":1}\n{\"a\":2,\"day\":9}\n");
        records.add_members(vec![("day".into(), Value::Int(3))]);
        let (rows, error) = records.rows();
        assert!(error.is_none());
        assert_eq!(rows[0], Value::Object(vec![("a".into(), Value::Int(1)), ("day".into(), Value::Int(3))]));
        assert_eq!(rows[1], Value::Object(vec![("a".into(), Value::Int(2)), ("day".into(), Value::Int(9))]));
    }
}
