//! The "Structure and motion" panel: g(r) per species pair, the mean squared displacement with
//! its fit window, the velocity autocorrelation and the speeds against Maxwell–Boltzmann, with
//! both self-diffusion estimates side by side. It draws the engine's [`AnalysesReport`] and
//! asks for changes through [`StructureAction`]s; it computes nothing.

use super::palette;
use super::plots::{nice_grid, tick_label};
use super::unit_field::format_number;
use crate::engine::protocol::{AnalysesReport, AnalysisFile, Curve};
use crate::io::setup::{Ensemble, Setup, ThermostatChoice};
use crate::physics::UnitSystem;
use egui_plot::{Corner, HLine, Legend, Line, Plot, PlotPoints, VLine};

/// What the panel asks for.
#[derive(Clone, Debug, PartialEq)]
pub enum StructureAction {
    /// Start the analyses again from the present step.
    Reset,
    /// Use this lag window for the diffusion fits, τ (None: the default).
    FitWindow(Option<[f64; 2]>),
    /// Switch the running simulation to constant energy and start the analyses again there.
    MeasureInNve,
    /// Export one analysis as CSV.
    Export(AnalysisFile),
    /// Save a PNG picture of one plot (its place in the window, points).
    Picture(egui::Rect),
}

/// Display scales of the running setup: real units for real species, reduced otherwise.
struct Scales {
    time: f64,
    time_unit: &'static str,
    length: f64,
    length_unit: &'static str,
    speed: f64,
    speed_unit: &'static str,
    diffusion: f64,
    diffusion_unit: &'static str,
}

impl Scales {
    fn of(units: UnitSystem) -> Scales {
        if units.has_real_units() {
            Scales {
                time: units.tau_ps(),
                time_unit: "ps",
                length: units.sigma_angstrom(),
                length_unit: "Å",
                speed: units.speed_m_s(),
                speed_unit: "m/s",
                diffusion: units.diffusion_cm2_s(),
                diffusion_unit: "cm²/s",
            }
        } else {
            Scales {
                time: 1.0,
                time_unit: "τ",
                length: 1.0,
                length_unit: "σ",
                speed: 1.0,
                speed_unit: "σ/τ",
                diffusion: 1.0,
                diffusion_unit: "σ²/τ",
            }
        }
    }
}

/// The panel's state: the latest report and the fit window as typed.
#[derive(Default)]
pub struct StructurePanel {
    pub report: Option<Box<AnalysesReport>>,
    /// Fit window as typed, in display time units; empty for the default.
    pub fit_from: String,
    pub fit_to: String,
    /// Show the running coordination numbers instead of g(r).
    pub show_coordination: bool,
    error: Option<String>,
}

/// Whether `s` runs under a thermostat that changes the dynamics, and which.
fn thermostat_note(s: &Setup) -> Option<&'static str> {
    match s.ensemble {
        Ensemble::Nve => None,
        Ensemble::Nvt {
            thermostat: ThermostatChoice::Langevin { .. },
        } => Some("Langevin friction slows the atoms: D measured under it is too small."),
        Ensemble::Nvt {
            thermostat: ThermostatChoice::StochasticRescale { .. },
        } => {
            Some("Stochastic rescaling with a short relaxation time disturbs the dynamics and can change D.")
        }
    }
}

/// "mean ± error" with the error to two significant digits and the mean to the same place:
/// fixed point for magnitudes from 1e-3 to 1e5, scientific otherwise; without a finite error
/// the mean alone in short form.
pub fn with_error(mean: f64, err: f64) -> String {
    if !(err.is_finite() && err > 0.0 && mean.is_finite()) {
        return format!("{} (no error yet)", format_number(mean));
    }
    let e = err.log10().floor() as i32;
    let big = mean.abs().max(err);
    if (1e-3..1e5).contains(&big) {
        let d = (1 - e).max(0) as usize;
        format!("{mean:.d$} ± {err:.d$}")
    } else {
        let m = big.log10().floor() as i32;
        let d = (m - e + 1).max(1) as usize;
        let scale = 10f64.powi(m);
        format!("({:.d$} ± {:.d$})e{m}", mean / scale, err / scale)
    }
}

