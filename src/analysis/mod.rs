//! Statistics over samples and configurations: block averages, equilibration detection and
//! the radial distribution function.

pub mod blocking;
pub mod equilibration;
pub mod rdf;

pub use blocking::{block_average, Estimate};
pub use equilibration::{detect_equilibration, statistical_inefficiency, Equilibration};
pub use rdf::{RadialDistribution, RdfPoint};
