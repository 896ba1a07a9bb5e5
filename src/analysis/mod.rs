//! Statistics over samples and configurations: block averages, equilibration detection, the
//! equilibration evidence of a run, precision targets and the radial distribution function.

pub mod blocking;
pub mod eos_reference;
pub mod equilibration;
pub mod evidence;
pub mod precision;
pub mod quantity;
pub mod rdf;
pub mod sample_store;
pub mod series_statistics;
pub mod suffix;

pub use blocking::{Estimate, block_average};
pub use equilibration::{Equilibration, detect_equilibration, statistical_inefficiency};
pub use evidence::{Evidence, NotYetReason, QuantityEvidence, StartChoice, Verdict, analyse};
pub use precision::{PrecisionTarget, TargetProgress};
pub use quantity::Quantity;
pub use rdf::{RadialDistribution, RdfPoint};
pub use sample_store::SampleStore;
