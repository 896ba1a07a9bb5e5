//! One simulation: the step as a pipeline of named stages, and its bookkeeping.
//!
//! [`Simulation`] knows nothing of threads, files or windows: it is built from a
//! [`SimulationSpec`] in reduced units, advanced with [`Simulation::step`], measured with
//! [`Simulation::observe`], and saved or restored through [`SimulationState`].
//!
//! A step is composed of the stages of [`Stage`] (kernels in [`super::stages`],
//! [`super::neighbours`] and [`super::forces`]), in the order of the textbook algorithm of each
//! integrator; [`Simulation::time_stages`] times them.

use super::forces::{self, ForceScratch, ForceSums};
use super::health::{self, KickTally, StepHealth};
use super::lattice;
use super::neighbours::NeighbourList;
use super::observables::Observables;
use super::potential::{PairTable, PotentialMode};
use super::species::Species;
use super::stage_clock::{Stage, StageClock, StageTimes};
use super::stages::{self, LangevinO, RescaleHalf};
use super::system::System;
use super::thermostat::Thermostat;
use serde::{Deserialize, Serialize};

/// Everything that defines a run, in reduced units of the first species.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SimulationSpec {
    /// Species of each type index; the first is the unit reference.
    pub kinds: Vec<Species>,
    /// Atoms of each type.
    pub counts: Vec<usize>,
    /// Number density N/V.
    pub density: f64,
    /// Start temperature (and thermostat target unless the thermostat says otherwise).
    pub temperature: f64,
    pub timestep: f64,
    pub cutoff: f64,
    pub skin: f64,
    pub potential: PotentialMode,
    pub tail_correction: bool,
    pub thermostat: Thermostat,
    pub seed: u64,
}

/// A spec value outside what the physics can run, naming the field.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{field}: {value} is out of range; allowed: {allowed}")]
pub struct SpecError {
    pub field: &'static str,
    pub value: String,
    pub allowed: String,
}

/// A saved state that its spec cannot continue from, naming the field (with the atom for the
/// per-atom arrays, e.g. `velocities[17]`), the value and the allowed range.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{field}: {value} is out of range; allowed: {allowed}")]
pub struct StateError {
    pub field: String,
    pub value: String,
    pub allowed: String,
}

/// Largest velocity component a saved state may hold, in σ/τ of the reference species.
///
/// The thermal speed per component is √(T/m): about 60 σ/τ for the hottest start a setup may
/// ask for (T = 100 ε/k_B) and the lightest atom in a mixture (helium beside xenon, m ≈ 0.03).
/// Ten thousand is far above anything a healthy run reaches, and far below where kinetic
/// energies stop being finite (1e200 overflows when squared and summed).
pub const MAX_SPEED: f64 = 1e4;

/// Largest unwrapped coordinate a saved state may hold, in σ: twice as far as an atom at
/// [`MAX_SPEED`] travels in the longest run a setup allows (1e10 steps of 0.05 τ: 5e12 σ).
pub const MAX_COORDINATE: f64 = 1e13;

/// Relative tolerance between a saved box edge and the edge the spec's atom count and density
/// give. The two are computed by the same expression, so they are normally equal to the bit;
/// 1e-9 allows for a `cbrt` that rounds differently on another platform, and nothing more (a
/// box 1e-9 too large moves the farthest atoms by 1e-9 L, far below the search margin).
pub const BOX_LENGTH_TOLERANCE: f64 = 1e-9;

/// The run became non-finite: at which step, and which atoms.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("the simulation blew up at step {step}: {reason} (atoms {atoms:?})")]
pub struct Blowup {
    pub step: u64,
    pub reason: String,
    /// Up to eight atoms holding a non-finite value, in index order (none when only the
    /// energy or virial overflowed).
    pub atoms: Vec<usize>,
}

impl SimulationSpec {
    /// Total atoms.
    pub fn atoms(&self) -> usize {
        self.counts.iter().sum()
    }

    /// Edge of the cubic box.
    pub fn box_length(&self) -> f64 {
        (self.atoms() as f64 / self.density).cbrt()
    }

    /// Degrees of freedom: 3N − 3 when total momentum is conserved, 3N under Langevin friction.
    pub fn degrees_of_freedom(&self) -> f64 {
        let n = self.atoms() as f64;
        match self.thermostat {
            Thermostat::Langevin { .. } => 3.0 * n,
            _ => 3.0 * n - 3.0,
        }
    }

