//! The window driven headless with egui_kittest: the real app state, widgets
//! found by their accessible labels.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use eframe::egui;
use egui_kittest::Harness;
use egui_kittest::kittest::{NodeT, Queryable};
use plumbline::gui::PlumblineApp;
use plumbline::gui::state::Intent;

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

fn window(path: PathBuf) -> Harness<'static, Option<PlumblineApp>> {
    window_sized(path, 720.0)
}

/// A window `height` points tall (a tall one shows a whole Field sheet).
fn window_sized(path: PathBuf, height: f32) -> Harness<'static, Option<PlumblineApp>> {
    Harness::builder().with_size([1100.0, height]).build_ui_state(
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
    // Only rows on screen are laid out: find the lower fields by the filter.
    h.state_mut().as_mut().unwrap().field_tree.filter = "note".into();
    h.step();
    h.get_by_label_contains("note   string · 1,279 null · 1,106 missing · 3 distinct");
    h.state_mut().as_mut().unwrap().field_tree.filter = "zip".into();
    h.step();
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

/// Clicks the first widget whose label contains `text`, then lets a frame
/// pass. A frame first: a grid or table shown for the first time lays
/// itself out once without taking clicks.
fn click(h: &mut Harness<'static, Option<PlumblineApp>>, text: &str) {
    h.step();
    h.get_by_label_contains(text).click();
    h.step();
    h.step();
}

fn app<'h>(h: &'h Harness<'static, Option<PlumblineApp>>) -> &'h PlumblineApp {
    h.state().as_ref().unwrap()
}

#[test]
fn a_nested_field_shows_its_statistics_in_the_field_sheet() {
    let mut h = window(sample("deliveries.parquet"));
    wait_for_read(&mut h);
    click(&mut h, "weight_kg   float32");
    assert_eq!(app(&h).state.selected.as_deref(), Some("parcel.weight_kg"));
    h.get_by_label("parcel.weight_kg");
    h.get_by_label("Declared");
    h.get_by_label("Float32, not null");
    h.get_by_label("Distinct");
    assert_eq!(h.get_all_by_label("3,000").count(), 2, "places and distinct values");
    // Min and max as the profile found them (`plumbline profile` prints the same).
    h.get_by_label("0.200926");
    h.get_by_label("14.0744");
    h.get_by_label("Standard deviation");
    h.get_by_label_contains("p1 ");
    h.get_by_label("Histogram");
    h.get_by_label("Every value appears once.");
    // A field with repeated values lists them with counts and shares.
    click(&mut h, "vehicle   utf8");
    h.get_by_label("Top values");
    // Null and missing shares, then one share per vehicle kind.
    assert_eq!(h.get_all_by_label_contains(" %)").count(), 2 + 3);
}

#[test]
fn findings_list_every_finding_and_jump_to_the_field() {
    let mut h = window_sized(sample("deliveries.parquet"), 1400.0);
    wait_for_read(&mut h);
    click(&mut h, "Findings");
    let count = plumbline::gui::findings::listed(&app(&h).state, Default::default()).len();
    assert!(count >= 11, "every kind of finding is in the demo data: {count}");
    h.get_by_label(&format!("{count} findings"));
    h.get_by_label("far outliers");
    h.get_by_label("numbers as text");
    // Severity first: findings that break a typed read lead.
    let first = plumbline::gui::findings::listed(&app(&h).state, Default::default());
    assert_eq!(first[0].severity, plumbline::profile::findings::Severity::Attention);
    h.get(egui_kittest::kittest::By::new().role(egui::accesskit::Role::Link).label("distance_km")).click();
    h.step();
    h.step();
    assert_eq!(app(&h).state.selected.as_deref(), Some("distance_km"));
    assert_eq!(app(&h).state.area, plumbline::gui::state::Area::FieldSheet);
    // The finding's rows: as many as it says lie beyond the fences.
    let entry = app(&h).state.selected_entry().unwrap();
    let finding = entry.findings.as_ref().unwrap().iter().find(|f| f.kind == "far_outliers").unwrap();
    let (said, message): (u64, String) = (finding.message.split(' ').next().unwrap().parse().unwrap(), finding.message.clone());
    click(&mut h, "Show the rows behind far outliers");
    wait_for_read(&mut h);
    assert_eq!(app(&h).state.area, plumbline::gui::state::Area::Rows);
    assert_eq!(app(&h).rows.kept_rows(), Some(said), "{message}");
}

/// Opens the Target picker (showing `from`) and picks `to`.
fn choose_target(h: &mut Harness<'static, Option<PlumblineApp>>, from: &str, to: &str) {
    use egui_kittest::kittest::By;
    h.get(By::new().role(egui::accesskit::Role::ComboBox).value(from)).click();
    h.step();
    h.step();
    click(h, to);
}

#[test]
fn record_types_show_code_for_two_targets() {
    // Tall enough for the whole code: only the lines in view are laid out.
    let mut h = window_sized(sample("deliveries.parquet"), 1400.0);
    wait_for_read(&mut h);
    click(&mut h, "Record types");
    wait_for_read(&mut h);
    h.get_by_label_contains("case class Deliveries(");
    h.get_by_label_contains("Fits all 3,000 rows read.");
    choose_target(&mut h, "scala", "typescript");
    wait_for_read(&mut h);
    h.get_by_label_contains("export interface Deliveries {");
    assert!(h.query_by_label_contains("case class Deliveries(").is_none());
    choose_target(&mut h, "typescript", "rust");
    wait_for_read(&mut h);
    h.get_by_label_contains("pub struct Deliveries {");
}

#[test]
fn long_record_types_are_laid_out_a_screenful_at_a_time() {
    // 40 records of 10 fields each: about 600 lines of Scala.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("wide.jsonl");
    let row = |r: usize| {
        let groups: Vec<String> = (0..40)
            .map(|g| format!("\"group_{g}\":{{{}}}", (0..10).map(|f| format!("\"f{g}_{f}\":{}", r * f)).collect::<Vec<_>>().join(",")))
            .collect();
        format!("{{{}}}\n", groups.join(","))
    };
    std::fs::write(&path, (0..3).map(row).collect::<String>()).unwrap();
    let mut h = window(path);
    wait_for_read(&mut h);
    click(&mut h, "Record types");
    wait_for_read(&mut h);
    let first = "// Generated by Plumbline on";
    let last = "  group_39: Group39";
    h.get_by_label_contains(first);
    assert!(h.query_by_label_contains(last).is_none(), "the root's last member is far below the view");
    // The lines laid out reach the bottom of the 720-point window: the rows
    // the scroll area measures are the rows drawn.
    let lowest = h.query_all_by_label_contains(": Long").map(|line| line.rect().bottom()).fold(0.0f32, f32::max);
    assert!(lowest >= 700.0, "the code stops {} points above the window's bottom", 720.0 - lowest);
    h.hover_at(egui::pos2(800.0, 500.0));
    for _ in 0..60 {
        h.event(egui::Event::MouseWheel {
            unit: egui::MouseWheelUnit::Point,
            delta: egui::vec2(0.0, -400.0),
            phase: egui::TouchPhase::Move,
            source: egui::MouseWheelSource::Wheel,
            modifiers: Default::default(),
        });
        h.step();
    }
    h.get_by_label_contains(last);
    assert!(h.query_by_label_contains(first).is_none(), "scrolled out of view");
}

#[test]
fn the_field_tree_filters_folds_and_moves_with_the_keyboard() {
    let mut h = window(sample("deliveries.parquet"));
    wait_for_read(&mut h);
    h.get_by_role(egui::accesskit::Role::TextInput).focus();
    h.step();
    h.get_by_role(egui::accesskit::Role::TextInput).type_text("zone");
    h.step();
    h.step();
    assert_eq!(h.get_all_by_label_contains("zone   utf8").count(), 2);
    assert!(h.query_by_label_contains("delivery_id").is_none(), "filtered out");
    h.state_mut().as_mut().unwrap().field_tree.filter.clear();
    h.state_mut().as_mut().unwrap().field_tree.only_findings = true;
    h.step();
    h.step();
    h.get_by_label_contains("distance_km");
    assert!(h.query_by_label_contains("courier   struct").is_none(), "no findings there");
    h.state_mut().as_mut().unwrap().field_tree.only_findings = false;
    h.step();
    // Unfocus the filter, then move down from the first field and fold a struct.
    h.get_by_label_contains("delivery_id   utf8").click();
    h.step();
    h.key_press(egui::Key::ArrowDown);
    h.step();
    assert_eq!(app(&h).state.selected.as_deref(), Some("courier"));
    h.key_press(egui::Key::ArrowLeft);
    h.step();
    h.step();
    assert!(h.query_by_label_contains("vehicle   utf8").is_none(), "courier folded");
    h.key_press(egui::Key::ArrowRight);
    h.step();
    h.step();
    h.get_by_label_contains("vehicle   utf8");
}

#[test]
fn the_theme_switches_between_dark_and_light() {
    let mut h = window(sample("deliveries.csv"));
    wait_for_read(&mut h);
    let dark_at_start = h.ctx.theme() == egui::Theme::Dark;
    click(&mut h, if dark_at_start { "Light theme" } else { "Dark theme" });
    assert_ne!((h.ctx.theme() == egui::Theme::Dark), dark_at_start);
    h.get_by_label(if dark_at_start { "Dark theme" } else { "Light theme" });
}

#[test]
fn compare_shows_the_later_drop_beside_the_open_source() {
    let mut h = window(sample("deliveries.parquet"));
    wait_for_read(&mut h);
    click(&mut h, "Compare");
    h.get_by_label("Open a second source…");
    h.state_mut().as_mut().unwrap().apply(Intent::OpenCompare(sample("later/deliveries.parquet")));
    wait_for_read(&mut h);
    h.get_by_label("+ 1 added · ~ 1 type changed · ~ 1 nulls or missing keys changed");
    assert_eq!(h.get_all_by_label_contains("delivery_id   utf8 · 0.0 % empty").count(), 2, "both sides");
    // Only rows on screen are laid out; the added field comes last.
    h.get_by_label("only changed fields").click();
    h.step();
    h.step();
    assert!(h.query_by_label_contains("delivery_id   utf8 · 0.0 % empty").is_none(), "unchanged fields hidden");
    h.get_by_label_contains("co2_grams");
    assert_eq!(h.get_all_by_label("+ added").count(), 1);
    // The Field tree marks the open source's changed fields, symbol and word.
    assert_eq!(h.get_all_by_label("~ type changed").count(), 2, "in the tree and in Compare");
    // Drift beside each changed field: the vehicles' null rate moved.
    h.get_by_label("2 of 26 fields in both sources drifted (a PSI of 0.25 or more, or the null rate moved 5 points).");
    h.get_by_label_contains("▲ drifted: null rate 0.0 % → 10.3 %");
}

#[test]
fn recent_sources_and_the_theme_are_remembered_between_runs() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("window.json");
    let start = |file: PathBuf, path: Option<PathBuf>| {
        Harness::builder().with_size([1100.0, 720.0]).build_ui_state(
            move |ui, app: &mut Option<PlumblineApp>| {
                let app = app.get_or_insert_with(|| {
                    let start = plumbline::gui::Start { path: path.clone(), ..Default::default() };
                    PlumblineApp::start(ui.ctx().clone(), start, Some(file.clone()))
                });
                app.frame(ui);
            },
            None,
        )
    };
    let mut first = start(file.clone(), Some(sample("deliveries.csv")));
    wait_for_read(&mut first);
    let dark_at_start = first.ctx.theme() == egui::Theme::Dark;
    click(&mut first, if dark_at_start { "Light theme" } else { "Dark theme" });
    first.state().as_ref().unwrap().save_settings(); // what closing the window does
    let saved = plumbline::gui::settings::Settings::load(&file);
    assert_eq!(saved.dark, Some(!dark_at_start));
    assert!(saved.recent[0].ends_with("sample-data/deliveries.csv"), "{:?}", saved.recent);
    assert!(saved.tree_width.is_some());

    let mut second = start(file.clone(), None);
    second.step();
    second.step();
    assert_eq!(second.ctx.theme() == egui::Theme::Dark, !dark_at_start, "theme restored");
    click(&mut second, "Recent");
    click(&mut second, "deliveries.csv");
    wait_for_read(&mut second);
    second.get_by_label_contains("CSV · ");
}

