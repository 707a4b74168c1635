//! Distinct counts: exact while the set of seen values fits a budget, then
//! HyperLogLog++ (Heule, Nunkesser & Hall 2013, via the `hyperloglogplus`
//! crate: sparse representation at small counts, Google's bias correction).
//!
//! Values are identified by a 64-bit hash, so "exact" means exact up to hash
//! collisions: below the budget of 100,000 values their chance is about
//! 100,000² / 2⁶⁵ ≈ 3·10⁻¹⁰.

use std::collections::HashSet;
use std::hash::{BuildHasherDefault, Hasher};

use super::hll::Sketch;
pub use super::hll::PRECISION;

/// Distinct values counted exactly before switching to the sketch.
pub const EXACT_BUDGET: usize = 100_000;

/// Relative standard error of the estimate, 1.04 / √m (Flajolet et al. 2007).
pub fn standard_error() -> f64 {
    1.04 / ((1u64 << PRECISION) as f64).sqrt()
}

/// Hashes are already well mixed; the sets only need to pass them through.
#[derive(Default, Clone, Copy)]
pub struct PassThrough(u64);

impl Hasher for PassThrough {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0 << 8) | b as u64;
        }
    }
    fn write_u64(&mut self, x: u64) {
        self.0 = x;
    }
}

type Build = BuildHasherDefault<PassThrough>;

#[derive(Clone)]
enum State {
    Exact(HashSet<u64, Build>),
    Sketch(Box<Sketch>),
    /// A count read back from a report; values added later are not counted.
    Reported(DistinctCount),
}

#[derive(Clone)]
pub struct Distinct {
    state: State,
    budget: usize,
}

impl std::fmt::Debug for Distinct {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match &self.state {
            State::Exact(set) => write!(f, "Distinct(exact, {})", set.len()),
            State::Sketch(_) => write!(f, "Distinct(sketch)"),
            State::Reported(c) => write!(f, "Distinct(reported, {})", c.value),
        }
    }
}

/// A distinct count and how it was obtained.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DistinctCount {
    pub value: u64,
    pub exact: bool,
    /// Relative standard error; 0 when exact.
    pub standard_error: f64,
}

impl Default for Distinct {
    fn default() -> Self {
        Distinct::with_budget(EXACT_BUDGET)
    }
}


impl Distinct {
    pub fn with_budget(budget: usize) -> Self {
        Distinct { state: State::Exact(HashSet::with_hasher(Build::default())), budget }
    }

    /// Changes the budget; a set already larger becomes a sketch now.
    pub fn set_budget(&mut self, budget: usize) {
        self.budget = budget;
        if matches!(&self.state, State::Exact(set) if set.len() > budget) {
            self.to_sketch();
        }
    }

    /// A count as a report states it.
    pub fn reported(count: DistinctCount) -> Self {
        Distinct { state: State::Reported(count), budget: EXACT_BUDGET }
    }

    /// Starts as a copy of `merged`'s sketch when it has one (see
    /// [`super::field::FieldStats::start_past`]): the part's values are
    /// then added to what is already known, and merging back is a union.
    pub fn start_past(&mut self, merged: &Distinct) {
        if let (State::Exact(mine), State::Sketch(theirs)) = (&self.state, &merged.state)
            && mine.is_empty()
        {
            self.state = State::Sketch(theirs.clone());
        }
    }

    /// Adds a value by its 64-bit hash (see [`hash_bytes`]).
    pub fn add_hash(&mut self, hash: u64) {
        match &mut self.state {
            State::Exact(set) => {
                set.insert(hash);
                if set.len() > self.budget {
                    self.to_sketch();
                }
            }
            State::Sketch(sketch) => sketch.insert(hash),
            State::Reported(_) => {}
        }
    }

    /// Adds values by their hashes, as [`Self::add_hash`] does one at a time.
    pub fn add_hashes(&mut self, hashes: impl IntoIterator<Item = u64>) {
        let mut hashes = hashes.into_iter();
        while let State::Exact(set) = &mut self.state {
            let Some(hash) = hashes.next() else { return };
            set.insert(hash);
            if set.len() > self.budget {
                self.to_sketch();
            }
        }
        if let State::Sketch(sketch) = &mut self.state {
            sketch.insert_all(hashes);
        }
    }

