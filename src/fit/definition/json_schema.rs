//! JSON Schema, the draft 2020-12 subset record definitions use: `type`
//! (one or a list with "null"), `properties`, `required`, `items`,
//! `additionalProperties` (a map when there are no properties), `$defs` /
//! `definitions` with `$ref`, `anyOf`/`oneOf` with a null branch, `format`
//! for dates and instants, integer bounds for the width. An unbounded
//! "integer" is read as 64-bit. Errors point at the schema's own line.

use std::collections::HashMap;

use serde_json::Value;

use super::DefinitionError;
use super::order::{self, Read};
use crate::types::model::{Field, Model, Record, Scalar, Slot, Ty, Unit};

pub fn read(text: &str, root: Option<&str>) -> Result<Model, DefinitionError> {
    let schema: Value = serde_json::from_str(text).map_err(|e| DefinitionError::at(e.line(), e.column(), e.to_string()))?;
    let mut r = Reader { schema: &schema, places: places(text), records: Vec::new(), by_ref: HashMap::new(), resolving: Vec::new() };
    let (start, pointer) = match root {
        None => (&schema, String::new()),
        Some(name) => {
            let pointer = ["$defs", "definitions"]
                .iter()
                .map(|d| format!("/{d}/{}", escape(name)))
                .find(|p| schema.pointer(p).is_some())
                .ok_or_else(|| DefinitionError::at(1, 1, format!("no schema named {name} under $defs")))?;
            (schema.pointer(&pointer).expect("found above"), pointer)
        }
    };
    let slot = r.slot(start, &pointer)?;
    let Ty::Record(root) = slot.ty else {
        return Err(r.error(&pointer, "the root schema must describe an object with properties"));
    };
    order::model(r.records, root)
}

/// A JSON Pointer token for a name (RFC 6901).
fn escape(name: &str) -> String {
    name.replace('~', "~0").replace('/', "~1")
}

struct Reader<'a> {
    schema: &'a Value,
    places: HashMap<String, (usize, usize)>,
    records: Vec<Read>,
    /// Records already made for a `$ref` target, by pointer.
    by_ref: HashMap<String, usize>,
    /// The `$ref` targets being read, to refuse a schema that holds itself.
    resolving: Vec<String>,
}

impl<'a> Reader<'a> {
    fn error(&self, pointer: &str, message: &str) -> DefinitionError {
        let (line, column) = self.places.get(pointer).copied().unwrap_or((1, 1));
        DefinitionError::at(line, column, format!("{message} (at {})", if pointer.is_empty() { "/" } else { pointer }))
    }

    fn slot(&mut self, schema: &'a Value, at: &str) -> Result<Slot, DefinitionError> {
        let object = match schema {
            Value::Bool(true) => return Ok(Slot { ty: Ty::Any { why: "the schema `true`".into() }, nullable: true }),
            Value::Object(o) => o,
            _ => return Err(self.error(at, "expected a schema object")),
        };
        if let Some(reference) = object.get("$ref") {
            return self.reference(reference, at);
        }
        for combinator in ["anyOf", "oneOf"] {
            if let Some(branches) = object.get(combinator) {
                return self.branches(branches, &format!("{at}/{combinator}"));
            }
        }
        let types: Vec<&str> = match object.get("type") {
            None => Vec::new(),
            Some(Value::String(t)) => vec![t.as_str()],
            Some(Value::Array(list)) => list.iter().map(|t| t.as_str().ok_or_else(|| self.error(&format!("{at}/type"), "expected type names"))).collect::<Result<_, _>>()?,
            Some(_) => return Err(self.error(&format!("{at}/type"), "expected a type name or a list of them")),
        };
        let nullable = types.contains(&"null");
        let mut kinds: Vec<&str> = types.into_iter().filter(|t| *t != "null").collect();
        // A number that may also be an integer is a number.
        if kinds.contains(&"number") {
            kinds.retain(|t| *t != "integer");
        }
        match kinds.as_slice() {
            [] if nullable => Ok(Slot { ty: Ty::Any { why: "only null".into() }, nullable: true }),
            [] if object.contains_key("properties") => Ok(Slot { ty: self.object(object, at)?, nullable }),
            [] => Ok(Slot { ty: Ty::Any { why: "no type given".into() }, nullable: true }),
            [one] => Ok(Slot { ty: self.typed(one, object, at)?, nullable }),
            several => {
                let variants = several.iter().map(|k| self.typed(k, object, at).map(|ty| Slot { ty, nullable: false })).collect::<Result<_, _>>()?;
                Ok(Slot { ty: Ty::Mixed(Vec::new(), variants), nullable })
            }
        }
    }

