//! Rust structs with serde derive: `Option` for optional fields, `Vec`,
//! `HashMap`, `chrono` for dates and instants, `rust_decimal` for decimals.
//! Field identifiers are `snake_case`; where that differs from the data's
//! name, `#[serde(rename = "…")]` keeps the name exact.

use std::fmt::Write as _;

use super::model::{Field, Model, Scalar, Slot, Ty};
use super::naming::{self, Reserved, Scope};
use super::{Generated, Header, MixedChoice, TypeOptions, kinds_label};

/// Keywords from The Rust Reference, "Keywords" (strict, reserved and
/// edition 2024's `gen`): none can be a plain identifier.
pub const KEYWORDS: Reserved = Reserved(&[
    "as", "async", "await", "break", "const", "continue", "crate", "dyn", "else", "enum", "extern", "false", "fn", "for",
    "if", "impl", "in", "let", "loop", "match", "mod", "move", "mut", "pub", "ref", "return", "self", "Self", "static",
    "struct", "super", "trait", "true", "type", "unsafe", "use", "where", "while", "abstract", "become", "box", "do",
    "final", "macro", "override", "priv", "try", "typeof", "unsized", "virtual", "yield", "gen",
]);

/// Keywords that cannot be raw identifiers (`r#self` is refused).
const NOT_RAW: [&str; 4] = ["crate", "self", "super", "Self"];

/// Names the generated file uses or the prelude holds: records get a suffix instead.
const TAKEN_TYPE_NAMES: Reserved = Reserved(&[
    "Self", "Option", "Some", "None", "Result", "Ok", "Err", "Vec", "String", "Box", "HashMap", "Deserialize", "Serialize",
    "Value",
]);

pub fn render(mut model: Model, header: &Header, options: &TypeOptions) -> Generated {
    naming::name_records(&mut model, &options.root, &TAKEN_TYPE_NAMES);
    let mut type_names = Scope::default();
    for record in &model.records {
        type_names.unique(&record.name, "");
    }
    let mut r = Renderer { model: &model, options, out: String::new(), warnings: Vec::new(), enums: String::new(), type_names };
    for line in &header.lines {
        let _ = writeln!(r.out, "// {line}");
    }
    r.out.push_str(
        "//\n// Needs: serde (derive), serde_json, chrono (serde), rust_decimal (serde).\n\
         // Optional fields are `Option`.\n\n\
         use serde::{Deserialize, Serialize};\n",
    );
    for record in &model.records {
        r.record(record);
    }
    let mut code = r.out;
    code.push_str(&r.enums);
    Generated { code, warnings: r.warnings }
}

struct Renderer<'a> {
    model: &'a Model,
    options: &'a TypeOptions,
    out: String,
    /// Untagged enums for mixed fields, appended at the end.
    enums: String,
    warnings: Vec<String>,
    /// Record and enum names given so far.
    type_names: Scope,
}

