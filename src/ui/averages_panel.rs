//! The Averages panel: for each followed quantity the mean ± standard error after the
//! equilibration start (reduced and setup units), the statistical inefficiency, the effective
//! samples and a verdict in words; the start, typed or automatic; the precision targets; the
//! block-averaging curve of one quantity; and the equation of state beside the run.

use super::averages::{Averages, mean_pm, reduced_unit, setup_unit, steps_needed, time_unit};
use super::palette;
use super::plots::{nice_grid, tick_label};
use crate::analysis::eos_reference::{EosComparison, TemperatureSource};
use crate::analysis::series_statistics::MIN_BLOCKS_PLATEAU;
use crate::analysis::{Quantity, StartChoice, Verdict};
use crate::engine::{Command, EvidenceReport};
use crate::io::numbers::{format_number, significant};
use crate::io::summary::MODEL_CAUTION;
use egui_plot::{HLine, Legend, Line, Plot, PlotPoints, Points};

/// Colour of a verdict; the words always say it too.
fn verdict_colour(v: &Verdict) -> egui::Color32 {
    match v {
        Verdict::Equilibrated { .. } => palette::VERDICT_GOOD,
        Verdict::StillDrifting => palette::ERROR_TEXT,
        Verdict::NotYet(_) => palette::CAUTION_TEXT,
    }
}

/// A short name for table rows (energies are per atom, as the table's note says).
fn short_label(q: Quantity) -> &'static str {
    match q {
        Quantity::Temperature => "Temperature",
        Quantity::Pressure => "Pressure",
        Quantity::PotentialEnergy => "Potential energy",
        Quantity::TotalEnergy => "Total energy",
        Quantity::ConservedEnergy => "Conserved energy",
        Quantity::FullPotentialEnergy => "Potential energy, full",
        Quantity::FullPressure => "Pressure, full",
    }
}

/// Grid marks at whole powers of two on a log₂ axis: about five, never between integers.
fn log2_grid(input: egui_plot::GridInput) -> Vec<egui_plot::GridMark> {
    let (lo, hi) = input.bounds;
    if !(hi > lo && (hi - lo).is_finite()) {
        return Vec::new();
    }
    let step = ((hi - lo) / 5.0).ceil().max(1.0);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last)
        .map(|k| egui_plot::GridMark {
            value: k as f64 * step,
            step_size: step,
        })
        .collect()
}

/// A mean ± standard error in the setup's units, or "" for the reduced fluid.
fn in_setup_units(q: Quantity, r: &EvidenceReport, mean: f64, stderr: f64) -> String {
    match setup_unit(q, r.units) {
        Some((f, u)) if mean.is_finite() => format!("{} {u}", mean_pm(mean * f, stderr * f)),
        _ => String::new(),
    }
}