    /// Checks the values the physics needs; the setup layer checks the rest with units.
    pub fn check(&self) -> Result<(), SpecError> {
        let err = |field, value: String, allowed: &str| {
            Err(SpecError {
                field,
                value,
                allowed: allowed.into(),
            })
        };
        if self.kinds.is_empty() || self.kinds.len() != self.counts.len() || self.kinds.len() > 255 {
            return err(
                "species",
                format!("{} species", self.kinds.len()),
                "1 to 255 species, one count each",
            );
        }
        if self.atoms() < 2 {
            return err("atoms", self.atoms().to_string(), "at least 2");
        }
        if !(self.density > 0.0 && self.density.is_finite()) {
            return err("density", self.density.to_string(), "a positive number");
        }
        if !(self.temperature >= 0.0 && self.temperature.is_finite()) {
            return err("temperature", self.temperature.to_string(), "zero or positive");
        }
        if !(self.timestep > 0.0 && self.timestep.is_finite()) {
            return err("timestep", self.timestep.to_string(), "a positive number");
        }
        if !(self.cutoff > 0.0 && self.skin >= 0.0) {
            return err(
                "cutoff",
                format!("{} (skin {})", self.cutoff, self.skin),
                "cutoff > 0 and skin ≥ 0",
            );
        }
        let half = 0.5 * self.box_length();
        if self.cutoff + self.skin > half {
            return err(
                "cutoff",
                format!("cutoff + skin = {:.4} σ", self.cutoff + self.skin),
                &format!(
                    "at most half the box edge, {half:.4} σ (use more atoms, a lower density or a shorter cutoff)"
                ),
            );
        }
        match self.thermostat {
            Thermostat::None => {}
            Thermostat::StochasticRescale { target, tau } => {
                if !(target > 0.0 && tau > 0.0 && tau.is_finite()) {
                    return err(
                        "ensemble",
                        format!("target {target}, relaxation {tau}"),
                        "target > 0 and relaxation time > 0",
                    );
                }
            }
            Thermostat::Langevin { target, gamma } => {
                if !(target > 0.0 && gamma > 0.0 && gamma.is_finite()) {
                    return err(
                        "ensemble",
                        format!("target {target}, friction {gamma}"),
                        "target > 0 and friction > 0",
                    );
                }
            }
        }
        Ok(())
    }

    fn pair_table(&self) -> PairTable {
        let reference = self.kinds[0].params();
        let eps: Vec<f64> = self
            .kinds
            .iter()
            .map(|k| k.params().epsilon_kelvin / reference.epsilon_kelvin)
            .collect();
        let sig: Vec<f64> = self
            .kinds
            .iter()
            .map(|k| k.params().sigma_angstrom / reference.sigma_angstrom)
            .collect();
        PairTable::lorentz_berthelot(&eps, &sig, self.cutoff, self.potential)
    }

    fn masses(&self) -> Vec<f64> {
        let m0 = self.kinds[0].params().molar_mass;
        self.kinds.iter().map(|k| k.params().molar_mass / m0).collect()
    }
}

/// The exact dynamic state of a run: enough to continue it bit for bit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SimulationState {
    pub step: u64,
    pub time: f64,
    pub box_length: f64,
    pub types: Vec<u8>,
    pub positions: Vec<[f64; 3]>,
    pub velocities: Vec<[f64; 3]>,
    /// Folded single-precision positions at the last neighbour-list build (the list is rebuilt
    /// from these, identically).
    pub list_reference: Vec<[f32; 3]>,
    pub list_builds: u64,
    /// Energy the thermostat has added since step 0.
    pub heat: f64,
    pub drift_origin: f64,
    pub drift_scale: f64,
}

