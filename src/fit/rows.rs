//! The fit's one pass over the rows: each finding's row test applied to
//! every row, counting the rows it affects and keeping a few examples.

use std::sync::atomic::{AtomicBool, Ordering};

use super::check::{Finding, ticks_per_second};
use super::values;
use super::verdict::{DecimalRule, EXAMPLES, Example, RowTest};
use crate::path::{Step, steps};
use crate::shape::Kind;
use crate::source::{Batch, Source, SourceError};
use crate::value::Value;

/// Rows affected and examples, one per finding (in order), and the rows read.
pub struct Counts {
    pub per_finding: Vec<(u64, Vec<Example>)>,
    pub rows: u64,
    /// The pass was stopped before the end.
    pub stopped: bool,
}

struct Test<'a> {
    steps: Vec<Step>,
    test: &'a RowTest,
    rows: u64,
    examples: Vec<Example>,
}

/// Applies the findings' tests to every row of `source`.
pub fn count(mut source: Box<dyn Source>, findings: &[Finding], stop: &AtomicBool) -> Result<Counts, SourceError> {
    let mut tests: Vec<Option<Test>> = findings
        .iter()
        .map(|f| {
            let test = f.test.as_ref()?;
            let path = match test {
                RowTest::Present(p) => p.as_str(),
                _ => f.path.as_str(),
            };
            let steps = if path.is_empty() { Vec::new() } else { steps(path).unwrap_or_default() };
            Some(Test { steps, test, rows: 0, examples: Vec::new() })
        })
        .collect();
    let mut tops: Vec<String> = tests
        .iter()
        .flatten()
        .filter_map(|t| match t.steps.first() {
            Some(Step::Member(name)) => Some(name.clone()),
            _ => None,
        })
        .collect();
    tops.sort();
    tops.dedup();
    let mut row_number = 0u64;
    let mut stopped = false;
    while let Some(batch) = source.next_batch()? {
        if stop.load(Ordering::Relaxed) {
            stopped = true;
            break;
        }
        let mut each = |row: &Value| {
            for t in tests.iter_mut().flatten() {
                if let Some(example) = affected(row, &t.steps, t.test) {
                    t.rows += 1;
                    if t.examples.len() < EXAMPLES {
                        t.examples.push(Example { row: row_number, value: example });
                    }
                }
            }
            row_number += 1;
        };
        match &batch {
            Batch::Arrow(b) => {
                let schema = b.schema();
                let columns: Vec<usize> = tops.iter().filter_map(|n| schema.index_of(n).ok()).collect();
                for i in 0..b.num_rows() {
                    each(&values::row_of(b, &columns, i));
                }
            }
            Batch::Rows(rows) => rows.iter().for_each(&mut each),
            Batch::Json(raw) => {
                for i in 0..raw.len() {
                    each(&raw.row(i)?);
                }
            }
        }
    }
    let per_finding = tests.into_iter().map(|t| t.map_or((0, Vec::new()), |t| (t.rows, t.examples))).collect();
    Ok(Counts { per_finding, rows: row_number, stopped })
}

/// A place a path leads to in one row.
enum Leaf<'a> {
    Missing,
    Value(&'a Value),
    Key(&'a str),
}

/// Every place `steps` lead to in `value`. A null or absent parent leads
/// nowhere: only the last step can be missing.
fn leaves<'a>(value: &'a Value, steps: &[Step], out: &mut Vec<Leaf<'a>>) {
    let Some((step, rest)) = steps.split_first() else {
        out.push(Leaf::Value(value));
        return;
    };
    match (step, value) {
        (Step::Member(name), Value::Object(members)) => match members.iter().find(|(k, _)| k == name) {
            Some((_, child)) => leaves(child, rest, out),
            None if rest.is_empty() => out.push(Leaf::Missing),
            None => {}
        },
        (Step::Element, Value::Array(items)) => items.iter().for_each(|item| leaves(item, rest, out)),
        (Step::MapValue, Value::Object(members)) => members.iter().for_each(|(_, v)| leaves(v, rest, out)),
        (Step::MapKey, Value::Object(members)) if rest.is_empty() => members.iter().for_each(|(k, _)| out.push(Leaf::Key(k))),
        _ => {}
    }
}

