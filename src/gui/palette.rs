//! Plumbline's own colours, one pair (light, dark) per meaning. Colour is
//! never the only signal: every coloured mark also has a symbol or a word.

use eframe::egui::{Color32, Visuals};

fn pick(visuals: &Visuals, light: Color32, dark: Color32) -> Color32 {
    if visuals.dark_mode { dark } else { light }
}

/// The filled part of fill bars.
pub fn fill(visuals: &Visuals) -> Color32 {
    pick(visuals, Color32::from_rgb(46, 125, 120), Color32::from_rgb(92, 180, 170))
}

/// Histogram and share bars.
pub fn bar(visuals: &Visuals) -> Color32 {
    pick(visuals, Color32::from_rgb(84, 104, 160), Color32::from_rgb(128, 150, 214))
}

/// The finding marker in the Field tree.
pub fn finding(visuals: &Visuals) -> Color32 {
    pick(visuals, Color32::from_rgb(168, 98, 10), Color32::from_rgb(236, 170, 70))
}

/// Severity of a finding, with its symbol.
pub fn severity(visuals: &Visuals, severity: crate::profile::findings::Severity) -> (Color32, &'static str) {
    use crate::profile::findings::Severity::*;
    match severity {
        Attention => (pick(visuals, Color32::from_rgb(178, 40, 48), Color32::from_rgb(240, 110, 110)), "▲"),
        Check => (finding(visuals), "●"),
        Note => (pick(visuals, Color32::from_rgb(90, 90, 90), Color32::from_rgb(170, 170, 170)), "○"),
    }
}

/// A field's change between two sources (shown with its symbol too).
pub fn change(visuals: &Visuals, change: &crate::compare::Change) -> Color32 {
    use crate::compare::Change::*;
    match change {
        Same => visuals.weak_text_color(),
        Added => pick(visuals, Color32::from_rgb(30, 120, 60), Color32::from_rgb(110, 200, 130)),
        Removed => pick(visuals, Color32::from_rgb(178, 40, 48), Color32::from_rgb(240, 110, 110)),
        TypeChanged | EmptinessChanged | MovedTo(_) | MovedFrom(_) => finding(visuals),
    }
}

/// Lets the proportional font fall back to the monospace one, which has the
/// geometric shapes the symbols above use (▲ ● ○ ◆ ▸ ▾).
pub fn install_fonts(ctx: &eframe::egui::Context) {
    let mut fonts = eframe::egui::FontDefinitions::default();
    if let Some(family) = fonts.families.get_mut(&eframe::egui::FontFamily::Proportional) {
        family.push("Hack".to_owned());
    }
    ctx.set_fonts(fonts);
}
