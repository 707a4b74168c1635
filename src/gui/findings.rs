//! Findings: every finding across the source in one table, sortable by
//! severity or field; each row jumps to its field's sheet.

use eframe::egui;

use super::palette;
use super::state::{Intent, State};
use crate::profile::findings::Severity;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SortBy {
    #[default]
    Severity,
    Field,
}

#[derive(Default)]
pub struct FindingsArea {
    pub sort: SortBy,
}

/// One finding with the field it belongs to.
pub struct Listed<'a> {
    pub path: &'a str,
    pub severity: Severity,
    pub finding: &'a crate::profile::findings::Finding,
}

/// Every finding of the report, in the chosen order (ties keep the field order).
pub fn listed(state: &State, sort: SortBy) -> Vec<Listed<'_>> {
    let mut all: Vec<Listed> = state
        .report
        .iter()
        .flat_map(|r| &r.fields)
        .flat_map(|f| f.findings.iter().flatten().map(move |finding| Listed { path: &f.path, severity: finding.severity(), finding }))
        .collect();
    match sort {
        SortBy::Severity => all.sort_by_key(|l| l.severity),
        SortBy::Field => all.sort_by(|a, b| a.path.cmp(b.path)),
    }
    all
}

/// A column of fixed width, so the lines line up like a table.
fn cell(ui: &mut egui::Ui, width: f32, body: impl FnOnce(&mut egui::Ui)) {
    ui.allocate_ui_with_layout(egui::vec2(width, ui.available_height()), egui::Layout::left_to_right(egui::Align::Center), |ui| {
        ui.set_min_width(width);
        body(ui);
    });
}

impl FindingsArea {
    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        if state.report.is_none() {
            ui.weak("Findings appear here once a source is open.");
            return intents;
        }
        let all = listed(state, self.sort);
        ui.horizontal(|ui| {
            ui.heading(format!("{} finding{}", all.len(), if all.len() == 1 { "" } else { "s" }));
            ui.separator();
            ui.label("Order by");
            ui.selectable_value(&mut self.sort, SortBy::Severity, "severity");
            ui.selectable_value(&mut self.sort, SortBy::Field, "field");
        });
        if all.is_empty() {
            ui.label("Nothing to report: no field met a finding's rule.");
            return intents;
        }
        // One line per finding, only those on screen laid out: a wide
        // source can have a finding in each of thousands of fields.
        let row_height = ui.text_style_height(&egui::TextStyle::Body) + 6.0;
        egui::ScrollArea::both().auto_shrink([false, false]).id_salt("findings").show_rows(ui, row_height, all.len(), |ui, range| {
            for l in &all[range] {
                ui.horizontal(|ui| {
                    ui.set_height(row_height);
                    let (colour, symbol) = palette::severity(ui.visuals(), l.severity);
                    cell(ui, 90.0, |ui| {
                        ui.colored_label(colour, format!("{symbol} {}", l.severity.label()));
                    });
                    cell(ui, 180.0, |ui| {
                        if ui.link(l.path).on_hover_text("Show this field").clicked() {
                            intents.push(Intent::ShowField(l.path.to_string()));
                        }
                    });
                    cell(ui, 140.0, |ui| {
                        ui.label(l.finding.kind.replace('_', " "));
                    });
                    ui.label(&l.finding.message);
                });
            }
        });
        intents
    }
}
