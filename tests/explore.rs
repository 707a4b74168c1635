//! Rows through polars against Plumbline's own profile of the same file: two
//! independent readers must agree. Every histogram bar, calendar bucket and
//! top value of the demo data, used as a filter, keeps exactly as many rows
//! as the profile counted; finding rows come back with the numbers the
//! profile gave them. List and map filters are checked against a count made
//! here with serde_json over the JSON Lines file.

use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;

use plumbline::explore::{Condition, RowFilter, RowSource};
use plumbline::report::{FieldEntry, Report, ReportOptions};
use plumbline::scan::{Scan, ScanOptions, scan_path};

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

fn scan(path: &Path) -> Scan {
    scan_path(path, Default::default(), ScanOptions::default(), &AtomicBool::new(false), &mut |_| {}).expect("opens")
}

struct Opened {
    report: Report,
    rows: RowSource,
}

fn open(name: &str) -> Opened {
    let scan = scan(&sample(name));
    let rows = RowSource::open(&scan.info).expect("polars scans the demo data");
    Opened { report: plumbline::report::build(&scan, ReportOptions::default()), rows }
}

impl Opened {
    fn field(&self, path: &str) -> &FieldEntry {
        self.report.fields.iter().find(|f| f.path == path).unwrap_or_else(|| panic!("no field {path}"))
    }

    fn count(&self, filters: &[RowFilter]) -> u64 {
        self.rows.count(filters).unwrap_or_else(|e| panic!("{filters:?}: {e}"))
    }
}

fn on(path: &str, condition: Condition) -> RowFilter {
    RowFilter::Field { path: path.to_string(), condition }
}

#[test]
fn every_row_is_there_in_every_format_in_read_order() {
    for name in ["deliveries.parquet", "deliveries.arrow", "deliveries.jsonl", "deliveries.csv"] {
        let o = open(name);
        assert_eq!(o.count(&[]), 3000, "{name}");
        let page = o.rows.page(&[], 2900, 500).unwrap();
        assert_eq!(page.offset, 2900);
        let numbers: Vec<u64> = page.rows.iter().map(|r| r.number).collect();
        assert_eq!(numbers, (2900..3000).collect::<Vec<_>>(), "{name}: the last page is cut at the end");
        let top_level: Vec<&str> = o.report.fields.iter().filter(|f| f.depth == 0).map(|f| f.name.as_str()).collect();
        assert_eq!(o.rows.columns(), top_level, "{name}: the columns are the top-level fields, in order");
    }
}

#[test]
fn every_histogram_bar_keeps_as_many_rows_as_it_counts() {
    for name in ["deliveries.parquet", "deliveries.jsonl"] {
        let o = open(name);
        // A float, a nested float32 and a decimal (text in the JSON: no histogram there).
        for path in ["distance_km", "parcel.weight_kg", "fee"] {
            let Some(h) = o.field(path).stats.as_ref().and_then(|s| s.histogram.as_ref()) else {
                assert!(name.ends_with("jsonl") && path == "fee", "{name} {path} has a histogram");
                continue;
            };
            assert!(h.exact, "the demo data is small enough for exact counts");
            for (i, count) in h.counts.iter().enumerate() {
                let last = i + 1 == h.counts.len();
                let filter =
                    on(path, Condition::Between { low: h.edges[i], high: h.edges[i + 1], high_inclusive: last });
                assert_eq!(o.count(&[filter]), *count, "{name} {path} bar {i}");
            }
        }
    }
}

#[test]
fn every_calendar_bucket_keeps_as_many_rows_as_it_counts() {
    // Parquet holds a timestamp with a zone; the JSON holds RFC 3339 text.
    for name in ["deliveries.parquet", "deliveries.jsonl"] {
        let o = open(name);
        let calendar = o.field("pickup.at").stats.as_ref().and_then(|s| s.calendar.as_ref()).expect("a calendar");
        assert!(calendar.buckets.len() >= 2);
        for b in &calendar.buckets {
            let filter = on("pickup.at", Condition::During { start: b.start, end: b.end });
            assert_eq!(o.count(&[filter]), b.count, "{name} {}", b.label);
        }
    }
}

#[test]
fn top_values_and_nulls_keep_as_many_rows_as_the_profile_counted() {
    for name in ["deliveries.parquet", "deliveries.jsonl", "deliveries.arrow"] {
        let o = open(name);
        for path in ["courier.vehicle", "status", "rating", "pickup.zone"] {
            let field = o.field(path);
            let top = field.stats.as_ref().and_then(|s| s.top.as_ref()).expect("top values");
            for t in top.iter().take(8) {
                let filter = on(path, Condition::OneOf(vec![t.value.clone()]));
                assert_eq!(o.count(&[filter]), t.count, "{name} {path} = {:?}", t.value);
            }
        }
        let dropoff = o.field("dropoff");
        assert_eq!(o.count(&[on("dropoff", Condition::Empty)]), dropoff.nulls + dropoff.missing, "{name}");
    }
}

#[test]
fn filters_combine_with_and() {
    let o = open("deliveries.parquet");
    let returned = on("status", Condition::OneOf(vec!["returned".into()]));
    let no_dropoff = on("dropoff", Condition::Empty);
    let both = o.count(&[returned.clone(), no_dropoff.clone()]);
    assert!(both > 0);
    assert!(both <= o.count(&[returned]).min(o.count(&[no_dropoff])));
}

