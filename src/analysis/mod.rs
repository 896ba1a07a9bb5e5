//! Statistics over samples: block averages and equilibration detection.

pub mod blocking;
pub mod equilibration;

pub use blocking::{block_average, Estimate};
pub use equilibration::{detect_equilibration, statistical_inefficiency, Equilibration};
