//! What the window knows of the run's averages: the latest evidence from the engine, the start
//! the user is typing or dragging, and how values are written (reduced units and the setup's
//! units). Plain state and functions, tested without egui; [`super::averages_panel`] draws it.

use crate::analysis::Quantity;
use crate::analysis::StartChoice;
use crate::engine::{Command, EvidenceReport};
use crate::io::numbers::format_number;
use crate::physics::UnitSystem;

/// The averages panel's state.
#[derive(Clone, Debug)]
pub struct Averages {
    report: Option<Box<EvidenceReport>>,
    /// The start time as typed, in the display time unit.
    pub typed: String,
    /// Why the typed time was refused, if it was.
    pub typed_error: Option<String>,
    /// The text field is being edited: incoming evidence leaves `typed` alone.
    pub editing: bool,
    /// Quantity whose block-averaging curve is shown.
    pub curve: Quantity,
    /// The start line being dragged, at this display time (the plots show it before the
    /// engine's answer arrives).
    pub dragged: Option<f64>,
    /// The start last asked of the engine, not yet answered.
    asked: Option<StartChoice>,
}

impl Default for Averages {
    fn default() -> Self {
        Averages {
            report: None,
            typed: String::new(),
            typed_error: None,
            editing: false,
            curve: Quantity::Pressure,
            dragged: None,
            asked: None,
        }
    }
}

/// Factor from τ to the display time unit, and the unit: ps for real species, τ otherwise.
pub fn time_unit(units: UnitSystem) -> (f64, &'static str) {
    if units.has_real_units() {
        (units.tau_ps(), "ps")
    } else {
        (1.0, "τ")
    }
}

/// Factor from reduced units to the setup's units for `q`, and the unit; `None` for the
/// reduced fluid, whose setup units are the reduced ones.
pub fn setup_unit(q: Quantity, units: UnitSystem) -> Option<(f64, &'static str)> {
    if !units.has_real_units() {
        return None;
    }
    Some(match q {
        Quantity::Temperature => (units.temperature_kelvin(), "K"),
        Quantity::Pressure | Quantity::FullPressure => (units.pressure_bar(), "bar"),
        Quantity::PotentialEnergy
        | Quantity::TotalEnergy
        | Quantity::ConservedEnergy
        | Quantity::FullPotentialEnergy => (units.energy_kj_mol(), "kJ/mol"),
    })
}

/// The reduced unit of `q`.
pub fn reduced_unit(q: Quantity) -> &'static str {
    match q {
        Quantity::Temperature => "kT/ε",
        Quantity::Pressure | Quantity::FullPressure => "ε/σ³",
        _ => "ε",
    }
}

/// `mean ± stderr` with the standard error to two significant digits and the mean to the same
/// decimal place; "–" without a mean, and the mean alone without a finite error.
pub fn mean_pm(mean: f64, stderr: f64) -> String {
    if !mean.is_finite() {
        return "–".into();
    }
    if !(stderr.is_finite() && stderr > 0.0) {
        return format_number(mean);
    }
    let exp = stderr.log10().floor() as i32;
    let decimals = (1 - exp).max(0) as usize;
    if decimals > 8 || mean.abs() >= 1e7 || stderr >= 1e7 {
        return format!("{mean:.3e} ± {stderr:.1e}");
    }
    format!("{mean:.decimals$} ± {stderr:.decimals$}")
}

/// Steps still needed for a target from its raw samples still needed.
pub fn steps_needed(samples: Option<u64>, sample_every: u64) -> Option<u64> {
    samples.map(|n| n.saturating_mul(sample_every))
}

/// The typed start time (display units) as a start in τ; errors say what is allowed.
pub fn parse_start(text: &str, time_factor: f64, unit: &str) -> Result<StartChoice, String> {
    let t = text.trim();
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() && v >= 0.0 => Ok(StartChoice::FromTime(v / time_factor)),
        _ => Err(format!(
            "average from: \"{t}\" is not a time; allowed: a number of {unit} from 0 on, such as 5"
        )),
    }
}

impl Averages {
    /// A new run started: nothing is known yet.
    pub fn restart(&mut self) {
        *self = Averages {
            curve: self.curve,
            ..Averages::default()
        };
    }

    /// The engine's newest evidence.
    pub fn received(&mut self, report: Box<EvidenceReport>) {
        if self.asked == Some(report.evidence.choice) {
            self.asked = None;
        }
        if !self.editing {
            self.typed = start_text(&report);
            self.typed_error = None;
        }
        self.report = Some(report);
    }

    /// The newest evidence, if any came.
    pub fn report(&self) -> Option<&EvidenceReport> {
        self.report.as_deref()
    }

    /// Display-time factor and unit of the run.
    pub fn time_unit(&self) -> (f64, &'static str) {
        self.report.as_ref().map_or((1.0, "τ"), |r| time_unit(r.units))
    }

    /// The start the plots mark, in display time: the one being dragged, else the evidence's.
    pub fn start_shown(&self) -> Option<f64> {
        if self.dragged.is_some() {
            return self.dragged;
        }
        let r = self.report.as_ref()?;
        let t = r.evidence.start_time;
        t.is_finite().then(|| t * time_unit(r.units).0)
    }

    /// Whether the shown averages start where the user set them.
    pub fn is_manual(&self) -> bool {
        self.report
            .as_ref()
            .is_some_and(|r| matches!(r.evidence.choice, StartChoice::FromTime(_)))
    }

