//! What the window knows, apart from how it is drawn. Drawing code reads
//! this and returns [`Intent`]s; the app applies them after the frame.

use std::path::PathBuf;

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
    DismissMessage,
}

#[derive(Default)]
pub struct State {
    pub scan: Option<Box<Scan>>,
    /// Set while a source is being read.
    pub reading: Option<Reading>,
    /// A failure to show, e.g. a bad file; the app keeps working.
    pub message: Option<String>,
    pub selected: Option<String>,
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
