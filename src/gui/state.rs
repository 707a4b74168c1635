//! What the window knows, apart from how it is drawn. Drawing code reads
//! this and returns [`Intent`]s; the app applies them after the frame.

use std::collections::HashMap;
use std::path::PathBuf;

use crate::report::{FieldEntry, Report};
use crate::scan::Scan;
use crate::source::Progress;

/// Something the user asked for while a frame was drawn.
#[derive(Debug, Clone, PartialEq)]
pub enum Intent {
    /// Show the native open dialog.
    ChooseFile,
    Open(PathBuf),
    StopReading,
    Select(String),
    /// Select a field and show its Field sheet (from Findings).
    ShowField(String),
    ShowArea(Area),
    /// Show the open dialog for a second source to compare with.
    ChooseCompareFile,
    OpenCompare(PathBuf),
    /// Ask where to save `text` (the save dialog, titled `title`, suggests `file_name`).
    SaveText { text: String, file_name: String, title: &'static str },
    /// Narrow Rows further and show them.
    AddRowFilter(crate::explore::RowFilter),
    /// Remove the filter at this position.
    RemoveRowFilter(usize),
    ClearRowFilters,
    /// Show the open dialog for a definition to check against the rows.
    ChooseDefinition,
    /// Check a definition against every row, and show Fit.
    CheckDefinition(super::fit::Checked),
    DismissMessage,
}

/// The areas that share the space right of the Field tree.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, clap::ValueEnum)]
pub enum Area {
    #[default]
    FieldSheet,
    Rows,
    Findings,
    RecordTypes,
    Fit,
    Compare,
}

impl Area {
    pub const ALL: [Area; 6] = [Area::FieldSheet, Area::Rows, Area::Findings, Area::RecordTypes, Area::Fit, Area::Compare];

    pub fn label(self) -> &'static str {
        match self {
            Area::FieldSheet => "Field sheet",
            Area::Rows => "Rows",
            Area::Findings => "Findings",
            Area::RecordTypes => "Record types",
            Area::Fit => "Fit",
            Area::Compare => "Compare",
        }
    }
}

#[derive(Default)]
pub struct State {
    pub scan: Option<Box<Scan>>,
    /// The scan's statistics as the report states them, built once per scan.
    pub report: Option<Report>,
    /// Counts the scans shown, so areas know when to rebuild what they cache.
    pub generation: u64,
    /// Set while a source is being read.
    pub reading: Option<Reading>,
    /// A failure to show, e.g. a bad file; the app keeps working.
    pub message: Option<String>,
    /// A neutral note, e.g. where a file was saved.
    pub notice: Option<String>,
    pub selected: Option<String>,
    /// Selected once the next scan is shown (the window's `--field`).
    pub select_when_read: Option<String>,
    /// Compared with once the next scan is shown (the window's `--compare`).
    pub compare_when_read: Option<PathBuf>,
    pub area: Area,
    /// A second source and how its fields differ from the open one's.
    pub comparison: Option<Comparison>,
    /// Set while the second source is being read.
    pub compare_reading: Option<Reading>,
    /// What Rows is narrowed to, all at once.
    pub row_filters: Vec<crate::explore::RowFilter>,
    /// Changes whenever `row_filters` do, so Rows knows to ask again.
    pub row_filters_version: u64,
    /// Remembered between runs (recent sources, theme, sizes).
    pub settings: super::settings::Settings,
}

pub struct Comparison {
    pub scan: Box<Scan>,
    pub changes: Vec<crate::compare::FieldChange>,
    /// Each field of the open source, by path, and what happened to it.
    pub by_path: HashMap<String, crate::compare::Change>,
    /// How the values of each field both sources have moved, by path.
    pub drift: HashMap<String, crate::compare::drift::Drift>,
    /// Fields in both sources, and how many of them drifted.
    pub drift_summary: (usize, usize),
}

impl Comparison {
    pub fn new(before: &Scan, scan: Box<Scan>) -> Self {
        let compared = crate::compare::compare(&before.shape, &scan.shape);
        let by_path = compared.changes.iter().map(|c| (c.path.clone(), c.change.clone())).collect();
        let drift_summary = (compared.drifts.len(), compared.drifts.iter().filter(|d| d.drifted()).count());
        let drift = compared.drifts.into_iter().map(|d| (d.path.clone(), d)).collect();
        Comparison { scan, changes: compared.changes, by_path, drift, drift_summary }
    }
}

impl State {
    /// Shows a finished scan, with its report.
    pub fn show_scan(&mut self, scan: Box<Scan>) {
        self.report = Some(crate::report::build(&scan, crate::report::ReportOptions::default()));
        // A comparison is with the open source: compare the new one instead.
        if let Some(old) = self.comparison.take() {
            self.comparison = Some(Comparison::new(&scan, old.scan));
        }
        self.scan = Some(scan);
        self.selected = self.select_when_read.take();
        self.generation += 1;
        // Filters name the old source's fields and values.
        self.set_row_filters(Vec::new());
    }

    pub fn set_row_filters(&mut self, filters: Vec<crate::explore::RowFilter>) {
        self.row_filters = filters;
        self.row_filters_version += 1;
    }

    /// The report entry of the selected field.
    pub fn selected_entry(&self) -> Option<&FieldEntry> {
        let path = self.selected.as_deref()?;
        self.report.as_ref()?.fields.iter().find(|f| f.path == path)
    }
}

pub struct Reading {
    pub path: PathBuf,
    pub progress: Progress,
}

impl Reading {
    /// Share done in 0..=1, when the total is known.
    pub fn fraction(&self) -> Option<f32> {
        (self.progress.total > 0).then(|| (self.progress.done as f64 / self.progress.total as f64).min(1.0) as f32)
    }
}
