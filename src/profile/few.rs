//! Counts by value while a numeric stream has few distinct values (list
//! lengths, text lengths, small codes, dates): quantiles, histograms and
//! fence counts are then exact however many values there are, and cost a
//! hash lookup per value instead of a sketch update.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};


/// Distinct values counted before the stream goes to the sketch.
pub const FEW_VALUES: usize = 1024;

/// f64 bit patterns of small integers end in zeros: mix them (MurmurHash3's
/// 64-bit finaliser) before the table uses the low bits.
#[derive(Default, Clone, Copy)]
pub struct MixBits(u64);

impl Hasher for MixBits {
    fn finish(&self) -> u64 {
        let mut h = self.0;
        h ^= h >> 33;
        h = h.wrapping_mul(0xff51_afd7_ed55_8ccd);
        h ^= h >> 33;
        h = h.wrapping_mul(0xc4ce_b9fe_1a85_ec53);
        h ^ (h >> 33)
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

/// Whole numbers below this are counted in a plain table, without hashing
/// (lengths of text and lists, small codes: the common few-valued streams).
const SMALL: usize = 256;

#[derive(Debug, Clone, Default)]
pub struct FewValues {
    /// Counts of the whole numbers 0..SMALL, by value (empty until one is seen).
    small: Vec<u64>,
    /// How many entries of `small` are not zero.
    small_distinct: usize,
    /// Counts of every other value, by its bits.
    counts: HashMap<u64, u64, BuildHasherDefault<MixBits>>,
    total: u64,
}

impl FewValues {
    /// Counts a finite value; false once more than `limit` distinct values
    /// have been seen (the caller then moves them to the sketch).
    pub fn add(&mut self, x: f64, limit: usize) -> bool {
        self.add_repeated(x, 1, limit)
    }

    /// Counts `count` copies of a finite value, as [`Self::add`] does one.
    pub fn add_repeated(&mut self, x: f64, count: u64, limit: usize) -> bool {
        self.add_count(x, count);
        self.distinct() <= limit
    }

    fn add_count(&mut self, x: f64, count: u64) {
        self.total += count;
        // -0.0 and 0.0 are one value (both land on slot 0).
        if (0.0..SMALL as f64).contains(&x) && (x as usize) as f64 == x {
            if self.small.is_empty() {
                self.small = vec![0; SMALL];
            }
            let slot = &mut self.small[x as usize];
            self.small_distinct += (*slot == 0) as usize;
            *slot += count;
        } else {
            *self.counts.entry((x + 0.0).to_bits()).or_insert(0) += count;
        }
    }

    pub fn merge(&mut self, other: &FewValues, limit: usize) -> bool {
        other.pairs().for_each(|(v, c)| self.add_count(v, c));
        self.distinct() <= limit
    }

    /// Distinct values counted.
    pub fn distinct(&self) -> usize {
        self.small_distinct + self.counts.len()
    }

    /// (value, count) pairs, ascending.
    pub fn sorted(&self) -> Vec<(f64, u64)> {
        let mut pairs: Vec<(f64, u64)> = self.pairs().collect();
        pairs.sort_by(|a, b| a.0.total_cmp(&b.0));
        pairs
    }

    /// Hyndman & Fan type 7 quantiles, as [`quantiles::type7`] on the
    /// values spelled out.
    pub fn quantiles(&self, probabilities: &[f64]) -> Vec<f64> {
        let pairs = self.sorted();
        let n = self.total;
        // The value at 0-based order statistic `k`.
        let at = |k: u64| {
            let mut seen = 0;
            for &(v, c) in &pairs {
                seen += c;
                if k < seen {
                    return v;
                }
            }
            pairs.last().map_or(f64::NAN, |p| p.0)
        };
        probabilities
            .iter()
            .filter(|p| n > 0 && (0.0..=1.0).contains(*p))
            .map(|&p| {
                let h = (n - 1) as f64 * p;
                let lo = h.floor() as u64;
                let (x_lo, x_hi) = (at(lo), at((lo + 1).min(n - 1)));
                x_lo + (h - lo as f64) * (x_hi - x_lo)
            })
            .collect()
    }

    /// Counts per bin of `edges`, by numpy's rule (see `histogram::counts`).
    pub fn histogram_counts(&self, edges: &[f64]) -> Vec<u64> {
        let mut out = vec![0u64; edges.len().saturating_sub(1)];
        for (v, c) in self.sorted() {
            let ones = super::histogram::counts(&[v], edges);
            for (slot, one) in out.iter_mut().zip(ones) {
                *slot += one * c;
            }
        }
        out
    }

    /// How many values satisfy `keep`.
    pub fn count_where(&self, keep: impl Fn(f64) -> bool) -> u64 {
        self.pairs().filter(|(v, _)| keep(*v)).map(|(_, c)| c).sum()
    }

    /// Each value with its count, in no particular order.
    pub fn pairs(&self) -> impl Iterator<Item = (f64, u64)> + '_ {
        let small = self.small.iter().enumerate().filter(|(_, c)| **c > 0).map(|(v, c)| (v as f64, *c));
        small.chain(self.counts.iter().map(|(b, c)| (f64::from_bits(*b), *c)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::profile::quantiles::{PROFILE_PROBABILITIES, exact};

    #[test]
    fn quantiles_from_counts_equal_those_of_the_values_spelled_out() {
        let values: Vec<f64> = (0..10_007).map(|i| ((i * 7919) % 13) as f64 - 0.0).collect();
        let mut few = FewValues::default();
        assert!(values.iter().all(|&v| few.add(v, 100)));
        let spelled: Vec<f64> = exact(&values, &PROFILE_PROBABILITIES).into_iter().flatten().collect();
        assert_eq!(few.quantiles(&PROFILE_PROBABILITIES), spelled);
        let edges = [0.0, 3.0, 6.0, 12.0];
        assert_eq!(few.histogram_counts(&edges), crate::profile::histogram::counts(&values, &edges));
        assert!(!few.add(1000.5, 13), "a 14th distinct value passes a limit of 13");
    }

    #[test]
    fn small_whole_numbers_and_other_values_count_alike() {
        // Both sides of the plain table's edge, fractions, negatives, merged.
        let values = [0.0, 1.0, 255.0, 256.0, 255.5, -1.0, 3.0, 3.0, 256.0, 0.0];
        let (mut a, mut b) = (FewValues::default(), FewValues::default());
        values[..5].iter().for_each(|&v| assert!(a.add(v, 100)));
        values[5..].iter().for_each(|&v| assert!(b.add(v, 100)));
        assert!(a.merge(&b, 100));
        assert_eq!(a.sorted(), vec![(-1.0, 1), (0.0, 2), (1.0, 1), (3.0, 2), (255.0, 1), (255.5, 1), (256.0, 2)]);
        assert_eq!(a.distinct(), 7);
        assert!(!a.merge(&b, 6), "7 distinct values pass a limit of 6");
    }

    #[test]
    fn negative_zero_is_zero() {
        let mut few = FewValues::default();
        few.add(-0.0, 10);
        few.add(0.0, 10);
        assert_eq!(few.sorted(), vec![(0.0, 2)]);
    }
}
