//! Protocol Buffers, proto3: one message per record, `optional` for
//! optional scalars (presence), `repeated`, `map<>`, and the well-known
//! `google.protobuf.Timestamp` and `google.protobuf.Value`. Field names
//! must be identifiers; where the data's name is not, `json_name` keeps the
//! exact name for the JSON mapping.

use std::fmt::Write as _;

use super::model::{Field, Model, Scalar, Slot, Ty};
use super::naming::{self, Reserved, Scope};
use super::{Generated, Header, MixedChoice, TypeOptions, kinds_label};

/// Keywords of the Protocol Buffers Version 3 Language Specification
/// (protobuf.dev, "Language Specification"): kept out of field names.
pub const KEYWORDS: Reserved = Reserved(&[
    "syntax", "import", "weak", "public", "package", "option", "repeated", "optional", "oneof", "map", "reserved", "to",
    "max", "enum", "message", "service", "rpc", "stream", "returns", "int32", "int64", "uint32", "uint64", "sint32",
    "sint64", "fixed32", "fixed64", "sfixed32", "sfixed64", "bool", "string", "bytes", "float", "double", "true", "false",
    "inf", "nan",
]);

const TAKEN_TYPE_NAMES: Reserved = Reserved(&["Timestamp", "Value", "Duration", "Struct", "ListValue"]);

pub fn render(mut model: Model, header: &Header, options: &TypeOptions) -> Generated {
    naming::name_records(&mut model, &options.root, &TAKEN_TYPE_NAMES);
    let mut r = Renderer { model: &model, options, warnings: Vec::new(), wrappers: String::new(), names: Scope::default() };
    for record in &model.records {
        r.names.unique(&record.name, "");
    }
    let mut body = String::new();
    for record in &model.records {
        r.message(record, &mut body);
    }
    let mut out = String::new();
    for line in &header.lines {
        let _ = writeln!(out, "// {line}");
    }
    out.push_str("//\n// Optional scalars are `optional` (messages always have presence).\n\n");
    out.push_str("syntax = \"proto3\";\n\npackage plumbline.generated;\n\n");
    // Import only what is used (protoc warns about the rest).
    for (used, file) in [("google.protobuf.Value", "struct"), ("google.protobuf.Timestamp", "timestamp")] {
        if body.contains(used) || r.wrappers.contains(used) {
            let _ = writeln!(out, "import \"google/protobuf/{file}.proto\";");
        }
    }
    out.push_str(&body);
    out.push_str(&r.wrappers);
    Generated { code: out, warnings: r.warnings }
}

struct Renderer<'a> {
    model: &'a Model,
    options: &'a TypeOptions,
    warnings: Vec<String>,
    /// Messages wrapping a list inside a list or a map (proto3 has no nested `repeated`).
    wrappers: String,
    names: Scope,
}