impl SimulationState {
    /// Checks that `spec` can continue from this state: one entry per atom in every array,
    /// the counts of each type equal to the spec's, the box edge that of the spec (within
    /// [`BOX_LENGTH_TOLERANCE`]), every position finite and within [`MAX_COORDINATE`], every
    /// velocity finite and within [`MAX_SPEED`], the list reference finite and folded into the
    /// box, time, heat and drift origin finite, and the drift scale positive and finite.
    pub fn check(&self, spec: &SimulationSpec) -> Result<(), StateError> {
        let err = |field: String, value: String, allowed: String| {
            Err(StateError {
                field,
                value,
                allowed,
            })
        };
        let n = spec.atoms();
        for (field, len) in [
            ("positions", self.positions.len()),
            ("velocities", self.velocities.len()),
            ("types", self.types.len()),
            ("list_reference", self.list_reference.len()),
        ] {
            if len != n {
                return err(
                    field.to_string(),
                    format!("{len} atoms"),
                    format!("{n} atoms, as the spec's counts {:?} add up to", spec.counts),
                );
            }
        }
        let mut counts = vec![0usize; spec.kinds.len()];
        for (i, &t) in self.types.iter().enumerate() {
            match counts.get_mut(t as usize) {
                Some(c) => *c += 1,
                None => {
                    return err(
                        format!("types[{i}]"),
                        t.to_string(),
                        format!("0 to {} (one per species)", spec.kinds.len() - 1),
                    );
                }
            }
        }
        if counts != spec.counts {
            return err(
                "types".into(),
                format!("atoms per species {counts:?}"),
                format!("the spec's counts {:?}", spec.counts),
            );
        }
        let l = spec.box_length();
        let lb = self.box_length;
        if !(lb.is_finite() && (lb - l).abs() <= BOX_LENGTH_TOLERANCE * l) {
            return err(
                "box_length".into(),
                format!("{lb:e} σ"),
                format!(
                    "{l:e} σ (within a relative {BOX_LENGTH_TOLERANCE:e}), the edge of {n} atoms at density {:e}",
                    spec.density
                ),
            );
        }
        if !(self.time.is_finite() && self.time >= 0.0) {
            return err("time".into(), self.time.to_string(), "zero or positive".into());
        }
        for (field, v) in [("heat", self.heat), ("drift_origin", self.drift_origin)] {
            if !v.is_finite() {
                return err(field.into(), v.to_string(), "a finite number".into());
            }
        }
        if !(self.drift_scale.is_finite() && self.drift_scale > 0.0) {
            return err(
                "drift_scale".into(),
                self.drift_scale.to_string(),
                "a positive finite number".into(),
            );
        }
        let outside = |v: &[f64; 3], limit: f64| v.iter().copied().find(|x| x.is_nan() || x.abs() > limit);
        for (field, array, limit, unit) in [
            ("positions", &self.positions, MAX_COORDINATE, "σ"),
            ("velocities", &self.velocities, MAX_SPEED, "σ/τ"),
        ] {
            if let Some((i, x)) = array
                .iter()
                .enumerate()
                .find_map(|(i, v)| outside(v, limit).map(|x| (i, x)))
            {
                return err(
                    format!("{field}[{i}]"),
                    format!("{x:e}"),
                    format!("finite components from -{limit:e} to {limit:e} {unit}"),
                );
            }
        }
        // Folding rounds to single precision, which may give L itself.
        let top = lb as f32;
        if let Some(i) = self
            .list_reference
            .iter()
            .position(|r| !r.iter().all(|&x| (0.0..=top).contains(&x)))
        {
            return err(
                format!("list_reference[{i}]"),
                format!("{:?}", self.list_reference[i]),
                format!("coordinates folded into the box, 0 to {lb} σ"),
            );
        }
        Ok(())
    }
}

/// A running simulation.
pub struct Simulation {
    spec: SimulationSpec,
    system: System,
    table: PairTable,
    list: NeighbourList,
    scratch: ForceScratch,
    sums: ForceSums,
    step: u64,
    time: f64,
    heat: f64,
    drift_origin: f64,
    drift_scale: f64,
    tail_energy: f64,
    tail_pressure: f64,
    clock: StageClock,
    /// What the last step (or the start) measured about its atoms.
    health: StepHealth,
    /// Atoms drifting further than this in a step are listed in [`StepHealth::movers`].
    move_bound: f64,
    /// Scratch of the watched kick, one entry per chunk of atoms.
    kick_partials: Vec<KickTally>,
    /// Whether the drift and the last kick watch the atoms (on; off only to measure the cost).
    watching: bool,
}

impl Simulation {
    /// Builds the start configuration (fcc lattice, Maxwell–Boltzmann velocities) and forces.
    pub fn new(spec: SimulationSpec) -> Result<Self, SpecError> {
        spec.check()?;
        let (positions, types) = lattice::fcc_start(&spec.counts, spec.box_length(), spec.seed);
        Self::with_positions(spec, positions, types)
    }

