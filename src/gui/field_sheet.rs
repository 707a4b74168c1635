//! Field sheet: everything known about the selected field — declared and
//! observed type, kinds with examples, the statistics grid, the histogram,
//! top values with share bars, length histograms and findings.

use eframe::egui;

use super::palette;
use super::state::{Intent, State};
use crate::explore::{Condition, RowFilter};
use crate::format::{decimal, group_digits, share};
use crate::profile::numbers::Histogram;
use crate::report::{FieldEntry, StatsEntry};

#[derive(Default)]
pub struct FieldSheet;

impl FieldSheet {
    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let Some(field) = state.selected_entry() else {
            ui.weak(if state.scan.is_some() {
                "Select a field in the Field tree."
            } else {
                "Open a source to see its fields."
            });
            return Vec::new();
        };
        let mut filter = None;
        egui::ScrollArea::vertical().auto_shrink([false, false]).id_salt("field_sheet").show(ui, |ui| {
            filter = show_field(ui, field);
        });
        filter.map(Intent::AddRowFilter).into_iter().collect()
    }
}

/// Draws the sheet; returns the rows filter the user clicked, if any.
fn show_field(ui: &mut egui::Ui, field: &FieldEntry) -> Option<RowFilter> {
    let mut clicked = None;
    let on_field = |condition| RowFilter::Field { path: field.path.clone(), condition };
    ui.heading(&field.path);
    types_section(ui, field);
    ui.separator();
    section(ui, "Statistics", |ui| {
        if statistics_grid(ui, field) {
            clicked = Some(on_field(Condition::Empty));
        }
    });
    if let Some(stats) = &field.stats {
        if let Some(h) = &stats.histogram {
            section(ui, "Histogram", |ui| {
                if let Some(i) = numeric_histogram(ui, "histogram", h, true) {
                    let (low, high) = (h.edges[i], h.edges[i + 1]);
                    // numpy's convention: the last bin holds its right edge.
                    let high_inclusive = i + 2 == h.edges.len();
                    clicked = Some(on_field(Condition::Between { low, high, high_inclusive }));
                }
            });
        }
        if let Some(c) = &stats.calendar {
            let bars: Vec<(String, u64)> = c.buckets.iter().map(|b| (b.label.clone(), b.count)).collect();
            section(
                ui,
                &format!("Over time (by {:?}{})", c.unit, if c.exact { "" } else { ", estimated" }).to_lowercase(),
                |ui| {
                    if let Some(i) = bar_chart(ui, "calendar", &bars, true) {
                        let b = &c.buckets[i];
                        clicked = Some(on_field(Condition::During { start: b.start, end: b.end }));
                    }
                },
            );
        }
        if let (Some(top), Some(bound)) = (&stats.top, stats.top_max_undercount)
            && top.is_empty()
        {
            section(ui, "Top values", |ui| {
                ui.label(crate::report::no_value_stands_out(bound));
            });
        }
        if let Some(top) = stats.top.as_ref().filter(|t| !t.is_empty()) {
            section(ui, "Top values", |ui| {
                // A list of values seen once each says nothing about frequency.
                if top.iter().all(|t| t.count == 1) && stats.top_exact != Some(false) {
                    ui.label("Every value appears once.");
                } else if let Some(value) = top_values(ui, field, stats, top) {
                    clicked = Some(on_field(Condition::OneOf(vec![value])));
                }
            });
        }
        if let Some(lengths) = &stats.lengths {
            section(ui, "Text lengths (characters)", |ui| lengths_section(ui, "text_lengths", lengths));
        }
        if let Some(lengths) = &stats.list_lengths {
            section(ui, "Elements per value", |ui| lengths_section(ui, "list_lengths", lengths));
        }
    }
    if let Some(findings) = field.findings.as_ref().filter(|f| !f.is_empty()) {
        section(ui, "Findings", |ui| {
            for f in findings {
                let (colour, symbol) = palette::severity(ui.visuals(), f.severity());
                ui.horizontal_wrapped(|ui| {
                    ui.colored_label(colour, format!("{symbol} {}", f.severity().label()));
                    ui.strong(f.kind.replace('_', " "));
                    ui.label(&f.message);
                });
                for e in &f.examples {
                    ui.indent(("example", &f.kind, e), |ui| {
                        ui.monospace(e);
                    });
                }
                if let Some(filter) = RowFilter::behind_finding(&field.path, &f.behind)
                    && ui.link(format!("Show the rows behind {}", f.kind.replace('_', " "))).clicked()
                {
                    clicked = Some(filter);
                }
            }
        });
    }
    clicked
}

fn section(ui: &mut egui::Ui, title: &str, body: impl FnOnce(&mut egui::Ui)) {
    ui.add_space(6.0);
    ui.strong(title);
    body(ui);
}

