//! A spread sample: the source is cut into many small pieces (see
//! [`crate::source::Pieces`]), pieces are picked at random and read whole
//! until they hold [`READ_FACTOR`] times the rows wanted, and a reservoir
//! keeps a uniform sample of the rows read. Every row of the source has
//! about the same chance to be in it (each piece is as likely to be picked,
//! and each row read is as likely to be kept; not exactly, since pieces hold
//! different numbers of rows and reading stops once enough are seen), but rows come in runs from the pieces
//! read, and the rest of the source is never read: time depends on the
//! sample size, not the source's.

use std::collections::HashSet;
use std::sync::atomic::{AtomicBool, Ordering};

use super::sample::observe_kept;
use super::{Coverage, SampleOptions, Sampled, Scan, Spread};
use crate::sample::SplitMix64;
use crate::sample::kept::KeptRows;
use crate::source::{Pieces, Progress, Source, SourceError, SourceInfo};

/// Rows read for each row wanted, so the reservoir has a choice. Our own
/// choice.
pub const READ_FACTOR: u64 = 4;
/// Pieces a spread sample aims to read: enough places in the source that
/// one odd stretch of rows does not make the sample. Our own choice.
pub const PIECES_READ: u64 = 32;
/// A spread sample is taken only from a source holding at least this many
/// times the rows it would read; a smaller source is read whole, which
/// takes about as long and gives a sample of every row. Our own choice.
pub const MIN_SHARE: u64 = 16;
/// Bounds on rows per piece: a smaller piece costs more in seeks than in
/// reading; a larger one puts too many neighbouring rows together.
const PIECE_ROWS: std::ops::RangeInclusive<u64> = 64..=8192;

/// The pieces a spread sample of `options.rows` rows would read from, or
/// `None` when the source cannot be cut or is too small to be worth it.
pub(super) fn plan(source: &mut dyn Source, options: SampleOptions) -> Option<Box<dyn Pieces>> {
    let wanted = options.rows as u64 * READ_FACTOR;
    let rows_per_piece = (wanted / PIECES_READ).clamp(*PIECE_ROWS.start(), *PIECE_ROWS.end());
    let pieces = source.pieces(rows_per_piece)?;
    let worth_it = pieces.estimated_rows() >= MIN_SHARE * wanted && pieces.count() as u64 > PIECES_READ;
    worth_it.then_some(pieces)
}

pub(super) fn scan_spread(
    info: SourceInfo,
    pieces: Box<dyn Pieces>,
    options: SampleOptions,
    profile: bool,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Scan {
    let wanted = options.rows as u64 * READ_FACTOR;
    let mut kept = KeptRows::new(options.rows, options.seed, info.path.clone());
    let mut picker = Picker::new(pieces.count(), options.seed);
    // Per piece read: its first stream row and its first source row.
    let mut starts: Vec<(u64, Option<u64>)> = Vec::new();
    let coverage = loop {
        if stop.load(Ordering::Relaxed) {
            break Coverage::Stopped(kept.seen());
        }
        if kept.seen() >= wanted {
            break Coverage::Full;
        }
        let Some(i) = picker.next() else { break Coverage::Full };
        starts.push((kept.seen(), None));
        match read_piece(pieces.as_ref(), i, &mut kept) {
            Ok(first_row) => starts.last_mut().expect("pushed above").1 = first_row,
            Err(e) => break Coverage::Broken { rows: kept.seen(), error: e.to_string() },
        }
        progress(Progress { done: kept.seen().min(wanted), total: wanted });
    };
    let from_rows = kept.seen();
    let source_row = |stream_row: u64| {
        let k = starts.partition_point(|&(start, _)| start <= stream_row).checked_sub(1)?;
        let (start, first) = starts[k];
        first.map(|first| first + (stream_row - start))
    };
    let (shape, coverage) = observe_kept(kept, &info, profile, coverage, source_row);
    // Every piece read: the sample was drawn from every row.
    let spread = (picker.picked() < pieces.count())
        .then_some(Spread { pieces_read: picker.picked() as u64, pieces: pieces.count() as u64 });
    let sample =
        (from_rows > shape.rows || spread.is_some()).then_some(Sampled { from_rows, seed: options.seed, spread });
    Scan { info, shape, coverage, sample, from_report: None }
}

/// Offers every row of piece `i`; the source row of its first row, if known.
fn read_piece(pieces: &dyn Pieces, i: usize, kept: &mut KeptRows) -> Result<Option<u64>, SourceError> {
    let (mut piece, first_row) = pieces.piece(i)?;
    while let Some(batch) = piece.next_batch()? {
        kept.offer(&batch).map_err(|e| piece.place_error(e))?;
    }
    Ok(first_row)
}

/// Piece numbers in a random order without repeats, drawn one at a time:
/// a sample reads few of many pieces, so a draw seldom repeats.
struct Picker {
    count: usize,
    rng: SplitMix64,
    picked: HashSet<usize>,
}

impl Picker {
    fn new(count: usize, seed: u64) -> Self {
        Picker { count, rng: SplitMix64::new(seed), picked: HashSet::new() }
    }

    fn picked(&self) -> usize {
        self.picked.len()
    }

    fn next(&mut self) -> Option<usize> {
        if self.picked.len() >= self.count {
            return None;
        }
        // Past half the pieces, draw among those left, so drawing stays quick.
        if self.picked.len() * 2 >= self.count {
            let left: Vec<usize> = (0..self.count).filter(|i| !self.picked.contains(i)).collect();
            let i = left[self.rng.below(left.len())];
            self.picked.insert(i);
            return Some(i);
        }
        loop {
            let i = self.rng.below(self.count);
            if self.picked.insert(i) {
                return Some(i);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_picker_gives_every_piece_once() {
        let mut picker = Picker::new(50, 9);
        let mut all: Vec<usize> = std::iter::from_fn(|| picker.next()).collect();
        assert_ne!(all, (0..50).collect::<Vec<_>>(), "a random order");
        all.sort();
        assert_eq!(all, (0..50).collect::<Vec<_>>());
    }
}
