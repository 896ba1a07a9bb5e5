//! Statistics over samples and configurations: block averages, equilibration detection, the
//! equilibration evidence of a run, precision targets, the radial distribution function per
//! species pair, the self motion (mean squared displacement and velocity autocorrelation), the
//! self-diffusion coefficient two ways, and speed histograms.

pub mod blocking;
pub mod diffusion;
pub mod eos_reference;
pub mod equilibration;
pub mod evidence;
pub mod lags;
pub mod motion;
pub mod precision;
pub mod quantity;
pub mod rdf;
pub mod sample_store;
pub mod series_statistics;
pub mod speeds;
pub mod suffix;

pub use blocking::{Estimate, block_average};
pub use diffusion::{Diffusion, FitWindow, self_diffusion};
pub use equilibration::{Equilibration, detect_equilibration, statistical_inefficiency};
pub use evidence::{Evidence, NotYetReason, QuantityEvidence, StartChoice, Verdict, analyse};
pub use lags::LagSchedule;
pub use motion::{LagPoint, SelfMotion};
pub use precision::{PrecisionTarget, TargetProgress};
pub use quantity::Quantity;
pub use rdf::{RadialDistribution, RdfPoint};
pub use sample_store::SampleStore;
pub use speeds::{SpeedFit, SpeedHistogram};