    fn to_sketch(&mut self) {
        if let State::Exact(set) = &self.state {
            let mut sketch = Box::<Sketch>::default();
            for &h in set {
                sketch.insert(h);
            }
            sketch.use_front_once_dense();
            self.state = State::Sketch(sketch);
        }
    }

    pub fn merge(&mut self, other: &Distinct) {
        match (&mut self.state, &other.state) {
            (State::Exact(mine), State::Exact(theirs)) => {
                mine.extend(theirs.iter().copied());
                if mine.len() > self.budget {
                    self.to_sketch();
                }
            }
            (State::Exact(_), State::Sketch(theirs)) => {
                let mine = std::mem::replace(&mut self.state, State::Sketch(theirs.clone()));
                if let (State::Exact(set), State::Sketch(sketch)) = (mine, &mut self.state) {
                    set.iter().for_each(|&h| sketch.insert(h));
                }
            }
            (State::Sketch(mine), State::Exact(theirs)) => theirs.iter().for_each(|&h| mine.insert(h)),
            (State::Sketch(mine), State::Sketch(theirs)) => mine.merge(theirs),
            // Reports are read, not merged: a reported count stays as stated.
            (State::Reported(_), _) | (_, State::Reported(_)) => {}
        }
    }

    pub fn count(&self) -> DistinctCount {
        match &self.state {
            State::Exact(set) => DistinctCount { value: set.len() as u64, exact: true, standard_error: 0.0 },
            State::Sketch(sketch) => {
                let estimate = sketch.count();
                DistinctCount { value: estimate.round() as u64, exact: false, standard_error: standard_error() }
            }
            State::Reported(count) => *count,
        }
    }
}

/// A 64-bit hash of bytes, the same on every machine and run.
pub fn hash_bytes(bytes: &[u8]) -> u64 {
    super::hash::bytes(bytes)
}

/// A 64-bit hash of a number.
pub fn hash_u64(x: u64) -> u64 {
    super::hash::int(x as i128)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_below_the_budget_then_a_sketch() {
        let mut d = Distinct::with_budget(1000);
        for i in 0..500u64 {
            d.add_hash(hash_u64(i % 250));
        }
        assert_eq!(d.count(), DistinctCount { value: 250, exact: true, standard_error: 0.0 });
        for i in 0..5000u64 {
            d.add_hash(hash_u64(i));
        }
        let c = d.count();
        assert!(!c.exact);
        assert!((c.value as f64 - 5000.0).abs() < 5000.0 * 3.0 * standard_error(), "{c:?}");
    }

    #[test]
    fn adding_hashes_in_bulk_counts_as_one_at_a_time() {
        // Across the switch to the sketch, and on past the sketch's own
        // switch to its dense registers.
        let hashes: Vec<u64> = (0..150_000u64).map(|i| hash_u64(i % 100_000)).collect();
        let (mut one_by_one, mut bulk) = (Distinct::with_budget(1000), Distinct::with_budget(1000));
        hashes.iter().for_each(|&h| one_by_one.add_hash(h));
        for run in hashes.chunks(7_000) {
            bulk.add_hashes(run.iter().copied());
        }
        assert!(!bulk.count().exact);
        assert_eq!(bulk.count(), one_by_one.count());
        let mut small = Distinct::with_budget(1000);
        small.add_hashes([5, 5, 6]);
        assert_eq!(small.count(), DistinctCount { value: 2, exact: true, standard_error: 0.0 });
    }

    #[test]
    fn merging_is_a_union_in_every_combination() {
        let of = |range: std::ops::Range<u64>, budget| {
            let mut d = Distinct::with_budget(budget);
            range.for_each(|i| d.add_hash(hash_u64(i)));
            d
        };
        let mut exact = of(0..100, 1000);
        exact.merge(&of(50..150, 1000));
        assert_eq!(exact.count().value, 150);
        assert!(exact.count().exact);
        for (a, b) in [(1000, 10), (10, 1000), (10, 10)] {
            let mut left = of(0..3000, a);
            left.merge(&of(2000..6000, b));
            let c = left.count();
            assert!(!c.exact);
            assert!((c.value as f64 - 6000.0).abs() < 6000.0 * 3.0 * standard_error(), "{a},{b}: {c:?}");
        }
    }
}
