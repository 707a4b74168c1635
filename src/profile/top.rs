//! Most frequent values: exact counts while the values fit a budget, then a
//! Misra–Gries summary (Misra & Gries 1982, "Finding repeated elements"),
//! merged as Agarwal et al. show ("Mergeable summaries", 2012): each count
//! is then low by at most n / (k + 1), and every value more frequent than
//! that is kept.

use std::collections::HashMap;
use std::collections::hash_map::Entry;
use std::sync::Arc;

use arrow_schema::DataType;

use super::distinct::PassThrough;
use super::tally::Counted;

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
    /// A fixed-width Arrow value (decimal, timestamp, date, time, duration)
    /// by its raw integer, shown as Arrow displays its type.
    Raw { raw: i128, shown_as: Arc<DataType> },
}

impl Kept {
    pub fn render(&self) -> String {
        match self {
            Kept::Int(v) => v.to_string(),
            Kept::Float(v) => v.to_string(),
            Kept::Text(s) => s.clone(),
            Kept::Raw { raw, shown_as } => render_raw(*raw, shown_as),
        }
    }
}

/// Arrow's display of one raw value of a fixed-width type (the raw integer
/// itself for a type Arrow cannot rebuild from it).
fn render_raw(raw: i128, data_type: &DataType) -> String {
    use arrow_array::types::*;
    use arrow_array::{ArrowPrimitiveType, PrimitiveArray};
    use arrow_schema::{IntervalUnit, TimeUnit};

    fn show<T: ArrowPrimitiveType>(v: Option<T::Native>, data_type: &DataType) -> Option<String> {
        use arrow_cast::display::{ArrayFormatter, FormatOptions};
        let array = PrimitiveArray::<T>::new(vec![v?].into(), None).with_data_type(data_type.clone());
        // Not "safe": a value out of range is an error here, not text saying so.
        let options = FormatOptions::new().with_display_error(false);
        ArrayFormatter::try_new(&array, &options).ok()?.value(0).try_to_string().ok()
    }
    let shown = match data_type {
        DataType::Decimal32(..) => show::<Decimal32Type>(i32::try_from(raw).ok(), data_type),
        DataType::Decimal64(..) => show::<Decimal64Type>(i64::try_from(raw).ok(), data_type),
        DataType::Decimal128(..) => show::<Decimal128Type>(Some(raw), data_type),
        DataType::Date32 => show::<Date32Type>(i32::try_from(raw).ok(), data_type),
        DataType::Date64 => show::<Date64Type>(i64::try_from(raw).ok(), data_type),
        DataType::Timestamp(TimeUnit::Second, _) => show::<TimestampSecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Timestamp(TimeUnit::Millisecond, _) => show::<TimestampMillisecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Timestamp(TimeUnit::Microsecond, _) => show::<TimestampMicrosecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Timestamp(TimeUnit::Nanosecond, _) => show::<TimestampNanosecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Time32(TimeUnit::Second) => show::<Time32SecondType>(i32::try_from(raw).ok(), data_type),
        DataType::Time32(TimeUnit::Millisecond) => show::<Time32MillisecondType>(i32::try_from(raw).ok(), data_type),
        DataType::Time64(TimeUnit::Microsecond) => show::<Time64MicrosecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Time64(TimeUnit::Nanosecond) => show::<Time64NanosecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Duration(TimeUnit::Second) => show::<DurationSecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Duration(TimeUnit::Millisecond) => show::<DurationMillisecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Duration(TimeUnit::Microsecond) => show::<DurationMicrosecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Duration(TimeUnit::Nanosecond) => show::<DurationNanosecondType>(i64::try_from(raw).ok(), data_type),
        DataType::Interval(IntervalUnit::YearMonth) => show::<IntervalYearMonthType>(i32::try_from(raw).ok(), data_type),
        _ => None,
    };
    shown
        .or_else(|| match data_type {
            // A named zone needs the time-zone database, which Plumbline does
            // not build in; the value is an instant, so show it in UTC.
            DataType::Timestamp(unit, Some(zone)) if zone.as_ref() != "+00:00" => {
                // Arrow spells the zero offset "Z".
                Some(render_raw(raw, &DataType::Timestamp(*unit, Some("+00:00".into()))))
            }
            _ => None,
        })
        .unwrap_or_else(|| raw.to_string())
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
    /// Counts gathered while shrinking, kept for the next time.
    scratch: Vec<u64>,
    /// A run's values not among the counters, kept for the next run.
    newcomers: Vec<Counted>,
    /// A report's stated bound on undercounts, for values read back from it.
    reported_undercount: Option<u64>,
}

