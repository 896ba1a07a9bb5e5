//! Noblescope: set up, run and watch molecular dynamics of noble gases.
//!
//! Layers, each depending only on those above it in this list:
//! - [`physics`]: pure numerics in reduced units (species, potential, neighbours, forces,
//!   integrators, thermostats, observables);
//! - [`analysis`]: statistics over samples (block averages, equilibration detection);
//! - [`io`]: every byte in or out (setup files, checkpoints, CSV, XYZ, summaries);
//! - [`engine`]: the simulation thread and the headless runner, one pipeline for both;
//! - [`ui`]: the desktop window, which only draws and sends commands.

pub mod analysis;
pub mod engine;
pub mod io;
pub mod physics;
pub mod ui;
