//! JSON Schema, draft 2020-12, for rows as JSON: records are `$defs`
//! referenced by `$ref`; names stay the data's names (property keys are
//! strings). Decimals are accepted as numbers or decimal strings, binary as
//! base64 text, as JSON writers commonly encode them.

use serde_json::{Map, Value, json};

use super::model::{Model, Scalar, Slot, Ty};
use super::naming::{self, Reserved};
use super::{Generated, Header, TypeOptions, kinds_label};

pub fn render(mut model: Model, header: &Header, options: &TypeOptions) -> Generated {
    naming::name_records(&mut model, &options.root, &Reserved(&[]));
    let mut warnings = Vec::new();
    let mut defs = Map::new();
    let last = model.records.len() - 1;
    for (i, record) in model.records.iter().enumerate().take(last) {
        defs.insert(record.name.clone(), record_schema(&model, i, &mut warnings));
    }
    let mut root = record_schema(&model, last, &mut warnings);
    let object = root.as_object_mut().expect("a record schema is an object");
    let mut top = Map::new();
    top.insert("$schema".into(), json!("https://json-schema.org/draft/2020-12/schema"));
    top.insert("$comment".into(), json!(header.lines.join(" ")));
    top.insert("title".into(), json!(model.root().name));
    top.extend(std::mem::take(object));
    if !defs.is_empty() {
        top.insert("$defs".into(), Value::Object(defs));
    }
    let mut code = serde_json::to_string_pretty(&Value::Object(top)).expect("a schema serialises");
    code.push('\n');
    Generated { code, warnings }
}

fn record_schema(model: &Model, index: usize, warnings: &mut Vec<String>) -> Value {
    let record = &model.records[index];
    let mut properties = Map::new();
    let mut required = Vec::new();
    for field in &record.fields {
        let path = crate::path::member(&record.path, &field.name);
        properties.insert(field.name.clone(), slot_schema(model, &field.slot, &path, warnings));
        if !field.may_be_missing {
            required.push(json!(field.name));
        }
    }
    let what = record.what(false);
    json!({"description": what, "type": "object", "properties": properties, "required": required})
}

fn slot_schema(model: &Model, slot: &Slot, path: &str, warnings: &mut Vec<String>) -> Value {
    let schema = ty_schema(model, &slot.ty, path, warnings);
    if !slot.nullable {
        return schema;
    }
    match schema {
        // `true` accepts null already.
        Value::Bool(true) => schema,
        Value::Object(mut o) if o.len() == 1 && o.get("type").is_some_and(Value::is_string) => {
            let t = o.remove("type").expect("checked");
            json!({"type": [t, "null"]})
        }
        other => json!({"anyOf": [other, {"type": "null"}]}),
    }
}

fn ty_schema(model: &Model, ty: &Ty, path: &str, warnings: &mut Vec<String>) -> Value {
    match ty {
        Ty::Scalar(s) => scalar_schema(s),
        Ty::List(e) => json!({"type": "array", "items": slot_schema(model, e, &crate::path::element(path), warnings)}),
        Ty::Map { key, value } => {
            let values = slot_schema(model, value, &crate::path::map_value(path), warnings);
            match &key.ty {
                Ty::Scalar(Scalar::String) => json!({"type": "object", "additionalProperties": values}),
                Ty::Scalar(Scalar::Int { .. }) => {
                    warnings.push(format!("{path}: JSON object keys are text; integer map keys are written as digits"));
                    json!({"type": "object", "propertyNames": {"pattern": "^-?[0-9]+$"}, "additionalProperties": values})
                }
                _ => {
                    warnings.push(format!("{path}: JSON object keys are text; these map keys are accepted as any text"));
                    json!({"type": "object", "additionalProperties": values})
                }
            }
        }
        Ty::Record(i) => json!({"$ref": format!("#/$defs/{}", model.records[*i].name)}),
        Ty::Any { why } => json!({"$comment": format!("any value: {why}")}),
        Ty::Mixed(kinds, variants) => {
            let any_of: Vec<Value> = variants.iter().map(|v| slot_schema(model, v, path, warnings)).collect();
            json!({"$comment": format!("mixed kinds: {}", kinds_label(kinds)), "anyOf": any_of})
        }
    }
}

fn scalar_schema(s: &Scalar) -> Value {
    match s {
        Scalar::Bool => json!({"type": "boolean"}),
        Scalar::Int { bits, signed } => {
            let (min, max): (i128, i128) = if *signed {
                (-(1i128 << (bits - 1)), (1i128 << (bits - 1)) - 1)
            } else {
                (0, (1i128 << bits) - 1)
            };
            json!({"type": "integer", "minimum": int_value(min), "maximum": int_value(max)})
        }
        Scalar::Float { .. } => json!({"type": "number"}),
        Scalar::Decimal { precision, scale } => json!({
            "$comment": format!("decimal({precision}, {scale}): a number or its decimal text"),
            "anyOf": [{"type": "number"}, {"type": "string", "pattern": "^-?[0-9]+(\\.[0-9]+)?$"}]
        }),
        Scalar::String => json!({"type": "string"}),
        Scalar::Binary => json!({"type": "string", "contentEncoding": "base64"}),
        Scalar::Date => json!({"type": "string", "format": "date"}),
        Scalar::Time { .. } => json!({"type": "string", "pattern": "^[0-9]{2}:[0-9]{2}:[0-9]{2}(\\.[0-9]+)?$"}),
        Scalar::Instant { .. } => json!({"type": "string", "format": "date-time"}),
        Scalar::LocalDateTime { .. } => {
            json!({"type": "string", "pattern": "^[0-9]{4}-[0-9]{2}-[0-9]{2}[T ][0-9]{2}:[0-9]{2}:[0-9]{2}(\\.[0-9]+)?$"})
        }
        Scalar::Duration { unit } => json!({"type": "integer", "$comment": format!("a duration in {}", unit.label())}),
    }
}

fn int_value(v: i128) -> Value {
    if let Ok(i) = i64::try_from(v) {
        json!(i)
    } else if let Ok(u) = u64::try_from(v) {
        json!(u)
    } else {
        json!(v as f64)
    }
}