fn types_section(ui: &mut egui::Ui, field: &FieldEntry) {
    egui::Grid::new("types").num_columns(2).spacing([16.0, 4.0]).show(ui, |ui| {
        if let Some(declared) = &field.declared_type {
            ui.label("Declared");
            let nullable = match field.declared_nullable {
                Some(true) => ", nullable",
                Some(false) => ", not null",
                None => "",
            };
            ui.monospace(format!("{declared}{nullable}"));
            ui.end_row();
        }
        if let Some(p) = &field.parquet {
            ui.label("Parquet");
            let logical = p.logical.as_deref().map(|l| format!(" {l}")).unwrap_or_default();
            ui.monospace(format!("{} {}{logical}", p.repetition, p.physical));
            ui.end_row();
        }
        ui.label("Observed");
        ui.monospace(&field.observed);
        ui.end_row();
        let present: u64 = field.kinds.iter().filter(|(k, _)| **k != "null").map(|(_, n)| n).sum();
        if field.kinds.len() > 1 {
            ui.label("Kinds");
            ui.vertical(|ui| {
                for (kind, n) in &field.kinds {
                    ui.label(format!("{kind}: {} ({})", group_digits(*n), share(*n, field.count)));
                }
            });
            ui.end_row();
        }
        if !field.string_forms.is_empty() {
            ui.label("Text forms");
            let forms: Vec<String> =
                field.string_forms.iter().map(|(f, n)| format!("{f} {}", share(*n, present))).collect();
            ui.label(forms.join(", "));
            ui.end_row();
        }
    });
    if !field.examples.is_empty() {
        ui.label("Examples of the less common kinds:");
        for e in &field.examples {
            let place = e.row.map_or_else(|| "an uncounted row".to_string(), |r| format!("row {}", group_digits(r)));
            ui.monospace(format!("{place} ({}): {}", e.kind, e.value));
        }
    }
}

/// Draws the grid; true when "show these rows" beside the nulls was clicked.
fn statistics_grid(ui: &mut egui::Ui, field: &FieldEntry) -> bool {
    let mut rows: Vec<(&str, String)> = vec![
        ("Places", group_digits(field.count)),
        ("Null", format!("{} ({})", group_digits(field.nulls), share(field.nulls, field.count))),
        ("Missing", format!("{} ({})", group_digits(field.missing), share(field.missing, field.count))),
    ];
    if let Some(s) = &field.stats {
        rows.extend(stat_rows(s));
    }
    let mut show_nulls = false;
    let empty = field.nulls + field.missing;
    egui::Grid::new("statistics").num_columns(2).striped(true).spacing([24.0, 4.0]).show(ui, |ui| {
        for (name, value) in rows {
            ui.label(name);
            if name == "Null" && empty > 0 {
                ui.horizontal(|ui| {
                    ui.label(value);
                    let also = if field.missing > 0 { " (with the missing ones)" } else { "" };
                    show_nulls = ui.link(format!("show these rows{also}")).clicked();
                });
            } else {
                ui.label(value);
            }
            ui.end_row();
        }
    });
    show_nulls
}

fn json_number(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::Number(n) => n.as_f64().map(decimal).unwrap_or_else(|| n.to_string()),
        serde_json::Value::String(s) => s.clone(),
        other => other.to_string(),
    }
}

fn stat_rows(s: &StatsEntry) -> Vec<(&'static str, String)> {
    let mut rows = Vec::new();
    if let Some(d) = s.distinct {
        let value = match (s.distinct_exact, s.distinct_error) {
            (Some(false), Some(e)) => format!("≈ {} (± {:.1} %, estimated)", group_digits(d), e * 100.0),
            _ => group_digits(d),
        };
        rows.push(("Distinct", value));
    }
    if let Some(v) = &s.min {
        rows.push(("Min", json_number(v)));
    }
    if let Some(v) = &s.max {
        rows.push(("Max", json_number(v)));
    }
    if let Some(m) = s.mean {
        rows.push(("Mean", decimal(m)));
    }
    if let Some(sd) = s.std {
        rows.push(("Standard deviation", decimal(sd)));
    }
    if let Some(q) = &s.quantiles {
        let note = match (s.quantiles_exact, s.quantiles_rank_error) {
            (Some(false), Some(e)) => format!(" (rank error ≤ {:.0} %)", e * 100.0),
            _ => String::new(),
        };
        let values = q.labelled();
        let spelled: Vec<String> = values.iter().map(|(p, v)| format!("{p} {}", decimal(*v))).collect();
        rows.push(("Quantiles", format!("{}{note}", spelled.join(" · "))));
    }
    if let Some(n) = s.nan.filter(|n| *n > 0) {
        rows.push(("NaN", group_digits(n)));
    }
    if let Some(n) = s.infinite.filter(|n| *n > 0) {
        rows.push(("Infinite", group_digits(n)));
    }
    if let Some(n) = s.empty {
        rows.push(("Empty text", group_digits(n)));
    }
    if let Some(n) = s.padded {
        rows.push(("Padded with spaces", group_digits(n)));
    }
    if let Some(e) = &s.earliest {
        rows.push(("Earliest", e.clone()));
    }
    if let Some(l) = &s.latest {
        rows.push(("Latest", l.clone()));
    }
    if let Some(f) = s.future_share {
        rows.push(("In the future", format!("{:.1} %", f * 100.0)));
    }
    rows
}

