//! The JSON profile report (versioned; keys are added, never renamed) and
//! the atomic writing of any output file.
//!
//! Every key is documented in the README's "Report" section.

pub mod html;
pub mod read;
pub mod write;

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::scan::Scan;
use crate::shape::{FieldShape, Role};
use crate::source::{Compression, Facts};

pub const REPORT_VERSION: u32 = 1;

#[derive(Debug, Clone, Copy, Default)]
pub struct ReportOptions {
    /// Leave data values out (examples), for reports that may be shared.
    pub no_examples: bool,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Report {
    pub plumbline_report: u32,
    pub generated_at: String,
    /// True when the fields describe only part of the rows.
    pub partial: bool,
    /// Why the report is partial or schema-only; absent when complete.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub coverage_note: Option<String>,
    pub shape_only: bool,
    /// True when the fields describe a uniform sample of the rows read.
    pub sampled: bool,
    /// How the sample was drawn; absent when every row was profiled.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sample: Option<SampleSection>,
    pub examples_included: bool,
    /// The engine that computed a lake plan's report (`"spark"`); absent
    /// for Plumbline's own profiles.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub engine: Option<String>,
    /// What the engine estimated rather than counted, and within what error.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub approximations: Vec<String>,
    pub source: SourceSection,
    pub fields: Vec<FieldEntry>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SampleSection {
    /// Rows in the sample (also `source.rows`).
    pub rows: u64,
    /// Rows read, from which the sample was drawn.
    pub from_rows: u64,
    pub seed: u64,
    /// For a spread sample: how many pieces of the source were read, of how many.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pieces_read: Option<u64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pieces: Option<u64>,
}

impl SampleSection {
    /// The sample as the scan describes it.
    pub fn sampled(&self) -> crate::scan::Sampled {
        let spread = match (self.pieces_read, self.pieces) {
            (Some(pieces_read), Some(pieces)) => Some(crate::scan::Spread { pieces_read, pieces }),
            _ => None,
        };
        crate::scan::Sampled { from_rows: self.from_rows, seed: self.seed, spread }
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SourceSection {
    pub path: String,
    pub format: String,
    pub compression: Compression,
    /// Size on disk; null when the engine that wrote the report did not say.
    pub bytes: Option<u64>,
    /// Rows read, or the row count the metadata states when no rows were read.
    pub rows: Option<u64>,
    pub parts: Option<usize>,
    #[serde(default)]
    pub facts: Facts,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct FieldEntry {
    pub path: String,
    pub name: String,
    pub depth: usize,
    pub role: Role,
    /// Arrow's display of the declared type; null when the format has none.
    pub declared_type: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub declared_nullable: Option<bool>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub parquet: Option<crate::source::parquet::ParquetLeaf>,
    /// What the values come to: `int (uint8)`, `string (timestamp)`, `mixed: …`.
    pub observed: String,
    pub kinds: BTreeMap<String, u64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub int_range: Option<[i128; 2]>,
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub string_forms: BTreeMap<String, u64>,
    pub count: u64,
    pub nulls: u64,
    pub missing: u64,
    /// For mixed fields: values of the minority kinds, with their row.
    #[serde(default)]
    pub examples: Vec<ExampleEntry>,
    /// Quality notes with the values behind them (absent for `--shape-only`).
    /// Not read back: a report read in is judged afresh from its statistics.
    #[serde(skip_deserializing, skip_serializing_if = "Option::is_none")]
    pub findings: Option<Vec<crate::profile::findings::Finding>>,
    /// Statistics (absent for `--shape-only`).
    #[serde(flatten, skip_serializing_if = "Option::is_none")]
    pub stats: Option<StatsEntry>,
}

/// Statistics of a field's values. Numbers: ints, floats and decimals.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct StatsEntry {
    /// Distinct non-null scalar values; absent for objects, arrays and maps.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub distinct: Option<u64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub distinct_exact: Option<bool>,
    /// Relative standard error of a sketched distinct count.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub distinct_error: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min: Option<serde_json::Value>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max: Option<serde_json::Value>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mean: Option<f64>,
    /// Sample standard deviation (n − 1).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub std: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub quantiles: Option<Quantiles>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub quantiles_exact: Option<bool>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub quantiles_rank_error: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub histogram: Option<crate::profile::numbers::Histogram>,
    /// The 20 most frequent scalar values (left out under `--no-examples`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub top: Option<Vec<crate::profile::top::TopValue>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub top_exact: Option<bool>,
    /// When not exact: each count may be low by at most this much.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub top_max_undercount: Option<u64>,
    /// Text: length in characters.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lengths: Option<Lengths>,
    /// Lists and maps: elements per value `{min, mean, max, histogram}`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub list_lengths: Option<Lengths>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub empty: Option<u64>,
    /// Text with leading or trailing whitespace.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub padded: Option<u64>,
    /// Instants (zoned timestamps, RFC 3339 text): earliest and latest, UTC.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub earliest: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub latest: Option<String>,
    /// Share of instants after the profile started.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub future_share: Option<f64>,
    /// Instants per calendar bucket: `{unit, buckets: [{label, count}], exact}`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub calendar: Option<crate::profile::calendar::CalendarHistogram>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub nan: Option<u64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub infinite: Option<u64>,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Lengths {
    pub min: f64,
    pub mean: f64,
    pub max: f64,
    pub histogram: Option<crate::profile::numbers::Histogram>,
}

/// Top values kept in the report (the categorical histogram: these plus "other").
pub const TOP_VALUES: usize = 20;

/// What an empty list of top values from a summary means. A summary with
/// undercount bound b lists the values whose count it proves above b; a
/// value it does not list counted at most b, so occurs at most 2b times.
pub fn no_value_stands_out(max_undercount: u64) -> String {
    format!(
        "No value stands out: none occurs more than {} times.",
        crate::format::group_digits(max_undercount.saturating_mul(2))
    )
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Quantiles {
    pub p1: f64,
    pub p5: f64,
    pub p25: f64,
    pub p50: f64,
    pub p75: f64,
    pub p95: f64,
    pub p99: f64,
}

impl Quantiles {
    /// Each quantile with its report name, lowest first.
    pub fn labelled(&self) -> [(&'static str, f64); 7] {
        [
            ("p1", self.p1),
            ("p5", self.p5),
            ("p25", self.p25),
            ("p50", self.p50),
            ("p75", self.p75),
            ("p95", self.p95),
            ("p99", self.p99),
        ]
    }
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct ExampleEntry {
    pub kind: String,
    /// `null` when the example's row was not counted (a spread sample of a text file).
    pub row: Option<u64>,
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
        generated_at: scan.from_report.as_ref().map_or_else(crate::time::now_rfc3339, |r| r.generated_at.clone()),
        partial: scan.coverage.is_partial(),
        coverage_note: scan.coverage.describe(),
        shape_only: matches!(scan.coverage, crate::scan::Coverage::SchemaOnly | crate::scan::Coverage::FirstRows(_)),
        sampled: scan.sample.is_some(),
        sample: scan.sample.map(|s| SampleSection {
            rows: scan.shape.rows,
            from_rows: s.from_rows,
            seed: s.seed,
            pieces_read: s.spread.map(|p| p.pieces_read),
            pieces: s.spread.map(|p| p.pieces),
        }),
        examples_included: !options.no_examples,
        engine: scan.from_report.as_ref().and_then(|r| r.engine.clone()),
        approximations: scan.from_report.as_ref().map(|r| r.approximations.clone()).unwrap_or_default(),
        source: SourceSection {
            path: info.path.display().to_string(),
            format: info.format.label().to_string(),
            compression: info.compression,
            bytes: Some(info.bytes),
            rows,
            parts: Some(info.parts),
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
            .map(|(kind, e)| ExampleEntry { kind: kind.name().to_string(), row: e.row, value: e.value.clone() })
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
        kinds: f.kinds.iter().map(|(k, n)| (k.name().to_string(), n)).collect(),
        int_range: f.kinds.int_range.map(|(lo, hi)| [lo, hi]),
        string_forms: f.kinds.forms.iter().map(|(form, n)| (form.to_string(), n)).collect(),
        count: f.count,
        nulls: f.nulls(),
        missing: f.missing,
        examples,
        findings: f.stats.is_some().then(|| {
            let mut found = crate::profile::findings::findings(f);
            if options.no_examples {
                found.iter_mut().for_each(|x| x.examples.clear());
            }
            found
        }),
        stats: f.stats.as_deref().map(|s| stats_entry(f, s, options)),
    }
}

fn lengths(n: &crate::profile::numbers::NumberStats) -> Option<Lengths> {
    let m = &n.moments;
    Some(Lengths { min: m.min()?, mean: m.mean()?, max: m.max()?, histogram: n.histogram() })
}

fn stats_entry(f: &FieldShape, stats: &crate::profile::field::FieldStats, options: ReportOptions) -> StatsEntry {
    let distinct = stats.distinct_count();
    let numbers = stats.numbers.as_ref().filter(|n| n.moments.count() > 0);
    // Integers keep their exact range; other numbers report the float one.
    let int_only = f.kinds.unified() == crate::shape::Unified::One(crate::shape::Kind::Int);
    let (min, max) = match (f.kinds.int_range, numbers) {
        (Some((lo, hi)), _) if int_only => (Some(serde_json::json!(lo)), Some(serde_json::json!(hi))),
        (_, Some(n)) => (n.moments.min().map(|v| serde_json::json!(v)), n.moments.max().map(|v| serde_json::json!(v))),
        _ => (None, None),
    };
    let quantiles = numbers.and_then(|n| n.quantiles());
    StatsEntry {
        distinct: distinct.map(|d| d.value),
        distinct_exact: distinct.map(|d| d.exact),
        distinct_error: distinct.filter(|d| !d.exact).map(|d| d.standard_error),
        min,
        max,
        mean: numbers.and_then(|n| n.moments.mean()),
        std: numbers.and_then(|n| n.moments.std()),
        quantiles: quantiles.as_ref().filter(|q| q.values.len() == 7).map(|q| Quantiles {
            p1: q.values[0],
            p5: q.values[1],
            p25: q.values[2],
            p50: q.values[3],
            p75: q.values[4],
            p95: q.values[5],
            p99: q.values[6],
        }),
        quantiles_exact: quantiles.as_ref().map(|q| q.exact),
        quantiles_rank_error: quantiles.as_ref().and_then(|q| q.rank_error),
        histogram: numbers.and_then(|n| n.histogram()),
        top: (!options.no_examples && stats.top.total() > 0).then(|| stats.top.top(TOP_VALUES)),
        top_exact: (stats.top.total() > 0).then(|| stats.top.is_exact()),
        top_max_undercount: (!stats.top.is_exact()).then(|| stats.top.max_undercount()),
        lengths: stats.text.as_ref().and_then(|t| lengths(&t.lengths)),
        list_lengths: stats.list_lengths.as_ref().and_then(lengths),
        empty: stats.text.as_ref().map(|t| t.empty),
        padded: stats.text.as_ref().map(|t| t.padded),
        earliest: stats.instants.as_ref().map(|i| crate::time::rfc3339_from_unix(i.min)),
        latest: stats.instants.as_ref().map(|i| crate::time::rfc3339_from_unix(i.max)),
        future_share: stats.instants.as_ref().map(|i| i.future as f64 / i.count.max(1) as f64),
        calendar: stats.instants.as_ref().and_then(|i| {
            if i.seconds.is_reported() { i.calendar.clone() } else { crate::profile::calendar::histogram(&i.seconds) }
        }),
        nan: stats.numbers.as_ref().map(|n| n.nan).filter(|&n| n > 0),
        infinite: stats.numbers.as_ref().map(|n| n.pos_inf + n.neg_inf).filter(|&n| n > 0),
    }
}

pub fn to_json(report: &Report) -> String {
    serde_json::to_string_pretty(report).expect("report types serialize")
}