    fn reference(&mut self, reference: &'a Value, at: &str) -> Result<Slot, DefinitionError> {
        let at = format!("{at}/$ref");
        let pointer = reference
            .as_str()
            .and_then(|r| r.strip_prefix('#'))
            .ok_or_else(|| self.error(&at, "only references inside this schema (`#/…`) are read"))?;
        if let Some(&i) = self.by_ref.get(pointer) {
            return Ok(Slot { ty: Ty::Record(i), nullable: false });
        }
        let target = self.schema.pointer(pointer).ok_or_else(|| self.error(&at, &format!("nothing at {pointer}")))?;
        if self.resolving.iter().any(|p| p == pointer) {
            return Err(self.error(&at, &format!("{pointer} contains itself; a columnar schema cannot hold a recursive type")));
        }
        self.resolving.push(pointer.to_string());
        let slot = self.slot(target, pointer)?;
        self.resolving.pop();
        if let Ty::Record(i) = slot.ty {
            self.by_ref.insert(pointer.to_string(), i);
        }
        Ok(slot)
    }

    /// `anyOf`/`oneOf`: a null branch makes the rest nullable; one branch
    /// left is that type, several are a field of several kinds.
    fn branches(&mut self, branches: &'a Value, at: &str) -> Result<Slot, DefinitionError> {
        let list = branches.as_array().ok_or_else(|| self.error(at, "expected a list of schemas"))?;
        let mut nullable = false;
        let mut variants = Vec::new();
        for (i, branch) in list.iter().enumerate() {
            if branch.get("type").and_then(Value::as_str) == Some("null") {
                nullable = true;
            } else {
                let slot = self.slot(branch, &format!("{at}/{i}"))?;
                nullable |= slot.nullable;
                variants.push(Slot { nullable: false, ..slot });
            }
        }
        match variants.len() {
            0 => Ok(Slot { ty: Ty::Any { why: "only null".into() }, nullable: true }),
            1 => Ok(Slot { nullable, ..variants.remove(0) }),
            _ => Ok(Slot { ty: Ty::Mixed(Vec::new(), variants), nullable }),
        }
    }

    fn typed(&mut self, kind: &str, object: &'a serde_json::Map<String, Value>, at: &str) -> Result<Ty, DefinitionError> {
        let scalar = |s| Ok(Ty::Scalar(s));
        match kind {
            "boolean" => scalar(Scalar::Bool),
            "integer" => scalar(integer(object.get("minimum"), object.get("maximum"))),
            "number" => scalar(Scalar::Float { bits: 64 }),
            "string" => scalar(match object.get("format").and_then(Value::as_str) {
                Some("date-time") => Scalar::Instant { unit: Unit::Nano, zone: None },
                Some("date") => Scalar::Date,
                Some("time") => Scalar::Time { unit: Unit::Nano },
                _ if object.get("contentEncoding").and_then(Value::as_str) == Some("base64") => Scalar::Binary,
                _ => Scalar::String,
            }),
            "array" => {
                let element = match object.get("items") {
                    Some(items) => self.slot(items, &format!("{at}/items"))?,
                    None => Slot { ty: Ty::Any { why: "no items schema".into() }, nullable: true },
                };
                Ok(Ty::List(Box::new(element)))
            }
            "object" => self.object(object, at),
            other => Err(self.error(&format!("{at}/type"), &format!("`{other}` is not a JSON Schema type"))),
        }
    }