    /// Starts from given positions (σ, in the box) and species indices (into `spec.kinds`),
    /// with Maxwell–Boltzmann velocities as [`Simulation::new`] draws them. The counts of each
    /// type must be the spec's, every position finite.
    pub fn with_positions(
        spec: SimulationSpec,
        positions: Vec<[f64; 3]>,
        types: Vec<u8>,
    ) -> Result<Self, SpecError> {
        spec.check()?;
        let mut counts = vec![0usize; spec.kinds.len()];
        for &t in &types {
            if let Some(c) = counts.get_mut(t as usize) {
                *c += 1;
            }
        }
        if positions.len() != types.len()
            || counts != spec.counts
            || counts.iter().sum::<usize>() != types.len()
        {
            return Err(SpecError {
                field: "start",
                value: format!("{} positions, atoms per species {counts:?}", positions.len()),
                allowed: format!("the spec's counts {:?}", spec.counts),
            });
        }
        if let Some(i) = positions.iter().position(|p| !p.iter().all(|x| x.is_finite())) {
            return Err(SpecError {
                field: "start",
                value: format!("position of atom {i}: {:?}", positions[i]),
                allowed: "finite coordinates".into(),
            });
        }
        let l = spec.box_length();
        let masses = spec.masses();
        let velocities = lattice::maxwell_boltzmann(
            &masses,
            &types,
            spec.temperature,
            spec.degrees_of_freedom(),
            spec.seed,
        );
        let n = positions.len();
        let system = System {
            box_length: l,
            positions,
            velocities,
            forces: vec![[0.0; 3]; n],
            types,
            kinds: spec.kinds.clone(),
            masses,
        };
        let mut sim = Self::assemble(spec, system);
        sim.build_list();
        sim.forces();
        sim.rebase_drift();
        sim.remeasure();
        Ok(sim)
    }

    /// Continues from a saved state; the spec must describe the same atoms and the state must
    /// pass [`SimulationState::check`] (the error then names the state's field in its value).
    pub fn from_state(spec: SimulationSpec, state: SimulationState) -> Result<Self, SpecError> {
        spec.check()?;
        let n = spec.atoms();
        if let Err(e) = state.check(&spec) {
            return Err(SpecError {
                field: "state",
                value: format!("{}: {}", e.field, e.value),
                allowed: e.allowed,
            });
        }
        let system = System {
            box_length: state.box_length,
            positions: state.positions,
            velocities: state.velocities,
            forces: vec![[0.0; 3]; n],
            types: state.types,
            kinds: spec.kinds.clone(),
            masses: spec.masses(),
        };
        let mut sim = Self::assemble(spec, system);
        sim.list.build_from(&state.list_reference, state.box_length);
        sim.list.set_builds(state.list_builds);
        sim.step = state.step;
        sim.time = state.time;
        sim.heat = state.heat;
        sim.drift_origin = state.drift_origin;
        sim.drift_scale = state.drift_scale;
        sim.forces();
        sim.remeasure();
        Ok(sim)
    }

    fn assemble(spec: SimulationSpec, system: System) -> Self {
        let table = spec.pair_table();
        let list = NeighbourList::new(spec.cutoff, spec.skin);
        let mut sim = Simulation {
            spec,
            system,
            table,
            list,
            scratch: ForceScratch::default(),
            sums: ForceSums::default(),
            step: 0,
            time: 0.0,
            heat: 0.0,
            drift_origin: 0.0,
            drift_scale: 1.0,
            tail_energy: 0.0,
            tail_pressure: 0.0,
            clock: StageClock::default(),
            health: StepHealth::default(),
            move_bound: f64::INFINITY,
            kick_partials: Vec::new(),
            watching: true,
        };
        sim.update_tails();
        sim
    }

    fn update_tails(&mut self) {
        if self.spec.tail_correction {
            let rho = self.system.density();
            let x = self.system.fractions();
            self.tail_energy = self.table.tail_energy_per_atom(rho, &x);
            self.tail_pressure = self.table.tail_pressure(rho, &x);
        } else {
            self.tail_energy = 0.0;
            self.tail_pressure = 0.0;
        }
    }

    /// Captures the exact state.
    pub fn state(&self) -> SimulationState {
        SimulationState {
            step: self.step,
            time: self.time,
            box_length: self.system.box_length,
            types: self.system.types.clone(),
            positions: self.system.positions.clone(),
            velocities: self.system.velocities.clone(),
            list_reference: self.list.reference().to_vec(),
            list_builds: self.list.builds(),
            heat: self.heat,
            drift_origin: self.drift_origin,
            drift_scale: self.drift_scale,
        }
    }

