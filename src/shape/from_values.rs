//! Observing rows of values (JSON, CSV) into the field tree, one value at a
//! time, keeping a missing key apart from an explicit null.

use super::{EXAMPLE_CHARS, FieldShape, Kind, Role};
use crate::profile::hash;
use crate::profile::top::Kept;
use crate::value::{Value, truncate_chars};

pub fn observe_rows(root: &mut FieldShape, rows: &[Value], first_row: u64) {
    for (i, row) in rows.iter().enumerate() {
        let row_number = first_row + i as u64;
        match row {
            Value::Object(members) => observe_members(root, members, row_number),
            // Readers wrap non-objects; keep any stray value visible anyway.
            other => observe_value(root.child_mut(crate::source::json::VALUE_FIELD, Role::Member), other, row_number),
        }
    }
}

fn observe_members(node: &mut FieldShape, members: &[(String, Value)], row: u64) {
    for (i, (key, value)) in members.iter().enumerate() {
        observe_value(node.member_mut_hinted(key, i), value, row);
    }
}

fn observe_int(node: &mut FieldShape, v: i128) {
    node.kinds.add_int(v);
    if let Some(stats) = node.stats.as_deref_mut() {
        stats.add_number(v as f64);
        stats.add_scalar(hash::int(v), || Kept::Int(v));
    }
}

pub fn observe_value(node: &mut FieldShape, value: &Value, row: u64) {
    node.appeared += 1;
    node.seen_at(row);
    let kind = match value {
        Value::Null => {
            node.kinds.add(Kind::Null, 1);
            return;
        }
        Value::Bool(b) => {
            node.kinds.add(Kind::Bool, 1);
            if let Some(stats) = node.stats.as_deref_mut() {
                stats.add_scalar(hash::bool(*b), || Kept::Text(b.to_string()));
            }
            Kind::Bool
        }
        Value::Int(i) => {
            observe_int(node, *i as i128);
            Kind::Int
        }
        Value::UInt(u) => {
            observe_int(node, *u as i128);
            Kind::Int
        }
        Value::BigInt(digits) => {
            node.kinds.add(Kind::Decimal, 1);
            if let Some(stats) = node.stats.as_deref_mut() {
                stats.add_number(digits.parse::<f64>().unwrap_or(f64::NAN));
                stats.add_scalar(hash::other(digits.as_bytes()), || Kept::Text(digits.to_string()));
            }
            Kind::Decimal
        }
        Value::Float(f) => {
            node.kinds.add(Kind::Float, 1);
            if let Some(stats) = node.stats.as_deref_mut() {
                stats.add_number(*f);
                if !f.is_nan() {
                    stats.add_scalar(hash::float(*f), || Kept::Float(*f));
                }
            }
            Kind::Float
        }
        Value::Str(s) => {
            node.kinds.add(Kind::String, 1);
            let form = node.kinds.forms.observe(s);
            if let Some(stats) = node.stats.as_deref_mut() {
                stats.add_scalar(hash::string(s), || Kept::Text(s.clone()));
                stats.add_text(s, form);
            }
            Kind::String
        }
        Value::Array(items) => {
            node.kinds.add(Kind::Array, 1);
            if let Some(stats) = node.stats.as_deref_mut() {
                stats.add_list_length(items.len());
            }
            if !items.is_empty() {
                let element = node.child_mut("[]", Role::Element);
                for item in items {
                    observe_value(element, item, row);
                }
            }
            Kind::Array
        }
        Value::Object(members) => {
            node.kinds.add(Kind::Object, 1);
            observe_members(node, members, row);
            Kind::Object
        }
    };
    // Only the first few of each kind are kept; skip the lookup after that.
    if node.kinds.get(kind) > super::EXAMPLES_PER_KIND as u64 {
        return;
    }
    node.note_example(kind, row, || match value {
        Value::Str(s) => truncate_chars(s.clone(), EXAMPLE_CHARS),
        other => other.to_display(EXAMPLE_CHARS),
    });
}
