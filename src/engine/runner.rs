//! The engine thread: owns the session, obeys commands, streams samples and frames.
//!
//! The window never waits for the simulation: commands and events go over unbounded channels
//! (so no sample is ever lost) and frames through a one-slot [`FrameMailbox`]. The simulation
//! never waits for drawing: it fills a frame only when the last one was taken.

use super::flight_recorder::FlightRecorder;
use super::frame::{Frame, FrameMailbox};
use super::live_analyses::LiveAnalyses;
use super::protocol::{Command, CommandKind, Event, EvidenceReport, SnapshotMark, Status};
use super::recovery::MAX_RECOVERIES;
use super::rewind::RewindBuffer;
use super::session::Session;
use super::tuning::{self, TuneError, TuneRequest, TuneUnits, TuningReport};
use super::watchdog::Alarm;
use crate::analysis::{StartChoice, eos_reference, precision};
use crate::io::checkpoint::{Checkpoint, CheckpointError};
use crate::io::setup::{Setup, SetupError};
use crate::physics::{SimulationSpec, SimulationState, SpecError};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{self, Receiver, RecvTimeoutError, Sender, TryRecvError};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

/// Steps between rewind snapshots (a few seconds of a typical run).
const SNAPSHOT_EVERY: u64 = 500;
/// How long one batch of steps may run before commands are read again.
const BATCH: Duration = Duration::from_millis(15);
/// How often a status event goes out.
const STATUS_EVERY: Duration = Duration::from_millis(250);
/// How often the structure and motion analyses are reported while a run goes.
const ANALYSES_EVERY: Duration = Duration::from_millis(500);
/// Least time between two refreshes of the evidence while running.
const EVIDENCE_EVERY: Duration = Duration::from_secs(1);
/// While running, the evidence is refreshed no more often than once per this many times its
/// last cost, so the analysis takes at most 1/EVIDENCE_COST_SHARE (5 %) of the engine thread
/// even where it takes longer than expected (a loaded machine, a long run).
const EVIDENCE_COST_SHARE: u32 = 20;

