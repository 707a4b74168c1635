//! Values of a page as text: one compact line per cell for the table, and an
//! indented form of nested values for when a cell is opened.

use std::fmt::Write;

use polars::prelude::*;

/// Longest compact cell text; the opened form has everything.
const COMPACT_CHARS: usize = 200;

/// One cell of a page.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    pub text: String,
    /// The whole value over several lines, for structs, lists and long text.
    pub opened: Option<String>,
    pub is_null: bool,
}

pub fn cell(value: &AnyValue) -> Cell {
    let mut text = String::new();
    write_value(&mut text, value, None, false);
    let nested = matches!(value, AnyValue::List(_) | AnyValue::Array(..) | AnyValue::Struct(..) | AnyValue::StructOwned(_));
    let long = text.chars().count() > COMPACT_CHARS;
    let opened = if nested {
        let mut full = String::new();
        write_value(&mut full, value, Some(0), false);
        Some(full)
    } else {
        long.then(|| text.clone())
    };
    if long {
        text = text.chars().take(COMPACT_CHARS).collect::<String>() + "…";
    }
    Cell { text, opened, is_null: matches!(value, AnyValue::Null) }
}

/// Writes `value`; `indent` is `Some(level)` for the multi-line form; text
/// is `quoted` inside nested values (so `"1"` and `1` differ), bare at the top.
fn write_value(out: &mut String, value: &AnyValue, indent: Option<usize>, quoted: bool) {
    match value {
        AnyValue::Null => out.push_str("null"),
        AnyValue::Boolean(b) => out.push_str(if *b { "true" } else { "false" }),
        AnyValue::String(s) => write_text(out, s, quoted),
        AnyValue::StringOwned(s) => write_text(out, s, quoted),
        AnyValue::Binary(b) => write_bytes(out, b),
        AnyValue::BinaryOwned(b) => write_bytes(out, b),
        AnyValue::Float32(f) => write_float(out, f64::from(*f)),
        AnyValue::Float64(f) => write_float(out, *f),
        AnyValue::Date(days) => {
            let (y, m, d) = crate::time::civil_from_days(i64::from(*days));
            let _ = write!(out, "{y:04}-{m:02}-{d:02}");
        }
        AnyValue::Datetime(ticks, unit, _) | AnyValue::DatetimeOwned(ticks, unit, _) => {
            write_instant(out, *ticks, *unit);
        }
        AnyValue::Duration(ticks, unit) => {
            let _ = write!(out, "{ticks} {}", unit_name(*unit));
        }
        AnyValue::Time(nanos) => {
            let secs = nanos.div_euclid(1_000_000_000);
            let _ = write!(out, "{:02}:{:02}:{:02}", secs / 3600, secs % 3600 / 60, secs % 60);
            write_fraction(out, nanos.rem_euclid(1_000_000_000));
        }
        AnyValue::Decimal(units, _, scale) => out.push_str(&decimal_text(*units, *scale)),
        AnyValue::List(series) | AnyValue::Array(series, _) => write_list(out, series, indent),
        AnyValue::Struct(..) | AnyValue::StructOwned(_) => {
            let fields: Vec<(String, AnyValue)> = match value {
                AnyValue::StructOwned(owned) => {
                    owned.1.iter().map(|f| f.name().to_string()).zip(owned.0.iter().cloned()).collect()
                }
                _ => value
                    ._iter_struct_av()
                    .zip(struct_field_names(value))
                    .map(|(v, name)| (name, v))
                    .collect(),
            };
            write_struct(out, &fields, indent);
        }
        other => {
            let _ = write!(out, "{}", other.str_value());
        }
    }
}

fn struct_field_names(value: &AnyValue) -> Vec<String> {
    match value {
        AnyValue::Struct(_, _, fields) => fields.iter().map(|f| f.name().to_string()).collect(),
        _ => Vec::new(),
    }
}

fn write_struct(out: &mut String, fields: &[(String, AnyValue)], indent: Option<usize>) {
    write_items(out, ('{', '}'), fields.len(), indent, |out, i| {
        let (name, v) = &fields[i];
        let _ = write!(out, "{name}: ");
        write_value(out, v, indent.map(|l| l + 1), true);
    });
}

fn write_list(out: &mut String, series: &Series, indent: Option<usize>) {
    write_items(out, ('[', ']'), series.len(), indent, |out, i| {
        let v = series.get(i).unwrap_or(AnyValue::Null);
        write_value(out, &v, indent.map(|l| l + 1), true);
    });
}

/// `n` items between `brackets`, comma-separated: on one line, or one per
/// line at `indent`.
fn write_items(out: &mut String, brackets: (char, char), n: usize, indent: Option<usize>, mut item: impl FnMut(&mut String, usize)) {
    out.push(brackets.0);
    for i in 0..n {
        if i > 0 {
            out.push(',');
        }
        match indent {
            Some(level) => newline(out, level + 1),
            None if i > 0 => out.push(' '),
            None => {}
        }
        item(out, i);
        // The compact form is cut later anyway: stop walking a long value early.
        if indent.is_none() && out.len() > COMPACT_CHARS * 4 {
            out.push_str(" …");
            break;
        }
    }
    if let Some(level) = indent.filter(|_| n > 0) {
        newline(out, level);
    }
    out.push(brackets.1);
}

