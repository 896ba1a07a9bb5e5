//! The status line (the watchdog's banner is [`super::alarm_view`]).

use super::palette;
use crate::engine::{Alarm, Status};
use crate::physics::UnitSystem;

/// What the status line shows.
#[derive(Clone, Debug, Default)]
pub struct StatusLine {
    /// Latest engine status.
    pub status: Status,
    /// Latest unhandled watchdog alarm.
    pub alarm: Option<Alarm>,
    /// Latest message for the user (saved files, refused commands …).
    pub message: Option<Message>,
}

/// Whether a message reports something done or something that went wrong.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MessageKind {
    /// Something happened as asked.
    Info,
    /// Something could not be done; shown in the error colour.
    Error,
}

/// One message for the user in the status line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Message {
    /// The sentence shown.
    pub text: String,
    /// Info or error.
    pub kind: MessageKind,
}

impl Message {
    /// A message that something happened as asked.
    pub fn info(text: impl Into<String>) -> Self {
        Message {
            text: text.into(),
            kind: MessageKind::Info,
        }
    }

    /// A message that something could not be done.
    pub fn error(text: impl Into<String>) -> Self {
        Message {
            text: text.into(),
            kind: MessageKind::Error,
        }
    }

    /// Whether it reports something that went wrong.
    pub fn is_error(&self) -> bool {
        self.kind == MessageKind::Error
    }
}

/// Compact count: 12 345 → "12.3 k", 4.2e6 → "4.20 M".
pub fn si_count(v: f64) -> String {
    let a = v.abs();
    if a >= 1e9 {
        format!("{:.2} G", v / 1e9)
    } else if a >= 1e6 {
        format!("{:.2} M", v / 1e6)
    } else if a >= 1e4 {
        format!("{:.1} k", v / 1e3)
    } else {
        format!("{v:.0}")
    }
}

impl StatusLine {
    /// Shows `text` as news.
    pub fn info(&mut self, text: impl Into<String>) {
        self.message = Some(Message::info(text));
    }

    /// Shows `text` as an error.
    pub fn error(&mut self, text: impl Into<String>) {
        self.message = Some(Message::error(text));
    }

    /// The status text: step, simulated time, steps/s, atom-steps/s, list rebuilds.
    pub fn text(&self, units: UnitSystem) -> String {
        let s = &self.status;
        let time = if units.has_real_units() {
            format!("{:.3} ps ({:.2} τ)", s.time_tau * units.tau_ps(), s.time_tau)
        } else {
            format!("{:.3} τ", s.time_tau)
        };
        format!(
            "{} · step {} · t = {} · {} steps/s · {} atom-steps/s · {} neighbour-list rebuilds",
            if s.running { "running" } else { "paused" },
            s.step,
            time,
            si_count(s.steps_per_second),
            si_count(s.atom_steps_per_second),
            s.list_builds
        )
    }

    /// Draws the status line and the latest message.
    pub fn show(&self, ui: &mut egui::Ui, units: UnitSystem) {
        ui.horizontal_wrapped(|ui| {
            ui.monospace(self.text(units));
            if let Some(m) = &self.message {
                ui.separator();
                match m.kind {
                    MessageKind::Error => ui.colored_label(palette::ERROR_TEXT, &m.text),
                    MessageKind::Info => ui.label(&m.text),
                };
            }
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::Species;

    #[test]
    fn status_text_names_every_rate() {
        let line = StatusLine {
            status: Status {
                running: true,
                step: 1200,
                time_tau: 6.0,
                atoms: 4000,
                steps_per_second: 250.0,
                atom_steps_per_second: 1.0e6,
                list_builds: 17,
                snapshots: 2,
            },
            ..Default::default()
        };
        let t = line.text(UnitSystem::new(Species::ReducedLJ));
        assert!(
            t.contains("step 1200")
                && t.contains("6.000 τ")
                && t.contains("250 steps/s")
                && t.contains("1.00 M atom-steps/s")
                && t.contains("17 neighbour-list"),
            "{t}"
        );
        let real = line.text(UnitSystem::new(Species::Argon));
        assert!(real.contains(" ps ("), "{real}");
    }
}
