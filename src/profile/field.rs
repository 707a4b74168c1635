//! The statistics kept for one field, fed as the Shape observes its values.

use super::budget::Budget;
use super::distinct::{Distinct, DistinctCount};
use super::numbers::NumberStats;
use super::tally::{self, Counted};
use super::text::TextStats;
use super::top::{Kept, TopValues};
use crate::shape::strings::{Form, StringForms};
use std::ops::Range;
use crate::value::truncate_chars;

/// Characters kept of a top value as shown.
pub const SHOWN_CHARS: usize = 80;

#[derive(Debug, Clone, Default)]
pub struct FieldStats {
    /// Present once a number was seen (ints, floats, decimals).
    pub numbers: Option<NumberStats>,
    /// Present once a string was seen.
    pub text: Option<TextStats>,
    /// Distinct non-null scalar values.
    pub distinct: Distinct,
    /// Most frequent scalar values.
    pub top: TopValues,
    /// Instants (timestamps with a zone, or RFC 3339 text), in epoch seconds.
    pub instants: Option<Instants>,
    /// Lists and maps: how many elements each holds.
    pub list_lengths: Option<NumberStats>,
    /// How large the exact structures above may grow.
    budget: Budget,
}

/// The range of instants, how many lie after the profile started, and
/// their distribution (epoch seconds) for the calendar histogram.
#[derive(Debug, Clone)]
pub struct Instants {
    pub min: i64,
    pub max: i64,
    pub count: u64,
    pub future: u64,
    pub seconds: NumberStats,
    /// The calendar histogram as a report states it (statistics read back
    /// from a report, whose `seconds` only approximate the distribution).
    pub calendar: Option<super::calendar::CalendarHistogram>,
}

/// A kept value as shown: text cut to [`SHOWN_CHARS`].
fn shown(kept: Kept) -> Kept {
    match kept {
        Kept::Text(s) => Kept::Text(truncate_chars(s, SHOWN_CHARS)),
        other => other,
    }
}

/// When this process first profiled, in epoch seconds: the "now" that
/// "in the future" is judged against (one instant for a whole profile, so
/// its counts do not drift while it runs; the window's later profiles
/// share it too).
pub fn profile_started() -> i64 {
    static STARTED: std::sync::OnceLock<i64> = std::sync::OnceLock::new();
    *STARTED.get_or_init(crate::time::now_unix)
}

impl FieldStats {
    pub fn with_budget(budget: Budget) -> Self {
        let mut stats = FieldStats::default();
        stats.set_budget(budget);
        stats
    }

    pub fn budget(&self) -> Budget {
        self.budget
    }

    /// Applies a new budget to everything kept; exact structures already
    /// beyond it give way to their sketches now.
    pub fn set_budget(&mut self, budget: Budget) {
        self.budget = budget;
        self.distinct.set_budget(budget.distinct);
        self.top.set_limits(budget.top, budget.counters);
        for numbers in [&mut self.numbers, &mut self.list_lengths].into_iter().flatten() {
            numbers.set_limit(budget.sample);
        }
        if let Some(text) = &mut self.text {
            text.lengths.set_limit(budget.sample);
        }
        if let Some(instants) = &mut self.instants {
            instants.seconds.set_limit(budget.sample);
        }
    }

    /// A scalar value: its hash for distinct and top counts, and the value.
    pub fn add_scalar(&mut self, hash: u64, keep: impl FnOnce() -> Kept) {
        self.distinct.add_hash(hash);
        self.top.add(hash, || shown(keep()));
    }

    /// A run of scalar values by their hashes, in order; `keep(i)` gives the
    /// i-th value. Each distinct value of the run reaches the distinct set and
    /// top values once, with its count (see [`tally`]): the same distinct
    /// count as adding them one by one, and top values within the same bound.
    pub fn add_scalars(&mut self, hashes: &[u64], keep: impl Fn(usize) -> Kept) {
        self.add_scalars_then(hashes, keep, |_, _, _| {});
    }

