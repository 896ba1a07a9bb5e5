//! After a watchdog alarm: the banner that says in words what happened, where and what to try,
//! the flight-recorder scrubber, and the focus (named atoms and their neighbours) that the
//! particle view highlights.

use super::palette;
use crate::engine::{Alarm, AlarmKind, FlightRecord, Frame};
use crate::physics::UnitSystem;

/// What the particle view highlights: the named atoms, their neighbours, and where to look.
#[derive(Clone, Debug, PartialEq)]
pub struct Focus {
    /// The alarm's step, which tells one focus from another.
    pub step: u64,
    /// Atoms where the trouble started, ranked.
    pub atoms: Vec<usize>,
    /// Their nearest neighbours at the alarm.
    pub neighbours: Vec<usize>,
    /// Position of the first named atom, σ, folded into the box.
    pub centre: [f32; 3],
}

impl Focus {
    /// The focus of `alarm` (none when it names no atom).
    pub fn of(alarm: &Alarm) -> Option<Focus> {
        let first = alarm.atoms.first()?;
        let mut neighbours: Vec<usize> = alarm
            .atoms
            .iter()
            .flat_map(|a| a.neighbours.iter().map(|n| n.atom))
            .collect();
        let atoms = alarm.atom_indices();
        neighbours.retain(|n| !atoms.contains(n));
        neighbours.sort_unstable();
        neighbours.dedup();
        let p = first.position;
        Some(Focus {
            step: alarm.step,
            atoms,
            neighbours,
            centre: [p[0] as f32, p[1] as f32, p[2] as f32],
        })
    }
}

/// What the user asked for in the banner.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AlarmAction {
    /// Nothing.
    None,
    /// Back to the newest healthy snapshot before the alarm.
    Rewind,
    /// Hide the banner (and the highlight).
    Dismiss,
}

/// What happened, in words.
fn headline(kind: AlarmKind) -> &'static str {
    match kind {
        AlarmKind::NonFinite => "numbers stopped being finite: the run blew up",
        AlarmKind::Overlap => "atoms sit inside each other (a force beyond the overlap bound)",
        AlarmKind::Jump => "an atom jumped further in one step than the watchdog allows",
        AlarmKind::EnergyJump => "the energy jumped within one step",
        AlarmKind::Drift => "the conserved energy drifted beyond its limit",
    }
}

/// A simulated time in the run's units.
fn time_text(tau: f64, units: UnitSystem) -> String {
    if units.has_real_units() {
        format!("{:.3} ps", tau * units.tau_ps())
    } else {
        format!("{tau:.3} τ")
    }
}

/// The banner's sentence: what happened, at which step and time, where, and what to try.
pub fn banner_text(alarm: &Alarm, units: UnitSystem) -> String {
    let mut where_ = String::new();
    for (k, a) in alarm.atoms.iter().enumerate() {
        if k > 0 {
            where_.push_str(", ");
        }
        where_.push_str(&format!("{} ({})", a.atom, a.species.label()));
        if k == 0
            && let Some(n) = a.neighbours.first()
        {
            where_.push_str(&format!(", nearest atom {} at {:.2} σ", n.atom, n.distance));
        }
    }
    let atoms = if alarm.atoms.is_empty() {
        String::new()
    } else {
        format!(" It started at atoms {where_}.")
    };
    format!(
        "Step {}, t = {}: {} ({}). {}{atoms} Try: {}",
        alarm.step,
        time_text(alarm.time, units),
        headline(alarm.kind),
        alarm.kind.name(),
        alarm.detail,
        alarm.kind.advice()
    )
}

/// The frame to draw while scrubbing (`None`: the live frame).
pub fn scrubbed(record: Option<&FlightRecord>, scrub: usize) -> Option<&Frame> {
    record.and_then(|r| r.frames.get(scrub))
}

/// Draws the banner and, with a record, the scrubber (`scrub` is the frame shown).
pub fn show(
    ui: &mut egui::Ui,
    alarm: &Alarm,
    record: Option<&FlightRecord>,
    scrub: &mut usize,
    units: UnitSystem,
) -> AlarmAction {
    let mut action = AlarmAction::None;
    egui::Frame::new()
        .fill(palette::ALARM)
        .inner_margin(8.0)
        .corner_radius(4.0)
        .show(ui, |ui| {
            ui.horizontal_wrapped(|ui| {
                ui.colored_label(
                    egui::Color32::WHITE,
                    egui::RichText::new("Watchdog stopped the run.").strong(),
                );
                ui.colored_label(egui::Color32::WHITE, banner_text(alarm, units));
            });
            ui.horizontal_wrapped(|ui| {
                if ui.button("Rewind to the last healthy snapshot").clicked() {
                    action = AlarmAction::Rewind;
                }
                if ui.button("Dismiss").clicked() {
                    action = AlarmAction::Dismiss;
                }
                if let Some(r) = record.filter(|r| !r.frames.is_empty()) {
                    ui.separator();
                    let last = r.frames.len() - 1;
                    *scrub = (*scrub).min(last);
                    let label = ui.colored_label(egui::Color32::WHITE, "Flight recorder");
                    ui.add(egui::Slider::new(scrub, 0..=last).show_value(false).step_by(1.0))
                        .labelled_by(label.id);
                    let f = &r.frames[*scrub];
                    ui.colored_label(
                        egui::Color32::WHITE,
                        format!(
                            "frame {} of {}: step {}, t = {} ({} steps before the alarm); {:.1} MB held",
                            *scrub + 1,
                            r.frames.len(),
                            f.step,
                            time_text(f.time_tau, units),
                            alarm.step.saturating_sub(f.step),
                            r.bytes() as f64 / 1e6
                        ),
                    );
                }
            });
        });
    action
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::watchdog::{NamedAtom, Neighbour};
    use crate::physics::Species;

    #[test]
    fn the_banner_says_what_where_when_and_what_to_try() {
        let atom = |i: usize, near: usize| NamedAtom {
            atom: i,
            species: Species::Argon,
            position: [1.0, 2.0, 3.0],
            value: 0.5,
            neighbours: vec![Neighbour {
                atom: near,
                species: Species::Argon,
                distance: 0.61,
            }],
        };
        let alarm = Alarm {
            kind: AlarmKind::Jump,
            step: 812,
            time: 4.06,
            value: 0.5,
            bound: 0.3,
            atoms: vec![atom(17, 4), atom(4, 17)],
            detail: "atom 17 moved 0.500 σ in one step (bound 0.300 σ).".into(),
        };
        let t = banner_text(&alarm, UnitSystem::new(Species::Argon));
        assert!(t.starts_with("Step 812, t = "), "{t}");
        assert!(t.contains(" ps: an atom jumped"), "{t}");
        assert!(
            t.contains("atoms 17 (argon), nearest atom 4 at 0.61 σ, 4 (argon)."),
            "{t}"
        );
        assert!(t.contains("Try: Lower the timestep"), "{t}");
        let f = Focus::of(&alarm).unwrap();
        assert_eq!((f.atoms, f.neighbours), (vec![17, 4], vec![]));
    }
}
