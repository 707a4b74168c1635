//! Field tree: the nested fields with their type, a fill bar (share of
//! places holding a value), distinct count and a marker for findings; a
//! filter box; arrow keys to move and fold. Only the rows on screen are
//! laid out, so wide sources (10,000 fields) stay smooth.

use std::collections::{HashMap, HashSet};

use eframe::egui;

use super::palette;
use super::state::{Intent, State};
use crate::format::group_digits;
use crate::shape::{FieldShape, Role};

/// One line of the tree, prepared once per scan.
struct TreeRow {
    path: String,
    depth: usize,
    has_children: bool,
    text: String,
    /// Name and type, lower-cased, for the filter.
    haystack: String,
    /// Share of the field's places that hold a value.
    filled: f32,
    findings: usize,
}

#[derive(Default)]
pub struct FieldTree {
    rows: Vec<TreeRow>,
    generation: u64,
    collapsed: HashSet<String>,
    pub filter: String,
    pub only_findings: bool,
    /// Set when the keyboard moved the selection, so the list follows it.
    follow_selection: bool,
}

const ROW_HEIGHT: f32 = 20.0;

impl FieldTree {
    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        let Some(scan) = &state.scan else {
            ui.weak("Fields appear here once a source is open.");
            return intents;
        };
        if self.generation != state.generation {
            self.rebuild(&scan.shape.fields, state);
        }
        ui.horizontal(|ui| {
            ui.heading("Fields");
            ui.weak(format!("{} in all", group_digits(self.rows.len() as u64)));
        });
        ui.horizontal(|ui| {
            ui.add(egui::TextEdit::singleline(&mut self.filter).hint_text("filter by name or type").desired_width(150.0))
                .on_hover_text("Shows fields whose path or type contains this text");
            ui.checkbox(&mut self.only_findings, "with findings");
        });
        let visible = self.visible_rows();
        self.keyboard(ui, state, &visible, &mut intents);
        let selected = state.selected.as_deref();
        let mut scroll = egui::ScrollArea::both().auto_shrink([false, false]);
        if std::mem::take(&mut self.follow_selection)
            && let Some(at) = visible.iter().position(|&i| Some(self.rows[i].path.as_str()) == selected)
        {
            let spacing = ui.spacing().item_spacing.y;
            scroll = scroll.vertical_scroll_offset(((at as f32) - 5.0).max(0.0) * (ROW_HEIGHT + spacing));
        }
        scroll.show_rows(ui, ROW_HEIGHT, visible.len(), |ui, range| {
            for &i in &visible[range] {
                self.show_row(ui, i, state, &mut intents);
            }
        });
        intents
    }

    fn rebuild(&mut self, fields: &[FieldShape], state: &State) {
        let findings: HashMap<&str, usize> = state
            .report
            .iter()
            .flat_map(|r| &r.fields)
            .map(|f| (f.path.as_str(), f.findings.as_ref().map_or(0, Vec::len)))
            .collect();
        self.rows.clear();
        for field in fields {
            field.walk(0, &mut |f, depth| {
                let filled = if f.count == 0 { 0.0 } else { f.present() as f32 / f.count as f32 };
                self.rows.push(TreeRow {
                    path: f.path.clone(),
                    depth,
                    has_children: !f.children.is_empty(),
                    text: row_text(f),
                    haystack: format!("{} {}", f.path, f.type_label()).to_lowercase(),
                    filled,
                    findings: findings.get(f.path.as_str()).copied().unwrap_or(0),
                });
            });
        }
        self.collapsed.clear();
        self.generation = state.generation;
    }

    /// Indices of the rows to show: filtered matches (flat), or the tree
    /// without the children of folded fields.
    fn visible_rows(&self) -> Vec<usize> {
        let needle = self.filter.trim().to_lowercase();
        if !needle.is_empty() || self.only_findings {
            return (0..self.rows.len())
                .filter(|&i| {
                    let row = &self.rows[i];
                    (needle.is_empty() || row.haystack.contains(&needle)) && (!self.only_findings || row.findings > 0)
                })
                .collect();
        }
        let mut out = Vec::with_capacity(self.rows.len());
        let mut hidden_below: Option<usize> = None;
        for (i, row) in self.rows.iter().enumerate() {
            if let Some(depth) = hidden_below {
                if row.depth > depth {
                    continue;
                }
                hidden_below = None;
            }
            out.push(i);
            if row.has_children && self.collapsed.contains(&row.path) {
                hidden_below = Some(row.depth);
            }
        }
        out
    }

    /// Up and down move the selection; right and left unfold and fold.
    /// Ignored while a text box has the keyboard.
    fn keyboard(&mut self, ui: &egui::Ui, state: &State, visible: &[usize], intents: &mut Vec<Intent>) {
        if visible.is_empty() || ui.ctx().memory(|m| m.focused().is_some()) {
            return;
        }
        let (down, up, right, left) = ui.input(|i| {
            (
                i.key_pressed(egui::Key::ArrowDown),
                i.key_pressed(egui::Key::ArrowUp),
                i.key_pressed(egui::Key::ArrowRight),
                i.key_pressed(egui::Key::ArrowLeft),
            )
        });
        let at = visible.iter().position(|&i| Some(self.rows[i].path.as_str()) == state.selected.as_deref());
        let target = match (at, down, up) {
            (None, true, _) | (None, _, true) => Some(0),
            (Some(at), true, _) => Some((at + 1).min(visible.len() - 1)),
            (Some(at), _, true) => Some(at.saturating_sub(1)),
            _ => None,
        };
        if let Some(t) = target {
            intents.push(Intent::Select(self.rows[visible[t]].path.clone()));
            self.follow_selection = true;
        }
        if let Some(at) = at {
            let row = &self.rows[visible[at]];
            if right {
                self.collapsed.remove(&row.path);
            } else if left && row.has_children {
                self.collapsed.insert(row.path.clone());
            }
        }
    }

    fn show_row(&mut self, ui: &mut egui::Ui, i: usize, state: &State, intents: &mut Vec<Intent>) {
        let selected = state.selected.as_deref();
        let row = &self.rows[i];
        ui.horizontal(|ui| {
            ui.set_height(ROW_HEIGHT);
            ui.add_space(row.depth as f32 * 14.0);
            if row.has_children {
                let folded = self.collapsed.contains(&row.path);
                let toggle = ui.add(egui::Button::new(if folded { "▸" } else { "▾" }).frame(false).small());
                if toggle.on_hover_text(if folded { "Unfold" } else { "Fold" }).clicked() {
                    if folded {
                        self.collapsed.remove(&row.path);
                    } else {
                        self.collapsed.insert(row.path.clone());
                    }
                }
            } else {
                ui.add_space(14.0);
            }
            fill_bar(ui, row.filled);
            let is_selected = selected == Some(row.path.as_str());
            if ui.selectable_label(is_selected, &row.text).clicked() {
                intents.push(Intent::Select(row.path.clone()));
            }
            if let Some(change) = state.comparison.as_ref().and_then(|c| c.by_path.get(&row.path))
                && *change != crate::compare::Change::Same
            {
                let (colour, text) = super::compare::mark(ui.visuals(), change);
                ui.colored_label(colour, text).on_hover_text("against the second source in Compare");
            }
            if row.findings > 0 {
                let marker = format!("◆ {}", row.findings);
                ui.colored_label(palette::finding(ui.visuals()), marker)
                    .on_hover_text(format!("{} finding{}", row.findings, if row.findings == 1 { "" } else { "s" }));
            }
        });
    }
}

/// A small bar: the filled part is the share of places holding a value.
fn fill_bar(ui: &mut egui::Ui, filled: f32) {
    let (rect, response) = ui.allocate_exact_size(egui::vec2(32.0, 8.0), egui::Sense::hover());
    let visuals = ui.visuals();
    ui.painter().rect_filled(rect, 2.0, visuals.extreme_bg_color);
    let mut full = rect;
    full.set_width(rect.width() * filled.clamp(0.0, 1.0));
    ui.painter().rect_filled(full, 2.0, palette::fill(visuals));
    ui.painter().rect_stroke(rect, 2.0, visuals.widgets.noninteractive.bg_stroke, egui::StrokeKind::Inside);
    response.on_hover_text(format!("{:.1} % of places hold a value", filled * 100.0));
}

/// `name   type · 3 null · 1 missing · 12 distinct`
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
