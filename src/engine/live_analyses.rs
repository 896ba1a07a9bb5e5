//! The structure and motion analyses while the window watches: [`Analyses`] at a cadence
//! picked for the running setup, and the [`AnalysesReport`] the engine thread sends.

use super::analyses::{Analyses, Cadence};
use super::protocol::{AnalysesReport, AnalysisFile, Curve, DiffusionFigures, SpeedCurves};
use super::session::Session;
use crate::analysis::FitWindow;
use crate::io::analysis_files::{analysis_files, species_labels};

/// Steps between configurations of g(r) and of the speeds when the setup names none. A g(r)
/// pass over the neighbour list of the 32,000-atom liquid took 25 ms (about 1.3 steps on one
/// thread), so this costs about 0.7 % of the run; the speeds cost nothing measurable.
pub const LIVE_STRUCTURE_EVERY: u64 = 200;
/// Time between samples of the self motion when the setup names none, τ: fine enough to
/// resolve the velocity autocorrelation of a dense liquid (its first zero near 0.15 τ for
/// argon-like parameters, see `tests/rahman_argon.rs`). Every 4 steps of the 32,000-atom
/// liquid this took 1.45 % of the stepping time on one thread (4,096 atoms followed).
pub const LIVE_DYNAMICS_INTERVAL_TAU: f64 = 0.02;

/// The analyses of the running simulation and the fit window the window asked for.
pub struct LiveAnalyses {
    analyses: Analyses,
    window: Option<FitWindow>,
    labels: Vec<String>,
}

impl LiveAnalyses {
    /// Analyses of `session` from its equilibration start (or from now, if that has passed),
    /// at the setup's `rdf_every`, `dynamics_every` and `speeds_every`, or the live defaults.
    pub fn new(session: &Session, window: Option<FitWindow>) -> Self {
        let setup = session.setup();
        let sim = session.simulation();
        let dt = sim.spec().timestep;
        let dynamics = setup
            .dynamics_every
            .unwrap_or(((LIVE_DYNAMICS_INTERVAL_TAU / dt).round() as u64).max(1));
        let cadence = Cadence {
            rdf_every: Some(setup.rdf_every.unwrap_or(LIVE_STRUCTURE_EVERY)),
            rdf_half_box: setup.rdf_reach == crate::io::setup::RdfReach::HalfBox,
            dynamics_every: Some(dynamics),
            speeds_every: Some(setup.speeds_every.unwrap_or(LIVE_STRUCTURE_EVERY)),
            from_step: setup.equilibration_steps.max(sim.step_count()),
        };
        // The window asked for in the panel, else the setup's.
        let window = window.or_else(|| {
            let [from, to] = setup.diffusion_window_tau().ok().flatten()?;
            Some(FitWindow { from, to })
        });
        LiveAnalyses {
            analyses: Analyses::new(sim, cadence),
            window,
            labels: species_labels(&sim.system().kinds),
        }
    }

    /// Feeds the present state after a step; true when something was added.
    pub fn after_step(&mut self, session: &Session) -> bool {
        self.analyses.after_step(session.simulation())
    }

    /// Forgets everything and starts again at `step`.
    pub fn reset(&mut self, step: u64) {
        self.analyses.reset(step);
    }

    /// Sets the diffusion fit window (τ), or the default.
    pub fn set_window(&mut self, window: Option<FitWindow>) {
        self.window = window;
    }

    /// The fit window asked for.
    pub fn window(&self) -> Option<FitWindow> {
        self.window
    }

    /// The CSV text of `file`, as a headless run writes it.
    pub fn csv(&self, file: AnalysisFile, session: &Session) -> Option<String> {
        let a = &self.analyses;
        let units = session.units();
        analysis_files(
            a.rdf.as_ref(),
            a.motion.as_ref(),
            a.speeds.as_ref(),
            &units,
            &self.labels,
        )
        .into_iter()
        .find(|(name, _)| *name == file.file_name())
        .map(|(_, text)| text)
    }

    /// What the analyses show now.
    pub fn report(&self, step: u64) -> AnalysesReport {
        let a = &self.analyses;
        let c = a.cadence();
        let mut r = AnalysesReport {
            step,
            from_step: c.from_step,
            rdf_every: c.rdf_every.unwrap_or(0),
            dynamics_every: c.dynamics_every.unwrap_or(0),
            speeds_every: c.speeds_every.unwrap_or(0),
            ..AnalysesReport::default()
        };
        let curve = |label: String, pts: Vec<[f64; 2]>| Curve { label, points: pts };
        if let Some(g) = &a.rdf {
            r.rdf_frames = g.frames();
            let total = g.points();
            r.rdf
                .push(curve("all".into(), total.iter().map(|p| [p.r, p.g]).collect()));
            r.coordination.push(curve(
                "all".into(),
                total.iter().map(|p| [p.r, p.coordination]).collect(),
            ));
            let s = g.species();
            if s > 1 {
                for x in 0..s {
                    for y in x..s {
                        let name = format!("{}-{}", self.labels[x], self.labels[y]);
                        let pts = g.pair_points(x, y);
                        r.rdf
                            .push(curve(name.clone(), pts.iter().map(|p| [p.r, p.g]).collect()));
                        r.coordination.push(curve(
                            format!("{} around {}", self.labels[y], self.labels[x]),
                            pts.iter().map(|p| [p.r, p.coordination]).collect(),
                        ));
                    }
                }
            }
        }
        if let Some(m) = &a.motion {
            r.dynamics_samples = m.samples();
            let mut groups = vec![(None, "all".to_string())];
            if m.species() > 1 {
                groups.extend((0..m.species()).map(|t| (Some(t), self.labels[t].clone())));
            }
            for (g, name) in groups {
                r.msd.push(curve(
                    name.clone(),
                    m.msd(g).iter().map(|p| [p.t, p.value]).collect(),
                ));
                r.vacf.push(curve(
                    name,
                    m.vacf_normalised(g).iter().map(|p| [p.t, p.value]).collect(),
                ));
            }
            r.diffusion = a.diffusion(self.window).map(|d| DiffusionFigures {
                einstein: d.einstein,
                green_kubo: d.green_kubo,
                window: [d.window.from, d.window.to],
                blocks: d.blocks,
                agree: d.estimates_agree(),
            });
        }
        if let Some(h) = &a.speeds {
            r.speed_frames = h.frames();
            for (t, label) in self.labels.iter().enumerate() {
                if let Some(f) = h.fit(t) {
                    r.speeds.push(SpeedCurves {
                        label: label.clone(),
                        measured: f.v.iter().zip(&f.density).map(|(&v, &d)| [v, d]).collect(),
                        maxwell_boltzmann: f
                            .v
                            .iter()
                            .zip(&f.maxwell_boltzmann)
                            .map(|(&v, &d)| [v, d])
                            .collect(),
                        temperature: f.temperature,
                        ks_distance: f.ks_distance,
                        ks_critical: f.ks_critical_one_frame,
                    });
                }
            }
        }
        r
    }
}
