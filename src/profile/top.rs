//! Most frequent values: exact counts while the values fit a budget, then a
//! Misra–Gries summary (Misra & Gries 1982, "Finding repeated elements"),
//! merged as Agarwal et al. show ("Mergeable summaries", 2012): each count
//! is then low by at most n / (k + 1), and every value more frequent than
//! that is kept.

use std::collections::HashMap;

use super::distinct::PassThrough;

/// Keys are value hashes already.
type Build = std::hash::BuildHasherDefault<PassThrough>;

/// Distinct values counted exactly before summarising.
pub const EXACT_VALUES: usize = 10_000;
/// Counters kept by the summary.
pub const COUNTERS: usize = 1_000;

/// A kept value, rendered as text only when reported (most values seen
/// by a summary are dropped again, so rendering each would be waste).
#[derive(Debug, Clone, PartialEq)]
pub enum Kept {
    Int(i128),
    Float(f64),
    Text(String),
}

impl Kept {
    pub fn render(&self) -> String {
        match self {
            Kept::Int(v) => v.to_string(),
            Kept::Float(v) => v.to_string(),
            Kept::Text(s) => s.clone(),
        }
    }
}

#[derive(Debug, Clone)]
pub struct TopValues {
    /// By value hash: count and the value.
    counts: HashMap<u64, (u64, Kept), Build>,
    /// Total added (for the error bound once summarised).
    total: u64,
    summarised: bool,
    /// Values counted exactly before summarising, and the counters kept then.
    exact_limit: usize,
    counters: usize,
}

impl Default for TopValues {
    fn default() -> Self {
        TopValues::with_limits(EXACT_VALUES, COUNTERS)
    }
}

/// One top value.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TopValue {
    pub value: String,
    pub count: u64,
}

impl TopValues {
    pub fn with_limits(exact_limit: usize, counters: usize) -> Self {
        TopValues { counts: HashMap::default(), total: 0, summarised: false, exact_limit, counters: counters.min(exact_limit) }
    }

    /// Changes the limits; a field already past the new exact limit is summarised now.
    pub fn set_limits(&mut self, exact_limit: usize, counters: usize) {
        self.exact_limit = exact_limit;
        self.counters = counters.min(exact_limit);
        if !self.summarised && self.counts.len() > exact_limit {
            self.summarised = true;
        }
        if self.summarised {
            self.shrink();
        }
    }

    /// Adds a value by its hash; `keep` gives the value the first time it is seen.
    pub fn add(&mut self, hash: u64, keep: impl FnOnce() -> Kept) {
        self.total += 1;
        if let Some(entry) = self.counts.get_mut(&hash) {
            entry.0 += 1;
            return;
        }
        self.counts.insert(hash, (1, keep()));
        if !self.summarised && self.counts.len() > self.exact_limit {
            self.summarised = true;
            self.shrink();
        } else if self.summarised && self.counts.len() > 2 * self.counters {
            // Shrinking back to k once 2k counters accumulate keeps the cost
            // per value constant; it is a merge with a summary of the newcomers,
            // so the n / (k + 1) bound holds.
            self.shrink();
        }
    }

    /// Misra–Gries step: subtract the (k+1)-th largest count from all, drop
    /// those at or below zero, leaving at most k counters.
    fn shrink(&mut self) {
        if self.counts.len() <= self.counters {
            return;
        }
        let mut counts: Vec<u64> = self.counts.values().map(|(c, _)| *c).collect();
        // The (k+1)-th largest count, in linear time.
        let (_, &mut cut, _) = counts.select_nth_unstable_by(self.counters, |a, b| b.cmp(a));
        self.counts.retain(|_, (c, _)| *c > cut);
        self.counts.values_mut().for_each(|(c, _)| *c -= cut);
    }

    pub fn merge(&mut self, other: &TopValues) {
        self.total += other.total;
        for (hash, (count, shown)) in &other.counts {
            self.counts.entry(*hash).or_insert_with(|| (0, shown.clone())).0 += count;
        }
        self.summarised |= other.summarised;
        if !self.summarised && self.counts.len() > self.exact_limit {
            self.summarised = true;
        }
        if self.summarised {
            self.shrink();
        }
    }

    /// The `n` most frequent values, most frequent first (ties by value).
    pub fn top(&self, n: usize) -> Vec<TopValue> {
        let mut all: Vec<TopValue> = self.counts.values().map(|(c, v)| TopValue { value: v.render(), count: *c }).collect();
        all.sort_by(|a, b| b.count.cmp(&a.count).then_with(|| a.value.cmp(&b.value)));
        all.truncate(n);
        all
    }

    /// Every value kept, as text, with its count (all values while exact).
    pub fn entries(&self) -> impl Iterator<Item = (String, u64)> + '_ {
        self.counts.values().map(|(c, v)| (v.render(), *c))
    }

    /// True when counts are exact; otherwise each may be low by
    /// [`Self::max_undercount`].
    pub fn is_exact(&self) -> bool {
        !self.summarised
    }

    pub fn max_undercount(&self) -> u64 {
        if self.summarised { self.total / (self.counters as u64 + 1) } else { 0 }
    }

    pub fn total(&self) -> u64 {
        self.total
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn add(t: &mut TopValues, v: u64) {
        t.add(v, || Kept::Text(format!("v{v}")));
    }

    #[test]
    fn exact_counts_for_few_values() {
        let mut t = TopValues::default();
        for v in [1, 2, 2, 3, 3, 3] {
            add(&mut t, v);
        }
        assert!(t.is_exact());
        let top = t.top(2);
        assert_eq!(top, vec![TopValue { value: "v3".into(), count: 3 }, TopValue { value: "v2".into(), count: 2 }]);
    }

    #[test]
    fn the_summary_keeps_heavy_values_within_its_bound() {
        // 50,000 distinct noise values plus three heavy ones, interleaved.
        let mut t = TopValues::default();
        let mut halves = [TopValues::default(), TopValues::default()];
        for i in 0..200_000u64 {
            let v = match i % 4 {
                0 => 1_000_000,
                1 if i % 8 == 1 => 1_000_001,
                2 if i % 16 == 2 => 1_000_002,
                _ => i % 50_000,
            };
            add(&mut t, v);
            add(&mut halves[(i % 2) as usize], v);
        }
        let [mut a, b] = halves;
        a.merge(&b);
        for summary in [&t, &a] {
            assert!(!summary.is_exact());
            let bound = summary.max_undercount();
            assert!(bound <= 200_000 / 1001 + 1);
            let top = summary.top(3);
            let names: Vec<&str> = top.iter().map(|v| v.value.as_str()).collect();
            assert_eq!(names, ["v1000000", "v1000001", "v1000002"]);
            for (value, truth) in top.iter().zip([50_000u64, 25_000, 12_500]) {
                assert!(value.count <= truth && truth - value.count <= bound, "{value:?} vs {truth} (bound {bound})");
            }
        }
    }

    #[test]
    fn smaller_limits_summarise_sooner_and_widen_the_bound() {
        let mut t = TopValues::with_limits(100, 100);
        for v in 0..150 {
            add(&mut t, v % 120);
        }
        assert!(!t.is_exact());
        assert_eq!(t.max_undercount(), 150 / 101);
        let mut late = TopValues::default();
        (0..500).for_each(|v| add(&mut late, v));
        assert!(late.is_exact());
        late.set_limits(100, 100);
        assert!(!late.is_exact(), "past the new limit: summarised at once");
        assert!(late.entries().count() <= 100);
    }

}
