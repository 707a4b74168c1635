//! Counting the distinct values of one run (an Arrow batch's column) before
//! they reach the field's distinct set and top values: a column of a few
//! dozen categories then costs those structures a few dozen updates per
//! batch instead of thousands. Their tables are large and shared by the
//! whole profile (cache misses, perf: about half of a Parquet profile's
//! time); this table is small, reused, and stays in cache.
//!
//! A run whose values are mostly distinct gains nothing from counting, so
//! the first [`PROBE`] values decide: with more than half of them distinct
//! the run is not counted.

use std::cell::RefCell;
use std::collections::HashMap;
use std::collections::hash_map::Entry;

use super::distinct::PassThrough;

/// Values looked at before deciding whether counting pays.
pub const PROBE: usize = 512;
/// Runs shorter than this are not counted (nothing to gain).
const SHORTEST: usize = 64;

/// One distinct value of a run: its hash, how often it occurs, and the
/// index of its first occurrence.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Counted {
    pub hash: u64,
    pub count: u64,
    pub first: usize,
}

#[derive(Default)]
struct Table {
    slots: HashMap<u64, usize, std::hash::BuildHasherDefault<PassThrough>>,
    /// Distinct values in order of first occurrence (so results do not
    /// depend on the table's layout).
    counted: Vec<Counted>,
}

impl Table {
    /// Counts `hashes`, which start at index `offset` of the run.
    fn count(&mut self, hashes: &[u64], offset: usize) {
        for (i, &hash) in hashes.iter().enumerate() {
            match self.slots.entry(hash) {
                Entry::Occupied(slot) => self.counted[*slot.get()].count += 1,
                Entry::Vacant(slot) => {
                    slot.insert(self.counted.len());
                    self.counted.push(Counted { hash, count: 1, first: offset + i });
                }
            }
        }
    }
}

thread_local! {
    static TABLE: RefCell<Table> = RefCell::new(Table::default());
}

/// Calls `each` once per distinct hash of `hashes` with its count and first
/// index, in order of first occurrence, and returns true; returns false
/// without calling it when counting would not pay (short or mostly
/// distinct runs), leaving the caller to add values one at a time.
pub fn each_distinct(hashes: &[u64], mut each: impl FnMut(Counted)) -> bool {
    if hashes.len() < SHORTEST {
        return false;
    }
    TABLE.with_borrow_mut(|table| {
        table.slots.clear();
        table.counted.clear();
        let probe = PROBE.min(hashes.len());
        table.count(&hashes[..probe], 0);
        if table.counted.len() * 2 > probe {
            return false;
        }
        table.count(&hashes[probe..], probe);
        table.counted.iter().for_each(|&c| each(c));
        true
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn counted(hashes: &[u64]) -> Option<Vec<Counted>> {
        let mut out = Vec::new();
        each_distinct(hashes, |c| out.push(c)).then_some(out)
    }

    #[test]
    fn repeated_values_are_counted_once_each_in_order_of_first_occurrence() {
        let hashes: Vec<u64> = (0..1000).map(|i| [7, 3, 7, 9][i % 4]).chain([5]).collect();
        let found = counted(&hashes).expect("few distinct values are counted");
        let expected = [
            Counted { hash: 7, count: 500, first: 0 },
            Counted { hash: 3, count: 250, first: 1 },
            Counted { hash: 9, count: 250, first: 3 },
            // First seen after the probe: its index counts from the run's start.
            Counted { hash: 5, count: 1, first: 1000 },
        ];
        assert_eq!(found, expected);
    }

    #[test]
    fn mostly_distinct_and_short_runs_are_left_to_the_caller() {
        let distinct: Vec<u64> = (0..10_000).collect();
        assert_eq!(counted(&distinct), None);
        assert_eq!(counted(&[1; SHORTEST - 1]), None);
        // Half distinct in the probe is still counted; the table is reused cleanly.
        let half: Vec<u64> = (0..PROBE as u64).map(|i| i / 2).collect();
        let found = counted(&half).unwrap();
        assert_eq!(found.len(), PROBE / 2);
        assert!(found.iter().all(|c| c.count == 2));
    }
}
