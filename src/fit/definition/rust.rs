//! Rust structs with serde attributes, parsed with `syn`: `Option`, `Vec`,
//! maps, `Box`, the primitives, `chrono` and `time` types, `rust_decimal`,
//! `serde_json::Value`; container `rename_all` and `default`, field `rename`,
//! `default` and `skip`. A `#[serde(untagged)]` enum of one-value variants
//! is a field of several kinds; an enum of unit variants is text.
//! `chrono` instants hold nanoseconds; `rust_decimal` floats its scale.

use std::collections::HashMap;

use syn::spanned::Spanned;

use super::DefinitionError;
use super::order::{self, Read};
use crate::types::model::{Field, Model, Record, Scalar, Slot, Ty, Unit};

/// `rust_decimal::Decimal`: 28 significant digits, the scale set per value.
pub const FLOATING_DECIMAL: Scalar = Scalar::Decimal { precision: 28, scale: 28 };

pub fn read(text: &str, root: Option<&str>) -> Result<Model, DefinitionError> {
    let file = syn::parse_file(text).map_err(|e| error(e.span(), &e.to_string()))?;
    let mut items = Vec::new();
    collect(&file.items, &mut items);
    let mut index = HashMap::new();
    for item in &items {
        let (name, span) = match item {
            Item::Struct(s) => (s.ident.to_string(), s.ident.span()),
            Item::Enum(e) => (e.ident.to_string(), e.ident.span()),
        };
        if index.insert(name.clone(), index.len()).is_some() {
            return Err(error(span, &format!("{name} is declared twice")));
        }
    }
    let reader = Reader { index: &index, items: &items };
    let mut records = Vec::new();
    for item in &items {
        records.push(reader.record(item)?);
    }
    // Enums are types of fields, never the row.
    let root = order::pick_root(&records, root, &|i| matches!(items[i], Item::Struct(_)))?;
    order::model(records, root)
}

enum Item<'a> {
    Struct(&'a syn::ItemStruct),
    Enum(&'a syn::ItemEnum),
}

fn collect<'a>(items: &'a [syn::Item], out: &mut Vec<Item<'a>>) {
    for item in items {
        match item {
            syn::Item::Struct(s) => out.push(Item::Struct(s)),
            syn::Item::Enum(e) => out.push(Item::Enum(e)),
            syn::Item::Mod(m) => {
                if let Some((_, inner)) = &m.content {
                    collect(inner, out);
                }
            }
            _ => {}
        }
    }
}

fn error(span: proc_macro2::Span, message: &str) -> DefinitionError {
    let start = span.start();
    DefinitionError::at(start.line.max(1), start.column + 1, message)
}

/// What serde attributes say about a container or a field.
#[derive(Default)]
struct Serde {
    rename: Option<String>,
    rename_all: Option<String>,
    default: bool,
    skip: bool,
    untagged: bool,
    custom: bool,
}

fn serde_attributes(attrs: &[syn::Attribute]) -> Result<Serde, DefinitionError> {
    let mut out = Serde::default();
    for attr in attrs.iter().filter(|a| a.path().is_ident("serde")) {
        attr.parse_nested_meta(|meta| {
            let key = meta.path.get_ident().map(|i| i.to_string()).unwrap_or_default();
            match key.as_str() {
                "rename" | "rename_all" => {
                    let value = if meta.input.peek(syn::Token![=]) {
                        Some(meta.value()?.parse::<syn::LitStr>()?.value())
                    } else {
                        // `rename(deserialize = "…")`: the name read is the one that counts.
                        let mut read = None;
                        meta.parse_nested_meta(|inner| {
                            let v = inner.value()?.parse::<syn::LitStr>()?.value();
                            if inner.path.is_ident("deserialize") {
                                read = Some(v);
                            }
                            Ok(())
                        })?;
                        read
                    };
                    if key == "rename" { out.rename = value } else { out.rename_all = value }
                }
                "default" => {
                    out.default = true;
                    skip_value(&meta)?;
                }
                "skip" | "skip_deserializing" => out.skip = true,
                "untagged" => out.untagged = true,
                "with" | "deserialize_with" => {
                    out.custom = true;
                    skip_value(&meta)?;
                }
                _ => skip_value(&meta)?,
            }
            Ok(())
        })
        .map_err(|e| error(e.span(), &format!("a serde attribute Plumbline cannot read: {e}")))?;
    }
    Ok(out)
}