#[test]
fn a_histogram_bar_filters_rows_and_the_chip_removes_the_filter() {
    let mut h = window_sized(sample("deliveries.parquet"), 1400.0);
    wait_for_read(&mut h);
    click(&mut h, "distance_km   float64");
    let bar = h.get_by_label_contains("bar 2: ");
    let label = bar.accesskit_node().label().unwrap_or_default().to_string();
    let counted: u64 = label.rsplit(", ").next().unwrap().replace(',', "").parse().unwrap();
    bar.click();
    h.step();
    wait_for_read(&mut h);
    assert_eq!(app(&h).state.area, plumbline::gui::state::Area::Rows);
    assert_eq!(app(&h).rows.kept_rows(), Some(counted), "{label}");
    h.get_by_label(&format!("{} of 3,000 rows match", plumbline::format::group_digits(counted)));
    // The rows on screen are rows of that bar: their numbers came from polars.
    h.get_by_label("row");
    h.get_by_label("distance_km");
    let chip = h.get_by_label_contains("distance_km in [");
    chip.click();
    h.step();
    wait_for_read(&mut h);
    assert!(app(&h).state.row_filters.is_empty());
    assert_eq!(app(&h).rows.kept_rows(), Some(3000));
    h.get_by_label("3,000 rows");
}

