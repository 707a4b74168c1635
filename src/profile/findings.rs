//! Findings: plain-language notes on a field's quality, each with the
//! values behind it. The thresholds are common practice, not a standard;
//! they all live here.

use serde::Serialize;

use crate::shape::{FieldShape, Kind, Unified};

/// Nulls and missing at or above this share: "mostly empty".
pub const MOSTLY_EMPTY: f64 = 0.5;
/// Rows needed before "unique per row" suggests a key.
pub const UNIQUE_MIN_ROWS: u64 = 1000;
/// Share of strings that parse as numbers for "numbers stored as text".
pub const NUMBERS_AS_TEXT: f64 = 0.95;
/// Share of non-null values a placeholder must exceed to be reported.
pub const PLACEHOLDER_SHARE: f64 = 0.01;
/// Tukey's fences, k = 3 ("far out"; Tukey, Exploratory Data Analysis, 1977).
pub const TUKEY_K: f64 = 3.0;
/// Share of non-null values for "dominant value".
pub const DOMINANT: f64 = 0.9;
/// Values that commonly stand in for "unknown".
pub const PLACEHOLDERS: [&str; 10] = ["", "N/A", "null", "none", "-", "?", "-1", "0", "9999", "1970-01-01"];
/// Examples kept per finding.
const EXAMPLES: usize = 5;

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    pub kind: &'static str,
    pub message: String,
    /// The values (or value groups) behind it.
    pub examples: Vec<String>,
    /// Which rows show it, for a row view to narrow to (not in the report:
    /// the examples say the same for people).
    #[serde(skip)]
    pub behind: Behind,
}

/// The rows a finding is about, as far as the profile can say.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum Behind {
    /// Not a set of rows (e.g. "a candidate key" is about all of them).
    #[default]
    Nothing,
    /// These rows (0-based, read order).
    Rows(Vec<u64>),
    /// The rows where the field holds one of these values (as top values write them).
    Values(Vec<String>),
    /// The rows where the field is null or missing.
    Empty,
    /// The rows where the field's number lies outside `[low, high]`.
    Outside { low: f64, high: f64 },
    /// The rows where the field's instant lies in `[start, end)` (epoch seconds).
    During { start: i64, end: i64 },
}

/// How much a finding matters to someone about to write a pipeline.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// Likely to break a typed read or a join (mixed kinds, numbers as text).
    Attention,
    /// A quality question worth checking by eye.
    Check,
    /// Worth knowing (a candidate key, a constant column).
    Note,
}

impl Severity {
    pub fn of(kind: &str) -> Severity {
        match kind {
            "mixed_kinds" | "numbers_as_text" | "case_variants" => Severity::Attention,
            "unique_per_row" | "single_value" | "dominant_value" => Severity::Note,
            _ => Severity::Check,
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            Severity::Attention => "attention",
            Severity::Check => "check",
            Severity::Note => "note",
        }
    }
}

impl Finding {
    pub fn severity(&self) -> Severity {
        Severity::of(self.kind)
    }
}

fn percent(part: u64, whole: u64) -> String {
    format!("{:.1} %", part as f64 * 100.0 / whole.max(1) as f64)
}

