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
    /// The order for (scan generation, sort), kept until either changes.
    order: Option<((u64, SortBy), Vec<Place>)>,
}

/// Where a finding sits in the report: (field index, finding index).
type Place = (usize, usize);

/// One finding with the field it belongs to.
pub struct Listed<'a> {
    pub path: &'a str,
    pub severity: Severity,
    pub finding: &'a crate::profile::findings::Finding,
}

fn listed_at(state: &State, (field, finding): Place) -> Option<Listed<'_>> {
    let f = state.report.as_ref()?.fields.get(field)?;
    let finding = f.findings.as_ref()?.get(finding)?;
    Some(Listed { path: &f.path, severity: finding.severity(), finding })
}

/// The places of every finding of the report, in the chosen order (ties
/// keep the field order).
fn order(state: &State, sort: SortBy) -> Vec<Place> {
    let fields = state.report.as_ref().map_or(&[][..], |r| &r.fields[..]);
    let mut all: Vec<Place> =
        fields.iter().enumerate().flat_map(|(i, f)| (0..f.findings.as_ref().map_or(0, Vec::len)).map(move |j| (i, j))).collect();
    match sort {
        SortBy::Severity => all.sort_by_key(|&(i, j)| fields[i].findings.as_ref().map(|f| f[j].severity())),
        SortBy::Field => all.sort_by(|a, b| fields[a.0].path.cmp(&fields[b.0].path)),
    }
    all
}

/// Every finding of the report, in the chosen order (ties keep the field order).
pub fn listed(state: &State, sort: SortBy) -> Vec<Listed<'_>> {
    order(state, sort).into_iter().filter_map(|p| listed_at(state, p)).collect()
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
        let key = (state.generation, self.sort);
        if self.order.as_ref().is_none_or(|(k, _)| *k != key) {
            self.order = Some((key, order(state, self.sort)));
        }
        let all = self.order.as_ref().map_or(&[][..], |(_, o)| &o[..]);
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
            for l in all[range].iter().filter_map(|&p| listed_at(state, p)) {
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
