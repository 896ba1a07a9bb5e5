//! Statistics over samples and configurations: block averages, equilibration detection and
//! the radial distribution function.

pub mod blocking;
pub mod equilibration;
pub mod rdf;

pub use blocking::{Estimate, block_average};
pub use equilibration::{Equilibration, detect_equilibration, statistical_inefficiency};
pub use rdf::{RadialDistribution, RdfPoint};
