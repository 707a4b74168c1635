//! The window: owns the state and the areas, applies intents after each frame.

use std::path::PathBuf;
use std::sync::mpsc::{Receiver, channel};

use eframe::egui;

use super::field_tree::FieldTree;
use super::source_bar::SourceBar;
use super::state::{Intent, Reading, State};
use super::worker::{JobMessage, ScanJob};

pub struct PlumblineApp {
    pub state: State,
    source_bar: SourceBar,
    field_tree: FieldTree,
    job: Option<ScanJob>,
    /// Answers from the open dialog, which runs on its own thread.
    chosen: Option<Receiver<Option<PathBuf>>>,
    ctx: egui::Context,
}

impl PlumblineApp {
    pub fn new(ctx: egui::Context, path: Option<PathBuf>) -> Self {
        let mut app = PlumblineApp {
            state: State::default(),
            source_bar: SourceBar,
            field_tree: FieldTree,
            job: None,
            chosen: None,
            ctx,
        };
        if let Some(path) = path {
            app.apply(Intent::Open(path));
        }
        app
    }

    /// True while a source is being read (tests wait on this).
    pub fn is_busy(&self) -> bool {
        self.job.is_some()
    }

    pub fn apply(&mut self, intent: Intent) {
        match intent {
            Intent::ChooseFile => {
                let (tx, rx) = channel();
                let ctx = self.ctx.clone();
                std::thread::spawn(move || {
                    let picked = rfd::FileDialog::new().set_title("Open a data source").pick_file();
                    let _ = tx.send(picked);
                    ctx.request_repaint();
                });
                self.chosen = Some(rx);
            }
            Intent::Open(path) => {
                if let Some(job) = self.job.take() {
                    job.stop();
                }
                let ctx = self.ctx.clone();
                self.state.reading = Some(Reading { path: path.clone(), progress: Default::default() });
                self.state.message = None;
                self.job = Some(ScanJob::start(path, move || ctx.request_repaint()));
            }
            Intent::StopReading => {
                if let Some(job) = &self.job {
                    job.stop();
                }
            }
            Intent::Select(path) => self.state.selected = Some(path),
            Intent::DismissMessage => self.state.message = None,
        }
    }

    /// Takes in what background threads sent since the last frame.
    pub fn poll(&mut self) {
        if let Some(rx) = &self.chosen
            && let Ok(answer) = rx.try_recv()
        {
            self.chosen = None;
            if let Some(path) = answer {
                self.apply(Intent::Open(path));
            }
        }
        let Some(job) = &self.job else { return };
        let mut finished = None;
        while let Ok(message) = job.messages.try_recv() {
            match message {
                JobMessage::Progress(p) => {
                    if let Some(r) = &mut self.state.reading {
                        r.progress = p;
                    }
                }
                JobMessage::Finished(result) => finished = Some(result),
            }
        }
        if let Some(result) = finished {
            self.job = None;
            self.state.reading = None;
            match result {
                Ok(scan) => {
                    if let crate::scan::Coverage::Broken { error, .. } = &scan.coverage {
                        self.state.message = Some(error.clone());
                    }
                    self.state.selected = None;
                    self.state.scan = Some(scan);
                }
                Err(e) => self.state.message = Some(e),
            }
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
        egui::CentralPanel::default().show(ui, |ui| {
            intents.extend(self.field_tree.show(ui, &self.state));
        });
        for intent in intents {
            self.apply(intent);
        }
    }
}

impl eframe::App for PlumblineApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.frame(ui);
    }
}
