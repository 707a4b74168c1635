//! Recognising what text values hold: RFC 3339 timestamps, timestamps
//! without a zone (ISO 8601 local date-time), ISO 8601 dates, UUIDs
//! (RFC 9562 text form), integers and decimals.

use serde::Serialize;

/// How many strings matched each form (a string matches at most one).
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize)]
pub struct StringForms {
    /// RFC 3339 date-time with a `Z` or `±HH:MM` offset.
    pub timestamp: u64,
    /// A date-time with no zone or offset.
    pub timestamp_no_zone: u64,
    /// ISO 8601 calendar date, `YYYY-MM-DD`.
    pub date: u64,
    pub uuid: u64,
    pub integer: u64,
    pub decimal: u64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Form {
    Timestamp,
    TimestampNoZone,
    Date,
    Uuid,
    Integer,
    Decimal,
}

impl StringForms {
    /// Counts the form of `s` and returns it, so callers need not classify again.
    pub fn observe(&mut self, s: &str) -> Option<Form> {
        self.observe_count(s, 1)
    }

    /// Counts the form of `count` strings equal to `s`.
    pub fn observe_count(&mut self, s: &str, count: u64) -> Option<Form> {
        let form = classify(s);
        match form {
            Some(Form::Timestamp) => self.timestamp += count,
            Some(Form::TimestampNoZone) => self.timestamp_no_zone += count,
            Some(Form::Date) => self.date += count,
            Some(Form::Uuid) => self.uuid += count,
            Some(Form::Integer) => self.integer += count,
            Some(Form::Decimal) => self.decimal += count,
            None => {}
        }
        form
    }

    pub fn merge(&mut self, other: &StringForms) {
        self.timestamp += other.timestamp;
        self.timestamp_no_zone += other.timestamp_no_zone;
        self.date += other.date;
        self.uuid += other.uuid;
        self.integer += other.integer;
        self.decimal += other.decimal;
    }

    /// (name, count) pairs with a non-zero count.
    /// Sets the count of the form a report names; `None` for an unknown name.
    pub fn set(&mut self, name: &str, n: u64) -> Option<()> {
        let slot = match name {
            "timestamp" => &mut self.timestamp,
            "timestamp_no_zone" => &mut self.timestamp_no_zone,
            "date" => &mut self.date,
            "uuid" => &mut self.uuid,
            "integer" => &mut self.integer,
            "decimal" => &mut self.decimal,
            _ => return None,
        };
        *slot = n;
        Some(())
    }

    pub fn iter(&self) -> impl Iterator<Item = (&'static str, u64)> {
        [
            ("timestamp", self.timestamp),
            ("timestamp_no_zone", self.timestamp_no_zone),
            ("date", self.date),
            ("uuid", self.uuid),
            ("integer", self.integer),
            ("decimal", self.decimal),
        ]
        .into_iter()
        .filter(|&(_, n)| n > 0)
    }
}

pub fn classify(s: &str) -> Option<Form> {
    let b = s.as_bytes();
    let first = *b.first()?;
    if b.len() == 36 && is_uuid(b) {
        return Some(Form::Uuid);
    }
    if first.is_ascii_digit() && b.len() >= 10 && b[4] == b'-' {
        if b.len() == 10 {
            return is_date(b).then_some(Form::Date);
        }
        return date_time(b);
    }
    if first.is_ascii_digit() || first == b'-' || first == b'+' || first == b'.' {
        return number_form(b);
    }
    None
}

fn digits(b: &[u8]) -> Option<u32> {
    if b.is_empty() || !b.iter().all(u8::is_ascii_digit) {
        return None;
    }
    Some(b.iter().fold(0u32, |acc, &d| acc * 10 + (d - b'0') as u32))
}

fn days_in_month(year: u32, month: u32) -> u32 {
    match month {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        2 if (year % 4 == 0 && year % 100 != 0) || year % 400 == 0 => 29,
        2 => 28,
        _ => 0,
    }
}

fn is_date(b: &[u8]) -> bool {
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return false;
    }
    let (Some(y), Some(m), Some(d)) = (digits(&b[0..4]), digits(&b[5..7]), digits(&b[8..10])) else {
        return false;
    };
    (1..=12).contains(&m) && d >= 1 && d <= days_in_month(y, m)
}

