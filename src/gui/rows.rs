//! The Rows area: the source's rows in a virtualised table, a page at a time
//! from the rows thread, narrowed by the filters the user clicked elsewhere
//! (shown as removable chips). Only the rows on screen are laid out.

use std::collections::{HashMap, HashSet};

use eframe::egui;
use egui_extras::{Column, TableBuilder};

use super::rows_worker::{Answer, PAGE_ROWS, Request, RowsWorker};
use super::state::{Intent, State};
use crate::explore::{Cell, Page};
use crate::format::group_digits;

const ROW_HEIGHT: f32 = 20.0;
/// Pages kept in memory; beyond it the ones farthest from the screen go, so
/// scrolling through a million rows does not keep every page it passed.
const KEPT_PAGES: usize = 40;

#[derive(Default)]
pub struct RowsArea {
    /// The scan the worker reads, by generation.
    generation: u64,
    worker: Option<RowsWorker>,
    columns: Option<Result<Vec<String>, String>>,
    /// The filters' version the count and pages below belong to.
    version: u64,
    count: Option<Result<u64, String>>,
    count_asked: bool,
    pages: HashMap<usize, Result<Page, String>>,
    asked: HashSet<usize>,
    /// A cell opened to show its whole value: row number, column, text.
    opened: Option<(u64, String, String)>,
}

impl RowsArea {
    /// True while a count or a page is on its way (tests wait on this).
    pub fn is_waiting(&self) -> bool {
        self.worker.is_some() && (self.columns.is_none() || (self.count_asked && self.count.is_none()) || !self.asked.is_empty())
    }

    /// The number of rows the filters keep, once counted.
    pub fn kept_rows(&self) -> Option<u64> {
        self.count.as_ref().and_then(|c| c.as_ref().ok().copied())
    }

    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        let Some(scan) = &state.scan else {
            ui.weak("Open a source to see its rows.");
            return intents;
        };
        if let Some(from) = &scan.from_report {
            // A report holds statistics only; its rows are where its source is.
            ui.weak(format!(
                "{} is a report: it holds statistics, not rows. Open its source, {}, to see them.",
                from.file.display(),
                scan.info.path.display()
            ));
            return intents;
        }
        if self.worker.is_none() || self.generation != state.generation {
            let ctx = ui.ctx().clone();
            *self = RowsArea { generation: state.generation, ..RowsArea::default() };
            self.worker = Some(RowsWorker::start(scan.info.clone(), move || ctx.request_repaint()));
        }
        if self.version != state.row_filters_version {
            self.version = state.row_filters_version;
            self.count = None;
            self.count_asked = false;
            self.pages.clear();
            self.asked.clear();
        }
        self.take_answers();
        filter_chips(ui, state, &mut intents);
        match &self.columns {
            None => {
                waiting(ui, "Preparing the rows…");
                return intents;
            }
            Some(Err(e)) => {
                ui.colored_label(ui.visuals().error_fg_color, e);
                return intents;
            }
            Some(Ok(_)) => {}
        }
        if !self.count_asked {
            self.ask(Request::Count { version: self.version, filters: state.row_filters.clone() });
            self.count_asked = true;
        }
        let total = match &self.count {
            None => {
                waiting(ui, "Counting the rows…");
                return intents;
            }
            Some(Err(e)) => {
                ui.colored_label(ui.visuals().error_fg_color, e.clone());
                return intents;
            }
            Some(Ok(n)) => *n,
        };
        ui.label(count_line(total, scan.info.rows, !state.row_filters.is_empty()));
        self.opened_value(ui);
        self.table(ui, state, total);
        intents
    }

    fn ask(&self, request: Request) {
        if let Some(worker) = &self.worker {
            worker.send(request);
        }
    }

    fn take_answers(&mut self) {
        let Some(worker) = &self.worker else { return };
        let answers: Vec<Answer> = worker.answers.try_iter().collect();
        for answer in answers {
            match answer {
                Answer::Opened(columns) => self.columns = Some(columns),
                Answer::Count { version, result } if version == self.version => self.count = Some(result),
                Answer::Page { version, index, result } if version == self.version => {
                    self.asked.remove(&index);
                    self.pages.insert(index, result);
                }
                Answer::Dropped { version, index } if version == self.version => {
                    self.asked.remove(&index);
                }
                _ => {}
            }
        }
    }

    fn opened_value(&mut self, ui: &mut egui::Ui) {
        let Some((row, column, text)) = &self.opened else { return };
        let mut close = false;
        egui::Frame::group(ui.style()).show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.strong(format!("Row {}, {column}", group_digits(*row)));
                close = ui.button("Close").clicked();
            });
            egui::ScrollArea::vertical().id_salt("opened_value").max_height(180.0).show(ui, |ui| {
                ui.add(egui::Label::new(egui::RichText::new(text.as_str()).monospace()).selectable(true));
            });
        });
        if close {
            self.opened = None;
        }
    }

    fn table(&mut self, ui: &mut egui::Ui, state: &State, total: u64) {
        let Some(Ok(columns)) = &self.columns else { return };
        let columns = columns.clone();
        let mut wanted = Vec::new();
        let mut on_screen = Vec::new();
        let mut open = None;
        egui::ScrollArea::horizontal().id_salt("rows_wide").show(ui, |ui| {
            TableBuilder::new(ui)
                .id_salt(("rows_table", state.generation))
                .striped(true)
                .column(Column::initial(70.0).at_least(40.0).resizable(true))
                .columns(Column::initial(150.0).at_least(40.0).resizable(true).clip(true), columns.len())
                .header(ROW_HEIGHT, |mut header| {
                    header.col(|ui| {
                        ui.strong("row");
                    });
                    for name in &columns {
                        header.col(|ui| {
                            ui.strong(name);
                        });
                    }
                })
                .body(|body| {
                    body.rows(ROW_HEIGHT, total as usize, |mut row| {
                        let at = row.index();
                        let page = at / PAGE_ROWS;
                        on_screen.push(page);
                        match self.pages.get(&page) {
                            Some(Ok(p)) => {
                                let Some(r) = p.rows.get(at - page * PAGE_ROWS) else { return };
                                row.col(|ui| {
                                    ui.weak(group_digits(r.number));
                                });
                                for (cell, name) in r.cells.iter().zip(&columns) {
                                    row.col(|ui| {
                                        if show_cell(ui, cell) {
                                            open = Some((r.number, name.clone(), cell.opened.clone().unwrap_or_default()));
                                        }
                                    });
                                }
                            }
                            Some(Err(e)) => {
                                row.col(|ui| {
                                    ui.colored_label(ui.visuals().error_fg_color, "!").on_hover_text(e.as_str());
                                });
                            }
                            None => {
                                wanted.push(page);
                                row.col(|ui| {
                                    ui.weak("…");
                                });
                            }
                        }
                    });
                });
        });
        if open.is_some() {
            self.opened = open;
        }
        self.forget_far_pages(&on_screen);
        wanted.dedup();
        for page in wanted {
            if self.asked.insert(page) {
                self.ask(Request::Page { version: self.version, filters: state.row_filters.clone(), index: page });
            }
        }
    }
}

