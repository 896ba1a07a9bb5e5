//! Every byte in or out: setup files, checkpoints, energy logs, trajectories, summaries.

pub mod checkpoint;
mod checkpoint_check;
pub mod energy_log;
pub mod setup;
pub mod summary;
pub mod trajectory;

pub use setup::{Setup, SetupError};