#[test]
fn finding_rows_come_back_with_the_numbers_the_profile_gave_them() {
    let o = open("deliveries.jsonl");
    let field = o.field("zip_code");
    let finding = field.findings.as_ref().unwrap().iter().find(|f| f.kind == "mixed_kinds").expect("mixed kinds");
    let filter = RowFilter::behind_finding("zip_code", &finding.behind).expect("rows behind");
    let RowFilter::Rows(rows) = &filter else { panic!("{filter:?}") };
    let page = o.rows.page(std::slice::from_ref(&filter), 0, 100).unwrap();
    assert_eq!(page.rows.iter().map(|r| r.number).collect::<Vec<_>>(), *rows);
    let zip = o.rows.columns().iter().position(|c| c == "zip_code").unwrap();
    for (row, example) in page.rows.iter().zip(&field.examples) {
        assert_eq!(Some(row.number), example.row);
        assert_eq!(row.cells[zip].text, example.value, "row {}", row.number);
    }
}

#[test]
fn padded_text_and_placeholder_findings_keep_their_rows() {
    let o = open("deliveries.parquet");
    for (path, kind) in [("pickup.zone", "padded_text"), ("rating", "placeholder_values")] {
        let field = o.field(path);
        let finding = field.findings.as_ref().unwrap().iter().find(|f| f.kind == kind).expect(kind);
        let filter = RowFilter::behind_finding(path, &finding.behind).expect("rows behind");
        let RowFilter::Field { condition: Condition::OneOf(values), .. } = &filter else { panic!("{filter:?}") };
        let top = field.stats.as_ref().unwrap().top.as_ref().unwrap();
        let expected: u64 = top.iter().filter(|t| values.contains(&t.value)).map(|t| t.count).sum();
        assert!(expected > 0);
        assert_eq!(o.count(&[filter]), expected, "{path}");
    }
}

/// Rows of the JSON Lines demo file where `keep` holds, counted here.
fn json_rows_where(keep: impl Fn(&serde_json::Value) -> bool) -> u64 {
    let text = std::fs::read_to_string(sample("deliveries.jsonl")).unwrap();
    text.lines().map(|l| serde_json::from_str::<serde_json::Value>(l).unwrap()).filter(|v| keep(v)).count() as u64
}

#[test]
fn list_elements_and_map_values_filter_on_any_element() {
    let fragile = json_rows_where(|v| v["tags"].as_array().is_some_and(|t| t.iter().any(|x| x == "fragile")));
    let door_na = json_rows_where(|v| v["attributes"].as_object().is_some_and(|m| m.values().any(|x| x == "N/A")));
    let has_floor = json_rows_where(|v| v["attributes"].get("floor").is_some());
    assert!(fragile > 0 && door_na > 0 && has_floor > 0);
    let o = open("deliveries.parquet");
    assert_eq!(o.count(&[on("tags[]", Condition::OneOf(vec!["fragile".into()]))]), fragile);
    assert_eq!(o.count(&[on("attributes{}", Condition::OneOf(vec!["N/A".into()]))]), door_na);
    assert_eq!(o.count(&[on("attributes{key}", Condition::OneOf(vec!["floor".into()]))]), has_floor);
    let drops = json_rows_where(|v| v["stops"].as_array().is_some_and(|s| s.iter().any(|x| x["kind"] == "drop")));
    assert_eq!(o.count(&[on("stops[].kind", Condition::OneOf(vec!["drop".into()]))]), drops);
}

#[test]
fn nested_cells_are_compact_and_open_whole() {
    let o = open("deliveries.parquet");
    let page = o.rows.page(&[], 0, 1).unwrap();
    let pickup = o.rows.columns().iter().position(|c| c == "pickup").unwrap();
    let cell = &page.rows[0].cells[pickup];
    assert!(cell.text.starts_with("{zone: \"Quarry Gate\", at: 2026-03-02T06:07:19Z"), "{}", cell.text);
    let opened = cell.opened.as_deref().expect("a struct opens");
    assert!(opened.contains("\n  zone: \"Quarry Gate\",\n"), "{opened}");
}

#[test]
fn impossible_filters_and_unreadable_sources_say_what_and_where() {
    let o = open("deliveries.parquet");
    let e = o.rows.count(&[on("no_such_field", Condition::Empty)]).unwrap_err();
    assert!(
        e.to_string().contains("deliveries.parquet") && e.to_string().contains("no column \"no_such_field\""),
        "{e}"
    );
    let e =
        o.rows.count(&[on("status", Condition::Between { low: 0.0, high: 1.0, high_inclusive: false })]).unwrap_err();
    assert!(e.to_string().contains("status: a range of numbers on a str column"), "{e}");
    let e = o.rows.count(&[on("rating", Condition::OneOf(vec!["four".into()]))]).unwrap_err();
    assert!(e.to_string().contains("\"four\" is not a value of"), "{e}");

    let dir = tempfile::tempdir().unwrap();
    let gz = dir.path().join("rows.jsonl.gz");
    let mut encoder = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::default());
    std::io::Write::write_all(&mut encoder, b"{\"a\":1}\n").unwrap();
    std::fs::write(&gz, encoder.finish().unwrap()).unwrap();
    let e = RowSource::open(&scan(&gz).info).err().expect("compressed JSON Lines are refused");
    assert!(e.to_string().contains("rows.jsonl.gz") && e.to_string().contains("compressed"), "{e}");
}
