//! Fit: does every row of a source fit an existing record definition?
//! The definition ([`definition`]) is compared with the model of the data's
//! own shape ([`check`]); each difference then has its affected rows
//! counted in one pass over the source ([`rows`]) and becomes a [`Verdict`].

pub mod check;
pub mod definition;
mod from_report;
pub mod rows;
pub mod values;
pub mod verdict;

use std::sync::atomic::AtomicBool;

use serde::Serialize;

pub use definition::{Definition, DefinitionError, DefinitionLang};
pub use verdict::{Severity, Verdict};

use crate::scan::{Coverage, Scan};
use crate::source::{OpenOptions, SourceError};
use crate::types::model::{self, Optionality};

#[derive(Debug, Clone, Copy, Default)]
pub struct FitOptions {
    /// Fields in the data but not in the definition make rows fail to fit
    /// (by default they are a note: a typed read ignores them).
    pub deny_extra: bool,
}

/// The outcome of one fit.
#[derive(Debug, Clone, Serialize)]
pub struct Fit {
    /// Rows read in the pass.
    pub rows: u64,
    /// One per difference, in the definition's field order.
    pub verdicts: Vec<Verdict>,
    /// The pass was stopped early, so counts cover only part of the rows.
    pub partial: bool,
    /// Checked against a report's statistics, not its rows: counts are the
    /// places the report states, and no example rows are given.
    pub from_report: bool,
}

impl Fit {
    /// True when no verdict says rows fail to fit.
    pub fn fits(&self) -> bool {
        !self.verdicts.iter().any(|v| v.severity == Severity::Fails)
    }
}

/// Checks `definition` against the rows of the source `scan` describes.
/// A scan that did not read every row is refused: a fit must see them all.
pub fn fit(scan: &Scan, open: OpenOptions, definition: &Definition, options: FitOptions, stop: &AtomicBool) -> Result<Fit, SourceError> {
    if let Coverage::Broken { error, .. } = &scan.coverage {
        return Err(SourceError::Internal { path: scan.info.path.clone(), message: error.clone() });
    }
    let data = model::build(&scan.shape, Optionality::Observed, scan.coverage != Coverage::SchemaOnly);
    let sides = check::Sides { definition: &definition.model, lang: definition.lang, data: &data, data_is_text: scan.info.schema.is_none() };
    let findings = check::compare(&sides);
    if scan.from_report.is_some() {
        let verdicts = findings
            .into_iter()
            .map(|finding| {
                // A difference the statistics cannot rule out counts as affecting rows.
                let rows = from_report::affected(&scan.shape, &finding).unwrap_or(1);
                Verdict::of(finding, rows, Vec::new(), options.deny_extra)
            })
            .collect();
        return Ok(Fit { rows: scan.shape.rows, verdicts, partial: scan.coverage.is_partial(), from_report: true });
    }
    let source = crate::source::open(&scan.info.path, open)?;
    let counts = rows::count(source, &findings, stop)?;
    let verdicts = findings
        .into_iter()
        .zip(counts.per_finding)
        .map(|(finding, (rows, examples))| Verdict::of(finding, rows, examples, options.deny_extra))
        .collect();
    Ok(Fit { rows: counts.rows, verdicts, partial: counts.stopped, from_report: false })
}

/// The verdicts as plain text, failing ones first, one per line with its
/// rows and examples below it.
pub fn render(fit: &Fit, no_examples: bool) -> String {
    use std::fmt::Write as _;
    let mut out = String::new();
    let mut verdicts: Vec<&Verdict> = fit.verdicts.iter().collect();
    verdicts.sort_by_key(|v| std::cmp::Reverse(v.severity));
    for v in verdicts {
        let mark = match v.severity {
            Severity::Fails => "does not fit",
            Severity::Warns => "fragile",
            Severity::Note => "note",
        };
        let _ = writeln!(out, "{mark}: {}: {}", v.path, v.message);
        // A note's rows are every row that has the field: no news.
        if fit.from_report && v.severity == Severity::Fails {
            out.push_str("    (from the report's statistics; its rows were not read)\n");
        } else if v.rows > 0 && v.severity != Severity::Note {
            let _ = write!(out, "    {} of {} rows", crate::format::group_digits(v.rows), crate::format::group_digits(fit.rows));
            if !no_examples && !v.examples.is_empty() {
                let shown: Vec<String> = v.examples.iter().map(|e| if e.value.is_empty() { format!("row {}", e.row) } else { format!("row {}: {}", e.row, e.value) }).collect();
                let _ = write!(out, ", e.g. {}", shown.join("; "));
            }
            out.push('\n');
        }
    }
    let failing = fit.verdicts.iter().filter(|v| v.severity == Severity::Fails).count();
    let rows = crate::format::group_digits(fit.rows);
    if failing == 0 && fit.from_report {
        let _ = writeln!(out, "Fits: nothing in the report's statistics of its {rows} rows fails to fit the definition.");
    } else if failing == 0 {
        let _ = writeln!(out, "Fits: every one of the {rows} rows read fits the definition.");
    } else {
        let (s, verb) = if failing == 1 { ("", "makes") } else { ("s", "make") };
        let _ = writeln!(out, "Does not fit: {failing} difference{s} {verb} rows of the {rows} read fail.");
    }
    if fit.from_report {
        out.push_str("Checked against a report's statistics, not its rows: a difference they cannot rule out counts as failing.\n");
    } else if fit.partial {
        out.push_str("PARTIAL: the pass was stopped; the counts cover only the rows read.\n");
    }
    out
}
