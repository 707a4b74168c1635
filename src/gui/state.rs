//! What the window knows, apart from how it is drawn. Drawing code reads
//! this and returns [`Intent`]s; the app applies them after the frame.

use std::collections::HashMap;
use std::path::PathBuf;
use std::sync::Arc;

use crate::report::{FieldEntry, Report};
use crate::scan::{Coverage, Scan};
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
    /// Shared with the threads that work on it (record types, Fit).
    pub scan: Option<Arc<Scan>>,
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
    /// Shows a finished scan (or a first look), with its report.
    pub fn show_scan(&mut self, scan: Box<Scan>) {
        self.report = Some(crate::report::build(&scan, crate::report::ReportOptions::default()));
        // A comparison is with the open source: compare the new one instead.
        if let Some(old) = self.comparison.take() {
            self.comparison = Some(Comparison::new(&scan, old.scan));
        }
        // The whole read after a first look of the same source keeps what
        // the user chose meanwhile.
        let continues = self.showing_first_look_of(&scan.info.path);
        self.scan = Some(Arc::from(scan));
        self.generation += 1;
        if !continues {
            self.selected = self.select_when_read.take();
            // Filters name the old source's fields and values.
            self.set_row_filters(Vec::new());
        }
    }

    fn showing_first_look_of(&self, path: &std::path::Path) -> bool {
        self.scan.as_ref().is_some_and(|s| matches!(s.coverage, Coverage::FirstLook(_)) && s.info.path == path)
    }

    /// Whether `scan`, stopped early, read fewer rows than the first look
    /// on screen (which then stays).
    pub fn first_look_says_more(&self, scan: &Scan) -> bool {
        let shown = self.scan.as_ref().filter(|_| self.showing_first_look_of(&scan.info.path));
        matches!(scan.coverage, Coverage::Stopped(_)) && shown.is_some_and(|s| s.shape.rows >= scan.shape.rows)
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

#[cfg(test)]
mod tests {
    use super::*;

    fn scan_of(path: &std::path::Path, options: crate::scan::ScanOptions) -> Box<Scan> {
        let stop = std::sync::atomic::AtomicBool::new(false);
        Box::new(crate::scan::scan_path(path, Default::default(), options, &stop, &mut |_| {}).unwrap())
    }

    #[test]
    fn the_whole_read_after_a_first_look_keeps_the_selection_and_filters() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("rows.jsonl");
        let text: String = (0..12_000).map(|i| format!("{{\"id\":{i}}}\n")).collect();
        std::fs::write(&path, text).unwrap();
        let first = scan_of(&path, crate::scan::ScanOptions { first_look: true, ..Default::default() });
        let mut stopped = scan_of(&path, Default::default());
        let whole = scan_of(&path, Default::default());

        let mut state = State::default();
        state.show_scan(first);
        state.selected = Some("id".into());
        state.set_row_filters(vec![crate::explore::RowFilter::Rows(vec![3])]);
        stopped.coverage = Coverage::Stopped(500);
        stopped.shape.rows = 500;
        assert!(state.first_look_says_more(&stopped), "a read stopped before 10,000 rows says less");
        assert!(!state.first_look_says_more(&whole));
        state.show_scan(whole);
        assert_eq!(state.scan.as_ref().unwrap().coverage, Coverage::Full);
        assert_eq!(state.selected.as_deref(), Some("id"));
        assert_eq!(state.row_filters.len(), 1);
        // Another source starts afresh.
        let other = dir.path().join("other.jsonl");
        std::fs::write(&other, "{\"id\":1}\n").unwrap();
        state.show_scan(scan_of(&other, Default::default()));
        assert_eq!(state.selected, None);
        assert!(state.row_filters.is_empty());
    }
}