fn newline(out: &mut String, level: usize) {
    out.push('\n');
    out.push_str(&"  ".repeat(level));
}

fn write_text(out: &mut String, s: &str, quoted: bool) {
    if quoted {
        let _ = write!(out, "{s:?}");
    } else {
        out.push_str(s);
    }
}

fn write_bytes(out: &mut String, bytes: &[u8]) {
    out.push_str("0x");
    for b in bytes.iter().take(COMPACT_CHARS / 2) {
        let _ = write!(out, "{b:02x}");
    }
    if bytes.len() > COMPACT_CHARS / 2 {
        let _ = write!(out, "… ({} bytes)", bytes.len());
    }
}

fn write_float(out: &mut String, f: f64) {
    let _ = write!(out, "{f}");
}

fn unit_name(unit: TimeUnit) -> &'static str {
    match unit {
        TimeUnit::Nanoseconds => "ns",
        TimeUnit::Microseconds => "µs",
        TimeUnit::Milliseconds => "ms",
    }
}

/// An instant as RFC 3339 in UTC, with as many fraction digits as it has.
fn write_instant(out: &mut String, ticks: i64, unit: TimeUnit) {
    let per: i64 = match unit {
        TimeUnit::Nanoseconds => 1_000_000_000,
        TimeUnit::Microseconds => 1_000_000,
        TimeUnit::Milliseconds => 1_000,
    };
    let text = crate::time::rfc3339_from_unix(ticks.div_euclid(per));
    out.push_str(&text[..19]);
    write_fraction(out, ticks.rem_euclid(per) * (1_000_000_000 / per));
    out.push('Z');
}

fn write_fraction(out: &mut String, nanos: i64) {
    if nanos != 0 {
        let digits = format!("{nanos:09}");
        let _ = write!(out, ".{}", digits.trim_end_matches('0'));
    }
}

fn decimal_text(units: i128, scale: usize) -> String {
    let digits = units.unsigned_abs().to_string();
    let sign = if units < 0 { "-" } else { "" };
    if scale == 0 {
        return format!("{sign}{digits}");
    }
    let padded = format!("{digits:0>width$}", width = scale + 1);
    let (whole, fraction) = padded.split_at(padded.len() - scale);
    format!("{sign}{whole}.{fraction}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scalars_read_as_people_write_them() {
        assert_eq!(cell(&AnyValue::Null).text, "null");
        assert!(cell(&AnyValue::Null).is_null);
        assert_eq!(cell(&AnyValue::Int64(-42)).text, "-42");
        assert_eq!(cell(&AnyValue::Float64(0.1)).text, "0.1");
        assert_eq!(cell(&AnyValue::String("late")).text, "late");
        assert_eq!(cell(&AnyValue::Decimal(-1205, 10, 2)).text, "-12.05");
        assert_eq!(cell(&AnyValue::Decimal(5, 10, 3)).text, "0.005");
        assert_eq!(cell(&AnyValue::Date(1)).text, "1970-01-02");
        assert_eq!(
            cell(&AnyValue::Datetime(1_500_000, TimeUnit::Microseconds, None)).text,
            "1970-01-01T00:00:01.5Z"
        );
        assert_eq!(cell(&AnyValue::Time(3_661_000_000_000)).text, "01:01:01");
        assert_eq!(cell(&AnyValue::Binary(&[0xde, 0xad])).text, "0xdead");
    }

    #[test]
    fn nested_values_are_compact_in_the_table_and_indented_when_opened() {
        let s = Series::new("stops".into(), &["a", "b"]);
        let c = cell(&AnyValue::List(s));
        assert_eq!(c.text, r#"["a", "b"]"#);
        assert_eq!(c.opened.as_deref(), Some("[\n  \"a\",\n  \"b\"\n]"));
        let fields = vec![Field::new("zone".into(), DataType::String), Field::new("n".into(), DataType::Int32)];
        let value = AnyValue::StructOwned(Box::new((vec![AnyValue::StringOwned("north".into()), AnyValue::Int32(3)], fields)));
        let c = cell(&value);
        assert_eq!(c.text, r#"{zone: "north", n: 3}"#);
        assert_eq!(c.opened.as_deref(), Some("{\n  zone: \"north\",\n  n: 3\n}"));
    }

    #[test]
    fn long_text_is_cut_in_the_table_and_whole_when_opened() {
        let long = "x".repeat(500);
        let c = cell(&AnyValue::String(&long));
        assert_eq!(c.text.chars().count(), COMPACT_CHARS + 1);
        assert_eq!(c.opened.as_deref(), Some(long.as_str()));
    }
}
