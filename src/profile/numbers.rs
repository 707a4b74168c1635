//! Statistics of a field's numbers: moments, NaN and infinity counts, exact
//! quantiles and histogram while the values fit a small sample, the KLL
//! sketch beyond it (quantiles within its rank error, histogram counts from
//! its ranks).

use serde::Serialize;

use super::few::{FEW_VALUES, FewValues};
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
    /// Counts by value while there are few distinct values; the sketch is
    /// fed only once they are too many.
    few: Option<FewValues>,
    pub nan: u64,
    pub pos_inf: u64,
    pub neg_inf: u64,
    /// Every finite value was a whole number (histogram bins ≥ 1 wide).
    fractional: bool,
    /// Quantiles and histogram as a report states them (for statistics
    /// read back from a report; the sketch then holds an approximation
    /// of the distribution built from them).
    reported: Option<Box<Reported>>,
}

/// What a report states beyond the moments.
#[derive(Debug, Clone, Default)]
pub struct Reported {
    pub quantiles: Option<QuantileSet>,
    pub histogram: Option<Histogram>,
    pub nan: u64,
    pub infinite: u64,
    /// Every finite value with its count, when the report lists them all
    /// (as top values): the distribution is then known exactly.
    pub every_value: Vec<(f64, u64)>,
}

/// Points each histogram bin is spread over when a distribution is rebuilt
/// from a report.
const POINTS_PER_BIN: u64 = 8;

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

#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct Histogram {
    pub edges: Vec<f64>,
    pub counts: Vec<u64>,
    pub exact: bool,
}

/// Whether a finite `x` is a whole number, without `f64::fract` (a library
/// call on the baseline x86-64 target, a tenth of some profiles).
pub fn is_whole(x: f64) -> bool {
    // From 2^52 on every f64 is whole; below it the cast to i64 is exact.
    x.abs() >= 4_503_599_627_370_496.0 || (x as i64) as f64 == x
}

impl NumberStats {
    pub fn new() -> Self {
        NumberStats::with_limit(EXACT_SAMPLE)
    }

    /// Exact while at most `limit` values have been seen.
    pub fn with_limit(limit: usize) -> Self {
        NumberStats { exact: Some(Vec::new()), exact_limit: limit, few: Some(FewValues::default()), ..Default::default() }
    }

    /// Lowers (or raises) the limit; values beyond it go to the sketch only.
    pub fn set_limit(&mut self, limit: usize) {
        self.exact_limit = limit;
        if self.exact.as_ref().is_some_and(|v| v.len() > limit) {
            self.exact = None;
        }
        if self.few.as_ref().is_some_and(|f| f.distinct() > self.few_limit()) {
            self.spill_few();
        }
    }

    /// Distinct values counted by value (fewer in wide sources).
    fn few_limit(&self) -> usize {
        FEW_VALUES.min(self.exact_limit)
    }

    /// Moves the counts by value into the sketch, for good.
    fn spill_few(&mut self) {
        if let Some(few) = self.few.take() {
            few.pairs().for_each(|(v, c)| self.sketch.add_weighted(v, c));
            self.sketch.settle();
        }
    }

