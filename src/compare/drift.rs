//! How the values of a field present in both sources moved: null rate,
//! numbers (Kolmogorov–Smirnov and PSI over the earlier source's histogram
//! bins), text and other categories (values new and vanished among the
//! counted ones, PSI over the top values plus "other"), text length and
//! distinct counts. Computed from the two profiles alone: no row is read
//! again. Instants are left out: a later drop is later by design.

use std::collections::{HashMap, HashSet};

use serde::Serialize;

use super::{ks, psi};
use crate::profile::field::FieldStats;
use crate::shape::FieldShape;

/// A change in null rate (null or missing places) of this many points
/// counts as drift (our choice, not a standard).
pub const NULL_RATE_SHIFT: f64 = 0.05;
/// Top values compared per side.
pub const TOP: usize = 20;
/// New and vanished values listed per field.
pub const LISTED: usize = 5;

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Drift {
    pub path: String,
    /// (before, after): null or missing places per place.
    pub null_rate: (f64, f64),
    #[serde(skip_serializing_if = "Option::is_none")]
    pub numbers: Option<NumberDrift>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub categories: Option<CategoryDrift>,
    /// Mean text length in characters (before, after).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mean_length: Option<(f64, f64)>,
    /// Distinct non-null values (before, after).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub distinct: Option<(u64, u64)>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NumberDrift {
    /// Kolmogorov–Smirnov statistic and p-value.
    pub ks: f64,
    pub ks_p_value: f64,
    pub psi: f64,
    /// Both sides kept every value (else the quantile sketches were
    /// compared, within their rank error).
    pub exact: bool,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CategoryDrift {
    pub psi: f64,
    /// Among the later source's top values, ones the earlier did not count.
    pub new_values: Vec<String>,
    /// Among the earlier source's top values, ones the later did not count.
    pub vanished_values: Vec<String>,
    /// Both sides counted every value (else "new" means "not among the
    /// values the earlier source's summary kept").
    pub exact: bool,
}

impl Drift {
    /// Whether the field moved enough to fail `compare --fail-on drift`:
    /// a major PSI shift, or the null rate moved by [`NULL_RATE_SHIFT`].
    pub fn drifted(&self) -> bool {
        let major = |p: f64| p >= psi::MAJOR_SHIFT;
        (self.null_rate.1 - self.null_rate.0).abs() >= NULL_RATE_SHIFT
            || self.numbers.as_ref().is_some_and(|n| major(n.psi))
            || self.categories.as_ref().is_some_and(|c| major(c.psi))
    }

    /// The largest PSI measured, for ordering.
    pub fn largest_psi(&self) -> f64 {
        let n = self.numbers.as_ref().map_or(0.0, |n| n.psi);
        let c = self.categories.as_ref().map_or(0.0, |c| c.psi);
        n.max(c)
    }
}

pub fn drift(before: &FieldShape, after: &FieldShape) -> Drift {
    let rate = |f: &FieldShape| if f.count == 0 { 0.0 } else { (f.nulls() + f.missing) as f64 / f.count as f64 };
    let (b, a) = (before.stats.as_deref(), after.stats.as_deref());
    Drift {
        path: after.path.clone(),
        null_rate: (rate(before), rate(after)),
        numbers: b.zip(a).filter(|_| mainly_numbers(before) && mainly_numbers(after)).and_then(|(b, a)| numbers(b, a)),
        categories: b
            .zip(a)
            .filter(|_| !mainly_numbers(before) && !mainly_numbers(after) && !is_temporal(before) && !is_temporal(after))
            .and_then(|(b, a)| categories(b, a)),
        mean_length: b.zip(a).and_then(|(b, a)| {
            let mean = |s: &FieldStats| s.text.as_ref().and_then(|t| t.lengths.moments.mean());
            mean(b).zip(mean(a))
        }),
        distinct: b.zip(a).and_then(|(b, a)| {
            let d = |s: &FieldStats| s.distinct.count().value;
            (d(b) > 0 || d(a) > 0).then(|| (d(b), d(a)))
        }),
    }
}

fn numbers(before: &FieldStats, after: &FieldStats) -> Option<NumberDrift> {
    let (b, a) = (before.numbers.as_ref()?, after.numbers.as_ref()?);
    let ((bv, b_exact), (av, a_exact)) = (b.distribution(), a.distribution());
    let d = ks::statistic(&bv, &av)?;
    let (n, m) = (bv.iter().map(|p| p.1).sum(), av.iter().map(|p| p.1).sum());
    let edges = b.histogram()?.edges;
    let psi = psi::psi(&psi::counts_in(&edges, &bv), &psi::counts_in(&edges, &av))?;
    Some(NumberDrift { ks: d, ks_p_value: ks::p_value(d, n, m), psi, exact: b_exact && a_exact })
}

/// At least half the values are numbers (a mixed field of text with a few
/// numbers is compared by its values, not by a handful of numbers).
fn mainly_numbers(f: &FieldShape) -> bool {
    let present = f.count.saturating_sub(f.nulls() + f.missing);
    let numbers = f.stats.as_deref().and_then(|s| s.numbers.as_ref()).map_or(0, |n| n.moments.count());
    present > 0 && numbers * 2 >= present
}

/// Dates and times, declared or as text: their values are expected to be
/// new in every drop.
fn is_temporal(f: &FieldShape) -> bool {
    use crate::shape::Kind;
    let forms = &f.kinds.forms;
    let strings = f.kinds.get(Kind::String);
    [Kind::Date, Kind::Timestamp, Kind::Time].iter().any(|k| f.kinds.get(*k) > 0)
        || (strings > 0 && forms.timestamp + forms.timestamp_no_zone + forms.date == strings)
}

/// Values as categories (text, booleans, mixed), when values repeat: a
/// field nearly unique per row, such as an id, has new values in every drop
/// by design.
fn categories(before: &FieldStats, after: &FieldStats) -> Option<CategoryDrift> {
    if before.top.total() == 0 || after.top.total() == 0 {
        return None;
    }
    let repeats = |s: &FieldStats| s.distinct.count().value * 2 <= s.top.total();
    if !repeats(before) || !repeats(after) {
        return None;
    }
    let counted = |s: &FieldStats| s.top.entries().collect::<HashMap<String, u64>>();
    let (b_all, a_all) = (counted(before), counted(after));
    let (b_top, a_top) = (before.top.top(TOP), after.top.top(TOP));
    let mut bins: Vec<String> = Vec::new();
    let mut seen = HashSet::new();
    for v in b_top.iter().chain(&a_top) {
        if seen.insert(v.value.clone()) {
            bins.push(v.value.clone());
        }
    }
    let shares = |all: &HashMap<String, u64>, total: u64| {
        let mut counts: Vec<u64> = bins.iter().map(|v| all.get(v).copied().unwrap_or(0)).collect();
        let listed: u64 = counts.iter().sum();
        counts.push(total.saturating_sub(listed));
        counts
    };
    let psi = psi::psi(&shares(&b_all, before.top.total()), &shares(&a_all, after.top.total()))?;
    let new_values = a_top.iter().filter(|v| !b_all.contains_key(&v.value)).take(LISTED).map(|v| v.value.clone()).collect();
    let vanished_values = b_top.iter().filter(|v| !a_all.contains_key(&v.value)).take(LISTED).map(|v| v.value.clone()).collect();
    Some(CategoryDrift { psi, new_values, vanished_values, exact: before.top.is_exact() && after.top.is_exact() })
}
