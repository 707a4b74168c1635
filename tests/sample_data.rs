//! The committed demo data is exactly what its seeded generator writes, and
//! it shows what the README promises.

#[path = "../sample-data/generate.rs"]
mod generate;

mod common;

use std::path::Path;

use plumbline::scan::{SampleOptions, ScanOptions};
use plumbline::shape::Kind;

fn sample(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

#[test]
fn committed_files_match_the_generator() {
    let dir = tempfile::tempdir().unwrap();
    generate::write_all(dir.path()).unwrap();
    for name in [
        "deliveries.jsonl",
        "deliveries.parquet",
        "deliveries.arrow",
        "deliveries.csv",
        "later/deliveries.jsonl",
        "later/deliveries.parquet",
    ] {
        let fresh = std::fs::read(dir.path().join(name)).unwrap();
        let committed = std::fs::read(sample(name)).unwrap();
        assert!(
            fresh == committed,
            "sample-data/{name} differs from the generator's output; run `cargo run --example make-sample-data`"
        );
    }
}

#[test]
fn the_demo_shows_nesting_nulls_missing_and_mixed_kinds() {
    let scan = common::full(&sample("deliveries.jsonl")).unwrap();
    assert_eq!(scan.shape.rows, generate::FIRST_DROP_ROWS as u64);
    let note = scan.shape.find("note").unwrap();
    assert!(note.nulls() > 0 && note.missing > 0, "note has both nulls and missing keys");
    let zip = scan.shape.find("zip_code").unwrap();
    assert_eq!(zip.kinds.unified(), plumbline::shape::Unified::Mixed);
    assert!(!zip.minority_examples().is_empty());
    assert!(scan.shape.find("stops[].eta").unwrap().kinds.forms.timestamp > 0);
    assert!(scan.shape.find("booked_local").unwrap().kinds.forms.timestamp_no_zone > 0);
    let parquet = common::full(&sample("deliveries.parquet")).unwrap();
    assert_eq!(parquet.shape.find("attributes{key}").unwrap().kinds.get(Kind::String) > 0, true);
    assert!(
        parquet
            .shape
            .find("parcel.declared_value")
            .unwrap()
            .declared
            .as_ref()
            .unwrap()
            .arrow
            .contains("Decimal128(10, 2)")
    );
}

#[test]
fn the_later_drop_drifts_as_described() {
    let later = common::full(&sample("later/deliveries.jsonl")).unwrap();
    assert!(later.shape.find("co2_grams").is_some(), "a field added");
    assert!(later.shape.find("courier.vehicle").unwrap().missing > 0, "a field now sometimes missing");
    let parquet = common::full(&sample("later/deliveries.parquet")).unwrap();
    assert_eq!(parquet.shape.find("rating").unwrap().declared.as_ref().unwrap().arrow, "Float32", "a type changed");
}

#[test]
fn the_demo_shows_every_finding_where_the_readme_says() {
    use plumbline::profile::findings::findings;
    let scan = common::full(&sample("deliveries.jsonl")).unwrap();
    let kinds =
        |path: &str| -> Vec<&'static str> { findings(scan.shape.find(path).unwrap()).iter().map(|f| f.kind).collect() };
    let expect = [
        ("note", "mostly_empty"),
        ("currency", "single_value"),
        ("delivery_id", "unique_per_row"),
        ("zip_code", "mixed_kinds"),
        ("parcel.declared_value", "numbers_as_text"),
        ("tags[]", "case_variants"),
        ("pickup.zone", "padded_text"),
        ("rating", "placeholder_values"),
        ("attributes.door_code", "placeholder_values"),
        ("distance_km", "far_outliers"),
        ("dropoff.at", "instants_in_the_future"),
        ("status", "dominant_value"),
    ];
    for (path, kind) in expect {
        assert!(kinds(path).contains(&kind), "{path}: {kind} not in {:?}", kinds(path));
    }
    assert!(!kinds("pickup.lat").contains(&"unique_per_row"), "distinct floats are not a key");
    let outliers =
        findings(scan.shape.find("distance_km").unwrap()).into_iter().find(|f| f.kind == "far_outliers").unwrap();
    assert_eq!(outliers.examples, vec!["999".to_string()]);
    let variants =
        findings(scan.shape.find("tags[]").unwrap()).into_iter().find(|f| f.kind == "case_variants").unwrap();
    assert!(
        variants.examples.iter().any(|g| g.contains("fragile") && g.contains("FRAGILE")),
        "{:?}",
        variants.examples
    );
}

/// The statistics of two reports agree field by field.
fn assert_same_statistics(left: &serde_json::Value, right: &serde_json::Value) {
    let fields = |r: &serde_json::Value| r["fields"].as_array().unwrap().clone();
    let (lf, rf) = (fields(left), fields(right));
    assert_eq!(lf.len(), rf.len());
    for (l, r) in lf.iter().zip(&rf) {
        assert_eq!(l["path"], r["path"]);
        for key in [
            "count",
            "nulls",
            "missing",
            "kinds",
            "distinct",
            "distinct_exact",
            "min",
            "max",
            "quantiles",
            "top_exact",
            "findings",
            "calendar",
        ] {
            assert_eq!(l.get(key), r.get(key), "{}: {key}", l["path"]);
        }
        if l["top_exact"] == true {
            assert_eq!(l.get("top"), r.get("top"), "{}: top", l["path"]);
        } else if let (Some(lt), Some(rt)) = (l["top"].as_array(), r["top"].as_array()) {
            // A summary merged in another order may differ, within its bound.
            let bound = l["top_max_undercount"].as_u64().unwrap().max(r["top_max_undercount"].as_u64().unwrap());
            for lv in lt {
                if let Some(rv) = rt.iter().find(|rv| rv["value"] == lv["value"]) {
                    let (a, b) = (lv["count"].as_u64().unwrap(), rv["count"].as_u64().unwrap());
                    assert!(a.abs_diff(b) <= bound, "{}: top {lv} vs {rv}", l["path"]);
                }
            }
        }
        if let (Some(x), Some(y)) = (l["mean"].as_f64(), r["mean"].as_f64()) {
            assert!((x - y).abs() <= 1e-12 * y.abs().max(1.0), "{}: mean {x} vs {y}", l["path"]);
        }
    }
}

fn report_of(name: &str, options: ScanOptions) -> serde_json::Value {
    use plumbline::report::{ReportOptions, build};
    let scan = common::scan_with_timeout(&sample(name), options, std::time::Duration::from_secs(120)).unwrap();
    serde_json::to_value(build(&scan, ReportOptions::default())).unwrap()
}

#[test]
fn parquet_read_in_parallel_equals_the_same_rows_read_in_order_from_ipc() {
    // The Parquet file has 3 row groups, profiled in parallel and merged;
    // the IPC file holds the same rows and is read in order.
    let options = ScanOptions::default();
    assert_same_statistics(&report_of("deliveries.parquet", options), &report_of("deliveries.arrow", options));
}

#[test]
fn a_seeded_sample_draws_the_same_rows_whatever_the_batches() {
    // Parquet (row groups of 1,000) and IPC (other batch sizes) hold the
    // same rows: the same seed must pick the same ones.
    let options =
        ScanOptions { sample: Some(SampleOptions { rows: 700, seed: 3, every_row: false }), ..Default::default() };
    let parquet = report_of("deliveries.parquet", options);
    assert_eq!((parquet["sampled"].as_bool(), parquet["source"]["rows"].as_u64()), (Some(true), Some(700)));
    assert_eq!(parquet["sample"]["from_rows"], 3000);
    assert_same_statistics(&parquet, &report_of("deliveries.arrow", options));
    let other_seed =
        ScanOptions { sample: Some(SampleOptions { rows: 700, seed: 4, every_row: false }), ..Default::default() };
    let fee = |r: &serde_json::Value| {
        r["fields"].as_array().unwrap().iter().find(|f| f["path"] == "fee").unwrap()["mean"].clone()
    };
    assert_ne!(fee(&parquet), fee(&report_of("deliveries.parquet", other_seed)));
}
