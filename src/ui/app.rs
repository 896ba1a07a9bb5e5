//! The workbench window: owns the engine handle, drains its events every frame and runs the
//! frame. It computes no physics. The window's other jobs have files of their own: events into
//! state ([`super::events`]), leaving with unsaved edits ([`super::leave`]), keys
//! ([`super::shortcuts`]), scripted watching ([`super::watch`]), what is remembered
//! ([`super::persist`]), files and pictures ([`super::file_actions`]), and drawing
//! ([`super::menu_bar`], [`super::panels`]).

use super::events::{self, Echo, RunView};
use super::files;
use super::leave::{Leave, LeaveQuestion};
use super::particle_view::ParticleView;
use super::pending::{Ask, PictureTaker};
use super::persist::{self, Remembered};
use super::setup_form::SetupForm;
use super::start::{StartOptions, bundled_setup};
use super::status::Message;
use super::sweep_view::SweepView;
use super::tuning_panel::TuningPanel;
use super::watch::{StartView, Watching};
use crate::engine::{Command, EngineHandle, Frame};
use crate::io::setup::Setup;
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// Repaint interval while the simulation runs (about 40 frames per second), counted from the
/// start of a frame: the next frame is asked for before this one is built.
pub const RUNNING_FRAME_INTERVAL: Duration = Duration::from_millis(25);

/// The eframe application. Its fields are shared with the files that do its other jobs.
pub struct NoblescopeApp {
    pub(super) engine: Option<EngineHandle>,
    /// What the engine runs and what its events changed.
    pub(super) run: RunView,
    /// Setup to start the engine on at the first frame.
    pub(super) initial: Option<Setup>,
    pub(super) setup_path: Option<PathBuf>,
    /// The setup as last loaded from or saved to a file (or the bundled one).
    pub(super) saved: Option<Setup>,
    pub(super) frame: Frame,
    pub(super) view: ParticleView,
    pub(super) form_open: bool,
    pub(super) tuning_open: bool,
    /// Whether the "Structure and motion" panel is open, and whether the engine was told so.
    pub(super) structure_open: bool,
    pub(super) analyses_watched: bool,
    pub(super) averages_open: bool,
    /// Start a scan of the default lists once the engine runs (`--view tuning`).
    pub(super) tune_at_start: bool,
    pub(super) help_open: bool,
    pub(super) leave: LeaveQuestion,
    pub(super) allow_close: bool,
    persist: bool,
    pub(super) watch: Option<Watching>,
    pub(super) pictures: PictureTaker,
    /// The native file dialog, if one is open (it does not block the window).
    pub(super) dialog: files::Dialog<Ask>,
    pub(super) frames_drawn: u64,
    /// An open sweep's results (File → Open sweep folder…).
    pub(super) sweep: Option<SweepView>,
    /// The alarm step the camera was last turned to (it turns once per alarm).
    pub(super) focused_for: Option<u64>,
}

impl NoblescopeApp {
    /// Builds the app; `storage` gives the remembered state when `opts.persist` is set.
    pub fn new(storage: Option<&dyn eframe::Storage>, opts: StartOptions) -> Self {
        let start = persist::start_state(storage, &opts);
        let view_name = match opts.view {
            Some(StartView::Box3d) | None => "3d",
            Some(StartView::Slab) => "slab",
            Some(StartView::Setup) => "setup",
            Some(StartView::Tuning) => "tuning",
            Some(StartView::Structure) => "structure",
            Some(StartView::Averages) => "averages",
        };
        let mut run = RunView::new(&start.setup);
        if start.restored {
            run.status.info("Restored the setup of the last session.");
        }
        NoblescopeApp {
            engine: None,
            run,
            initial: Some(start.setup),
            setup_path: start.path,
            saved: start.saved,
            frame: Frame::default(),
            view: ParticleView::new(start.settings),
            form_open: start.form_open,
            tuning_open: opts.view == Some(StartView::Tuning),
            structure_open: opts.view == Some(StartView::Structure),
            analyses_watched: false,
            averages_open: opts.view == Some(StartView::Averages),
            tune_at_start: opts.view == Some(StartView::Tuning),
            help_open: false,
            sweep: opts.sweep.as_deref().and_then(|d| SweepView::load(d).ok()),
            leave: LeaveQuestion::default(),
            allow_close: false,
            persist: opts.persist,
            watch: opts.watch.map(|p| Watching::new(p, view_name)),
            pictures: PictureTaker::new(),
            dialog: files::Dialog::default(),
            frames_drawn: 0,
            focused_for: None,
        }
    }