    /// An object with properties is a record; without, a map of its
    /// `additionalProperties`.
    fn object(&mut self, object: &'a serde_json::Map<String, Value>, at: &str) -> Result<Ty, DefinitionError> {
        let Some(properties) = object.get("properties") else {
            let value = match object.get("additionalProperties") {
                Some(Value::Bool(false)) => return Err(self.error(at, "an object with no properties that allows none")),
                Some(s @ Value::Object(_)) => self.slot(s, &format!("{at}/additionalProperties"))?,
                _ => Slot { ty: Ty::Any { why: "any value".into() }, nullable: true },
            };
            let key = Slot { ty: Ty::Scalar(Scalar::String), nullable: false };
            return Ok(Ty::Map { key: Box::new(key), value: Box::new(value) });
        };
        let properties = properties.as_object().ok_or_else(|| self.error(&format!("{at}/properties"), "expected an object of schemas"))?;
        let required: Vec<&str> = match object.get("required") {
            None => Vec::new(),
            Some(Value::Array(names)) => names.iter().filter_map(Value::as_str).collect(),
            Some(_) => return Err(self.error(&format!("{at}/required"), "expected a list of names")),
        };
        let mut fields = Vec::new();
        for (name, schema) in properties {
            let slot = self.slot(schema, &format!("{at}/properties/{}", escape(name)))?;
            fields.push(Field { name: name.clone(), slot, may_be_missing: !required.contains(&name.as_str()) });
        }
        let (line, column) = self.places.get(at).copied().unwrap_or((1, 1));
        let name = object.get("title").and_then(Value::as_str).map_or_else(|| format!("object{}", self.records.len() + 1), str::to_string);
        self.records.push(Read { record: Record { name, path: String::new(), fields }, line, column });
        Ok(Ty::Record(self.records.len() - 1))
    }
}

/// The integer type whose range the bounds give; 64-bit signed when they
/// give none or another range.
fn integer(minimum: Option<&Value>, maximum: Option<&Value>) -> Scalar {
    let bound = |v: Option<&Value>| v.and_then(|v| v.as_i64().map(i128::from).or_else(|| v.as_u64().map(i128::from)));
    let (lo, hi) = (bound(minimum), bound(maximum));
    for bits in [8u8, 16, 32, 64] {
        let signed = (-(1i128 << (bits - 1)), (1i128 << (bits - 1)) - 1);
        let unsigned = (0, (1i128 << bits) - 1);
        if (lo, hi) == (Some(signed.0), Some(signed.1)) {
            return Scalar::Int { bits, signed: true };
        }
        if (lo, hi) == (Some(unsigned.0), Some(unsigned.1)) {
            return Scalar::Int { bits, signed: false };
        }
    }
    Scalar::Int { bits: 64, signed: true }
}

/// Where each value of a valid JSON text starts, by JSON Pointer.
fn places(text: &str) -> HashMap<String, (usize, usize)> {
    let mut out = HashMap::new();
    let mut s = Scanner { chars: text.chars().collect(), at: 0, line: 1, column: 1 };
    s.value(String::new(), &mut out);
    out
}

struct Scanner {
    chars: Vec<char>,
    at: usize,
    line: usize,
    column: usize,
}

impl Scanner {
    fn bump(&mut self) -> Option<char> {
        let c = *self.chars.get(self.at)?;
        self.at += 1;
        if c == '\n' {
            self.line += 1;
            self.column = 1;
        } else {
            self.column += 1;
        }
        Some(c)
    }

    fn blank(&mut self) {
        while self.chars.get(self.at).is_some_and(|c| c.is_whitespace()) {
            self.bump();
        }
    }

    fn string(&mut self) -> String {
        let mut out = String::new();
        self.bump();
        while let Some(c) = self.bump() {
            match c {
                '"' => break,
                '\\' => {
                    if let Some(e) = self.bump() {
                        out.push(match e {
                            'n' => '\n',
                            't' => '\t',
                            other => other,
                        });
                    }
                }
                c => out.push(c),
            }
        }
        out
    }

