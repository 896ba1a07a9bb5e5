//! The rewind timeline under the plots: a mark for each snapshot the engine holds (all healthy:
//! each was taken after a step the watchdog passed) and one for the last alarm (not healthy).
//! Picking a healthy mark asks the engine to go back there; the user then changes timestep,
//! cutoff or bath in the setup form (Change live) and runs on.

use super::palette;
use crate::engine::SnapshotMark;
use crate::physics::UnitSystem;

/// Height of the strip, points.
const HEIGHT: f32 = 18.0;

fn time_text(tau: f64, units: UnitSystem) -> String {
    if units.has_real_units() {
        format!("{:.3} ps", tau * units.tau_ps())
    } else {
        format!("{tau:.3} τ")
    }
}

/// Draws the strip from time 0 to `latest` (τ); returns the step of a mark picked.
pub fn show(
    ui: &mut egui::Ui,
    marks: &[SnapshotMark],
    bytes: usize,
    alarm: Option<(u64, f64)>,
    latest: f64,
    units: UnitSystem,
) -> Option<u64> {
    let mut picked = None;
    ui.horizontal(|ui| {
        ui.label(format!(
            "Rewind timeline: {} snapshots held ({:.1} MB)",
            marks.len(),
            bytes as f64 / 1e6
        ));
        let width = ui.available_width().max(60.0);
        let (rect, _) = ui.allocate_exact_size(egui::vec2(width, HEIGHT), egui::Sense::hover());
        let painter = ui.painter_at(rect);
        painter.hline(
            rect.x_range(),
            rect.center().y,
            egui::Stroke::new(1.0, palette::BOX_LINE),
        );
        let end = alarm.map_or(latest, |a| a.1.max(latest)).max(1e-9);
        let x = |t: f64| rect.left() + 4.0 + (rect.width() - 8.0) * (t / end).clamp(0.0, 1.0) as f32;
        for m in marks {
            let r = egui::Rect::from_center_size(
                egui::pos2(x(m.time_tau), rect.center().y),
                egui::vec2(8.0, HEIGHT),
            );
            let id = ui.scope_id().with(("snapshot", m.step));
            let resp = ui.interact(r, id, egui::Sense::click());
            let label = format!(
                "snapshot at step {}, t = {} (healthy): go back here",
                m.step,
                time_text(m.time_tau, units)
            );
            resp.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &label));
            let c = if resp.hovered() {
                egui::Color32::WHITE
            } else {
                palette::TARGET
            };
            painter.circle_filled(r.center(), 4.0, c);
            if resp.clicked() {
                picked = Some(m.step);
            }
            resp.on_hover_text(label);
        }
        if let Some((step, t)) = alarm {
            let c = egui::pos2(x(t), rect.center().y);
            painter.line_segment(
                [c - egui::vec2(0.0, 7.0), c + egui::vec2(0.0, 7.0)],
                egui::Stroke::new(3.0, palette::FOCUS),
            );
            let r = egui::Rect::from_center_size(c, egui::vec2(8.0, HEIGHT));
            ui.interact(r, ui.scope_id().with("alarm-mark"), egui::Sense::hover())
                .on_hover_text(format!(
                    "alarm at step {step}, t = {} (not healthy)",
                    time_text(t, units)
                ));
        }
    });
    picked
}
