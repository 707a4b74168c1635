//! Wall-clock time as RFC 3339 text, without a date library.

use std::time::{SystemTime, UNIX_EPOCH};

/// Now, in UTC, to the second: `2026-12-01T23:17:24Z`.
pub fn now_rfc3339() -> String {
    let secs = SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs() as i64);
    rfc3339_from_unix(secs)
}

pub fn rfc3339_from_unix(secs: i64) -> String {
    let days = secs.div_euclid(86_400);
    let rem = secs.rem_euclid(86_400);
    let (y, m, d) = civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z", rem / 3600, rem % 3600 / 60, rem % 60)
}

/// `ticks` counted `per_second` to the second since the epoch as RFC 3339
/// text with only the fraction digits it needs; `Z` when `zoned`, else the
/// wall-clock form without an offset.
pub fn rfc3339_from_ticks(ticks: i64, per_second: i64, zoned: bool) -> String {
    let secs = ticks.div_euclid(per_second);
    let part = ticks.rem_euclid(per_second);
    let mut out = rfc3339_from_unix(secs);
    out.pop();
    if part > 0 {
        let width = per_second.ilog10() as usize;
        let digits = format!("{part:0width$}");
        out.push('.');
        out.push_str(digits.trim_end_matches('0'));
    }
    if zoned {
        out.push('Z');
    }
    out
}

/// Days since 1970-01-01 to a proleptic Gregorian date (Howard Hinnant's
/// `civil_from_days` algorithm, "chrono-Compatible Low-Level Date Algorithms").
pub fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// Days since 1970-01-01 of a proleptic Gregorian date (the inverse,
/// `days_from_civil`, from the same paper).
pub fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y.rem_euclid(400);
    let mp = (m as i64 + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d as i64 - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// Seconds since the epoch of an RFC 3339 timestamp with an offset
/// (`2024-05-01T08:30:00.5+02:00`); `None` for anything else.
pub fn parse_rfc3339(s: &str) -> Option<i64> {
    if crate::shape::strings::classify(s) != Some(crate::shape::strings::Form::Timestamp) {
        return None;
    }
    rfc3339_seconds(s)
}

/// As [`parse_rfc3339`], for text already known to be in that form.
pub fn rfc3339_seconds(s: &str) -> Option<i64> {
    let b = s.as_bytes();
    let num = |r: std::ops::Range<usize>| s.get(r)?.parse::<i64>().ok();
    let days = days_from_civil(num(0..4)?, num(5..7)? as u32, num(8..10)? as u32);
    let secs = days * 86_400 + num(11..13)? * 3600 + num(14..16)? * 60 + num(17..19)?;
    let zone = b.iter().skip(19).position(|&c| matches!(c, b'Z' | b'z' | b'+' | b'-'))? + 19;
    let offset = match b[zone] {
        b'Z' | b'z' => 0,
        sign => {
            let minutes = num(zone + 1..zone + 3)? * 60 + num(zone + 4..zone + 6)?;
            if sign == b'+' { minutes * 60 } else { -minutes * 60 }
        }
    };
    Some(secs - offset)
}

/// Now, in seconds since the epoch.
pub fn now_unix() -> i64 {
    SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs() as i64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_become_rfc3339_with_the_fraction_they_need() {
        assert_eq!(rfc3339_from_ticks(1_500, 1_000_000_000, true), "1970-01-01T00:00:00.0000015Z");
        assert_eq!(rfc3339_from_ticks(-1, 1_000, false), "1969-12-31T23:59:59.999");
        assert_eq!(rfc3339_from_ticks(86_400_000_000, 1_000_000, true), "1970-01-02T00:00:00Z");
    }

    #[test]
    fn rfc3339_parses_to_the_epoch_second() {
        assert_eq!(parse_rfc3339("1970-01-01T00:00:00Z"), Some(0));
        assert_eq!(parse_rfc3339("2000-02-29T02:00:00+02:00"), Some(951_782_400));
        assert_eq!(parse_rfc3339("1969-12-31T23:59:59.75Z"), Some(-1));
        assert_eq!(parse_rfc3339("2000-02-29T00:00:00"), None, "no zone");
        assert_eq!(days_from_civil(2000, 2, 29), 11_016);
    }

    #[test]
    fn known_instants_format_correctly() {
        assert_eq!(rfc3339_from_unix(0), "1970-01-01T00:00:00Z");
        // 951782400 is 2000-02-29T00:00:00Z (a leap day in a century leap year), `date -u -d @951782400`.
        assert_eq!(rfc3339_from_unix(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(rfc3339_from_unix(-1), "1969-12-31T23:59:59Z");
    }
}