    /// The spec in force (after any live changes).
    pub fn spec(&self) -> &SimulationSpec {
        &self.spec
    }

    /// The atoms.
    pub fn system(&self) -> &System {
        &self.system
    }

    /// Mutable access to the atoms, for tests and special protocols (e.g. velocity reversal).
    /// Forces are recomputed by the next step; call [`Simulation::refresh`] to do it now.
    pub fn system_mut(&mut self) -> &mut System {
        &mut self.system
    }

    /// Steps taken since the start.
    pub fn step_count(&self) -> u64 {
        self.step
    }

    /// Simulated time since the start.
    pub fn time(&self) -> f64 {
        self.time
    }

    /// Neighbour-list builds so far.
    pub fn list_builds(&self) -> u64 {
        self.list.builds()
    }

    /// The pair table in force.
    pub fn table(&self) -> &PairTable {
        &self.table
    }

    /// The neighbour list.
    pub fn neighbour_list(&self) -> &NeighbourList {
        &self.list
    }

    /// Bytes of heap memory held by the per-atom arrays and the neighbour list.
    pub fn heap_bytes(&self) -> usize {
        let s = &self.system;
        24 * (s.positions.capacity() + s.velocities.capacity() + s.forces.capacity())
            + s.types.capacity()
            + self.list.heap_bytes()
    }

    /// Makes the drift reference the present conserved energy.
    pub fn rebase_drift(&mut self) {
        let k = self.system.kinetic_energy();
        let e = k + self.pair_potential_total() - self.heat;
        self.drift_origin = e;
        self.drift_scale = e.abs().max(k).max(f64::MIN_POSITIVE);
    }

    fn pair_potential_total(&self) -> f64 {
        self.sums.potential + self.tail_energy * self.system.len() as f64
    }

    /// Changes the timestep from the next step on.
    pub fn set_timestep(&mut self, dt: f64) -> Result<(), SpecError> {
        let mut spec = self.spec.clone();
        spec.timestep = dt;
        spec.check()?;
        self.spec = spec;
        Ok(())
    }

    /// Changes the thermostat (target, time constant or kind) from the next step on.
    pub fn set_thermostat(&mut self, thermostat: Thermostat) -> Result<(), SpecError> {
        let mut spec = self.spec.clone();
        spec.thermostat = thermostat;
        spec.check()?;
        self.spec = spec;
        Ok(())
    }

    /// Changes cutoff, skin, potential mode and tail correction; forces are recomputed and the
    /// drift reference moves to the new energy surface.
    pub fn set_interaction(
        &mut self,
        cutoff: f64,
        skin: f64,
        potential: PotentialMode,
        tail_correction: bool,
    ) -> Result<(), SpecError> {
        let mut spec = self.spec.clone();
        spec.cutoff = cutoff;
        spec.skin = skin;
        spec.potential = potential;
        spec.tail_correction = tail_correction;
        spec.check()?;
        self.spec = spec;
        self.table = self.spec.pair_table();
        let builds = self.list.builds();
        self.list = NeighbourList::new(cutoff, skin);
        self.build_list();
        self.list.set_builds(builds + 1);
        self.update_tails();
        self.forces();
        self.rebase_drift();
        self.remeasure();
        Ok(())
    }

    /// Rebuilds the neighbour list and recomputes forces at the present positions.
    pub fn refresh(&mut self) {
        self.build_list();
        self.forces();
        self.remeasure();
    }

    /// What the last step measured about its atoms (after [`Simulation::new`],
    /// [`Simulation::from_state`] or a live change: the present state, with no move).
    pub fn health(&self) -> &StepHealth {
        &self.health
    }

    /// Atoms that drift further than `bound` (σ) in one step are listed in the step's
    /// [`StepHealth::movers`] (infinite at the start: none are). Changes no result.
    pub fn set_move_bound(&mut self, bound: f64) {
        self.move_bound = bound;
    }

    /// Switches the watched stages off (or on again), only to measure what watching costs
    /// (`noblescope bench`): while off, [`Simulation::health`] keeps only the energies and the
    /// drift. Positions and velocities come out the same to the bit either way.
    pub fn watch_atoms(&mut self, on: bool) {
        self.watching = on;
    }

