//! Frame times of the window, headless (egui_kittest): the Field tree of a
//! 10,000-field source scrolled from top to bottom, filtered and walked with
//! the arrow keys, then each area right of it scrolled (Compare against the
//! source itself), beside the same window on a 20-field source. Reported
//! against the 16 ms a frame may take at 60 frames a second.
//!
//! `cargo bench --bench frames`

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

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
    h.event(egui::Event::MouseWheel {
        unit: egui::MouseWheelUnit::Point,
        delta: egui::vec2(0.0, -400.0),
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
}
