//! Reading a report back: the JSON that `profile --json` or a lake plan's
//! driver wrote, as a [`Scan`] whose statistics are the report's own, so
//! the window, `compare` and `fit` treat it like a profile made here. No
//! rows stand behind it: what needs rows (Rows, counting rows in `fit`)
//! says so instead.

use std::path::{Path, PathBuf};
use std::str::FromStr;

use super::{FieldEntry, REPORT_VERSION, Report, StatsEntry};
use crate::profile::distinct::{Distinct, DistinctCount};
use crate::profile::field::{FieldStats, Instants};
use crate::profile::moments::Moments;
use crate::profile::numbers::{NumberStats, QuantileSet, Reported};
use crate::profile::text::TextStats;
use crate::profile::top::TopValues;
use crate::scan::{Coverage, FromReport, Scan};
use crate::shape::{Declared, FieldShape, Kind, Role, Shape};
use crate::source::{Format, SourceError, SourceInfo};

/// Largest report read (a report is a summary: even 10,000 fields stay far below).
pub const MAX_REPORT_BYTES: u64 = 512 * 1024 * 1024;
/// Bytes looked at to tell a report from a JSON data file.
const SNIFF_BYTES: usize = 4096;

/// Whether `path` is a file that starts like a Plumbline report (an object
/// whose first key is `plumbline_report`).
pub fn looks_like_report(path: &Path) -> bool {
    use std::io::Read;
    let Ok(file) = std::fs::File::open(path) else { return false };
    let mut head = Vec::with_capacity(SNIFF_BYTES);
    if file.take(SNIFF_BYTES as u64).read_to_end(&mut head).is_err() {
        return false;
    }
    let text = String::from_utf8_lossy(&head);
    let rest = text.trim_start_matches('\u{feff}').trim_start();
    rest.strip_prefix('{').is_some_and(|r| r.trim_start().starts_with("\"plumbline_report\""))
}

/// Reads the report at `path` as a scan.
pub fn read(path: &Path) -> Result<Scan, SourceError> {
    let bad = |message: String| SourceError::Report { path: path.to_path_buf(), message };
    let io = |source| SourceError::Io { path: path.to_path_buf(), source };
    let bytes = std::fs::metadata(path).map_err(io)?.len();
    if bytes > MAX_REPORT_BYTES {
        return Err(bad(format!("{bytes} bytes is larger than any report ({MAX_REPORT_BYTES} bytes at most)")));
    }
    let text = std::fs::read_to_string(path).map_err(io)?;
    let value: serde_json::Value = serde_json::from_str(&text).map_err(|e| bad(format!("not JSON: {e}")))?;
    match value.get("plumbline_report").and_then(|v| v.as_u64()) {
        None => return Err(bad("not a Plumbline report (no \"plumbline_report\" version)".into())),
        Some(v) if v > u64::from(REPORT_VERSION) => {
            return Err(bad(format!("report version {v} is newer than this Plumbline reads ({REPORT_VERSION})")));
        }
        Some(_) => {}
    }
    let report: Report =
        serde_json::from_str(&text).map_err(|e| bad(format!("not a report as Plumbline writes one: {e}")))?;
    scan_of(&report, path).map_err(bad)
}

fn scan_of(report: &Report, file: &Path) -> Result<Scan, String> {
    let s = &report.source;
    let format = Format::from_label(&s.format)
        .ok_or_else(|| format!("source format {:?} is not one Plumbline reads", s.format))?;
    let info = SourceInfo {
        path: PathBuf::from(&s.path),
        format,
        compression: s.compression,
        bytes: s.bytes.unwrap_or(0),
        parts: s.parts.unwrap_or(1),
        rows: s.rows,
        schema: None,
        parquet_leaves: None,
        facts: s.facts.clone(),
    };
    let mut root = FieldShape::new("", String::new(), Role::Member);
    let mut next = 0;
    fill(&mut root, &report.fields, &mut next, 0)?;
    let coverage = match (report.shape_only, report.partial) {
        (true, false) => Coverage::SchemaOnly,
        (true, true) => Coverage::FirstRows(s.rows.unwrap_or(0)),
        (false, true) => Coverage::PartialReport(
            report.coverage_note.clone().unwrap_or_else(|| "the report says it is partial".into()),
        ),
        (false, false) => Coverage::Full,
    };
    let sample = report.sample.as_ref().map(|x| x.sampled());
    Ok(Scan {
        info,
        shape: Shape { rows: s.rows.unwrap_or(0), fields: root.children },
        coverage,
        sample,
        from_report: Some(FromReport {
            file: file.to_path_buf(),
            engine: report.engine.clone(),
            approximations: report.approximations.clone(),
            generated_at: report.generated_at.clone(),
        }),
    })
}