#[test]
fn a_top_value_and_the_nulls_filter_rows_and_a_nested_cell_opens() {
    let mut h = window(sample("deliveries.parquet"));
    wait_for_read(&mut h);
    click(&mut h, "vehicle   utf8");
    click(&mut h, "e-trike");
    wait_for_read(&mut h);
    let filters = &app(&h).state.row_filters;
    assert_eq!(filters.len(), 1);
    assert_eq!(filters[0].label(), "courier.vehicle = \"e-trike\"");
    let trikes = app(&h).rows.kept_rows().unwrap();
    assert!(trikes > 0 && trikes < 3000);
    // A second filter narrows further: the dropoff nulls.
    h.state_mut().as_mut().unwrap().apply(Intent::Select("dropoff".into()));
    h.state_mut().as_mut().unwrap().apply(Intent::ShowArea(plumbline::gui::state::Area::FieldSheet));
    h.step();
    click(&mut h, "show these rows");
    wait_for_read(&mut h);
    assert_eq!(app(&h).state.row_filters.len(), 2, "{:?} {:?}", app(&h).state.row_filters, app(&h).state.area);
    assert!(app(&h).rows.kept_rows().unwrap() < trikes);
    h.get_by_label_contains("dropoff is null");
    h.get_by_label("remove all");
    // A struct cell opens to its whole value.
    h.step();
    h.get_all_by_label_contains("{code: \"QC-").next().expect("a courier cell").click();
    h.step();
    h.step();
    h.get_by_label_contains("\n  code: \"QC-");
    h.get_by_label("Close");
}

