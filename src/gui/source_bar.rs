//! Source bar: open a source, see its facts and the reading progress.

use eframe::egui;

use super::state::{Intent, State};
use crate::format::{group_digits, human_bytes};

#[derive(Default)]
pub struct SourceBar;

impl SourceBar {
    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        ui.horizontal(|ui| {
            if ui.button("Open…").on_hover_text("Open a file or a directory of part files").clicked() {
                intents.push(Intent::ChooseFile);
            }
            let recent = &state.settings.recent;
            ui.add_enabled_ui(!recent.is_empty(), |ui| {
                ui.menu_button("Recent", |ui| {
                    for path in recent {
                        if ui.button(path.display().to_string()).clicked() {
                            intents.push(Intent::Open(path.clone()));
                            ui.close();
                        }
                    }
                })
                .response
                .on_hover_text("Sources opened before");
            });
            let dark = ui.visuals().dark_mode;
            if ui.button(if dark { "Light theme" } else { "Dark theme" }).on_hover_text("Switch the window's colours").clicked() {
                ui.ctx().set_theme(if dark { egui::Theme::Light } else { egui::Theme::Dark });
            }
            if let (Some(report), Some(scan)) = (&state.report, &state.scan)
                && ui.button("Save report…").on_hover_text("Save the profile as one self-contained HTML file").clicked()
            {
                let stem = crate::types::default_root(scan);
                let text = match &state.comparison {
                    // With a second source open: the later one's report, with the drift.
                    Some(c) => {
                        let compared = crate::compare::compare(&scan.shape, &c.scan.shape);
                        crate::report::html::render(&crate::report::build(&c.scan, Default::default()), Some(&compared))
                    }
                    None => crate::report::html::render(report, None),
                };
                intents.push(Intent::SaveText { text, file_name: format!("{stem}.html"), title: "Save the report" });
            }
            ui.separator();
            if let Some(reading) = &state.reading {
                ui.label(format!("Reading {}", reading.path.display()));
                match reading.fraction() {
                    Some(f) => {
                        ui.add(egui::ProgressBar::new(f).desired_width(160.0).show_percentage());
                    }
                    None => {
                        ui.spinner();
                    }
                }
                if ui.button("Stop").clicked() {
                    intents.push(Intent::StopReading);
                }
                if let Some(scan) = &state.scan
                    && let crate::scan::Coverage::FirstLook(rows) = scan.coverage
                    && scan.info.path == reading.path
                {
                    ui.label(format!("· showing a first look at the first {} rows until every row is read", group_digits(rows)));
                }
            } else if let Some(scan) = &state.scan {
                let info = &scan.info;
                ui.strong(info.path.display().to_string());
                let compression = match info.compression {
                    crate::source::Compression::None => "",
                    crate::source::Compression::Gzip => " (gzip)",
                    crate::source::Compression::Zstd => " (zstd)",
                };
                ui.label(format!(
                    "{}{compression} · {} · {} rows · {} part{}",
                    info.format.label(),
                    human_bytes(info.bytes),
                    group_digits(scan.shape.rows),
                    info.parts,
                    if info.parts == 1 { "" } else { "s" }
                ));
                if let Some(g) = info.facts.row_groups {
                    ui.label(format!("· {g} row groups"));
                }
                if !info.facts.codecs.is_empty() {
                    ui.label(format!("· {}", info.facts.codecs.join(", ")));
                }
                if let Some(from) = &scan.from_report {
                    let by = from.engine.as_deref().unwrap_or("Plumbline");
                    let label = ui.label(format!("· a report made by {by} on {} ({})", from.generated_at, from.file.display()));
                    if !from.approximations.is_empty() {
                        label.on_hover_text(format!("Estimated:\n{}", from.approximations.join("\n")));
                    }
                }
                match scan.coverage.describe() {
                    Some(note) => {
                        ui.colored_label(ui.visuals().warn_fg_color, format!("Partial: {note}"));
                    }
                    None => {
                        ui.label("· every row read");
                    }
                }
            } else {
                ui.label("No source open. Open a Parquet, Arrow IPC, JSON, JSON Lines or CSV file, or drop one here.");
            }
        });
        if let Some(notice) = &state.notice {
            ui.horizontal(|ui| {
                ui.label(notice);
                if ui.small_button("Dismiss").clicked() {
                    intents.push(Intent::DismissMessage);
                }
            });
        }
        if let Some(message) = &state.message {
            ui.horizontal(|ui| {
                ui.colored_label(ui.visuals().error_fg_color, message);
                if ui.small_button("Dismiss").clicked() {
                    intents.push(Intent::DismissMessage);
                }
            });
        }
        intents
    }
}
