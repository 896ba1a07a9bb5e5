//! The structure and motion analyses of one run: g(r) per species pair, the self motion (MSD,
//! VACF, both D estimates) and the speed histograms, each fed every so many steps from a
//! given step on. The headless runner and the engine thread both hold one, so the files and
//! the window's panel come from the same sums.

use crate::analysis::{
    Diffusion, FitWindow, LagSchedule, RadialDistribution, SelfMotion, SpeedHistogram, self_diffusion,
};
use crate::physics::Simulation;

/// Bins of g(r) between 0 and the cutoff.
pub const RDF_BINS: usize = 200;
/// Bins of each speed histogram.
pub const SPEED_BINS: usize = 60;

/// How often each analysis takes a configuration (None: not at all), and from which step.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Cadence {
    pub rdf_every: Option<u64>,
    /// g(r) out to half the box edge over every pair, instead of to the cutoff.
    pub rdf_half_box: bool,
    pub dynamics_every: Option<u64>,
    pub speeds_every: Option<u64>,
    /// Steps before this one are left out.
    pub from_step: u64,
}

/// The analyses of a run.
#[derive(Clone)]
pub struct Analyses {
    cadence: Cadence,
    pub rdf: Option<RadialDistribution>,
    pub motion: Option<SelfMotion>,
    pub speeds: Option<SpeedHistogram>,
}

impl Analyses {
    /// Empty analyses for `sim` at the given cadence.
    pub fn new(sim: &Simulation, cadence: Cadence) -> Self {
        let spec = sim.spec();
        let system = sim.system();
        Analyses {
            cadence,
            rdf: cadence.rdf_every.map(|_| {
                let reach = if cadence.rdf_half_box {
                    0.5 * system.box_length
                } else {
                    spec.cutoff
                };
                RadialDistribution::with_species(reach, RDF_BINS, spec.kinds.len())
            }),
            motion: cadence
                .dynamics_every
                .map(|n| SelfMotion::new(system, n as f64 * spec.timestep, LagSchedule::default())),
            speeds: cadence
                .speeds_every
                .map(|_| SpeedHistogram::new(system, SPEED_BINS)),
        }
    }

    /// The cadence.
    pub fn cadence(&self) -> Cadence {
        self.cadence
    }

    /// Forgets everything added and starts again at `from_step`.
    pub fn reset(&mut self, from_step: u64) {
        self.cadence.from_step = from_step;
        if let Some(g) = self.rdf.as_mut() {
            g.reset();
        }
        if let Some(m) = self.motion.as_mut() {
            m.reset();
        }
        if let Some(h) = self.speeds.as_mut() {
            h.reset();
        }
    }

    /// Adds the simulation's present state to each analysis whose turn it is. Call after each
    /// step. Returns whether anything was added.
    pub fn after_step(&mut self, sim: &Simulation) -> bool {
        let step = sim.step_count();
        if step < self.cadence.from_step {
            return false;
        }
        let due = |every: Option<u64>| every.is_some_and(|k| step.is_multiple_of(k));
        let mut added = false;
        if let Some(g) = self.rdf.as_mut()
            && due(self.cadence.rdf_every)
        {
            if self.cadence.rdf_half_box {
                g.add_every_pair(sim);
            } else {
                g.add(sim);
            }
            added = true;
        }
        if let Some(m) = self.motion.as_mut()
            && due(self.cadence.dynamics_every)
        {
            m.add(sim.system());
            added = true;
        }
        if let Some(h) = self.speeds.as_mut()
            && due(self.cadence.speeds_every)
        {
            let s = sim.system();
            let temperature = 2.0 * s.kinetic_energy() / sim.spec().degrees_of_freedom();
            h.add(s, temperature);
            added = true;
        }
        added
    }

    /// Both self-diffusion estimates of all atoms followed over `window` (None: the default).
    pub fn diffusion(&self, window: Option<FitWindow>) -> Option<Diffusion> {
        self_diffusion(self.motion.as_ref()?, None, window)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::{PotentialMode, SimulationSpec, Species, Thermostat};

    #[test]
    fn analyses_take_configurations_on_their_steps_only_from_the_start_step() {
        let spec = SimulationSpec {
            kinds: vec![Species::Argon, Species::Krypton],
            counts: vec![150, 106],
            density: 0.7,
            temperature: 1.0,
            timestep: 0.004,
            cutoff: 2.5,
            skin: 0.3,
            potential: PotentialMode::TruncatedShifted,
            tail_correction: false,
            thermostat: Thermostat::None,
            seed: 4,
        };
        let mut sim = Simulation::new(spec).unwrap();
        let mut a = Analyses::new(
            &sim,
            Cadence {
                rdf_every: Some(5),
                rdf_half_box: false,
                dynamics_every: Some(2),
                speeds_every: Some(10),
                from_step: 20,
            },
        );
        for _ in 0..60 {
            sim.step().unwrap();
            a.after_step(&sim);
        }
        assert_eq!(a.rdf.as_ref().unwrap().frames(), 9); // steps 20, 25, …, 60
        assert_eq!(a.motion.as_ref().unwrap().samples(), 21); // 20, 22, …, 60
        assert_eq!(a.speeds.as_ref().unwrap().frames(), 5); // 20, 30, …, 60
        assert!((a.motion.as_ref().unwrap().interval() - 0.008).abs() < 1e-15);
        a.reset(100);
        sim.step().unwrap();
        assert!(!a.after_step(&sim));
        assert_eq!(a.rdf.as_ref().unwrap().frames(), 0);
    }
}
