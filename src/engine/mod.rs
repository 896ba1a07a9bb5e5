//! The simulation thread and the headless runner: one pipeline (session → watchdog → rewind)
//! serves both the window and the command line. [`protocol`] is the contract between the
//! window and the engine thread.

pub mod analyses;
pub mod bench;
pub mod bench_statistics;
pub mod flight_recorder;
pub mod frame;
pub mod headless;
pub mod live_analyses;
pub mod protocol;
pub mod recovery;
pub mod rewind;
pub mod runner;
pub mod session;
pub mod sweep_local;
pub mod tuning;
pub mod watchdog;

pub use flight_recorder::FlightRecord;
pub use frame::{Frame, FrameMailbox};
pub use protocol::{
    AnalysesReport, AnalysisFile, Command, CommandKind, Event, EvidenceReport, SnapshotMark, Status,
};
pub use runner::{EngineHandle, Refusal};
pub use session::Session;
pub use tuning::{TuneError, TuneInput, TuneRequest, TuningReport};
pub use watchdog::{Alarm, AlarmKind};