/// Draws the histogram; the index of the bar clicked, when `clickable`.
fn numeric_histogram(ui: &mut egui::Ui, id: &str, h: &Histogram, clickable: bool) -> Option<usize> {
    let bars: Vec<(String, u64)> = h
        .edges
        .windows(2)
        .zip(&h.counts)
        .map(|(w, c)| (format!("{} to {}", decimal(w[0]), decimal(w[1])), *c))
        .collect();
    let clicked = bar_chart(ui, id, &bars, clickable);
    if !h.exact {
        ui.weak("Counts estimated from the quantile sketch.");
    }
    clicked
}

/// Vertical bars, one per (label, count); hovering shows both.
/// Returns the index of the bar clicked, when `clickable` (each bar is then
/// a button named "bar N: label, count" for screen readers and tests).
fn bar_chart(ui: &mut egui::Ui, id: &str, bars: &[(String, u64)], clickable: bool) -> Option<usize> {
    let mut clicked = None;
    let max = bars.iter().map(|b| b.1).max().unwrap_or(0).max(1) as f32;
    let width = ui.available_width().min(640.0);
    let (rect, _) = ui.allocate_exact_size(egui::vec2(width, 120.0), egui::Sense::hover());
    let n = bars.len().max(1) as f32;
    let step = rect.width() / n;
    let colour = palette::bar(ui.visuals());
    for (i, (label, count)) in bars.iter().enumerate() {
        let h = rect.height() * (*count as f32 / max);
        let bar = egui::Rect::from_min_max(
            egui::pos2(rect.left() + i as f32 * step + 1.0, rect.bottom() - h),
            egui::pos2(rect.left() + (i + 1) as f32 * step - 1.0, rect.bottom()),
        );
        ui.painter().rect_filled(bar, 1.0, colour);
        let hit = egui::Rect::from_x_y_ranges(bar.x_range(), rect.y_range());
        let sense = if clickable { egui::Sense::click() } else { egui::Sense::hover() };
        let response = ui.interact(hit, ui.scope_id().with((id, i)), sense);
        if clickable {
            let name = format!("bar {}: {label}, {}", i + 1, group_digits(*count));
            response.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &name));
            if response.clicked() {
                clicked = Some(i);
            }
            response.on_hover_text(format!("{label}: {}. Click to see these rows.", group_digits(*count)));
        } else {
            response.on_hover_text(format!("{label}: {}", group_digits(*count)));
        }
    }
    ui.painter().line_segment([rect.left_bottom(), rect.right_bottom()], ui.visuals().widgets.noninteractive.fg_stroke);
    if let (Some(first), Some(last)) = (bars.first(), bars.last()) {
        ui.horizontal(|ui| {
            ui.weak(format!("from {}", first.0.split(" to ").next().unwrap_or(&first.0)));
            ui.add_space((width - 240.0).max(0.0));
            ui.weak(format!("to {}", last.0.rsplit(" to ").next().unwrap_or(&last.0)));
        });
    }
    clicked
}

/// Draws the top values; the value clicked (to see its rows), if any.
fn top_values(
    ui: &mut egui::Ui,
    field: &FieldEntry,
    stats: &StatsEntry,
    top: &[crate::profile::top::TopValue],
) -> Option<String> {
    let present = field.count - field.nulls - field.missing;
    let mut clicked = None;
    egui::Grid::new("top_values").num_columns(3).spacing([12.0, 3.0]).show(ui, |ui| {
        for t in top {
            let shown = if t.value.is_empty() { "(empty text)".to_string() } else { t.value.clone() };
            let value = ui.add(egui::Label::new(egui::RichText::new(shown).monospace()).sense(egui::Sense::click()));
            if value.on_hover_text("Click to see the rows with this value").clicked() {
                clicked = Some(t.value.clone());
            }
            share_bar(ui, t.count as f32 / present.max(1) as f32);
            ui.label(format!("{} ({})", group_digits(t.count), share(t.count, present)));
            ui.end_row();
        }
    });
    if stats.top_exact == Some(false) {
        let under = stats.top_max_undercount.unwrap_or(0);
        ui.weak(format!("Counts from a summary; each may be low by up to {}.", group_digits(under)));
    }
    clicked
}

fn share_bar(ui: &mut egui::Ui, part: f32) {
    let (rect, _) = ui.allocate_exact_size(egui::vec2(120.0, 10.0), egui::Sense::hover());
    ui.painter().rect_filled(rect, 2.0, ui.visuals().extreme_bg_color);
    let mut filled = rect;
    filled.set_width(rect.width() * part.clamp(0.0, 1.0));
    ui.painter().rect_filled(filled, 2.0, palette::bar(ui.visuals()));
}

fn lengths_section(ui: &mut egui::Ui, id: &str, lengths: &crate::report::Lengths) {
    ui.label(format!("min {} · mean {} · max {}", decimal(lengths.min), decimal(lengths.mean), decimal(lengths.max)));
    if let Some(h) = &lengths.histogram {
        numeric_histogram(ui, id, h, false);
    }
}
