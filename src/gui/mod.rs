//! The workbench window (eframe with the glow renderer, so it runs on
//! software OpenGL). One struct per area; state apart from drawing; reading
//! happens on worker threads.

pub mod app;
pub mod field_sheet;
pub mod field_tree;
pub mod findings;
pub mod highlight;
pub mod palette;
pub mod record_types;
pub mod source_bar;
pub mod state;
pub mod worker;

use std::path::PathBuf;

pub use app::PlumblineApp;

/// Opens the window, reading `path` first if given.
pub fn run(path: Option<PathBuf>) -> Result<(), String> {
    let options = eframe::NativeOptions {
        viewport: eframe::egui::ViewportBuilder::default()
            .with_title("Plumbline")
            .with_inner_size([1100.0, 720.0])
            .with_drag_and_drop(true),
        renderer: eframe::Renderer::Glow,
        ..Default::default()
    };
    eframe::run_native(
        "Plumbline",
        options,
        Box::new(move |cc| Ok(Box::new(PlumblineApp::new(cc.egui_ctx.clone(), path)))),
    )
    .map_err(|e| format!("cannot open the window: {e}"))
}
