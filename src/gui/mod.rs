//! The workbench window (eframe with the glow renderer, so it runs on
//! software OpenGL). One struct per area; state apart from drawing; reading
//! happens on worker threads.

pub mod app;
pub mod compare;
pub mod field_sheet;
pub mod field_tree;
pub mod findings;
pub mod fit;
pub mod highlight;
pub mod palette;
pub mod record_types;
pub mod rows;
pub mod rows_worker;
pub mod settings;
pub mod source_bar;
pub mod state;
pub mod worker;

use std::path::PathBuf;

pub use app::PlumblineApp;

/// What the window opens with.
#[derive(Debug, Clone, Default)]
pub struct Start {
    pub path: Option<PathBuf>,
    /// A field to select once the source is read.
    pub field: Option<String>,
    pub area: state::Area,
    /// A second source to compare with once the first is read.
    pub compare: Option<PathBuf>,
}

/// Opens the window.
pub fn run(start: Start) -> Result<(), String> {
    let file = settings::Settings::default_file();
    let size = file.as_deref().map(settings::Settings::load).and_then(|s| s.window).unwrap_or([1280.0, 800.0]);
    let options = eframe::NativeOptions {
        viewport: eframe::egui::ViewportBuilder::default()
            .with_title("Plumbline")
            .with_inner_size(size)
            .with_drag_and_drop(true),
        renderer: eframe::Renderer::Glow,
        ..Default::default()
    };
    eframe::run_native(
        "Plumbline",
        options,
        Box::new(move |cc| Ok(Box::new(PlumblineApp::start(cc.egui_ctx.clone(), start, file)))),
    )
    .map_err(|e| format!("cannot open the window: {e}"))
}
