//! The report as one self-contained HTML file: no script, no network, no
//! external font; charts are inline SVG. Every value taken from the data
//! is escaped, and Unicode direction controls are shown as their code
//! points so text cannot be made to read backwards. It prints well and
//! reads on a phone-sized screen (tables scroll sideways, charts shrink).

use std::fmt::Write as _;

use super::{FieldEntry, Report};
use crate::compare::Compared;
use crate::format::{decimal, group_digits, human_bytes, share};
use crate::profile::numbers::Histogram;

const STYLE: &str = "
body{font-family:system-ui,sans-serif;margin:0 auto;max-width:60rem;padding:1rem;color:#1d2330;line-height:1.4}
h1{font-size:1.5rem}h2{font-size:1.15rem;margin:0}h3{font-size:1rem;margin:.8rem 0 .3rem}
.facts{color:#4a5368}.note{background:#fbf1dd;border-left:4px solid #a8620a;padding:.4rem .7rem}
section.field{border-top:1px solid #c9cfdb;padding:.8rem 0}
.tree ul{list-style:none;padding-left:1.1rem;margin:0}.tree{font-family:ui-monospace,monospace;font-size:.9rem}
.wide{overflow-x:auto}table{border-collapse:collapse;font-size:.9rem}
td,th{padding:.15rem .6rem .15rem 0;text-align:left;vertical-align:top}th{color:#4a5368;font-weight:normal}
td.n{text-align:right;font-variant-numeric:tabular-nums}
svg{max-width:100%;height:auto}.bar{fill:#5468a0}.fill{fill:#2e7d78}
.finding{margin:.2rem 0}.drifted{color:#b2282f}
@media print{body{max-width:none;font-size:10pt}a{color:inherit;text-decoration:none}h2,h3{break-after:avoid}table,svg,.finding{break-inside:avoid}}
";

/// Text from the data or a path, safe as HTML text and attribute values.
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            // Direction overrides and isolates, and other invisible controls.
            '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{200E}' | '\u{200F}' | '\u{061C}' => {
                let _ = write!(out, "[U+{:04X}]", c as u32);
            }
            c if c.is_control() && c != '\n' && c != '\t' => {
                let _ = write!(out, "[U+{:04X}]", c as u32);
            }
            c => out.push(c),
        }
    }
    out
}

/// The whole page for `report`, with the drift of a comparison when given
/// (`report` then describes the later source).
pub fn render(report: &Report, compared: Option<&Compared>) -> String {
    let mut out = String::new();
    let name = std::path::Path::new(&report.source.path)
        .file_name()
        .map_or(report.source.path.clone(), |n| n.to_string_lossy().into_owned());
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\
         <title>Profile of {}</title><style>{STYLE}</style></head><body>\n",
        escape(&name)
    );
    let _ = writeln!(out, "<h1>Profile of {}</h1>", escape(&name));
    facts(&mut out, report);
    tree(&mut out, report);
    if let Some(c) = compared {
        drift(&mut out, c, !report.examples_included);
    }
    out.push_str("<h2 id=\"fields\">Fields</h2>\n");
    for (i, f) in report.fields.iter().enumerate() {
        field(&mut out, i, f);
    }
    out.push_str("</body></html>\n");
    out
}

fn facts(out: &mut String, report: &Report) {
    let s = &report.source;
    let rows = s.rows.map_or_else(|| "rows unknown".to_string(), |r| format!("{} rows", group_digits(r)));
    let size = s.bytes.map_or_else(|| "size unknown".to_string(), human_bytes);
    let parts = s.parts.map_or_else(
        || "parts unknown".to_string(),
        |p| format!("{} part{}", group_digits(p as u64), if p == 1 { "" } else { "s" }),
    );
    let made_by = match &report.engine {
        Some(engine) => format!("computed by {} for Plumbline", escape(engine)),
        None => "made by Plumbline".to_string(),
    };
    let _ = writeln!(
        out,
        "<p class=\"facts\">{} · {} · {size} · {rows} · {parts} · {made_by} on {}</p>",
        escape(&s.path),
        escape(&s.format),
        escape(&report.generated_at)
    );
    for note in &report.approximations {
        let _ = writeln!(out, "<p class=\"note\">Estimated: {}</p>", escape(note));
    }
    if let Some(note) = &report.coverage_note {
        let _ = writeln!(
            out,
            "<p class=\"note\">{}: {}</p>",
            if report.partial { "PARTIAL" } else { "Note" },
            escape(note)
        );
    }
    if let Some(sample) = &report.sample {
        let _ = writeln!(out, "<p class=\"note\">SAMPLED: {}.</p>", escape(&sample.sampled().describe(sample.rows)));
    }
    out.push_str(if report.examples_included {
        "<p class=\"facts\">This report shows values from the data, which may be personal data.</p>\n"
    } else {
        "<p class=\"facts\">Data values were left out of this report.</p>\n"
    });
}

fn tree(out: &mut String, report: &Report) {
    out.push_str("<h2>Field tree</h2><div class=\"tree wide\"><ul>\n");
    let mut depth = 0;
    for (i, f) in report.fields.iter().enumerate() {
        while depth < f.depth {
            out.push_str("<ul>");
            depth += 1;
        }
        while depth > f.depth {
            out.push_str("</ul>");
            depth -= 1;
        }
        let marks = f.findings.as_ref().map_or(0, Vec::len);
        let marker =
            if marks > 0 { format!(" · {marks} finding{}", if marks == 1 { "" } else { "s" }) } else { String::new() };
        let _ = writeln!(out, "<li><a href=\"#f{i}\">{}</a> {}{marker}</li>", escape(&f.name), escape(&short_type(f)));
    }
    while depth > 0 {
        out.push_str("</ul>");
        depth -= 1;
    }
    out.push_str("</ul></div>\n");
}

/// The type without its members (`Struct`, `List`): the tree shows them below.
fn short_type(f: &FieldEntry) -> String {
    let full = type_of(f);
    match full.split_once('(') {
        Some((head, _)) if matches!(head, "Struct" | "List" | "LargeList" | "Map" | "FixedSizeList") => {
            head.to_string()
        }
        _ => full,
    }
}

fn type_of(f: &FieldEntry) -> String {
    f.declared_type.clone().unwrap_or_else(|| f.observed.clone())
}

fn drift(out: &mut String, compared: &Compared, no_examples: bool) {
    out.push_str("<h2>Compared with the earlier source</h2>\n");
    let _ = writeln!(out, "<p>Schema: {}</p>", escape(&crate::compare::summary(&compared.changes)));
    let shown: Vec<_> = compared.drifts.iter().filter(|d| crate::compare::text::worth_showing(d)).collect();
    if shown.is_empty() {
        out.push_str("<p>No field's values moved enough to list.</p>\n");
        return;
    }
    out.push_str("<div class=\"wide\"><table><tr><th>field</th><th></th><th>how the values moved</th></tr>\n");
    for d in shown {
        let (class, word) = if d.drifted() { (" class=\"drifted\"", "▲ drifted") } else { ("", "moved") };
        let _ = writeln!(
            out,
            "<tr><td>{}</td><td{class}>{word}</td><td>{}</td></tr>",
            escape(&d.path),
            escape(&crate::compare::text::describe(d, no_examples))
        );
    }
    out.push_str("</table></div>\n");
}

fn field(out: &mut String, i: usize, f: &FieldEntry) {
    let _ = writeln!(out, "<section class=\"field\" id=\"f{i}\"><h2>{}</h2>", escape(&f.path));
    let _ = writeln!(out, "<p>{} · observed {}</p>", escape(&type_of(f)), escape(&f.observed));
    let mut cells: Vec<(&str, String)> = vec![
        ("count", group_digits(f.count)),
        ("nulls", group_digits(f.nulls)),
        ("missing", group_digits(f.missing)),
        ("null or missing", share(f.nulls + f.missing, f.count)),
    ];
    if let Some(s) = &f.stats {
        if let Some(d) = s.distinct {
            let how = if s.distinct_exact == Some(true) { "" } else { " (estimate)" };
            cells.push(("distinct", format!("{}{how}", group_digits(d))));
        }
        for (label, v) in [("min", &s.min), ("max", &s.max)] {
            if let Some(v) = v {
                cells.push((label, json_text(v)));
            }
        }
        if let Some(m) = s.mean {
            cells.push(("mean", decimal(m)));
        }
        if let Some(sd) = s.std {
            cells.push(("std", decimal(sd)));
        }
        if let Some(q) = &s.quantiles {
            for (label, v) in q.labelled() {
                cells.push((label, decimal(v)));
            }
        }
        if let Some(e) = &s.earliest {
            cells.push(("earliest", escape(e)));
        }
        if let Some(l) = &s.latest {
            cells.push(("latest", escape(l)));
        }
    }
    out.push_str("<div class=\"wide\"><table>");
    for (label, value) in &cells {
        let _ = write!(out, "<tr><th>{label}</th><td class=\"n\">{}</td></tr>", escape(value));
    }
    out.push_str("</table></div>\n");
    if let Some(s) = &f.stats {
        if let Some(h) = &s.histogram {
            out.push_str("<h3>Histogram</h3>");
            histogram(out, h);
        }
        if let Some(c) = &s.calendar {
            out.push_str("<h3>By calendar</h3>");
            let bars: Vec<(String, u64)> = c.buckets.iter().map(|b| (b.label.clone(), b.count)).collect();
            bars_svg(out, &bars);
        }
        if let Some(top) = &s.top {
            top_values(out, top, f.count.saturating_sub(f.nulls + f.missing));
        }
        if let (Some(top), Some(bound)) = (&s.top, s.top_max_undercount)
            && top.is_empty()
        {
            let _ = writeln!(out, "<h3>Top values</h3><p>{}</p>", escape(&super::no_value_stands_out(bound)));
        }
        if let Some(l) = &s.lengths {
            let _ = writeln!(
                out,
                "<p>Text length: {} to {} characters, mean {}.</p>",
                decimal(l.min),
                decimal(l.max),
                decimal(l.mean)
            );
        }
        if let Some(l) = &s.list_lengths {
            let _ = writeln!(
                out,
                "<p>Elements per value: {} to {}, mean {}.</p>",
                decimal(l.min),
                decimal(l.max),
                decimal(l.mean)
            );
        }
    }
    if let Some(findings) = f.findings.as_ref().filter(|f| !f.is_empty()) {
        out.push_str("<h3>Findings</h3>\n");
        for finding in findings {
            let examples = if finding.examples.is_empty() {
                String::new()
            } else {
                format!(" — {}", escape(&finding.examples.join("; ")))
            };
            let _ = writeln!(
                out,
                "<p class=\"finding\"><strong>{}</strong>: {}{examples}</p>",
                escape(&finding.kind.replace('_', " ")),
                escape(&finding.message)
            );
        }
    }
    out.push_str("</section>\n");
}

fn json_text(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::String(s) => s.clone(),
        serde_json::Value::Number(n) => n.as_f64().map_or_else(|| n.to_string(), decimal),
        other => other.to_string(),
    }
}

fn histogram(out: &mut String, h: &Histogram) {
    let bars: Vec<(String, u64)> = h
        .counts
        .iter()
        .enumerate()
        .map(|(i, &c)| (format!("{} to {}", decimal(h.edges[i]), decimal(h.edges[i + 1])), c))
        .collect();
    bars_svg(out, &bars);
}

/// Bars in one SVG, each with its label and count as a tooltip and as text
/// for screen readers (the `<title>`).
fn bars_svg(out: &mut String, bars: &[(String, u64)]) {
    let max = bars.iter().map(|b| b.1).max().unwrap_or(0).max(1);
    let (width, height) = (600.0, 100.0);
    let step = width / bars.len().max(1) as f64;
    let _ = write!(out, "<svg viewBox=\"0 0 {width} {height}\" width=\"{width}\" height=\"{height}\" role=\"img\">");
    for (i, (label, count)) in bars.iter().enumerate() {
        let h = (*count as f64 / max as f64) * (height - 4.0);
        let _ = write!(
            out,
            "<rect class=\"bar\" x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{h:.1}\"><title>{}: {}</title></rect>",
            i as f64 * step,
            height - h,
            (step - 1.0).max(0.5),
            escape(label),
            group_digits(*count)
        );
    }
    out.push_str("</svg>\n");
}

fn top_values(out: &mut String, top: &[crate::profile::top::TopValue], present: u64) {
    if top.is_empty() {
        return;
    }
    out.push_str("<h3>Top values</h3><div class=\"wide\"><table>");
    for v in top {
        let w = if present == 0 { 0.0 } else { v.count as f64 / present as f64 * 120.0 };
        let _ = write!(
            out,
            "<tr><td>{}</td><td class=\"n\">{}</td><td><svg width=\"120\" height=\"10\" viewBox=\"0 0 120 10\"><rect class=\"fill\" width=\"{w:.1}\" height=\"10\"/></svg></td></tr>",
            escape(&v.value),
            group_digits(v.count)
        );
    }
    out.push_str("</table></div>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_and_direction_controls_are_escaped() {
        assert_eq!(escape("<script>alert('x')</script>"), "&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;");
        assert_eq!(escape("\"><img onerror=x>"), "&quot;&gt;&lt;img onerror=x&gt;");
        assert_eq!(escape("abc\u{202E}def"), "abc[U+202E]def");
        assert_eq!(escape("a\u{0}b"), "a[U+0000]b");
    }
}
