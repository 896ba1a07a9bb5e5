//! Live plots: conserved-energy drift, energies, temperature with its target, pressure.
//!
//! Samples are converted to display units once, on arrival (time in ps for real species, τ for
//! the reduced fluid), and kept in bounded [`EnvelopeSeries`].

use super::palette;
use super::plot_marks::{PlotMarks, add_reference, label_reference};
use super::series::{EnvelopeSeries, ThinnedLog};
use super::start_line::{StartDrag, StartLine};
use crate::physics::{Observables, UnitSystem};
use egui_plot::{AxisHints, GridInput, GridMark, HLine, Legend, Line, Plot, PlotPoints, VLine};

/// Grid marks at 1, 2 or 5 × 10ⁿ, about five labelled lines across the range, and no finer
/// lines: the default powers-of-ten spacing leaves short plots with a single label, and every
/// extra full-length line is a long thin triangle pair that software OpenGL rasterises at a
/// cost (the finer grid took about 3 ms a frame on the 32,000-atom check).
pub fn nice_grid(input: GridInput) -> Vec<GridMark> {
    let (lo, hi) = input.bounds;
    let span = hi - lo;
    if !(span.is_finite() && span > 0.0) {
        return Vec::new();
    }
    let raw = span / 5.0;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last)
        .map(|k| GridMark {
            value: k as f64 * step,
            step_size: step,
        })
        .collect()
}

/// A tick label with as many decimals as the tick spacing needs, so that no two ticks of one
/// axis read the same: fixed point down to 10⁻⁴ steps, then scientific with as many mantissa
/// digits as lie between the value's magnitude and the step's. Zero is written "0".
pub fn tick_label(mark: GridMark) -> String {
    let (v, step) = (mark.value, mark.step_size);
    if !(v.is_finite() && step.is_finite() && step > 0.0) {
        return format!("{v}");
    }
    if v.abs() < step * 1e-6 {
        return "0".into();
    }
    let step_exp = step.log10().floor();
    let decimals = (-step_exp).max(0.0) as usize;
    if decimals <= 4 && v.abs() < 1e6 {
        return format!("{v:.decimals$}");
    }
    let digits = (v.abs().log10().floor() - step_exp).max(0.0) as usize;
    format!("{v:.digits$e}")
}

/// The y range a plot should at least show for data spanning `range`: the data's own range, or
/// if that is narrower than `min_span` (a constant series, or one at step 0), `min_span` around
/// its middle, where `min_span` is a thousandth of the middle's size but at least `floor`.
/// Without it the axis zooms into round-off and labels ticks like `124.9999999999999`.
pub fn shown_y_range(range: Option<(f64, f64)>, floor: f64) -> Option<(f64, f64)> {
    let (lo, hi) = range?;
    if !(lo.is_finite() && hi.is_finite()) {
        return None;
    }
    let mid = 0.5 * (lo + hi);
    let min_span = (1e-3 * mid.abs()).max(floor);
    if hi - lo >= min_span {
        return Some((lo, hi));
    }
    Some((mid - 0.5 * min_span, mid + 0.5 * min_span))
}

/// Smallest y span of the drift plot (relative drift is dimensionless and starts at 0).
const DRIFT_MIN_SPAN: f64 = 1e-6;
/// Smallest y span of the other plots, in their display units.
const VALUE_MIN_SPAN: f64 = 1e-3;

/// Buckets per plotted series (each draws at most twice this many points).
pub const BUCKETS: usize = 800;
/// Raw samples kept for CSV export before thinning starts.
pub const EXPORT_CAPACITY: usize = 200_000;

/// Everything the plots show, plus the export log.
pub struct Plots {
    units: UnitSystem,
    drift: EnvelopeSeries,
    kinetic: EnvelopeSeries,
    potential: EnvelopeSeries,
    total: EnvelopeSeries,
    temperature: EnvelopeSeries,
    pressure: EnvelopeSeries,
    /// Thermostat target in display units, if a thermostat runs.
    target: Option<f64>,
    log: ThinnedLog<Observables>,
    last: Option<Observables>,
    /// The draggable equilibration start, and where it was drawn in the last frame.
    start_line: StartLine,
    start_drawn: Vec<(egui::Rect, f32)>,
}

impl Plots {
    /// Empty plots for a run in `units`.
    pub fn new(units: UnitSystem) -> Self {
        let s = || EnvelopeSeries::new(BUCKETS);
        Plots {
            units,
            drift: s(),
            kinetic: s(),
            potential: s(),
            total: s(),
            temperature: s(),
            pressure: s(),
            target: None,
            log: ThinnedLog::new(EXPORT_CAPACITY),
            last: None,
            start_line: StartLine::default(),
            start_drawn: Vec::new(),
        }
    }