/// `date [Tt ] HH:MM:SS[.frac][Z|z|±HH:MM]`
fn date_time(b: &[u8]) -> Option<Form> {
    if b.len() < 19 || !is_date(&b[..10]) || !matches!(b[10], b'T' | b't' | b' ') {
        return None;
    }
    let t = &b[11..];
    if t[2] != b':' || t[5] != b':' {
        return None;
    }
    let (h, m, s) = (digits(&t[0..2])?, digits(&t[3..5])?, digits(&t[6..8])?);
    if h > 23 || m > 59 || s > 60 {
        return None;
    }
    let mut rest = &t[8..];
    if let Some(frac) = rest.strip_prefix(b".") {
        let n = frac.iter().take_while(|c| c.is_ascii_digit()).count();
        if n == 0 {
            return None;
        }
        rest = &frac[n..];
    }
    match rest {
        [] => Some(Form::TimestampNoZone),
        [b'Z' | b'z'] => Some(Form::Timestamp),
        [b'+' | b'-', oh @ ..] if oh.len() == 5 && oh[2] == b':' => {
            let (oh_h, oh_m) = (digits(&oh[0..2])?, digits(&oh[3..5])?);
            (oh_h <= 23 && oh_m <= 59).then_some(Form::Timestamp)
        }
        _ => None,
    }
}

fn is_uuid(b: &[u8]) -> bool {
    b.iter().enumerate().all(|(i, &c)| match i {
        8 | 13 | 18 | 23 => c == b'-',
        _ => c.is_ascii_hexdigit(),
    })
}

/// `[+-]?digits` is an integer; `[+-]?(digits.digits* | .digits)([eE][+-]?digits)?`
/// or `[+-]?digits[eE][+-]?digits` is a decimal.
fn number_form(b: &[u8]) -> Option<Form> {
    let b = match b.first() {
        Some(b'+' | b'-') => &b[1..],
        _ => b,
    };
    let int_len = b.iter().take_while(|c| c.is_ascii_digit()).count();
    if int_len == b.len() {
        return (int_len > 0).then_some(Form::Integer);
    }
    let mut i = int_len;
    let mut frac_len = 0;
    if b[i] == b'.' {
        frac_len = b[i + 1..].iter().take_while(|c| c.is_ascii_digit()).count();
        i += 1 + frac_len;
    }
    if int_len == 0 && frac_len == 0 {
        return None;
    }
    if i < b.len() && matches!(b[i], b'e' | b'E') {
        i += 1;
        if i < b.len() && matches!(b[i], b'+' | b'-') {
            i += 1;
        }
        let exp = b[i..].iter().take_while(|c| c.is_ascii_digit()).count();
        if exp == 0 {
            return None;
        }
        i += exp;
    }
    (i == b.len()).then_some(Form::Decimal)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn timestamps_need_a_valid_date_time_and_offset() {
        assert_eq!(classify("2024-02-29T23:59:60Z"), Some(Form::Timestamp));
        assert_eq!(classify("2024-05-01 08:30:00.125+02:00"), Some(Form::Timestamp));
        assert_eq!(classify("2024-05-01T08:30:00"), Some(Form::TimestampNoZone));
        assert_eq!(classify("2023-02-29T00:00:00Z"), None);
        assert_eq!(classify("2024-05-01T24:00:00Z"), None);
        assert_eq!(classify("2024-05-01T08:30:00+2:00"), None);
    }

    #[test]
    fn dates_uuids_and_numbers() {
        assert_eq!(classify("1970-01-01"), Some(Form::Date));
        assert_eq!(classify("2024-13-01"), None);
        assert_eq!(classify("123e4567-e89b-12d3-a456-426614174000"), Some(Form::Uuid));
        assert_eq!(classify("123e4567-e89b-12d3-a456-42661417400g"), None);
        assert_eq!(classify("-0042"), Some(Form::Integer));
        assert_eq!(classify("3.25"), Some(Form::Decimal));
        assert_eq!(classify(".5"), Some(Form::Decimal));
        assert_eq!(classify("6.02e23"), Some(Form::Decimal));
        assert_eq!(classify("1.2.3"), None);
        assert_eq!(classify("-"), None);
        assert_eq!(classify("abc"), None);
        assert_eq!(classify(""), None);
    }
}
