//! Statistics over samples and configurations: block averages, equilibration detection, the
//! radial distribution function per species pair, the self motion (mean squared displacement
//! and velocity autocorrelation), the self-diffusion coefficient two ways, and speed histograms.

pub mod blocking;
pub mod diffusion;
pub mod equilibration;
pub mod lags;
pub mod motion;
pub mod rdf;
pub mod speeds;

pub use blocking::{Estimate, block_average};
pub use diffusion::{Diffusion, FitWindow, self_diffusion};
pub use equilibration::{Equilibration, detect_equilibration, statistical_inefficiency};
pub use lags::LagSchedule;
pub use motion::{LagPoint, SelfMotion};
pub use rdf::{RadialDistribution, RdfPoint};
pub use speeds::{SpeedFit, SpeedHistogram};