    /// Measures the present state into [`Simulation::health`] (no move).
    fn remeasure(&mut self) {
        let s = &self.system;
        let t = health::measure(&s.positions, &s.velocities, &s.forces, &s.types, &s.masses);
        self.health = StepHealth {
            step: self.step,
            max_force: t.max_force2.sqrt(),
            kinetic: t.kinetic,
            non_finite: t.non_finite,
            ..StepHealth::default()
        };
        self.finish_health();
    }

    /// Energies and drift of [`Simulation::health`] from its kinetic energy and the forces' sums.
    fn finish_health(&mut self) {
        let h = &mut self.health;
        h.step = self.step;
        h.potential = self.sums.potential + self.tail_energy * self.system.len() as f64;
        h.conserved = h.kinetic + h.potential - self.heat;
        h.drift = (h.conserved - self.drift_origin) / self.drift_scale;
        h.non_finite |= !(h.potential.is_finite() && self.sums.virial.is_finite());
    }

    /// Switches the per-stage timers on or off (off at the start). While off they cost a
    /// branch per stage and read no clock; what they accumulated is kept either way.
    pub fn time_stages(&mut self, on: bool) {
        self.clock.set_on(on);
    }

    /// Time spent in each stage (and in whole steps) while the timers were on.
    pub fn stage_times(&self) -> &StageTimes {
        self.clock.times()
    }

    /// Forgets the accumulated stage times.
    pub fn reset_stage_times(&mut self) {
        self.clock.reset();
    }

    /// Advances one timestep.
    ///
    /// - NVE: velocity Verlet, B A [rebuild, forces] B.
    /// - Stochastic rescaling (Bussi et al. 2007): a rescale half-step, velocity Verlet, a
    ///   rescale half-step.
    /// - Langevin: BAOAB, B A O A [rebuild, forces] B.
    ///
    /// B is a half kick, A a drift, O the exact friction-and-noise step; "rebuild" rebuilds the
    /// neighbour list if some atom moved more than half the skin since the last build.
    pub fn step(&mut self) -> Result<(), Blowup> {
        let start = self.clock.step_started();
        let dt = self.spec.timestep;
        self.health.max_move = 0.0;
        self.health.non_finite = false;
        self.health.movers.clear();
        match self.spec.thermostat {
            Thermostat::None => self.velocity_verlet(dt),
            Thermostat::StochasticRescale { target, tau } => {
                self.rescale_half(target, tau, 0.5 * dt, 0);
                self.velocity_verlet(dt);
                self.health.kinetic = self.rescale_half(target, tau, 0.5 * dt, 1);
            }
            Thermostat::Langevin { target, gamma } => {
                self.kick(0.5 * dt);
                self.drift(0.5 * dt);
                self.langevin_o(dt, target, gamma);
                self.drift(0.5 * dt);
                self.rebuild_if_needed();
                self.forces();
                self.last_kick(0.5 * dt);
            }
        }
        self.step += 1;
        self.time += dt;
        self.finish_health();
        let checked = self.check_finite();
        self.clock.step_ended(start);
        checked
    }

    /// Advances `n` steps, stopping at the first blow-up.
    pub fn run(&mut self, n: u64) -> Result<(), Blowup> {
        for _ in 0..n {
            self.step()?;
        }
        Ok(())
    }

    /// Velocity Verlet: B A [rebuild, forces] B.
    fn velocity_verlet(&mut self, dt: f64) {
        self.kick(0.5 * dt);
        self.drift(dt);
        self.rebuild_if_needed();
        self.forces();
        self.last_kick(0.5 * dt);
    }

    // The stages, each timed by the stage clock when it is on.

    /// B: v ← v + h F/m.
    fn kick(&mut self, h: f64) {
        let s = &mut self.system;
        self.clock.time(Stage::Kick, || {
            stages::kick(&mut s.velocities, &s.forces, &s.types, &s.masses, h)
        });
    }

    /// The step's last B, watched: also the kinetic energy, the largest force and whether a
    /// velocity or force is not finite, into [`Simulation::health`].
    fn last_kick(&mut self, h: f64) {
        if !self.watching {
            return self.kick(h);
        }
        let s = &mut self.system;
        let partials = &mut self.kick_partials;
        let t = self.clock.time(Stage::Kick, || {
            health::kick_watched(&mut s.velocities, &s.forces, &s.types, &s.masses, h, partials)
        });
        self.health.kinetic = t.kinetic;
        self.health.max_force = t.max_force2.sqrt();
        self.health.non_finite |= t.non_finite;
    }