/// Adds the entries from `next` on that sit at `depth` (with what lies
/// under each) as children of `parent`.
fn fill(parent: &mut FieldShape, entries: &[FieldEntry], next: &mut usize, depth: usize) -> Result<(), String> {
    while let Some(e) = entries.get(*next) {
        if e.depth < depth {
            return Ok(());
        }
        let at = format!("field {} ({})", *next + 1, e.path);
        if e.depth > depth {
            return Err(format!("{at}: depth {} where at most {depth} can follow", e.depth));
        }
        let key = match crate::path::steps(&e.path).and_then(|s| s.last().cloned()) {
            Some(crate::path::Step::Member(name)) => name,
            Some(_) => e.name.clone(),
            None => return Err(format!("{at}: not a field path")),
        };
        let node = parent.child_mut_named(&key, &e.name, e.role);
        if node.path != e.path {
            return Err(format!("{at}: the path does not follow from its parent ({} expected)", node.path));
        }
        set_field(node, e).map_err(|why| format!("{at}: {why}"))?;
        *next += 1;
        fill(node, entries, next, depth + 1)?;
    }
    Ok(())
}

fn set_field(node: &mut FieldShape, e: &FieldEntry) -> Result<(), String> {
    if let Some(arrow) = &e.declared_type {
        let data_type = arrow_schema::DataType::from_str(arrow)
            .map_err(|_| format!("declared type {arrow:?} is not an Arrow type"))?;
        node.declared = Some(Declared {
            arrow: arrow.clone(),
            data_type,
            nullable: e.declared_nullable.unwrap_or(true),
            parquet: e.parquet.clone(),
        });
    }
    for (name, &n) in &e.kinds {
        let kind = Kind::from_name(name).ok_or_else(|| format!("unknown kind {name:?}"))?;
        node.kinds.add(kind, n);
    }
    if let Some([lo, hi]) = e.int_range {
        node.kinds.widen_int_range(lo, hi);
    }
    for (form, &n) in &e.string_forms {
        node.kinds.forms.set(form, n).ok_or_else(|| format!("unknown text form {form:?}"))?;
    }
    if e.nulls != node.kinds.get(Kind::Null) {
        return Err(format!("{} nulls, but {} among its kinds", e.nulls, node.kinds.get(Kind::Null)));
    }
    if e.missing > e.count {
        return Err(format!("{} missing of {} places", e.missing, e.count));
    }
    node.count = e.count;
    node.missing = e.missing;
    node.appeared = e.count - e.missing;
    for x in &e.examples {
        let kind = Kind::from_name(&x.kind).ok_or_else(|| format!("unknown kind {:?} in an example", x.kind))?;
        node.examples.entry(kind).or_default().push(crate::shape::Example { row: x.row, value: x.value.clone() });
    }
    node.stats = e.stats.as_ref().filter(|s| !is_empty(s)).map(|s| Box::new(stats_of(node, s)));
    if let Some(s) = e.stats.as_ref()
        && node.kinds.unified() == crate::shape::Unified::One(Kind::Int)
        && e.int_range.is_none()
        && let (Some(lo), Some(hi)) = (s.min.as_ref().and_then(as_i128), s.max.as_ref().and_then(as_i128))
    {
        // An engine states an integer field's range only as its min and max.
        node.kinds.widen_int_range(lo, hi);
    }
    Ok(())
}

fn as_i128(v: &serde_json::Value) -> Option<i128> {
    v.as_i64().map(i128::from).or_else(|| v.as_u64().map(i128::from))
}

