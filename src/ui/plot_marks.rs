//! What the time plots mark besides the samples: the equilibration start, and on the pressure
//! and potential-energy plots the equation of state's value beside the run's full-potential
//! mean ± 2 standard errors (or why the equation's line is hidden).

use super::averages::Averages;
use super::palette;
use crate::analysis::Quantity;
use egui::Align2;
use egui_plot::{HLine, LineStyle, PlotResponse, PlotUi};

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
    /// A note on the pressure and energy plots' references: why the equation is hidden, or
    /// that the model only approximates the real gas.
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
            None if r.units.has_real_units() => {
                Some("Model values: the Lennard-Jones model only approximates the real gas.".into())
            }
            None => None,
        };
        m
    }
}

/// Adds a reference's lines to a plot being built (the legend leaves them out;
/// [`label_reference`] labels them and the caption under the plots explains them).
pub fn add_reference(p: &mut PlotUi<'_>, r: &Reference) {
    if let Some(v) = r.equation {
        p.hline(
            HLine::new("", v)
                .color(palette::EOS_LINE)
                .width(1.5)
                .style(LineStyle::dashed_dense()),
        );
    }
    if r.run_mean.is_finite() {
        p.hline(HLine::new("", r.run_mean).color(palette::RUN_BAND).width(1.0));
        if r.run_stderr.is_finite() && r.run_stderr > 0.0 {
            for s in [-2.0, 2.0] {
                p.hline(
                    HLine::new("", r.run_mean + s * r.run_stderr)
                        .color(palette::RUN_BAND)
                        .width(1.0)
                        .style(LineStyle::dotted_dense()),
                );
            }
        }
    }
}

/// Labels a reference's lines at the left edge of the plot shown (in the dimmed part before
/// the start, clear of the legend), the equation's on the side away from the run's; a label
/// that would cover `avoid` (the start line's label) or the other label is stacked beside it.
pub fn label_reference<R>(ui: &egui::Ui, plot: &PlotResponse<R>, r: &Reference, avoid: Option<egui::Rect>) {
    let frame = *plot.transform.frame();
    let painter = ui.painter_at(frame);
    let at = |y: f64| plot.transform.position_from_point_y(y);
    let run_above = r.equation.is_none_or(|v| r.run_mean >= v);
    let left = frame.left() + 4.0;
    let mut taken: Vec<egui::Rect> = avoid.into_iter().collect();
    if let Some(v) = r.equation {
        let (dy, anchor) = if run_above {
            (2.0, Align2::LEFT_TOP)
        } else {
            (-2.0, Align2::LEFT_BOTTOM)
        };
        let (y, anchor) = inside(frame, at(v) + dy, anchor);
        let rect = place(
            &painter,
            frame,
            "equation of state",
            palette::EOS_LINE,
            egui::pos2(left, y),
            anchor,
            &taken,
        );
        taken.push(rect);
    }
    if r.run_mean.is_finite() {
        let e = 2.0 * r.run_stderr.max(0.0);
        let (y, dy, anchor) = if run_above {
            (r.run_mean + e, -2.0, Align2::LEFT_BOTTOM)
        } else {
            (r.run_mean - e, 2.0, Align2::LEFT_TOP)
        };
        let (y, anchor) = inside(frame, at(y) + dy, anchor);
        place(
            &painter,
            frame,
            "run, full potential ± 2 s.e.",
            palette::RUN_BAND,
            egui::pos2(left, y),
            anchor,
            &taken,
        );
    }
}

/// Paints `text` small at `pos`, moved under (or over) any of `taken` it would cover, inside
/// `frame`; returns where.
fn place(
    painter: &egui::Painter,
    frame: egui::Rect,
    text: &str,
    colour: egui::Color32,
    pos: egui::Pos2,
    anchor: Align2,
    taken: &[egui::Rect],
) -> egui::Rect {
    let galley = painter.layout_no_wrap(text.into(), egui::FontId::proportional(11.0), colour);
    let mut rect = anchor.anchor_size(pos, galley.size());
    for t in taken {
        if t.intersects(rect) {
            // Stacked under the label in the way, or above it where that leaves the frame.
            let below = rect.translate(egui::vec2(0.0, t.bottom() + 1.0 - rect.top()));
            rect = if below.bottom() <= frame.bottom() {
                below
            } else {
                rect.translate(egui::vec2(0.0, t.top() - 1.0 - rect.bottom()))
            };
        }
    }
    painter.galley(rect.min, galley, colour);
    rect
}

/// A label's y and anchor, flipped to the line's other side where it would leave the frame.
fn inside(frame: egui::Rect, y: f32, anchor: Align2) -> (f32, Align2) {
    const HEIGHT: f32 = 14.0;
    if anchor == Align2::LEFT_BOTTOM && y - HEIGHT < frame.top() {
        (y + 4.0, Align2::LEFT_TOP)
    } else if anchor == Align2::LEFT_TOP && y + HEIGHT > frame.bottom() {
        (y - 4.0, Align2::LEFT_BOTTOM)
    } else {
        (y, anchor)
    }
}

impl PlotMarks {
    /// The caption under the plots: what the start line and the reference lines are.
    pub fn caption(&self, ui: &mut egui::Ui) {
        ui.horizontal_wrapped(|ui| {
            ui.spacing_mut().item_spacing.x = 0.0;
            let small = |t: &str| egui::RichText::new(t.to_string()).small();
            if self.start.is_some() {
                ui.label(
                    small("Cyan line: averages start here (drag it, or type a time in Averages); the dimmed part is left out. ")
                        .color(palette::START_LINE),
                );
            }
            if self.pressure.is_some() {
                ui.label(
                    small("Dashed white: equation of state (full potential). ")
                        .color(palette::EOS_LINE),
                );
                ui.label(
                    small("Orange: the run's full-potential mean, dotted ± 2 s.e. ")
                        .color(palette::RUN_BAND),
                );
            }
            if let Some(n) = &self.note {
                ui.label(small(n).color(palette::CAUTION_TEXT));
            }
        });
    }
}
