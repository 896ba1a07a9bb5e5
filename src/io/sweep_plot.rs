//! `sweep.svg`: a sweep's pressure against the one axis it varies (density along an isotherm,
//! or temperature along an isochore), with the published equation of state as a curve.

use crate::physics::lj_eos::{Eos, Region};
use plotters::prelude::*;
use std::path::Path;

/// One finished point of the plot (reduced units).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SweepPoint {
    pub x: f64,
    /// The run's pressure (the truncated model it integrates) and its standard error.
    pub pressure: (f64, f64),
    /// The run's full-potential estimate, when it has one.
    pub full_pressure: Option<(f64, f64)>,
}

/// What a sweep's plot shows: pressure against the one axis that varies.
#[derive(Clone, Debug, PartialEq)]
pub struct PlotData {
    pub varying: Varying,
    pub points: Vec<SweepPoint>,
    /// The equation of state along the axis (empty for mixtures), in pieces that leave out the
    /// two-phase region.
    pub eos_curve: Vec<Vec<(f64, f64)>>,
    pub single_species: bool,
}

/// Which axis varies, and the fixed other coordinate of the equation of state.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Varying {
    /// Density varies at this temperature T*.
    Density { temperature: f64 },
    /// Temperature varies at this density ρ*.
    Temperature { density: f64 },
}

/// The x range of a plot of `points`, padded by 5 %.
pub fn x_range(points: &[SweepPoint]) -> (f64, f64) {
    let (lo, hi) = points
        .iter()
        .map(|p| p.x)
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        });
    let pad = ((hi - lo) * 0.05).max(1e-3);
    ((lo - pad).max(0.0), hi + pad)
}

/// The equation of state along the axis, in pieces that leave out the two-phase region and
/// states outside the validated range.
pub fn eos_curve(v: Varying, lo: f64, hi: f64) -> Vec<Vec<(f64, f64)>> {
    let mut pieces: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
    for k in 0..=400 {
        let x = lo + (hi - lo) * k as f64 / 400.0;
        let (t, rho) = match v {
            Varying::Density { temperature } => (temperature, x),
            Varying::Temperature { density } => (x, density),
        };
        let shown = matches!(
            Eos::region(t, rho),
            Ok(Region::Vapour | Region::Liquid | Region::Supercritical)
        );
        match (shown, Eos::properties(t, rho)) {
            (true, Ok(p)) => pieces.last_mut().unwrap().push((x, p.pressure)),
            _ => {
                if !pieces.last().unwrap().is_empty() {
                    pieces.push(Vec::new());
                }
            }
        }
    }
    pieces.retain(|p| p.len() > 1);
    pieces
}

/// Writes the plot to `path`.
pub fn write(path: &Path, data: &PlotData) -> Result<(), String> {
    let (v, points, curve) = (data.varying, &data.points, &data.eos_curve);
    if points.is_empty() {
        return Err("no finished points to plot".into());
    }
    let (lo, hi) = x_range(points);
    let mut ys: Vec<f64> = Vec::new();
    for p in points {
        ys.push(p.pressure.0 - p.pressure.1);
        ys.push(p.pressure.0 + p.pressure.1);
        if let Some(f) = p.full_pressure {
            ys.push(f.0 - f.1);
            ys.push(f.0 + f.1);
        }
    }
    ys.extend(curve.iter().flatten().map(|&(_, y)| y));
    let (mut ylo, mut yhi) = ys
        .iter()
        .filter(|y| y.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &y| {
            (a.min(y), b.max(y))
        });
    let ypad = ((yhi - ylo) * 0.08).max(1e-3);
    ylo -= ypad;
    yhi += ypad;
    let err = |e: &dyn std::fmt::Display| e.to_string();
    let root = SVGBackend::new(path, (800, 520)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| err(&e))?;
    let (caption, xlabel) = match v {
        Varying::Density { temperature } => (
            format!("Pressure along the isotherm T* = {temperature}"),
            "density ρ*",
        ),
        Varying::Temperature { density } => (
            format!("Pressure along the isochore ρ* = {density}"),
            "temperature T*",
        ),
    };
    let mut chart = ChartBuilder::on(&root)
        .caption(caption, ("sans-serif", 22))
        .margin(14)
        .x_label_area_size(44)
        .y_label_area_size(64)
        .build_cartesian_2d(lo..hi, ylo..yhi)
        .map_err(|e| err(&e))?;
    chart
        .configure_mesh()
        .x_desc(xlabel)
        .y_desc("pressure p*")
        .light_line_style(RGBColor(242, 242, 242))
        .label_style(("sans-serif", 15))
        .draw()
        .map_err(|e| err(&e))?;
    let eos_colour = RGBColor(90, 90, 90);
    for (k, piece) in curve.iter().enumerate() {
        let s = chart
            .draw_series(LineSeries::new(piece.iter().copied(), eos_colour.stroke_width(2)))
            .map_err(|e| err(&e))?;
        if k == 0 {
            s.label(
                "equation of state (Thol et al. 2016), full potential; not drawn in the two-phase region",
            )
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], eos_colour.stroke_width(2)));
        }
    }
    let run_colour = RGBColor(31, 119, 180);
    let full_colour = RGBColor(214, 95, 14);
    let bars = |pts: Vec<(f64, f64, f64)>, c: RGBColor| {
        pts.into_iter()
            .map(move |(x, y, e)| PathElement::new(vec![(x, y - e), (x, y + e)], c.stroke_width(1)))
    };
    chart
        .draw_series(bars(
            points.iter().map(|p| (p.x, p.pressure.0, p.pressure.1)).collect(),
            run_colour,
        ))
        .map_err(|e| err(&e))?;
    chart
        .draw_series(
            points
                .iter()
                .map(|p| Circle::new((p.x, p.pressure.0), 4, run_colour.filled())),
        )
        .map_err(|e| err(&e))?
        .label("run: pressure of the truncated model it integrates (± standard error)")
        .legend(move |(x, y)| Circle::new((x + 10, y), 4, run_colour.filled()));
    let full: Vec<(f64, f64, f64)> = points
        .iter()
        .filter_map(|p| p.full_pressure.map(|f| (p.x, f.0, f.1)))
        .collect();
    if !full.is_empty() {
        chart
            .draw_series(bars(full.clone(), full_colour))
            .map_err(|e| err(&e))?;
        chart
            .draw_series(
                full.iter()
                    .map(|&(x, y, _)| TriangleMarker::new((x, y), 6, full_colour.filled())),
            )
            .map_err(|e| err(&e))?
            .label("run: full-potential estimate (shift added back, tail corrections)")
            .legend(move |(x, y)| TriangleMarker::new((x + 10, y), 6, full_colour.filled()));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperLeft)
        .label_font(("sans-serif", 14))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK.mix(0.3))
        .draw()
        .map_err(|e| err(&e))?;
    root.present().map_err(|e| err(&e))?;
    Ok(())
}
