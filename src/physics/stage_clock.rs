//! Optional timers for the stages of a step.
//!
//! [`super::Simulation`] owns a [`StageClock`]; [`super::Simulation::time_stages`] switches it on.
//! While it is off, timing a stage costs one predictable branch and no clock reading, so the
//! clock can stay in the step for good. While it is on, each stage adds its wall-clock seconds and
//! one call to its [`StageTime`], and each step adds to the step totals.

use serde::Serialize;
use std::time::Instant;

/// A named stage of [`super::Simulation::step`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
pub enum Stage {
    /// B: v ← v + h F/m ([`super::stages::kick`]).
    Kick,
    /// A: x ← x + h v ([`super::stages::drift`]).
    Drift,
    /// The half-skin test: did any atom move more than skin/2 since the last list build?
    SkinCheck,
    /// Neighbour-list build (cell list → half Verlet list → slab schedule), when the skin
    /// check asks for one.
    ListBuild,
    /// Pair forces, energy and virial over the half list ([`super::forces::compute`]).
    Forces,
    /// O: the exact friction-and-noise step of BAOAB ([`super::stages::langevin_o`]).
    Langevin,
    /// One stochastic velocity-rescaling half-step ([`super::stages::rescale_half`]).
    Rescale,
}

impl Stage {
    /// Every stage, in the order a step first meets it.
    pub const ALL: [Stage; 7] = [
        Stage::Rescale,
        Stage::Kick,
        Stage::Drift,
        Stage::Langevin,
        Stage::SkinCheck,
        Stage::ListBuild,
        Stage::Forces,
    ];

    /// Short human-readable name.
    pub fn name(self) -> &'static str {
        match self {
            Stage::Kick => "kick",
            Stage::Drift => "drift",
            Stage::SkinCheck => "skin check",
            Stage::ListBuild => "list build",
            Stage::Forces => "forces",
            Stage::Langevin => "Langevin O-step",
            Stage::Rescale => "rescale half-step",
        }
    }
}

/// Accumulated time of one stage.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct StageTime {
    /// Wall-clock seconds spent in the stage.
    pub seconds: f64,
    /// Times the stage ran.
    pub calls: u64,
}

impl StageTime {
    /// Mean seconds per call (0 before the first call).
    pub fn seconds_per_call(&self) -> f64 {
        if self.calls == 0 {
            0.0
        } else {
            self.seconds / self.calls as f64
        }
    }
}

/// Accumulated times of every stage, and of whole steps, since the clock was last reset.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct StageTimes {
    /// Steps timed.
    pub steps: u64,
    /// Wall-clock seconds of those steps, start to end (stages plus bookkeeping).
    pub step_seconds: f64,
    pub kick: StageTime,
    pub drift: StageTime,
    pub skin_check: StageTime,
    pub list_build: StageTime,
    pub forces: StageTime,
    pub langevin: StageTime,
    pub rescale: StageTime,
}

impl StageTimes {
    /// The time of `stage`.
    pub fn get(&self, stage: Stage) -> StageTime {
        match stage {
            Stage::Kick => self.kick,
            Stage::Drift => self.drift,
            Stage::SkinCheck => self.skin_check,
            Stage::ListBuild => self.list_build,
            Stage::Forces => self.forces,
            Stage::Langevin => self.langevin,
            Stage::Rescale => self.rescale,
        }
    }

    fn get_mut(&mut self, stage: Stage) -> &mut StageTime {
        match stage {
            Stage::Kick => &mut self.kick,
            Stage::Drift => &mut self.drift,
            Stage::SkinCheck => &mut self.skin_check,
            Stage::ListBuild => &mut self.list_build,
            Stage::Forces => &mut self.forces,
            Stage::Langevin => &mut self.langevin,
            Stage::Rescale => &mut self.rescale,
        }
    }

    /// Every stage with its time, in [`Stage::ALL`] order (stages that never ran included).
    pub fn stages(&self) -> impl Iterator<Item = (Stage, StageTime)> + '_ {
        Stage::ALL.into_iter().map(|s| (s, self.get(s)))
    }

    /// Seconds summed over all stages; `step_seconds` minus this is the step's bookkeeping.
    pub fn stage_seconds(&self) -> f64 {
        self.stages().map(|(_, t)| t.seconds).sum()
    }
}

/// Per-stage timers that cost a branch when off.
#[derive(Clone, Debug, Default)]
pub struct StageClock {
    on: bool,
    times: StageTimes,
}

impl StageClock {
    /// Switches timing on or off; what was accumulated is kept.
    pub fn set_on(&mut self, on: bool) {
        self.on = on;
    }

    /// Whether stages are being timed.
    pub fn is_on(&self) -> bool {
        self.on
    }

    /// What has been accumulated.
    pub fn times(&self) -> &StageTimes {
        &self.times
    }

    /// Forgets what has been accumulated.
    pub fn reset(&mut self) {
        self.times = StageTimes::default();
    }

    /// Runs `f` as `stage`, timing it if the clock is on.
    #[inline(always)]
    pub fn time<R>(&mut self, stage: Stage, f: impl FnOnce() -> R) -> R {
        if !self.on {
            return f();
        }
        let start = Instant::now();
        let r = f();
        let t = self.times.get_mut(stage);
        t.seconds += start.elapsed().as_secs_f64();
        t.calls += 1;
        r
    }

    /// The start of a step: its time if the clock is on.
    #[inline(always)]
    pub fn step_started(&self) -> Option<Instant> {
        if self.on { Some(Instant::now()) } else { None }
    }

    /// The end of a step begun at `start` (from [`StageClock::step_started`]).
    #[inline(always)]
    pub fn step_ended(&mut self, start: Option<Instant>) {
        if let Some(start) = start {
            self.times.steps += 1;
            self.times.step_seconds += start.elapsed().as_secs_f64();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn off_clock_counts_nothing_and_on_clock_counts_calls() {
        let mut clock = StageClock::default();
        assert_eq!(clock.time(Stage::Kick, || 3), 3);
        let s = clock.step_started();
        clock.step_ended(s);
        assert_eq!(*clock.times(), StageTimes::default());
        clock.set_on(true);
        let s = clock.step_started();
        clock.time(Stage::Kick, || ());
        clock.time(Stage::Kick, || ());
        clock.time(Stage::Forces, || ());
        clock.step_ended(s);
        let t = clock.times();
        assert_eq!(
            (t.steps, t.kick.calls, t.forces.calls, t.drift.calls),
            (1, 2, 1, 0)
        );
        assert!(t.step_seconds + 1e-12 >= t.stage_seconds());
        clock.reset();
        assert_eq!(*clock.times(), StageTimes::default());
    }

    #[test]
    fn every_stage_is_listed_once() {
        for s in Stage::ALL {
            assert_eq!(Stage::ALL.iter().filter(|&&t| t == s).count(), 1, "{}", s.name());
        }
    }
}
