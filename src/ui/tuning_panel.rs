//! The tuning panel: pick timesteps and cutoffs to try, let the engine scan them on copies of
//! the present state, and read how well each timestep conserves energy and how far each cutoff
//! is from the full potential. Values are shown in fs, ps, Å, kJ/mol and bar for real species
//! and in reduced units for the reduced fluid.

use super::palette;
use super::plots::{nice_grid, tick_label};
use super::unit_field::{LengthUnit, Quantity, format_number};
use crate::engine::Command;
use crate::engine::tuning::{
    FLUCTUATION_LIMIT, TUNE_MAX_VALUES, TUNE_STEPS_APART, TuneError, TuneInput, TuneRequest, TuningReport,
};
use crate::io::numbers::significant;
use crate::io::setup::{Duration, Length, Setup};
use crate::physics::UnitSystem;
use egui_plot::{Corner, HLine, Legend, Line, MarkerShape, Plot, PlotPoints, Points, VLine};
use std::time::Instant;

/// Why the typed lists make no request: a text that is not a list of numbers, or a request
/// the builder refused.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum TuningInputError {
    /// A list has no entries.
    #[error("{field}: the list is empty; allowed: 1 to {TUNE_MAX_VALUES} numbers separated by commas")]
    EmptyList { field: &'static str },
    /// A list entry is not a number.
    #[error("{field}: \"{text}\" is not a number; allowed: numbers separated by commas, such as 5, 10, 15")]
    NotANumber { field: &'static str, text: String },
    /// The trial length is not a number.
    #[error("duration: \"{text}\" is not a number; allowed: a number of {unit} such as 10")]
    DurationNotANumber { text: String, unit: &'static str },
    /// The request was refused.
    #[error(transparent)]
    Request(#[from] TuneError),
}

/// What the user asked the panel to do this frame.
#[derive(Clone, Debug, PartialEq)]
pub enum TuningAction {
    /// Send this `Command::Tune`.
    Start(Command),
    /// Put this timestep into the setup form.
    UseTimestep(Duration),
    /// Put this cutoff into the setup form.
    UseCutoff(Length),
    /// Send `Command::CancelTune`.
    Cancel,
}

/// Display units of the panel: conversion factors from reduced units and symbols.
#[derive(Clone, Copy, Debug)]
struct Shown {
    real: bool,
    units: UnitSystem,
}

impl Shown {
    fn of(units: UnitSystem) -> Self {
        Shown {
            real: units.has_real_units(),
            units,
        }
    }
    fn timestep(&self) -> (f64, &'static str) {
        if self.real {
            (self.units.tau_fs(), "fs")
        } else {
            (1.0, "τ")
        }
    }
    fn duration(&self) -> (f64, &'static str) {
        if self.real {
            (self.units.tau_ps(), "ps")
        } else {
            (1.0, "τ")
        }
    }
    fn length(&self, unit: LengthUnit) -> (f64, &'static str) {
        match unit {
            LengthUnit::Angstrom if self.real => (self.units.sigma_angstrom(), "Å"),
            _ => (1.0, "σ"),
        }
    }
    fn energy(&self) -> (f64, &'static str) {
        if self.real {
            (self.units.energy_kj_mol(), "kJ/mol")
        } else {
            (1.0, "ε")
        }
    }
    fn pressure(&self) -> (f64, &'static str) {
        if self.real {
            (self.units.pressure_bar(), "bar")
        } else {
            (1.0, "ε/σ³")
        }
    }
    /// A typed timestep in the panel's timestep unit.
    fn typed_timestep(&self, v: f64) -> Duration {
        if self.real {
            Duration::Femtoseconds(v)
        } else {
            Duration::Reduced(v)
        }
    }
    /// A typed trial length in the panel's duration unit.
    fn typed_duration(&self, v: f64) -> Duration {
        if self.real {
            Duration::Picoseconds(v)
        } else {
            Duration::Reduced(v)
        }
    }
    /// A typed cutoff in `unit`.
    fn typed_length(&self, unit: LengthUnit, v: f64) -> Length {
        match unit {
            LengthUnit::Angstrom if self.real => Length::Angstrom(v),
            _ => Length::Sigma(v),
        }
    }
}

/// Panel state: the lists as typed, and the last scan.
#[derive(Clone, Debug)]
pub struct TuningPanel {
    /// Timesteps to try, comma separated, in fs (real species) or τ.
    pub timesteps: String,
    /// Cutoffs to try, comma separated, in `cutoff_unit`.
    pub cutoffs: String,
    pub cutoff_unit: LengthUnit,
    /// Simulated time of each timestep trial, in ps (real species) or τ.
    pub duration: String,
    /// Units the texts are in.
    units: UnitSystem,
    /// When the running scan was asked for.
    scanning: Option<Instant>,
    report: Option<TuningReport>,
    /// Why the last request was refused (input or engine).
    error: Option<String>,
    /// Set after "Use this timestep".
    used: Option<String>,
    /// Runs started so far (each Apply and restart, reset or checkpoint load is a new run).
    runs: u64,
    /// The run the scan in flight started from, and the run the shown report came from.
    scan_run: u64,
    report_run: u64,
    /// Set when a scan was stopped on request.
    stopped: bool,
}

/// Parses a comma- or space-separated list of numbers; errors name the field.
fn parse_list(field: &'static str, text: &str) -> Result<Vec<f64>, TuningInputError> {
    let items: Vec<&str> = text
        .split([',', ';', ' '])
        .map(str::trim)
        .filter(|t| !t.is_empty())
        .collect();
    if items.is_empty() {
        return Err(TuningInputError::EmptyList { field });
    }
    items
        .iter()
        .map(|t| match t.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(v),
            _ => Err(TuningInputError::NotANumber {
                field,
                text: t.to_string(),
            }),
        })
        .collect()
}

fn join(values: impl IntoIterator<Item = f64>) -> String {
    values
        .into_iter()
        .map(format_number)
        .collect::<Vec<_>>()
        .join(", ")
}

impl TuningPanel {
    /// A panel with default lists for `setup`: half to three times its timestep, the cutoffs
    /// from 2 σ to 5 σ that fit the box, and a trial of 10 ps (real species) or 5 τ.
    pub fn for_setup(setup: &Setup) -> Self {
        let units = setup.units();
        let mut p = TuningPanel {
            timesteps: String::new(),
            cutoffs: String::new(),
            cutoff_unit: match setup.cutoff {
                Length::Angstrom(_) if units.has_real_units() => LengthUnit::Angstrom,
                _ => LengthUnit::Sigma,
            },
            duration: String::new(),
            units,
            scanning: None,
            report: None,
            error: None,
            used: None,
            runs: 0,
            scan_run: 0,
            report_run: 0,
            stopped: false,
        };
        p.fill_defaults(setup);
        p
    }

    /// Refills the three lists with the defaults for `setup` ([`TuneInput::defaults`], shown
    /// in the panel's units; the last results stay).
    pub fn fill_defaults(&mut self, setup: &Setup) {
        self.units = setup.units();
        let shown = Shown::of(self.units);
        let defaults = TuneInput::defaults(setup);
        let (tf, _) = shown.timestep();
        let (lf, _) = shown.length(self.cutoff_unit);
        let (df, _) = shown.duration();
        self.timesteps = join(
            defaults
                .timesteps
                .iter()
                .map(|&d| setup.reduced_duration("timestep", d).unwrap_or(0.005) * tf),
        );
        self.cutoffs = join(
            defaults
                .cutoffs
                .iter()
                .map(|&l| setup.reduced_length("cutoff", l).unwrap_or(2.5) * lf),
        );
        self.duration = format_number(
            setup
                .reduced_duration("duration", defaults.duration)
                .unwrap_or(crate::engine::tuning::DEFAULT_TRIAL_TAU)
                * df,
        );
        self.error = None;
    }

    /// Whether a scan is running.
    pub fn scanning(&self) -> bool {
        self.scanning.is_some()
    }

    /// The last scan's results.
    pub fn report(&self) -> Option<&TuningReport> {
        self.report.as_ref()
    }

    /// The last refusal, if any.
    pub fn error(&self) -> Option<&str> {
        self.error.as_deref()
    }

    /// Marks `request` as sent (the panel shows "scanning…") and hands it back as an action.
    pub fn start_requested(&mut self, request: TuneRequest) -> TuningAction {
        self.scanning = Some(Instant::now());
        self.scan_run = self.runs;
        self.error = None;
        self.stopped = false;
        TuningAction::Start(Command::Tune(request))
    }

    /// The engine answered with results.
    pub fn finished(&mut self, report: TuningReport) {
        self.scanning = None;
        self.error = None;
        self.used = None;
        self.report = Some(report);
        self.report_run = self.scan_run;
    }

    /// The engine stopped the scan on request.
    pub fn cancelled(&mut self) {
        self.scanning = None;
        self.stopped = true;
    }

    /// Whether the shown results were scanned from an earlier run than the present one.
    pub fn results_are_from_an_earlier_run(&self) -> bool {
        self.report.is_some() && self.report_run != self.runs
    }

    /// The engine refused the scan (or the scan failed).
    pub fn rejected(&mut self, reason: impl std::fmt::Display) {
        self.scanning = None;
        self.error = Some(reason.to_string());
    }

    /// A new run started on `setup`: earlier results are marked as such, and lists in other
    /// units are refilled.
    pub fn setup_changed(&mut self, setup: &Setup) {
        self.runs += 1;
        if setup.units() != self.units {
            if !setup.units().has_real_units() {
                self.cutoff_unit = LengthUnit::Sigma;
            }
            self.fill_defaults(setup);
        }
    }

    /// The lists as typed, with their units: timesteps in fs (real species) or τ, cutoffs in
    /// `cutoff_unit`, the trial in ps (real species) or τ.
    pub fn input(&self, running: &Setup) -> Result<TuneInput, TuningInputError> {
        let shown = Shown::of(running.units());
        let timesteps = parse_list("timesteps", &self.timesteps)?
            .into_iter()
            .map(|v| shown.typed_timestep(v))
            .collect();
        let cutoffs = parse_list("cutoffs", &self.cutoffs)?
            .into_iter()
            .map(|v| shown.typed_length(self.cutoff_unit, v))
            .collect();
        let d = self.duration.trim();
        let duration = match d.parse::<f64>() {
            Ok(v) if v.is_finite() => shown.typed_duration(v),
            _ => {
                return Err(TuningInputError::DurationNotANumber {
                    text: d.to_string(),
                    unit: shown.duration().1,
                });
            }
        };
        Ok(TuneInput {
            timesteps,
            cutoffs,
            duration,
        })
    }

    /// The request the typed lists make for `running` ([`TuneRequest::from_setup`]), or why
    /// not, naming the field, the value and the allowed range.
    pub fn request(&self, running: &Setup) -> Result<TuneRequest, TuningInputError> {
        Ok(TuneRequest::from_setup(running, &self.input(running)?)?)
    }

    /// Draws the panel; `running` is the setup the engine runs.
    pub fn show(&mut self, ui: &mut egui::Ui, running: &Setup) -> Option<TuningAction> {
        let mut action = None;
        let shown = Shown::of(running.units());
        let (_, tu) = shown.timestep();
        let (_, du) = shown.duration();
        ui.label("Short constant-energy trials show which timestep keeps the energy steady; the cutoff scan shows how far energy and pressure are from the full potential. Both run on copies of the present state: your simulation is not advanced.");
        ui.add_space(4.0);
        egui::Grid::new("tune-inputs")
            .num_columns(2)
            .spacing([8.0, 6.0])
            .show(ui, |ui| {
                let l = ui.label(format!("Timesteps [{tu}]"));
                ui.add(egui::TextEdit::singleline(&mut self.timesteps).desired_width(260.0))
                    .labelled_by(l.id)
                    .on_hover_text("comma separated, e.g. 5, 10, 15");
                ui.end_row();
                let l = ui.label("Cutoffs");
                ui.horizontal(|ui| {
                    ui.add(egui::TextEdit::singleline(&mut self.cutoffs).desired_width(200.0))
                        .labelled_by(l.id)
                        .on_hover_text("comma separated, e.g. 2.5, 3, 4");
                    let mut unit = self.cutoff_unit;
                    egui::ComboBox::from_id_salt("tune-cutoff-unit")
                        .selected_text(unit.symbol())
                        .width(52.0)
                        .show_ui(ui, |ui| {
                            for &u in LengthUnit::units() {
                                ui.add_enabled_ui(shown.real || u.is_reduced(), |ui| {
                                    ui.selectable_value(&mut unit, u, u.symbol());
                                });
                            }
                        })
                        .response
                        .widget_info(|| {
                            egui::WidgetInfo::labeled(egui::Role::ComboBox, true, "unit of the cutoffs")
                        });
                    if unit != self.cutoff_unit {
                        // Convert the typed numbers; leave text that does not parse alone.
                        let (from, _) = shown.length(self.cutoff_unit);
                        let (to, _) = shown.length(unit);
                        if let Ok(v) = parse_list("cutoffs", &self.cutoffs) {
                            self.cutoffs = join(v.into_iter().map(|x| x / from * to));
                        }
                        self.cutoff_unit = unit;
                    }
                });
                ui.end_row();
                let l = ui.label(format!("Trial length [{du}]"));
                ui.add(egui::TextEdit::singleline(&mut self.duration).desired_width(80.0))
                    .labelled_by(l.id)
                    .on_hover_text("simulated time of each timestep trial");
                ui.end_row();
            });
        let request = self.request(running);
        match &request {
            Err(e) => {
                ui.colored_label(palette::ERROR_TEXT, e.to_string());
            }
            Ok(r) if shown.real => {
                ui.weak(format!(
                    "= {} τ",
                    r.timesteps_tau
                        .iter()
                        .map(|&v| significant(v, 3))
                        .collect::<Vec<_>>()
                        .join(", ")
                ));
            }
            Ok(_) => {}
        }
        ui.horizontal(|ui| {
            let can = request.is_ok() && self.scanning.is_none();
            let start = ui
                .add_enabled(can, egui::Button::new("Start scan"))
                .on_hover_text("run the scans beside the simulation")
                .on_disabled_hover_text(if self.scanning.is_some() {
                    "a scan is running"
                } else {
                    "fix the lists first"
                });
            if start.clicked()
                && let Ok(r) = request.clone()
            {
                action = Some(self.start_requested(r));
            }
            if ui
                .add_enabled(self.scanning.is_none(), egui::Button::new("Default lists"))
                .clicked()
            {
                self.fill_defaults(running);
            }
            if let Some(t0) = self.scanning {
                if ui
                    .button("Stop scan")
                    .on_hover_text("stops the scan within a fraction of a trial; no results are kept")
                    .clicked()
                {
                    action = Some(TuningAction::Cancel);
                }
                ui.spinner();
                ui.label(format!("scanning… {:.0} s", t0.elapsed().as_secs_f64()));
                ui.ctx()
                    .request_repaint_after(std::time::Duration::from_millis(250));
            }
        });
        if self.stopped && self.scanning.is_none() {
            ui.weak("The last scan was stopped before it finished.");
        }
        if let Some(e) = &self.error {
            ui.colored_label(palette::ERROR_TEXT, format!("Scan refused: {e}"));
        }
        let Some(report) = self.report.clone() else {
            if self.scanning.is_none() {
                ui.add_space(6.0);
                ui.weak("No scan yet. Press Start scan; results appear here.");
            }
            return action;
        };
        ui.separator();
        if self.results_are_from_an_earlier_run() {
            ui.colored_label(palette::CAUTION_TEXT, format!("These results were scanned from step {} of an earlier run, before the last Apply and restart, reset or checkpoint load; scan again for the present one.", report.from_step));
        }
        let shown = Shown::of(crate::physics::UnitSystem::new(report.reference));
        if let Some(a) = self.show_timesteps(ui, &report, shown) {
            action = Some(a);
        }
        ui.separator();
        if let Some(a) = self.show_cutoffs(ui, &report, shown) {
            action = Some(a);
        }
        action
    }

    fn show_timesteps(
        &mut self,
        ui: &mut egui::Ui,
        report: &TuningReport,
        shown: Shown,
    ) -> Option<TuningAction> {
        let mut action = None;
        let (tf, tu) = shown.timestep();
        let (df, du) = shown.duration();
        ui.heading("Timestep scan");
        ui.weak(format!(
            "constant energy for {} {du} from step {}, per timestep",
            format_number(report.duration_tau * df),
            report.from_step
        ));
        match report.recommended {
            Some(dt) => {
                ui.horizontal(|ui| {
                    ui.label(egui::RichText::new(format!("Recommended timestep: {} {tu}", format_number(dt * tf))).strong().color(palette::TARGET));
                    let hint = "puts it into the setup form's Timestep field; press Change live or Apply and restart there to use it";
                    if ui.button("Use this timestep").on_hover_text(hint).clicked() {
                        let d = if shown.real { Duration::Femtoseconds(dt * tf) } else { Duration::Reduced(dt) };
                        self.used = Some(format!("{} {tu} is in the setup form now: press Change live (or Apply and restart) there to use it.", format_number(dt * tf)));
                        action = Some(TuningAction::UseTimestep(d));
                    }
                });
                if report
                    .timesteps
                    .iter()
                    .filter(|r| !r.blew_up)
                    .map(|r| r.timestep_tau)
                    .fold(f64::MIN, f64::max)
                    == dt
                {
                    ui.weak("That is the largest timestep tried: larger ones may pass too.");
                }
            }
            None => {
                ui.colored_label(
                    palette::ERROR_TEXT,
                    format!(
                        "No timestep tried kept the fluctuation ratio under {:.0}%: try smaller ones.",
                        FLUCTUATION_LIMIT * 100.0
                    ),
                );
            }
        }
        if let Some(u) = &self.used {
            ui.colored_label(palette::CAUTION_TEXT, u);
        }
        let ok: Vec<[f64; 2]> = report
            .timesteps
            .iter()
            .filter(|r| !r.blew_up)
            .map(|r| [r.timestep_tau * tf, r.fluctuation_ratio])
            .collect();
        let drift: Vec<[f64; 2]> = report
            .timesteps
            .iter()
            .filter(|r| !r.blew_up)
            .map(|r| [r.timestep_tau * tf, r.relative_drift.abs()])
            .collect();
        let top = ok.iter().map(|p| p[1]).fold(FLUCTUATION_LIMIT, f64::max) * 1.15;
        let blown: Vec<[f64; 2]> = report
            .timesteps
            .iter()
            .filter(|r| r.blew_up)
            .map(|r| [r.timestep_tau * tf, top])
            .collect();
        let drift_top = drift.iter().map(|p| p[1]).fold(0.0, f64::max) * 1.15;
        let blown_drift: Vec<[f64; 2]> = blown.iter().map(|p| [p[0], drift_top.max(1e-12)]).collect();
        let rec = report.recommended.map(|dt| dt * tf);
        let rec_point: Vec<[f64; 2]> = report
            .timesteps
            .iter()
            .filter(|r| Some(r.timestep_tau) == report.recommended)
            .map(|r| [r.timestep_tau * tf, r.fluctuation_ratio])
            .collect();
        let w = ((ui.available_width() - 12.0) / 2.0).max(160.0);
        ui.horizontal(|ui| {
            small_plot(
                "tune-ratio-plot",
                w,
                format!("timestep [{tu}]"),
                "ΔE/ΔK rms [1]",
                Corner::LeftTop,
            )
            .include_y(0.0)
            .include_y(top * 1.2)
            .show(ui, |p| {
                p.line(
                    Line::new("fluctuation ratio", PlotPoints::from(ok.clone())).color(palette::SERIES[0]),
                );
                p.points(
                    Points::new("fluctuation ratio", PlotPoints::from(ok.clone()))
                        .color(palette::SERIES[0])
                        .radius(3.0),
                );
                p.hline(
                    HLine::new(
                        format!("{:.0}% limit", FLUCTUATION_LIMIT * 100.0),
                        FLUCTUATION_LIMIT,
                    )
                    .color(palette::ERROR_TEXT)
                    .style(egui_plot::LineStyle::dashed_dense()),
                );
                if let Some(x) = rec {
                    p.vline(VLine::new("recommended timestep", x).color(palette::TARGET));
                    p.points(
                        Points::new("recommended timestep", PlotPoints::from(rec_point.clone()))
                            .color(palette::TARGET)
                            .shape(MarkerShape::Diamond)
                            .radius(7.0)
                            .filled(true),
                    );
                }
                if !blown.is_empty() {
                    p.points(
                        Points::new("blew up (drawn at the top)", PlotPoints::from(blown.clone()))
                            .color(palette::ERROR_TEXT)
                            .shape(MarkerShape::Cross)
                            .radius(7.0),
                    );
                }
            });
            small_plot(
                "tune-drift-plot",
                w,
                format!("timestep [{tu}]"),
                "|relative drift| [1]",
                Corner::LeftTop,
            )
            .include_y(0.0)
            .include_y(drift_top * 1.3)
            .show(ui, |p| {
                p.line(
                    Line::new("|relative drift|", PlotPoints::from(drift.clone())).color(palette::SERIES[3]),
                );
                p.points(
                    Points::new("|relative drift|", PlotPoints::from(drift.clone()))
                        .color(palette::SERIES[3])
                        .radius(3.0),
                );
                if let Some(x) = rec {
                    p.vline(VLine::new("recommended timestep", x).color(palette::TARGET));
                }
                if !blown_drift.is_empty() {
                    p.points(
                        Points::new(
                            "blew up (drawn at the top)",
                            PlotPoints::from(blown_drift.clone()),
                        )
                        .color(palette::ERROR_TEXT)
                        .shape(MarkerShape::Cross)
                        .radius(7.0),
                    );
                }
            });
        });
        let (ef, eu) = shown.energy();
        let per_time = if shown.real {
            (ef / df, format!("{eu}/{du}"))
        } else {
            (1.0, "ε/τ".to_string())
        };
        egui::Grid::new("tune-timestep-table")
            .striped(true)
            .num_columns(6)
            .spacing([12.0, 3.0])
            .show(ui, |ui| {
                for h in [
                    format!("timestep [{tu}]"),
                    "steps".into(),
                    "ΔE/ΔK rms".into(),
                    "rel. drift".into(),
                    format!("drift/atom [{}]", per_time.1),
                    "verdict".into(),
                ] {
                    ui.label(egui::RichText::new(h).strong());
                }
                ui.end_row();
                for r in &report.timesteps {
                    let recommended = Some(r.timestep_tau) == report.recommended;
                    let cell = |ui: &mut egui::Ui, t: String| {
                        if recommended {
                            ui.label(egui::RichText::new(t).color(palette::TARGET));
                        } else {
                            ui.label(t);
                        }
                    };
                    cell(ui, format_number(r.timestep_tau * tf));
                    cell(ui, r.steps.to_string());
                    if r.blew_up {
                        ui.label("–");
                        ui.label("–");
                        ui.label("–");
                        ui.colored_label(palette::ERROR_TEXT, "blew up");
                    } else {
                        cell(ui, format!("{:.4}", r.fluctuation_ratio));
                        cell(ui, format!("{:.2e}", r.relative_drift));
                        cell(ui, format!("{:.2e}", r.drift_per_atom_per_tau * per_time.0));
                        if recommended {
                            cell(ui, "recommended".into());
                        } else if r.fluctuation_ratio <= FLUCTUATION_LIMIT {
                            ui.label("within limit");
                        } else {
                            ui.colored_label(palette::ERROR_TEXT, "too noisy");
                        }
                    }
                    ui.end_row();
                }
            });
        action
    }

    fn show_cutoffs(
        &mut self,
        ui: &mut egui::Ui,
        report: &TuningReport,
        shown: Shown,
    ) -> Option<TuningAction> {
        let mut action = None;
        let (lf, lu) = shown.length(self.cutoff_unit);
        let (ef, eu) = shown.energy();
        let (pf, pu) = shown.pressure();
        ui.heading("Cutoff scan");
        ui.weak(format!("{:?}, averaged over {} configurations {} steps apart; full estimate: unshifted pair terms inside the cutoff plus analytic tail corrections", report.potential, report.configurations, TUNE_STEPS_APART));
        let choice = &report.cutoff_choice;
        match choice.cutoff_sigma {
            Some(rc) => {
                ui.horizontal(|ui| {
                    ui.label(
                        egui::RichText::new(format!("Recommended cutoff: {} {lu}", format_number(rc * lf)))
                            .strong()
                            .color(palette::TARGET),
                    );
                    let hint = "puts it into the setup form's Cutoff field; press Change live or Apply and restart there to use it";
                    if ui.button("Use this cutoff").on_hover_text(hint).clicked() {
                        let l = shown.typed_length(self.cutoff_unit, rc * lf);
                        self.used = Some(format!(
                            "{} {lu} is in the setup form now: press Change live (or Apply and restart) there to use it.",
                            format_number(rc * lf)
                        ));
                        action = Some(TuningAction::UseCutoff(l));
                    }
                });
                ui.weak(format!("Why: {}.", choice.reason));
            }
            None if !choice.reason.is_empty() => {
                ui.colored_label(
                    palette::CAUTION_TEXT,
                    format!("No cutoff recommended: {}.", choice.reason),
                );
            }
            None => {}
        }
        let series = |f: &dyn Fn(&crate::engine::tuning::CutoffRow) -> f64| -> Vec<[f64; 2]> {
            report
                .cutoffs
                .iter()
                .map(|r| [r.cutoff_sigma * lf, f(r)])
                .collect()
        };
        let u_mode = series(&|r| r.potential * ef);
        let u_full = series(&|r| r.potential_full_estimate * ef);
        let p_mode = series(&|r| r.pressure * pf);
        let p_full = series(&|r| r.pressure_full_estimate * pf);
        let w = ((ui.available_width() - 12.0) / 2.0).max(160.0);
        let mode = format!("{:?}", report.potential);
        ui.horizontal(|ui| {
            for (id, label, a, b) in [
                ("tune-energy-plot", format!("U/N [{eu}]"), &u_mode, &u_full),
                ("tune-pressure-plot", format!("P [{pu}]"), &p_mode, &p_full),
            ] {
                small_plot(id, w, format!("cutoff [{lu}]"), &label, Corner::RightTop).show(ui, |p| {
                    p.line(Line::new(mode.clone(), PlotPoints::from(a.clone())).color(palette::SERIES[2]));
                    p.points(
                        Points::new(mode.clone(), PlotPoints::from(a.clone()))
                            .color(palette::SERIES[2])
                            .radius(3.0),
                    );
                    p.line(
                        Line::new("full estimate", PlotPoints::from(b.clone()))
                            .color(palette::SERIES[4])
                            .style(egui_plot::LineStyle::dashed_loose()),
                    );
                    p.points(
                        Points::new("full estimate", PlotPoints::from(b.clone()))
                            .color(palette::SERIES[4])
                            .radius(3.0),
                    );
                });
            }
        });
        egui::Grid::new("tune-cutoff-table")
            .striped(true)
            .num_columns(6)
            .spacing([12.0, 3.0])
            .show(ui, |ui| {
                for h in [
                    format!("cutoff [{lu}]"),
                    format!("U/N as run [{eu}]"),
                    format!("U/N full est. [{eu}]"),
                    format!("P as run [{pu}]"),
                    format!("P full est. [{pu}]"),
                    "cost a step".to_string(),
                ] {
                    ui.label(egui::RichText::new(h).strong());
                }
                ui.end_row();
                for r in &report.cutoffs {
                    ui.label(format_number(r.cutoff_sigma * lf));
                    ui.label(format!("{:.4}", r.potential * ef));
                    ui.label(format!("{:.4}", r.potential_full_estimate * ef));
                    ui.label(format!("{:.4}", r.pressure * pf));
                    ui.label(format!("{:.4}", r.pressure_full_estimate * pf));
                    ui.label(format!("{:.2}×", r.relative_cost))
                        .on_hover_text("wall time of a step at this cutoff over one at the setup's cutoff");
                    ui.end_row();
                }
            });
        action
    }
}

/// A small plot; the legend sits in `legend`, away from where the data lie.
fn small_plot(id: &str, width: f32, x: String, y: &str, legend: Corner) -> Plot<'static> {
    Plot::new(id.to_string())
        .width(width)
        .height(150.0)
        .x_axis_label(x)
        .y_axis_label(y.to_string())
        .legend(
            Legend::default()
                .position(legend)
                .text_style(egui::TextStyle::Small)
                .background_alpha(0.6),
        )
        .allow_scroll(false)
        .y_axis_min_width(56.0)
        .show_background(false)
        .y_grid_spacer(nice_grid)
        .y_axis_formatter(|m, _| tick_label(m))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn reduced_setup() -> Setup {
        let mut s = Setup::parse(
            include_str!("../../assets/reduced-lj-timestep-check.ron"),
            "reduced",
        )
        .unwrap();
        s.atoms = 256;
        s
    }

    #[test]
    fn defaults_fit_the_box_and_make_a_valid_request() {
        let s = reduced_setup();
        let p = TuningPanel::for_setup(&s);
        assert_eq!(p.timesteps, "0.0025, 0.005, 0.0075, 0.01, 0.015");
        // 256 atoms at 0.8442: half box 3.36 σ, skin 0.3 σ: 2, 2.5 and 3 fit.
        assert_eq!(p.cutoffs, "2, 2.5, 3");
        let TuneRequest {
            timesteps_tau,
            cutoffs_sigma,
            duration_tau,
        } = p.request(&s).unwrap();
        assert_eq!(timesteps_tau.len(), 5);
        assert_eq!(cutoffs_sigma, vec![2.0, 2.5, 3.0]);
        assert_eq!(duration_tau, 5.0);
    }

    #[test]
    fn real_species_lists_are_in_fs_and_angstrom_and_errors_say_so() {
        let mut s = Setup::parse(include_str!("../../assets/krypton-getter-sample.ron"), "kr").unwrap();
        s.cutoff = Length::Angstrom(9.0);
        let mut p = TuningPanel::for_setup(&s);
        assert_eq!(p.cutoff_unit, LengthUnit::Angstrom);
        assert!(p.timesteps.starts_with("5, 10, 15"), "{}", p.timesteps);
        let timesteps = p.request(&s).unwrap().timesteps_tau;
        let tau_fs = s.units().tau_fs();
        assert!((timesteps[1] - 10.0 / tau_fs).abs() < 1e-12);
        p.timesteps = "10, 500".into();
        let e = p.request(&s).unwrap_err().to_string();
        assert!(
            e.starts_with("timesteps: 500 fs is out of range; allowed:") && e.contains(" fs to "),
            "{e}"
        );
        p.timesteps = "10, ten".into();
        assert!(
            p.request(&s)
                .unwrap_err()
                .to_string()
                .contains("timesteps: \"ten\" is not a number")
        );
        p.timesteps = "10".into();
        p.cutoffs = "0.5".into();
        let e = p.request(&s).unwrap_err().to_string();
        assert!(
            e.starts_with("cutoffs: 0.5 Å is out of range; allowed:") && e.contains("Å"),
            "{e}"
        );
        p.cutoffs = "9".into();
        p.duration = "0".into();
        assert!(
            p.request(&s)
                .unwrap_err()
                .to_string()
                .starts_with("duration: 0 ps is out of range")
        );
    }

    fn report_from(step: u64) -> TuningReport {
        TuningReport {
            from_step: step,
            reference: crate::physics::Species::ReducedLJ,
            potential: crate::physics::PotentialMode::TruncatedShifted,
            duration_tau: 1.0,
            configurations: 1,
            timesteps: Vec::new(),
            cutoffs: Vec::new(),
            recommended: None,
            cutoff_choice: Default::default(),
        }
    }

    #[test]
    fn results_of_a_scan_from_an_earlier_run_are_marked() {
        let s = reduced_setup();
        let mut p = TuningPanel::for_setup(&s);
        p.setup_changed(&s);
        let c = p.request(&s).unwrap();
        let _ = p.start_requested(c.clone());
        p.finished(report_from(10));
        assert!(!p.results_are_from_an_earlier_run());
        // Apply and restart: the shown results belong to the run before.
        p.setup_changed(&s);
        assert!(p.results_are_from_an_earlier_run());
        // A scan started before a restart and answered after it is marked too.
        let _ = p.start_requested(c.clone());
        p.setup_changed(&s);
        p.finished(report_from(20));
        assert!(p.results_are_from_an_earlier_run());
        // A fresh scan of the present run is not.
        let _ = p.start_requested(c);
        p.finished(report_from(0));
        assert!(!p.results_are_from_an_earlier_run());
        // Stopping a scan leaves the panel idle.
        let _ = p.start_requested(p.request(&s).unwrap());
        p.cancelled();
        assert!(!p.scanning());
    }
}
