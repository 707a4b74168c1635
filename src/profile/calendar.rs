//! Calendar-aligned histograms of instants: buckets of an hour, a day, a
//! week (from Monday), a month or a year — the finest unit that gives at
//! most 60 buckets over the range (so usually 10–60; fewer when even hours
//! are too many and days too few), and years however many it takes.

use serde::{Deserialize, Serialize};

use super::numbers::NumberStats;
use crate::time::{civil_from_days, days_from_civil, rfc3339_from_unix};

/// Most buckets a calendar histogram has.
pub const MAX_BUCKETS: usize = 60;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Unit {
    Hour,
    Day,
    Week,
    Month,
    Year,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Bucket {
    pub label: String,
    pub count: u64,
    /// The bucket's instants, `[start, end)` in seconds since the epoch
    /// (the label says the same for people).
    #[serde(skip)]
    pub start: i64,
    #[serde(skip)]
    pub end: i64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CalendarHistogram {
    pub unit: Unit,
    pub buckets: Vec<Bucket>,
    /// False when counts come from the sketch's ranks.
    pub exact: bool,
}

/// The start of the unit containing `secs`.
fn floor(unit: Unit, secs: i64) -> i64 {
    let days = secs.div_euclid(86_400);
    match unit {
        Unit::Hour => secs.div_euclid(3600) * 3600,
        Unit::Day => days * 86_400,
        // 1970-01-01 was a Thursday; Mondays are days ≡ 4 (mod 7).
        Unit::Week => (days - (days + 3).rem_euclid(7)) * 86_400,
        Unit::Month => {
            let (y, m, _) = civil_from_days(days);
            days_from_civil(y, m, 1) * 86_400
        }
        Unit::Year => {
            let (y, _, _) = civil_from_days(days);
            days_from_civil(y, 1, 1) * 86_400
        }
    }
}

/// The start of the next unit after the one starting at `start`.
fn next(unit: Unit, start: i64) -> i64 {
    match unit {
        Unit::Hour => start + 3600,
        Unit::Day => start + 86_400,
        Unit::Week => start + 7 * 86_400,
        Unit::Month => {
            let (y, m, _) = civil_from_days(start.div_euclid(86_400));
            let (y, m) = if m == 12 { (y + 1, 1) } else { (y, m + 1) };
            days_from_civil(y, m, 1) * 86_400
        }
        Unit::Year => {
            let (y, _, _) = civil_from_days(start.div_euclid(86_400));
            days_from_civil(y + 1, 1, 1) * 86_400
        }
    }
}

fn label(unit: Unit, start: i64) -> String {
    let text = rfc3339_from_unix(start);
    match unit {
        Unit::Hour => format!("{}:00Z", &text[..13]),
        Unit::Day | Unit::Week => text[..10].to_string(),
        Unit::Month => text[..7].to_string(),
        Unit::Year => text[..4].to_string(),
    }
}

/// Bucket edges over `[min, max]` in the finest unit with ≤ 60 buckets;
/// years however many it takes (a far-off outlier can stretch the range).
pub fn edges(min: i64, max: i64) -> (Unit, Vec<i64>) {
    for unit in [Unit::Hour, Unit::Day, Unit::Week, Unit::Month, Unit::Year] {
        let mut edges = vec![floor(unit, min)];
        while *edges.last().expect("non-empty") <= max {
            if unit != Unit::Year && edges.len() > MAX_BUCKETS {
                break;
            }
            let last = *edges.last().expect("non-empty");
            edges.push(next(unit, last));
        }
        if *edges.last().expect("non-empty") > max {
            return (unit, edges);
        }
    }
    unreachable!("the year unit always covers the range")
}

/// The histogram of the instants (epoch seconds) summarised in `seconds`.
pub fn histogram(seconds: &NumberStats) -> Option<CalendarHistogram> {
    let (min, max) = (seconds.moments.min()? as i64, seconds.moments.max()? as i64);
    let (unit, edges) = edges(min, max);
    let n = seconds.moments.count() as f64;
    let exact = seconds.is_exact();
    let mut buckets = Vec::with_capacity(edges.len() - 1);
    let mut below = 0.0;
    for pair in edges.windows(2) {
        // Share of values before the next edge (an edge belongs to the bucket it starts).
        let at = seconds.share_below(pair[1] as f64);
        let count = ((at - below) * n).round().max(0.0) as u64;
        buckets.push(Bucket { label: label(unit, pair[0]), count, start: pair[0], end: pair[1] });
        below = at;
    }
    Some(CalendarHistogram { unit, buckets, exact })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_align_to_the_calendar() {
        // 2026-03-04T15:30:00Z, a Wednesday (`date -u -d @1772638200`).
        let t = 1_772_638_200;
        assert_eq!(rfc3339_from_unix(floor(Unit::Hour, t)), "2026-03-04T15:00:00Z");
        assert_eq!(rfc3339_from_unix(floor(Unit::Day, t)), "2026-03-04T00:00:00Z");
        assert_eq!(rfc3339_from_unix(floor(Unit::Week, t)), "2026-03-02T00:00:00Z");
        assert_eq!(rfc3339_from_unix(floor(Unit::Month, t)), "2026-03-01T00:00:00Z");
        assert_eq!(rfc3339_from_unix(next(Unit::Month, floor(Unit::Month, t))), "2026-04-01T00:00:00Z");
        assert_eq!(rfc3339_from_unix(floor(Unit::Year, t)), "2026-01-01T00:00:00Z");
    }

    #[test]
    fn the_finest_unit_with_at_most_sixty_buckets_is_chosen() {
        let day = 86_400;
        let t0 = 1_772_409_600; // 2026-03-02T00:00:00Z, a Monday
        assert_eq!(edges(t0, t0 + 2 * day - 1).0, Unit::Hour); // 48 hours
        assert_eq!(edges(t0, t0 + 40 * day).0, Unit::Day);
        assert_eq!(edges(t0, t0 + 300 * day).0, Unit::Week);
        assert_eq!(edges(t0, t0 + 3 * 365 * day).0, Unit::Month);
        let (unit, years) = edges(t0, t0 + 73 * 365 * day);
        assert_eq!(unit, Unit::Year);
        assert_eq!(years.len(), 75, "2026 to 2099 inclusive, every year kept");
    }

    #[test]
    fn counts_add_up_and_labels_follow_the_unit() {
        let mut s = NumberStats::new();
        let t0 = 1_772_409_600;
        for i in 0..100 {
            s.add((t0 + i * 3600) as f64); // 100 hours from Monday 00:00
        }
        let h = histogram(&s).unwrap();
        assert_eq!(h.unit, Unit::Day);
        assert!(h.exact);
        assert_eq!(h.buckets.iter().map(|b| b.count).sum::<u64>(), 100);
        let day = |label: &str, count| {
            let start = crate::time::rfc3339_seconds(&format!("{label}T00:00:00Z")).unwrap();
            Bucket { label: label.into(), count, start, end: start + 86_400 }
        };
        assert_eq!(h.buckets[0], day("2026-03-02", 24));
        assert_eq!(h.buckets.last().unwrap(), &day("2026-03-06", 4));
    }
}
