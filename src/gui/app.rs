//! The window: owns the state and the areas, applies intents after each frame.

use std::path::PathBuf;
use std::sync::mpsc::{Receiver, channel};

use eframe::egui;

use super::compare::CompareArea;
use super::field_sheet::FieldSheet;
use super::field_tree::FieldTree;
use super::findings::FindingsArea;
use super::fit::FitArea;
use super::record_types::RecordTypes;
use super::rows::RowsArea;
use super::source_bar::SourceBar;
use super::state::{Area, Intent, Reading, State};
use super::worker::{JobMessage, ScanJob};

pub struct PlumblineApp {
    pub state: State,
    source_bar: SourceBar,
    pub field_tree: FieldTree,
    field_sheet: FieldSheet,
    findings: FindingsArea,
    pub record_types: RecordTypes,
    pub rows: RowsArea,
    pub fit: FitArea,
    compare: CompareArea,
    job: Option<ScanJob>,
    /// Reads the second source of Compare.
    compare_job: Option<ScanJob>,
    /// Answers from the open dialog, which runs on its own thread: the
    /// path, and what it is for.
    chosen: Option<Receiver<(Option<PathBuf>, Chosen)>>,
    /// The outcome of a save, which runs on its own thread.
    saved: Option<Receiver<Result<String, String>>>,
    /// Where `state.settings` is kept; None keeps nothing (tests).
    settings_file: Option<PathBuf>,
    ctx: egui::Context,
}

impl PlumblineApp {
    pub fn new(ctx: egui::Context, path: Option<PathBuf>) -> Self {
        super::palette::install_fonts(&ctx);
        let mut app = PlumblineApp {
            state: State::default(),
            source_bar: SourceBar,
            field_tree: FieldTree::default(),
            field_sheet: FieldSheet,
            findings: FindingsArea::default(),
            record_types: RecordTypes::default(),
            rows: RowsArea::default(),
            fit: FitArea::default(),
            compare: CompareArea::default(),
            job: None,
            compare_job: None,
            chosen: None,
            saved: None,
            settings_file: None,
            ctx,
        };
        if let Some(path) = path {
            app.apply(Intent::Open(path));
        }
        app
    }

    /// Opens with a field to select and an area to show once read,
    /// remembering settings in `settings_file`.
    pub fn start(ctx: egui::Context, start: super::Start, settings_file: Option<PathBuf>) -> Self {
        let settings = settings_file.as_deref().map(super::settings::Settings::load).unwrap_or_default();
        if let Some(dark) = settings.dark {
            ctx.set_theme(if dark { egui::Theme::Dark } else { egui::Theme::Light });
        }
        let mut app = PlumblineApp::new(ctx, None);
        app.state.settings = settings;
        app.settings_file = settings_file;
        if let Some(path) = start.path {
            app.apply(Intent::Open(path));
        }
        app.state.select_when_read = start.field;
        app.state.compare_when_read = start.compare;
        app.state.area = start.area;
        app
    }

    /// True while a source is being read, Rows waits for rows or a fit
    /// runs (tests wait on this).
    pub fn is_busy(&self) -> bool {
        self.job.is_some()
            || self.compare_job.is_some()
            || self.rows.is_waiting()
            || self.fit.is_running()
            || self.record_types.is_writing()
    }

    /// Writes the settings file, if there is one. A failure is only
    /// reported on stderr: not remembering must never stop the work.
    pub fn save_settings(&self) {
        if let Some(file) = &self.settings_file
            && let Err(e) = self.state.settings.save(file)
        {
            eprintln!("plumbline: cannot remember the window's settings: {e}");
        }
    }

    /// Notes the theme and sizes now in use; saves when the theme changed.
    fn note_layout(&mut self, ui: &egui::Ui, tree_width: f32) {
        let dark = ui.ctx().theme() == egui::Theme::Dark;
        let s = &mut self.state.settings;
        s.tree_width = Some(tree_width);
        if let Some(rect) = ui.ctx().input(|i| i.viewport().inner_rect) {
            s.window = Some([rect.width(), rect.height()]);
        }
        if s.dark != Some(dark) {
            s.dark = Some(dark);
            self.save_settings();
        }
    }

