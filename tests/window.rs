//! The window driven headless with egui_kittest: the real app state, widgets
//! found by their accessible labels.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use plumbline::gui::PlumblineApp;
use plumbline::gui::state::Intent;

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

fn window(path: PathBuf) -> Harness<'static, Option<PlumblineApp>> {
    Harness::builder().with_size([1100.0, 720.0]).build_ui_state(
        move |ui, app: &mut Option<PlumblineApp>| {
            let app = app.get_or_insert_with(|| PlumblineApp::new(ui.ctx().clone(), Some(path.clone())));
            app.frame(ui);
        },
        None,
    )
}

/// Steps frames until the background read has finished.
fn wait_for_read(h: &mut Harness<'static, Option<PlumblineApp>>) {
    let start = Instant::now();
    loop {
        h.step();
        if h.state().as_ref().is_some_and(|app| !app.is_busy()) {
            break;
        }
        assert!(start.elapsed() < Duration::from_secs(60), "the read did not finish");
        std::thread::sleep(Duration::from_millis(5));
    }
    h.step();
    h.step();
}

#[test]
fn opens_the_demo_parquet_and_shows_facts_and_nested_fields() {
    let mut h = window(sample("deliveries.parquet"));
    wait_for_read(&mut h);
    h.get_by_label_contains("Parquet · 316.5 KiB · 3,000 rows · 1 part");
    h.get_by_label_contains("3 row groups");
    h.get_by_label("· every row read");
    // The nested struct and its members, with types and null counts.
    h.get_by_label_contains("pickup   struct");
    h.get_by_label_contains("dropoff   struct · 144 null");
    let zones = h.get_all_by_label_contains("zone   utf8").count();
    assert_eq!(zones, 2, "pickup.zone and dropoff.zone");
    h.get_by_label_contains("eta   timestamp").click();
    h.step();
    assert_eq!(h.state().as_ref().unwrap().state.selected.as_deref(), Some("stops[].eta"));
}

#[test]
fn json_lines_show_missing_keys_apart_from_nulls() {
    let mut h = window(sample("deliveries.jsonl"));
    wait_for_read(&mut h);
    h.get_by_label_contains("JSON Lines");
    h.get_by_label_contains("note   string · 1,279 null · 1,106 missing · 3 distinct");
    h.get_by_label_contains("zip_code   mixed: int 3%, string 97%");
}

#[test]
fn a_bad_file_shows_a_message_and_the_window_keeps_working() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("noise.bin");
    std::fs::write(&bad, [0u8, 1, 2, 3, 250, 251, 0, 7]).unwrap();
    let mut h = window(bad);
    wait_for_read(&mut h);
    h.get_by_label_contains("cannot tell the format");
    h.get_by_label("Dismiss").click();
    h.step();
    assert!(h.state().as_ref().unwrap().state.message.is_none());
    h.state_mut().as_mut().unwrap().apply(Intent::Open(sample("deliveries.csv")));
    wait_for_read(&mut h);
    h.get_by_label_contains("CSV · ");
    h.get_by_label_contains("delivery_id   string (uuid)");
}

#[test]
fn a_source_broken_half_way_is_shown_as_partial() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("broken.jsonl");
    std::fs::write(&path, "{\"a\":1}\n{\"a\":2}\n{\"a\":\n").unwrap();
    let mut h = window(path);
    wait_for_read(&mut h);
    h.get_by_label_contains("Partial: the source broke after 2 rows");
    h.get_by_label_contains("a   int (uint8)");
}

#[test]
fn the_stop_button_stops_the_read_and_the_result_is_marked_partial() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("long.jsonl");
    // Large enough that reading it takes far longer than a few frames.
    let line = "{\"id\":1,\"nested\":{\"a\":[1,2,3],\"b\":\"some text here\"},\"x\":1.5}\n";
    std::fs::write(&path, line.repeat(1_500_000)).unwrap();
    let mut h = window(path);
    h.step();
    h.get_by_label("Stop").click();
    wait_for_read(&mut h);
    h.get_by_label_contains("Partial: stopped by the user after");
    let app = h.state().as_ref().unwrap();
    let scan = app.state.scan.as_ref().unwrap();
    assert!(scan.shape.rows < 1_500_000, "{} rows", scan.shape.rows);
}