    /// Like [`Self::add_scalars`], then `also(self, piece, run)` for each
    /// piece of the hashes and its distinct values: for statistics of the
    /// same values, which can then be fed a distinct value at a time with
    /// its count where values repeat (see [`tally::repeats_enough`]).
    pub fn add_scalars_then(
        &mut self,
        hashes: &[u64],
        keep: impl Fn(usize) -> Kept,
        mut also: impl FnMut(&mut Self, Range<usize>, &[Counted]),
    ) {
        tally::each_run(hashes, |piece, run| {
            self.distinct.add_hashes(run.iter().map(|c| c.hash));
            self.top.add_run(run, |first| shown(keep(first)));
            also(self, piece, run);
        });
    }

    /// A run of scalar values that are numbers: `hashes[i]` is the hash of
    /// `numbers[i]` (none NaN; see [`Self::add_nan`]).
    pub fn add_numeric_scalars(&mut self, hashes: &[u64], numbers: &[f64], keep: impl Fn(usize) -> Kept) {
        debug_assert_eq!(hashes.len(), numbers.len());
        self.add_scalars_then(hashes, keep, |stats, piece, run| {
            if tally::repeats_enough(run.len(), piece.len()) {
                let limit = stats.budget.sample;
                let kept = stats.numbers.get_or_insert_with(|| NumberStats::with_limit(limit));
                run.iter().for_each(|c| kept.add_count(numbers[c.first as usize], c.count.into()));
            } else {
                stats.add_numbers(&numbers[piece]);
            }
        });
    }

    /// `count` NaN values (kept apart from the numbers).
    pub fn add_nan(&mut self, count: u64) {
        if count > 0 {
            let limit = self.budget.sample;
            self.numbers.get_or_insert_with(|| NumberStats::with_limit(limit)).nan += count;
        }
    }

    /// A run of text values with their hashes, their forms counted in `forms`.
    pub fn add_text_scalars(&mut self, hashes: &[u64], values: &[&str], forms: &mut StringForms) {
        debug_assert_eq!(hashes.len(), values.len());
        self.add_scalars_then(
            hashes,
            |i| Kept::Text(values[i].to_string()),
            |stats, piece, run| {
                if tally::repeats_enough(run.len(), piece.len()) {
                    for c in run {
                        let s = values[c.first as usize];
                        let form = forms.observe_count(s, c.count.into());
                        stats.add_text_count(s, form, c.count.into());
                    }
                } else {
                    stats.add_texts(&values[piece], forms);
                }
            },
        );
    }

    /// Text values one after another, their forms counted in `forms`.
    fn add_texts(&mut self, values: &[&str], forms: &mut StringForms) {
        let limit = self.budget.sample;
        self.text.get_or_insert_with(|| TextStats::with_limit(limit)).add_all(values);
        for s in values {
            if forms.observe(s) == Some(Form::Timestamp)
                && let Some(secs) = crate::time::rfc3339_seconds(s)
            {
                self.add_instant(secs);
            }
        }
    }

    /// `count` occurrences of one scalar value.
    pub fn add_scalar_count(&mut self, hash: u64, count: u64, keep: impl FnOnce() -> Kept) {
        self.distinct.add_hash(hash);
        self.top.add_count(hash, count, || shown(keep()));
    }

    /// A text value and the form the Shape recognised in it.
    pub fn add_text(&mut self, s: &str, form: Option<Form>) {
        self.add_text_count(s, form, 1);
    }

    /// `count` text values equal to `s`.
    pub fn add_text_count(&mut self, s: &str, form: Option<Form>, count: u64) {
        let limit = self.budget.sample;
        self.text.get_or_insert_with(|| TextStats::with_limit(limit)).add_count(s, count);
        if form == Some(Form::Timestamp)
            && let Some(secs) = crate::time::rfc3339_seconds(s)
        {
            self.add_instant_count(secs, count);
        }
    }