    /// The setup the engine runs.
    pub fn running_setup(&self) -> &Setup {
        &self.run.running
    }

    /// The form (tests edit it directly or through the widgets).
    pub fn form_mut(&mut self) -> &mut SetupForm {
        &mut self.run.form
    }

    /// The tuning panel (tests edit its lists directly or through the widgets).
    pub fn tuning(&self) -> &TuningPanel {
        &self.run.tuning
    }

    /// Mutable tuning panel.
    pub fn tuning_mut(&mut self) -> &mut TuningPanel {
        &mut self.run.tuning
    }

    /// Opens or closes the "Structure and motion" panel (the engine's analyses follow).
    pub fn set_structure_open(&mut self, open: bool) {
        self.structure_open = open;
    }

    /// The "Structure and motion" panel's state.
    pub fn structure(&self) -> &super::structure_panel::StructurePanel {
        &self.run.structure
    }

    /// Opens or closes the averages panel.
    pub fn set_averages_open(&mut self, open: bool) {
        self.averages_open = open;
    }

    /// The averages: the newest evidence and the start being set.
    pub fn averages(&self) -> &super::averages::Averages {
        &self.run.averages
    }

    /// Where the time plots drew the start line in the last frame: each plot's frame and the
    /// line's screen x.
    pub fn start_line_drawn(&self) -> &[(egui::Rect, f32)] {
        self.run.plots.start_line_drawn()
    }

    /// Opens or closes the tuning panel.
    pub fn set_tuning_open(&mut self, open: bool) {
        self.tuning_open = open;
    }

    /// Latest engine status.
    pub fn engine_status(&self) -> &crate::engine::Status {
        &self.run.status.status
    }

    /// Latest message for the user.
    pub fn message(&self) -> Option<&Message> {
        self.run.status.message.as_ref()
    }

    /// The watchdog's alarm shown in the banner, if any.
    pub fn alarm(&self) -> Option<&crate::engine::Alarm> {
        self.run.status.alarm.as_ref()
    }

    /// Step of the frame the particle view shows: a flight-recorder frame while an alarm is
    /// shown, the live frame otherwise.
    pub fn shown_frame_step(&self) -> u64 {
        match (
            &self.run.status.alarm,
            super::alarm_view::scrubbed(self.run.recording.as_ref(), self.run.scrub),
        ) {
            (Some(_), Some(f)) => f.step,
            _ => self.frame.step,
        }
    }

    /// The particle view's settings (its camera).
    pub fn view_settings(&self) -> &super::particle_view::ViewSettings {
        &self.view.settings
    }

    /// Samples plotted since the last start.
    pub fn samples(&self) -> u64 {
        self.run.plots.samples()
    }

    /// Atoms of the running simulation (0 until it started).
    pub fn atoms(&self) -> usize {
        self.run.atoms
    }

    /// Whether the form holds edits that are not applied or not saved.
    pub fn has_unkept_edits(&self) -> bool {
        let (draft, _) = self.run.form.draft();
        let unapplied = self
            .run
            .form
            .build()
            .map(|s| s != self.run.running)
            .unwrap_or(true);
        let unsaved = self.saved.as_ref() != Some(&draft);
        unapplied || unsaved
    }

    /// Sends a command to the engine (once it has started).
    pub fn send(&self, c: Command) {
        if let Some(e) = &self.engine {
            e.send(c);
        }
    }

    /// Asks the integration for a picture of the next frame, to be written to `path`.
    pub fn request_screenshot(&mut self, ctx: &egui::Context, path: PathBuf) {
        self.pictures.request(ctx, path);
    }

