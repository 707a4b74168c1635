//! The statistics kept for one field, fed as the Shape observes its values.

use super::distinct::{Distinct, DistinctCount};
use super::numbers::NumberStats;

#[derive(Debug, Clone, Default)]
pub struct FieldStats {
    /// Present once a number was seen (ints, floats, decimals).
    pub numbers: Option<NumberStats>,
    /// Distinct non-null scalar values.
    pub distinct: Distinct,
}

impl FieldStats {
    pub fn add_number(&mut self, x: f64) {
        self.numbers.get_or_insert_with(NumberStats::new).add(x);
    }

    /// Adds a scalar value by its hash (see [`super::hash`]).
    pub fn add_distinct(&mut self, hash: u64) {
        self.distinct.add_hash(hash);
    }

    pub fn merge(&mut self, other: &FieldStats) {
        match (&mut self.numbers, &other.numbers) {
            (Some(mine), Some(theirs)) => mine.merge(theirs),
            (None, Some(theirs)) => self.numbers = Some(theirs.clone()),
            _ => {}
        }
        self.distinct.merge(&other.distinct);
    }

    pub fn distinct_count(&self) -> Option<DistinctCount> {
        let c = self.distinct.count();
        (c.value > 0).then_some(c)
    }
}

/// Two summaries are equal when what they report is equal (the sketches'
/// insides may differ by merge order).
impl PartialEq for FieldStats {
    fn eq(&self, other: &Self) -> bool {
        let numbers = |s: &FieldStats| {
            s.numbers.as_ref().map(|n| (n.moments.count(), n.moments.min(), n.moments.max(), n.nan, n.pos_inf, n.neg_inf))
        };
        self.distinct.count() == other.distinct.count() && numbers(self) == numbers(other)
    }
}
