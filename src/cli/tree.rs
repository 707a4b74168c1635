//! The field tree as indented text, for the terminal.

use std::fmt::Write as _;

use crate::format::{group_digits, human_bytes};
use crate::report::ReportOptions;
use crate::scan::Scan;
use crate::shape::FieldShape;
use crate::source::Compression;

pub fn render(scan: &Scan, options: ReportOptions) -> String {
    let mut out = String::new();
    let info = &scan.info;
    let compression = match info.compression {
        Compression::None => String::new(),
        c => format!(" ({c:?}-compressed)").to_lowercase(),
    };
    let rows = match scan.coverage {
        crate::scan::Coverage::SchemaOnly => info.rows,
        _ => Some(scan.shape.rows),
    };
    let _ = writeln!(
        out,
        "{}: {}{}, {}, {} rows, {} part{}",
        info.path.display(),
        info.format.label(),
        compression,
        human_bytes(info.bytes),
        rows.map_or("unknown".into(), group_digits),
        info.parts,
        if info.parts == 1 { "" } else { "s" }
    );
    if let Some(from) = &scan.from_report {
        let by = from.engine.as_deref().unwrap_or("Plumbline");
        let _ = writeln!(out, "read from the report {}, made by {by} on {}", from.file.display(), from.generated_at);
        for note in &from.approximations {
            let _ = writeln!(out, "  estimated: {note}");
        }
    }
    let facts = &info.facts;
    let mut fact_line = Vec::new();
    if let Some(g) = facts.row_groups {
        fact_line.push(format!("row groups: {g}"));
    }
    if let Some(b) = facts.record_batches {
        fact_line.push(format!("record batches: {b}"));
    }
    if !facts.codecs.is_empty() {
        fact_line.push(format!("codecs: {}", facts.codecs.join(", ")));
    }
    if let Some(w) = &facts.writer {
        fact_line.push(format!("writer: {w}"));
    }
    if let Some(d) = &facts.delimited {
        fact_line.push(format!("delimiter: {} · header: {}", d.delimiter, if d.header { "yes" } else { "no" }));
    }
    if !facts.partition_fields.is_empty() {
        fact_line.push(format!("partition fields: {}", facts.partition_fields.join(", ")));
    }
    if !fact_line.is_empty() {
        let _ = writeln!(out, "  {}", fact_line.join(" · "));
    }
    for difference in &facts.schema_differences {
        let _ = writeln!(out, "  schema differs: {difference}");
    }
    if let Some(note) = scan.coverage.describe() {
        let label = if scan.coverage.is_partial() { "PARTIAL" } else { "NOTE" };
        let _ = writeln!(out, "  {label}: {note}");
    }
    if let Some(sample) = &scan.sample {
        let _ = writeln!(out, "  SAMPLE: {}", sample.describe(scan.shape.rows));
    }
    out.push('\n');

    let mut rows: Vec<[String; 7]> =
        vec![["field", "declared", "observed", "counts", "distinct", "range", "notes"].map(String::from)];
    scan.shape.walk(|f, depth| {
        let name = format!("{}{}", "  ".repeat(depth), display_name(f));
        let declared = f.declared.as_ref().map_or("—".to_string(), |d| d.short_label());
        let counts = format!(
            "{} present · {} null · {} missing",
            group_digits(f.present()),
            group_digits(f.nulls()),
            group_digits(f.missing)
        );
        let (distinct, range) = summary(f);
        rows.push([name, declared, crate::shape::observed_label(&f.kinds), counts, distinct, range, notes(f, options)]);
    });
    let widths: Vec<usize> = (0..6).map(|c| rows.iter().map(|r| r[c].chars().count()).max().unwrap_or(0)).collect();
    for r in rows {
        let mut line = String::new();
        for (cell, width) in r.iter().zip(&widths) {
            let _ = write!(line, "{cell:<width$}  ");
        }
        line.push_str(&r[6]);
        let _ = writeln!(out, "{}", line.trim_end());
    }
    out
}

/// Distinct count (`≈` when sketched) and the value range, when profiled.
fn summary(f: &FieldShape) -> (String, String) {
    let Some(stats) = f.stats.as_deref() else { return (String::new(), String::new()) };
    let distinct = stats
        .distinct_count()
        .map_or(String::new(), |d| format!("{}{}", if d.exact { "" } else { "≈" }, group_digits(d.value)));
    let range = if let (Some((lo, hi)), crate::shape::Unified::One(crate::shape::Kind::Int)) =
        (f.kinds.int_range, f.kinds.unified())
    {
        format!("{lo} … {hi}")
    } else if let Some(n) = stats.numbers.as_ref().filter(|n| n.moments.count() > 0) {
        format!("{} … {}", short(n.moments.min().unwrap_or(0.0)), short(n.moments.max().unwrap_or(0.0)))
    } else if let Some(i) = &stats.instants {
        format!("{} … {}", crate::time::rfc3339_from_unix(i.min), crate::time::rfc3339_from_unix(i.max))
    } else {
        String::new()
    };
    (distinct, range)
}

/// A number with at most six decimals (scientific when very large or small).
fn short(v: f64) -> String {
    let s = format!("{v:.6}");
    let s = if v.abs() >= 1e6 || (v != 0.0 && v.abs() < 1e-3) { format!("{v:.4e}") } else { s };
    if s.contains('.') && !s.contains('e') { s.trim_end_matches('0').trim_end_matches('.').to_string() } else { s }
}

fn display_name(f: &FieldShape) -> String {
    match f.role {
        crate::shape::Role::Member | crate::shape::Role::Variant => {
            f.path.rsplit_once('.').map_or(f.path.clone(), |(_, n)| n.to_string()).replace("``", "`")
        }
        crate::shape::Role::Element => "[]".into(),
        crate::shape::Role::MapKey => "{key}".into(),
        crate::shape::Role::MapValue => "{}".into(),
    }
}

/// String forms that cover only some strings, and examples of minority kinds.
fn notes(f: &FieldShape, options: ReportOptions) -> String {
    let mut parts = Vec::new();
    let strings = f.kinds.get(crate::shape::Kind::String);
    let forms: Vec<String> = f
        .kinds
        .forms
        .iter()
        .filter(|&(_, n)| n < strings || f.kinds.unified() == crate::shape::Unified::Mixed)
        .map(|(name, n)| format!("{name} {}", group_digits(n)))
        .collect();
    if !forms.is_empty() {
        parts.push(format!("text that reads as: {}", forms.join(", ")));
    }
    if f.stats.is_some() {
        let found: Vec<&str> = crate::profile::findings::findings(f).iter().map(|x| x.kind).collect();
        if !found.is_empty() {
            parts.push(format!("findings: {}", found.join(", ")));
        }
    }
    if !options.no_examples {
        let examples: Vec<String> =
            f.minority_examples().iter().map(|(k, e)| format!("{} {}: {}", e.place(), k.name(), e.value)).collect();
        if !examples.is_empty() {
            parts.push(format!("e.g. {}", examples.join("; ")));
        }
    }
    parts.join(" · ")
}