/// The example text when the row is affected by `test`.
fn affected(row: &Value, steps: &[Step], test: &RowTest) -> Option<String> {
    if steps.is_empty() {
        return matches!(test, RowTest::Present(_)).then(String::new);
    }
    let mut found = Vec::new();
    leaves(row, steps, &mut found);
    found.iter().find(|leaf| hits(leaf, test)).map(|leaf| match leaf {
        Leaf::Missing => "(missing)".to_string(),
        Leaf::Value(v) => v.to_display(60),
        Leaf::Key(k) => format!("key {k:?}"),
    })
}

fn hits(leaf: &Leaf, test: &RowTest) -> bool {
    let value = match leaf {
        Leaf::Missing => return matches!(test, RowTest::Empty { missing: true, .. }),
        Leaf::Key(k) => &Value::Str(k.to_string()),
        Leaf::Value(v) => v,
    };
    match test {
        RowTest::Present(_) => *value != Value::Null,
        RowTest::Empty { null, .. } => *null && *value == Value::Null,
        RowTest::IntOutside { low, high } => match value {
            Value::Int(i) => (*i as i128) < *low || (*i as i128) > *high,
            Value::UInt(u) => (*u as i128) > *high,
            Value::BigInt(_) => true,
            Value::Str(s) => s.trim().parse::<i128>().is_ok_and(|i| i < *low || i > *high),
            _ => false,
        },
        RowTest::LosesAsFloat32 => matches!(value, Value::Float(f) if f.is_finite() && (*f as f32) as f64 != *f),
        RowTest::DecimalOutside(rule) => decimal_text(value).is_some_and(|t| !fits_decimal(&t, *rule)),
        RowTest::SubUnit { have, want } => match value {
            Value::Int(ticks) => ticks % (ticks_per_second(*have) / ticks_per_second(*want)) != 0,
            Value::Str(s) => fraction_digits(s) > ticks_per_second(*want).ilog10(),
            _ => false,
        },
        RowTest::KindIn(kinds) => kind_of(value).is_some_and(|k| kinds.contains(&k)),
    }
}

fn decimal_text(value: &Value) -> Option<String> {
    match value {
        Value::Int(i) => Some(i.to_string()),
        Value::UInt(u) => Some(u.to_string()),
        Value::BigInt(s) => Some(s.to_string()),
        Value::Float(f) if f.is_finite() => Some(f.to_string()),
        Value::Str(s) => Some(s.trim().to_string()),
        _ => None,
    }
}

/// Whether decimal text has no more digits than `rule` allows (leading
/// zeros of the whole part and trailing zeros of the fraction aside).
pub fn fits_decimal(text: &str, rule: DecimalRule) -> bool {
    let unsigned = text.trim_start_matches(['-', '+']);
    let (whole, fraction) = unsigned.split_once('.').unwrap_or((unsigned, ""));
    if !whole.chars().chain(fraction.chars()).all(|c| c.is_ascii_digit()) {
        return false;
    }
    let whole = whole.trim_start_matches('0').len() as u32;
    let fraction = fraction.trim_end_matches('0').len() as u32;
    match rule {
        DecimalRule::Fixed { whole: w, scale } => whole <= w && fraction <= scale,
        DecimalRule::Floating { digits } => whole + fraction <= digits,
    }
}

/// Digits after the seconds' point in date-time text.
fn fraction_digits(text: &str) -> u32 {
    let Some(point) = text.find('.') else { return 0 };
    text[point + 1..].chars().take_while(char::is_ascii_digit).count() as u32
}