    /// Whether an answer to the last start asked for is still awaited.
    pub fn waiting(&self) -> bool {
        self.asked.is_some()
    }

    /// The command that sets the start to `choice` (remembered until answered).
    pub fn ask(&mut self, choice: StartChoice) -> Command {
        self.asked = Some(choice);
        Command::SetAverageStart(choice)
    }

    /// The command for the typed start, or `None` with `typed_error` set.
    pub fn ask_typed(&mut self) -> Option<Command> {
        let (f, unit) = self.time_unit();
        match parse_start(&self.typed, f, unit) {
            Ok(c) => {
                self.typed_error = None;
                Some(self.ask(c))
            }
            Err(e) => {
                self.typed_error = Some(e);
                None
            }
        }
    }

    /// The command for a start dragged to display time `t` (clamped at 0).
    pub fn ask_dragged(&mut self, t: f64) -> Command {
        let (f, _) = self.time_unit();
        self.ask(StartChoice::FromTime(t.max(0.0) / f))
    }
}

/// The evidence's start in the display unit, as the text field shows it.
fn start_text(r: &EvidenceReport) -> String {
    let t = r.evidence.start_time;
    if t.is_finite() {
        format_number(t * time_unit(r.units).0)
    } else {
        String::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{SampleStore, analyse};
    use crate::physics::{Observables, Species};

    fn report(units: UnitSystem, choice: StartChoice) -> Box<EvidenceReport> {
        let mut store = SampleStore::new(1024);
        for i in 0..200u64 {
            store.push(&Observables {
                step: i * 10,
                time: i as f64 * 0.05,
                temperature: 1.0 + 0.01 * ((i * 7919) % 13) as f64,
                pressure: 0.5 + 0.02 * ((i * 104729) % 17) as f64,
                ..Default::default()
            });
        }
        Box::new(EvidenceReport {
            evidence: analyse(&store, choice, true),
            precision: Vec::new(),
            eos: None,
            units,
            sample_every: 10,
            step: 1990,
            analysis_seconds: 0.0,
        })
    }

    #[test]
    fn mean_and_error_share_their_decimals() {
        assert_eq!(mean_pm(-5.12345, 0.0123), "-5.123 ± 0.012");
        assert_eq!(mean_pm(91.27, 1.4), "91.3 ± 1.4");
        assert_eq!(mean_pm(1234.6, 56.0), "1235 ± 56");
        assert_eq!(mean_pm(0.5, f64::NAN), "0.5");
        assert_eq!(mean_pm(f64::NAN, 0.1), "–");
    }

    #[test]
    fn typed_starts_are_read_in_the_display_unit() {
        let argon = UnitSystem::new(Species::Argon);
        let f = argon.tau_ps();
        assert_eq!(parse_start(" 10 ", f, "ps"), Ok(StartChoice::FromTime(10.0 / f)));
        let e = parse_start("ten", f, "ps").unwrap_err();
        assert!(e.contains("\"ten\" is not a time") && e.contains("ps"), "{e}");
        assert!(parse_start("-1", 1.0, "τ").is_err());
    }

    #[test]
    fn evidence_sets_the_shown_start_unless_the_field_is_being_edited() {
        let units = UnitSystem::new(Species::ReducedLJ);
        let mut a = Averages::default();
        assert_eq!(a.start_shown(), None);
        let c = a.ask(StartChoice::FromTime(2.0));
        assert_eq!(c, Command::SetAverageStart(StartChoice::FromTime(2.0)));
        assert!(a.waiting());
        a.received(report(units, StartChoice::FromTime(2.0)));
        assert!(!a.waiting(), "the answer came");
        assert!(a.is_manual());
        assert_eq!(a.typed, "2");
        assert_eq!(a.start_shown(), Some(2.0));
        a.dragged = Some(3.5);
        assert_eq!(a.start_shown(), Some(3.5), "a drag shows before the answer");
        a.dragged = None;
        a.editing = true;
        a.typed = "4".into();
        a.received(report(units, StartChoice::Automatic));
        assert_eq!(a.typed, "4", "typing is not overwritten");
        assert!(!a.is_manual());
        a.typed = "x".into();
        assert_eq!(a.ask_typed(), None);
        assert!(a.typed_error.is_some());
        a.restart();
        assert!(a.report().is_none() && a.typed.is_empty());
    }

    #[test]
    fn real_species_show_setup_units_and_the_reduced_fluid_does_not() {
        let argon = UnitSystem::new(Species::Argon);
        let (f, u) = setup_unit(Quantity::Pressure, argon).unwrap();
        assert_eq!((f, u), (argon.pressure_bar(), "bar"));
        assert_eq!(setup_unit(Quantity::Temperature, argon).unwrap().1, "K");
        assert_eq!(setup_unit(Quantity::ConservedEnergy, argon).unwrap().1, "kJ/mol");
        assert_eq!(
            setup_unit(Quantity::Pressure, UnitSystem::new(Species::ReducedLJ)),
            None
        );
        assert_eq!(steps_needed(Some(30), 10), Some(300));
        assert_eq!(steps_needed(None, 10), None);
        let mut a = Averages::default();
        a.received(report(argon, StartChoice::Automatic));
        assert_eq!(a.time_unit(), (argon.tau_ps(), "ps"));
        let Command::SetAverageStart(StartChoice::FromTime(t)) = a.ask_dragged(argon.tau_ps()) else {
            panic!("a drag asks for a time")
        };
        assert!((t - 1.0).abs() < 1e-12);
    }
}