    /// Statistics read back from a report: exact moments, the stated
    /// quantiles and histogram, and a distribution rebuilt from them (the
    /// histogram's counts spread evenly in each bin; else weight at the
    /// quantiles; every value when the report lists them all) for
    /// comparisons. Never exact.
    pub fn from_report(moments: Moments, reported: Reported) -> NumberStats {
        let mut sketch = Kll::default();
        let (lo, hi) = (moments.min().unwrap_or(0.0), moments.max().unwrap_or(0.0));
        if !reported.every_value.is_empty() {
            reported.every_value.iter().for_each(|&(v, c)| sketch.add_weighted(v, c));
        } else if let Some(h) = reported.histogram.as_ref().filter(|h| h.edges.len() == h.counts.len() + 1) {
            for (i, &count) in h.counts.iter().enumerate() {
                let (a, b) = (h.edges[i], h.edges[i + 1]);
                let points = count.min(POINTS_PER_BIN);
                for j in 0..points {
                    let weight = count / points + u64::from(j < count % points);
                    sketch.add_weighted((a + (b - a) * (j as f64 + 0.5) / points as f64).clamp(lo, hi), weight);
                }
            }
        } else if let Some(q) = reported.quantiles.as_ref().filter(|q| q.values.len() == PROFILE_PROBABILITIES.len()) {
            let n = moments.count() as f64;
            let mut at = vec![(lo, 0.0)];
            at.extend(q.values.iter().copied().zip(PROFILE_PROBABILITIES));
            at.push((hi, 1.0));
            for pair in at.windows(2) {
                let weight = ((pair[1].1 - pair[0].1) * n).round() as u64;
                if weight > 0 && pair[1].0.is_finite() {
                    sketch.add_weighted(pair[1].0, weight);
                }
            }
        } else if let Some(mean) = moments.mean() {
            sketch.add_weighted(mean, moments.count());
        }
        sketch.settle();
        NumberStats {
            moments,
            sketch,
            exact: None,
            exact_limit: EXACT_SAMPLE,
            few: None,
            nan: reported.nan,
            pos_inf: reported.infinite,
            neg_inf: 0,
            fractional: true,
            reported: Some(Box::new(reported)),
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
        let few_limit = self.few_limit();
        match &mut self.few {
            Some(few) => {
                if !few.add(x, few_limit) {
                    self.spill_few();
                }
            }
            None => self.sketch.add(x),
        }
        // Once a fraction is seen no value can undo it; skip the test then.
        self.fractional = self.fractional || !is_whole(x);
        if let Some(values) = &mut self.exact {
            if values.len() < self.exact_limit {
                values.push(x);
            } else {
                self.exact = None;
            }
        }
    }

    /// Starts past the exact sample and the few-values table when `merged`
    /// has (see [`super::field::FieldStats::start_past`]); the sketch counts
    /// its values as earlier ones.
    pub fn start_past(&mut self, merged: &NumberStats) {
        if self.moments.count() > 0 || merged.reported.is_some() {
            return;
        }
        if merged.exact.is_none() {
            self.exact = None;
        }
        if merged.few.is_none() {
            self.few = None;
        }
        self.sketch.start_past(&merged.sketch);
    }

    /// Adds `count` copies of `x`; the same statistics as adding them one at
    /// a time, except that the quantile sketch (once used) takes them as one
    /// weighted item.
    pub fn add_count(&mut self, x: f64, count: u64) {
        if count <= 1 {
            if count == 1 {
                self.add(x);
            }
            return;
        }
        if x.is_nan() {
            self.nan += count;
            return;
        }
        if x.is_infinite() {
            if x > 0.0 { self.pos_inf += count } else { self.neg_inf += count }
            return;
        }
        self.moments.merge(&Moments::repeated(x, count));
        let few_limit = self.few_limit();
        match &mut self.few {
            Some(few) => {
                if !few.add_repeated(x, count, few_limit) {
                    self.spill_few();
                }
            }
            None => {
                self.sketch.add_weighted(x, count);
                self.sketch.settle();
            }
        }
        self.fractional = self.fractional || !is_whole(x);
        if let Some(values) = &mut self.exact {
            match usize::try_from(count).ok().filter(|&c| values.len() + c <= self.exact_limit) {
                Some(c) => values.extend(std::iter::repeat_n(x, c)),
                None => self.exact = None,
            }
        }
    }

    /// Adds a run of whole numbers (lengths): those below 64 counted first
    /// and added once each with their count, as most such runs hold a few.
    pub fn add_whole_numbers(&mut self, values: impl Iterator<Item = usize>) {
        let mut small = [0u64; 64];
        for v in values {
            match small.get_mut(v) {
                Some(count) => *count += 1,
                None => self.add(v as f64),
            }
        }
        for (v, &count) in small.iter().enumerate() {
            self.add_count(v as f64, count);
        }
    }

    /// Adds a run of values; the same statistics as adding them one at a time.
    pub fn add_slice(&mut self, xs: &[f64]) {
        let Some(run) = Moments::of_run(xs).filter(Moments::all_finite) else {
            xs.iter().for_each(|&x| self.add(x));
            return;
        };
        self.moments.merge(&run);
        let few_limit = self.few_limit();
        let for_sketch = match &mut self.few {
            Some(few) => match xs.iter().position(|&x| !few.add(x, few_limit)) {
                Some(last_counted) => {
                    self.spill_few();
                    &xs[last_counted + 1..]
                }
                None => &[],
            },
            None => xs,
        };
        if !for_sketch.is_empty() {
            // Values before `for_sketch` reached the sketch through the
            // few-values table, so the run's extremes are the sketch's too.
            let (lo, hi) = (run.min().unwrap_or(f64::NAN), run.max().unwrap_or(f64::NAN));
            self.sketch.add_slice_within(for_sketch, lo, hi);
        }
        self.fractional = self.fractional || !xs.iter().all(|&x| is_whole(x));
        if let Some(values) = &mut self.exact {
            if values.len() + xs.len() <= self.exact_limit {
                values.extend_from_slice(xs);
            } else {
                self.exact = None;
            }
        }
    }

    pub fn merge(&mut self, other: &NumberStats) {
        self.moments.merge(&other.moments);
        self.sketch.merge(&other.sketch);
        let few_limit = self.few_limit();
        match (&mut self.few, &other.few) {
            (Some(mine), Some(theirs)) => {
                if !mine.merge(theirs, few_limit) {
                    self.spill_few();
                }
            }
            (Some(_), None) => self.spill_few(),
            (None, Some(theirs)) => {
                theirs.pairs().for_each(|(v, c)| self.sketch.add_weighted(v, c));
                self.sketch.settle();
            }
            (None, None) => {}
        }
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

    /// Whether these statistics were read back from a report.
    pub fn is_reported(&self) -> bool {
        self.reported.is_some()
    }

    /// True while every value is kept or counted by value (statistics are exact).
    pub fn is_exact(&self) -> bool {
        self.exact.is_some() || self.few.is_some()
    }

    /// The finite values as ascending (value, weight) pairs, and whether
    /// they are every value (else the quantile sketch's weighted sample).
    pub fn distribution(&self) -> (Vec<(f64, u64)>, bool) {
        match (&self.exact, &self.few) {
            (Some(values), _) => {
                let mut sorted = values.clone();
                sorted.sort_by(f64::total_cmp);
                (sorted.into_iter().map(|v| (v, 1)).collect(), true)
            }
            (None, Some(few)) => (few.sorted(), true),
            (None, None) => (self.sketch.weighted(), false),
        }
    }

    /// Share of values strictly below `x` (from the sketch when not exact).
    pub fn share_below(&self, x: f64) -> f64 {
        let n = self.moments.count();
        if n == 0 {
            return 0.0;
        }
        match (&self.exact, &self.few) {
            (Some(values), _) => values.iter().filter(|v| **v < x).count() as f64 / n as f64,
            (None, Some(few)) => few.count_where(|v| v < x) as f64 / n as f64,
            (None, None) => self.sketch.rank(x.next_down()),
        }
    }

    pub fn quantiles(&self) -> Option<QuantileSet> {
        if self.moments.count() == 0 {
            return None;
        }
        if let Some(r) = &self.reported {
            return r.quantiles.clone();
        }
        Some(match (&self.exact, &self.few) {
            (Some(values), _) => QuantileSet {
                values: quantiles::exact(values, &PROFILE_PROBABILITIES).into_iter().flatten().collect(),
                exact: true,
                rank_error: None,
            },
            (None, Some(few)) => QuantileSet { values: few.quantiles(&PROFILE_PROBABILITIES), exact: true, rank_error: None },
            (None, None) => QuantileSet {
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
        Some(match (&self.exact, &self.few) {
            (Some(values), _) => {
                let below = values.iter().filter(|v| **v < lo).count() as u64;
                let above = values.iter().filter(|v| **v > hi).count() as u64;
                (q1, q3, below, above)
            }
            (None, Some(few)) => (q1, q3, few.count_where(|v| v < lo), few.count_where(|v| v > hi)),
            (None, None) => {
                let n = self.moments.count() as f64;
                // Ranks are ≤-counts; below the low fence, take the count just under it.
                // The exact min and max prove at least one value beyond a
                // fence even when the estimate rounds to none.
                let below = if self.moments.min()? < lo { ((self.sketch.rank(lo) * n).round() as u64).max(1) } else { 0 };
                let above = if self.moments.max()? > hi { (((1.0 - self.sketch.rank(hi)) * n).round() as u64).max(1) } else { 0 };
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
        if let Some(r) = &self.reported {
            return r.histogram.clone();
        }
        if let Some(values) = &self.exact {
            let edges = histogram::auto_edges_with(values, !self.fractional);
            let counts = histogram::counts(values, &edges);
            return Some(Histogram { edges, counts, exact: true });
        }
        let n = self.moments.count() as f64;
        let (lo, hi) = (self.moments.min()?, self.moments.max()?);
        if let Some(few) = &self.few {
            let q = few.quantiles(&[0.25, 0.75]);
            let edges = histogram::auto_edges_from_summary(lo, hi, q[0], q[1], n, !self.fractional);
            let counts = few.histogram_counts(&edges);
            return Some(Histogram { edges, counts, exact: true });
        }
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
    fn whole_numbers_are_told_from_fractions_at_every_magnitude() {
        for x in [0.0, -0.0, 1.0, -7.0, 4_503_599_627_370_495.0, 4_503_599_627_370_496.0, 1e300, -1e300] {
            assert!(is_whole(x), "{x}");
        }
        for x in [0.5, -0.5, 1e-300, 4_503_599_627_370_495.5, -2.25] {
            assert!(!is_whole(x), "{x}");
        }
    }

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

    #[test]
    fn a_single_far_value_is_found_even_from_the_sketch() {
        // 50,000 values, one of them far out: the sketch's rank estimate
        // rounds its share to nothing, but the exact maximum proves it.
        let mut s = NumberStats::new();
        (0..49_999).for_each(|i| s.add((i % 5_000) as f64));
        s.add(1e6);
        assert!(!s.is_exact());
        let (_, _, below, above) = s.outside_fences(3.0).unwrap();
        assert_eq!((below, above), (0, 1));
    }


    #[test]
    fn runs_give_the_statistics_of_one_value_at_a_time() {
        // Few values, a spill part-way through a run, the sketch, and a run
        // holding NaN and infinity.
        let mut state = 3u64;
        let mut values: Vec<f64> = (0..40_000)
            .map(|i| {
                state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                if i < 3_000 { (i % 10) as f64 } else { (state >> 40) as f64 / 7.0 }
            })
            .collect();
        values[35_000] = f64::NAN;
        values[35_001] = f64::NEG_INFINITY;
        let mut single = NumberStats::new();
        values.iter().for_each(|&v| single.add(v));
        let mut runs = NumberStats::new();
        values.chunks(777).for_each(|c| runs.add_slice(c));
        assert_eq!((runs.nan, runs.neg_inf, runs.moments.count()), (single.nan, single.neg_inf, single.moments.count()));
        assert_eq!(runs.quantiles(), single.quantiles());
        assert_eq!(runs.histogram(), single.histogram());
        assert_eq!((runs.moments.min(), runs.moments.max()), (single.moments.min(), single.moments.max()));
        let (a, b) = (runs.moments.mean().unwrap(), single.moments.mean().unwrap());
        assert!((a - b).abs() <= 1e-12 * b.abs(), "{a} vs {b}");
        let (a, b) = (runs.moments.std().unwrap(), single.moments.std().unwrap());
        assert!((a - b).abs() <= 1e-12 * b.abs(), "{a} vs {b}");
        let mut small = NumberStats::new();
        small.add_slice(&values[..5_000]);
        assert!(small.quantiles().unwrap().exact);
    }

    #[test]
    fn few_distinct_values_stay_exact_at_any_count() {
        // 200,000 list lengths 0..=5: past the 10,000-value sample, still exact.
        let values: Vec<f64> = (0..200_000u64).map(|i| ((i * 2_654_435_761) % 6) as f64).collect();
        let (mut a, mut b) = (NumberStats::new(), NumberStats::new());
        values[..70_000].iter().for_each(|&v| a.add(v));
        values[70_000..].iter().for_each(|&v| b.add(v));
        a.merge(&b);
        let q = a.quantiles().unwrap();
        assert!(q.exact);
        let spelled: Vec<f64> = quantiles::exact(&values, &PROFILE_PROBABILITIES).into_iter().flatten().collect();
        assert_eq!(q.values, spelled);
        let h = a.histogram().unwrap();
        assert!(h.exact);
        assert_eq!(h.edges, histogram::auto_edges_with(&values, true));
        assert_eq!(h.counts, histogram::counts(&values, &h.edges));
    }

    #[test]
    fn spilling_counted_values_into_the_sketch_keeps_its_rank_error() {
        // Mostly one heavy value, then a spread that passes the few-values
        // limit, fed single and in merged parts whose modes differ.
        let mut state = 7u64;
        let mut next = || {
            state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        let values: Vec<f64> = (0..300_000).map(|i| if i % 10 < 8 { 0.0 } else { 1.0 + next() }).collect();
        let mut whole = NumberStats::new();
        values.iter().for_each(|&v| whole.add(v));
        let mut merged = NumberStats::new();
        let mut part = NumberStats::new();
        values[..5_000].iter().for_each(|&v| part.add(v)); // few values still
        let mut rest = NumberStats::new();
        values[5_000..].iter().for_each(|&v| rest.add(v)); // spilled
        merged.merge(&part);
        merged.merge(&rest);
        let mut sorted = values.clone();
        sorted.sort_by(f64::total_cmp);
        for s in [&whole, &merged] {
            let q = s.quantiles().unwrap();
            assert!(!q.exact);
            for (p, v) in PROFILE_PROBABILITIES.iter().zip(&q.values) {
                let below = sorted.partition_point(|x| x < v) as f64;
                let at_most = sorted.partition_point(|x| x <= v) as f64;
                let target = p * sorted.len() as f64;
                let miss = if target < below { below - target } else if target > at_most { target - at_most } else { 0.0 };
                assert!(miss / sorted.len() as f64 <= kll::RANK_ERROR, "p{p}: {v}");
            }
        }
    }

}
