//! Python dataclasses with type hints (Python 3.10+: `kw_only`), each with a
//! `from_dict` that builds an instance from one decoded JSON object,
//! converting dates, instants, decimals and nested records. A data name that
//! is not a Python identifier (or is a keyword) gets a plain attribute name;
//! `from_dict` reads the exact data name, and `DATA_NAMES` maps one to the
//! other.

use std::fmt::Write as _;

use super::model::{Field, Model, Record, Scalar, Slot, Ty};
use super::naming::{self, Reserved, Scope};
use super::{Generated, Header, MixedChoice, TypeOptions, kinds_label};

/// `keyword.kwlist` of Python 3.11 (the Python Language Reference,
/// "Keywords"). Soft keywords (`match`, `case`, `type`, `_`) are valid names.
pub const KEYWORDS: Reserved = Reserved(&[
    "False", "None", "True", "and", "as", "assert", "async", "await", "break", "class", "continue", "def", "del", "elif",
    "else", "except", "finally", "for", "from", "global", "if", "import", "in", "is", "lambda", "nonlocal", "not", "or",
    "pass", "raise", "return", "try", "while", "with", "yield",
]);

/// Attribute names the generated classes define themselves.
const OWN_NAMES: [&str; 2] = ["from_dict", "DATA_NAMES"];

/// Module-level names the generated file imports or defines.
const TAKEN_TYPE_NAMES: Reserved = Reserved(&["Any", "Optional", "Union", "ClassVar", "Decimal"]);

pub fn render(mut model: Model, header: &Header, options: &TypeOptions) -> Generated {
    naming::name_records(&mut model, &options.root, &TAKEN_TYPE_NAMES);
    let mut out = String::new();
    for line in &header.lines {
        let _ = writeln!(out, "# {line}");
    }
    out.push_str(
        "#\n# Optional fields are `Optional[...] = None`.\n\n\
         from __future__ import annotations\n\n\
         import dataclasses\nimport datetime\nimport decimal\nfrom typing import Any, ClassVar, Optional, Union\n\n\n\
         def _instant(v: str) -> datetime.datetime:\n    return datetime.datetime.fromisoformat(v)\n",
    );
    let mut warnings = Vec::new();
    for record in &model.records {
        render_record(&model, record, options, &mut out, &mut warnings);
    }
    Generated { code: out, warnings }
}

fn render_record(model: &Model, record: &Record, options: &TypeOptions, out: &mut String, warnings: &mut Vec<String>) {
    let what = record.what(true);
    let _ = write!(out, "\n\n@dataclasses.dataclass(kw_only=True)\nclass {}:\n    \"\"\"{what}\"\"\"\n\n", record.name);
    let mut scope = Scope::default();
    OWN_NAMES.iter().for_each(|n| {
        scope.unique(n, "_");
    });
    let attributes: Vec<String> = record.fields.iter().map(|f| attribute(&f.name, &mut scope)).collect();
    let renamed: Vec<(&String, &Field)> = attributes.iter().zip(&record.fields).filter(|(a, f)| **a != f.name).collect();
    let names = renamed.iter().map(|(a, f)| format!("{:?}: {}", a, py_string(&f.name))).collect::<Vec<_>>().join(", ");
    let _ = writeln!(out, "    DATA_NAMES: ClassVar[dict[str, str]] = {{{names}}}");
    for (attr, field) in attributes.iter().zip(&record.fields) {
        let path = crate::path::member(&record.path, &field.name);
        if let Some(note) = comment(&field.slot.ty, options) {
            let _ = writeln!(out, "    # {note}");
        }
        let hint = hint(model, &field.slot, options, &path, warnings);
        if field.optional() {
            let hint = if field.slot.nullable { hint } else { format!("Optional[{hint}]") };
            let _ = writeln!(out, "    {attr}: {hint} = None");
        } else {
            let _ = writeln!(out, "    {attr}: {hint}");
        }
    }
    let _ = write!(out, "\n    @classmethod\n    def from_dict(cls, d: dict[str, Any]) -> {}:\n        return cls(\n", record.name);
    for (attr, field) in attributes.iter().zip(&record.fields) {
        let read = if field.may_be_missing { format!("d.get({})", py_string(&field.name)) } else { format!("d[{}]", py_string(&field.name)) };
        let _ = writeln!(out, "            {attr}={},", convert(model, &field.slot, &read, field.optional(), 0));
    }
    out.push_str("        )\n");
}

/// An attribute name for `name`: the name itself when it is an identifier
/// and not a keyword (nor mangled by a leading `__`), else `snake_case`.
fn attribute(name: &str, scope: &mut Scope) -> String {
    let usable = naming::is_ascii_identifier(name) && !KEYWORDS.contains(name) && !name.starts_with("__");
    let base = if usable {
        name.to_string()
    } else {
        let s = naming::snake_case(name).unwrap_or_else(|| "field".into());
        let s = s.trim_start_matches('_').to_string();
        let s = if s.is_empty() || s.starts_with(|c: char| c.is_ascii_digit()) { format!("f_{s}") } else { s };
        if KEYWORDS.contains(&s) { format!("{s}_") } else { s }
    };
    scope.unique(&base, "_")
}