impl Renderer<'_> {
    fn record(&mut self, record: &super::model::Record) {
        let what = record.what(true);
        let _ = write!(self.out, "\n/// {what}\n#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]\npub struct {} {{\n", record.name);
        let mut scope = Scope::default();
        for field in &record.fields {
            let path = crate::path::member(&record.path, &field.name);
            self.field(&record.name, field, &path, &mut scope);
        }
        self.out.push_str("}\n");
    }

    fn field(&mut self, record: &str, field: &Field, path: &str, scope: &mut Scope) {
        let ident = identifier(&field.name, scope);
        let ty = self.slot_type(&field.slot, path, &format!("{record}{}", naming::pascal_case(&field.name)));
        let ty = if field.optional() && !field.slot.nullable { format!("Option<{ty}>") } else { ty };
        let mut notes = Vec::new();
        if field.may_be_missing {
            notes.push("the key may be missing");
        }
        if field.slot.nullable {
            notes.push("may be null");
        }
        if !notes.is_empty() {
            let _ = writeln!(self.out, "    /// {}", notes.join("; "));
        }
        if let Some(comment) = self.comment(&field.slot.ty) {
            let _ = writeln!(self.out, "    /// {comment}");
        }
        if unraw(&ident) != field.name {
            let _ = writeln!(self.out, "    #[serde(rename = {})]", string_literal(&field.name));
        }
        let _ = writeln!(self.out, "    pub {ident}: {ty},");
    }

    /// Why a type is what it is, where the choice is not obvious.
    fn comment(&self, ty: &Ty) -> Option<String> {
        match ty {
            Ty::Any { why } => Some(format!("any JSON value: {why}")),
            Ty::Mixed(kinds, _) => Some(match self.options.mixed {
                MixedChoice::Widest => format!("mixed kinds ({}): serde_json::Value accepts each", kinds_label(kinds)),
                MixedChoice::Union => format!("mixed kinds ({}): an untagged enum, one variant per kind", kinds_label(kinds)),
            }),
            Ty::Scalar(Scalar::Instant { zone: Some(zone), .. }) if !zone.eq_ignore_ascii_case("utc") && zone != "+00:00" => {
                Some(format!("declared zone {zone}; held as the same instant in UTC"))
            }
            Ty::Scalar(Scalar::Duration { unit }) => Some(format!("a duration in {}", unit.label())),
            Ty::Scalar(Scalar::Time { unit }) => Some(format!("time of day ({})", unit.label())),
            _ => None,
        }
    }

    /// The Rust type of a slot; `Option<…>` when it may be null.
    fn slot_type(&mut self, slot: &Slot, path: &str, enum_name: &str) -> String {
        let inner = self.ty(&slot.ty, path, enum_name);
        if slot.nullable { format!("Option<{inner}>") } else { inner }
    }

    fn ty(&mut self, ty: &Ty, path: &str, enum_name: &str) -> String {
        match ty {
            Ty::Scalar(s) => self.scalar(s, path),
            Ty::List(element) => format!("Vec<{}>", self.slot_type(element, &crate::path::element(path), &format!("{enum_name}Item"))),
            Ty::Map { key, value } => format!(
                "std::collections::HashMap<{}, {}>",
                self.slot_type(key, &crate::path::map_key(path), &format!("{enum_name}Key")),
                self.slot_type(value, &crate::path::map_value(path), &format!("{enum_name}Value"))
            ),
            Ty::Record(i) => self.model.records[*i].name.clone(),
            Ty::Any { .. } => "serde_json::Value".into(),
            Ty::Mixed(kinds, variants) => match self.options.mixed {
                MixedChoice::Widest => "serde_json::Value".into(),
                MixedChoice::Union => self.untagged_enum(enum_name, kinds, variants, path),
            },
        }
    }

    fn untagged_enum(&mut self, wanted: &str, kinds: &[(crate::shape::Kind, u64)], variants: &[Slot], path: &str) -> String {
        let name = &self.type_names.unique(wanted, "");
        let mut body = String::new();
        let mut scope = Scope::default();
        // Serde tries variants in order: integers before floats, so a whole
        // number stays an integer.
        for ((kind, _), slot) in kinds.iter().zip(variants) {
            let variant = scope.unique(&naming::pascal_case(kind.name()), "");
            let ty = self.slot_type(slot, path, &format!("{name}{variant}"));
            let _ = writeln!(body, "    {variant}({ty}),");
        }
        let _ = write!(
            self.enums,
            "\n/// `{path}`: values of several kinds ({}).\n#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]\n#[serde(untagged)]\npub enum {name} {{\n{body}}}\n",
            kinds_label(kinds)
        );
        name.to_string()
    }

    fn scalar(&mut self, s: &Scalar, path: &str) -> String {
        match s {
            Scalar::Bool => "bool".into(),
            Scalar::Int { bits, signed } => format!("{}{bits}", if *signed { "i" } else { "u" }),
            Scalar::Float { bits: 16 | 32 } => "f32".into(),
            Scalar::Float { .. } => "f64".into(),
            Scalar::Decimal { precision, .. } if *precision > 28 => {
                self.warnings.push(format!(
                    "{path}: decimal with {precision} digits is wider than rust_decimal's 28; typed as serde_json::Value"
                ));
                "serde_json::Value".into()
            }
            Scalar::Decimal { .. } => "rust_decimal::Decimal".into(),
            Scalar::String => "String".into(),
            Scalar::Binary => "Vec<u8>".into(),
            Scalar::Date => "chrono::NaiveDate".into(),
            Scalar::Time { .. } => "chrono::NaiveTime".into(),
            Scalar::Instant { .. } => "chrono::DateTime<chrono::Utc>".into(),
            Scalar::LocalDateTime { .. } => "chrono::NaiveDateTime".into(),
            Scalar::Duration { .. } => "i64".into(),
        }
    }
}

/// A field identifier for `name`, unique in its struct: `snake_case`,
/// keywords as raw identifiers (or with a trailing `_` where Rust forbids
/// that), `field` when nothing of the name is ASCII.
fn identifier(name: &str, scope: &mut Scope) -> String {
    let base = naming::snake_case(name).unwrap_or_else(|| "field".into());
    let base = if NOT_RAW.contains(&base.as_str()) {
        format!("{base}_")
    } else if KEYWORDS.contains(&base) {
        format!("r#{base}")
    } else {
        base
    };
    scope.unique(&base, "_")
}

/// Serde strips `r#` from raw identifiers.
fn unraw(ident: &str) -> &str {
    ident.strip_prefix("r#").unwrap_or(ident)
}

/// A Rust string literal of `s` (escapes per the Reference's string rules).
fn string_literal(s: &str) -> String {
    format!("{s:?}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn identifiers_are_snake_case_keywords_raw_and_unique() {
        let mut scope = Scope::default();
        assert_eq!(identifier("deliveryId", &mut scope), "delivery_id");
        assert_eq!(identifier("type", &mut scope), "r#type");
        assert_eq!(identifier("self", &mut scope), "self_");
        assert_eq!(identifier("delivery id", &mut scope), "delivery_id_2");
        assert_eq!(identifier("日本", &mut scope), "field");
        assert_eq!(unraw("r#type"), "type");
    }
}
