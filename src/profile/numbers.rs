//! Statistics of a field's numbers: moments, NaN and infinity counts, exact
//! quantiles and histogram while the values fit a small sample, the KLL
//! sketch beyond it (quantiles within its rank error, histogram counts from
//! its ranks).

use serde::Serialize;

use super::histogram;
use super::kll::{self, Kll};
use super::moments::Moments;
use super::quantiles::{self, PROFILE_PROBABILITIES};

/// Values kept for exact quantiles and histograms.
pub const EXACT_SAMPLE: usize = 10_000;

#[derive(Debug, Clone, Default)]
pub struct NumberStats {
    pub moments: Moments,
    sketch: Kll,
    /// Every finite value while there are at most `exact_limit` of them.
    exact: Option<Vec<f64>>,
    exact_limit: usize,
    pub nan: u64,
    pub pos_inf: u64,
    pub neg_inf: u64,
    /// Every finite value was a whole number (histogram bins ≥ 1 wide).
    fractional: bool,
}

/// The quantiles, and whether they are exact.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct QuantileSet {
    /// p1, p5, p25, p50, p75, p95, p99.
    pub values: Vec<f64>,
    pub exact: bool,
    /// Normalised rank error when not exact.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rank_error: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Histogram {
    pub edges: Vec<f64>,
    pub counts: Vec<u64>,
    pub exact: bool,
}

impl NumberStats {
    pub fn new() -> Self {
        NumberStats::with_limit(EXACT_SAMPLE)
    }

    /// Exact while at most `limit` values have been seen.
    pub fn with_limit(limit: usize) -> Self {
        NumberStats { exact: Some(Vec::new()), exact_limit: limit, ..Default::default() }
    }

    /// Lowers (or raises) the limit; values beyond it go to the sketch only.
    pub fn set_limit(&mut self, limit: usize) {
        self.exact_limit = limit;
        if self.exact.as_ref().is_some_and(|v| v.len() > limit) {
            self.exact = None;
        }
    }

    pub fn add(&mut self, x: f64) {
        if x.is_nan() {
            self.nan += 1;
            return;
        }
        if x.is_infinite() {
            if x > 0.0 { self.pos_inf += 1 } else { self.neg_inf += 1 }
            return;
        }
        self.moments.add(x);
        self.sketch.add(x);
        self.fractional |= x.fract() != 0.0;
        if let Some(values) = &mut self.exact {
            if values.len() < self.exact_limit {
                values.push(x);
            } else {
                self.exact = None;
            }
        }
    }

    pub fn merge(&mut self, other: &NumberStats) {
        self.moments.merge(&other.moments);
        self.sketch.merge(&other.sketch);
        self.exact = match (self.exact.take(), &other.exact) {
            (Some(mut mine), Some(theirs)) if mine.len() + theirs.len() <= self.exact_limit => {
                mine.extend_from_slice(theirs);
                Some(mine)
            }
            _ => None,
        };
        self.fractional |= other.fractional;
        self.nan += other.nan;
        self.pos_inf += other.pos_inf;
        self.neg_inf += other.neg_inf;
    }

    /// True while every value is kept (statistics are exact).
    pub fn is_exact(&self) -> bool {
        self.exact.is_some()
    }

    /// Share of values strictly below `x` (from the sketch when not exact).
    pub fn share_below(&self, x: f64) -> f64 {
        let n = self.moments.count();
        if n == 0 {
            return 0.0;
        }
        match &self.exact {
            Some(values) => values.iter().filter(|v| **v < x).count() as f64 / n as f64,
            None => self.sketch.rank(x.next_down()),
        }
    }

    pub fn quantiles(&self) -> Option<QuantileSet> {
        if self.moments.count() == 0 {
            return None;
        }
        Some(match &self.exact {
            Some(values) => QuantileSet {
                values: quantiles::exact(values, &PROFILE_PROBABILITIES).into_iter().flatten().collect(),
                exact: true,
                rank_error: None,
            },
            None => QuantileSet {
                values: PROFILE_PROBABILITIES.iter().filter_map(|&p| self.sketch.quantile(p)).collect(),
                exact: false,
                rank_error: Some(kll::RANK_ERROR),
            },
        })
    }