    /// Clears for a new run in `units` with the thermostat target `target` (reduced), if any.
    pub fn restart(&mut self, units: UnitSystem, target: Option<f64>) {
        *self = Plots::new(units);
        self.set_target(target);
    }

    /// Sets the temperature target line (reduced value).
    pub fn set_target(&mut self, target: Option<f64>) {
        self.target = target.map(|t| t * self.temperature_factor());
    }

    fn real(&self) -> bool {
        self.units.has_real_units()
    }

    fn time_factor(&self) -> f64 {
        if self.real() { self.units.tau_ps() } else { 1.0 }
    }

    fn temperature_factor(&self) -> f64 {
        if self.real() {
            self.units.temperature_kelvin()
        } else {
            1.0
        }
    }

    fn pressure_factor(&self) -> f64 {
        if self.real() {
            self.units.pressure_bar()
        } else {
            1.0
        }
    }

    /// Time unit of the x axes.
    pub fn time_unit(&self) -> &'static str {
        if self.real() { "ps" } else { "τ" }
    }

    /// Adds one sample.
    pub fn push(&mut self, o: &Observables) {
        let t = o.time * self.time_factor();
        self.drift.push(t, o.drift);
        self.kinetic.push(t, o.kinetic);
        self.potential.push(t, o.potential);
        self.total.push(t, o.total);
        self.temperature
            .push(t, o.temperature * self.temperature_factor());
        self.pressure.push(t, o.pressure * self.pressure_factor());
        self.log.push(*o);
        self.last = Some(*o);
    }

    /// Forgets everything after simulated time `time` (τ), after a rewind.
    pub fn rewind_to(&mut self, time: f64) {
        let t = time * self.time_factor();
        for s in [
            &mut self.drift,
            &mut self.kinetic,
            &mut self.potential,
            &mut self.total,
            &mut self.temperature,
            &mut self.pressure,
        ] {
            s.cut_after(t);
        }
        self.log.keep_while(|o| o.time <= time);
        self.last = self.log.items().last().copied();
    }

    /// Samples received since the last restart.
    pub fn samples(&self) -> u64 {
        self.log.offered()
    }

    /// The newest sample.
    pub fn last(&self) -> Option<&Observables> {
        self.last.as_ref()
    }

    /// The export log and its stride (1 = every sample).
    pub fn export_log(&self) -> (&[Observables], u64) {
        (self.log.items(), self.log.stride())
    }

    /// Units of the run.
    pub fn units(&self) -> UnitSystem {
        self.units
    }

    /// Where the start line was drawn in the last frame: each time plot's frame and the line's
    /// screen x (tests drag it from there).
    pub fn start_line_drawn(&self) -> &[(egui::Rect, f32)] {
        &self.start_drawn
    }

    /// Draws the four plots in a 2×2 grid filling the available space, with `marks`; `cursor`
    /// (τ) marks the time of the frame shown while the flight recorder is scrubbed. Returns
    /// what the user did with the start line.
    pub fn show(
        &mut self,
        ui: &mut egui::Ui,
        width: f32,
        cursor: Option<f64>,
        marks: &PlotMarks,
    ) -> Option<StartDrag> {
        let cursor = cursor.map(|t| t * self.time_factor());
        let mark = |p: &mut egui_plot::PlotUi| {
            if let Some(t) = cursor {
                p.vline(VLine::new("shown frame", t).color(palette::FOCUS).width(1.5));
            }
        };
        let tu = self.time_unit();
        let (tunit, punit) = if self.real() {
            ("K", "bar")
        } else {
            ("kT/ε", "ε/σ³")
        };
        // The width the caller measured before anything above could widen the ui.
        // Room for the caption under the plots (two small lines).
        let caption = if marks.start.is_some() || marks.note.is_some() {
            30.0
        } else {
            0.0
        };
        let avail = egui::vec2(width.min(ui.available_width()), ui.available_height() - caption);
        let w = (avail.x - 8.0) / 2.0;
        let h = ((avail.y - 8.0) / 2.0).max(90.0);
        let target = self.target;
        let latest = self.last.map_or(0.0, |o| o.time * self.time_factor());
        let link = ui.scope_id().with("time-axis");
        let pan = !self.start_line.begin_frame(ui, &self.start_drawn);
        let plot = |name: &str, ylabel: String, range: Option<(f64, f64)>| {
            let mut plot = Plot::new(name.to_string())
                .width(w)
                .height(h)
                // Time ticks are short ("10", "0.05"): labelled down to 32 points apart, where the
                // default wants 60 and leaves narrow plots (a side panel open) without any.
                .custom_x_axes(vec![
                    AxisHints::new_x()
                        .label(format!("time [{tu}]"))
                        .formatter(|m, _| tick_label(m))
                        .label_spacing(32.0..=44.0),
                ])
                .y_axis_label(ylabel)
                .legend(Legend::default())
                .link_axis(link, [true, false])
                .link_cursor(link, [true, false])
                .allow_scroll(false)
                .allow_drag(pan)
                .y_axis_min_width(64.0)
                .show_background(false)
                .y_grid_spacer(nice_grid)
                .x_grid_spacer(nice_grid)
                .y_axis_formatter(|m, _| tick_label(m));
            if let Some((lo, hi)) = range {
                plot = plot.include_y(lo).include_y(hi);
            }
            if let Some(s) = marks.start {
                plot = plot.include_x(s);
            }
            // Time runs from 0; at step 0 one time unit is shown instead of a zoom into nothing.
            plot.include_x(0.0)
                .include_x(if latest > 0.0 { latest } else { 1.0 })
        };
        let joint = |a: Option<(f64, f64)>, b: Option<(f64, f64)>| match (a, b) {
            (Some(a), Some(b)) => Some((a.0.min(b.0), a.1.max(b.1))),
            (a, b) => a.or(b),
        };
        let drift_range = shown_y_range(self.drift.y_range(), DRIFT_MIN_SPAN);
        let energy_range = shown_y_range(
            joint(
                joint(self.kinetic.y_range(), self.potential.y_range()),
                self.total.y_range(),
            ),
            VALUE_MIN_SPAN,
        );
        let temperature_range = shown_y_range(self.temperature.y_range(), VALUE_MIN_SPAN);
        let pressure_range = shown_y_range(self.pressure.y_range(), VALUE_MIN_SPAN);
        let with_reference = |range: Option<(f64, f64)>, r: &Option<super::plot_marks::Reference>| match r {
            Some(r) => joint(
                range,
                [
                    r.equation,
                    Some(r.run_mean - 2.0 * r.run_stderr),
                    Some(r.run_mean + 2.0 * r.run_stderr),
                ]
                .into_iter()
                .flatten()
                .filter(|v| v.is_finite())
                .fold(None, |acc: Option<(f64, f64)>, v| {
                    Some(acc.map_or((v, v), |(a, b)| (a.min(v), b.max(v))))
                }),
            ),
            None => range,
        };
        let energy_range = with_reference(energy_range, &marks.energy);
        let pressure_range = with_reference(pressure_range, &marks.pressure);
        let Plots {
            drift,
            kinetic,
            potential,
            total,
            temperature,
            pressure,
            start_line,
            ..
        } = self;
        let start = marks.start;
        let manual = marks.manual;
        let mut drag = None;
        let mut follow = |ui: &egui::Ui, r: &egui_plot::PlotResponse<()>, line: &mut StartLine| {
            if let Some(d) = line.after_plot(ui, r, start, manual) {
                drag = Some(d);
            }
        };
        ui.horizontal(|ui| {
            let r = plot("drift-plot", "relative drift [1]".into(), drift_range).show(ui, |p| {
                p.line(
                    Line::new("conserved energy drift", PlotPoints::Borrowed(drift.points()))
                        .color(palette::SERIES[0]),
                );
                mark(p);
                if let Some(s) = start {
                    StartLine::add_to(p, s);
                }
            });
            follow(ui, &r, start_line);
            let r = plot("energy-plot", "energy per atom [ε]".into(), energy_range).show(ui, |p| {
                p.line(
                    Line::new("kinetic", PlotPoints::Borrowed(kinetic.points())).color(palette::SERIES[1]),
                );
                p.line(
                    Line::new("potential", PlotPoints::Borrowed(potential.points()))
                        .color(palette::SERIES[2]),
                );
                p.line(Line::new("total", PlotPoints::Borrowed(total.points())).color(palette::SERIES[3]));
                mark(p);
                if let Some(r) = &marks.energy {
                    add_reference(p, r);
                }
                if let Some(s) = start {
                    StartLine::add_to(p, s);
                }
            });
            follow(ui, &r, start_line);
            if let Some(m) = &marks.energy {
                label_reference(ui, &r, m, start_line.label_rect());
            }
        });
        ui.horizontal(|ui| {
            let r = plot(
                "temperature-plot",
                format!("temperature [{tunit}]"),
                temperature_range,
            )
            .show(ui, |p| {
                p.line(
                    Line::new("temperature", PlotPoints::Borrowed(temperature.points()))
                        .color(palette::SERIES[4]),
                );
                mark(p);
                if let Some(t) = target {
                    p.hline(
                        HLine::new("target", t)
                            .color(palette::TARGET)
                            .style(egui_plot::LineStyle::dashed_dense()),
                    );
                }
                if let Some(s) = start {
                    StartLine::add_to(p, s);
                }
            });
            follow(ui, &r, start_line);
            let r = plot("pressure-plot", format!("pressure [{punit}]"), pressure_range).show(ui, |p| {
                p.line(
                    Line::new("pressure", PlotPoints::Borrowed(pressure.points())).color(palette::SERIES[5]),
                );
                mark(p);
                if let Some(r) = &marks.pressure {
                    add_reference(p, r);
                }
                if let Some(s) = start {
                    StartLine::add_to(p, s);
                }
            });
            follow(ui, &r, start_line);
            if let Some(m) = &marks.pressure {
                label_reference(ui, &r, m, start_line.label_rect());
            }
        });
        if caption > 0.0 {
            // Wrapped to the measured width: the ui itself may reach under a side panel.
            ui.scope(|ui| {
                ui.set_max_width(avail.x);
                marks.caption(ui);
            });
        }
        self.start_line.end_frame(ui);
        self.start_drawn = self.start_line.drawn();
        drag
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::Species;

    #[test]
    fn nice_grid_labels_about_five_round_values() {
        let marks = nice_grid(GridInput {
            bounds: (-7.3, 1.2),
            base_step_size: 0.01,
        });
        let values: Vec<f64> = marks.iter().map(|m| m.value).collect();
        assert_eq!(values, vec![-6.0, -4.0, -2.0, 0.0]);
        assert!(marks.iter().all(|m| m.step_size == 2.0));
        let marks = nice_grid(GridInput {
            bounds: (0.0, 0.83),
            base_step_size: 0.001,
        });
        assert_eq!(marks.len(), 5, "{marks:?}");
        assert!(
            nice_grid(GridInput {
                bounds: (1.0, 1.0),
                base_step_size: 0.1
            })
            .is_empty()
        );
    }

    fn labels(bounds: (f64, f64)) -> Vec<String> {
        nice_grid(GridInput {
            bounds,
            base_step_size: 0.0,
        })
        .into_iter()
        .map(tick_label)
        .collect()
    }

    #[test]
    fn tick_labels_never_repeat_and_carry_the_decimals_the_spacing_needs() {
        // Seen in the window: time ticks 0.05 apart printed "0.0, 0.1, 0.1, 0.2" and drift ticks
        // "0.0001, 0.0001, 0.0000, -0.0001".
        assert_eq!(labels((0.0, 0.2)), ["0", "0.05", "0.10", "0.15", "0.20"]);
        assert_eq!(
            labels((-1.2e-4, 1.2e-4)),
            ["-1.0e-4", "-5e-5", "0", "5e-5", "1.0e-4"]
        );
        for bounds in [
            (1.0499e-3, 1.0501e-3),
            (124.9999, 125.0001),
            (-3e7, 3e7),
            (0.0, 1.0),
            (-6.1, -5.9),
        ] {
            let l = labels(bounds);
            let mut unique = l.clone();
            unique.dedup();
            assert_eq!(unique, l, "{bounds:?}");
            assert!(l.len() >= 3, "{bounds:?}: {l:?}");
        }
    }

    #[test]
    fn a_constant_series_is_shown_with_a_minimum_span_around_its_value() {
        // At step 0 of the bundled scenario the temperature axis read 124.9999999999999.
        let (lo, hi) = shown_y_range(Some((125.0, 125.0)), VALUE_MIN_SPAN).unwrap();
        assert!((hi - lo - 0.125).abs() < 1e-12 && (lo + hi - 250.0).abs() < 1e-12);
        assert_eq!(labels((lo, hi)), ["124.95", "125.00", "125.05"]);
        assert_eq!(
            shown_y_range(Some((0.0, 0.0)), DRIFT_MIN_SPAN),
            Some((-5e-7, 5e-7))
        );
        // A series that varies keeps its own range.
        assert_eq!(shown_y_range(Some((1.0, 2.0)), VALUE_MIN_SPAN), Some((1.0, 2.0)));
        assert_eq!(shown_y_range(None, VALUE_MIN_SPAN), None);
    }

    #[test]
    fn converts_to_display_units_on_arrival() {
        let u = UnitSystem::new(Species::Argon);
        let mut p = Plots::new(u);
        p.set_target(Some(1.0));
        p.push(&Observables {
            time: 2.0,
            temperature: 0.5,
            pressure: 1.0,
            ..Default::default()
        });
        let pt = p.temperature.points()[0];
        assert!((pt.x - 2.0 * u.tau_ps()).abs() < 1e-12);
        assert!((pt.y - 0.5 * u.temperature_kelvin()).abs() < 1e-9);
        assert!((p.target.unwrap() - u.temperature_kelvin()).abs() < 1e-9);
        assert_eq!(p.time_unit(), "ps");
        assert_eq!(Plots::new(UnitSystem::new(Species::ReducedLJ)).time_unit(), "τ");
    }
}