fn line(c: &Curve, sx: f64, sy: f64, colour: egui::Color32) -> Line<'static> {
    let pts: Vec<[f64; 2]> = c.points.iter().map(|p| [p[0] * sx, p[1] * sy]).collect();
    Line::new(c.label.clone(), PlotPoints::from(pts)).color(colour)
}

fn colour(k: usize) -> egui::Color32 {
    palette::SERIES[k % palette::SERIES.len()]
}

fn plot(id: &str, w: f32, h: f32, x: String, y: String) -> Plot<'static> {
    Plot::new(id.to_string())
        .width(w)
        .height(h)
        .x_axis_label(x)
        .y_axis_label(y)
        .legend(
            Legend::default()
                .position(Corner::RightTop)
                .text_style(egui::TextStyle::Small)
                .background_alpha(0.6),
        )
        .allow_scroll(false)
        .y_axis_min_width(56.0)
        .show_background(false)
        .x_grid_spacer(nice_grid)
        .y_grid_spacer(nice_grid)
        .x_axis_formatter(|m, _| tick_label(m))
        .y_axis_formatter(|m, _| tick_label(m))
}

impl StructurePanel {
    /// Forgets the report (a new run started).
    pub fn clear(&mut self) {
        self.report = None;
    }

    /// The fit window typed, in τ: Ok(None) when both fields are empty.
    fn typed_window(&self, scale: f64) -> Result<Option<[f64; 2]>, String> {
        let (a, b) = (self.fit_from.trim(), self.fit_to.trim());
        if a.is_empty() && b.is_empty() {
            return Ok(None);
        }
        match (a.parse::<f64>(), b.parse::<f64>()) {
            (Ok(x), Ok(y)) if x >= 0.0 && y > x && y.is_finite() => Ok(Some([x / scale, y / scale])),
            _ => Err(format!(
                "fit window: \"{a}\" to \"{b}\" is out of range; allowed: two numbers 0 ≤ from < to, or both empty for the default"
            )),
        }
    }

    /// Draws the panel; returns what the user asked for.
    pub fn show(&mut self, ui: &mut egui::Ui, running: &Setup) -> Option<StructureAction> {
        let report = self.report.take();
        let action = match report.as_deref() {
            Some(r) => self.show_report(ui, running, r),
            None => {
                ui.label("Waiting for the engine's first report…");
                None
            }
        };
        self.report = report;
        action
    }

