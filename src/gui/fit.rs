//! Fit: an existing definition (or the generated record types) checked
//! against every row of the open source, on its own thread; the verdicts
//! listed with their rows, each jumping to its field or its rows.

use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::AtomicBool;
use std::sync::mpsc::{Receiver, channel};

use eframe::egui;

use super::palette;
use super::state::{Intent, State};
use crate::explore::{Condition, RowFilter};
use crate::fit::verdict::Problem;
use crate::fit::{self, Definition, DefinitionLang, Fit, FitOptions, Severity, Verdict};
use crate::format::group_digits;
use crate::scan::Scan;

/// What to check: a file the user chose, or the code Record types shows.
#[derive(Debug, Clone, PartialEq)]
pub enum Checked {
    File(PathBuf),
    Generated { code: String, lang: DefinitionLang },
}

impl Checked {
    fn label(&self) -> String {
        match self {
            Checked::File(p) => p.file_name().map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into_owned()),
            Checked::Generated { lang, .. } => format!("the generated {} types", lang.label()),
        }
    }
}

type Outcome = Result<(DefinitionLang, Fit), String>;

#[derive(Default)]
pub struct FitArea {
    /// The scan generation the check and result belong to.
    generation: u64,
    checked: Option<Checked>,
    running: Option<Receiver<Outcome>>,
    result: Option<Outcome>,
}

impl FitArea {
    /// True while a check runs (tests wait on this).
    pub fn is_running(&self) -> bool {
        self.running.is_some()
    }

    /// The finished fit, if any.
    pub fn fit(&self) -> Option<&Fit> {
        self.result.as_ref().and_then(|r| r.as_ref().ok()).map(|(_, f)| f)
    }

    /// Starts checking `checked` against the rows of `scan`.
    pub fn start(&mut self, checked: Checked, scan: Arc<Scan>, generation: u64, wake: impl Fn() + Send + 'static) {
        let (tx, rx) = channel();
        let what = checked.clone();
        std::thread::Builder::new()
            .name("plumbline-fit".into())
            .spawn(move || {
                let outcome = std::panic::catch_unwind(move || run(&what, &scan))
                    .unwrap_or_else(|_| Err("the check stopped on an internal error; the window keeps working".into()));
                let _ = tx.send(outcome);
                wake();
            })
            .expect("spawning a thread");
        *self = FitArea { generation, checked: Some(checked), running: Some(rx), result: None };
    }

    pub fn show(&mut self, ui: &mut egui::Ui, state: &State, generated: Option<(String, DefinitionLang)>) -> Vec<Intent> {
        let mut intents = Vec::new();
        if self.generation != state.generation {
            *self = FitArea { generation: state.generation, ..FitArea::default() };
        }
        if let Some(rx) = &self.running
            && let Ok(outcome) = rx.try_recv()
        {
            self.running = None;
            self.result = Some(outcome);
        }
        if state.scan.is_none() {
            ui.weak("Open a source, then check a definition against its rows.");
            return intents;
        }
        ui.horizontal_wrapped(|ui| {
            if ui.button("Open a definition…").on_hover_text("Scala case classes, Rust structs, Spark DDL or JSON Schema").clicked() {
                intents.push(Intent::ChooseDefinition);
            }
            if let Some((code, lang)) = generated
                && ui.button(format!("Check the generated {} types", lang.label())).clicked()
            {
                intents.push(Intent::CheckDefinition(Checked::Generated { code, lang }));
            }
        });
        ui.separator();
        let Some(checked) = &self.checked else {
            ui.label("Choose a definition to see whether every row fits it.");
            return intents;
        };
        if self.running.is_some() {
            ui.horizontal(|ui| {
                ui.spinner();
                ui.label(format!("Checking {} against every row…", checked.label()));
            });
            return intents;
        }
        match &self.result {
            Some(Ok((lang, fit))) => verdicts(ui, &checked.label(), *lang, fit, &mut intents),
            Some(Err(e)) => {
                ui.colored_label(ui.visuals().error_fg_color, e);
            }
            None => {}
        }
        intents
    }
}