/// Why the engine refused a command (sent on as [`Event::Rejected`] with its message).
#[derive(Debug, thiserror::Error)]
pub enum Refusal {
    /// The last alarm was a blow-up; `doing` is what was asked ("running again", "stepping",
    /// "tuning").
    #[error("the run blew up; rewind or reset before {doing}")]
    BlewUp { doing: &'static str },
    /// The setup (or a live change to it) is invalid.
    #[error(transparent)]
    Setup(#[from] SetupError),
    /// A checkpoint could not be written or read.
    #[error(transparent)]
    Checkpoint(#[from] CheckpointError),
    /// The state could not be simulated.
    #[error(transparent)]
    Simulation(#[from] SpecError),
    /// Rewind found no snapshot older than the alarm.
    #[error("no snapshot older than the alarm is left; reset instead")]
    NoSnapshot,
    /// CancelTune with no scan running.
    #[error("no tuning scan is running")]
    NoScan,
    /// Tune while a scan runs.
    #[error("a tuning scan is already running; wait for its results before starting another")]
    ScanRunning,
    /// The tuning request was refused, or the scan failed.
    #[error(transparent)]
    Tune(#[from] TuneError),
    /// The scan's thread could not be started.
    #[error("could not start the tuning scan: {0}")]
    TuneThread(std::io::Error),
    /// The scan's thread ended without an answer.
    #[error("the tuning scan stopped unexpectedly")]
    TuneLost,
    /// An analysis command while the analyses are off.
    #[error("the structure and motion analyses are off; open their panel first")]
    AnalysesOff,
    /// An analysis has nothing to write yet.
    #[error("{0} has no data yet; let the run go on a little")]
    AnalysisEmpty(&'static str),
    /// A fit window that is not an interval of positive lags.
    #[error("fit window: [{from}, {to}] τ is out of range; allowed: 0 ≤ from < to")]
    FitWindow { from: f64, to: f64 },
    /// An analysis file could not be written.
    #[error("could not write {path}: {error}")]
    AnalysisWrite { path: String, error: std::io::Error },
}

/// The window's side of the engine: send commands, read events, take frames.
pub struct EngineHandle {
    commands: Sender<Command>,
    events: Receiver<Event>,
    frames: Arc<FrameMailbox>,
    thread: Option<JoinHandle<()>>,
}

impl EngineHandle {
    /// Validates `setup`, then starts the engine thread paused on it.
    pub fn spawn(setup: Setup) -> Result<EngineHandle, SetupError> {
        setup.resolve()?;
        Self::spawn_with(setup, None)
    }

    /// Starts the engine; `wake` is called whenever events or a frame are ready (e.g. to
    /// request a repaint).
    pub fn spawn_with(setup: Setup, wake: Option<Box<dyn Fn() + Send>>) -> Result<EngineHandle, SetupError> {
        setup.resolve_for_this_machine()?;
        let (ctx, crx) = mpsc::channel();
        let (etx, erx) = mpsc::channel();
        let frames = Arc::new(FrameMailbox::new());
        let mailbox = frames.clone();
        let thread = std::thread::Builder::new()
            .name("noblescope-engine".into())
            .spawn(move || Engine::new(crx, etx, mailbox, wake).run(setup))
            .expect("the engine thread starts");
        Ok(EngineHandle {
            commands: ctx,
            events: erx,
            frames,
            thread: Some(thread),
        })
    }

    /// Sends a command (ignored if the engine has stopped).
    pub fn send(&self, c: Command) {
        let _ = self.commands.send(c);
    }

    /// Every event that has arrived, without waiting.
    pub fn events(&self) -> impl Iterator<Item = Event> + '_ {
        self.events.try_iter()
    }

    /// Waits up to `timeout` for the next event.
    pub fn next_event(&self, timeout: Duration) -> Option<Event> {
        self.events.recv_timeout(timeout).ok()
    }

    /// Swaps the newest frame into `into`; returns whether there was a new one.
    pub fn take_frame(&self, into: &mut Frame) -> bool {
        self.frames.take(into)
    }
}

impl Drop for EngineHandle {
    fn drop(&mut self) {
        let _ = self.commands.send(Command::Shutdown);
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

struct Engine {
    commands: Receiver<Command>,
    events: Sender<Event>,
    frames: Arc<FrameMailbox>,
    wake: Option<Box<dyn Fn() + Send>>,
    running: bool,
    rewind: RewindBuffer,
    recorder: FlightRecorder,
    /// Recoveries since the last start (setups with `recover: true`).
    recoveries: usize,
    last_alarm: Option<Alarm>,
    /// Steps and time since the last status, for the rates.
    rate_steps: u64,
    rate_since: Instant,
    last_status: Instant,
    steps_per_second: f64,
    /// The tuning scan running beside the loop, if any.
    tune: Option<TuneJob>,
    /// Whether the run still pauses when it reaches the setup's `steps` (once per start).
    stop_at_steps: bool,
    /// The structure and motion analyses, while the window watches them.
    analyses: Option<LiveAnalyses>,
    last_analyses: Instant,
    /// Whether the run still pauses when its precision targets are met (once per start).
    stop_at_precision: bool,
    /// Where the averages start, as the window last asked.
    average_start: StartChoice,
    /// The evidence should go out as soon as the commands waiting are read.
    evidence_due: bool,
    /// When the evidence last went out, and the least time until the next refresh.
    last_evidence: Instant,
    evidence_every: Duration,
}

/// A tuning scan on its own thread, working on copies of the state.
struct TuneJob {
    result: Receiver<Result<TuningReport, TuneError>>,
    /// Set to make the worker stop within 1/200 of a trial (on request, or when the engine ends).
    cancel: Arc<AtomicBool>,
    thread: JoinHandle<()>,
}

impl TuneJob {
    fn start(spec: SimulationSpec, state: SimulationState, request: TuneRequest) -> std::io::Result<TuneJob> {
        let (tx, rx) = mpsc::channel();
        let cancel = Arc::new(AtomicBool::new(false));
        let stop = cancel.clone();
        let thread = std::thread::Builder::new()
            .name("noblescope-tune".into())
            .spawn(move || {
                let scan = || tuning::full_scan(spec, state, &request, &stop);
                // The scan runs on this thread alone, beside the engine: in the shared force pool
                // each parallel loop of a trial would queue behind the engine's batches of steps.
                // Results do not depend on the thread count.
                let result = match rayon::ThreadPoolBuilder::new()
                    .num_threads(1)
                    .use_current_thread()
                    .build()
                {
                    Ok(pool) => pool.install(scan),
                    Err(_) => scan(),
                };
                let _ = tx.send(result);
            })?;
        Ok(TuneJob {
            result: rx,
            cancel,
            thread,
        })
    }
}

impl Engine {
    fn new(
        commands: Receiver<Command>,
        events: Sender<Event>,
        frames: Arc<FrameMailbox>,
        wake: Option<Box<dyn Fn() + Send>>,
    ) -> Self {
        Engine {
            commands,
            events,
            frames,
            wake,
            running: false,
            rewind: RewindBuffer::new(1, SNAPSHOT_EVERY),
            recorder: FlightRecorder::default(),
            recoveries: 0,
            last_alarm: None,
            rate_steps: 0,
            rate_since: Instant::now(),
            last_status: Instant::now(),
            steps_per_second: 0.0,
            tune: None,
            stop_at_steps: true,
            analyses: None,
            last_analyses: Instant::now(),
            stop_at_precision: true,
            average_start: StartChoice::Automatic,
            evidence_due: true,
            last_evidence: Instant::now(),
            evidence_every: EVIDENCE_EVERY,
        }
    }

    /// Passes on the result of a finished tuning scan.
    fn poll_tune(&mut self) {
        let Some(job) = &self.tune else { return };
        let outcome = match job.result.try_recv() {
            Ok(r) => r.map_err(Refusal::from),
            Err(TryRecvError::Empty) => return,
            Err(TryRecvError::Disconnected) => Err(Refusal::TuneLost),
        };
        if let Some(job) = self.tune.take() {
            let _ = job.thread.join();
        }
        match outcome {
            Ok(report) => self.emit(Event::Tuned(report)),
            Err(reason) => self.refuse(CommandKind::Tune, &reason),
        }
    }

    /// Tells the window that `command` was refused.
    fn refuse(&self, command: CommandKind, reason: &Refusal) {
        self.emit(Event::Rejected {
            command,
            reason: reason.to_string(),
        });
    }

    /// Stops a running scan (within 1/200 of a trial) without waiting for it.
    fn cancel_tune(&mut self) {
        if let Some(job) = self.tune.take() {
            job.cancel.store(true, Ordering::Relaxed);
        }
    }

    fn emit(&self, e: Event) {
        let _ = self.events.send(e);
        if let Some(w) = &self.wake {
            w();
        }
    }

    fn start(&mut self, session: &Session) {
        self.rewind = RewindBuffer::new(session.simulation().system().len(), SNAPSHOT_EVERY);
        self.rewind.push(session.simulation().state());
        self.recorder = FlightRecorder::new(session.simulation().system().len());
        self.recorder.record(session.simulation());
        self.recoveries = 0;
        self.last_alarm = None;
        self.stop_at_steps = session.simulation().step_count() < session.setup().steps;
        self.stop_at_precision = true;
        // A manual start belongs to the run it was set on.
        self.average_start = StartChoice::Automatic;
        self.evidence_due = true;
        self.emit(Event::Started {
            setup: Box::new(session.setup().clone()),
            atoms: session.simulation().system().len(),
        });
        self.emit(Event::Sample(session.observe()));
        self.publish_frame(session, true);
        self.restart_analyses(session);
        self.send_snapshots();
    }

    /// Builds the analyses afresh for `session` (a new run, or a change of timestep or
    /// cutoff), if they are on, keeping the fit window, and reports them.
    fn restart_analyses(&mut self, session: &Session) {
        if let Some(a) = &self.analyses {
            self.analyses = Some(LiveAnalyses::new(session, a.window()));
            self.send_analyses(session);
        }
    }

    fn send_analyses(&mut self, session: &Session) {
        if let Some(a) = &self.analyses {
            let report = a.report(session.simulation().step_count());
            self.emit(Event::Analyses(Box::new(report)));
        }
        self.last_analyses = Instant::now();
    }

    /// Goes back to the newest snapshot before `alarm` with half the timestep, as a headless
    /// `run --recover` does; returns whether it could.
    fn recover(&mut self, session: &mut Session, alarm: &Alarm) -> bool {
        let Some(state) = self.rewind.rewind_before(alarm.step) else {
            return false;
        };
        let from = state.step;
        let dt = session.setup().timestep;
        let half = dt.with_value(dt.value() / 2.0);
        if session.restore(state).is_err() || session.set_timestep(half).is_err() {
            return false;
        }
        self.recoveries += 1;
        self.recorder.clear();
        self.recorder.record(session.simulation());
        self.emit(Event::Rewound {
            step: from,
            time_tau: session.simulation().time(),
        });
        self.emit(Event::SetupChanged(Box::new(session.setup().clone())));
        self.emit(Event::Recovered {
            alarm: Box::new(alarm.clone()),
            resumed_from_step: from,
            timestep: half,
        });
        self.send_snapshots();
        true
    }

    /// Tells the window which snapshots are held.
    fn send_snapshots(&self) {
        self.emit(Event::Snapshots {
            marks: self
                .rewind
                .marks()
                .map(|(step, time_tau)| SnapshotMark { step, time_tau })
                .collect(),
            bytes: self.rewind.bytes(),
        });
    }

    fn run(mut self, setup: Setup) {
        let mut session = match Session::new(setup) {
            Ok(s) => s,
            Err(e) => {
                self.refuse(CommandKind::Start, &Refusal::Setup(e));
                return;
            }
        };
        self.start(&session);
        loop {
            self.poll_tune();
            // Read commands: wait while paused, only peek while running or while evidence is due.
            let cmd = if self.running || self.evidence_due {
                self.commands.try_recv().ok()
            } else {
                match self.commands.recv_timeout(Duration::from_millis(50)) {
                    Ok(c) => Some(c),
                    Err(RecvTimeoutError::Timeout) => None,
                    Err(RecvTimeoutError::Disconnected) => {
                        self.cancel_tune();
                        return;
                    }
                }
            };
            if let Some(c) = cmd {
                if !self.handle(c, &mut session) {
                    self.cancel_tune();
                    return;
                }
                continue;
            }
            if self.running {
                let until = Instant::now() + BATCH;
                // The batch runs on a worker of the force pool, so each parallel loop inside a
                // step starts from within the pool instead of waking it from outside: on a
                // busy machine every such wake-up waited for a core (0.26 ms on average,
                // measured with perf sched while the window drew), several times a step.
                rayon::scope(|_| {
                    while self.running && Instant::now() < until {
                        self.advance(&mut session);
                        if self.frames.wants_frame() {
                            break;
                        }
                    }
                });
            }
            self.publish_frame(&session, false);
            if self.last_status.elapsed() >= STATUS_EVERY {
                self.send_status(&session);
            }
            if self.running && self.analyses.is_some() && self.last_analyses.elapsed() >= ANALYSES_EVERY {
                self.send_analyses(&session);
            }
            if self.evidence_due || (self.running && self.last_evidence.elapsed() >= self.evidence_every) {
                self.send_evidence(&session);
            }
        }
    }

    /// Analyses the samples from the chosen start and sends the evidence.
    fn send_evidence(&mut self, session: &Session) {
        let started = Instant::now();
        let evidence = session.evidence(self.average_start);
        let precision = precision::progress(&evidence, session.precision_targets());
        let eos = session
            .eos_run_state()
            .map(|state| eos_reference::compare(&evidence, state));
        let cost = started.elapsed();
        self.evidence_every = EVIDENCE_EVERY.max(cost * EVIDENCE_COST_SHARE);
        self.emit(Event::Evidence(Box::new(EvidenceReport {
            evidence,
            precision,
            eos,
            units: session.units(),
            sample_every: session.setup().sample_every,
            step: session.simulation().step_count(),
            analysis_seconds: cost.as_secs_f64(),
        })));
        self.evidence_due = false;
        self.last_evidence = Instant::now();
    }

    fn advance(&mut self, session: &mut Session) {
        let out = session.step();
        self.rate_steps += 1;
        if let Some(s) = out.sample {
            self.emit(Event::Sample(s));
        }
        if let Some(a) = out.alarm {
            if session.setup().recover && self.recoveries < MAX_RECOVERIES && self.recover(session, &a) {
                return;
            }
            self.running = false;
            self.last_alarm = Some(a.clone());
            self.emit(Event::Alarm(a));
            let record = self.recorder.take(session.simulation());
            self.emit(Event::FlightRecord(Box::new(record)));
            self.send_status(session);
            self.evidence_due = true;
            return;
        }
        if let Some(a) = self.analyses.as_mut() {
            a.after_step(session);
        }
        if let Some(met) = out.precision_met
            && self.stop_at_precision
        {
            self.stop_at_precision = false;
            self.running = false;
            self.emit(Event::PrecisionReached(met));
            self.send_status(session);
            self.evidence_due = true;
        }
        let step = session.simulation().step_count();
        if FlightRecorder::due(step) {
            self.recorder.record(session.simulation());
        }
        if self.rewind.due(step) {
            self.rewind.push(session.simulation().state());
            self.send_snapshots();
        }
        let steps = session.setup().steps;
        if self.stop_at_steps && step >= steps {
            self.stop_at_steps = false;
            self.running = false;
            self.emit(Event::ReachedSteps { steps });
            self.send_status(session);
            self.evidence_due = true;
        }
    }

    fn publish_frame(&self, session: &Session, force: bool) {
        if force || self.frames.wants_frame() {
            self.frames.publish(|f| f.fill_from(session.simulation()));
            if let Some(w) = &self.wake {
                w();
            }
        }
    }

    fn send_status(&mut self, session: &Session) {
        let dt = self.rate_since.elapsed().as_secs_f64();
        if dt > 0.2 || !self.running {
            self.steps_per_second = if self.running && dt > 0.0 {
                self.rate_steps as f64 / dt
            } else {
                self.steps_per_second * self.running as u8 as f64
            };
            self.rate_steps = 0;
            self.rate_since = Instant::now();
        }
        let sim = session.simulation();
        let atoms = sim.system().len();
        self.emit(Event::Status(Status {
            running: self.running,
            step: sim.step_count(),
            time_tau: sim.time(),
            atoms,
            steps_per_second: self.steps_per_second,
            atom_steps_per_second: self.steps_per_second * atoms as f64,
            list_builds: sim.list_builds(),
            snapshots: self.rewind.len(),
        }));
        self.last_status = Instant::now();
    }

    /// Replaces the simulation with `new` (Apply, Reset, LoadCheckpoint): paused, with a fresh
    /// rewind buffer, announced with [`Event::Started`].
    fn replace_session(
        &mut self,
        session: &mut Session,
        new: Result<Session, Refusal>,
    ) -> Result<(), Refusal> {
        *session = new?;
        self.running = false;
        self.start(session);
        Ok(())
    }

    /// Refuses `doing` after a blow-up.
    fn check_not_blown_up(&self, doing: &'static str) -> Result<(), Refusal> {
        if self.last_alarm.as_ref().is_some_and(|a| a.kind.is_blow_up()) {
            Err(Refusal::BlewUp { doing })
        } else {
            Ok(())
        }
    }

    /// Handles one command; returns false to stop the thread.
    fn handle(&mut self, c: Command, session: &mut Session) -> bool {
        let kind = c.kind();
        let result: Result<(), Refusal> = match c {
            Command::Shutdown => return false,
            Command::Run => self.check_not_blown_up("running again").map(|()| {
                self.running = true;
                self.rate_since = Instant::now();
                self.rate_steps = 0;
            }),
            Command::Pause => {
                self.running = false;
                self.evidence_due = true;
                Ok(())
            }
            Command::StepOnce => {
                self.running = false;
                self.check_not_blown_up("stepping").map(|()| {
                    self.advance(session);
                    self.publish_frame(session, true);
                    self.evidence_due = true;
                })
            }
            Command::SetAverageStart(choice) => {
                self.average_start = choice;
                session.set_precision_start(choice);
                self.evidence_due = true;
                Ok(())
            }
            Command::Apply(setup) => {
                let new = Session::new(*setup).map_err(Refusal::from);
                self.replace_session(session, new)
            }
            Command::Reset => {
                let new = Session::new(session.setup().clone()).map_err(Refusal::from);
                self.replace_session(session, new)
            }
            Command::LoadCheckpoint(path) => {
                let new = Checkpoint::load(&path)
                    .map_err(Refusal::from)
                    .and_then(|c| Session::from_checkpoint(c).map_err(Refusal::from));
                self.replace_session(session, new)
            }
            Command::SetTimestep(dt) => session.set_timestep(dt).map_err(Refusal::from).map(|()| {
                // The sampling interval of the self motion changed: start the analyses again.
                self.restart_analyses(session);
            }),
            Command::SetInteraction {
                cutoff,
                skin,
                potential,
                tail_correction,
            } => session
                .set_interaction(cutoff, skin, potential, tail_correction)
                .map_err(Refusal::from)
                .map(|()| self.restart_analyses(session)),
            Command::WatchAnalyses(on) => {
                if on && self.analyses.is_none() {
                    self.analyses = Some(LiveAnalyses::new(session, None));
                    self.send_analyses(session);
                } else if !on {
                    self.analyses = None;
                }
                Ok(())
            }
            Command::ResetAnalyses => match self.analyses.as_mut() {
                Some(a) => {
                    a.reset(session.simulation().step_count());
                    self.send_analyses(session);
                    Ok(())
                }
                None => Err(Refusal::AnalysesOff),
            },
            Command::SetFitWindow(w) => match (self.analyses.as_mut(), w) {
                (None, _) => Err(Refusal::AnalysesOff),
                (Some(_), Some([from, to])) if !(from >= 0.0 && to > from && to.is_finite()) => {
                    Err(Refusal::FitWindow { from, to })
                }
                (Some(a), w) => {
                    a.set_window(w.map(|[from, to]| crate::analysis::FitWindow { from, to }));
                    self.send_analyses(session);
                    Ok(())
                }
            },
            Command::SaveAnalysis { file, path } => match &self.analyses {
                None => Err(Refusal::AnalysesOff),
                Some(a) => match a.csv(file, session) {
                    None => Err(Refusal::AnalysisEmpty(file.file_name())),
                    Some(text) => std::fs::write(&path, text)
                        .map_err(|error| Refusal::AnalysisWrite {
                            path: path.display().to_string(),
                            error,
                        })
                        .map(|()| self.emit(Event::AnalysisSaved(path))),
                },
            },
            Command::SetThermostat {
                ensemble,
                temperature,
            } => {
                // The bath decides which quantities relax, and the equation of state's temperature.
                self.evidence_due = true;
                session
                    .set_thermostat(ensemble, temperature)
                    .map_err(Refusal::from)
            }
            Command::SaveCheckpoint(path) => {
                session.checkpoint().save(&path).map_err(Refusal::from).map(|()| {
                    self.emit(Event::Saved(path));
                })
            }
            Command::Rewind => self.rewind(session, None),
            Command::RewindTo(step) => self.rewind(session, Some(step)),
            Command::CancelTune => {
                if self.tune.is_some() {
                    self.cancel_tune();
                    self.emit(Event::TuneCancelled);
                    Ok(())
                } else {
                    Err(Refusal::NoScan)
                }
            }
            Command::Tune(request) => self.start_tune(session, request),
        };
        match result {
            Ok(()) => {
                if kind.is_live_change() {
                    self.emit(Event::SetupChanged(Box::new(session.setup().clone())));
                }
            }
            Err(reason) => self.refuse(kind, &reason),
        }
        self.send_status(session);
        true
    }

    /// Goes back to the snapshot of step `to`, or without one to the newest snapshot before
    /// the last alarm (or before the present step).
    fn rewind(&mut self, session: &mut Session, to: Option<u64>) -> Result<(), Refusal> {
        let before = self
            .last_alarm
            .as_ref()
            .map(|a| a.step())
            .unwrap_or(session.simulation().step_count() + 1);
        let state = match to {
            Some(step) if self.rewind.marks().any(|(s, _)| s == step) => self.rewind.rewind_to(step),
            Some(_) => None,
            None => self.rewind.rewind_before(before),
        }
        .ok_or(Refusal::NoSnapshot)?;
        session.restore(state)?;
        self.recorder.clear();
        self.recorder.record(session.simulation());
        self.running = false;
        self.last_alarm = None;
        self.evidence_due = true;
        self.emit(Event::Rewound {
            step: session.simulation().step_count(),
            time_tau: session.simulation().time(),
        });
        self.emit(Event::Sample(session.observe()));
        self.publish_frame(session, true);
        if let Some(a) = self.analyses.as_mut() {
            // What was gathered after the snapshot no longer happened.
            a.reset(session.simulation().step_count());
        }
        self.send_analyses(session);
        self.send_snapshots();
        Ok(())
    }

    /// Checks `request` and starts its scan beside the loop.
    fn start_tune(&mut self, session: &Session, request: TuneRequest) -> Result<(), Refusal> {
        if self.tune.is_some() {
            return Err(Refusal::ScanRunning);
        }
        self.check_not_blown_up("tuning")?;
        let sim = session.simulation();
        request.check(sim.spec(), TuneUnits::REDUCED)?;
        let job = TuneJob::start(sim.spec().clone(), sim.state(), request).map_err(Refusal::TuneThread)?;
        self.tune = Some(job);
        Ok(())
    }
}