    pub fn add_list_length(&mut self, n: usize) {
        let limit = self.budget.sample;
        self.list_lengths.get_or_insert_with(|| NumberStats::with_limit(limit)).add(n as f64);
    }

    /// The lengths of a run of lists or maps.
    pub fn add_list_lengths(&mut self, lengths: impl Iterator<Item = usize>) {
        let limit = self.budget.sample;
        self.list_lengths.get_or_insert_with(|| NumberStats::with_limit(limit)).add_whole_numbers(lengths);
    }

    /// One instant (JSON and CSV text, one value at a time).
    pub fn add_instant(&mut self, secs: i64) {
        self.add_instant_count(secs, 1);
    }

    /// `count` equal instants.
    pub fn add_instant_count(&mut self, secs: i64, count: u64) {
        let i = self.instants_spanning(secs, secs);
        i.count += count;
        i.future += count * (secs > profile_started()) as u64;
        i.seconds.add_count(secs as f64, count);
    }

    /// The instants kept, widened to `lo..=hi`.
    fn instants_spanning(&mut self, lo: i64, hi: i64) -> &mut Instants {
        let limit = self.budget.sample;
        let i = self.instants.get_or_insert_with(|| Instants {
            min: lo,
            max: hi,
            count: 0,
            future: 0,
            seconds: NumberStats::with_limit(limit),
            calendar: None,
        });
        i.min = i.min.min(lo);
        i.max = i.max.max(hi);
        i
    }

    pub fn add_number(&mut self, x: f64) {
        let limit = self.budget.sample;
        self.numbers.get_or_insert_with(|| NumberStats::with_limit(limit)).add(x);
    }

    /// A run of numbers (an Arrow array's present values).
    pub fn add_numbers(&mut self, xs: &[f64]) {
        if xs.is_empty() {
            return;
        }
        let limit = self.budget.sample;
        self.numbers.get_or_insert_with(|| NumberStats::with_limit(limit)).add_slice(xs);
    }

    /// The instants of a piece of a run of scalars (`seconds[i]` of value
    /// i), by distinct value where values repeat.
    pub fn add_instants_by_run(&mut self, seconds: &[i64], piece: Range<usize>, run: &[Counted]) {
        if tally::repeats_enough(run.len(), piece.len()) {
            run.iter().for_each(|c| self.add_instant_count(seconds[c.first as usize], c.count.into()));
        } else {
            self.add_instants(&seconds[piece]);
        }
    }

    /// A run of instants, in epoch seconds (an Arrow array's present values).
    pub fn add_instants(&mut self, secs: &[i64]) {
        let (Some(&lo), Some(&hi)) = (secs.iter().min(), secs.iter().max()) else { return };
        let now = profile_started();
        let i = self.instants_spanning(lo, hi);
        i.count += secs.len() as u64;
        i.future += secs.iter().filter(|&&s| s > now).count() as u64;
        let as_f64: Vec<f64> = secs.iter().map(|&s| s as f64).collect();
        i.seconds.add_slice(&as_f64);
    }

    /// Starts past what `merged` (the same field's statistics from earlier
    /// parts, which these will be merged into) has given up: a distinct set
    /// that became a sketch starts as a copy of that sketch (a union, so
    /// merging it back changes nothing), summarised top values start
    /// summarised, numbers past their exact sample or few-values table go
    /// straight to the quantile sketch.
    pub fn start_past(&mut self, merged: &FieldStats) {
        let limit = self.budget.sample;
        self.distinct.start_past(&merged.distinct);
        self.top.start_past(&merged.top);
        for (mine, theirs) in [(&mut self.numbers, &merged.numbers), (&mut self.list_lengths, &merged.list_lengths)] {
            if let Some(theirs) = theirs {
                mine.get_or_insert_with(|| NumberStats::with_limit(limit)).start_past(theirs);
            }
        }
        if let Some(theirs) = &merged.text {
            self.text.get_or_insert_with(|| TextStats::with_limit(limit)).lengths.start_past(&theirs.lengths);
        }
        if let Some(theirs) = &merged.instants {
            let mine = self.instants_spanning(theirs.min, theirs.max);
            mine.seconds.start_past(&theirs.seconds);
        }
    }

