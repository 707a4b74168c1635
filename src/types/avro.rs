//! Apache Avro schema (JSON), per the Avro 1.12 specification: records,
//! unions with "null" for optional fields (default null), arrays, maps and
//! logical types for decimals, dates, times and timestamps. Avro names must
//! match `[A-Za-z_][A-Za-z0-9_]*`: a data name that does not is written in a
//! valid form, reported as a warning, and kept exact in the field's
//! `data_name` attribute (Avro keeps unknown attributes).

use std::collections::HashSet;

use serde_json::{Map, Value, json};

use super::model::{Model, Scalar, Slot, Ty, Unit};
use super::naming::{self, Reserved, Scope};
use super::{Generated, Header, TypeOptions};

/// Avro's primitive type names, which a named type must not take.
const TAKEN_TYPE_NAMES: Reserved = Reserved(&["Null", "Boolean", "Int", "Long", "Float", "Double", "Bytes", "String"]);

pub const NAMESPACE: &str = "plumbline.generated";

pub fn render(mut model: Model, header: &Header, options: &TypeOptions) -> Generated {
    naming::name_records(&mut model, &options.root, &TAKEN_TYPE_NAMES);
    let mut r = Renderer { model: &model, defined: HashSet::new(), warnings: Vec::new() };
    let last = model.records.len() - 1;
    let mut schema = r.record(last);
    if let Some(o) = schema.as_object_mut() {
        o.insert("doc".into(), json!(header.lines.join(" ")));
    }
    let mut code = serde_json::to_string_pretty(&schema).expect("a schema serialises");
    code.push('\n');
    Generated { code, warnings: r.warnings }
}

struct Renderer<'a> {
    model: &'a Model,
    /// Named types already written out (later uses refer to them by name).
    defined: HashSet<usize>,
    warnings: Vec<String>,
}

impl Renderer<'_> {
    fn record(&mut self, index: usize) -> Value {
        let record = &self.model.records[index];
        if !self.defined.insert(index) {
            return json!(format!("{NAMESPACE}.{}", record.name));
        }
        let mut scope = Scope::default();
        let mut fields = Vec::new();
        for field in &record.fields {
            let path = crate::path::member(&record.path, &field.name);
            let mut entry = Map::new();
            let name = if naming::is_ascii_identifier(&field.name) {
                scope.unique(&field.name, "_")
            } else {
                let valid = scope.unique(&avro_name(&field.name), "_");
                self.warnings.push(format!(
                    "{path}: Avro names must match [A-Za-z_][A-Za-z0-9_]*; written as `{valid}`, the data name kept in `data_name`"
                ));
                entry.insert("data_name".into(), json!(field.name));
                valid
            };
            entry.insert("name".into(), json!(name));
            let ty = self.slot(&field.slot, &path);
            if field.optional() {
                entry.insert("type".into(), with_null(ty));
                entry.insert("default".into(), Value::Null);
            } else {
                entry.insert("type".into(), ty);
            }
            fields.push(Value::Object(entry));
        }
        let what = record.what(false);
        json!({"type": "record", "name": record.name, "namespace": NAMESPACE, "doc": what, "fields": fields})
    }

    fn slot(&mut self, slot: &Slot, path: &str) -> Value {
        let ty = self.ty(&slot.ty, path);
        if slot.nullable { with_null(ty) } else { ty }
    }

    fn ty(&mut self, ty: &Ty, path: &str) -> Value {
        match ty {
            Ty::Scalar(s) => self.scalar(s, path),
            Ty::List(e) => json!({"type": "array", "items": self.slot(e, &crate::path::element(path))}),
            Ty::Map { key, value } => {
                if !matches!(key.ty, Ty::Scalar(Scalar::String)) {
                    self.warnings.push(format!("{}: Avro map keys are strings; these keys are written as text", crate::path::map_key(path)));
                }
                json!({"type": "map", "values": self.slot(value, &crate::path::map_value(path))})
            }
            Ty::Record(i) => self.record(*i),
            Ty::Any { why } if why.starts_with("no non-null") => json!("null"),
            Ty::Any { why } => {
                self.warnings.push(format!("{path}: {why}: no Avro type holds any value; written as string"));
                json!("string")
            }
            // A union of the kinds seen (Avro's own way to say "one of").
            Ty::Mixed(_, variants) => {
                let mut members: Vec<Value> = Vec::new();
                for v in variants {
                    for member in flatten(self.slot(v, path)) {
                        if !members.contains(&member) {
                            members.push(member);
                        }
                    }
                }
                Value::Array(members)
            }
        }
    }

    fn scalar(&mut self, s: &Scalar, path: &str) -> Value {
        let logical = |base: &str, name: &str| json!({"type": base, "logicalType": name});
        match s {
            Scalar::Bool => json!("boolean"),
            Scalar::Int { bits: 8 | 16, .. } | Scalar::Int { bits: 32, signed: true } => json!("int"),
            Scalar::Int { bits: 32, signed: false } | Scalar::Int { bits: 64, signed: true } => json!("long"),
            Scalar::Int { .. } => {
                self.warnings.push(format!("{path}: unsigned 64-bit integers do not fit a long; written as decimal(20, 0)"));
                json!({"type": "bytes", "logicalType": "decimal", "precision": 20, "scale": 0})
            }
            Scalar::Float { bits: 16 | 32 } => json!("float"),
            Scalar::Float { .. } => json!("double"),
            Scalar::Decimal { precision, scale } if *scale < 0 => {
                self.warnings.push(format!("{path}: decimal({precision}, {scale}) has a negative scale, which Avro lacks; written as string"));
                json!("string")
            }
            Scalar::Decimal { precision, scale } => {
                json!({"type": "bytes", "logicalType": "decimal", "precision": precision, "scale": scale})
            }
            Scalar::String => json!("string"),
            Scalar::Binary => json!("bytes"),
            Scalar::Date => logical("int", "date"),
            Scalar::Time { unit: Unit::Second | Unit::Milli } => logical("int", "time-millis"),
            Scalar::Time { .. } => logical("long", "time-micros"),
            Scalar::Instant { unit: Unit::Second | Unit::Milli, .. } => logical("long", "timestamp-millis"),
            Scalar::Instant { unit: Unit::Micro, .. } => logical("long", "timestamp-micros"),
            Scalar::Instant { unit: Unit::Nano, .. } => logical("long", "timestamp-nanos"),
            Scalar::LocalDateTime { unit: Unit::Second | Unit::Milli } => logical("long", "local-timestamp-millis"),
            Scalar::LocalDateTime { unit: Unit::Micro } => logical("long", "local-timestamp-micros"),
            Scalar::LocalDateTime { unit: Unit::Nano } => logical("long", "local-timestamp-nanos"),
            Scalar::Duration { unit } => json!({"type": "long", "doc": format!("a duration in {}", unit.label())}),
        }
    }
}

/// `T` → `["null", T]`; a union gains "null" first (unions cannot nest).
fn with_null(ty: Value) -> Value {
    let mut members = flatten(ty);
    members.retain(|m| m != &json!("null"));
    members.insert(0, json!("null"));
    Value::Array(members)
}

fn flatten(ty: Value) -> Vec<Value> {
    match ty {
        Value::Array(members) => members,
        other => vec![other],
    }
}

/// A valid Avro name for `name`: `snake_case`, prefixed when it would start with a digit.
fn avro_name(name: &str) -> String {
    match naming::snake_case(name) {
        Some(s) if s.starts_with('_') && s[1..].starts_with(|c: char| c.is_ascii_digit()) => format!("f{s}"),
        Some(s) => s,
        None => "field".into(),
    }
}