    /// Shows the native open dialog on its own thread.
    fn choose_file(&mut self, purpose: Chosen) {
        let (tx, rx) = channel();
        let ctx = self.ctx.clone();
        std::thread::spawn(move || {
            let title = match purpose {
                Chosen::Source => "Open a data source",
                Chosen::Compare => "Open a source to compare with",
                Chosen::Definition => "Open a definition to check against the rows",
            };
            let picked = rfd::FileDialog::new().set_title(title).pick_file();
            let _ = tx.send((picked, purpose));
            ctx.request_repaint();
        });
        self.chosen = Some(rx);
    }

    pub fn apply(&mut self, intent: Intent) {
        match intent {
            Intent::ChooseFile => self.choose_file(Chosen::Source),
            Intent::ChooseCompareFile => self.choose_file(Chosen::Compare),
            Intent::ChooseDefinition => self.choose_file(Chosen::Definition),
            Intent::CheckDefinition(checked) => {
                if let Some(scan) = &self.state.scan {
                    let ctx = self.ctx.clone();
                    self.fit.start(checked, scan.clone(), self.state.generation, move || ctx.request_repaint());
                    self.state.area = Area::Fit;
                }
            }
            Intent::OpenCompare(path) => {
                if let Some(job) = self.compare_job.take() {
                    job.stop();
                }
                let ctx = self.ctx.clone();
                self.state.compare_reading = Some(Reading { path: path.clone(), progress: Default::default() });
                self.state.area = Area::Compare;
                self.compare_job = Some(ScanJob::start(path, false, move || ctx.request_repaint()));
            }
            Intent::Open(path) => {
                if let Some(job) = self.job.take() {
                    job.stop();
                }
                self.state.settings.remember(&path);
                self.save_settings();
                let ctx = self.ctx.clone();
                self.state.reading = Some(Reading { path: path.clone(), progress: Default::default() });
                self.state.message = None;
                self.job = Some(ScanJob::start(path, true, move || ctx.request_repaint()));
            }
            Intent::StopReading => {
                if let Some(job) = &self.job {
                    job.stop();
                }
            }
            Intent::Select(path) => self.state.selected = Some(path),
            Intent::ShowField(path) => {
                self.state.selected = Some(path);
                self.state.area = Area::FieldSheet;
            }
            Intent::ShowArea(area) => self.state.area = area,
            Intent::SaveText { text, file_name, title } => {
                let (tx, rx) = channel();
                let ctx = self.ctx.clone();
                std::thread::spawn(move || {
                    let target = rfd::FileDialog::new().set_title(title).set_file_name(&file_name).save_file();
                    if let Some(target) = target {
                        let outcome = std::fs::write(&target, text)
                            .map(|_| format!("Saved to {}", target.display()))
                            .map_err(|e| format!("{}: cannot save: {e}", target.display()));
                        let _ = tx.send(outcome);
                    }
                    ctx.request_repaint();
                });
                self.saved = Some(rx);
            }
            Intent::AddRowFilter(filter) => {
                let mut filters = self.state.row_filters.clone();
                if !filters.contains(&filter) {
                    filters.push(filter);
                }
                self.state.set_row_filters(filters);
                self.state.area = Area::Rows;
            }
            Intent::RemoveRowFilter(index) => {
                let mut filters = self.state.row_filters.clone();
                if index < filters.len() {
                    filters.remove(index);
                }
                self.state.set_row_filters(filters);
            }
            Intent::ClearRowFilters => self.state.set_row_filters(Vec::new()),
            Intent::DismissMessage => {
                self.state.message = None;
                self.state.notice = None;
            }
        }
    }

    /// Takes in what background threads sent since the last frame.
    pub fn poll(&mut self) {
        if let Some(rx) = &self.chosen
            && let Ok(answer) = rx.try_recv()
        {
            self.chosen = None;
            match answer {
                (Some(path), Chosen::Source) => self.apply(Intent::Open(path)),
                (Some(path), Chosen::Compare) => self.apply(Intent::OpenCompare(path)),
                (Some(path), Chosen::Definition) => self.apply(Intent::CheckDefinition(super::fit::Checked::File(path))),
                (None, _) => {}
            }
        }
        if let Some(rx) = &self.saved
            && let Ok(outcome) = rx.try_recv()
        {
            self.saved = None;
            match outcome {
                Ok(note) => self.state.notice = Some(note),
                Err(e) => self.state.message = Some(e),
            }
        }
        self.poll_compare();
        let polled = poll_job(&mut self.job, &mut self.state.reading);
        if let Some(first) = polled.first_look {
            self.state.show_scan(first);
        }
        let Some(result) = polled.finished else { return };
        match result {
            // Stopped before passing the first look: the first look says more.
            Ok(scan) if self.state.first_look_says_more(&scan) => {}
            Ok(scan) => {
                if let crate::scan::Coverage::Broken { error, .. } = &scan.coverage {
                    self.state.message = Some(error.clone());
                }
                self.state.show_scan(scan);
                if let Some(other) = self.state.compare_when_read.take() {
                    self.apply(Intent::OpenCompare(other));
                }
            }
            Err(e) => self.state.message = Some(e),
        }
    }