    pub fn merge(&mut self, other: &FieldStats) {
        match (&mut self.numbers, &other.numbers) {
            (Some(mine), Some(theirs)) => mine.merge(theirs),
            (None, Some(theirs)) => self.numbers = Some(theirs.clone()),
            _ => {}
        }
        match (&mut self.text, &other.text) {
            (Some(mine), Some(theirs)) => mine.merge(theirs),
            (None, Some(theirs)) => self.text = Some(theirs.clone()),
            _ => {}
        }
        self.distinct.merge(&other.distinct);
        self.top.merge(&other.top);
        match (&mut self.list_lengths, &other.list_lengths) {
            (Some(mine), Some(theirs)) => mine.merge(theirs),
            (None, Some(theirs)) => self.list_lengths = Some(theirs.clone()),
            _ => {}
        }
        match (&mut self.instants, &other.instants) {
            (Some(mine), Some(theirs)) => {
                mine.min = mine.min.min(theirs.min);
                mine.max = mine.max.max(theirs.max);
                mine.count += theirs.count;
                mine.future += theirs.future;
                mine.seconds.merge(&theirs.seconds);
            }
            (None, Some(theirs)) => self.instants = Some(theirs.clone()),
            _ => {}
        }
        // What came from `other` may have been kept under another budget.
        self.set_budget(self.budget);
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::profile::hash;

    /// The same values one at a time and as runs (counted where that pays).
    fn both_ways(values: &[i64], run: usize) -> (FieldStats, FieldStats) {
        let mut one_by_one = FieldStats::default();
        let mut by_runs = FieldStats::default();
        for &v in values {
            one_by_one.add_scalar(hash::int(v.into()), || Kept::Int(v.into()));
        }
        for chunk in values.chunks(run) {
            let hashes: Vec<u64> = chunk.iter().map(|&v| hash::int(v.into())).collect();
            by_runs.add_scalars(&hashes, |i| Kept::Int(chunk[i].into()));
        }
        (one_by_one, by_runs)
    }

    #[test]
    fn runs_count_distinct_and_top_values_as_one_by_one_does() {
        // A few categories (counted runs), then mostly distinct values (runs left uncounted).
        let few: Vec<i64> = (0..50_000).map(|i| (i * 7919) % 37).collect();
        let many: Vec<i64> = (0..50_000).map(|i| 1_000 + i % 9_000).collect();
        for values in [few, many] {
            let (a, b) = both_ways(&values, 8192);
            assert_eq!(a.distinct.count(), b.distinct.count());
            assert!(b.top.is_exact());
            assert_eq!(a.top.top(20), b.top.top(20));
            assert_eq!(a.top.total(), b.top.total());
        }
    }

    #[test]
    fn summarised_top_values_from_runs_keep_the_bound() {
        // 30,000 distinct values past the exact limit, with three heavy ones.
        let values: Vec<i64> = (0..120_000i64)
            .map(|i| match i % 4 {
                0 => -1,
                1 if i % 8 == 1 => -2,
                _ => i % 30_000,
            })
            .collect();
        let (_, runs) = both_ways(&values, 8192);
        assert!(!runs.top.is_exact());
        let bound = runs.top.max_undercount();
        let top = runs.top.top(2);
        assert_eq!(top.iter().map(|t| t.value.as_str()).collect::<Vec<_>>(), ["-1", "-2"]);
        for (t, truth) in top.iter().zip([30_000u64, 15_000]) {
            assert!(t.count <= truth && truth - t.count <= bound, "{t:?} vs {truth}, bound {bound}");
        }
    }
}
