//! Compare: a second source beside the open one, field by field — the
//! first source's fields on the left, the second's on the right, and
//! between them a symbol (+ added, − removed, ~ changed, » moved, = same)
//! in the change's colour, and after them how the field's values drifted.

use eframe::egui;

use super::palette;
use super::state::{Intent, State};
use crate::compare::{Change, FieldChange, FieldSide};
use crate::format::{group_digits, share};

#[derive(Default)]
pub struct CompareArea {
    pub only_changes: bool,
}

impl CompareArea {
    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        if state.scan.is_none() {
            ui.weak("Open a source first, then a second one to compare it with.");
            return intents;
        }
        ui.horizontal(|ui| {
            if ui.button("Open a second source…").on_hover_text("Compare the open source with another file or directory").clicked() {
                intents.push(Intent::ChooseCompareFile);
            }
            if let Some(reading) = &state.compare_reading {
                ui.label(format!("Reading {}", reading.path.display()));
                ui.spinner();
            }
        });
        let Some(comparison) = &state.comparison else {
            ui.label("No second source yet. A later drop of the same data shows what changed.");
            return intents;
        };
        ui.horizontal(|ui| {
            ui.strong(comparison.scan.info.path.display().to_string());
            ui.label(format!("· {} rows", group_digits(comparison.scan.shape.rows)));
            if let Some(note) = comparison.scan.coverage.describe() {
                ui.colored_label(ui.visuals().warn_fg_color, format!("Partial: {note}"));
            }
        });
        ui.label(crate::compare::summary(&comparison.changes));
        let (both, drifted) = comparison.drift_summary;
        ui.label(format!(
            "{drifted} of {both} fields in both sources drifted (a PSI of {} or more, or the null rate moved {} points).",
            crate::compare::psi::MAJOR_SHIFT,
            crate::compare::drift::NULL_RATE_SHIFT * 100.0
        ));
        ui.checkbox(&mut self.only_changes, "only changed fields");
        ui.separator();
        let rows: Vec<&FieldChange> = comparison.changes.iter().filter(|c| !self.only_changes || c.change != Change::Same).collect();
        egui::ScrollArea::both().auto_shrink([false, false]).id_salt("compare").show_rows(ui, 20.0, rows.len(), |ui, range| {
            egui::Grid::new("compare_rows").num_columns(4).spacing([12.0, 4.0]).min_col_width(200.0).show(ui, |ui| {
                for c in &rows[range] {
                    side(ui, c, c.before.as_ref(), &mut intents);
                    let (colour, text) = mark(ui.visuals(), &c.change);
                    ui.colored_label(colour, text).on_hover_text(c.change.label());
                    side(ui, c, c.after.as_ref(), &mut intents);
                    drift(ui, comparison.drift.get(&c.path));
                    ui.end_row();
                }
            });
        });
        intents
    }
}

/// How the field's values moved, when worth a word; "▲ drifted" (a symbol
/// and a word, in the warning colour) when they drifted.
fn drift(ui: &mut egui::Ui, drift: Option<&crate::compare::drift::Drift>) {
    let Some(d) = drift.filter(|d| crate::compare::text::worth_showing(d)) else {
        ui.label("");
        return;
    };
    let text = crate::compare::text::describe(d, false);
    if d.drifted() {
        ui.colored_label(ui.visuals().warn_fg_color, format!("▲ drifted: {text}"));
    } else {
        ui.weak(text);
    }
}

/// The change's symbol and word, in its colour.
pub fn mark(visuals: &egui::Visuals, change: &Change) -> (egui::Color32, String) {
    (palette::change(visuals, change), format!("{} {}", change.symbol(), change.label()))
}

fn side(ui: &mut egui::Ui, c: &FieldChange, field: Option<&FieldSide>, intents: &mut Vec<Intent>) {
    let Some(f) = field else {
        ui.weak("—");
        return;
    };
    let name = c.path.rsplit('.').next().unwrap_or(&c.path);
    let text = format!("{}{name}   {} · {} empty", "  ".repeat(c.depth), f.type_label, share(f.empty, f.count));
    if ui.selectable_label(false, text).on_hover_text(&c.path).clicked() && c.before.is_some() {
        intents.push(Intent::ShowField(c.path.clone()));
    }
}
