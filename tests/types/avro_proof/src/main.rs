//! `plumbline-avro-proof SCHEMA ROWS`: parses SCHEMA with apache-avro,
//! converts each JSON Lines row of ROWS to an Avro value by the schema (the
//! way a JSON-to-Avro loader would: RFC 3339 text to timestamps, decimal
//! text to decimals, `data_name` for names Avro cannot spell), and encodes
//! it. Prints the rows encoded; exits 1 at the first row that fails.

use std::collections::HashMap;
use std::io::BufRead;

use apache_avro::schema::{Name, NamespaceRef, RecordField, ResolvedSchema, Schema};
use apache_avro::types::Value;
use serde_json::Value as Json;

type Names<'a> = HashMap<Name, &'a Schema>;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let text = std::fs::read_to_string(&args[1]).expect("schema file");
    let schema = Schema::parse_str(&text).unwrap_or_else(|e| fail(&format!("the schema does not parse: {e}")));
    let resolved = ResolvedSchema::try_from(&schema).unwrap_or_else(|e| fail(&format!("names do not resolve: {e}")));
    let names: Names = resolved.get_names().iter().map(|(n, s)| (n.clone(), *s)).collect();
    let rows = std::io::BufReader::new(std::fs::File::open(&args[2]).expect("rows file"));
    let mut count = 0;
    for (i, line) in rows.lines().enumerate() {
        let json: Json = serde_json::from_str(&line.unwrap()).expect("rows are JSON");
        let value = convert(&json, &schema, &names, None).unwrap_or_else(|e| fail(&format!("row {i}: {e}")));
        #[allow(deprecated)] // the one-call encoder; its replacement needs a writer set up per schema
        apache_avro::to_avro_datum(&schema, value).unwrap_or_else(|e| fail(&format!("row {i}: {e}")));
        count += 1;
    }
    println!("{count}");
}

fn fail(message: &str) -> ! {
    eprintln!("{message}");
    std::process::exit(1)
}

fn convert(json: &Json, schema: &Schema, names: &Names, namespace: NamespaceRef) -> Result<Value, String> {
    let wrong = || format!("{json} is not {schema:?}");
    Ok(match schema {
        Schema::Null if json.is_null() => Value::Null,
        Schema::Boolean => Value::Boolean(json.as_bool().ok_or_else(wrong)?),
        Schema::Int => Value::Int(json.as_i64().and_then(|i| i32::try_from(i).ok()).ok_or_else(wrong)?),
        Schema::Long => Value::Long(json.as_i64().ok_or_else(wrong)?),
        Schema::Float => Value::Float(json.as_f64().ok_or_else(wrong)? as f32),
        Schema::Double => Value::Double(json.as_f64().ok_or_else(wrong)?),
        Schema::String => Value::String(json.as_str().ok_or_else(wrong)?.to_string()),
        Schema::Bytes => Value::Bytes(json.as_str().ok_or_else(wrong)?.as_bytes().to_vec()),
        Schema::Date => {
            let d = chrono::NaiveDate::parse_from_str(json.as_str().ok_or_else(wrong)?, "%Y-%m-%d").map_err(|e| e.to_string())?;
            Value::Date((d - chrono::NaiveDate::from_ymd_opt(1970, 1, 1).unwrap()).num_days() as i32)
        }
        Schema::TimestampMillis | Schema::TimestampMicros | Schema::TimestampNanos => {
            let t = chrono::DateTime::parse_from_rfc3339(json.as_str().ok_or_else(wrong)?).map_err(|e| e.to_string())?;
            match schema {
                Schema::TimestampMillis => Value::TimestampMillis(t.timestamp_millis()),
                Schema::TimestampMicros => Value::TimestampMicros(t.timestamp_micros()),
                _ => Value::TimestampNanos(t.timestamp_nanos_opt().ok_or_else(wrong)?),
            }
        }
        Schema::LocalTimestampMillis | Schema::LocalTimestampMicros | Schema::LocalTimestampNanos => {
            let text = json.as_str().ok_or_else(wrong)?;
            let t = chrono::NaiveDateTime::parse_from_str(text, "%Y-%m-%dT%H:%M:%S%.f").map_err(|e| e.to_string())?.and_utc();
            match schema {
                Schema::LocalTimestampMillis => Value::LocalTimestampMillis(t.timestamp_millis()),
                Schema::LocalTimestampMicros => Value::LocalTimestampMicros(t.timestamp_micros()),
                _ => Value::LocalTimestampNanos(t.timestamp_nanos_opt().ok_or_else(wrong)?),
            }
        }
        Schema::Decimal(d) => {
            let text = match json {
                Json::String(s) => s.clone(),
                Json::Number(n) => n.to_string(),
                _ => return Err(wrong()),
            };
            Value::Decimal(unscaled(&text, d.scale).ok_or_else(wrong)?.into())
        }
        Schema::Array(a) => Value::Array(
            json.as_array().ok_or_else(wrong)?.iter().map(|v| convert(v, &a.items, names, namespace)).collect::<Result<_, _>>()?,
        ),
        Schema::Map(m) => Value::Map(
            json.as_object()
                .ok_or_else(wrong)?
                .iter()
                .map(|(k, v)| Ok((k.clone(), convert(v, &m.types, names, namespace)?)))
                .collect::<Result<_, String>>()?,
        ),
        Schema::Union(u) => {
            let mut last = wrong();
            for (i, variant) in u.variants().iter().enumerate() {
                match convert(json, variant, names, namespace) {
                    Ok(v) => return Ok(Value::Union(i as u32, Box::new(v))),
                    Err(e) => last = e,
                }
            }
            return Err(last);
        }
        Schema::Record(r) => {
            let object = json.as_object().ok_or_else(wrong)?;
            let fields = r.fields.iter().map(|f| field(object, f, names, r.name.namespace())).collect::<Result<_, _>>()?;
            Value::Record(fields)
        }
        Schema::Ref { name } => {
            let full = name.fully_qualified_name(namespace);
            let target = names.get(full.as_ref()).ok_or_else(|| format!("unknown name {full:?}"))?;
            convert(json, target, names, namespace)?
        }
        _ => return Err(wrong()),
    })
}

fn field(object: &serde_json::Map<String, Json>, f: &RecordField, names: &Names, ns: NamespaceRef) -> Result<(String, Value), String> {
    let key = f.custom_attributes.get("data_name").and_then(Json::as_str).unwrap_or(&f.name);
    let json = object.get(key).cloned().unwrap_or(Json::Null);
    Ok((f.name.clone(), convert(&json, &f.schema, names, ns).map_err(|e| format!("{key}: {e}"))?))
}

/// Two's-complement big-endian bytes of `text` × 10^scale (exact, or None).
fn unscaled(text: &str, scale: usize) -> Option<Vec<u8>> {
    let (whole, fraction) = text.split_once('.').unwrap_or((text, ""));
    if fraction.len() > scale {
        return None;
    }
    let digits = format!("{whole}{fraction}{}", "0".repeat(scale - fraction.len()));
    let n: i128 = digits.parse().ok()?;
    Some(n.to_be_bytes().to_vec())
}