fn kind_of(value: &Value) -> Option<Kind> {
    Some(match value {
        Value::Null => return None,
        Value::Bool(_) => Kind::Bool,
        Value::Int(_) | Value::UInt(_) => Kind::Int,
        Value::BigInt(_) => Kind::Decimal,
        Value::Float(_) => Kind::Float,
        Value::Str(_) => Kind::String,
        Value::Array(_) => Kind::Array,
        Value::Object(_) => Kind::Object,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(json: &str) -> Value {
        crate::source::json::parse::parse_value(json.as_bytes()).unwrap()
    }

    fn test_on(json: &str, path: &str, test: RowTest) -> Option<String> {
        affected(&row(json), &steps(path).unwrap(), &test)
    }

    #[test]
    fn empty_tells_null_from_missing_and_skips_empty_parents() {
        let nulls = RowTest::Empty { null: true, missing: false };
        let missing = RowTest::Empty { null: false, missing: true };
        assert_eq!(test_on(r#"{"a": {"b": null}}"#, "a.b", nulls.clone()), Some("null".into()));
        assert_eq!(test_on(r#"{"a": {}}"#, "a.b", nulls.clone()), None);
        assert_eq!(test_on(r#"{"a": {}}"#, "a.b", missing.clone()), Some("(missing)".into()));
        assert_eq!(test_on(r#"{"a": null}"#, "a.b", missing), None, "a null parent is the parent's business");
        assert_eq!(test_on(r#"{"s": [1, null]}"#, "s[]", nulls), Some("null".into()));
    }

    #[test]
    fn integer_ranges_floats_and_kinds() {
        let int32 = RowTest::IntOutside { low: i32::MIN as i128, high: i32::MAX as i128 };
        assert_eq!(test_on(r#"{"n": 2147483648}"#, "n", int32.clone()), Some("2147483648".into()));
        assert_eq!(test_on(r#"{"n": 2147483647}"#, "n", int32.clone()), None);
        assert_eq!(test_on(r#"{"m": {"k": 99999999999}}"#, "m{}", int32), Some("99999999999".into()));
        assert!(test_on(r#"{"f": 0.1}"#, "f", RowTest::LosesAsFloat32).is_some());
        assert!(test_on(r#"{"f": 0.5}"#, "f", RowTest::LosesAsFloat32).is_none());
        assert_eq!(test_on(r#"{"k": ["a", 3]}"#, "k[]", RowTest::KindIn(vec![Kind::Int])), Some("3".into()));
    }

    #[test]
    fn units_count_the_digits_a_coarser_unit_drops() {
        let nano_to_micro = RowTest::SubUnit { have: Unit::Nano, want: Unit::Micro };
        assert!(hits(&Leaf::Value(&Value::Int(1_000_001)), &nano_to_micro));
        assert!(!hits(&Leaf::Value(&Value::Int(-2_000)), &nano_to_micro));
        assert!(hits(&Leaf::Value(&Value::Str("2024-01-01T00:00:00.123456789Z".into())), &nano_to_micro));
        assert!(!hits(&Leaf::Value(&Value::Str("2024-01-01T00:00:00.123456Z".into())), &nano_to_micro));
    }

    #[test]
    fn decimal_digits_fixed_and_floating() {
        let fixed = DecimalRule::Fixed { whole: 7, scale: 2 };
        assert!(fits_decimal("1234567.89", fixed));
        assert!(fits_decimal("-001.50", fixed));
        assert!(!fits_decimal("12345678", fixed));
        assert!(!fits_decimal("1.234", fixed));
        assert!(!fits_decimal("abc", fixed));
        assert!(fits_decimal("0.1234567890123456789012345678", DecimalRule::Floating { digits: 28 }));
        assert!(!fits_decimal("1.1234567890123456789012345678", DecimalRule::Floating { digits: 28 }));
    }

    use crate::types::model::Unit;
}