fn run(checked: &Checked, scan: &Scan) -> Outcome {
    let (text, lang, name) = match checked {
        Checked::File(path) => {
            let text = std::fs::read_to_string(path).map_err(|e| format!("{}: {e}", path.display()))?;
            let lang = DefinitionLang::from_path(path)
                .ok_or_else(|| format!("{}: cannot tell the language from the file name (.scala, .rs, .ddl, .sql, .json)", path.display()))?;
            (text, lang, path.display().to_string())
        }
        Checked::Generated { code, lang } => (code.clone(), *lang, checked.label()),
    };
    let definition: Definition = fit::definition::read(&text, lang, None).map_err(|e| format!("{name}: {e}"))?;
    if let crate::scan::Coverage::Broken { error, .. } = &scan.coverage {
        return Err(format!("a fit must see every row, and the source broke part-way: {error}"));
    }
    let stop = AtomicBool::new(false);
    let outcome = fit::fit(scan, Default::default(), &definition, FitOptions::default(), &stop).map_err(|e| e.to_string())?;
    Ok((lang, outcome))
}

/// The verdict's mark: a symbol and a word, never colour alone.
fn mark(ui: &egui::Ui, severity: Severity) -> (egui::Color32, &'static str) {
    use crate::profile::findings::Severity as Shown;
    let (shown, word) = match severity {
        Severity::Fails => (Shown::Attention, "▲ does not fit"),
        Severity::Warns => (Shown::Check, "● fragile"),
        Severity::Note => (Shown::Note, "○ note"),
    };
    (palette::severity(ui.visuals(), shown).0, word)
}

fn verdicts(ui: &mut egui::Ui, name: &str, lang: DefinitionLang, fit: &Fit, intents: &mut Vec<Intent>) {
    let failing = fit.verdicts.iter().filter(|v| v.severity == Severity::Fails).count();
    let rows = group_digits(fit.rows);
    ui.heading(if failing == 0 && fit.from_report {
        format!("Nothing in the report's statistics of its {rows} rows fails to fit {name}.")
    } else if failing == 0 {
        format!("Every one of the {rows} rows fits {name}.")
    } else {
        {
        let (s, verb) = if failing == 1 { ("", "makes") } else { ("s", "make") };
        format!("{failing} difference{s} {verb} rows of the {rows} fail to fit {name}.")
    }
    });
    ui.weak(format!("Read as {}. {} verdict{} in all.", lang.label(), fit.verdicts.len(), if fit.verdicts.len() == 1 { "" } else { "s" }));
    if fit.from_report {
        // A report states counts, not rows: no row counts or rows to show.
        ui.colored_label(
            ui.visuals().warn_fg_color,
            "Checked against a report's statistics, not its rows: a difference they cannot rule out counts as failing.",
        );
    } else if fit.partial {
        ui.colored_label(ui.visuals().warn_fg_color, "PARTIAL: the check was stopped; counts cover the rows read.");
    }
    let mut sorted: Vec<&Verdict> = fit.verdicts.iter().collect();
    sorted.sort_by_key(|v| std::cmp::Reverse(v.severity));
    egui::ScrollArea::vertical().auto_shrink([false, false]).id_salt("fit_verdicts").show(ui, |ui| {
        for v in sorted {
            ui.horizontal_wrapped(|ui| {
                let (colour, word) = mark(ui, v.severity);
                ui.colored_label(colour, word);
                if ui.link(&v.path).on_hover_text("Show this field").clicked() {
                    intents.push(Intent::ShowField(v.path.clone()));
                }
                ui.label(&v.message);
            });
            if v.rows > 0 && v.severity != Severity::Note && !fit.from_report {
                ui.horizontal_wrapped(|ui| {
                    ui.add_space(24.0);
                    ui.weak(format!("{} of {} rows", group_digits(v.rows), group_digits(fit.rows)));
                    if let Some(filter) = rows_behind(v) {
                        if ui.link("show these rows").clicked() {
                            intents.push(Intent::AddRowFilter(filter));
                        }
                    }
                    let examples: Vec<String> = v.examples.iter().map(|e| format!("row {}: {}", group_digits(e.row), e.value)).collect();
                    ui.weak(examples.join("; "));
                });
            }
            ui.add_space(4.0);
        }
    });
}

/// The Rows filter for a verdict: the empty places themselves, else the
/// example rows.
fn rows_behind(v: &Verdict) -> Option<RowFilter> {
    match v.problem {
        Problem::Empty => Some(RowFilter::Field { path: v.path.clone(), condition: Condition::Empty }),
        _ if !v.examples.is_empty() => Some(RowFilter::Rows(v.examples.iter().map(|e| e.row).collect())),
        _ => None,
    }
}
