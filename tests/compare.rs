//! Comparing the demo data with its later drop: the changes found are
//! exactly the drift `sample-data/generate.rs` put in (see
//! sample-data/README.md) — nothing more, nothing less.

use std::path::Path;
use std::sync::atomic::AtomicBool;

use plumbline::compare::{Change, compare_shapes, summary};
use plumbline::scan::{ScanOptions, scan_path};

fn shape_of(path: &str) -> plumbline::shape::Shape {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join(path);
    let options = ScanOptions { skip_statistics: true, ..Default::default() };
    scan_path(&path, Default::default(), options, &AtomicBool::new(false), &mut |_| {}).expect("demo data opens").shape
}

fn changed(before: &str, after: &str) -> Vec<(String, Change)> {
    compare_shapes(&shape_of(before), &shape_of(after))
        .into_iter()
        .filter(|c| c.change != Change::Same)
        .map(|c| (c.path, c.change))
        .collect()
}

#[test]
fn the_later_parquet_drop_shows_exactly_the_drift_put_in() {
    let changes = changed("sample-data/deliveries.parquet", "sample-data/later/deliveries.parquet");
    assert_eq!(
        changes,
        vec![
            ("courier.vehicle".to_string(), Change::EmptinessChanged),
            ("rating".to_string(), Change::TypeChanged),
            ("co2_grams".to_string(), Change::Added),
        ]
    );
}

#[test]
fn the_later_json_lines_drop_shows_the_same_drift() {
    let changes = changed("sample-data/deliveries.jsonl", "sample-data/later/deliveries.jsonl");
    let paths: Vec<&str> = changes.iter().map(|(p, _)| p.as_str()).collect();
    assert!(changes.contains(&("co2_grams".to_string(), Change::Added)), "{changes:?}");
    assert!(changes.contains(&("rating".to_string(), Change::TypeChanged)), "{changes:?}");
    assert!(changes.contains(&("courier.vehicle".to_string(), Change::EmptinessChanged)), "{changes:?}");
    assert_eq!(paths.len(), 3, "{changes:?}");
}

#[test]
fn the_other_way_round_added_becomes_removed_and_a_source_equals_itself() {
    let back = changed("sample-data/later/deliveries.parquet", "sample-data/deliveries.parquet");
    assert!(back.contains(&("co2_grams".to_string(), Change::Removed)), "{back:?}");
    let same = compare_shapes(&shape_of("sample-data/deliveries.parquet"), &shape_of("sample-data/deliveries.parquet"));
    assert!(same.iter().all(|c| c.change == Change::Same));
    assert_eq!(summary(&same), "No field changed.");
    let drift = compare_shapes(&shape_of("sample-data/deliveries.parquet"), &shape_of("sample-data/later/deliveries.parquet"));
    assert_eq!(summary(&drift), "+ 1 added · ~ 1 type changed · ~ 1 nulls or missing keys changed");
}