/// A shape-only report's fields carry no statistics at all.
fn is_empty(s: &StatsEntry) -> bool {
    s.distinct.is_none()
        && s.mean.is_none()
        && s.top_exact.is_none()
        && s.lengths.is_none()
        && s.list_lengths.is_none()
        && s.earliest.is_none()
}

fn stats_of(node: &FieldShape, s: &StatsEntry) -> FieldStats {
    let mut stats = FieldStats::default();
    if let Some(value) = s.distinct {
        let exact = s.distinct_exact.unwrap_or(false);
        stats.distinct =
            Distinct::reported(DistinctCount { value, exact, standard_error: s.distinct_error.unwrap_or(0.0) });
    }
    let (nan, infinite) = (s.nan.unwrap_or(0), s.infinite.unwrap_or(0));
    if let Some(mean) = s.mean {
        let numbers = [Kind::Int, Kind::Float, Kind::Decimal].iter().map(|k| node.kinds.get(*k)).sum::<u64>();
        let count = numbers.saturating_sub(nan + infinite);
        let number = |v: &Option<serde_json::Value>| v.as_ref().and_then(|v| v.as_f64()).unwrap_or(mean);
        let moments = Moments::from_summary(count, mean, s.std, number(&s.min), number(&s.max));
        let quantiles = s.quantiles.as_ref().map(|q| QuantileSet {
            values: vec![q.p1, q.p5, q.p25, q.p50, q.p75, q.p95, q.p99],
            exact: s.quantiles_exact.unwrap_or(false),
            rank_error: s.quantiles_rank_error,
        });
        let every_value = every_value(s, count);
        stats.numbers = Some(NumberStats::from_report(
            moments,
            Reported { quantiles, histogram: s.histogram.clone(), nan, infinite, every_value },
        ));
    }
    if let Some(top) = &s.top {
        let present = node.kinds.non_null();
        stats.top = TopValues::reported(top, present, s.top_exact.unwrap_or(false), s.top_max_undercount.unwrap_or(0));
    }
    if let Some(l) = &s.lengths {
        let strings = node.kinds.get(Kind::String);
        stats.text = Some(TextStats {
            lengths: lengths_of(l, strings),
            empty: s.empty.unwrap_or(0),
            padded: s.padded.unwrap_or(0),
        });
    }
    if let Some(l) = &s.list_lengths {
        stats.list_lengths = Some(lengths_of(l, node.kinds.get(Kind::Array) + node.kinds.get(Kind::Map)));
    }
    let secs = |t: &Option<String>| t.as_deref().and_then(crate::time::rfc3339_seconds);
    if let (Some(min), Some(max)) = (secs(&s.earliest), secs(&s.latest)) {
        let count = node.kinds.get(Kind::Timestamp) + node.kinds.forms.timestamp;
        let future = (s.future_share.unwrap_or(0.0) * count as f64).round() as u64;
        let moments = Moments::from_summary(count, (min as f64 + max as f64) / 2.0, None, min as f64, max as f64);
        stats.instants = Some(Instants {
            min,
            max,
            count,
            future,
            seconds: NumberStats::from_report(moments, Reported::default()),
            calendar: s.calendar.clone(),
        });
    }
    stats
}

/// The finite numbers with their counts, when the exact top values hold
/// every one of the `count` (a field of few distinct numbers).
fn every_value(s: &StatsEntry, count: u64) -> Vec<(f64, u64)> {
    let Some(top) = s.top.as_ref().filter(|_| s.top_exact == Some(true)) else { return Vec::new() };
    let parsed: Option<Vec<(f64, u64)>> =
        top.iter().map(|t| t.value.parse::<f64>().ok().filter(|v| v.is_finite()).map(|v| (v, t.count))).collect();
    match parsed {
        Some(values) if values.iter().map(|v| v.1).sum::<u64>() == count => values,
        _ => Vec::new(),
    }
}

fn lengths_of(l: &super::Lengths, count: u64) -> NumberStats {
    let moments = Moments::from_summary(count, l.mean, None, l.min, l.max);
    NumberStats::from_report(moments, Reported { histogram: l.histogram.clone(), ..Default::default() })
}
