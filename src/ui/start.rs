//! How the window starts: the bundled scenario and the options a caller gives.

use super::watch::{StartView, WatchPlan};
use crate::io::setup::Setup;
use std::path::PathBuf;

/// The scenario the window opens on when nothing else is asked for.
pub const BUNDLED_SCENARIO: &str = include_str!("../../assets/krypton-getter-sample.ron");
/// Its name in messages and the title bar.
pub const BUNDLED_NAME: &str = "krypton-getter-sample.ron";

/// The bundled scenario, parsed.
pub fn bundled_setup() -> Setup {
    Setup::parse(BUNDLED_SCENARIO, BUNDLED_NAME).expect("the bundled scenario parses")
}

/// How the window starts.
#[derive(Clone, Debug, Default)]
pub struct StartOptions {
    /// Setup to open and where it came from; `None`: the remembered one, else the bundled one.
    pub setup: Option<(Setup, Option<PathBuf>)>,
    /// First view.
    pub view: Option<StartView>,
    /// Scripted watching.
    pub watch: Option<WatchPlan>,
    /// Read and write the remembered state (off for scripted runs and tests).
    pub persist: bool,
    /// A sweep's folder to open in the sweep window at start (`watch --sweep`).
    pub sweep: Option<PathBuf>,
}
