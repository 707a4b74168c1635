//! Frame times of the window, headless (egui_kittest): the Field tree of a
//! 10,000-field source scrolled from top to bottom, filtered and walked with
//! the arrow keys, then each area right of it scrolled (Compare against the
//! source itself), beside the same window on a 20-field source; then the
//! Rows area of a 1,000,000-row Parquet file scrolled by wheel steps and by
//! long jumps (each landing on pages not yet read), beside a 1,000-row file.
//! Reported against the 16 ms a frame may take at 60 frames a second.
//!
//! `cargo bench --bench frames`

use std::fs::File;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, Instant};

use arrow_array::builder::{ListBuilder, StringBuilder};
use arrow_array::{ArrayRef, Float64Array, Int64Array, RecordBatch, StringArray, StructArray, TimestampMicrosecondArray};
use arrow_schema::{DataType, Field};
use eframe::egui;
use egui_kittest::Harness;
use plumbline::gui::PlumblineApp;
use plumbline::gui::state::{Area, Intent};

/// One JSON Lines row of `fields` fields: 100 objects of `fields / 100`
/// numbers each (nested, as wide real sources are).
fn wide_source(dir: &Path, fields: usize) -> PathBuf {
    let path = dir.join(format!("wide-{fields}.jsonl"));
    let groups = (fields / 100).max(1);
    let per_group = fields / groups;
    let mut rows = String::new();
    for r in 0..50 {
        let members: Vec<String> = (0..groups)
            .map(|g| {
                let inner: Vec<String> = (0..per_group).map(|f| format!("\"f{f}\":{}", r * f)).collect();
                format!("\"group_{g}\":{{{}}}", inner.join(","))
            })
            .collect();
        rows.push_str(&format!("{{{}}}\n", members.join(",")));
    }
    std::fs::write(&path, rows).unwrap();
    path
}

type Window = Harness<'static, Option<PlumblineApp>>;

fn window(path: PathBuf) -> Window {
    Harness::builder().with_size([1280.0, 800.0]).build_ui_state(
        move |ui, app: &mut Option<PlumblineApp>| {
            let app = app.get_or_insert_with(|| PlumblineApp::new(ui.ctx().clone(), Some(path.clone())));
            app.frame(ui);
        },
        None,
    )
}

fn wait_for_read(h: &mut Window) {
    let start = Instant::now();
    while h.state().as_ref().is_none_or(|app| app.is_busy()) {
        h.step();
        assert!(start.elapsed() < Duration::from_secs(120), "the read did not finish");
        std::thread::sleep(Duration::from_millis(5));
    }
    h.step();
}

/// One wheel step down, wherever the pointer is.
fn scroll_down(h: &mut Window) {
    wheel(h, -400.0);
}

fn wheel(h: &mut Window, delta: f32) {
    h.event(egui::Event::MouseWheel {
        unit: egui::MouseWheelUnit::Point,
        delta: egui::vec2(0.0, delta),
        phase: egui::TouchPhase::Move,
        source: egui::MouseWheelSource::Wheel,
        modifiers: Default::default(),
    });
}

/// Times each frame while the tree scrolls down by wheel steps, then while
/// the selection walks down with the arrow key.
fn frame_times(h: &mut Window) -> Vec<Duration> {
    let mut times = Vec::new();
    let mut timed = |h: &mut Window| {
        let start = Instant::now();
        h.step();
        times.push(start.elapsed());
    };
    h.hover_at(egui::pos2(150.0, 400.0));
    for _ in 0..300 {
        scroll_down(h);
        timed(h);
    }
    for _ in 0..100 {
        h.key_press(egui::Key::ArrowDown);
        timed(h);
    }
    if let Some(app) = h.state_mut().as_mut() {
        app.field_tree.filter = "f7".into();
    }
    for _ in 0..20 {
        timed(h);
    }
    times
}

/// Times frames of each area right of the tree, with the source compared
/// against itself for Compare.
fn area_frame_times(h: &mut Window, path: &Path) -> Vec<(Area, Vec<Duration>)> {
    h.state_mut().as_mut().unwrap().apply(Intent::OpenCompare(path.to_path_buf()));
    wait_for_read(h);
    h.hover_at(egui::pos2(800.0, 400.0));
    let mut out = Vec::new();
    for area in Area::ALL {
        h.state_mut().as_mut().unwrap().apply(Intent::ShowArea(area));
        if area == Area::FieldSheet {
            let first = h.state().as_ref().unwrap().state.report.as_ref().and_then(|r| r.fields.last()).map(|f| f.path.clone());
            h.state_mut().as_mut().unwrap().state.selected = first;
        }
        let mut times = Vec::new();
        for _ in 0..40 {
            scroll_down(h);
            let start = Instant::now();
            h.step();
            times.push(start.elapsed());
        }
        out.push((area, times));
    }
    out
}

fn describe(name: &str, mut times: Vec<Duration>) -> (Duration, Duration) {
    times.sort();
    let median = times[times.len() / 2];
    let worst = *times.last().unwrap();
    println!(
        "  {name:<22} median {:>7.2} ms   worst {:>7.2} ms   ({} frames; median is {:.2} of the 16 ms budget)",
        median.as_secs_f64() * 1e3,
        worst.as_secs_f64() * 1e3,
        times.len(),
        median.as_secs_f64() / 0.016
    );
    (median, worst)
}