    /// Quartiles and the counts below q1 − k·IQR and above q3 + k·IQR
    /// (exact over the sample, else estimated from the sketch's ranks).
    pub fn outside_fences(&self, k: f64) -> Option<(f64, f64, u64, u64)> {
        let q = self.quantiles()?;
        let (q1, q3) = (q.values[2], q.values[4]);
        let iqr = q3 - q1;
        let (lo, hi) = (q1 - k * iqr, q3 + k * iqr);
        Some(match &self.exact {
            Some(values) => {
                let below = values.iter().filter(|v| **v < lo).count() as u64;
                let above = values.iter().filter(|v| **v > hi).count() as u64;
                (q1, q3, below, above)
            }
            None => {
                let n = self.moments.count() as f64;
                // Ranks are ≤-counts; below the low fence, take the count just under it.
                let below = if self.moments.min()? < lo { (self.sketch.rank(lo) * n).round() as u64 } else { 0 };
                let above = if self.moments.max()? > hi { ((1.0 - self.sketch.rank(hi)) * n).round() as u64 } else { 0 };
                (q1, q3, below, above)
            }
        })
    }

    /// numpy-`auto` bins; counts exact over the sample, else from the
    /// sketch's ranks (each count within rank error × n).
    pub fn histogram(&self) -> Option<Histogram> {
        if self.moments.count() == 0 {
            return None;
        }
        if let Some(values) = &self.exact {
            let edges = histogram::auto_edges_with(values, !self.fractional);
            let counts = histogram::counts(values, &edges);
            return Some(Histogram { edges, counts, exact: true });
        }
        let n = self.moments.count() as f64;
        let (lo, hi) = (self.moments.min()?, self.moments.max()?);
        let q = |p| self.sketch.quantile(p).unwrap_or(lo);
        let edges = histogram::auto_edges_from_summary(lo, hi, q(0.25), q(0.75), n, !self.fractional);
        let mut counts = Vec::with_capacity(edges.len().saturating_sub(1));
        let mut below = 0.0;
        for (i, edge) in edges.iter().enumerate().skip(1) {
            let at_most = if i == edges.len() - 1 { 1.0 } else { self.sketch.rank(*edge) };
            counts.push(((at_most - below) * n).round().max(0.0) as u64);
            below = at_most;
        }
        Some(Histogram { edges, counts, exact: false })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_inputs_are_exact_and_special_values_counted_apart() {
        let mut s = NumberStats::new();
        for v in [1.0, 2.0, 3.0, 4.0, f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
            s.add(v);
        }
        assert_eq!((s.nan, s.pos_inf, s.neg_inf, s.moments.count()), (1, 1, 1, 4));
        let q = s.quantiles().unwrap();
        assert!(q.exact);
        assert_eq!(q.values[3], 2.5);
        let h = s.histogram().unwrap();
        assert!(h.exact);
        assert_eq!(h.counts.iter().sum::<u64>(), 4);
    }

    #[test]
    fn large_inputs_fall_back_to_the_sketch_within_its_error() {
        let mut a = NumberStats::new();
        let mut b = NumberStats::new();
        (0..30_000).for_each(|i| a.add(i as f64));
        (30_000..60_000).for_each(|i| b.add(i as f64));
        a.merge(&b);
        let q = a.quantiles().unwrap();
        assert!(!q.exact);
        assert_eq!(q.rank_error, Some(kll::RANK_ERROR));
        assert!((q.values[3] - 30_000.0).abs() <= 60_000.0 * kll::RANK_ERROR, "{:?}", q.values);
        let h = a.histogram().unwrap();
        assert!(!h.exact);
        let total: u64 = h.counts.iter().sum();
        assert!((total as f64 - 60_000.0).abs() <= 60_000.0 * kll::RANK_ERROR, "{total}");
    }
}
