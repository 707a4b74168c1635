//! Two sources compared, as the plain text `plumbline compare` prints:
//! the schema changes, then the fields whose values moved.

use std::fmt::Write as _;

use super::drift::Drift;
use super::{Change, Compared, psi};
use crate::format::group_digits;

pub fn render(compared: &Compared, no_examples: bool) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "Schema: {}", super::summary(&compared.changes));
    for c in compared.changes.iter().filter(|c| c.change != Change::Same) {
        let before = c.before.as_ref();
        let after = c.after.as_ref();
        let detail = match &c.change {
            Change::Added => after.map_or("", |a| &a.type_label).to_string(),
            Change::Removed => before.map_or("", |b| &b.type_label).to_string(),
            Change::TypeChanged => format!("{} → {}", before.map_or("", |b| &b.type_label), after.map_or("", |a| &a.type_label)),
            Change::EmptinessChanged => format!(
                "null or missing in {} of {} → {} of {}",
                group_digits(before.map_or(0, |b| b.empty)),
                group_digits(before.map_or(0, |b| b.count)),
                group_digits(after.map_or(0, |a| a.empty)),
                group_digits(after.map_or(0, |a| a.count)),
            ),
            Change::MovedTo(to) => format!("moved to {to}"),
            Change::MovedFrom(from) => format!("moved from {from}"),
            Change::Same => continue,
        };
        let _ = writeln!(out, "  {} {}  {detail}", c.change.symbol(), c.path);
    }
    let shown: Vec<&Drift> = compared.drifts.iter().filter(|d| worth_showing(d)).collect();
    let drifted = compared.drifts.iter().filter(|d| d.drifted()).count();
    let _ = writeln!(
        out,
        "Drift: {} of {} fields in both sources drifted (PSI ≥ {} or null rate moved {} points; PSI {} and {} are credit-scoring practice).",
        drifted,
        compared.drifts.len(),
        psi::MAJOR_SHIFT,
        super::drift::NULL_RATE_SHIFT * 100.0,
        psi::SOME_SHIFT,
        psi::MAJOR_SHIFT
    );
    for d in shown {
        let _ = writeln!(out, "  {} {}: {}", if d.drifted() { "drifted" } else { "moved  " }, d.path, describe(d, no_examples));
    }
    out
}

/// Fields worth a line: drifted, a PSI worth a look, a null rate that moved,
/// or values new or gone.
pub fn worth_showing(d: &Drift) -> bool {
    d.drifted()
        || d.largest_psi() >= psi::SOME_SHIFT
        || (d.null_rate.1 - d.null_rate.0).abs() >= 0.01
        || d.categories.as_ref().is_some_and(|c| !c.new_values.is_empty() || !c.vanished_values.is_empty())
}

pub fn describe(d: &Drift, no_examples: bool) -> String {
    let mut parts = Vec::new();
    if (d.null_rate.1 - d.null_rate.0).abs() >= 0.0005 {
        parts.push(format!("null rate {:.1} % → {:.1} %", d.null_rate.0 * 100.0, d.null_rate.1 * 100.0));
    }
    if let Some(n) = &d.numbers {
        let p = if n.ks_p_value < 0.001 { "p < 0.001".to_string() } else { format!("p = {:.3}", n.ks_p_value) };
        let sketched = if n.exact { "" } else { ", from sketches" };
        parts.push(format!("KS D = {:.3} ({p}{sketched}) · PSI {:.3}", n.ks, n.psi));
    }
    if let Some(c) = &d.categories {
        parts.push(format!("PSI {:.3}", c.psi));
        if !no_examples && !c.new_values.is_empty() {
            parts.push(format!("new: {}", c.new_values.join(", ")));
        }
        if !no_examples && !c.vanished_values.is_empty() {
            parts.push(format!("gone: {}", c.vanished_values.join(", ")));
        }
    }
    if let Some((b, a)) = d.mean_length
        && (a - b).abs() >= 0.05 * b.max(1.0)
    {
        parts.push(format!("mean length {b:.1} → {a:.1}"));
    }
    if let Some((b, a)) = d.distinct
        && b != a
    {
        parts.push(format!("distinct {} → {}", group_digits(b), group_digits(a)));
    }
    parts.join(" · ")
}