impl Averages {
    /// Draws the panel; returns the command the user asked for (a new average start).
    pub fn show(&mut self, ui: &mut egui::Ui) -> Option<Command> {
        let mut command = None;
        let Some(report) = self.report().cloned() else {
            ui.weak(
                "No samples analysed yet: the averages appear once the engine has sent its first analysis.",
            );
            return None;
        };
        let (tf, tu) = time_unit(report.units);
        let time = |t: f64| format!("{} {tu}", format_number(t * tf));
        let ev = &report.evidence;
        ui.horizontal_wrapped(|ui| {
            ui.label(egui::RichText::new("Overall:").strong());
            ui.label(
                egui::RichText::new(ev.overall.words(time))
                    .strong()
                    .color(verdict_colour(&ev.overall)),
            );
        });
        ui.weak(format!(
            "{} samples to step {} ({} raw samples per stored entry; analysed in {:.1} ms); the overall verdict is decided by {}.",
            ev.entries,
            report.step,
            ev.width,
            report.analysis_seconds * 1e3,
            ev.rows
                .iter()
                .filter(|r| r.decides)
                .map(|r| r.quantity.label().to_lowercase())
                .collect::<Vec<_>>()
                .join(", ")
        ));
        ui.add_space(4.0);
        // The start: typed, dragged on the plots, or automatic.
        ui.horizontal_wrapped(|ui| {
            let l = ui.label(format!("Average from [{tu}]"));
            let field = ui
                .add(egui::TextEdit::singleline(&mut self.typed).desired_width(80.0))
                .labelled_by(l.id)
                .on_hover_text("type a time and press Enter, or drag the start line on any time plot");
            self.editing = field.has_focus();
            if field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter)) {
                command = self.ask_typed();
            }
            let manual = self.is_manual();
            if ui
                .add_enabled(manual, egui::Button::new("Automatic start"))
                .on_hover_text("average from the start the detection finds")
                .on_disabled_hover_text("the averages already start where the detection finds")
                .clicked()
            {
                command = Some(self.ask(StartChoice::Automatic));
            }
            ui.weak(if manual {
                "set by hand"
            } else {
                "detected: the latest start among the quantities that decide"
            });
        });
        if let Some(e) = &self.typed_error {
            ui.colored_label(palette::ERROR_TEXT, e);
        }
        ui.add_space(4.0);
        self.table(ui, &report, &time);
        ui.add_space(6.0);
        precision_targets(ui, &report);
        ui.separator();
        self.block_curve(ui, &report);
        ui.separator();
        if let Some(eos) = &report.eos {
            equation_of_state(ui, &report, eos);
        } else {
            ui.weak("Equation of state: not shown for mixtures: the equation of state is for one species.");
        }
        command
    }

    fn table(&self, ui: &mut egui::Ui, r: &EvidenceReport, time: &dyn Fn(f64) -> String) {
        let real = r.units.has_real_units();
        egui::Grid::new("averages-table")
            .striped(true)
            .num_columns(6)
            .spacing([10.0, 2.0])
            .show(ui, |ui| {
                let mean_head = if real {
                    "mean ± s.e. (setup units, reduced)"
                } else {
                    "mean ± s.e. (reduced)"
                };
                for h in [
                    "quantity",
                    mean_head,
                    "g [samples]",
                    "eff. samples",
                    "averaged from",
                    "verdict",
                ] {
                    ui.label(egui::RichText::new(h).strong());
                }
                ui.end_row();
                for q in Quantity::FOLLOWED {
                    let row = r.evidence.row(q);
                    let s = &row.stats;
                    ui.label(short_label(q)).on_hover_text(if row.decides {
                        "decides the overall verdict"
                    } else {
                        "followed for drift; does not decide the overall verdict"
                    });
                    let reduced = format!("{} {}", mean_pm(s.mean, s.stderr), reduced_unit(q));
                    if real {
                        ui.vertical(|ui| {
                            ui.spacing_mut().item_spacing.y = 0.0;
                            ui.label(in_setup_units(q, r, s.mean, s.stderr));
                            ui.label(egui::RichText::new(reduced).small().weak());
                        });
                    } else {
                        ui.label(reduced);
                    }
                    let g = row.inefficiency_in_samples(r.evidence.width);
                    ui.label(if g.is_finite() {
                        format!("{g:.1}")
                    } else {
                        "–".into()
                    });
                    ui.label(format!("{:.0}", s.effective_samples));
                    ui.label(time(r.evidence.start_time));
                    let words = row.verdict.words(time);
                    let mut cell = row.verdict.short().to_string();
                    if !row.decides {
                        cell.push_str(" (info)");
                    }
                    ui.label(egui::RichText::new(cell).color(verdict_colour(&row.verdict)))
                        .on_hover_text(words);
                    ui.end_row();
                }
            });
        ui.weak("Energies per atom. Hover a verdict for its reason; \"info\" rows are followed but do not decide the overall verdict.");
    }

    fn block_curve(&mut self, ui: &mut egui::Ui, r: &EvidenceReport) {
        ui.horizontal(|ui| {
            ui.label(egui::RichText::new("Block averaging").strong());
            egui::ComboBox::from_id_salt("block-curve-quantity")
                .selected_text(self.curve.label())
                .show_ui(ui, |ui| {
                    for q in Quantity::FOLLOWED {
                        ui.selectable_value(&mut self.curve, q, q.label());
                    }
                })
                .response
                .widget_info(|| {
                    egui::WidgetInfo::labeled(
                        egui::Role::ComboBox,
                        true,
                        "quantity of the block-averaging curve",
                    )
                });
        });
        let q = self.curve;
        let row = r.evidence.row(q);
        let (f, unit) = setup_unit(q, r.units).unwrap_or((1.0, reduced_unit(q)));
        let width = r.evidence.width as f64;
        let point = |l: &crate::analysis::series_statistics::BlockLevel| {
            [(l.block_size as f64 * width).log2(), l.stderr * f]
        };
        let curve: Vec<[f64; 2]> = row.stats.blocks.iter().map(point).collect();
        // Levels of few blocks are noisy; the plateau is read without them.
        let few: Vec<[f64; 2]> = row
            .stats
            .blocks
            .iter()
            .filter(|l| l.blocks < MIN_BLOCKS_PLATEAU)
            .map(point)
            .collect();
        ui.weak("Standard error of the mean read from block means, against block size: it rises while blocks are shorter than the correlation time and levels off once they are not.");
        if curve.len() < 2 {
            ui.weak("Too few samples after the start for a curve yet.");
            return;
        }
        let top = curve.iter().map(|p| p[1]).fold(row.stats.stderr * f, f64::max);
        let plateau = row.stats.block_plateau * f;
        let from_g = row.stats.stderr * f;
        Plot::new("block-curve")
            .height(170.0)
            .x_axis_label("block size [samples, log₂ scale]")
            .y_axis_label(format!("s.e. [{unit}]"))
            .legend(
                Legend::default()
                    .position(egui_plot::Corner::LeftTop)
                    .text_style(egui::TextStyle::Small)
                    .background_alpha(0.7),
            )
            .allow_scroll(false)
            .show_background(false)
            .include_y(0.0)
            .include_y(top * 1.6)
            .y_axis_min_width(56.0)
            .y_grid_spacer(nice_grid)
            .y_axis_formatter(|m, _| tick_label(m))
            .x_grid_spacer(log2_grid)
            .x_axis_formatter(|m, _| format_number(2f64.powf(m.value).round()))
            .show(ui, |p| {
                p.line(
                    Line::new("block estimate", PlotPoints::from(curve.clone())).color(palette::SERIES[5]),
                );
                p.points(
                    Points::new("block estimate", PlotPoints::from(curve.clone()))
                        .color(palette::SERIES[5])
                        .radius(2.5),
                );
                if !few.is_empty() {
                    p.points(
                        Points::new(
                            format!("fewer than {MIN_BLOCKS_PLATEAU} blocks (noisy)"),
                            PlotPoints::from(few.clone()),
                        )
                        .color(palette::ERROR_TEXT)
                        .shape(egui_plot::MarkerShape::Cross)
                        .radius(4.0),
                    );
                }
                if plateau.is_finite() {
                    p.hline(
                        HLine::new(format!("plateau {}", format_number(plateau)), plateau)
                            .color(palette::TARGET)
                            .style(egui_plot::LineStyle::dashed_dense()),
                    );
                }
                if from_g.is_finite() {
                    p.hline(
                        HLine::new(format!("from g {}", format_number(from_g)), from_g)
                            .color(palette::START_LINE)
                            .style(egui_plot::LineStyle::dashed_loose()),
                    );
                }
            });
    }
}

