//! TypeScript interfaces for rows as parsed from JSON: `?` where a key may
//! be missing, `| null` where a value may be null (they differ, and strict
//! mode holds code to the difference). Names that are not identifiers are
//! quoted property names, exact as in the data.

use std::fmt::Write as _;

use super::model::{Model, Scalar, Slot, Ty};
use super::naming::{self, Reserved};
use super::{Generated, Header, MixedChoice, TypeOptions, kinds_label};

/// Global types of the ECMAScript and TypeScript standard library that an
/// interface must not shadow.
const TAKEN_TYPE_NAMES: Reserved = Reserved(&[
    "Array", "Boolean", "Date", "Error", "Function", "JSON", "Map", "Math", "Number", "Object", "Partial", "Promise",
    "Record", "RegExp", "Set", "String", "Symbol", "Readonly", "Required", "Pick", "Omit",
]);

pub fn render(mut model: Model, header: &Header, options: &TypeOptions) -> Generated {
    naming::name_records(&mut model, &options.root, &TAKEN_TYPE_NAMES);
    let mut out = String::new();
    for line in &header.lines {
        let _ = writeln!(out, "// {line}");
    }
    out.push_str("//\n// `?`: the key may be missing. `| null`: the value may be null.\n");
    let mut warnings = Vec::new();
    for record in &model.records {
        let what = record.what(true);
        let _ = write!(out, "\n/** {what} */\nexport interface {} {{\n", record.name);
        for field in &record.fields {
            let path = crate::path::member(&record.path, &field.name);
            if let Some(note) = comment(&field.slot.ty, options) {
                let _ = writeln!(out, "  /** {note} */");
            }
            let key = property_name(&field.name);
            let mark = if field.may_be_missing { "?" } else { "" };
            let _ = writeln!(out, "  {key}{mark}: {};", slot_type(&model, &field.slot, options, &path, &mut warnings));
        }
        out.push_str("}\n");
    }
    Generated { code: out, warnings }
}

/// A bare identifier when it is one (reserved words are valid property
/// names), otherwise a quoted string.
fn property_name(name: &str) -> String {
    let mut chars = name.chars();
    let bare = chars.next().is_some_and(|c| c.is_ascii_alphabetic() || c == '_' || c == '$')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '$');
    if bare { name.to_string() } else { serde_json::to_string(name).expect("strings serialise") }
}

fn comment(ty: &Ty, options: &TypeOptions) -> Option<String> {
    match ty {
        Ty::Any { why } => Some(format!("any value: {why}")),
        Ty::Mixed(kinds, _) => Some(match options.mixed {
            MixedChoice::Widest => format!("mixed kinds ({}): unknown", kinds_label(kinds)),
            MixedChoice::Union => format!("mixed kinds ({}): one type per kind", kinds_label(kinds)),
        }),
        Ty::Scalar(Scalar::Instant { .. } | Scalar::LocalDateTime { .. } | Scalar::Date) => Some("ISO 8601 text".into()),
        Ty::Scalar(Scalar::Decimal { precision, scale }) => Some(format!("decimal({precision}, {scale}): a number or its text")),
        Ty::Scalar(Scalar::Binary) => Some("base64 text".into()),
        Ty::Scalar(Scalar::Duration { unit }) => Some(format!("a duration in {}", unit.label())),
        _ => None,
    }
}

fn slot_type(model: &Model, slot: &Slot, options: &TypeOptions, path: &str, warnings: &mut Vec<String>) -> String {
    let inner = ty(model, &slot.ty, options, path, warnings);
    if slot.nullable { format!("{inner} | null") } else { inner }
}

fn ty(model: &Model, ty: &Ty, options: &TypeOptions, path: &str, warnings: &mut Vec<String>) -> String {
    match ty {
        Ty::Scalar(s) => match s {
            Scalar::Bool => "boolean",
            Scalar::Int { .. } | Scalar::Float { .. } | Scalar::Duration { .. } => "number",
            Scalar::Decimal { .. } => "number | string",
            _ => "string",
        }
        .to_string(),
        Ty::List(e) => {
            let element = slot_type(model, e, options, &crate::path::element(path), warnings);
            if element.contains(' ') { format!("({element})[]") } else { format!("{element}[]") }
        }
        Ty::Map { key, value } => {
            if !matches!(key.ty, Ty::Scalar(Scalar::String)) {
                warnings.push(format!("{path}: JSON object keys are text; the map's keys are typed as string"));
            }
            format!("Record<string, {}>", slot_type(model, value, options, &crate::path::map_value(path), warnings))
        }
        Ty::Record(i) => model.records[*i].name.clone(),
        Ty::Any { .. } => "unknown".into(),
        Ty::Mixed(_, variants) => match options.mixed {
            MixedChoice::Widest => "unknown".into(),
            MixedChoice::Union => {
                let mut parts: Vec<String> = variants.iter().map(|v| slot_type(model, v, options, path, warnings)).collect();
                parts.dedup();
                parts.join(" | ")
            }
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn property_names_are_bare_or_quoted() {
        assert_eq!(property_name("delivery_id"), "delivery_id");
        assert_eq!(property_name("class"), "class");
        assert_eq!(property_name("$ref"), "$ref");
        assert_eq!(property_name("zip code"), "\"zip code\"");
        assert_eq!(property_name("3d"), "\"3d\"");
        assert_eq!(property_name(""), "\"\"");
    }
}