    /// A: x ← x + h v, watched: the largest move (over a whole step at the velocity drifted
    /// with) and whether a position or velocity is not finite, into [`Simulation::health`]; the
    /// atoms beyond the move bound are listed only when some atom crossed it.
    fn drift(&mut self, h: f64) {
        let s = &mut self.system;
        if !self.watching {
            return self
                .clock
                .time(Stage::Drift, || stages::drift(&mut s.positions, &s.velocities, h));
        }
        let t = self.clock.time(Stage::Drift, || {
            health::drift_watched(&mut s.positions, &s.velocities, h)
        });
        let dt = self.spec.timestep;
        let moved = dt * t.max_speed2.sqrt();
        self.health.max_move = self.health.max_move.max(moved);
        self.health.non_finite |= t.non_finite;
        if moved > self.move_bound {
            health::collect_movers(&s.velocities, dt, self.move_bound, &mut self.health.movers);
        }
    }

    /// The skin check, then a list build if it asks for one.
    fn rebuild_if_needed(&mut self) {
        let (list, positions) = (&self.list, &self.system.positions);
        let stale = self
            .clock
            .time(Stage::SkinCheck, || list.needs_rebuild(positions));
        if stale {
            self.build_list();
        }
    }

    /// Builds the neighbour list from the present positions.
    fn build_list(&mut self) {
        let (list, s) = (&mut self.list, &self.system);
        self.clock
            .time(Stage::ListBuild, || list.build(&s.positions, s.box_length));
    }

    /// Forces, potential energy and virial at the present positions.
    fn forces(&mut self) {
        let s = &mut self.system;
        let (table, list, scratch) = (&self.table, &self.list, &mut self.scratch);
        self.sums = self.clock.time(Stage::Forces, || {
            forces::compute(
                &s.positions,
                &s.types,
                s.box_length,
                table,
                list,
                &mut s.forces,
                scratch,
            )
        });
    }

    /// O: exact friction and noise over `dt`.
    fn langevin_o(&mut self, dt: f64, target: f64, gamma: f64) {
        let o = LangevinO {
            dt,
            gamma,
            target,
            seed: self.spec.seed,
            step: self.step,
        };
        let (s, heat) = (&mut self.system, &mut self.heat);
        self.clock.time(Stage::Langevin, || {
            stages::langevin_o(&mut s.velocities, &s.types, &s.masses, &o, heat)
        });
    }

    /// One stochastic rescaling half-step (`half` 0 before velocity Verlet, 1 after); returns
    /// the kinetic energy it scaled the atoms to.
    fn rescale_half(&mut self, target: f64, tau: f64, dt: f64, half: u64) -> f64 {
        let r = RescaleHalf {
            dt,
            tau,
            target,
            dof: self.spec.degrees_of_freedom(),
            seed: self.spec.seed,
            step: self.step,
            half,
        };
        let (s, heat) = (&mut self.system, &mut self.heat);
        self.clock.time(Stage::Rescale, || {
            stages::rescale_half(&mut s.velocities, &s.types, &s.masses, &r, heat)
        })
    }

    fn check_finite(&self) -> Result<(), Blowup> {
        if self.sums.potential.is_finite() && self.sums.virial.is_finite() {
            return Ok(());
        }
        let s = &self.system;
        let atoms: Vec<usize> = (0..s.len())
            .filter(|&i| {
                !(s.positions[i]
                    .iter()
                    .chain(&s.velocities[i])
                    .chain(&s.forces[i])
                    .all(|x| x.is_finite()))
            })
            .take(8)
            .collect();
        Err(Blowup {
            step: self.step,
            reason: "potential energy or virial is not finite".into(),
            atoms,
        })
    }

    /// Potential energy per atom and pressure of the full, untruncated potential estimated
    /// from this configuration: shift added back, tail corrections for r > r_c (Allen &
    /// Tildesley, *Computer Simulation of Liquids*, 2nd ed., §2.8). NaN for `ShiftedForce`.
    fn full_potential_estimates(&self, temperature: f64) -> (f64, f64) {
        if self.spec.potential == PotentialMode::ShiftedForce {
            return (f64::NAN, f64::NAN);
        }
        let n = self.system.len() as f64;
        let rho = self.system.density();
        let x = self.system.fractions();
        let u =
            (self.sums.potential + self.sums.shift_removed) / n + self.table.tail_energy_per_atom(rho, &x);
        let p = (n * temperature + self.sums.virial / 3.0) / self.system.volume()
            + self.table.tail_pressure(rho, &x);
        (u, p)
    }

