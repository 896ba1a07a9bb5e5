//! Keys and the help overlay, with the model caution.

use super::palette;
use crate::io::summary::MODEL_CAUTION;

/// The keyboard shortcuts, as (key, what it does).
pub const KEYS: &[(&str, &str)] = &[
    ("Space", "run / pause"),
    ("S", "one step (pauses first)"),
    ("R", "restart the present setup from step 0"),
    ("Ctrl+1 / Ctrl+2", "box 3D view / slab 2D view"),
    ("Ctrl+3", "show or hide the setup form"),
    ("Ctrl+O / Ctrl+S", "open / save a setup file"),
    ("Ctrl+P", "save a PNG picture of the window"),
    ("F1 or ?", "show or hide this help"),
];

/// Draws the help window while `open`.
pub fn show(ctx: &egui::Context, open: &mut bool) {
    egui::Window::new("Noblescope help")
        .open(open)
        .collapsible(false)
        .resizable(false)
        .anchor(egui::Align2::CENTER_CENTER, egui::Vec2::ZERO)
        .show(ctx, |ui| {
            ui.heading("Keys");
            egui::Grid::new("keys").num_columns(2).striped(true).show(ui, |ui| {
                for (k, what) in KEYS {
                    ui.monospace(*k);
                    ui.label(*what);
                    ui.end_row();
                }
            });
            ui.add_space(8.0);
            ui.heading("Panels");
            ui.label("Left: the setup form (edits apply only when you press Apply, or Change live for timestep, interaction and bath).");
            ui.label("Centre: the atoms (Box 3D or Slab 2D) and the live plots below them.");
            ui.label("Bottom: step, simulated time, speed and neighbour-list rebuilds.");
            ui.add_space(8.0);
            ui.heading("About these numbers");
            ui.colored_label(palette::CAUTION_TEXT, MODEL_CAUTION);
        });
}

#[cfg(test)]
mod tests {
    #[test]
    fn every_key_has_a_description() {
        assert!(super::KEYS.iter().all(|(k, d)| !k.is_empty() && !d.is_empty()));
        assert!(super::KEYS.iter().any(|(k, _)| *k == "Space"));
    }
}