    fn value(&mut self, pointer: String, out: &mut HashMap<String, (usize, usize)>) {
        self.blank();
        out.insert(pointer.clone(), (self.line, self.column));
        match self.chars.get(self.at) {
            Some('{') => {
                self.bump();
                loop {
                    self.blank();
                    match self.chars.get(self.at) {
                        Some('"') => {
                            let key = self.string();
                            self.blank();
                            self.bump(); // ':'
                            self.value(format!("{pointer}/{}", escape(&key)), out);
                        }
                        Some(',') => {
                            self.bump();
                        }
                        _ => {
                            self.bump();
                            return;
                        }
                    }
                }
            }
            Some('[') => {
                self.bump();
                let mut i = 0;
                loop {
                    self.blank();
                    match self.chars.get(self.at) {
                        Some(']') | None => {
                            self.bump();
                            return;
                        }
                        Some(',') => {
                            self.bump();
                        }
                        _ => {
                            self.value(format!("{pointer}/{i}"), out);
                            i += 1;
                        }
                    }
                }
            }
            Some('"') => {
                self.string();
            }
            _ => {
                while self.chars.get(self.at).is_some_and(|c| !matches!(c, ',' | '}' | ']') && !c.is_whitespace()) {
                    self.bump();
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const SCHEMA: &str = r##"{
  "$schema": "https://json-schema.org/draft/2020-12/schema",
  "type": "object",
  "properties": {
    "id": {"type": "integer", "minimum": -2147483648, "maximum": 2147483647},
    "pickup": {"$ref": "#/$defs/Place"},
    "tags": {"type": ["array", "null"], "items": {"type": "string"}},
    "fees": {"type": "object", "additionalProperties": {"type": "number"}},
    "at": {"anyOf": [{"type": "string", "format": "date-time"}, {"type": "null"}]},
    "weight": {"type": ["number", "string"]}
  },
  "required": ["id", "pickup"],
  "$defs": {
    "Place": {"type": "object", "properties": {"zone": {"type": "string"}}, "required": ["zone"]}
  }
}"##;

    #[test]
    fn properties_references_unions_and_maps() {
        let m = read(SCHEMA, None).unwrap();
        let root = m.root();
        let names: Vec<&str> = root.fields.iter().map(|f| f.name.as_str()).collect();
        assert_eq!(names, ["id", "pickup", "tags", "fees", "at", "weight"]);
        assert_eq!(root.fields[0].slot, Slot { ty: Ty::Scalar(Scalar::Int { bits: 32, signed: true }), nullable: false });
        assert!(!root.fields[0].may_be_missing && root.fields[2].may_be_missing);
        let Ty::Record(place) = root.fields[1].slot.ty else { panic!("a record") };
        assert_eq!(m.records[place].fields[0].name, "zone");
        assert!(root.fields[2].slot.nullable);
        assert!(matches!(root.fields[3].slot.ty, Ty::Map { .. }));
        assert_eq!(root.fields[4].slot, Slot { ty: Ty::Scalar(Scalar::Instant { unit: Unit::Nano, zone: None }), nullable: true });
        assert!(matches!(&root.fields[5].slot.ty, Ty::Mixed(_, v) if v.len() == 2));
        assert_eq!(read(SCHEMA, Some("Place")).unwrap().root().fields.len(), 1);
    }

    #[test]
    fn errors_name_the_line_and_column() {
        let e = read("{\"type\": \"object\",\n \"properties\": {\"a\": {\"type\": \"widget\"}}}", None).unwrap_err();
        assert_eq!((e.line, e.column), (2, 31));
        assert!(e.message.contains("`widget` is not a JSON Schema type"), "{e}");
        let e = read("{\"type\": \"object\",,}", None).unwrap_err();
        assert_eq!(e.line, 1);
        let e = read("{\"type\": \"string\"}", None).unwrap_err();
        assert!(e.message.contains("root schema"), "{e}");
        let e = read("{\"properties\": {\"a\": {\"$ref\": \"#/$defs/Gone\"}}}", None).unwrap_err();
        assert!(e.message.contains("nothing at /$defs/Gone"), "{e}");
        let e = read(r##"{"properties": {"a": {"$ref": "#/$defs/A"}}, "$defs": {"A": {"properties": {"b": {"$ref": "#/$defs/A"}}}}}"##, None).unwrap_err();
        assert!(e.message.contains("contains itself"), "{e}");
    }

    #[test]
    fn integer_bounds_give_the_width() {
        assert_eq!(integer(Some(&0.into()), Some(&255.into())), Scalar::Int { bits: 8, signed: false });
        assert_eq!(integer(None, None), Scalar::Int { bits: 64, signed: true });
        assert_eq!(integer(Some(&0.into()), Some(&10.into())), Scalar::Int { bits: 64, signed: true });
    }
}