    /// Measures the present state.
    pub fn observe(&self) -> Observables {
        let n = self.system.len() as f64;
        let k = self.system.kinetic_energy();
        let u = self.pair_potential_total();
        let v = self.system.volume();
        let e = k + u;
        let conserved = e - self.heat;
        let temperature = 2.0 * k / self.spec.degrees_of_freedom();
        let (full_u, full_p) = self.full_potential_estimates(temperature);
        Observables {
            step: self.step,
            time: self.time,
            kinetic: k / n,
            potential: u / n,
            total: e / n,
            conserved: conserved / n,
            temperature,
            // P = (N k_B T + W/3) / V with the kinetic temperature T = 2K/dof: unbiased for
            // the canonical pressure also when total momentum is fixed (dof = 3N − 3).
            pressure: (n * temperature + self.sums.virial / 3.0) / v + self.tail_pressure,
            drift: (conserved - self.drift_origin) / self.drift_scale,
            full_potential: full_u,
            full_pressure: full_p,
        }
    }
}

/// Velocity reversal helper for reversibility checks: v → −v for every atom.
pub fn reverse_velocities(system: &mut System) {
    for v in &mut system.velocities {
        for x in v.iter_mut() {
            *x = -*x;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn small(thermostat: Thermostat) -> SimulationSpec {
        SimulationSpec {
            kinds: vec![Species::ReducedLJ],
            counts: vec![256],
            density: 0.8442,
            temperature: 1.44,
            timestep: 0.005,
            cutoff: 2.5,
            skin: 0.3,
            potential: PotentialMode::TruncatedShifted,
            tail_correction: false,
            thermostat,
            seed: 7,
        }
    }

    const THERMOSTATS: [Thermostat; 3] = [
        Thermostat::None,
        Thermostat::StochasticRescale {
            target: 1.2,
            tau: 0.5,
        },
        Thermostat::Langevin {
            target: 1.2,
            gamma: 1.0,
        },
    ];

    #[test]
    fn timing_the_stages_changes_no_bit() {
        for thermostat in THERMOSTATS {
            let mut plain = Simulation::new(small(thermostat)).unwrap();
            let mut timed = Simulation::new(small(thermostat)).unwrap();
            timed.time_stages(true);
            plain.run(60).unwrap();
            timed.run(60).unwrap();
            assert_eq!(plain.state(), timed.state(), "{thermostat:?}");
            assert_eq!(plain.observe(), timed.observe(), "{thermostat:?}");
            assert_eq!(*plain.stage_times(), StageTimes::default());
        }
    }

    #[test]
    fn each_integrator_runs_its_stages() {
        let steps = 40;
        for thermostat in THERMOSTATS {
            let mut sim = Simulation::new(small(thermostat)).unwrap();
            let builds = sim.list_builds();
            sim.time_stages(true);
            sim.run(steps).unwrap();
            sim.time_stages(false);
            sim.run(5).unwrap();
            let t = sim.stage_times();
            let (drifts, o_steps, rescales) = match thermostat {
                Thermostat::None => (steps, 0, 0),
                Thermostat::StochasticRescale { .. } => (steps, 0, 2 * steps),
                Thermostat::Langevin { .. } => (2 * steps, steps, 0),
            };
            assert_eq!(t.steps, steps, "{thermostat:?}");
            assert_eq!(t.kick.calls, 2 * steps, "{thermostat:?}");
            assert_eq!(t.drift.calls, drifts, "{thermostat:?}");
            assert_eq!(t.langevin.calls, o_steps, "{thermostat:?}");
            assert_eq!(t.rescale.calls, rescales, "{thermostat:?}");
            assert_eq!(t.skin_check.calls, steps, "{thermostat:?}");
            assert_eq!(t.forces.calls, steps, "{thermostat:?}");
            assert!(
                t.list_build.calls >= 1,
                "{thermostat:?}: the list should be rebuilt in 40 steps"
            );
            assert!(t.list_build.calls <= sim.list_builds() - builds, "{thermostat:?}");
            assert!(t.step_seconds >= t.forces.seconds && t.forces.seconds > 0.0);
            sim.reset_stage_times();
            assert_eq!(*sim.stage_times(), StageTimes::default());
        }
    }
}