fn precision_targets(ui: &mut egui::Ui, r: &EvidenceReport) {
    ui.label(egui::RichText::new("Precision targets").strong());
    if r.precision.is_empty() {
        ui.weak("None in this setup (precision_targets): the run stops at its steps.");
        return;
    }
    egui::Grid::new("precision-table")
        .striped(true)
        .num_columns(4)
        .spacing([10.0, 3.0])
        .show(ui, |ui| {
            for h in ["quantity", "target s.e.", "s.e. now", "steps still needed"] {
                ui.label(egui::RichText::new(h).strong());
            }
            ui.end_row();
            for p in &r.precision {
                let q = p.target.quantity;
                let (f, u) = setup_unit(q, r.units).unwrap_or((1.0, reduced_unit(q)));
                ui.label(short_label(q));
                ui.label(format!("{} {u}", significant(p.target.stderr * f, 3)));
                ui.label(if p.stderr.is_finite() {
                    format!("{} {u}", significant(p.stderr * f, 3))
                } else {
                    "–".into()
                });
                match (p.met, steps_needed(p.samples_needed, r.sample_every)) {
                    (true, _) => ui.colored_label(palette::VERDICT_GOOD, "met"),
                    (false, Some(n)) => ui.label(format!("about {n}")),
                    (false, None) => ui.label("not known yet"),
                };
                ui.end_row();
            }
        });
    if !r.evidence.overall.is_equilibrated() {
        ui.weak("A run stops for its targets only once it is called equilibrated.");
    }
}

fn equation_of_state(ui: &mut egui::Ui, r: &EvidenceReport, eos: &EosComparison) {
    ui.label(egui::RichText::new("Equation of state beside the run").strong());
    let source = match eos.temperature_source {
        TemperatureSource::Bath => "the bath's",
        TemperatureSource::RunningMean => "the run's mean",
    };
    ui.weak(format!(
        "Lennard-Jones equation of state (Thol et al. 2016, full potential) at T* = {} ({source}), ρ* = {}; compared with the run's full-potential estimates after the start.",
        format_number(eos.temperature),
        format_number(eos.density)
    ));
    if let Some(h) = eos.hidden {
        ui.colored_label(palette::CAUTION_TEXT, format!("Equation of state {}", h.words()));
    }
    let real = r.units.has_real_units();
    egui::Grid::new("eos-table")
        .striped(true)
        .num_columns(3)
        .spacing([10.0, 3.0])
        .show(ui, |ui| {
            for h in ["", "equation of state", "run, full potential (mean ± s.e.)"] {
                ui.label(egui::RichText::new(h).strong());
            }
            ui.end_row();
            for (q, name, value, run) in [
                (Quantity::FullPressure, "pressure", eos.pressure, eos.run_pressure),
                (
                    Quantity::FullPotentialEnergy,
                    "residual energy / atom",
                    eos.residual_energy,
                    eos.run_residual_energy,
                ),
            ] {
                let ru = reduced_unit(q);
                ui.label(name);
                let mut eq = value.map_or("–".to_string(), |v| format!("{} {ru}", format_number(v)));
                let mut ours = format!("{} {ru}", mean_pm(run.mean, run.stderr));
                if real && let Some((f, u)) = setup_unit(q, r.units) {
                    if let Some(v) = value {
                        eq.push_str(&format!(" = {} {u}", format_number(v * f)));
                    }
                    ours.push_str(&format!(" = {}", in_setup_units(q, r, run.mean, run.stderr)));
                }
                ui.label(eq);
                ui.label(ours);
                ui.end_row();
            }
        });
    if real {
        ui.colored_label(
            palette::CAUTION_TEXT,
            "Both columns are model values: the Lennard-Jones model only approximates the real gas.",
        )
        .on_hover_text(MODEL_CAUTION);
    }
}