/// Consumes `= value` or `(…)` after an attribute key that is not needed.
fn skip_value(meta: &syn::meta::ParseNestedMeta) -> syn::Result<()> {
    if meta.input.peek(syn::Token![=]) {
        meta.value()?.parse::<syn::Expr>()?;
    } else if meta.input.peek(syn::token::Paren) {
        meta.parse_nested_meta(|inner| skip_value(&inner))?;
    }
    Ok(())
}

/// A field's name in the data under `rename_all` (serde's conversions, from
/// a snake_case field name).
fn renamed(field: &str, rule: &str) -> Option<String> {
    let words: Vec<&str> = field.split('_').filter(|w| !w.is_empty()).collect();
    let capital = |w: &str| {
        let mut c = w.chars();
        c.next().map(|f| f.to_uppercase().chain(c).collect::<String>()).unwrap_or_default()
    };
    Some(match rule {
        "lowercase" => field.to_lowercase(),
        "UPPERCASE" => field.to_uppercase(),
        "snake_case" => field.to_string(),
        "SCREAMING_SNAKE_CASE" => field.to_uppercase(),
        "kebab-case" => field.replace('_', "-"),
        "SCREAMING-KEBAB-CASE" => field.replace('_', "-").to_uppercase(),
        "PascalCase" => words.iter().map(|w| capital(w)).collect(),
        "camelCase" => words.iter().enumerate().map(|(i, w)| if i == 0 { w.to_string() } else { capital(w) }).collect(),
        _ => return None,
    })
}

struct Reader<'a> {
    index: &'a HashMap<String, usize>,
    items: &'a [Item<'a>],
}

