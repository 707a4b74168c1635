//! The statistics kept for one field, fed as the Shape observes its values.

use super::budget::Budget;
use super::distinct::{Distinct, DistinctCount};
use super::numbers::NumberStats;
use super::text::TextStats;
use super::top::{Kept, TopValues};
use crate::shape::strings::Form;
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
        self.top.add(hash, || match keep() {
            Kept::Text(s) => Kept::Text(truncate_chars(s, SHOWN_CHARS)),
            other => other,
        });
    }

    /// A text value and the form the Shape recognised in it.
    pub fn add_text(&mut self, s: &str, form: Option<Form>) {
        let limit = self.budget.sample;
        self.text.get_or_insert_with(|| TextStats::with_limit(limit)).add(s);
        if form == Some(Form::Timestamp)
            && let Some(secs) = crate::time::rfc3339_seconds(s)
        {
            self.add_instant(secs);
        }
    }

    pub fn add_list_length(&mut self, n: usize) {
        let limit = self.budget.sample;
        self.list_lengths.get_or_insert_with(|| NumberStats::with_limit(limit)).add(n as f64);
    }

    /// One instant (JSON and CSV text, one value at a time).
    pub fn add_instant(&mut self, secs: i64) {
        let i = self.instants_spanning(secs, secs);
        i.count += 1;
        i.future += (secs > profile_started()) as u64;
        i.seconds.add(secs as f64);
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