/// Every finding for one field.
pub fn findings(field: &FieldShape) -> Vec<Finding> {
    let mut out = Vec::new();
    let present = field.present();
    let empty = field.nulls() + field.missing;
    if field.count > 0 && empty as f64 >= MOSTLY_EMPTY * field.count as f64 {
        out.push(Finding {
            kind: "mostly_empty",
            message: format!(
                "{} of places are null or missing ({} null, {} missing)",
                percent(empty, field.count),
                field.nulls(),
                field.missing
            ),
            examples: Vec::new(),
            behind: Behind::Empty,
        });
    }
    if field.kinds.unified() == Unified::Mixed {
        out.push(Finding {
            kind: "mixed_kinds",
            message: format!("values of more than one kind: {}", crate::shape::observed_label(&field.kinds)),
            examples: field
                .minority_examples()
                .iter()
                .map(|(k, e)| format!("{} ({}): {}", e.place(), k.name(), e.value))
                .collect(),
            behind: Behind::Rows(field.minority_examples().iter().filter_map(|(_, e)| e.row).collect()),
        });
    }
    let strings = field.kinds.get(Kind::String);
    let numeric_text = field.kinds.forms.integer + field.kinds.forms.decimal;
    if strings > 0 && numeric_text as f64 >= NUMBERS_AS_TEXT * strings as f64 {
        out.push(Finding {
            kind: "numbers_as_text",
            message: format!("{} of the text values read as numbers", percent(numeric_text, strings)),
            examples: Vec::new(),
            behind: Behind::Nothing,
        });
    }
    let Some(stats) = field.stats.as_deref() else { return out };
    if let Some(distinct) = stats.distinct_count() {
        if distinct.value == 1 && distinct.exact {
            let only: Vec<String> = stats.top.top(1).into_iter().map(|t| t.value).collect();
            let behind = Behind::Values(only.clone());
            out.push(Finding {
                kind: "single_value",
                message: "every non-null value is the same".into(),
                examples: only,
                behind,
            });
        }
        let unique = if distinct.exact {
            distinct.value == present
        } else {
            (distinct.value as f64 - present as f64).abs() <= 3.0 * distinct.standard_error * present as f64
        };
        // Distinct floats are the norm, not a key.
        let key_like = field.kinds.unified() != Unified::One(Kind::Float);
        if unique && key_like && present >= UNIQUE_MIN_ROWS && distinct.value > 1 {
            let about = if distinct.exact { "" } else { "about " };
            out.push(Finding {
                kind: "unique_per_row",
                message: format!(
                    "{about}every non-null value is different ({} values): a candidate key",
                    distinct.value
                ),
                examples: Vec::new(),
                behind: Behind::Nothing,
            });
        }
    }
    if stats.top.is_exact() {
        case_variants(stats, &mut out);
    }
    if let Some(text) = &stats.text
        && text.padded > 0
    {
        // The most frequent first (ties by value), so the examples do not
        // depend on the order values were counted in.
        let mut padded: Vec<(String, u64)> =
            stats.top.entries().filter(|(v, _)| v.trim() != *v && !v.is_empty()).collect();
        padded.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
        let padded: Vec<String> = padded.into_iter().take(EXAMPLES).map(|(v, _)| v).collect();
        out.push(Finding {
            kind: "padded_text",
            message: format!("{} values have leading or trailing whitespace", text.padded),
            examples: padded.iter().map(|v| format!("{v:?}")).collect(),
            behind: Behind::Values(padded),
        });
    }
    if let Some(instants) = &stats.instants
        && instants.future > 0
    {
        out.push(Finding {
            kind: "instants_in_the_future",
            message: format!(
                "{} instants lie after this profile started (latest {})",
                instants.future,
                crate::time::rfc3339_from_unix(instants.max)
            ),
            examples: vec![crate::time::rfc3339_from_unix(instants.max)],
            behind: Behind::During {
                start: crate::profile::field::profile_started() + 1,
                end: instants.max.saturating_add(1),
            },
        });
    }
    placeholders(stats, present, &mut out);
    far_outliers(stats, &mut out);
    if let Some(top) = stats.top.top(1).first()
        && present > 1
        && top.count as f64 >= DOMINANT * present as f64
        && stats.distinct_count().is_some_and(|d| d.value > 1)
    {
        out.push(Finding {
            kind: "dominant_value",
            message: format!("one value makes up {} of non-null values", percent(top.count, present)),
            examples: vec![top.value.clone()],
            behind: Behind::Values(vec![top.value.clone()]),
        });
    }
    out
}

fn case_variants(stats: &crate::profile::field::FieldStats, out: &mut Vec<Finding>) {
    let mut groups: std::collections::BTreeMap<String, Vec<(String, u64)>> = std::collections::BTreeMap::new();
    for (value, count) in stats.top.entries() {
        if value.chars().any(char::is_alphabetic) {
            groups.entry(value.to_lowercase()).or_default().push((value.to_string(), count));
        }
    }
    let mut shown_values = Vec::new();
    let variants: Vec<String> = groups
        .values_mut()
        .filter(|g| g.len() > 1)
        .map(|g| {
            g.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
            g.iter().map(|(v, c)| format!("{v} ({c})")).collect::<Vec<_>>().join(" / ")
        })
        .collect();
    for g in groups.values().filter(|g| g.len() > 1).take(EXAMPLES) {
        shown_values.extend(g.iter().map(|(v, _)| v.clone()));
    }
    if !variants.is_empty() {
        out.push(Finding {
            kind: "case_variants",
            message: format!("{} values differ only in letter case", variants.len()),
            examples: variants.into_iter().take(EXAMPLES).collect(),
            behind: Behind::Values(shown_values),
        });
    }
}