impl Default for TopValues {
    fn default() -> Self {
        TopValues::with_limits(EXACT_VALUES, COUNTERS)
    }
}

/// One top value.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TopValue {
    pub value: String,
    pub count: u64,
}

impl TopValues {
    pub fn with_limits(exact_limit: usize, counters: usize) -> Self {
        TopValues {
            counts: HashMap::default(),
            total: 0,
            summarised: false,
            exact_limit,
            counters: counters.min(exact_limit),
            scratch: Vec::new(),
            newcomers: Vec::new(),
            reported_undercount: None,
        }
    }

    /// Top values as a report lists them, out of `total` values counted.
    pub fn reported(values: &[TopValue], total: u64, exact: bool, max_undercount: u64) -> Self {
        let mut top = TopValues::with_limits(EXACT_VALUES, COUNTERS);
        for v in values {
            let hash = super::distinct::hash_bytes(v.value.as_bytes());
            top.counts.entry(hash).or_insert((0, Kept::Text(v.value.clone()))).0 += v.count;
        }
        top.total = total;
        top.summarised = !exact;
        top.reported_undercount = Some(max_undercount);
        top
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

    /// Starts summarised when `merged` is (see
    /// [`super::field::FieldStats::start_past`]).
    pub fn start_past(&mut self, merged: &TopValues) {
        if self.counts.is_empty() && merged.summarised && merged.reported_undercount.is_none() {
            self.summarised = true;
        }
    }

    /// Adds a value by its hash; `keep` gives the value the first time it is seen.
    pub fn add(&mut self, hash: u64, keep: impl FnOnce() -> Kept) {
        self.add_count(hash, 1, keep);
    }

    /// Adds `count` occurrences of one value at once (weighted Misra–Gries:
    /// the same bound as adding them one by one).
    pub fn add_count(&mut self, hash: u64, count: u64, keep: impl FnOnce() -> Kept) {
        self.total += count;
        match self.counts.entry(hash) {
            Entry::Occupied(mut seen) => {
                seen.get_mut().0 += count;
                return;
            }
            Entry::Vacant(new) => {
                new.insert((count, keep()));
            }
        }
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

    /// Adds a run's distinct values with their counts (from
    /// [`super::tally`]); `keep(first)` gives a value the first time it is
    /// kept. While exact, each is counted. Once summarised, the run's exact
    /// counts are a summary of their own, merged with the counters in one
    /// Misra–Gries step (Agarwal et al.'s merge, so the n / (k + 1) bound
    /// holds): a value the step drops is never looked at again, which is
    /// what makes a column of mostly distinct values cheap.
    pub fn add_run(&mut self, run: &[Counted], keep: impl Fn(usize) -> Kept) {
        let mut rest = run;
        while !self.summarised {
            let Some((c, after)) = rest.split_first() else { return };
            self.add_count(c.hash, c.count.into(), || keep(c.first as usize));
            rest = after;
        }
        // Newcomers seen once are only counted: in a column of mostly
        // distinct values they are nearly all of the run, and a cut of one
        // or more (below) drops them all.
        let mut newcomers = std::mem::take(&mut self.newcomers);
        newcomers.clear();
        let mut singles = 0;
        for c in rest {
            self.total += u64::from(c.count);
            match self.counts.get_mut(&c.hash) {
                Some((count, _)) => *count += u64::from(c.count),
                None if c.count == 1 => singles += 1,
                None => newcomers.push(*c),
            }
        }
        if self.counts.len() + newcomers.len() + singles > self.counters {
            let cut = self.cut_past_singles(&newcomers);
            self.subtract(cut);
            for c in newcomers.iter().filter(|c| u64::from(c.count) > cut) {
                self.counts.insert(c.hash, (u64::from(c.count) - cut, keep(c.first as usize)));
            }
        } else {
            // Everything fits: no cut, every newcomer is kept.
            let singles: Vec<Counted> =
                rest.iter().filter(|c| c.count == 1 && !self.counts.contains_key(&c.hash)).copied().collect();
            for c in newcomers.iter().chain(&singles) {
                self.counts.insert(c.hash, (u64::from(c.count), keep(c.first as usize)));
            }
        }
        self.newcomers = newcomers;
    }

    /// The cut of a Misra–Gries step over the counters, `newcomers` (each
    /// seen more than once) and more than enough newcomers seen once to
    /// make the (k+1)-th count exist. When at most k counts exceed one, the
    /// (k+1)-th largest is one, found without selecting.
    fn cut_past_singles(&mut self, newcomers: &[Counted]) -> u64 {
        let above_one = self.counts.values().filter(|(c, _)| *c > 1).count() + newcomers.len();
        if above_one <= self.counters {
            return 1;
        }
        // More than k counts above one: the (k+1)-th largest is among them,
        // whatever the ones are.
        self.cut_with(newcomers.iter().map(|c| c.count.into()))
    }

    /// Misra–Gries step: subtract the (k+1)-th largest count from all, drop
    /// those at or below zero, leaving at most k counters.
    fn shrink(&mut self) {
        if self.counts.len() <= self.counters {
            return;
        }
        let cut = self.cut_with(std::iter::empty());
        self.subtract(cut);
    }

    /// The (k+1)-th largest of the counters' counts and `more`, in linear time.
    fn cut_with(&mut self, more: impl Iterator<Item = u64>) -> u64 {
        // Reuse one buffer: summarised fields cut once per run.
        let counts = &mut self.scratch;
        counts.clear();
        counts.extend(self.counts.values().map(|(c, _)| *c));
        counts.extend(more);
        let (_, &mut cut, _) = counts.select_nth_unstable_by(self.counters, |a, b| b.cmp(a));
        cut
    }

    fn subtract(&mut self, cut: u64) {
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
        let mut all: Vec<TopValue> = self.entries().map(|(value, count)| TopValue { value, count }).collect();
        all.sort_by(|a, b| b.count.cmp(&a.count).then_with(|| a.value.cmp(&b.value)));
        all.truncate(n);
        all
    }

    /// Every value kept, as text, with its count: all values while exact;
    /// once summarised, those whose count exceeds [`Self::max_undercount`],
    /// which the summary proves more frequent than that bound. (Counters
    /// at or below it may be leftovers of values seen a few times, and which
    /// are left depends on the order values came in.)
    pub fn entries(&self) -> impl Iterator<Item = (String, u64)> + '_ {
        let floor = if self.summarised { self.max_undercount() } else { 0 };
        self.counts.values().filter(move |(c, _)| *c > floor).map(|(c, v)| (v.render(), *c))
    }

    /// True when counts are exact; otherwise each may be low by
    /// [`Self::max_undercount`].
    pub fn is_exact(&self) -> bool {
        !self.summarised
    }

    pub fn max_undercount(&self) -> u64 {
        match self.reported_undercount {
            Some(stated) => stated,
            None if self.summarised => self.total / (self.counters as u64 + 1),
            None => 0,
        }
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
    fn raw_values_render_as_arrow_shows_their_type() {
        use arrow_schema::TimeUnit;
        let shown = |raw: i128, data_type: DataType| Kept::Raw { raw, shown_as: Arc::new(data_type) }.render();
        assert_eq!(shown(12345, DataType::Decimal128(12, 2)), "123.45");
        assert_eq!(shown(-5, DataType::Decimal64(10, 3)), "-0.005");
        assert_eq!(shown(1, DataType::Date32), "1970-01-02");
        assert_eq!(shown(3661, DataType::Time32(TimeUnit::Second)), "01:01:01");
        assert_eq!(shown(1_500_000, DataType::Timestamp(TimeUnit::Microsecond, Some("UTC".into()))), "1970-01-01T00:00:01.500Z");
        assert_eq!(shown(1_500, DataType::Timestamp(TimeUnit::Millisecond, None)), "1970-01-01T00:00:01.500");
        assert_eq!(shown(0, DataType::Timestamp(TimeUnit::Second, Some("Europe/Paris".into()))), "1970-01-01T00:00:00Z");
        assert_eq!(shown(0, DataType::Timestamp(TimeUnit::Second, Some("+02:00".into()))), "1970-01-01T02:00:00+02:00");
        assert_eq!(shown(7, DataType::Duration(TimeUnit::Second)), "PT7S");
        // A raw integer that does not fit the type is shown as the integer.
        assert_eq!(shown(1 << 40, DataType::Date32), "1099511627776");
        assert_eq!(shown(i64::MAX.into(), DataType::Timestamp(TimeUnit::Second, Some("UTC".into()))), i64::MAX.to_string());
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
    fn a_summary_lists_only_values_proven_above_its_bound_whatever_the_order() {
        // 50,000 values seen once each, and one seen 2,000 times.
        let values: Vec<u64> = (0..50_000).chain(std::iter::repeat_n(7_000_000, 2_000)).collect();
        let mut in_order = TopValues::default();
        values.iter().for_each(|&v| add(&mut in_order, v));
        let mut reversed = TopValues::default();
        values.iter().rev().for_each(|&v| add(&mut reversed, v));
        for t in [&in_order, &reversed] {
            assert!(!t.is_exact());
            let listed: Vec<String> = t.entries().map(|(v, _)| v).collect();
            assert_eq!(listed, ["v7000000"]);
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

    /// One Misra–Gries merge as Agarwal et al. state it: add the run's
    /// counts, subtract the (k+1)-th largest count from all, keep those
    /// above zero.
    fn textbook_step(counts: &mut HashMap<u64, u64>, run: &[Counted], k: usize) {
        for c in run {
            *counts.entry(c.hash).or_insert(0) += u64::from(c.count);
        }
        if counts.len() > k {
            let mut all: Vec<u64> = counts.values().copied().collect();
            all.sort_unstable_by(|a, b| b.cmp(a));
            let cut = all[k];
            counts.retain(|_, c| *c > cut);
            counts.values_mut().for_each(|c| *c -= cut);
        }
    }

    #[test]
    fn merging_runs_equals_the_textbook_step_for_every_kind_of_cut() {
        let k = 20;
        let mut t = TopValues::with_limits(k, k);
        (0..=k as u64).for_each(|v| add(&mut t, v));
        assert!(!t.is_exact());
        let mut textbook: HashMap<u64, u64> = t.counts.iter().map(|(h, (c, _))| (*h, *c)).collect();
        let mut seed = 0x2545_F491_4F6C_DD1Du64;
        let mut random = move |below: u64| {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            seed % below
        };
        let mut fresh = 1_000u64;
        for round in 0..300 {
            // Runs of mostly distinct values (cut of one), of a few heavy
            // values (cut above one), and of a handful that fit (no cut),
            // always with some values the counters hold.
            let mut run: Vec<Counted> = (0..3).map(|h| Counted { hash: h, count: 1 + random(4) as u32, first: 0 }).collect();
            let (distinct, most) = [(200, 1), (2, 1), (40, 30), (3, 2)][round % 4];
            for _ in 0..distinct {
                fresh += 1;
                run.push(Counted { hash: fresh, count: 1 + random(most) as u32, first: 0 });
            }
            t.add_run(&run, |_| Kept::Int(0));
            textbook_step(&mut textbook, &run, k);
            let mine: HashMap<u64, u64> = t.counts.iter().map(|(h, (c, _))| (*h, *c)).collect();
            assert_eq!(mine, textbook, "round {round}");
        }
    }

}
