//! Checks a decoded checkpoint as strictly as a setup file is checked.
//!
//! A matching checksum only says the file is what some writer wrote; it does not say the writer
//! was ours, or that what it wrote can run. [`Checkpoint::check`] asks, in order:
//!
//! 1. the embedded setup resolves (every field in its allowed range);
//! 2. the saved spec's live-changeable values (timestep, cutoff, skin, potential, tail
//!    correction, thermostat and its target) are in the ranges a setup allows, checked by
//!    resolving the embedded setup with those values put in;
//! 3. what cannot change during a run agrees with the setup: species, atoms per species,
//!    density (within a relative [`BOX_LENGTH_TOLERANCE`]) and seed;
//! 4. the saved step is at most the setup's `steps`;
//! 5. the state fits the spec ([`SimulationState::check`](crate::physics::SimulationState::check):
//!    array lengths, types, box edge, finite and bounded positions and velocities, time, heat,
//!    drift reference);
//! 6. every atom is within half the skin of its list reference position (so the list rebuilt
//!    from the references holds every pair within the cutoff).
//!
//! Errors are [`SetupError::Field`] with the field named from the checkpoint, e.g.
//! `checkpoint.velocities[17]: 1e200 is out of range; allowed: …`.

use super::checkpoint::Checkpoint;
use super::setup::{Duration, Ensemble, Length, Rate, SetupError, Temperature, ThermostatChoice};
use crate::physics::Thermostat;
use crate::physics::neighbours::first_beyond_half_skin;
use crate::physics::simulation::BOX_LENGTH_TOLERANCE;

fn field(name: String, value: impl std::fmt::Display, allowed: impl Into<String>) -> SetupError {
    SetupError::Field {
        field: name,
        value: value.to_string(),
        allowed: allowed.into(),
    }
}

/// Puts `prefix` before the field name of a field error.
fn prefixed(prefix: &'static str) -> impl Fn(SetupError) -> SetupError {
    move |e| match e {
        SetupError::Field {
            field,
            value,
            allowed,
        } => SetupError::Field {
            field: format!("{prefix}{field}"),
            value,
            allowed,
        },
        other => other,
    }
}

impl Checkpoint {
    /// Checks that this checkpoint can be continued: the embedded setup, the spec's live values,
    /// setup and spec agreeing, the step, the state and its list reference (the six checks are
    /// described in `src/io/checkpoint_check.rs`). [`Checkpoint::load`] calls it;
    /// [`Checkpoint::from_bytes`] only decodes.
    pub fn check(&self) -> Result<(), SetupError> {
        let spec = &self.spec;
        let from_setup = self.setup.resolve().map_err(prefixed("checkpoint.setup."))?;

        // The spec's live values, put into the setup and resolved under its rules.
        let mut live = self.setup.clone();
        live.timestep = Duration::Reduced(spec.timestep);
        live.cutoff = Length::Sigma(spec.cutoff);
        live.skin = Length::Sigma(spec.skin);
        live.potential = spec.potential;
        live.tail_correction = spec.tail_correction;
        match spec.thermostat {
            Thermostat::None => live.ensemble = Ensemble::Nve,
            Thermostat::StochasticRescale { target, tau } => {
                live.temperature = Temperature::Reduced(target);
                live.ensemble = Ensemble::Nvt {
                    thermostat: ThermostatChoice::StochasticRescale {
                        relaxation: Duration::Reduced(tau),
                    },
                };
            }
            Thermostat::Langevin { target, gamma } => {
                live.temperature = Temperature::Reduced(target);
                live.ensemble = Ensemble::Nvt {
                    thermostat: ThermostatChoice::Langevin {
                        friction: Rate::Reduced(gamma),
                    },
                };
            }
        }
        let want = live.resolve().map_err(prefixed("checkpoint.spec."))?;

        if spec.kinds != from_setup.kinds {
            return Err(field(
                "checkpoint.spec.kinds".into(),
                format!("{:?}", spec.kinds),
                format!("{:?}, the species of the embedded setup", from_setup.kinds),
            ));
        }
        if spec.counts != from_setup.counts {
            return Err(field(
                "checkpoint.spec.counts".into(),
                format!("{:?}", spec.counts),
                format!(
                    "{:?}, the atoms per species of the embedded setup",
                    from_setup.counts
                ),
            ));
        }
        let rho = from_setup.density;
        if (spec.density - rho).abs().is_nan() || (spec.density - rho).abs() > BOX_LENGTH_TOLERANCE * rho {
            return Err(field(
                "checkpoint.spec.density".into(),
                format!("{:e}", spec.density),
                format!(
                    "{rho:e} (within a relative {BOX_LENGTH_TOLERANCE:e}), the reduced density of the embedded setup"
                ),
            ));
        }
        if spec.seed != from_setup.seed {
            return Err(field(
                "checkpoint.spec.seed".into(),
                spec.seed,
                format!("{}, the seed of the embedded setup", from_setup.seed),
            ));
        }
        // Everything else was put in from the spec, so a difference here is a bug of ours.
        let mut same = want;
        same.temperature = spec.temperature;
        same.density = spec.density;
        if &same != spec {
            return Err(field(
                "checkpoint.spec".into(),
                format!("{spec:?}"),
                format!("{same:?}, the spec the embedded setup gives with the saved live values"),
            ));
        }

        let state = &self.state;
        if state.step > self.setup.steps {
            return Err(field(
                "checkpoint.step".into(),
                state.step,
                format!("0 to {}, the steps of the embedded setup", self.setup.steps),
            ));
        }
        state.check(spec).map_err(|e| SetupError::Field {
            field: format!("checkpoint.{}", e.field),
            value: e.value,
            allowed: e.allowed,
        })?;
        if let Some((i, d)) = first_beyond_half_skin(
            &state.positions,
            &state.list_reference,
            state.box_length,
            spec.skin,
        ) {
            return Err(field(
                format!("checkpoint.list_reference[{i}]"),
                format!("{d:e} σ from the atom's position"),
                format!(
                    "within half the skin ({} σ) of it: the list is rebuilt from these positions",
                    0.5 * spec.skin
                ),
            ));
        }
        Ok(())
    }
}
