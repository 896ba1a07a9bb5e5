//! The results of a sweep, opened from its folder: its points as a table and its pressure
//! against the axis it varies, with the equation of state as a curve. It reads the folder
//! (`io::sweep_collect::read_table`) and draws; nothing else.

use super::palette;
use super::plots::tick_label;
use crate::io::numbers::significant;
use crate::io::sweep_collect::{SweepTable, read_table};
use crate::io::sweep_plot::Varying;
use egui_plot::{Legend, Line, MarkerShape, Plot, PlotPoints, Points};
use std::path::{Path, PathBuf};

/// Columns of the table, by their `sweep.csv` names, with a short heading each.
const SHOWN: [(&str, &str); 9] = [
    ("state", "state"),
    ("temperature", "T*"),
    ("pressure", "p*"),
    ("pressure_stderr", "± p*"),
    ("potential_energy_per_atom", "U*/N"),
    ("potential_energy_per_atom_stderr", "± U*/N"),
    ("eos_pressure", "p* (equation)"),
    ("equilibrated", "equilibrated"),
    ("alarm", "alarm"),
];

/// An open sweep.
pub struct SweepView {
    pub dir: PathBuf,
    pub table: SweepTable,
    pub open: bool,
    /// A point whose setup the user asked to open in the window.
    pub open_point: Option<PathBuf>,
}

impl SweepView {
    /// Reads the sweep in `dir`; the error says what is wrong with the folder.
    pub fn load(dir: &Path) -> Result<SweepView, String> {
        let table = read_table(dir).map_err(|e| e.to_string())?;
        Ok(SweepView {
            dir: dir.to_path_buf(),
            table,
            open: true,
            open_point: None,
        })
    }

    /// Reads the folder again (points finish while the window is open).
    pub fn reload(&mut self) -> Result<(), String> {
        self.table = read_table(&self.dir).map_err(|e| e.to_string())?;
        Ok(())
    }

    /// Draws the sweep's window.
    pub fn show(&mut self, ctx: &egui::Context) {
        let mut open = self.open;
        let title = format!("Sweep · {}", self.dir.display());
        egui::Window::new(title)
            .id(egui::Id::unique("sweep-results"))
            .open(&mut open)
            .default_size([960.0, 560.0])
            .show(ctx, |ui| self.contents(ui));
        self.open = open;
    }

    fn contents(&mut self, ui: &mut egui::Ui) {
        let t = self.table.tally.clone();
        ui.horizontal(|ui| {
            ui.label(format!(
                "{} points: {} finished, {} failed, {} not run",
                t.points, t.finished, t.failed, t.pending
            ));
            if ui
                .button("Reload")
                .on_hover_text("Read the folder again")
                .clicked()
                && let Err(e) = self.reload()
            {
                ui.colored_label(palette::ERROR_TEXT, e);
            }
        });
        self.plot(ui);
        ui.separator();
        self.rows(ui);
    }

    fn plot(&self, ui: &mut egui::Ui) {
        let Some(data) = &self.table.plot else {
            ui.weak("A plot is drawn when the sweep varies density alone or temperature alone.");
            return;
        };
        let xlabel = match data.varying {
            Varying::Density { temperature } => {
                format!("density ρ* (isotherm T* = {})", significant(temperature, 4))
            }
            Varying::Temperature { density } => {
                format!("temperature T* (isochore ρ* = {})", significant(density, 4))
            }
        };
        Plot::new("sweep-plot")
            .height(240.0)
            .x_axis_label(xlabel)
            .y_axis_label("pressure p*")
            .legend(Legend::default())
            .allow_scroll(false)
            .x_axis_formatter(|m, _| tick_label(m))
            .y_axis_formatter(|m, _| tick_label(m))
            .show(ui, |p| {
                for (k, piece) in data.eos_curve.iter().enumerate() {
                    let pts: Vec<[f64; 2]> = piece.iter().map(|&(x, y)| [x, y]).collect();
                    let name = if k == 0 {
                        "equation of state (full potential)"
                    } else {
                        ""
                    };
                    p.line(
                        Line::new(name, PlotPoints::from(pts))
                            .color(palette::BOX_LINE)
                            .width(2.0),
                    );
                }
                for pt in &data.points {
                    let (y, e) = pt.pressure;
                    p.line(
                        Line::new("", PlotPoints::from(vec![[pt.x, y - e], [pt.x, y + e]]))
                            .color(palette::SERIES[5]),
                    );
                }
                let run: Vec<[f64; 2]> = data.points.iter().map(|pt| [pt.x, pt.pressure.0]).collect();
                p.points(
                    Points::new("run (truncated model)", PlotPoints::from(run))
                        .radius(4.0)
                        .color(palette::SERIES[5]),
                );
                let full: Vec<[f64; 2]> = data
                    .points
                    .iter()
                    .filter_map(|pt| pt.full_pressure.map(|f| [pt.x, f.0]))
                    .collect();
                if !full.is_empty() {
                    p.points(
                        Points::new("run, full-potential estimate", PlotPoints::from(full))
                            .shape(MarkerShape::Up)
                            .radius(5.0)
                            .color(palette::TARGET),
                    );
                }
            });
        if !data.single_species {
            ui.weak("The equation of state is for one species: not drawn for a mixture.");
        }
    }

    fn rows(&mut self, ui: &mut egui::Ui) {
        let h = &self.table.header;
        let col = |name: &str| h.iter().position(|c| c == name);
        let axis_cols: Vec<usize> = (2..h.len()).take_while(|&i| h[i] != "state").collect();
        let shown: Vec<(usize, &str)> = SHOWN
            .iter()
            .filter_map(|(n, label)| col(n).map(|i| (i, *label)))
            .collect();
        let mut open_point = None;
        egui::ScrollArea::both()
            .auto_shrink([false, false])
            .show(ui, |ui| {
                egui::Grid::new("sweep-rows")
                    .striped(true)
                    .num_columns(2 + axis_cols.len() + shown.len())
                    .show(ui, |ui| {
                        ui.strong("point");
                        ui.strong("replica");
                        for &i in &axis_cols {
                            ui.strong(&h[i]);
                        }
                        for (_, label) in &shown {
                            ui.strong(*label);
                        }
                        ui.end_row();
                        for row in &self.table.rows {
                            let index = row[0].clone();
                            if ui
                                .link(&index)
                                .on_hover_text("Open this point's setup in the window")
                                .clicked()
                            {
                                open_point =
                                    Some(self.dir.join(format!("point-{:0>4}", index)).join("setup.ron"));
                            }
                            ui.label(&row[1]);
                            for &i in &axis_cols {
                                ui.label(&row[i]);
                            }
                            for &(i, _) in &shown {
                                let cell = &row[i];
                                let text = cell
                                    .parse::<f64>()
                                    .map(|v| significant(v, 4))
                                    .unwrap_or_else(|_| cell.clone());
                                ui.label(text);
                            }
                            ui.end_row();
                        }
                    });
            });
        if open_point.is_some() {
            self.open_point = open_point;
        }
    }
}