fn comment(ty: &Ty, options: &TypeOptions) -> Option<String> {
    match ty {
        Ty::Any { why } => Some(format!("any value: {why}")),
        Ty::Mixed(kinds, _) => Some(match options.mixed {
            MixedChoice::Widest => format!("mixed kinds ({}): Any", kinds_label(kinds)),
            MixedChoice::Union => format!("mixed kinds ({}): a Union, kept as decoded", kinds_label(kinds)),
        }),
        Ty::Scalar(Scalar::Duration { unit }) => Some(format!("a duration in {}", unit.label())),
        _ => None,
    }
}

fn hint(model: &Model, slot: &Slot, options: &TypeOptions, path: &str, warnings: &mut Vec<String>) -> String {
    let inner = match &slot.ty {
        Ty::Scalar(s) => scalar_hint(s).to_string(),
        Ty::List(e) => format!("list[{}]", hint(model, e, options, &crate::path::element(path), warnings)),
        Ty::Map { key, value } => format!(
            "dict[{}, {}]",
            hint(model, key, options, &crate::path::map_key(path), warnings),
            hint(model, value, options, &crate::path::map_value(path), warnings)
        ),
        Ty::Record(i) => model.records[*i].name.clone(),
        Ty::Any { .. } => "Any".into(),
        Ty::Mixed(_, variants) => match options.mixed {
            MixedChoice::Widest => "Any".into(),
            MixedChoice::Union => {
                let parts: Vec<String> = variants.iter().map(|v| hint(model, v, options, path, warnings)).collect();
                format!("Union[{}]", parts.join(", "))
            }
        },
    };
    if slot.nullable { format!("Optional[{inner}]") } else { inner }
}

fn scalar_hint(s: &Scalar) -> &'static str {
    match s {
        Scalar::Bool => "bool",
        Scalar::Int { .. } | Scalar::Duration { .. } => "int",
        Scalar::Float { .. } => "float",
        Scalar::Decimal { .. } => "decimal.Decimal",
        Scalar::String => "str",
        Scalar::Binary => "bytes",
        Scalar::Date => "datetime.date",
        Scalar::Time { .. } => "datetime.time",
        Scalar::Instant { .. } | Scalar::LocalDateTime { .. } => "datetime.datetime",
    }
}

/// An expression converting the decoded JSON value `read` to the slot's type.
fn convert(model: &Model, slot: &Slot, read: &str, optional: bool, depth: usize) -> String {
    let v = format!("v{depth}");
    let body = match &slot.ty {
        Ty::Scalar(Scalar::Date) => Some(format!("datetime.date.fromisoformat({v})")),
        Ty::Scalar(Scalar::Time { .. }) => Some(format!("datetime.time.fromisoformat({v})")),
        Ty::Scalar(Scalar::Instant { .. } | Scalar::LocalDateTime { .. }) => Some(format!("_instant({v})")),
        Ty::Scalar(Scalar::Decimal { .. }) => Some(format!("decimal.Decimal(str({v}))")),
        Ty::Scalar(Scalar::Float { .. }) => Some(format!("float({v})")),
        Ty::Record(i) => Some(format!("{}.from_dict({v})", model.records[*i].name)),
        Ty::List(e) => {
            let item = convert(model, e, &format!("x{depth}"), e.nullable, depth + 1);
            Some(format!("[{item} for x{depth} in {v}]"))
        }
        Ty::Map { value, .. } => {
            let item = convert(model, value, &format!("x{depth}"), value.nullable, depth + 1);
            Some(format!("{{k{depth}: {item} for k{depth}, x{depth} in {v}.items()}}"))
        }
        _ => None,
    };
    match body {
        None => read.to_string(),
        // A lambda binds the value once, so `read` is evaluated once.
        Some(body) if optional || slot.nullable => format!("(lambda {v}: None if {v} is None else {body})({read})"),
        Some(body) => format!("(lambda {v}: {body})({read})"),
    }
}

/// A Python string literal (double-quoted, JSON escapes are valid Python).
fn py_string(s: &str) -> String {
    serde_json::to_string(s).expect("strings serialise")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn attributes_keep_usable_names_and_mend_the_rest() {
        let mut scope = Scope::default();
        assert_eq!(attribute("deliveryId", &mut scope), "deliveryId");
        assert_eq!(attribute("class", &mut scope), "class_");
        assert_eq!(attribute("zip code", &mut scope), "zip_code");
        assert_eq!(attribute("1st", &mut scope), "f_1st");
        assert_eq!(attribute("__secret", &mut scope), "secret");
        assert_eq!(attribute("match", &mut scope), "match", "a soft keyword is a valid name");
    }
}
