//! Every byte in or out: setup files, checkpoints, energy logs, trajectories, summaries.

pub mod analysis_files;
pub mod capped_read;
pub mod checkpoint;
mod checkpoint_check;
pub mod checkpoint_samples;
pub mod energy_log;
pub mod motion_csv;
pub mod numbers;
pub mod precision_setting;
pub mod rdf_csv;
pub mod ron_text;
pub mod run_folder;
pub mod setup;
pub mod setup_error;
pub mod slurm_script;
pub mod speeds_csv;
pub mod start_file;
pub mod summary;
pub mod sweep_collect;
pub mod sweep_file;
pub mod sweep_folder;
pub mod sweep_plot;
pub mod trajectory;

pub use setup::{Setup, SetupError};
