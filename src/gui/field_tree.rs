//! Field tree: the nested fields with their type and null/missing counts.

use eframe::egui;

use super::state::{Intent, State};
use crate::format::group_digits;
use crate::shape::{FieldShape, Role};

#[derive(Default)]
pub struct FieldTree;

impl FieldTree {
    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        let Some(scan) = &state.scan else {
            ui.weak("Fields appear here once a source is open.");
            return intents;
        };
        ui.heading("Fields");
        egui::ScrollArea::both().auto_shrink([false, false]).show(ui, |ui| {
            for field in &scan.shape.fields {
                show_field(ui, field, state.selected.as_deref(), &mut intents);
            }
        });
        intents
    }
}

/// `name  type · 3 null · 1 missing · 12 distinct`
pub fn row_text(field: &FieldShape) -> String {
    let name = match field.role {
        Role::Element => "[]".to_string(),
        Role::MapKey => "{key}".to_string(),
        Role::MapValue => "{}".to_string(),
        Role::Member | Role::Variant => field.name.clone(),
    };
    let mut text = format!("{name}   {}", field.type_label());
    if field.nulls() > 0 {
        text.push_str(&format!(" · {} null", group_digits(field.nulls())));
    }
    if field.missing > 0 {
        text.push_str(&format!(" · {} missing", group_digits(field.missing)));
    }
    if let Some(d) = field.stats.as_deref().and_then(|s| s.distinct_count()) {
        let about = if d.exact { "" } else { "≈" };
        text.push_str(&format!(" · {about}{} distinct", group_digits(d.value)));
    }
    text
}

fn show_field(ui: &mut egui::Ui, field: &FieldShape, selected: Option<&str>, intents: &mut Vec<Intent>) {
    let is_selected = selected == Some(field.path.as_str());
    if field.children.is_empty() {
        if ui.selectable_label(is_selected, row_text(field)).clicked() {
            intents.push(Intent::Select(field.path.clone()));
        }
        return;
    }
    let header = egui::CollapsingHeader::new(row_text(field)).id_salt(&field.path).default_open(true).show(ui, |ui| {
        for child in &field.children {
            show_field(ui, child, selected, intents);
        }
    });
    if header.header_response.clicked() {
        intents.push(Intent::Select(field.path.clone()));
    }
}
