//! Scala case classes for typed datasets (`spark.read.….as[Row]`), by the
//! encoder rules in DESIGN.md §5: `Option` for optional fields, `Seq`,
//! `Map`, nested case classes. Names that are not Scala identifiers, or are
//! reserved words, are written in backticks and so stay exact.

use std::fmt::Write as _;

use super::model::{Field, Model, Record, Scalar, Slot, Ty};
use super::naming::{self, Reserved};
use super::{Generated, Header, TimeChoice, TypeOptions, kinds_label};

/// Reserved words of the Scala Language Specification 2.13, §1.1
/// ("Identifiers"), plus Scala 3's hard keywords (`enum`, `export`, `given`,
/// `then`) so the file reads the same under both.
pub const KEYWORDS: Reserved = Reserved(&[
    "abstract", "case", "catch", "class", "def", "do", "else", "extends", "false", "final", "finally", "for", "forSome",
    "if", "implicit", "import", "lazy", "macro", "match", "new", "null", "object", "override", "package", "private",
    "protected", "return", "sealed", "super", "this", "throw", "trait", "try", "true", "type", "val", "var", "while",
    "with", "yield", "enum", "export", "given", "then", "_",
]);

/// Members every case class defines: a field of the same name does not compile.
const CASE_CLASS_MEMBERS: [&str; 9] =
    ["copy", "equals", "hashCode", "toString", "canEqual", "productArity", "productElement", "productIterator", "productPrefix"];

/// The JVM limits a method to 255 parameter slots (JVM Specification §4.3.3);
/// a constructor of longs and doubles needs two each, so stay well inside.
pub const MAX_FIELDS: usize = 120;

const TAKEN_TYPE_NAMES: Reserved =
    Reserved(&["Option", "Some", "None", "Seq", "Map", "String", "Int", "Long", "Short", "Byte", "Double", "Float", "Boolean", "BigDecimal", "Array", "Any", "Product"]);

pub fn render(mut model: Model, header: &Header, options: &TypeOptions) -> Generated {
    naming::name_records(&mut model, &options.root, &TAKEN_TYPE_NAMES);
    let mut out = String::new();
    for line in &header.lines {
        let _ = writeln!(out, "// {line}");
    }
    let time = match options.time {
        TimeChoice::Sql => "java.sql.Date and java.sql.Timestamp (the encoders' defaults)",
        TimeChoice::JavaTime => "java.time.LocalDate and java.time.Instant (supported by the encoders since Spark 3.0)",
    };
    let _ = writeln!(out, "//\n// Optional fields are `Option`. Dates and instants: {time}.");
    let mut warnings = Vec::new();
    for record in &model.records {
        render_record(&model, record, options, &mut out, &mut warnings);
    }
    Generated { code: out, warnings }
}

fn render_record(model: &Model, record: &Record, options: &TypeOptions, out: &mut String, warnings: &mut Vec<String>) {
    let what = record.what(true);
    let _ = write!(out, "\n/** {what} */\ncase class {}(\n", record.name);
    let fields: &[Field] = if record.fields.len() > MAX_FIELDS {
        warnings.push(format!(
            "{}: {} fields; a case class here holds at most {MAX_FIELDS} (the JVM's parameter limit), so the rest are \
             left out (a typed read ignores columns its class lacks)",
            if record.path.is_empty() { &record.name } else { &record.path },
            record.fields.len()
        ));
        let _ = writeln!(out, "  // {} fields after the first {MAX_FIELDS} are left out: the JVM's parameter limit.", record.fields.len() - MAX_FIELDS);
        &record.fields[..MAX_FIELDS]
    } else {
        &record.fields
    };
    let last = fields.len().saturating_sub(1);
    for (i, field) in fields.iter().enumerate() {
        let path = crate::path::member(&record.path, &field.name);
        let ty = slot_type(model, &field.slot, options, &path, warnings);
        let ty = if field.optional() && !field.slot.nullable { format!("Option[{ty}]") } else { ty };
        let note = note(&field.slot.ty).map(|n| format!(" // {n}")).unwrap_or_default();
        let name = if field.name.is_empty() || field.name.contains(['`', '\n', '\r']) {
            warnings.push(format!("{path}: a Scala name cannot spell {:?}; the field is named {}", field.name, identifier(&field.name)));
            identifier(&field.name)
        } else if CASE_CLASS_MEMBERS.contains(&field.name.as_str()) {
            warnings.push(format!("{path}: `{}` is a member of every case class; the field is named `{}_`", field.name, field.name));
            format!("{}_", field.name)
        } else {
            identifier(&field.name)
        };
        let comma = if i == last { "" } else { "," };
        let _ = writeln!(out, "  {name}: {ty}{comma}{note}");
    }
    out.push_str(")\n");
}

