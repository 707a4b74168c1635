//! Record types: pick a target and the generator's options, read the
//! highlighted code, copy or save it, and see how it fits the rows read.

use std::sync::Arc;

use eframe::egui;
use eframe::egui::text::LayoutJob;

use super::fit::Checked;
use super::highlight;
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
    /// Code generated for (scan generation, choices), kept until either changes.
    cache: Option<(CodeKey, Generated)>,
    /// That code laid out in colour, for the theme (dark or not) it was made for.
    coloured: Option<((CodeKey, bool), Arc<LayoutJob>)>,
}

type CodeKey = (u64, Choices);

type Choices = (Lang, Optionality, MixedChoice, TimeChoice, String);

impl Default for RecordTypes {
    fn default() -> Self {
        RecordTypes {
            lang: Lang::Scala,
            optional: Optionality::default(),
            mixed: MixedChoice::default(),
            time: TimeChoice::default(),
            root: String::new(),
            cache: None,
            coloured: None,
        }
    }
}

impl RecordTypes {
    /// The code for the current scan and choices (generated once for each).
    pub fn generated(&mut self, state: &State) -> Option<&Generated> {
        let scan = state.scan.as_deref()?;
        let key = (state.generation, (self.lang, self.optional, self.mixed, self.time, self.root.clone()));
        if self.cache.as_ref().is_none_or(|(k, _)| *k != key) {
            let root = if self.root.trim().is_empty() { types::default_root(scan) } else { self.root.trim().to_string() };
            let options = TypeOptions { root, optional: self.optional, mixed: self.mixed, time: self.time };
            self.cache = Some((key, types::generate(scan, self.lang, &options)));
        }
        self.cache.as_ref().map(|(_, g)| g)
    }

    /// The code shown and the language to read it back in, for the targets
    /// Fit can read.
    pub fn readable_code(&mut self, state: &State) -> Option<(String, DefinitionLang)> {
        let lang = readable(self.lang)?;
        self.generated(state).map(|g| (g.code.clone(), lang))
    }

    pub fn show(&mut self, ui: &mut egui::Ui, state: &State) -> Vec<Intent> {
        let mut intents = Vec::new();
        let Some(scan) = state.scan.as_deref() else {
            ui.weak("Record types appear here once a source is open.");
            return intents;
        };
        self.choices(ui, scan);
        let lang = self.lang;
        if self.generated(state).is_none() {
            return intents;
        }
        let job = self.highlighted(ui);
        let Some((_, generated)) = &self.cache else { return intents };
        ui.horizontal(|ui| {
            if ui.button("Copy").on_hover_text("Copy the code to the clipboard").clicked() {
                ui.ctx().copy_text(generated.code.clone());
            }
            if ui.button("Save…").on_hover_text("Save the code to a file").clicked() {
                let stem = types::default_root(scan);
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
            ui.label(fit_line(scan, generated, lang));
        });
        for w in &generated.warnings {
            ui.colored_label(ui.visuals().warn_fg_color, format!("▲ {w}"));
        }
        ui.separator();
        egui::ScrollArea::both().auto_shrink([false, false]).id_salt("record_types_code").show(ui, |ui| {
            ui.add(egui::Label::new(job).selectable(true).extend());
        });
        intents
    }

    /// The cached code, coloured for the current theme (laid out again
    /// only when the code or the theme changes, not every frame).
    fn highlighted(&mut self, ui: &egui::Ui) -> Arc<LayoutJob> {
        let dark = ui.visuals().dark_mode;
        let code_key = self.cache.as_ref().map(|(k, _)| k.clone());
        if let Some(((k, d), job)) = &self.coloured
            && Some(k) == code_key.as_ref()
            && *d == dark
        {
            return job.clone();
        }
        let code = self.cache.as_ref().map_or("", |(_, g)| g.code.as_str());
        let font = egui::TextStyle::Monospace.resolve(ui.style());
        let job = Arc::new(highlight::layout(code, self.lang, ui.visuals(), font));
        if let Some(key) = code_key {
            self.coloured = Some(((key, dark), job.clone()));
        }
        job
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