    fn poll_compare(&mut self) {
        let Some(result) = poll_job(&mut self.compare_job, &mut self.state.compare_reading).finished else { return };
        match (result, &self.state.scan) {
            (Ok(scan), Some(open)) => {
                if let crate::scan::Coverage::Broken { error, .. } = &scan.coverage {
                    self.state.message = Some(error.clone());
                }
                self.state.comparison = Some(super::state::Comparison::new(open, scan));
            }
            (Ok(_), None) => self.state.message = Some("open a source before comparing".into()),
            (Err(e), _) => self.state.message = Some(e),
        }
    }

    /// Draws one frame and applies what the user asked for.
    pub fn frame(&mut self, ui: &mut egui::Ui) {
        self.poll();
        let dropped: Vec<PathBuf> = ui.ctx().input(|i| i.raw.dropped_files.iter().map(|f| f.path().to_path_buf()).filter(|p| !p.as_os_str().is_empty()).collect());
        let mut intents: Vec<Intent> = dropped.into_iter().take(1).map(Intent::Open).collect();
        egui::Panel::top("source_bar").show(ui, |ui| {
            intents.extend(self.source_bar.show(ui, &self.state));
        });
        let tree_width = self.state.settings.tree_width.unwrap_or(420.0);
        let tree = egui::Panel::left("field_tree").resizable(true).default_size(tree_width).min_size(340.0).show(ui, |ui| {
            intents.extend(self.field_tree.show(ui, &self.state));
        });
        self.note_layout(ui, tree.response.rect.width());
        egui::CentralPanel::default().show(ui, |ui| {
            ui.horizontal(|ui| {
                for area in Area::ALL {
                    if ui.selectable_label(self.state.area == area, area.label()).clicked() {
                        intents.push(Intent::ShowArea(area));
                    }
                }
            });
            ui.separator();
            intents.extend(match self.state.area {
                Area::FieldSheet => self.field_sheet.show(ui, &self.state),
                Area::Rows => self.rows.show(ui, &self.state),
                Area::Findings => self.findings.show(ui, &self.state),
                Area::RecordTypes => self.record_types.show(ui, &self.state),
                Area::Fit => {
                    let generated = self.record_types.readable_code(&self.state, ui.ctx());
                    self.fit.show(ui, &self.state, generated)
                }
                Area::Compare => self.compare.show(ui, &self.state),
            });
        });
        for intent in intents {
            self.apply(intent);
        }
    }
}

/// What the open dialog was shown for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Chosen {
    Source,
    Compare,
    Definition,
}

/// Takes a job's messages: progress into `reading`; the result once it
/// finished (the job and `reading` are then cleared).
/// What a job said since the last frame.
#[derive(Default)]
struct Polled {
    first_look: Option<Box<crate::scan::Scan>>,
    finished: Option<Result<Box<crate::scan::Scan>, String>>,
}

fn poll_job(job: &mut Option<ScanJob>, reading: &mut Option<Reading>) -> Polled {
    let mut polled = Polled::default();
    while let Some(message) = job.as_ref().and_then(|j| j.messages.try_recv().ok()) {
        match message {
            JobMessage::Progress(p) => {
                if let Some(r) = reading {
                    r.progress = p;
                }
            }
            JobMessage::FirstLook(scan) => polled.first_look = Some(scan),
            JobMessage::Finished(result) => polled.finished = Some(result),
        }
    }
    if polled.finished.is_some() {
        *job = None;
        *reading = None;
    }
    polled
}

impl eframe::App for PlumblineApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.frame(ui);
    }

    fn on_exit(&mut self, _gl: Option<&eframe::glow::Context>) {
        self.save_settings();
    }
}
