//! Counting the distinct values of one run (an Arrow batch's column) before
//! they reach the field's distinct set and top values: a column of a few
//! dozen categories then costs those structures a few dozen updates per
//! batch instead of thousands, and a column of mostly distinct values gives
//! the top values one summary to merge per run (see
//! [`super::top::TopValues::add_run`]) instead of an insert per value. The
//! field's tables are large and shared by the whole profile (cache misses);
//! this table is small, reused, and stays in cache.

use std::cell::RefCell;
use std::ops::Range;

/// One distinct value of a run: its hash, how often it occurs, and the
/// index of its first occurrence.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Counted {
    pub hash: u64,
    /// Within a run of at most [`RUN`] values, so 32 bits hold both
    /// (16-byte entries keep a run's table in the second-level cache).
    pub count: u32,
    pub first: u32,
}

/// Values counted in one go; a longer run is counted in pieces of this
/// many (each piece is a run of its own to the caller).
pub const RUN: usize = 8192;
/// An empty slot.
const EMPTY: u16 = u16::MAX;
/// Table slots per value counted (see [`Table`]).
const SLOTS_PER_VALUE: usize = 8;

/// Open addressing with linear probing over the hashes' low bits (they are
/// XXH3 outputs, already well mixed). A slot holds the index of its entry in
/// `counted`. Eight slots a value (65,536 two-byte slots for a full run, in
/// the second-level cache) keep the table at most one-eighth full, so a new
/// value's first probe nearly always finds an empty slot: the branch is
/// predicted and the entry it would compare with is not loaded. At two
/// slots a value the table took 8 % more CPU over a whole profile (perf,
/// 10 M-row Parquet; four a value: 4 % more).
#[derive(Default)]
struct Table {
    slots: Vec<u16>,
    /// Distinct values in order of first occurrence (so results do not
    /// depend on the table's layout).
    counted: Vec<Counted>,
}

impl Table {
    /// Counts `hashes` (at most [`RUN`]), which start at index `offset`.
    fn count(&mut self, hashes: &[u64], offset: usize) {
        debug_assert!(hashes.len() <= RUN);
        assert!(offset + hashes.len() <= u32::MAX as usize, "an Arrow array holds fewer than 2^32 values");
        let size = (SLOTS_PER_VALUE * hashes.len()).next_power_of_two().max(64);
        self.slots.clear();
        self.slots.resize(size, EMPTY);
        self.counted.clear();
        let mask = size - 1;
        for (i, &hash) in hashes.iter().enumerate() {
            let mut at = hash as usize & mask;
            loop {
                let entry = self.slots[at];
                if entry == EMPTY {
                    self.slots[at] = self.counted.len() as u16;
                    self.counted.push(Counted { hash, count: 1, first: (offset + i) as u32 });
                    break;
                }
                let seen = &mut self.counted[entry as usize];
                if seen.hash == hash {
                    seen.count += 1;
                    break;
                }
                at = (at + 1) & mask;
            }
        }
    }
}

thread_local! {
    static TABLE: RefCell<Table> = RefCell::new(Table::default());
}

/// Calls `use_counts` once per piece of at most [`RUN`] values of `hashes`,
/// with the piece's range in `hashes` and each distinct hash of the piece
/// once, its count and its first index in `hashes`, in order of first
/// occurrence.
pub fn each_run(hashes: &[u64], mut use_counts: impl FnMut(Range<usize>, &[Counted])) {
    TABLE.with_borrow_mut(|table| {
        for (piece, run) in hashes.chunks(RUN).enumerate() {
            let start = piece * RUN;
            table.count(run, start);
            use_counts(start..start + run.len(), &table.counted);
        }
    })
}

/// Whether a run of `len` values with `distinct` distinct ones is fed a
/// distinct value at a time with its count rather than value by value:
/// when values repeat four times or more on average (our choice, not tuned:
/// a weighted add costs a few plain ones).
pub fn repeats_enough(distinct: usize, len: usize) -> bool {
    4 * distinct <= len
}

#[cfg(test)]
mod tests {
    use super::*;

    fn counted(hashes: &[u64]) -> Vec<Counted> {
        let mut all = Vec::new();
        each_run(hashes, |_, c| all.extend_from_slice(c));
        all
    }

    #[test]
    fn repeated_values_are_counted_once_each_in_order_of_first_occurrence() {
        let hashes: Vec<u64> = (0..1000).map(|i| [7, 3, 7, 9][i % 4]).chain([5]).collect();
        let expected = [
            Counted { hash: 7, count: 500, first: 0 },
            Counted { hash: 3, count: 250, first: 1 },
            Counted { hash: 9, count: 250, first: 3 },
            Counted { hash: 5, count: 1, first: 1000 },
        ];
        assert_eq!(counted(&hashes), expected);
    }

    #[test]
    fn colliding_slots_and_a_reused_table_count_right() {
        // Equal low bits everywhere: every hash probes past the others.
        let hashes: Vec<u64> = (0..300u64).map(|i| (i % 100) << 40).collect();
        let found = counted(&hashes);
        assert_eq!(found.len(), 100);
        assert!(found.iter().enumerate().all(|(i, c)| c.hash == (i as u64) << 40 && c.count == 3 && c.first as usize == i));
        // Mostly distinct and longer than a run, then short: the table starts
        // clean each time, and a second run's indices count from the start.
        let distinct: Vec<u64> = (0..10_000).collect();
        let found = counted(&distinct);
        assert_eq!(found.len(), 10_000);
        assert_eq!(found[RUN + 5], Counted { hash: (RUN + 5) as u64, count: 1, first: (RUN + 5) as u32 });
        assert_eq!(counted(&[0, 0]), [Counted { hash: 0, count: 2, first: 0 }]);
        assert!(counted(&[]).is_empty());
    }
}
