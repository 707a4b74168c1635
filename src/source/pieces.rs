//! Cutting an uncompressed JSON Lines file into many small pieces for a
//! spread sample (see [`super::Pieces`]), without reading it: the file is
//! divided into equal byte cells, and a piece holds the lines that start in
//! its cell. Only the cells a sample picks are ever looked at, each with
//! two seeks to find its line starts, so the pieces of any size of file
//! cost nothing to make.

use std::fs::File;
use std::io::Read;
use std::path::Path;

use super::chunks::{ChunkFormat, TextChunk, next_line_start};
use super::{Pieces, Source, SourceError, SourceInfo};

/// Bytes read from the start of a file to estimate its line length.
const PROBE_BYTES: usize = 64 * 1024;
/// The smallest cell, a disk page: below this, seeking costs more than reading.
const MIN_CELL_BYTES: u64 = 4 * 1024;

/// The average line length of the first [`PROBE_BYTES`] of `path` (at
/// least 1): enough to size cells, not a statement about the file.
pub fn estimate_line_bytes(path: &Path) -> Result<u64, SourceError> {
    let file = File::open(path).map_err(|e| SourceError::io(path, e))?;
    let mut probe = Vec::with_capacity(PROBE_BYTES);
    file.take(PROBE_BYTES as u64).read_to_end(&mut probe).map_err(|e| SourceError::io(path, e))?;
    let lines = memchr::memchr_iter(b'\n', &probe).count().max(1) as u64;
    Ok((probe.len() as u64 / lines).max(1))
}

/// The lines of one JSON Lines file, in cells of equal bytes.
pub struct LinePieces {
    whole: SourceInfo,
    cell_bytes: u64,
    line_bytes: u64,
}

impl LinePieces {
    /// Cells holding about `rows` lines each.
    pub fn new(whole: &SourceInfo, rows: u64) -> Result<Self, SourceError> {
        let line_bytes = estimate_line_bytes(&whole.path)?;
        let cell_bytes = line_bytes.saturating_mul(rows.max(1)).max(MIN_CELL_BYTES);
        Ok(LinePieces { whole: whole.clone(), cell_bytes, line_bytes })
    }

    /// Where the lines starting at or after `at` begin (the file's end when none do).
    fn line_start(&self, file: &mut File, at: u64) -> Result<u64, SourceError> {
        if at >= self.whole.bytes {
            return Ok(self.whole.bytes);
        }
        Ok(next_line_start(file, &self.whole.path, at)?.unwrap_or(self.whole.bytes))
    }
}

impl Pieces for LinePieces {
    fn count(&self) -> usize {
        self.whole.bytes.div_ceil(self.cell_bytes).max(1) as usize
    }

    fn estimated_rows(&self) -> u64 {
        self.whole.bytes / self.line_bytes
    }

    /// A line longer than a cell leaves the cells after its start empty;
    /// such a piece reads no rows.
    fn piece(&self, i: usize) -> Result<(Box<dyn Source>, Option<u64>), SourceError> {
        let path = &self.whole.path;
        let mut file = File::open(path).map_err(|e| SourceError::io(path, e))?;
        let cell = i as u64 * self.cell_bytes;
        let start = self.line_start(&mut file, cell)?;
        let end = self.line_start(&mut file, cell.saturating_add(self.cell_bytes))?.max(start);
        let chunk = TextChunk::new(&self.whole, ChunkFormat::JsonLines, start, end);
        Ok((Box::new(chunk), (start == 0).then_some(0)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::source::Batch;

    fn lines_file(dir: &Path, n: usize) -> std::path::PathBuf {
        let path = dir.join("lines.jsonl");
        // Lines of different lengths, so cells cut them anywhere.
        let text: String = (0..n).map(|i| format!("{{\"id\":{i},\"pad\":\"{}\"}}\n", "x".repeat(i % 37))).collect();
        std::fs::write(&path, text).unwrap();
        path
    }

    fn ids(mut piece: Box<dyn Source>) -> Vec<i64> {
        let mut ids = Vec::new();
        while let Some(batch) = piece.next_batch().unwrap() {
            let Batch::Json(records) = batch else { panic!("JSON Lines gives raw records") };
            for r in 0..records.len() {
                let row = records.row(r).unwrap();
                let crate::value::Value::Object(fields) = row else { panic!("{row:?}") };
                ids.push(match &fields[0].1 {
                    crate::value::Value::Int(id) => *id,
                    other => panic!("{other:?}"),
                });
            }
        }
        ids
    }

    #[test]
    fn the_pieces_hold_every_line_once_in_order() {
        let dir = tempfile::tempdir().unwrap();
        let path = lines_file(dir.path(), 5_000);
        let source = crate::source::open_file(&path, Default::default()).unwrap();
        let pieces = LinePieces::new(source.info(), 300).unwrap();
        assert!(pieces.count() > 5, "{} pieces", pieces.count());
        let mut all = Vec::new();
        for i in 0..pieces.count() {
            let (piece, first) = pieces.piece(i).unwrap();
            assert_eq!(first.is_some(), i == 0, "only the first piece knows its row");
            all.extend(ids(piece));
        }
        assert_eq!(all, (0..5_000).collect::<Vec<i64>>());
    }

    #[test]
    fn a_line_longer_than_a_cell_is_read_by_one_piece() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("long.jsonl");
        let long = "y".repeat(3 * MIN_CELL_BYTES as usize);
        std::fs::write(&path, format!("{{\"id\":0}}\n{{\"id\":1,\"s\":\"{long}\"}}\n{{\"id\":2}}\n")).unwrap();
        let source = crate::source::open_file(&path, Default::default()).unwrap();
        let pieces = LinePieces::new(source.info(), 1).unwrap();
        assert!(pieces.count() >= 3);
        let all: Vec<i64> = (0..pieces.count()).flat_map(|i| ids(pieces.piece(i).unwrap().0)).collect();
        assert_eq!(all, vec![0, 1, 2]);
    }
}