/// The name itself when it is a plain identifier and not reserved;
/// otherwise in backticks (which may hold anything but a backtick or a
/// line break — those are replaced, with a warning from the caller's view).
pub fn identifier(name: &str) -> String {
    if name.is_empty() {
        return "`(empty)`".into();
    }
    if naming::is_ascii_identifier(name) && !KEYWORDS.contains(name) && !name.ends_with('_') {
        name.to_string()
    } else {
        format!("`{}`", name.replace(['`', '\n', '\r'], "_"))
    }
}

fn note(ty: &Ty) -> Option<String> {
    match ty {
        Ty::Any { why } => Some(format!("any value, read as text: {why}")),
        Ty::Mixed(kinds, _) => Some(format!("mixed kinds ({}): read as text, as Spark widens them", kinds_label(kinds))),
        Ty::Scalar(Scalar::Duration { unit }) => Some(format!("a duration in {}", unit.label())),
        _ => None,
    }
}

fn slot_type(model: &Model, slot: &Slot, options: &TypeOptions, path: &str, warnings: &mut Vec<String>) -> String {
    let inner = ty(model, &slot.ty, options, path, warnings);
    if slot.nullable { format!("Option[{inner}]") } else { inner }
}

fn ty(model: &Model, ty: &Ty, options: &TypeOptions, path: &str, warnings: &mut Vec<String>) -> String {
    match ty {
        Ty::Scalar(s) => scalar(s, options, path, warnings).to_string(),
        Ty::List(e) => format!("Seq[{}]", slot_type(model, e, options, &crate::path::element(path), warnings)),
        Ty::Map { key, value } => format!(
            "Map[{}, {}]",
            slot_type(model, key, options, &crate::path::map_key(path), warnings),
            slot_type(model, value, options, &crate::path::map_value(path), warnings)
        ),
        Ty::Record(i) => model.records[*i].name.clone(),
        Ty::Any { .. } | Ty::Mixed(..) => "String".into(),
    }
}

fn scalar(s: &Scalar, options: &TypeOptions, path: &str, warnings: &mut Vec<String>) -> &'static str {
    match s {
        Scalar::Bool => "Boolean",
        Scalar::Int { bits: 8, signed: true } => "Byte",
        Scalar::Int { bits: 16, signed: true } | Scalar::Int { bits: 8, signed: false } => "Short",
        Scalar::Int { bits: 32, signed: true } | Scalar::Int { bits: 16, signed: false } => "Int",
        Scalar::Int { bits: 32, signed: false } => "Long",
        Scalar::Int { signed: true, .. } => "Long",
        Scalar::Int { signed: false, .. } => {
            warnings.push(format!("{path}: unsigned 64-bit integers do not fit a Long; typed as BigDecimal (DECIMAL(20,0))"));
            "BigDecimal"
        }
        Scalar::Float { bits: 16 | 32 } => "Float",
        Scalar::Float { .. } => "Double",
        Scalar::Decimal { .. } => "BigDecimal",
        Scalar::String => "String",
        Scalar::Binary => "Array[Byte]",
        Scalar::Date => match options.time {
            TimeChoice::Sql => "java.sql.Date",
            TimeChoice::JavaTime => "java.time.LocalDate",
        },
        Scalar::Instant { .. } => match options.time {
            TimeChoice::Sql => "java.sql.Timestamp",
            TimeChoice::JavaTime => "java.time.Instant",
        },
        Scalar::LocalDateTime { .. } => "java.time.LocalDateTime",
        Scalar::Time { .. } => {
            warnings.push(format!("{path}: Spark has no time-of-day type; typed as Long (the raw count in its unit)"));
            "Long"
        }
        Scalar::Duration { .. } => "Long",
    }
}