impl RowsArea {
    fn forget_far_pages(&mut self, on_screen: &[usize]) {
        let (Some(&first), Some(&last)) = (on_screen.first(), on_screen.last()) else { return };
        forget_far(&mut self.pages, first, last, KEPT_PAGES);
    }
}

/// Keeps the `keep` pages nearest to the pages `first..=last` on screen.
fn forget_far<T>(pages: &mut HashMap<usize, T>, first: usize, last: usize, keep: usize) {
    if pages.len() <= keep {
        return;
    }
    let distance = |p: usize| if p < first { first - p } else { p.saturating_sub(last) };
    let mut by_distance: Vec<usize> = pages.keys().copied().collect();
    by_distance.sort_by_key(|&p| distance(p));
    for p in &by_distance[keep..] {
        pages.remove(p);
    }
}

fn waiting(ui: &mut egui::Ui, what: &str) {
    ui.horizontal(|ui| {
        ui.spinner();
        ui.label(what);
    });
}

/// Draws a cell; true when it was clicked open.
fn show_cell(ui: &mut egui::Ui, cell: &Cell) -> bool {
    if cell.is_null {
        ui.weak("null");
        return false;
    }
    let text = egui::RichText::new(cell.text.as_str()).monospace();
    if cell.opened.is_some() {
        let response = ui.add(egui::Label::new(text).truncate().sense(egui::Sense::click()));
        response.on_hover_text("Click to see the whole value").clicked()
    } else {
        ui.add(egui::Label::new(text).truncate());
        false
    }
}

fn count_line(kept: u64, rows: Option<u64>, filtered: bool) -> String {
    match (filtered, rows) {
        (true, Some(all)) => format!("{} of {} rows match", group_digits(kept), group_digits(all)),
        (true, None) => format!("{} rows match", group_digits(kept)),
        (false, _) => format!("{} rows", group_digits(kept)),
    }
}

/// The active filters as chips; clicking one removes it.
fn filter_chips(ui: &mut egui::Ui, state: &State, intents: &mut Vec<Intent>) {
    if state.row_filters.is_empty() {
        ui.weak("Every row. Click a histogram bar, a top value, \"null\" or a finding's rows to narrow them.");
        return;
    }
    ui.horizontal_wrapped(|ui| {
        ui.label("Only rows where:");
        for (i, filter) in state.row_filters.iter().enumerate() {
            let chip = ui.button(format!("{}  ×", filter.label())).on_hover_text("Remove this filter");
            if chip.clicked() {
                intents.push(Intent::RemoveRowFilter(i));
            }
        }
        if state.row_filters.len() > 1 && ui.link("remove all").clicked() {
            intents.push(Intent::ClearRowFilters);
        }
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_the_pages_nearest_the_screen_are_kept() {
        let mut pages: HashMap<usize, ()> = (0..100).map(|p| (p, ())).collect();
        forget_far(&mut pages, 50, 52, 7);
        let mut kept: Vec<usize> = pages.into_keys().collect();
        kept.sort();
        assert_eq!(kept, vec![48, 49, 50, 51, 52, 53, 54]);
        let mut few: HashMap<usize, ()> = (0..5).map(|p| (p, ())).collect();
        forget_far(&mut few, 90, 91, 7);
        assert_eq!(few.len(), 5, "fewer pages than the limit stay");
    }

    #[test]
    fn the_count_line_says_how_many_rows_are_kept_of_how_many() {
        assert_eq!(count_line(12, Some(5000), true), "12 of 5,000 rows match");
        assert_eq!(count_line(12, None, true), "12 rows match");
        assert_eq!(count_line(5000, Some(5000), false), "5,000 rows");
    }
}
