//! Record types: pick a target and the generator's options, read the
//! highlighted code, copy or save it, and see how it fits the rows read.

use std::sync::{Arc, OnceLock};

use eframe::egui;

use super::fit::Checked;
use super::highlight::Lines;
use crate::fit::DefinitionLang;
use super::state::{Intent, State};
use crate::format::group_digits;
use crate::types::{self, Generated, Lang, MixedChoice, Optionality, TimeChoice, TypeOptions};

pub struct RecordTypes {
    pub lang: Lang,
    pub optional: Optionality,
    pub mixed: MixedChoice,
    pub time: TimeChoice,
    /// The root type's name; empty means the name from the file.
    pub root: String,
    /// The code for (scan generation, choices), written on its own thread
    /// and kept until either changes.
    code: Option<(CodeKey, Arc<OnceLock<Written>>)>,
}

type CodeKey = (u64, Choices);

type Choices = (Lang, Optionality, MixedChoice, TimeChoice, String);

/// Generated code and its lines for the view, or why there is none.
type Written = Result<(Generated, Lines), String>;

impl Default for RecordTypes {
    fn default() -> Self {
        RecordTypes {
            lang: Lang::Scala,
            optional: Optionality::default(),
            mixed: MixedChoice::default(),
            time: TimeChoice::default(),
            root: String::new(),
            code: None,
        }
    }
}

impl RecordTypes {
    /// True while code is being written (tests wait on this).
    pub fn is_writing(&self) -> bool {
        self.code.as_ref().is_some_and(|(_, cell)| cell.get().is_none())
    }

    /// The code for the current scan and choices, once written. Writing
    /// starts on its own thread the first time they are asked for: on a wide
    /// shape it takes longer than a frame may.
    fn written(&mut self, state: &State, ctx: &egui::Context) -> Option<&Written> {
        let scan = state.scan.as_ref()?;
        let key = (state.generation, (self.lang, self.optional, self.mixed, self.time, self.root.clone()));
        if self.code.as_ref().is_none_or(|(k, _)| *k != key) {
            let root = if self.root.trim().is_empty() { types::default_root(scan) } else { self.root.trim().to_string() };
            let options = TypeOptions { root, optional: self.optional, mixed: self.mixed, time: self.time };
            let cell = Arc::new(OnceLock::new());
            let (scan, lang, done, ctx) = (scan.clone(), self.lang, cell.clone(), ctx.clone());
            std::thread::Builder::new()
                .name("plumbline-types".into())
                .spawn(move || {
                    let written = std::panic::catch_unwind(move || {
                        let generated = types::generate(&scan, lang, &options);
                        let lines = Lines::new(generated.code.clone(), lang);
                        (generated, lines)
                    })
                    .map_err(|_| "writing the record types stopped on an internal error; the window keeps working".to_string());
                    let _ = done.set(written);
                    ctx.request_repaint();
                })
                .expect("spawning a thread");
            self.code = Some((key, cell));
        }
        self.code.as_ref().and_then(|(_, cell)| cell.get())
    }

