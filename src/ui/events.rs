//! Engine events turned into window state: [`reduce`] is a plain function over [`RunView`], so
//! what each event does can be tested without a window. It is the one place that matches on
//! [`Event`].

use super::averages::Averages;
use super::averages::{reduced_unit, setup_unit};
use super::plots::Plots;
use super::setup_form::SetupForm;
use super::status::StatusLine;
use super::structure_panel::StructurePanel;
use super::tuning_panel::TuningPanel;
use super::unit_field::format_number;
use crate::analysis::TargetProgress;
use crate::engine::{CommandKind, TuningReport};
use crate::engine::{Event, FlightRecord, SnapshotMark};
use crate::io::setup::{Ensemble, Setup};
use crate::physics::UnitSystem;

/// What the window knows of the engine's run: the state engine events change.
pub struct RunView {
    /// What the engine runs (from its Started / SetupChanged events).
    pub running: Setup,
    /// What the user is editing; follows the running setup unless it holds other edits.
    pub form: SetupForm,
    /// Live plots of the samples.
    pub plots: Plots,
    /// Engine status, alarm and the latest message.
    pub status: StatusLine,
    /// Timestep and cutoff scans.
    pub tuning: TuningPanel,
    /// Atoms of the running simulation (0 until it started).
    pub atoms: usize,
    /// The structure and motion analyses as last reported.
    pub structure: StructurePanel,
    /// The flight recorder's frames up to the last alarm.
    pub recording: Option<FlightRecord>,
    /// The recorded frame shown (an index into `recording`).
    pub scrub: usize,
    /// The snapshots the engine holds (the rewind timeline) and their memory.
    pub snapshots: Vec<SnapshotMark>,
    pub snapshot_bytes: usize,
    /// The run's averages, verdicts and the start they are taken from.
    pub averages: Averages,
}

/// What an event means for the rest of the window beyond the state it changed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Echo {
    /// Nothing more.
    Nothing,
    /// The engine reported that it runs and has reached this step (scripted watching measures
    /// the simulation speed from these).
    RunningAtStep(u64),
}

/// The thermostat's target temperature (reduced), which the temperature plot marks.
pub fn thermostat_target(s: &Setup) -> Option<f64> {
    match s.ensemble {
        Ensemble::Nve => None,
        Ensemble::Nvt { .. } => s.reduced_temperature("temperature", s.temperature).ok(),
    }
}

/// The status line's sentence for a finished tuning scan.
fn tuned_message(report: &TuningReport) -> String {
    let units = UnitSystem::new(report.reference);
    match report.recommended {
        Some(dt) if units.has_real_units() => format!(
            "Tuning scan done: recommended timestep {} fs.",
            format_number(dt * units.tau_fs())
        ),
        Some(dt) => format!("Tuning scan done: recommended timestep {} τ.", format_number(dt)),
        None => "Tuning scan done: no timestep tried was steady enough.".to_string(),
    }
}

/// The status line's sentence when every precision target is met.
fn precision_message(met: &[TargetProgress], units: UnitSystem) -> String {
    let targets: Vec<String> = met
        .iter()
        .map(|p| {
            let q = p.target.quantity;
            let (f, u) = setup_unit(q, units).unwrap_or((1.0, reduced_unit(q)));
            format!(
                "{} {} ≤ {} {u}",
                q.label().to_lowercase(),
                format_number(p.stderr * f),
                format_number(p.target.stderr * f)
            )
        })
        .collect();
    format!(
        "Precision reached and paused: standard error of {}. Press Run to go on; it will not stop for them again.",
        targets.join(", ")
    )
}

impl RunView {
    /// The view before the engine has said anything: `setup` is taken as running.
    pub fn new(setup: &Setup) -> Self {
        RunView {
            running: setup.clone(),
            form: SetupForm::from_setup(setup),
            plots: Plots::new(setup.units()),
            status: StatusLine::default(),
            tuning: TuningPanel::for_setup(setup),
            atoms: 0,
            structure: StructurePanel::default(),
            recording: None,
            scrub: 0,
            snapshots: Vec::new(),
            snapshot_bytes: 0,
            averages: Averages::default(),
        }
    }

    /// Takes `new` as the running setup; the form follows unless it holds other edits.
    pub fn adopt(&mut self, new: &Setup) {
        let form = self.form.build().ok();
        if form.as_ref() == Some(&self.running) || form.as_ref() == Some(new) {
            self.form = SetupForm::from_setup(new);
        }
        self.running = new.clone();
    }
}

