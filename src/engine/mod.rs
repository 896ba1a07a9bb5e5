//! The simulation thread and the headless runner: one pipeline (session → watchdog → rewind)
//! serves both the window and the command line. [`protocol`] is the contract between the
//! window and the engine thread.

pub mod bench;
pub mod frame;
pub mod headless;
pub mod protocol;
pub mod rewind;
pub mod runner;
pub mod session;
pub mod tuning;
pub mod watchdog;

pub use frame::{Frame, FrameMailbox};
pub use protocol::{Command, CommandKind, Event, EvidenceReport, Status};
pub use runner::{EngineHandle, Refusal};
pub use session::Session;
pub use tuning::{TuneError, TuneInput, TuneRequest, TuningReport};
pub use watchdog::Alarm;
