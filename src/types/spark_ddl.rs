//! The Spark SQL DDL schema string (`a STRING NOT NULL, b STRUCT<…>`), as
//! passed to `spark.read.schema(…)`: the same mapping as the Scala target
//! (DESIGN.md §5), names in backticks where they are not plain identifiers.

use super::model::{Model, Scalar, Slot, Ty};
use super::{Generated, Header, TypeOptions, kinds_label};

pub fn render(model: Model, header: &Header, _options: &TypeOptions) -> Generated {
    let mut warnings = Vec::new();
    let root = model.root();
    let columns: Vec<String> = root.fields.iter().map(|f| column(&model, &f.name, &f.slot, f.optional(), &mut warnings)).collect();
    // `--` comments are valid around a DDL string in SQL and are stripped by
    // callers that pass the string on; the schema itself is the last line(s).
    let mut code: String = header.lines.iter().map(|l| format!("-- {l}\n")).collect();
    code.push_str(&columns.join(",\n"));
    code.push('\n');
    Generated { code, warnings }
}

/// `name TYPE [NOT NULL] [COMMENT '…']`.
fn column(model: &Model, name: &str, slot: &Slot, optional: bool, warnings: &mut Vec<String>) -> String {
    let mut out = format!("{} {}", quote(name), ty(model, &slot.ty, name, warnings));
    if !optional {
        out.push_str(" NOT NULL");
    }
    match &slot.ty {
        Ty::Mixed(kinds, _) => out.push_str(&format!(" COMMENT '{}'", format!("mixed kinds: {}", kinds_label(kinds)).replace('\'', "\\'"))),
        Ty::Any { why } => out.push_str(&format!(" COMMENT '{}'", format!("any value: {why}").replace('\'', "\\'"))),
        _ => {}
    }
    out
}

/// Backticks unless a plain identifier (a doubled backtick escapes one).
pub fn quote(name: &str) -> String {
    if super::naming::is_ascii_identifier(name) { name.to_string() } else { format!("`{}`", name.replace('`', "``")) }
}

fn ty(model: &Model, of: &Ty, path: &str, warnings: &mut Vec<String>) -> String {
    match of {
        Ty::Scalar(s) => scalar(s, path, warnings),
        Ty::List(e) => format!("ARRAY<{}>", ty(model, &e.ty, &crate::path::element(path), warnings)),
        Ty::Map { key, value } => format!(
            "MAP<{}, {}>",
            ty(model, &key.ty, &crate::path::map_key(path), warnings),
            ty(model, &value.ty, &crate::path::map_value(path), warnings)
        ),
        Ty::Record(i) => {
            let record = &model.records[*i];
            let fields: Vec<String> = record
                .fields
                .iter()
                .map(|f| {
                    let p = crate::path::member(path, &f.name);
                    let mut s = format!("{}: {}", quote(&f.name), ty(model, &f.slot.ty, &p, warnings));
                    if !f.optional() {
                        s.push_str(" NOT NULL");
                    }
                    s
                })
                .collect();
            format!("STRUCT<{}>", fields.join(", "))
        }
        Ty::Any { .. } | Ty::Mixed(..) => "STRING".into(),
    }
}

fn scalar(s: &Scalar, path: &str, warnings: &mut Vec<String>) -> String {
    if let Scalar::Decimal { precision, scale } = s {
        if *precision > 38 {
            warnings.push(format!("{path}: decimal({precision}, {scale}) is wider than Spark's 38 digits; typed as STRING"));
            return "STRING".into();
        }
        return format!("DECIMAL({precision},{scale})");
    }
    match s {
        Scalar::Bool => "BOOLEAN",
        Scalar::Int { bits: 8, signed: true } => "TINYINT",
        Scalar::Int { bits: 16, signed: true } | Scalar::Int { bits: 8, signed: false } => "SMALLINT",
        Scalar::Int { bits: 32, signed: true } | Scalar::Int { bits: 16, signed: false } => "INT",
        Scalar::Int { bits: 32, signed: false } => "BIGINT",
        Scalar::Int { signed: true, .. } => "BIGINT",
        Scalar::Int { signed: false, .. } => {
            warnings.push(format!("{path}: unsigned 64-bit integers do not fit BIGINT; typed as DECIMAL(20,0)"));
            "DECIMAL(20,0)"
        }
        Scalar::Float { bits: 16 | 32 } => "FLOAT",
        Scalar::Float { .. } => "DOUBLE",
        Scalar::Decimal { .. } => unreachable!("handled above"),
        Scalar::String => "STRING",
        Scalar::Binary => "BINARY",
        Scalar::Date => "DATE",
        Scalar::Instant { .. } => "TIMESTAMP",
        Scalar::LocalDateTime { .. } => "TIMESTAMP_NTZ",
        Scalar::Time { .. } => {
            warnings.push(format!("{path}: Spark has no time-of-day type; typed as BIGINT (the raw count in its unit)"));
            "BIGINT"
        }
        Scalar::Duration { .. } => "BIGINT",
    }
    .to_string()
}
