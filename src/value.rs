//! A row value from a schema-less format (JSON, JSON Lines, CSV).
//!
//! Kept deliberately close to what was written in the file: integers that do
//! not fit 64 bits stay as their digits, objects keep key order, so the Shape
//! can report exactly what it saw instead of what a lossy parse left behind.

use std::fmt::Write as _;

#[derive(Debug, Clone, PartialEq)]
pub enum Value {
    Null,
    Bool(bool),
    Int(i64),
    /// A non-negative integer above `i64::MAX` that fits `u64`.
    UInt(u64),
    /// An integer literal wider than 64 bits, kept as written.
    BigInt(Box<str>),
    Float(f64),
    Str(String),
    Array(Vec<Value>),
    /// Members in file order; duplicate keys are resolved at parse time
    /// (the last one wins), so each key appears once.
    Object(Vec<(String, Value)>),
}

impl Value {
    /// Compact JSON text of the value, cut to about `max_chars` characters
    /// (with an ellipsis) so examples stay readable.
    pub fn to_display(&self, max_chars: usize) -> String {
        let mut out = String::new();
        self.write_json(&mut out, max_chars.saturating_mul(4).max(16));
        truncate_chars(out, max_chars)
    }

    fn write_json(&self, out: &mut String, budget: usize) {
        if out.len() > budget {
            return;
        }
        match self {
            Value::Null => out.push_str("null"),
            Value::Bool(b) => out.push_str(if *b { "true" } else { "false" }),
            Value::Int(i) => {
                let _ = write!(out, "{i}");
            }
            Value::UInt(u) => {
                let _ = write!(out, "{u}");
            }
            Value::BigInt(s) => out.push_str(s),
            Value::Float(f) => write_float(out, *f),
            Value::Str(s) => write_json_string(out, s),
            Value::Array(items) => {
                out.push('[');
                for (i, item) in items.iter().enumerate() {
                    if i > 0 {
                        out.push(',');
                    }
                    item.write_json(out, budget);
                    if out.len() > budget {
                        break;
                    }
                }
                out.push(']');
            }
            Value::Object(members) => {
                out.push('{');
                for (i, (k, v)) in members.iter().enumerate() {
                    if i > 0 {
                        out.push(',');
                    }
                    write_json_string(out, k);
                    out.push(':');
                    v.write_json(out, budget);
                    if out.len() > budget {
                        break;
                    }
                }
                out.push('}');
            }
        }
    }
}

fn write_float(out: &mut String, f: f64) {
    if f.is_finite() {
        let _ = write!(out, "{f:?}");
    } else if f.is_nan() {
        out.push_str("NaN");
    } else if f > 0.0 {
        out.push_str("Infinity");
    } else {
        out.push_str("-Infinity");
    }
}

pub fn write_json_string(out: &mut String, s: &str) {
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if (c as u32) < 0x20 => {
                let _ = write!(out, "\\u{:04x}", c as u32);
            }
            c => out.push(c),
        }
    }
    out.push('"');
}

/// Cuts `s` to at most `max_chars` characters, marking the cut with `…`.
pub fn truncate_chars(mut s: String, max_chars: usize) -> String {
    // No more bytes than allowed characters: nothing to cut.
    if s.len() <= max_chars {
        return s;
    }
    if let Some((idx, _)) = s.char_indices().nth(max_chars) {
        s.truncate(idx);
        s.push('…');
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_is_compact_json_and_truncated() {
        let v = Value::Object(vec![
            ("a".into(), Value::Int(1)),
            ("b".into(), Value::Str("x\"y".into())),
            ("c".into(), Value::Array(vec![Value::Null, Value::Float(1.5)])),
        ]);
        assert_eq!(v.to_display(100), r#"{"a":1,"b":"x\"y","c":[null,1.5]}"#);
        assert_eq!(v.to_display(5), "{\"a\":…");
    }

    #[test]
    fn non_finite_floats_are_named() {
        assert_eq!(Value::Float(f64::INFINITY).to_display(20), "Infinity");
        assert_eq!(Value::Float(f64::NAN).to_display(20), "NaN");
    }
}