    /// The code shown and the language to read it back in, for the targets
    /// Fit can read (None until it is written).
    pub fn readable_code(&mut self, state: &State, ctx: &egui::Context) -> Option<(String, DefinitionLang)> {
        let lang = readable(self.lang)?;
        match self.written(state, ctx)? {
            Ok((generated, _)) => Some((generated.code.clone(), lang)),
            Err(_) => None,
        }
    }

    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        let Some(scan) = state.scan.clone() else {
            ui.weak("Record types appear here once a source is open.");
            return intents;
        };
        self.choices(ui, &scan);
        let lang = self.lang;
        let (generated, lines) = match self.written(state, ui.ctx()) {
            None => {
                ui.horizontal(|ui| {
                    ui.spinner();
                    ui.label(format!("Writing the {} types…", lang.name()));
                });
                return intents;
            }
            Some(Err(e)) => {
                ui.colored_label(ui.visuals().error_fg_color, e);
                return intents;
            }
            Some(Ok(written)) => written,
        };
        ui.horizontal(|ui| {
            if ui.button("Copy").on_hover_text("Copy the code to the clipboard").clicked() {
                ui.ctx().copy_text(generated.code.clone());
            }
            if ui.button("Save…").on_hover_text("Save the code to a file").clicked() {
                let stem = types::default_root(&scan);
                intents.push(Intent::SaveText {
                    text: generated.code.clone(),
                    file_name: format!("{stem}.{}", lang.extension()),
                    title: "Save the record types",
                });
            }
            if let Some(reader) = readable(lang)
                && ui.button("Check against every row").on_hover_text("Read this code back and fit it to every row (shows Fit)").clicked()
            {
                intents.push(Intent::CheckDefinition(Checked::Generated { code: generated.code.clone(), lang: reader }));
            }
            ui.separator();
            ui.label(fit_line(&scan, generated, lang));
        });
        for w in &generated.warnings {
            ui.colored_label(ui.visuals().warn_fg_color, format!("▲ {w}"));
        }
        ui.separator();
        code_view(ui, lines);
        intents
    }

    fn choices(&mut self, ui: &mut egui::Ui, scan: &crate::scan::Scan) {
        ui.horizontal_wrapped(|ui| {
            ui.label("Target");
            egui::ComboBox::from_id_salt("target").selected_text(self.lang.name()).show_ui(ui, |ui| {
                for lang in Lang::ALL {
                    ui.selectable_value(&mut self.lang, lang, lang.name());
                }
            });
            ui.label("Root type");
            ui.add(egui::TextEdit::singleline(&mut self.root).hint_text(types::default_root(scan)).desired_width(120.0));
            ui.label("Optional fields");
            egui::ComboBox::from_id_salt("optional").selected_text(optional_label(self.optional)).show_ui(ui, |ui| {
                for o in [Optionality::Observed, Optionality::Declared, Optionality::All] {
                    ui.selectable_value(&mut self.optional, o, optional_label(o));
                }
            });
            ui.label("Mixed kinds");
            ui.selectable_value(&mut self.mixed, MixedChoice::Widest, "widest type");
            ui.selectable_value(&mut self.mixed, MixedChoice::Union, "union");
            if self.lang == Lang::Scala {
                ui.label("Time types");
                ui.selectable_value(&mut self.time, TimeChoice::Sql, "java.sql");
                ui.selectable_value(&mut self.time, TimeChoice::JavaTime, "java.time");
            }
        });
    }
}

/// The code, coloured, laying out only the lines in view.
fn code_view(ui: &mut egui::Ui, lines: &Lines) {
    let font = egui::TextStyle::Monospace.resolve(ui.style());
    let row_height = ui.ctx().fonts_mut(|f| f.row_height(&font));
    let char_width = ui.ctx().fonts_mut(|f| f.glyph_width(&font, 'M'));
    // Lines sit edge to edge; `show_rows` reads the spacing before laying
    // out, so it is set before the call (set inside, the rows measured would
    // be taller than the rows drawn, and the view would end short).
    ui.scope(|ui| {
        ui.spacing_mut().item_spacing.y = 0.0;
        egui::ScrollArea::both().auto_shrink([false, false]).id_salt("record_types_code").show_rows(
            ui,
            row_height,
            lines.len(),
            |ui, in_view| {
                // The widest line sets the width, seen or not, so the view
                // does not widen and narrow while it scrolls.
                ui.set_min_width(char_width * lines.widest as f32);
                for index in in_view {
                    let job = lines.line(index, ui.visuals(), &font);
                    ui.add(egui::Label::new(job).selectable(true).extend());
                }
            },
        );
    });
}

/// The definition language a target's code is read back in, if any.
fn readable(lang: Lang) -> Option<DefinitionLang> {
    match lang {
        Lang::Scala => Some(DefinitionLang::Scala),
        Lang::SparkDdl => Some(DefinitionLang::SparkDdl),
        Lang::Rust => Some(DefinitionLang::Rust),
        Lang::JsonSchema => Some(DefinitionLang::JsonSchema),
        _ => None,
    }
}

fn optional_label(o: Optionality) -> &'static str {
    match o {
        Optionality::Observed => "where nulls or missing keys were seen",
        Optionality::Declared => "where the schema allows nulls",
        Optionality::All => "every field",
    }
}

/// Whether the definition fits the rows it was generated from. It describes
/// them by construction; what a target cannot spell exactly is the exception.
pub fn fit_line(scan: &crate::scan::Scan, generated: &Generated, lang: Lang) -> String {
    let rows = group_digits(scan.shape.rows);
    let read = match (&scan.sample, scan.coverage.is_partial()) {
        (Some(_), _) => format!("the {rows} sampled rows"),
        (None, true) => format!("the {rows} rows read before the read ended"),
        (None, false) if matches!(scan.coverage, crate::scan::Coverage::SchemaOnly) => "the declared schema (no rows read)".to_string(),
        (None, false) => format!("all {rows} rows read"),
    };
    match generated.warnings.len() {
        0 => format!("Fits {read}."),
        n => format!("▲ Fits {read} except where {n} field{} cannot be spelled exactly in {} (below).", if n == 1 { "" } else { "s" }, lang.name()),
    }
}
