//! The simulation thread and the headless runner: one pipeline (session → watchdog → rewind)
//! serves both the window and the command line.

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
pub use protocol::{Alarm, Command, Event, Status};
pub use runner::EngineHandle;
pub use session::Session;