fn placeholders(stats: &crate::profile::field::FieldStats, present: u64, out: &mut Vec<Finding>) {
    let mut found = Vec::new();
    for (value, count) in stats.top.entries() {
        let lower = value.to_lowercase();
        let is_placeholder =
            PLACEHOLDERS.iter().any(|p| p.eq_ignore_ascii_case(&lower)) || value.starts_with("1970-01-01");
        if is_placeholder && count as f64 > PLACEHOLDER_SHARE * present as f64 {
            found.push((value.to_string(), count));
        }
    }
    if found.is_empty() {
        return;
    }
    found.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
    out.push(Finding {
        kind: "placeholder_values",
        message: format!(
            "values that usually stand for \"unknown\": {}",
            found.iter().map(|(v, c)| format!("{v:?} in {}", percent(*c, present))).collect::<Vec<_>>().join(", ")
        ),
        examples: found.iter().map(|(v, _)| v.clone()).collect(),
        behind: Behind::Values(found.into_iter().map(|(v, _)| v).collect()),
    });
}

fn far_outliers(stats: &crate::profile::field::FieldStats, out: &mut Vec<Finding>) {
    let Some(numbers) = stats.numbers.as_ref() else { return };
    let Some((q1, q3, below, above)) = numbers.outside_fences(TUKEY_K) else { return };
    if below + above == 0 {
        return;
    }
    let iqr = q3 - q1;
    let (lo, hi) = (q1 - TUKEY_K * iqr, q3 + TUKEY_K * iqr);
    let exact = numbers.quantiles().is_some_and(|q| q.exact);
    let examples = [numbers.moments.min(), numbers.moments.max()]
        .into_iter()
        .flatten()
        .filter(|v| *v < lo || *v > hi)
        .map(|v| v.to_string())
        .collect();
    out.push(Finding {
        kind: "far_outliers",
        message: format!(
            "{}{} values lie outside Tukey's far fences [{lo}, {hi}] (quartiles ∓ 3 × IQR){}",
            if exact { "" } else { "about " },
            below + above,
            if exact { "" } else { ", counted from the sketch (at least one, shown)" }
        ),
        examples,
        behind: Behind::Outside { low: lo, high: hi },
    });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shape::ShapeBuilder;
    use crate::source::Batch;
    use crate::value::Value;

    fn shape_of(values: Vec<Value>) -> crate::shape::Shape {
        let rows = values.into_iter().map(|v| Value::Object(vec![("f".into(), v)])).collect();
        let mut b = ShapeBuilder::empty(true);
        b.add(&Batch::Rows(rows)).unwrap();
        b.finish()
    }

    fn kinds(values: Vec<Value>) -> Vec<&'static str> {
        let shape = shape_of(values);
        findings(shape.find("f").unwrap()).iter().map(|f| f.kind).collect()
    }

    #[test]
    fn mostly_empty_starts_at_half() {
        let half = vec![Value::Null, Value::Int(1), Value::Null, Value::Int(2)];
        assert!(kinds(half).contains(&"mostly_empty"));
        let less = vec![Value::Null, Value::Int(1), Value::Int(3), Value::Int(2)];
        assert!(!kinds(less).contains(&"mostly_empty"));
    }

    #[test]
    fn placeholders_must_exceed_one_percent() {
        let mut values: Vec<Value> = (1..=200).map(|i| Value::Str(format!("v{i}"))).collect();
        values.push(Value::Str("N/A".into()));
        values.push(Value::Str("N/A".into()));
        assert!(!kinds(values.clone()).contains(&"placeholder_values"), "2 of 202 is under 1 %… just");
        values.push(Value::Str("N/A".into()));
        assert!(kinds(values).contains(&"placeholder_values"));
    }

    #[test]
    fn dominant_needs_ninety_percent_and_a_second_value() {
        let mut values = vec![Value::Str("a".into()); 9];
        values.push(Value::Str("b".into()));
        assert!(kinds(values).contains(&"dominant_value"));
        let mut values = vec![Value::Str("a".into()); 8];
        values.extend([Value::Str("b".into()), Value::Str("c".into())]);
        assert!(!kinds(values).contains(&"dominant_value"));
        assert!(!kinds(vec![Value::Str("a".into()); 10]).contains(&"dominant_value"), "that is a single value");
    }

    #[test]
    fn tukey_far_fences_use_k_three() {
        // 0..=99 and one value x above them: q1 = 25, q3 = 75 (type 7 over
        // 101 values), IQR 50, so the upper far fence is 75 + 3 × 50 = 225.
        let with = |x: f64| {
            let mut values: Vec<Value> = (0..100).map(|i| Value::Float(i as f64)).collect();
            values.push(Value::Float(x));
            kinds(values)
        };
        assert!(!with(225.0).contains(&"far_outliers"), "on the fence is inside");
        assert!(with(226.0).contains(&"far_outliers"));
    }
}