/// A Parquet file of `rows` rows: an id, a text code, a nullable number, an
/// instant, a list of tags and a struct, written in batches of 65,536 rows.
fn long_source(dir: &Path, rows: usize) -> PathBuf {
    let path = dir.join(format!("long-{rows}.parquet"));
    let mut writer: Option<parquet::arrow::ArrowWriter<File>> = None;
    for start in (0..rows).step_by(65_536) {
        let batch = long_batch(start, 65_536.min(rows - start));
        let w = writer.get_or_insert_with(|| {
            parquet::arrow::ArrowWriter::try_new(File::create(&path).unwrap(), batch.schema(), None).unwrap()
        });
        w.write(&batch).unwrap();
    }
    writer.unwrap().close().unwrap();
    path
}

fn long_batch(start: usize, len: usize) -> RecordBatch {
    let ids: Vec<i64> = (start..start + len).map(|i| i as i64).collect();
    let codes = StringArray::from_iter_values(ids.iter().map(|i| format!("code-{:04}", i % 5000)));
    let amounts = Float64Array::from_iter(ids.iter().map(|i| (i % 17 != 0).then(|| (i % 1000) as f64 * 1.25)));
    let at = TimestampMicrosecondArray::from_iter_values(ids.iter().map(|i| 1_700_000_000_000_000 + i * 1_000_000)).with_timezone("UTC");
    let mut tags = ListBuilder::new(StringBuilder::new());
    for i in &ids {
        for t in 0..(i % 4) {
            tags.values().append_value(format!("tag{t}"));
        }
        tags.append(true);
    }
    let x: ArrayRef = Arc::new(Float64Array::from_iter_values(ids.iter().map(|i| (i % 360) as f64)));
    let y: ArrayRef = Arc::new(Float64Array::from_iter_values(ids.iter().map(|i| (i % 180) as f64)));
    let place = StructArray::from(vec![
        (Arc::new(Field::new("x", DataType::Float64, false)), x),
        (Arc::new(Field::new("y", DataType::Float64, false)), y),
    ]);
    RecordBatch::try_from_iter([
        ("id", Arc::new(Int64Array::from(ids)) as ArrayRef),
        ("code", Arc::new(codes)),
        ("amount", Arc::new(amounts)),
        ("at", Arc::new(at)),
        ("tags", Arc::new(tags.finish())),
        ("place", Arc::new(place)),
    ])
    .unwrap()
}

/// Times frames of the Rows area: wheel steps down, then long jumps (a wheel
/// step of 20,000 rows), each followed by the frames that wait for the page.
fn rows_frame_times(h: &mut Window) -> (Vec<Duration>, Vec<Duration>) {
    h.state_mut().as_mut().unwrap().apply(Intent::ShowArea(Area::Rows));
    wait_for_read(h);
    h.hover_at(egui::pos2(800.0, 400.0));
    let timed = |h: &mut Window, delta: f32, out: &mut Vec<Duration>| {
        wheel(h, delta);
        let start = Instant::now();
        h.step();
        out.push(start.elapsed());
    };
    let (mut steps, mut jumps) = (Vec::new(), Vec::new());
    for _ in 0..200 {
        timed(h, -400.0, &mut steps);
    }
    for _ in 0..30 {
        timed(h, -400_000.0, &mut jumps);
        // The frames while the page is on its way, and the one that shows it.
        for _ in 0..5 {
            std::thread::sleep(Duration::from_millis(10));
            timed(h, 0.0, &mut jumps);
        }
    }
    (steps, jumps)
}

fn main() {
    let dir = tempfile::tempdir().unwrap();
    println!("Window frame times, headless (egui_kittest), Field tree scrolled, walked and filtered:");
    let mut medians = Vec::new();
    for fields in [20, 10_000] {
        let path = wide_source(dir.path(), fields);
        let mut h = window(path.clone());
        wait_for_read(&mut h);
        let shown = h.state().as_ref().unwrap().state.report.as_ref().map_or(0, |r| r.fields.len());
        let (median, _) = describe(&format!("{shown} fields"), frame_times(&mut h));
        medians.push(median);
        for (area, times) in area_frame_times(&mut h, &path) {
            describe(&format!("  {}", area.label()), times);
        }
    }
    println!("  ratio of medians, 10,000 fields / 20 fields: {:.2}", medians[1].as_secs_f64() / medians[0].as_secs_f64());

    println!("Rows area frame times, headless, a Parquet file scrolled by wheel steps and by jumps of 20,000 rows:");
    let mut step_medians = Vec::new();
    for rows in [1_000, 1_000_000] {
        let path = long_source(dir.path(), rows);
        let mut h = window(path);
        wait_for_read(&mut h);
        let (steps, jumps) = rows_frame_times(&mut h);
        let (median, _) = describe(&format!("{} rows, steps", plumbline::format::group_digits(rows as u64)), steps);
        describe(&format!("{} rows, jumps", plumbline::format::group_digits(rows as u64)), jumps);
        step_medians.push(median);
    }
    println!(
        "  ratio of medians, 1,000,000 rows / 1,000 rows: {:.2}",
        step_medians[1].as_secs_f64() / step_medians[0].as_secs_f64()
    );
}
