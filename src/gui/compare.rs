//! Compare: a second source beside the open one, field by field — the
//! first source's fields on the left, the second's on the right, and
//! between them a symbol (+ added, − removed, ~ changed, = same) in the
//! change's colour. Drift statistics per field are to join each row.

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
        ui.checkbox(&mut self.only_changes, "only changed fields");
        ui.separator();
        let rows: Vec<&FieldChange> = comparison.changes.iter().filter(|c| !self.only_changes || c.change != Change::Same).collect();
        egui::ScrollArea::both().auto_shrink([false, false]).id_salt("compare").show_rows(ui, 20.0, rows.len(), |ui, range| {
            egui::Grid::new("compare_rows").num_columns(3).spacing([12.0, 4.0]).min_col_width(260.0).show(ui, |ui| {
                for c in &rows[range] {
                    side(ui, c, c.before.as_ref(), &mut intents);
                    let (colour, text) = mark(ui.visuals(), &c.change);
                    ui.colored_label(colour, text).on_hover_text(c.change.label());
                    side(ui, c, c.after.as_ref(), &mut intents);
                    ui.end_row();
                }
            });
        });
        intents
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