    fn show_report(
        &mut self,
        ui: &mut egui::Ui,
        running: &Setup,
        r: &AnalysesReport,
    ) -> Option<StructureAction> {
        let sc = Scales::of(running.units());
        let mut action = None;
        ui.horizontal_wrapped(|ui| {
            ui.label(format!(
                "From step {}: g(r) of {} configurations (every {} steps), motion from {} samples (every {}), speeds of {} configurations.",
                r.from_step, r.rdf_frames, r.rdf_every, r.dynamics_samples, r.dynamics_every, r.speed_frames
            ));
            if ui.button("Reset analyses").on_hover_text("start the analyses again from the present step").clicked() {
                action = Some(StructureAction::Reset);
            }
        });
        // The two estimates of D side by side.
        ui.horizontal_wrapped(|ui| match &r.diffusion {
            Some(d) => {
                let f =
                    |e: crate::analysis::Estimate| with_error(e.mean * sc.diffusion, e.stderr * sc.diffusion);
                ui.strong(format!("D (Einstein) = {} {}", f(d.einstein), sc.diffusion_unit));
                ui.separator();
                ui.strong(format!(
                    "D (Green–Kubo) = {} {}",
                    f(d.green_kubo),
                    sc.diffusion_unit
                ));
                ui.weak(format!(
                    "fit over {}–{} {}, errors from {} blocks of origins",
                    format_number(d.window[0] * sc.time),
                    format_number(d.window[1] * sc.time),
                    sc.time_unit,
                    d.blocks
                ));
            }
            None => {
                ui.weak("D: not enough samples in the fit window yet.");
            }
        });
        let note = thermostat_note(running);
        let disagree = r.diffusion.is_some_and(|d| !d.agree);
        if disagree || note.is_some() {
            ui.horizontal_wrapped(|ui| {
                if disagree {
                    ui.colored_label(
                        palette::CAUTION_TEXT,
                        "The two estimates of D differ by more than twice their combined error: the run may be too short for the window.",
                    );
                }
                if let Some(n) = note {
                    ui.colored_label(palette::CAUTION_TEXT, n);
                    if ui
                        .button("Measure D in NVE")
                        .on_hover_text("switch the running simulation to constant energy and start the analyses again")
                        .clicked()
                    {
                        action = Some(StructureAction::MeasureInNve);
                    }
                }
            });
        }
        ui.horizontal(|ui| {
            ui.label(format!("Fit window [{}]", sc.time_unit));
            ui.add(
                egui::TextEdit::singleline(&mut self.fit_from)
                    .desired_width(60.0)
                    .hint_text("from"),
            );
            ui.label("to");
            ui.add(
                egui::TextEdit::singleline(&mut self.fit_to)
                    .desired_width(60.0)
                    .hint_text("to"),
            );
            if ui
                .button("Use")
                .on_hover_text("empty fields: the default window")
                .clicked()
            {
                match self.typed_window(sc.time) {
                    Ok(w) => {
                        self.error = None;
                        action = Some(StructureAction::FitWindow(w));
                    }
                    Err(e) => self.error = Some(e),
                }
            }
            ui.checkbox(
                &mut self.show_coordination,
                "coordination numbers instead of g(r)",
            );
        });
        if let Some(e) = &self.error {
            ui.colored_label(palette::ERROR_TEXT, e.clone());
        }
        let w = ((ui.available_width() - 12.0) / 2.0).max(200.0);
        let h = ((ui.available_height() - 80.0) / 2.0).clamp(120.0, 320.0);
        let export = |ui: &mut egui::Ui,
                      file: AnalysisFile,
                      plot: egui::Rect,
                      action: &mut Option<StructureAction>| {
            ui.horizontal(|ui| {
                if ui
                    .small_button(format!("CSV: {}", file.file_name()))
                    .on_hover_text("export this analysis as CSV (the layout of a headless run)")
                    .clicked()
                {
                    *action = Some(StructureAction::Export(file));
                }
                if ui
                    .small_button("PNG")
                    .on_hover_text("save a picture of this plot")
                    .clicked()
                {
                    *action = Some(StructureAction::Picture(plot));
                }
            });
        };
        ui.horizontal(|ui| {
            ui.vertical(|ui| {
                let (curves, y) = if self.show_coordination {
                    (&r.coordination, "n(r) [1]".to_string())
                } else {
                    (&r.rdf, "g(r) [1]".to_string())
                };
                let shown = plot("structure-rdf", w, h, format!("r [{}]", sc.length_unit), y).show(ui, |p| {
                    for (k, c) in curves.iter().enumerate() {
                        p.line(line(c, sc.length, 1.0, colour(k)));
                    }
                    if !self.show_coordination {
                        p.hline(
                            HLine::new("ideal gas", 1.0)
                                .color(palette::TARGET)
                                .style(egui_plot::LineStyle::dashed_dense()),
                        );
                    }
                });
                export(ui, AnalysisFile::Rdf, shown.response.rect, &mut action);
            });
            ui.vertical(|ui| {
                let area = sc.length * sc.length;
                let shown = plot(
                    "structure-msd",
                    w,
                    h,
                    format!("lag [{}]", sc.time_unit),
                    format!("mean squared displacement [{}²]", sc.length_unit),
                )
                .show(ui, |p| {
                    for (k, c) in r.msd.iter().enumerate() {
                        p.line(line(c, sc.time, area, colour(k)));
                    }
                    if let Some(d) = &r.diffusion {
                        for x in d.window {
                            p.vline(VLine::new("fit window", x * sc.time).color(palette::TARGET));
                        }
                    }
                });
                export(ui, AnalysisFile::Msd, shown.response.rect, &mut action);
            });
        });
        ui.horizontal(|ui| {
            ui.vertical(|ui| {
                let shown = plot(
                    "structure-vacf",
                    w,
                    h,
                    format!("lag [{}]", sc.time_unit),
                    "velocity autocorrelation [1]".into(),
                )
                .show(ui, |p| {
                    for (k, c) in r.vacf.iter().enumerate() {
                        p.line(line(c, sc.time, 1.0, colour(k)));
                    }
                    p.hline(
                        HLine::new("zero", 0.0)
                            .color(palette::TARGET)
                            .style(egui_plot::LineStyle::dashed_dense()),
                    );
                });
                export(ui, AnalysisFile::Vacf, shown.response.rect, &mut action);
            });
            ui.vertical(|ui| {
                let shown = plot(
                    "structure-speeds",
                    w,
                    h,
                    format!("speed [{}]", sc.speed_unit),
                    format!("probability density [1/({})]", sc.speed_unit),
                )
                .show(ui, |p| {
                    for (k, s) in r.speeds.iter().enumerate() {
                        let m: Vec<[f64; 2]> = s
                            .measured
                            .iter()
                            .map(|q| [q[0] * sc.speed, q[1] / sc.speed])
                            .collect();
                        let mb: Vec<[f64; 2]> = s
                            .maxwell_boltzmann
                            .iter()
                            .map(|q| [q[0] * sc.speed, q[1] / sc.speed])
                            .collect();
                        p.line(
                            Line::new(format!("{} measured", s.label), PlotPoints::from(m)).color(colour(k)),
                        );
                        p.line(
                            Line::new(format!("{} Maxwell–Boltzmann", s.label), PlotPoints::from(mb))
                                .color(colour(k + 1))
                                .style(egui_plot::LineStyle::dashed_dense()),
                        );
                    }
                });
                ui.horizontal_wrapped(|ui| {
                    export(ui, AnalysisFile::Speeds, shown.response.rect, &mut action);
                    for s in &r.speeds {
                        let t = if running.units().has_real_units() {
                            format!(
                                "{} K",
                                format_number(s.temperature * running.units().temperature_kelvin())
                            )
                        } else {
                            format!("kT/ε {}", format_number(s.temperature))
                        };
                        ui.weak(format!(
                            "{}: KS distance {} (1 % limit for one configuration {}) at {t}",
                            s.label,
                            format_number(s.ks_distance),
                            format_number(s.ks_critical)
                        ));
                    }
                });
            });
        });
        action
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn estimates_show_the_error_to_two_digits_and_the_mean_to_the_same_place() {
        assert_eq!(with_error(0.0229439, 0.00227723), "0.0229 ± 0.0023");
        assert_eq!(with_error(2.372e-5, 2.8e-7), "(2.372 ± 0.028)e-5");
        assert_eq!(with_error(12.34, 1.5), "12.3 ± 1.5");
        assert!(with_error(1.0, f64::NAN).contains("no error yet"));
    }

    #[test]
    fn the_typed_fit_window_is_converted_to_tau_or_refused_with_its_range() {
        let mut p = StructurePanel::default();
        assert_eq!(p.typed_window(2.0), Ok(None));
        p.fit_from = "1".into();
        p.fit_to = "5".into();
        assert_eq!(p.typed_window(2.0), Ok(Some([0.5, 2.5])));
        p.fit_to = "0.5".into();
        let e = p.typed_window(2.0).unwrap_err();
        assert!(e.contains("allowed: two numbers 0 ≤ from < to"), "{e}");
    }
}