impl Renderer<'_> {
    fn message(&mut self, record: &super::model::Record, out: &mut String) {
        let what = record.what(true);
        let _ = write!(out, "\n// {what}\nmessage {} {{\n", record.name);
        let mut scope = Scope::default();
        let mut number = 1u32;
        for field in &record.fields {
            let path = crate::path::member(&record.path, &field.name);
            self.field(field, &path, &mut scope, &mut number, out);
        }
        out.push_str("}\n");
    }

    fn field(&mut self, field: &Field, path: &str, scope: &mut Scope, number: &mut u32, out: &mut String) {
        let name = identifier(&field.name, scope);
        let json_name = if name != field.name { format!(" [json_name = {}]", quoted(&field.name)) } else { String::new() };
        let note = match &field.slot.ty {
            Ty::Mixed(kinds, _) => format!("  // mixed kinds ({})\n", kinds_label(kinds)),
            Ty::Any { why } => format!("  // any value: {why}\n"),
            Ty::Scalar(Scalar::Decimal { precision, scale }) => format!("  // decimal({precision}, {scale}) as its text\n"),
            Ty::Scalar(Scalar::Date) => "  // a date as ISO 8601 text\n".into(),
            Ty::Scalar(Scalar::LocalDateTime { .. }) => "  // a date-time without zone as ISO 8601 text\n".into(),
            Ty::Scalar(Scalar::Time { unit }) => format!("  // time of day, a count of {}\n", unit.label()),
            Ty::Scalar(Scalar::Duration { unit }) => format!("  // a duration in {}\n", unit.label()),
            _ => String::new(),
        };
        out.push_str(&note);
        if let (Ty::Mixed(kinds, variants), MixedChoice::Union) = (&field.slot.ty, self.options.mixed)
            && variants.iter().all(|v| matches!(v.ty, Ty::Scalar(_) | Ty::Record(_)))
        {
            let _ = writeln!(out, "  oneof {name} {{");
            for ((kind, _), variant) in kinds.iter().zip(variants) {
                let ty = self.element_type(&variant.ty, path);
                let _ = writeln!(out, "    {ty} {name}_{} = {};", kind.name(), next(number));
            }
            out.push_str("  }\n");
            return;
        }
        let (label, ty) = match &field.slot.ty {
            Ty::List(element) => ("repeated ", self.list_element(element, path)),
            Ty::Map { key, value } => ("", self.map(key, value, path)),
            other => {
                let ty = self.element_type(other, path);
                let has_presence = matches!(other, Ty::Record(_) | Ty::Any { .. } | Ty::Mixed(..)) || ty.starts_with("google.");
                (if field.optional() && !has_presence { "optional " } else { "" }, ty)
            }
        };
        if matches!(field.slot.ty, Ty::List(_) | Ty::Map { .. }) && field.slot.nullable {
            let _ = writeln!(out, "  // may be null: read as empty");
        }
        let _ = writeln!(out, "  {label}{ty} {name} = {}{json_name};", next(number));
    }

    fn list_element(&mut self, element: &Slot, path: &str) -> String {
        let path = crate::path::element(path);
        if element.nullable && !matches!(element.ty, Ty::Any { .. } | Ty::Mixed(..)) {
            self.warnings.push(format!("{path}: a repeated field cannot hold nulls; they are read as the default value"));
        }
        match &element.ty {
            // `repeated` cannot nest: the inner list or map gets a message.
            Ty::List(_) | Ty::Map { .. } => self.wrapper(element, &path),
            other => self.element_type(other, &path),
        }
    }

    fn map(&mut self, key: &Slot, value: &Slot, path: &str) -> String {
        let key_ty = match &key.ty {
            Ty::Scalar(Scalar::String) => "string".to_string(),
            Ty::Scalar(Scalar::Int { bits: 64, signed: true }) => "int64".into(),
            Ty::Scalar(Scalar::Int { signed: true, .. }) => "int32".into(),
            Ty::Scalar(Scalar::Int { bits: 64, signed: false }) => "uint64".into(),
            Ty::Scalar(Scalar::Int { signed: false, .. }) => "uint32".into(),
            Ty::Scalar(Scalar::Bool) => "bool".into(),
            _ => {
                self.warnings.push(format!("{}: map keys must be integers, booleans or text; typed as string", crate::path::map_key(path)));
                "string".into()
            }
        };
        let value_path = crate::path::map_value(path);
        if value.nullable && !matches!(value.ty, Ty::Any { .. } | Ty::Mixed(..)) {
            self.warnings.push(format!("{value_path}: a map value cannot be null; nulls are read as the default value"));
        }
        let value_ty = match &value.ty {
            Ty::List(_) | Ty::Map { .. } => self.wrapper(value, &value_path),
            other => self.element_type(other, &value_path),
        };
        format!("map<{key_ty}, {value_ty}>")
    }

    /// A message holding one repeated or map field, for nesting proto3 lacks.
    fn wrapper(&mut self, slot: &Slot, path: &str) -> String {
        let name = self.names.unique(&naming::pascal_case(path), "");
        let (label, ty) = match &slot.ty {
            Ty::List(inner) => ("repeated ", self.list_element(inner, path)),
            Ty::Map { key, value } => ("", self.map(key, value, path)),
            _ => unreachable!("wrappers hold lists and maps"),
        };
        let _ = write!(self.wrappers, "\n// `{path}`: a list or map inside a list or map.\nmessage {name} {{\n  {label}{ty} values = 1;\n}}\n");
        name
    }

    fn element_type(&mut self, ty: &Ty, path: &str) -> String {
        match ty {
            Ty::Scalar(s) => Self::scalar(s).to_string(),
            Ty::Record(i) => self.model.records[*i].name.clone(),
            Ty::Any { .. } | Ty::Mixed(..) => "google.protobuf.Value".into(),
            Ty::List(_) | Ty::Map { .. } => {
                let slot = Slot { ty: ty.clone(), nullable: false };
                self.wrapper(&slot, path)
            }
        }
    }

    fn scalar(s: &Scalar) -> &'static str {
        match s {
            Scalar::Bool => "bool",
            Scalar::Int { bits: 64, signed: true } => "int64",
            Scalar::Int { signed: true, .. } => "int32",
            Scalar::Int { bits: 64, signed: false } => "uint64",
            Scalar::Int { signed: false, .. } => "uint32",
            Scalar::Float { bits: 16 | 32 } => "float",
            Scalar::Float { .. } => "double",
            Scalar::Decimal { .. } | Scalar::String | Scalar::Date | Scalar::LocalDateTime { .. } => "string",
            Scalar::Binary => "bytes",
            Scalar::Instant { .. } => "google.protobuf.Timestamp",
            Scalar::Time { .. } | Scalar::Duration { .. } => "int64",
        }
    }
}

fn next(number: &mut u32) -> u32 {
    let n = *number;
    // 19000–19999 are reserved for the protobuf implementation.
    *number = if n + 1 == 19_000 { 20_000 } else { n + 1 };
    n
}

/// A field name: `snake_case` of the data name, keywords with a trailing `_`.
fn identifier(name: &str, scope: &mut Scope) -> String {
    let base = naming::snake_case(name).unwrap_or_else(|| "field".into());
    let base = base.trim_start_matches('_');
    let base = if base.is_empty() || base.starts_with(|c: char| c.is_ascii_digit()) { format!("f_{base}") } else { base.to_string() };
    let base = if KEYWORDS.contains(&base) { format!("{base}_") } else { base };
    scope.unique(&base, "_")
}

/// A protobuf string literal (C-style escapes; JSON's are a subset).
fn quoted(s: &str) -> String {
    serde_json::to_string(s).expect("strings serialise")
}
