//! What the time plots mark besides the samples: the equilibration start, and on the pressure
//! and potential-energy plots the equation of state's value beside the run's full-potential
//! mean ± 2 standard errors (or why the equation's line is hidden).

use super::averages::Averages;
use super::palette;
use crate::analysis::Quantity;
use egui_plot::{HLine, LineStyle, PlotUi};

/// A reference on one plot, in that plot's units.
#[derive(Clone, Debug, PartialEq)]
pub struct Reference {
    /// The equation's value; `None` when hidden.
    pub equation: Option<f64>,
    /// The run's full-potential mean and standard error.
    pub run_mean: f64,
    pub run_stderr: f64,
}

/// Everything the time plots mark this frame.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PlotMarks {
    /// The start in display time.
    pub start: Option<f64>,
    /// The start was set by hand.
    pub manual: bool,
    /// On the pressure plot (its unit: bar for real species, reduced otherwise).
    pub pressure: Option<Reference>,
    /// On the energy plot (ε per atom).
    pub energy: Option<Reference>,
    /// A note under the pressure and energy plots: why the equation is hidden, or that the
    /// model only approximates the real gas.
    pub note: Option<String>,
}

impl PlotMarks {
    /// The marks for `averages`: pressure in bar for real species (as the pressure plot is),
    /// energy per atom in ε (as the energy plot is).
    pub fn of(averages: &Averages) -> PlotMarks {
        let mut m = PlotMarks {
            start: averages.start_shown(),
            manual: averages.is_manual(),
            ..Default::default()
        };
        let Some(r) = averages.report() else { return m };
        let Some(eos) = &r.eos else {
            m.note = Some(
                "Equation of state not shown for mixtures: the equation of state is for one species.".into(),
            );
            return m;
        };
        let pf = if r.units.has_real_units() {
            r.units.pressure_bar()
        } else {
            1.0
        };
        let run = |q: Quantity| r.evidence.row(q).stats.clone();
        let p = run(Quantity::FullPressure);
        let u = run(Quantity::FullPotentialEnergy);
        m.pressure = Some(Reference {
            equation: eos.pressure.map(|v| v * pf),
            run_mean: p.mean * pf,
            run_stderr: p.stderr * pf,
        });
        m.energy = Some(Reference {
            equation: eos.residual_energy,
            run_mean: u.mean,
            run_stderr: u.stderr,
        });
        m.note = match eos.hidden {
            Some(h) => Some(format!("Equation of state {}", h.words())),
            None if r.units.has_real_units() => Some(
                "Equation-of-state line: a Lennard-Jones model value; the model only approximates the real gas."
                    .into(),
            ),
            None => None,
        };
        m
    }
}

/// Adds a reference's lines to a plot being built.
pub fn add_reference(p: &mut PlotUi<'_>, r: &Reference) {
    if let Some(v) = r.equation {
        p.hline(
            HLine::new("equation of state (full potential)", v)
                .color(palette::EOS_LINE)
                .width(1.5)
                .style(LineStyle::dashed_dense()),
        );
    }
    if r.run_mean.is_finite() {
        let name = "run, full potential: mean ± 2 s.e.";
        p.hline(HLine::new(name, r.run_mean).color(palette::RUN_BAND).width(1.0));
        if r.run_stderr.is_finite() && r.run_stderr > 0.0 {
            for s in [-2.0, 2.0] {
                p.hline(
                    HLine::new(name, r.run_mean + s * r.run_stderr)
                        .color(palette::RUN_BAND)
                        .width(1.0)
                        .style(LineStyle::dotted_dense()),
                );
            }
        }
    }
}

/// Writes `note` small at the bottom of a plot's frame, wrapped to its width.
pub fn paint_note(ui: &egui::Ui, frame: egui::Rect, note: &str) {
    let galley = ui.painter().layout(
        note.to_string(),
        egui::FontId::proportional(11.0),
        palette::CAUTION_TEXT,
        frame.width() - 12.0,
    );
    let pos = egui::pos2(frame.left() + 6.0, frame.bottom() - galley.size().y - 4.0);
    let painter = ui.painter_at(frame);
    painter.rect_filled(
        egui::Rect::from_min_size(pos, galley.size()).expand(2.0),
        2.0,
        palette::BEFORE_START,
    );
    painter.galley(pos, galley, palette::CAUTION_TEXT);
}