    fn start_engine(&mut self, ctx: &egui::Context) {
        let Some(setup) = self.initial.take() else { return };
        let c = ctx.clone();
        let wake: Box<dyn Fn() + Send> = Box::new(move || c.request_repaint_after(RUNNING_FRAME_INTERVAL));
        match EngineHandle::spawn_with(setup.clone(), Some(wake)) {
            Ok(h) => {
                self.engine = Some(h);
                self.run
                    .plots
                    .restart(setup.units(), events::thermostat_target(&setup));
            }
            Err(e) => {
                // The engine cannot start on this setup: open the bundled one and show why.
                self.run.status.error(format!(
                    "Could not start that setup: {e}. Showing the bundled scenario instead."
                ));
                let b = bundled_setup();
                self.run.running = b.clone();
                self.initial = Some(b);
                self.start_engine(ctx);
            }
        }
    }

    /// Reads every engine event that has arrived.
    fn drain_events(&mut self) {
        let Some(engine) = &self.engine else { return };
        let now = Instant::now();
        for event in engine.events().collect::<Vec<_>>() {
            if let Echo::RunningAtStep(step) = events::reduce(&mut self.run, event)
                && let Some(w) = &mut self.watch
            {
                w.recorder_mut().step(now, step);
            }
        }
    }

    pub(super) fn toggle_run(&mut self) {
        let running = !self.run.status.status.running;
        self.send(if running { Command::Run } else { Command::Pause });
        self.run.status.status.running = running;
    }

    /// Draws the whole window into `ui` (eframe's root ui or a test harness's).
    pub fn show(&mut self, ui: &mut egui::Ui) {
        let started = Instant::now();
        self.show_inner(ui);
        if let Some(w) = &mut self.watch {
            w.recorder_mut().build_time(started.elapsed());
        }
    }

    fn show_inner(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        if self.engine.is_none() {
            self.start_engine(&ctx);
        }
        self.frames_drawn += 1;
        self.drain_events();
        if self.engine.is_some() && self.structure_open != self.analyses_watched {
            self.analyses_watched = self.structure_open;
            self.send(Command::WatchAnalyses(self.structure_open));
        }
        if self.run.status.status.running || self.watch.is_some() {
            ctx.request_repaint_after(RUNNING_FRAME_INTERVAL);
        }
        if let Some(e) = &self.engine {
            e.take_frame(&mut self.frame);
        }
        if let Some(r) = self.pictures.receive() {
            if self.watch.as_ref().is_some_and(Watching::done) {
                self.finish_watch(&ctx, Some(r));
            } else {
                self.run.status.message = Some(match r {
                    Ok(p) => Message::info(format!("Picture saved to {p}")),
                    Err(e) => Message::error(format!("Could not save the picture: {e}")),
                });
            }
        }
        self.answer_dialog(&ctx);
        self.keys(&ctx);
        self.watch_step(&ctx);

        // Leaving: closing the window or dropping a file asks first when edits would be lost.
        if ctx.input(|i| i.viewport().close_requested()) && !self.allow_close && self.has_unkept_edits() {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.leave.ask_again(Some(Leave::Close));
        }
        let dropped: Option<PathBuf> = ctx.input(|i| {
            i.raw
                .dropped_files
                .iter()
                .map(|f| f.path().to_path_buf())
                .find(|p| !p.as_os_str().is_empty())
        });
        if let Some(p) = dropped {
            self.request_leave(&ctx, Leave::OpenPath(p));
        }
        self.panels(ui);
        if let Some(v) = self.sweep.as_mut() {
            v.show(&ctx);
            if let Some(p) = v.open_point.take() {
                self.request_leave(&ctx, Leave::OpenPath(p));
            }
        }
        if self.sweep.as_ref().is_some_and(|v| !v.open) {
            self.sweep = None;
        }
    }
}

impl eframe::App for NoblescopeApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.show(ui);
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        if self.persist {
            persist::store(
                storage,
                Remembered {
                    form: &self.run.form,
                    running: &self.run.running,
                    setup_path: self.setup_path.as_deref(),
                    settings: &self.view.settings,
                    form_open: self.form_open,
                },
            );
        }
    }

    fn persist_egui_memory(&self) -> bool {
        self.persist
    }

    fn clear_color(&self, visuals: &egui::Visuals) -> [f32; 4] {
        visuals.panel_fill.to_normalized_gamma_f32()
    }

    fn on_exit(&mut self, gl: Option<&eframe::glow::Context>) {
        if let Some(gl) = gl {
            self.view.renderer().destroy(gl);
        }
        if let Some(e) = &self.engine {
            e.send(Command::Shutdown);
        }
    }
}
