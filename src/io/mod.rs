//! Every byte in or out: setup files, checkpoints, energy logs, trajectories, summaries.

pub mod capped_read;
pub mod checkpoint;
mod checkpoint_check;
pub mod energy_log;
pub mod numbers;
pub mod rdf_csv;
pub mod run_folder;
pub mod setup;
pub mod start_file;
pub mod summary;
pub mod trajectory;

pub use setup::{Setup, SetupError};
