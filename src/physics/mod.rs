//! Pure numerics of the model, in reduced units. Knows nothing of threads, files or windows.

pub mod constants;
pub mod forces;
pub mod geometry;
pub mod health;
pub mod lattice;
pub mod lj_eos;
pub mod neighbours;
pub mod observables;
pub mod parallel;
pub mod potential;
pub mod random;
pub mod simulation;
pub mod species;
pub mod stage_clock;
pub mod stages;
pub mod system;
pub mod thermostat;
pub mod units;

pub use health::StepHealth;
pub use observables::Observables;
pub use potential::PotentialMode;
pub use simulation::{Blowup, Simulation, SimulationSpec, SimulationState, SpecError, StateError};
pub use species::Species;
pub use stage_clock::{Stage, StageClock, StageTime, StageTimes};
pub use system::System;
pub use thermostat::Thermostat;
pub use units::UnitSystem;