#[test]
fn the_generated_types_are_checked_against_every_row_and_a_definition_shows_its_verdicts() {
    let mut h = window_sized(sample("deliveries.parquet"), 900.0);
    wait_for_read(&mut h);
    click(&mut h, "Record types");
    wait_for_read(&mut h);
    click(&mut h, "Check against every row");
    wait_for_read(&mut h);
    h.get_by_label("Every one of the 3,000 rows fits the generated Scala types.");
    assert_eq!(app(&h).fit.fit().map(|f| f.verdicts.len()), Some(0));

    // A hand-written definition whose `note` is not optional.
    let dir = tempfile::tempdir().unwrap();
    let code = plumbline::types::generate(
        app(&h).state.scan.as_deref().unwrap(),
        plumbline::types::Lang::Scala,
        &plumbline::types::TypeOptions {
            root: "Delivery".into(),
            optional: Default::default(),
            mixed: Default::default(),
            time: Default::default(),
        },
    )
    .code
    .replace("note: Option[String]", "note: String");
    let file = dir.path().join("delivery.scala");
    std::fs::write(&file, code).unwrap();
    h.state_mut().as_mut().unwrap().apply(Intent::CheckDefinition(plumbline::gui::fit::Checked::File(file)));
    wait_for_read(&mut h);
    h.get_by_label("1 difference makes rows of the 3,000 fail to fit delivery.scala.");
    h.get_by_label_contains("not optional in the definition, but the data has nulls");
    let said = app(&h).fit.fit().unwrap().verdicts[0].rows;
    // Its rows in Rows: exactly as many as the verdict counts.
    click(&mut h, "show these rows");
    wait_for_read(&mut h);
    assert_eq!(app(&h).rows.kept_rows(), Some(said));
    // The field link shows its sheet.
    click(&mut h, "Fit");
    h.get_by_label("note").click();
    h.step();
    assert_eq!(app(&h).state.selected.as_deref(), Some("note"));
}

#[test]
fn a_report_opens_like_its_source_and_rows_say_there_are_none_behind_it() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("deliveries.report.json");
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .args(["profile".as_ref(), sample("deliveries.parquet").as_os_str(), "--json".as_ref(), report.as_os_str()])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let mut h = window_sized(report.clone(), 1400.0);
    wait_for_read(&mut h);
    h.get_by_label_contains("· a report made by Plumbline on");
    // The same statistics as the source's own profile shows (see above).
    click(&mut h, "weight_kg   float32");
    h.get_by_label("Float32, not null");
    h.get_by_label("0.200926");
    h.get_by_label("14.0744");
    h.get_by_label("Histogram");
    h.state_mut().as_mut().unwrap().state.area = plumbline::gui::state::Area::Rows;
    h.step();
    h.get_by_label_contains("is a report: it holds statistics, not rows");
    // Fit judges the report's statistics and says so, never "every row".
    click(&mut h, "Record types");
    wait_for_read(&mut h);
    click(&mut h, "Check against every row");
    wait_for_read(&mut h);
    h.get_by_label_contains("Nothing in the report's statistics of its 3,000 rows fails to fit");
    h.get_by_label_contains("Checked against a report's statistics, not its rows");
}