impl Reader<'_> {
    fn record(&self, item: &Item) -> Result<Read, DefinitionError> {
        match item {
            Item::Struct(s) => self.structure(s),
            Item::Enum(e) => self.enumeration(e),
        }
    }

    fn structure(&self, s: &syn::ItemStruct) -> Result<Read, DefinitionError> {
        let container = serde_attributes(&s.attrs)?;
        let syn::Fields::Named(named) = &s.fields else {
            return Err(error(s.ident.span(), &format!("{} has no named fields", s.ident)));
        };
        let mut fields: Vec<Field> = Vec::new();
        for f in &named.named {
            let attrs = serde_attributes(&f.attrs)?;
            if attrs.skip {
                continue;
            }
            let ident = f.ident.as_ref().expect("named fields have names");
            let own = ident.to_string();
            let own = own.strip_prefix("r#").unwrap_or(&own).to_string();
            let name = match (&attrs.rename, &container.rename_all) {
                (Some(r), _) => r.clone(),
                (None, Some(rule)) => renamed(&own, rule)
                    .ok_or_else(|| error(s.ident.span(), &format!("rename_all = \"{rule}\" is not one of serde's rules")))?,
                (None, None) => own,
            };
            if fields.iter().any(|seen| seen.name == name) {
                return Err(error(ident.span(), &format!("two fields of {} are both read from `{name}`", s.ident)));
            }
            let slot = if attrs.custom { Slot { ty: Ty::Any { why: "read by custom code".into() }, nullable: true } } else { self.slot(&f.ty)? };
            let may_be_missing = slot.nullable || attrs.default || container.default;
            fields.push(Field { name, slot, may_be_missing });
        }
        let start = s.ident.span().start();
        Ok(Read { record: Record { name: s.ident.to_string(), path: String::new(), fields }, line: start.line, column: start.column + 1 })
    }

    /// An enum as a record with no fields; fields that use it get its type
    /// from [`Reader::enum_type`] instead.
    fn enumeration(&self, e: &syn::ItemEnum) -> Result<Read, DefinitionError> {
        let start = e.ident.span().start();
        Ok(Read { record: Record { name: e.ident.to_string(), path: String::new(), fields: Vec::new() }, line: start.line, column: start.column + 1 })
    }

    fn enum_type(&self, e: &syn::ItemEnum) -> Result<Ty, DefinitionError> {
        let attrs = serde_attributes(&e.attrs)?;
        if e.variants.iter().all(|v| matches!(v.fields, syn::Fields::Unit)) && !attrs.untagged {
            return Ok(Ty::Scalar(Scalar::String));
        }
        if attrs.untagged {
            let mut variants = Vec::new();
            for v in &e.variants {
                match &v.fields {
                    syn::Fields::Unnamed(f) if f.unnamed.len() == 1 => variants.push(self.slot(&f.unnamed[0].ty)?),
                    _ => return Err(error(v.ident.span(), &format!("variant {} of untagged enum {}: only one-value variants are read", v.ident, e.ident))),
                }
            }
            return Ok(Ty::Mixed(Vec::new(), variants));
        }
        Err(error(e.ident.span(), &format!("enum {}: only untagged enums and enums of unit variants are read", e.ident)))
    }

    fn slot(&self, ty: &syn::Type) -> Result<Slot, DefinitionError> {
        let plain = |ty: Ty| Ok(Slot { ty, nullable: false });
        match ty {
            syn::Type::Reference(r) => self.slot(&r.elem),
            syn::Type::Paren(p) => self.slot(&p.elem),
            syn::Type::Group(g) => self.slot(&g.elem),
            syn::Type::Array(a) => plain(Ty::List(Box::new(self.slot(&a.elem)?))),
            syn::Type::Slice(s) => plain(Ty::List(Box::new(self.slot(&s.elem)?))),
            syn::Type::Path(p) if p.qself.is_none() => self.path_type(p),
            other => Err(error(other.span(), "a type Plumbline cannot map to data")),
        }
    }

    fn path_type(&self, p: &syn::TypePath) -> Result<Slot, DefinitionError> {
        let last = p.path.segments.last().expect("a path has a segment");
        let name = last.ident.to_string();
        let args: Vec<&syn::Type> = match &last.arguments {
            syn::PathArguments::AngleBracketed(a) => {
                a.args.iter().filter_map(|g| if let syn::GenericArgument::Type(t) = g { Some(t) } else { None }).collect()
            }
            _ => Vec::new(),
        };
        let span = last.ident.span();
        let want = |n: usize| -> Result<(), DefinitionError> {
            if args.len() == n { Ok(()) } else { Err(error(span, &format!("{name} needs {n} type argument{}", if n == 1 { "" } else { "s" }))) }
        };
        let scalar = |s: Scalar| Ok(Slot { ty: Ty::Scalar(s), nullable: false });
        let int = |bits: u8, signed: bool| scalar(Scalar::Int { bits, signed });
        // A type the file declares wins over a library type of the same
        // name (a struct of its own called `Value` or `Date`).
        if p.path.segments.len() == 1
            && let Some(&i) = self.index.get(&name)
        {
            return match &self.items[i] {
                Item::Enum(e) => Ok(Slot { ty: self.enum_type(e)?, nullable: false }),
                Item::Struct(_) => Ok(Slot { ty: Ty::Record(i), nullable: false }),
            };
        }
        match name.as_str() {
            "Option" => {
                want(1)?;
                Ok(Slot { nullable: true, ..self.slot(args[0])? })
            }
            "Box" | "Rc" | "Arc" | "Cow" => {
                want(1)?;
                self.slot(args[0])
            }
            "Vec" | "VecDeque" | "HashSet" | "BTreeSet" | "IndexSet" => {
                want(1)?;
                let element = self.slot(args[0])?;
                if name == "Vec" && element == (Slot { ty: Ty::Scalar(Scalar::Int { bits: 8, signed: false }), nullable: false }) {
                    return scalar(Scalar::Binary);
                }
                Ok(Slot { ty: Ty::List(Box::new(element)), nullable: false })
            }
            "HashMap" | "BTreeMap" | "IndexMap" => {
                want(2)?;
                let key = self.slot(args[0])?;
                let value = self.slot(args[1])?;
                Ok(Slot { ty: Ty::Map { key: Box::new(key), value: Box::new(value) }, nullable: false })
            }
            "bool" => scalar(Scalar::Bool),
            "i8" => int(8, true),
            "i16" => int(16, true),
            "i32" => int(32, true),
            "i64" | "isize" => int(64, true),
            "u8" => int(8, false),
            "u16" => int(16, false),
            "u32" => int(32, false),
            "u64" | "usize" => int(64, false),
            "i128" => scalar(Scalar::Decimal { precision: 38, scale: 0 }),
            "f32" => scalar(Scalar::Float { bits: 32 }),
            "f64" => scalar(Scalar::Float { bits: 64 }),
            "String" | "str" | "char" => scalar(Scalar::String),
            "Decimal" => scalar(FLOATING_DECIMAL),
            "NaiveDate" | "Date" => scalar(Scalar::Date),
            "NaiveTime" | "Time" => scalar(Scalar::Time { unit: Unit::Nano }),
            "DateTime" | "OffsetDateTime" => scalar(Scalar::Instant { unit: Unit::Nano, zone: None }),
            "NaiveDateTime" | "PrimitiveDateTime" => scalar(Scalar::LocalDateTime { unit: Unit::Nano }),
            "Value" => Ok(Slot { ty: Ty::Any { why: "any JSON value".into() }, nullable: true }),
            _ => Err(error(span, &format!("`{name}` is neither a struct in this file nor a type Plumbline maps"))),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const DELIVERY: &str = r#"
use serde::Deserialize;

#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct Delivery {
    pub delivery_id: i64,
    #[serde(rename = "pick up")]
    pub pickup: Option<Place>,
    #[serde(default)]
    pub tags: Vec<String>,
    pub r#type: Kind,
    pub extra: std::collections::HashMap<String, serde_json::Value>,
    pub at: chrono::DateTime<chrono::Utc>,
    pub fee: Option<rust_decimal::Decimal>,
    #[serde(skip)]
    pub cache: u8,
    pub weight: Weight,
}

#[derive(Deserialize)]
pub struct Place { zone: String, seen: Vec<u8> }

#[derive(Deserialize)]
pub enum Kind { Drop, Pickup }

#[derive(Deserialize)]
#[serde(untagged)]
pub enum Weight { Number(f64), Text(String) }
"#;

    #[test]
    fn structs_with_serde_names_defaults_and_enums() {
        let m = read(DELIVERY, None).unwrap();
        let root = m.root();
        assert_eq!(root.name, "Delivery");
        let names: Vec<&str> = root.fields.iter().map(|f| f.name.as_str()).collect();
        assert_eq!(names, ["deliveryId", "pick up", "tags", "type", "extra", "at", "fee", "weight"]);
        assert!(!root.fields[0].optional());
        assert!(root.fields[1].slot.nullable && root.fields[1].may_be_missing);
        assert!(!root.fields[2].slot.nullable && root.fields[2].may_be_missing, "default: may be missing, not null");
        assert_eq!(root.fields[3].slot.ty, Ty::Scalar(Scalar::String));
        assert_eq!(root.fields[5].slot.ty, Ty::Scalar(Scalar::Instant { unit: Unit::Nano, zone: None }));
        assert_eq!(root.fields[6].slot.ty, Ty::Scalar(FLOATING_DECIMAL));
        let Ty::Mixed(_, variants) = &root.fields[7].slot.ty else { panic!("mixed") };
        assert_eq!(variants.len(), 2);
        let Ty::Record(i) = root.fields[1].slot.ty else { panic!("a record") };
        assert_eq!(m.records[i].fields[1].slot.ty, Ty::Scalar(Scalar::Binary));
    }

    #[test]
    fn a_struct_of_the_file_wins_over_a_library_type_of_that_name() {
        let m = read("struct Row { v: Value, j: serde_json::Value }\nstruct Value { x: i32 }", None).unwrap();
        let root = m.root();
        assert!(matches!(root.fields[0].slot.ty, Ty::Record(_)), "{:?}", root.fields[0].slot.ty);
        assert!(matches!(root.fields[1].slot.ty, Ty::Any { .. }));
    }

    #[test]
    fn serde_rename_rules() {
        assert_eq!(renamed("delivery_id", "PascalCase").unwrap(), "DeliveryId");
        assert_eq!(renamed("delivery_id", "SCREAMING-KEBAB-CASE").unwrap(), "DELIVERY-ID");
        assert_eq!(renamed("id", "camelCase").unwrap(), "id");
        assert!(renamed("id", "Title Case").is_none());
    }

    #[test]
    fn errors_name_the_line_and_column() {
        let e = read("struct A {\n    x: Widget,\n}", None).unwrap_err();
        assert_eq!((e.line, e.column), (2, 8));
        let e = read("struct A { x: i32", None).unwrap_err();
        assert_eq!(e.line, 1);
        let e = read("struct A(i32);", None).unwrap_err();
        assert!(e.message.contains("no named fields"), "{e}");
        assert!(read("enum A { X }", None).unwrap_err().message.contains("no record"));
    }
}
