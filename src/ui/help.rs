//! The help overlay: the keys (from [`super::shortcuts::SHORTCUTS`]), the panels, and the model
//! caution.

use super::palette;
use super::shortcuts::SHORTCUTS;
use crate::io::summary::MODEL_CAUTION;

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
                for s in SHORTCUTS {
                    ui.monospace(s.keys(ui.ctx()));
                    ui.label(s.what);
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
    use super::SHORTCUTS;

    #[test]
    fn every_key_has_a_description() {
        assert!(
            SHORTCUTS
                .iter()
                .all(|s| !s.keys_plain().is_empty() && !s.what.is_empty())
        );
        assert!(SHORTCUTS.iter().any(|s| s.keys_plain() == "Space"));
    }
}