/// Changes `view` as `event` says.
pub fn reduce(view: &mut RunView, event: Event) -> Echo {
    match event {
        Event::Sample(o) => view.plots.push(&o),
        Event::Status(s) => {
            let echo = if s.running {
                Echo::RunningAtStep(s.step)
            } else {
                Echo::Nothing
            };
            // Under a bath ramp the target line follows the ramp's value at this step.
            if view.running.temperature_ramp.is_some() && thermostat_target(&view.running).is_some() {
                view.plots.set_target(view.running.ramp_target(s.step));
            }
            view.status.status = s;
            return echo;
        }
        Event::Started { setup, atoms } => {
            view.adopt(&setup);
            view.tuning.setup_changed(&setup);
            view.atoms = atoms;
            view.plots.restart(setup.units(), thermostat_target(&setup));
            view.structure.clear();
            view.averages.restart();
            view.status.alarm = None;
            view.recording = None;
        }
        Event::SetupChanged(setup) => {
            view.adopt(&setup);
            view.plots.set_target(thermostat_target(&setup));
            view.status.info("Live change applied.");
        }
        Event::Rejected { command, reason } => {
            if command == CommandKind::Tune {
                view.tuning.rejected(reason.clone());
            }
            view.status.error(format!("{command} refused: {reason}"));
        }
        Event::Tuned(report) => {
            view.status.info(tuned_message(&report));
            view.tuning.finished(report);
        }
        Event::TuneCancelled => {
            view.tuning.cancelled();
            view.status.info("Tuning scan stopped.");
        }
        Event::Alarm(a) => {
            view.status.alarm = Some(a);
            view.recording = None;
        }
        Event::Recovered {
            alarm,
            resumed_from_step,
            timestep,
        } => view.status.info(format!(
            "Recovered: {} at step {}; back to step {resumed_from_step} with the timestep halved to {} {}, running on.",
            alarm.kind.name(),
            alarm.step,
            timestep.value(),
            timestep.symbol()
        )),
        Event::Snapshots { marks, bytes } => {
            view.snapshots = marks;
            view.snapshot_bytes = bytes;
        }
        Event::FlightRecord(r) => {
            view.scrub = r.frames.len().saturating_sub(1);
            view.recording = Some(*r);
        }
        Event::Rewound { step, time_tau } => {
            view.plots.rewind_to(time_tau);
            view.status.alarm = None;
            view.recording = None;
            view.status.info(format!(
                "Rewound to step {step}; lower the timestep before running on."
            ));
        }
        Event::ReachedSteps { steps } => {
            view.status.status.running = false;
            view.status.info(format!(
                "Reached the setup's {steps} steps and paused. Press Run to go on past them; the run is then longer than its setup says."
            ));
        }
        Event::Evidence(report) => view.averages.received(report),
        Event::PrecisionReached(met) => {
            view.status.status.running = false;
            view.status.info(precision_message(&met, view.running.units()));
        }
        Event::Saved(p) => view.status.info(format!("Checkpoint saved to {}", p.display())),
        Event::Analyses(r) => view.structure.report = Some(r),
        Event::AnalysisSaved(p) => view.status.info(format!("Analysis exported to {}", p.display())),
    }
    Echo::Nothing
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::{Alarm, AlarmKind, Status};
    use crate::io::setup::Duration;
    use crate::physics::{Observables, Species};

    fn alarm(kind: AlarmKind, step: u64) -> Alarm {
        Alarm {
            kind,
            step,
            time: step as f64 * 0.005,
            value: 0.1,
            bound: 0.05,
            atoms: Vec::new(),
            detail: "seen".into(),
        }
    }

    fn argon() -> Setup {
        Setup::parse(include_str!("../../assets/argon-cold-trap.ron"), "argon").unwrap()
    }

    fn started(view: &mut RunView, setup: &Setup, atoms: usize) {
        reduce(
            view,
            Event::Started {
                setup: Box::new(setup.clone()),
                atoms,
            },
        );
    }

    #[test]
    fn started_takes_the_setup_and_the_form_follows() {
        let old = argon();
        let mut view = RunView::new(&old);
        let mut new = old.clone();
        new.atoms = 864;
        view.status.alarm = Some(alarm(AlarmKind::Drift, 3));
        started(&mut view, &new, 864);
        assert_eq!(view.running, new);
        assert_eq!(view.atoms, 864);
        assert_eq!(view.form.build().unwrap(), new, "an unedited form follows");
        assert!(view.status.alarm.is_none(), "a fresh start clears the alarm");
    }

    #[test]
    fn a_live_change_keeps_other_edits_in_the_form() {
        let old = argon();
        let mut view = RunView::new(&old);
        view.form.title = "my edit".into();
        let mut changed = old.clone();
        changed.timestep = Duration::Femtoseconds(2.0);
        reduce(&mut view, Event::SetupChanged(Box::new(changed.clone())));
        assert_eq!(view.running, changed);
        assert_eq!(view.form.title, "my edit", "the user's edit stays");
        let m = view.status.message.as_ref().unwrap();
        assert_eq!((m.text.as_str(), m.is_error()), ("Live change applied.", false));
    }

    #[test]
    fn a_refused_scan_reaches_the_tuning_panel_as_an_error() {
        let mut view = RunView::new(&argon());
        let echo = reduce(
            &mut view,
            Event::Rejected {
                command: CommandKind::Tune,
                reason: "a scan runs already".into(),
            },
        );
        assert_eq!(echo, Echo::Nothing);
        assert_eq!(view.tuning.error(), Some("a scan runs already"));
        let m = view.status.message.as_ref().unwrap();
        assert!(m.is_error());
        assert_eq!(m.text, "Tune refused: a scan runs already");

        reduce(
            &mut view,
            Event::Rejected {
                command: CommandKind::Apply,
                reason: "bad".into(),
            },
        );
        assert_eq!(
            view.tuning.error(),
            Some("a scan runs already"),
            "other refusals are not the panel's"
        );
    }

    #[test]
    fn a_running_status_echoes_its_step_and_a_paused_one_does_not() {
        let mut view = RunView::new(&argon());
        let running = Status {
            running: true,
            step: 42,
            ..Default::default()
        };
        assert_eq!(
            reduce(&mut view, Event::Status(running.clone())),
            Echo::RunningAtStep(42)
        );
        assert_eq!(view.status.status, running);
        let paused = Status {
            running: false,
            step: 43,
            ..Default::default()
        };
        assert_eq!(reduce(&mut view, Event::Status(paused)), Echo::Nothing);
        assert_eq!(view.status.status.step, 43);
    }

    #[test]
    fn samples_reach_the_plots_and_a_rewind_clears_the_alarm() {
        let s = argon();
        let mut view = RunView::new(&s);
        started(&mut view, &s, 500);
        for i in 0..3 {
            let o = Observables {
                step: i * 10,
                time: i as f64 * 0.1,
                ..Default::default()
            };
            reduce(&mut view, Event::Sample(o));
        }
        assert_eq!(view.plots.samples(), 3);
        reduce(&mut view, Event::Alarm(alarm(AlarmKind::NonFinite, 30)));
        assert!(view.status.alarm.is_some());
        reduce(
            &mut view,
            Event::Rewound {
                step: 10,
                time_tau: 0.1,
            },
        );
        assert!(view.status.alarm.is_none());
        let m = view.status.message.as_ref().unwrap();
        assert!(!m.is_error() && m.text.starts_with("Rewound to step 10"), "{m:?}");
    }

    #[test]
    fn a_stopped_scan_and_a_saved_checkpoint_are_news() {
        let mut view = RunView::new(&argon());
        reduce(&mut view, Event::TuneCancelled);
        assert!(!view.tuning.scanning());
        assert_eq!(
            view.status.message,
            Some(super::super::status::Message::info("Tuning scan stopped."))
        );
        reduce(&mut view, Event::Saved("/tmp/run.ckpt".into()));
        assert_eq!(
            view.status.message.as_ref().unwrap().text,
            "Checkpoint saved to /tmp/run.ckpt"
        );
    }

    #[test]
    fn evidence_reaches_the_averages_and_met_targets_pause_with_a_message() {
        use crate::analysis::{PrecisionTarget, Quantity, SampleStore, StartChoice, TargetProgress, analyse};
        let s = argon();
        let mut view = RunView::new(&s);
        started(&mut view, &s, 500);
        let mut store = SampleStore::new(64);
        store.push(&Observables::default());
        let report = crate::engine::EvidenceReport {
            evidence: analyse(&store, StartChoice::FromTime(0.0), true),
            precision: Vec::new(),
            eos: None,
            units: s.units(),
            sample_every: 10,
            step: 0,
            analysis_seconds: 0.0,
        };
        reduce(&mut view, Event::Evidence(Box::new(report)));
        let shown = view.averages.report().expect("the evidence is kept");
        assert_eq!((shown.evidence.entries, shown.sample_every), (1, 10));
        assert!(view.averages.is_manual());
        view.status.status.running = true;
        let bar = s.units().pressure_bar();
        reduce(
            &mut view,
            Event::PrecisionReached(vec![TargetProgress {
                target: PrecisionTarget {
                    quantity: Quantity::Pressure,
                    stderr: 2.0 / bar,
                },
                stderr: 1.5 / bar,
                met: true,
                samples_needed: Some(0),
            }]),
        );
        assert!(!view.status.status.running, "the run shows as paused");
        let m = view.status.message.as_ref().unwrap();
        assert!(
            m.text
                .starts_with("Precision reached and paused: standard error of pressure 1.5 ≤ 2 bar"),
            "{}",
            m.text
        );
        started(&mut view, &s, 500);
        assert!(
            view.averages.report().is_none(),
            "a new run forgets the old evidence"
        );
    }

    #[test]
    fn a_finished_scan_names_the_recommended_timestep_in_the_setup_units() {
        let report = TuningReport {
            from_step: 0,
            reference: Species::ReducedLJ,
            potential: Default::default(),
            duration_tau: 1.0,
            configurations: 1,
            timesteps: Vec::new(),
            cutoffs: Vec::new(),
            recommended: Some(0.004),
            cutoff_choice: Default::default(),
        };
        assert_eq!(
            tuned_message(&report),
            "Tuning scan done: recommended timestep 0.004 τ."
        );
        let none = TuningReport {
            recommended: None,
            cutoff_choice: Default::default(),
            ..report
        };
        assert!(tuned_message(&none).contains("no timestep tried was steady enough"));
    }
}
