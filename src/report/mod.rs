//! The JSON profile report (versioned; keys are added, never renamed) and
//! the atomic writing of any output file.
//!
//! Every key is documented in the README's "Report" section.

pub mod write;

use std::collections::BTreeMap;

use serde::Serialize;

use crate::scan::Scan;
use crate::shape::{FieldShape, Role};
use crate::source::{Compression, Facts};

pub const REPORT_VERSION: u32 = 1;

#[derive(Debug, Clone, Copy, Default)]
pub struct ReportOptions {
    /// Leave data values out (examples), for reports that may be shared.
    pub no_examples: bool,
}

#[derive(Debug, Serialize)]
pub struct Report {
    pub plumbline_report: u32,
    pub generated_at: String,
    /// True when the fields describe only part of the rows.
    pub partial: bool,
    /// Why the report is partial or schema-only; absent when complete.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub coverage_note: Option<String>,
    pub shape_only: bool,
    pub examples_included: bool,
    pub source: SourceSection,
    pub fields: Vec<FieldEntry>,
}

#[derive(Debug, Serialize)]
pub struct SourceSection {
    pub path: String,
    pub format: &'static str,
    pub compression: Compression,
    pub bytes: u64,
    /// Rows read, or the row count the metadata states when no rows were read.
    pub rows: Option<u64>,
    pub parts: usize,
    pub facts: Facts,
}

#[derive(Debug, Serialize)]
pub struct FieldEntry {
    pub path: String,
    pub name: String,
    pub depth: usize,
    pub role: Role,
    /// Arrow's display of the declared type; null when the format has none.
    pub declared_type: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub declared_nullable: Option<bool>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub parquet: Option<crate::source::parquet::ParquetLeaf>,
    /// What the values come to: `int (uint8)`, `string (timestamp)`, `mixed: …`.
    pub observed: String,
    pub kinds: BTreeMap<&'static str, u64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub int_range: Option<[i128; 2]>,
    #[serde(skip_serializing_if = "BTreeMap::is_empty")]
    pub string_forms: BTreeMap<&'static str, u64>,
    pub count: u64,
    pub nulls: u64,
    pub missing: u64,
    /// For mixed fields: values of the minority kinds, with their row.
    pub examples: Vec<ExampleEntry>,
}

#[derive(Debug, Serialize)]
pub struct ExampleEntry {
    pub kind: &'static str,
    pub row: u64,
    pub value: String,
}

pub fn build(scan: &Scan, options: ReportOptions) -> Report {
    let info = &scan.info;
    let rows = match scan.coverage {
        crate::scan::Coverage::SchemaOnly => info.rows,
        _ => Some(scan.shape.rows),
    };
    let mut fields = Vec::new();
    scan.shape.walk(|f, depth| fields.push(field_entry(f, depth, options)));
    Report {
        plumbline_report: REPORT_VERSION,
        generated_at: crate::time::now_rfc3339(),
        partial: scan.coverage.is_partial(),
        coverage_note: scan.coverage.describe(),
        shape_only: matches!(scan.coverage, crate::scan::Coverage::SchemaOnly | crate::scan::Coverage::FirstRows(_)),
        examples_included: !options.no_examples,
        source: SourceSection {
            path: info.path.display().to_string(),
            format: info.format.label(),
            compression: info.compression,
            bytes: info.bytes,
            rows,
            parts: info.parts,
            facts: info.facts.clone(),
        },
        fields,
    }
}

fn field_entry(f: &FieldShape, depth: usize, options: ReportOptions) -> FieldEntry {
    let examples = if options.no_examples {
        Vec::new()
    } else {
        f.minority_examples()
            .into_iter()
            .map(|(kind, e)| ExampleEntry { kind: kind.name(), row: e.row, value: e.value.clone() })
            .collect()
    };
    FieldEntry {
        path: f.path.clone(),
        name: f.name.clone(),
        depth,
        role: f.role,
        declared_type: f.declared.as_ref().map(|d| d.arrow.clone()),
        declared_nullable: f.declared.as_ref().map(|d| d.nullable),
        parquet: f.declared.as_ref().and_then(|d| d.parquet.clone()),
        observed: crate::shape::observed_label(&f.kinds),
        kinds: f.kinds.iter().map(|(k, n)| (k.name(), n)).collect(),
        int_range: f.kinds.int_range.map(|(lo, hi)| [lo, hi]),
        string_forms: f.kinds.forms.iter().collect(),
        count: f.count,
        nulls: f.nulls(),
        missing: f.missing,
        examples,
    }
}

pub fn to_json(report: &Report) -> String {
    serde_json::to_string_pretty(report).expect("report types serialize")
}
