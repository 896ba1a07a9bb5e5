//! The workbench window: owns the engine handle, drains its events every frame, draws the
//! panels and turns clicks and keys into commands. It computes no physics.

use super::files;
use super::help;
use super::palette;
use super::particle_view::{ParticleView, ViewMode, ViewSettings};
use super::plots::Plots;
use super::setup_form::{FormAction, SetupForm};
use super::status::StatusLine;
use super::tuning_panel::{TuningAction, TuningPanel};
use super::watch::{StartView, WatchPlan, WatchRecorder};
use crate::engine::{Command, EngineHandle, Event, Frame};
use crate::io::setup::{Ensemble, Setup};
use crate::io::summary::MODEL_CAUTION;
use std::path::PathBuf;
use std::sync::Arc;
use std::sync::mpsc::{self, Receiver, Sender};
use std::time::{Duration, Instant};

/// The scenario the window opens on when nothing else is asked for.
pub const BUNDLED_SCENARIO: &str = include_str!("../../assets/krypton-getter-sample.ron");
/// Its name in messages and the title bar.
pub const BUNDLED_NAME: &str = "krypton-getter-sample.ron";

/// Repaint interval while the simulation runs (about 40 frames per second), counted from the
/// start of a frame: the next frame is asked for before this one is built.
pub const RUNNING_FRAME_INTERVAL: Duration = Duration::from_millis(25);

const STORAGE_SETUP: &str = "noblescope.setup";
const STORAGE_PATH: &str = "noblescope.setup_path";
const STORAGE_VIEW: &str = "noblescope.view";
const STORAGE_FORM_OPEN: &str = "noblescope.form_open";

/// The bundled scenario, parsed.
pub fn bundled_setup() -> Setup {
    Setup::parse(BUNDLED_SCENARIO, BUNDLED_NAME).expect("the bundled scenario parses")
}

/// How the window starts.
#[derive(Clone, Debug, Default)]
pub struct StartOptions {
    /// Setup to open and where it came from; `None`: the remembered one, else the bundled one.
    pub setup: Option<(Setup, Option<PathBuf>)>,
    /// First view.
    pub view: Option<StartView>,
    /// Scripted watching.
    pub watch: Option<WatchPlan>,
    /// Read and write the remembered state (off for scripted runs and tests).
    pub persist: bool,
}

/// Something that would drop the form's edits, waiting for the user's answer.
#[derive(Clone, Debug, PartialEq)]
enum Leave {
    Close,
    OpenDialog,
    OpenPath(PathBuf),
    OpenBundled,
}

/// What the open file dialog is for.
#[derive(Clone, Debug, PartialEq)]
enum Ask {
    OpenSetup,
    /// Save the form's setup, then go on with `then` (the answer to a leave question).
    SaveSetup {
        then: Option<Leave>,
    },
    SaveCheckpoint,
    LoadCheckpoint,
    ExportCsv,
    SavePicture,
}

/// The eframe application.
pub struct NoblescopeApp {
    engine: Option<EngineHandle>,
    /// What the engine runs (from its Started / SetupChanged events).
    running: Setup,
    /// Setup to start the engine on at the first frame.
    initial: Option<Setup>,
    form: SetupForm,
    setup_path: Option<PathBuf>,
    /// The setup as last loaded from or saved to a file (or the bundled one).
    saved: Option<Setup>,
    frame: Frame,
    view: ParticleView,
    plots: Plots,
    status: StatusLine,
    atoms: usize,
    form_open: bool,
    tuning: TuningPanel,
    tuning_open: bool,
    /// Start a scan of the default lists once the engine runs (`--view tuning`).
    tune_at_start: bool,
    help_open: bool,
    leave: Option<Leave>,
    allow_close: bool,
    persist: bool,
    watch: Option<(WatchPlan, WatchRecorder, String)>,
    watch_done: bool,
    shot_tx: Sender<Arc<egui::ColorImage>>,
    shot_rx: Receiver<Arc<egui::ColorImage>>,
    /// The native file dialog, if one is open (it does not block the window).
    dialog: files::Dialog<Ask>,
    shot_target: Option<PathBuf>,
    frames_drawn: u64,
}

impl NoblescopeApp {
    /// Builds the app; `storage` gives the remembered state when `opts.persist` is set.
    pub fn new(storage: Option<&dyn eframe::Storage>, opts: StartOptions) -> Self {
        let remembered = |key: &str| storage.filter(|_| opts.persist).and_then(|s| s.get_string(key));
        let mut path = None;
        let mut restored = false;
        let setup = match opts.setup {
            Some((s, p)) => {
                path = p;
                s
            }
            None => match remembered(STORAGE_SETUP)
                .and_then(|t| Setup::parse(&t, "remembered setup").ok())
                .filter(|s| s.resolve().is_ok())
            {
                Some(s) => {
                    restored = true;
                    path = remembered(STORAGE_PATH).map(PathBuf::from);
                    s
                }
                None => bundled_setup(),
            },
        };
        let mut settings: ViewSettings = remembered(STORAGE_VIEW)
            .and_then(|t| ron::from_str(&t).ok())
            .unwrap_or_default();
        let mut form_open = remembered(STORAGE_FORM_OPEN).map(|t| t == "true").unwrap_or(true);
        match opts.view {
            Some(StartView::Box3d) => {
                settings.mode = ViewMode::Box3d;
                form_open = false;
            }
            Some(StartView::Slab) => {
                settings.mode = ViewMode::Slab;
                form_open = false;
            }
            Some(StartView::Setup) => form_open = true,
            Some(StartView::Tuning) => form_open = false,
            None => {}
        }
        let saved = if restored {
            path.as_ref().and_then(|p| Setup::load(p).ok())
        } else {
            Some(setup.clone())
        };
        let (shot_tx, shot_rx) = mpsc::channel();
        let view_name = match opts.view {
            Some(StartView::Box3d) | None => "3d",
            Some(StartView::Slab) => "slab",
            Some(StartView::Setup) => "setup",
            Some(StartView::Tuning) => "tuning",
        };
        let mut status = StatusLine::default();
        if restored {
            status.message = Some(("Restored the setup of the last session.".into(), false));
        }
        NoblescopeApp {
            engine: None,
            running: setup.clone(),
            form: SetupForm::from_setup(&setup),
            initial: Some(setup.clone()),
            setup_path: path,
            saved,
            frame: Frame::default(),
            view: ParticleView::new(settings),
            plots: Plots::new(setup.units()),
            status,
            atoms: 0,
            form_open,
            tuning: TuningPanel::for_setup(&setup),
            tuning_open: opts.view == Some(StartView::Tuning),
            tune_at_start: opts.view == Some(StartView::Tuning),
            help_open: false,
            leave: None,
            allow_close: false,
            persist: opts.persist,
            watch: opts
                .watch
                .map(|p| (p, WatchRecorder::new(), view_name.to_string())),
            watch_done: false,
            shot_tx,
            shot_rx,
            dialog: files::Dialog::default(),
            shot_target: None,
            frames_drawn: 0,
        }
    }

    /// The setup the engine runs.
    pub fn running_setup(&self) -> &Setup {
        &self.running
    }

    /// The form (tests edit it directly or through the widgets).
    pub fn form_mut(&mut self) -> &mut SetupForm {
        &mut self.form
    }

    /// The tuning panel (tests edit its lists directly or through the widgets).
    pub fn tuning(&self) -> &TuningPanel {
        &self.tuning
    }

    /// Mutable tuning panel.
    pub fn tuning_mut(&mut self) -> &mut TuningPanel {
        &mut self.tuning
    }

    /// Opens or closes the tuning panel.
    pub fn set_tuning_open(&mut self, open: bool) {
        self.tuning_open = open;
    }

    /// Latest engine status.
    pub fn engine_status(&self) -> &crate::engine::Status {
        &self.status.status
    }

    /// Latest message for the user and whether it is an error.
    pub fn message(&self) -> Option<&(String, bool)> {
        self.status.message.as_ref()
    }

    /// Samples plotted since the last start.
    pub fn samples(&self) -> u64 {
        self.plots.samples()
    }

    /// Atoms of the running simulation (0 until it started).
    pub fn atoms(&self) -> usize {
        self.atoms
    }

    /// Whether the form holds edits that are not applied or not saved.
    pub fn has_unkept_edits(&self) -> bool {
        let (draft, _) = self.form.draft();
        let unapplied = self.form.build().map(|s| s != self.running).unwrap_or(true);
        let unsaved = self.saved.as_ref() != Some(&draft);
        unapplied || unsaved
    }

    /// Sends a command to the engine (once it has started).
    pub fn send(&self, c: Command) {
        if let Some(e) = &self.engine {
            e.send(c);
        }
    }

    fn thermostat_target(s: &Setup) -> Option<f64> {
        match s.ensemble {
            Ensemble::Nve => None,
            Ensemble::Nvt { .. } => s.reduced_temperature("temperature", s.temperature).ok(),
        }
    }

    fn start_engine(&mut self, ctx: &egui::Context) {
        let Some(setup) = self.initial.take() else { return };
        let c = ctx.clone();
        let wake: Box<dyn Fn() + Send> = Box::new(move || c.request_repaint_after(RUNNING_FRAME_INTERVAL));
        match EngineHandle::spawn_with(setup.clone(), Some(wake)) {
            Ok(h) => {
                self.engine = Some(h);
                self.plots.restart(setup.units(), Self::thermostat_target(&setup));
            }
            Err(e) => {
                // The engine cannot start on this setup: open the bundled one and show why.
                self.status.message = Some((
                    format!("Could not start that setup: {e}. Showing the bundled scenario instead."),
                    true,
                ));
                let b = bundled_setup();
                self.running = b.clone();
                self.initial = Some(b);
                self.start_engine(ctx);
            }
        }
    }

    /// Reads every engine event that has arrived.
    fn drain_events(&mut self) {
        let Some(engine) = &self.engine else { return };
        let events: Vec<Event> = engine.events().collect();
        let now = Instant::now();
        for ev in events {
            match ev {
                Event::Sample(o) => self.plots.push(&o),
                Event::Status(s) => {
                    if let Some((_, rec, _)) = &mut self.watch
                        && s.running
                    {
                        rec.step(now, s.step);
                    }
                    self.status.status = s;
                }
                Event::Started { setup, atoms } => {
                    self.adopt(&setup);
                    self.tuning.setup_changed(&setup);
                    self.atoms = atoms;
                    self.plots.restart(setup.units(), Self::thermostat_target(&setup));
                    self.status.alarm = None;
                }
                Event::SetupChanged(setup) => {
                    self.adopt(&setup);
                    self.plots.set_target(Self::thermostat_target(&setup));
                    self.status.message = Some(("Live change applied.".into(), false));
                }
                Event::Rejected { command, reason } => {
                    if command == crate::engine::CommandKind::Tune {
                        self.tuning.rejected(reason.clone());
                    }
                    self.status.message = Some((format!("{command} refused: {reason}"), true));
                }
                Event::Tuned(report) => {
                    let units = crate::physics::UnitSystem::new(report.reference);
                    let text = match report.recommended {
                        Some(dt) if units.has_real_units() => format!(
                            "Tuning scan done: recommended timestep {} fs.",
                            super::unit_field::format_number(dt * units.tau_fs())
                        ),
                        Some(dt) => format!(
                            "Tuning scan done: recommended timestep {} τ.",
                            super::unit_field::format_number(dt)
                        ),
                        None => "Tuning scan done: no timestep tried was steady enough.".to_string(),
                    };
                    self.status.message = Some((text, false));
                    self.tuning.finished(report);
                }
                Event::TuneCancelled => {
                    self.tuning.cancelled();
                    self.status.message = Some(("Tuning scan stopped.".into(), false));
                }
                Event::Alarm(a) => self.status.alarm = Some(a),
                Event::Rewound { step, time_tau } => {
                    self.plots.rewind_to(time_tau);
                    self.status.alarm = None;
                    self.status.message = Some((
                        format!("Rewound to step {step}; lower the timestep before running on."),
                        false,
                    ));
                }
                Event::Saved(p) => {
                    self.status.message = Some((format!("Checkpoint saved to {}", p.display()), false))
                }
            }
        }
    }

    /// Takes `new` as the running setup; the form follows unless it holds other edits.
    fn adopt(&mut self, new: &Setup) {
        let form = self.form.build().ok();
        if form.as_ref() == Some(&self.running) || form.as_ref() == Some(new) {
            self.form = SetupForm::from_setup(new);
        }
        self.running = new.clone();
    }

    fn apply_form(&mut self, action: FormAction) {
        match action {
            FormAction::Apply(s) => {
                self.status.message = Some(("Restarting with the edited setup (paused).".into(), false));
                self.send(Command::Apply(s));
            }
            FormAction::ApplyLive(s) => {
                let r = &self.running;
                if s.timestep != r.timestep {
                    self.send(Command::SetTimestep(s.timestep));
                }
                if (s.cutoff, s.skin, s.potential, s.tail_correction)
                    != (r.cutoff, r.skin, r.potential, r.tail_correction)
                {
                    self.send(Command::SetInteraction {
                        cutoff: s.cutoff,
                        skin: s.skin,
                        potential: s.potential,
                        tail_correction: s.tail_correction,
                    });
                }
                if (s.ensemble, s.temperature) != (r.ensemble, r.temperature) {
                    self.send(Command::SetThermostat {
                        ensemble: s.ensemble,
                        temperature: s.temperature,
                    });
                }
            }
            FormAction::Revert => self.form = SetupForm::from_setup(&self.running),
        }
    }

    fn tuning_action(&mut self, action: TuningAction) {
        match action {
            TuningAction::Start(c) => {
                self.status.message = Some((
                    "Tuning scan started on copies of the present state.".into(),
                    false,
                ));
                self.send(c);
            }
            TuningAction::Cancel => self.send(Command::CancelTune),
            TuningAction::UseTimestep(dt) => {
                self.form.timestep.show_value(&self.running, dt);
                self.form_open = true;
                self.status.message = Some(("Recommended timestep put into the setup form: press Change live or Apply and restart to use it.".into(), false));
            }
        }
    }

    fn toggle_run(&mut self) {
        if self.status.status.running {
            self.send(Command::Pause);
            self.status.status.running = false;
        } else {
            self.send(Command::Run);
            self.status.status.running = true;
        }
    }

    /// Asks before `leave` if edits would be lost, else does it.
    fn request_leave(&mut self, ctx: &egui::Context, leave: Leave) {
        if self.has_unkept_edits() {
            self.leave = Some(leave);
        } else {
            self.do_leave(ctx, leave);
        }
    }

    fn do_leave(&mut self, ctx: &egui::Context, leave: Leave) {
        match leave {
            Leave::Close => {
                self.allow_close = true;
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
            }
            Leave::OpenDialog => self.ask_file(ctx, Ask::OpenSetup, files::pick_setup_to_open),
            Leave::OpenPath(p) => self.open_path(p),
            Leave::OpenBundled => self.open_setup(bundled_setup(), None, BUNDLED_NAME),
        }
    }

    fn open_path(&mut self, p: PathBuf) {
        match files::read_setup(&p) {
            Ok(s) => {
                let name = p.display().to_string();
                self.open_setup(s, Some(p), &name);
            }
            Err(e) => self.status.message = Some((format!("Could not open the setup: {e}"), true)),
        }
    }

    /// Shows `s` in the form and, if valid, restarts the engine on it (paused).
    fn open_setup(&mut self, s: Setup, path: Option<PathBuf>, name: &str) {
        self.form = SetupForm::from_setup(&s);
        self.saved = Some(s.clone());
        self.setup_path = path;
        match s.resolve() {
            Ok(_) => {
                self.status.message = Some((format!("Opened {name} (paused; press Space to run)."), false));
                self.send(Command::Apply(Box::new(s)));
            }
            Err(e) => {
                self.form_open = true;
                self.status.message = Some((
                    format!("{name} has an error: {e}. The running simulation is unchanged."),
                    true,
                ));
            }
        }
    }

    /// Opens a file dialog for `ask`; its answer is handled in `answer_dialog`.
    fn ask_file(
        &mut self,
        ctx: &egui::Context,
        ask: Ask,
        pick: impl FnOnce() -> Option<PathBuf> + Send + 'static,
    ) {
        let c = ctx.clone();
        if !self.dialog.open(ask, move || c.request_repaint(), pick) {
            self.status.message = Some(("A file dialog is open already; finish it first.".into(), true));
        }
    }

    /// Acts on the file dialog's answer once it has closed.
    fn answer_dialog(&mut self, ctx: &egui::Context) {
        let Some((ask, path)) = self.dialog.poll() else {
            return;
        };
        let Some(path) = path else {
            // Cancelled: a leave question waiting on the save is asked again.
            if let Ask::SaveSetup { then: Some(leave) } = ask {
                self.leave = Some(leave);
            }
            return;
        };
        match ask {
            Ask::OpenSetup => self.open_path(path),
            Ask::SaveSetup { then } => self.write_setup_then(ctx, path, then),
            Ask::SaveCheckpoint => self.send(Command::SaveCheckpoint(path)),
            Ask::LoadCheckpoint => self.send(Command::LoadCheckpoint(path)),
            Ask::ExportCsv => self.export_csv(&path),
            Ask::SavePicture => self.request_screenshot(ctx, path),
        }
    }

    /// Saves the form's setup to its file, or asks for one (always with `ask`); then goes on
    /// with `then`. If the setup cannot be saved, the leave question is asked again.
    fn save_setup(&mut self, ctx: &egui::Context, ask: bool, then: Option<Leave>) {
        let (_, errors) = self.form.draft();
        if !errors.is_empty() {
            self.status.message = Some((
                "The form has fields that are not numbers; fix them before saving.".into(),
                true,
            ));
            self.leave = then;
            return;
        }
        match (&self.setup_path, ask) {
            (Some(p), false) => {
                let p = p.clone();
                self.write_setup_then(ctx, p, then);
            }
            _ => {
                let current = self.setup_path.clone();
                self.ask_file(ctx, Ask::SaveSetup { then }, move || {
                    files::pick_setup_to_save(current.as_deref())
                });
            }
        }
    }

    fn write_setup_then(&mut self, ctx: &egui::Context, path: PathBuf, then: Option<Leave>) {
        let (draft, _) = self.form.draft();
        match files::write_setup(&path, &draft) {
            Ok(()) => {
                self.status.message = Some((format!("Setup saved to {}", path.display()), false));
                self.saved = Some(draft);
                self.setup_path = Some(path);
                if let Some(leave) = then {
                    self.do_leave(ctx, leave);
                }
            }
            Err(e) => {
                self.status.message = Some((format!("Could not save the setup: {e}"), true));
                self.leave = then;
            }
        }
    }

    fn export_csv(&mut self, path: &std::path::Path) {
        let (samples, stride) = self.plots.export_log();
        match files::write_csv(path, samples, self.plots.units()) {
            Ok(n) => {
                let note = if stride > 1 {
                    format!(" (long run: every {stride}th sample kept)")
                } else {
                    String::new()
                };
                self.status.message =
                    Some((format!("Exported {n} samples to {}{note}", path.display()), false));
            }
            Err(e) => self.status.message = Some((format!("Could not export: {e}"), true)),
        }
    }

    /// Asks the integration for a picture of the next frame, to be written to `path`.
    pub fn request_screenshot(&mut self, ctx: &egui::Context, path: PathBuf) {
        let tx = self.shot_tx.clone();
        let c = ctx.clone();
        self.shot_target = Some(path);
        ctx.request_screenshot(move |img| {
            let _ = tx.send(img);
            c.request_repaint();
        });
    }

    fn receive_screenshot(&mut self) -> Option<Result<String, String>> {
        let img = self.shot_rx.try_recv().ok()?;
        let path = self.shot_target.take()?;
        Some(match files::write_png(&path, &img) {
            Ok(()) => Ok(path.display().to_string()),
            Err(e) => Err(e),
        })
    }

    fn keys(&mut self, ctx: &egui::Context) {
        let typing = ctx.egui_wants_keyboard_input();
        let (space, step, reset, help, open, save, shot, v1, v2, v3) = ctx.input_mut(|i| {
            let cmd = egui::Modifiers::COMMAND;
            (
                !typing && i.consume_key(egui::Modifiers::NONE, egui::Key::Space),
                !typing && i.consume_key(egui::Modifiers::NONE, egui::Key::S),
                !typing && i.consume_key(egui::Modifiers::NONE, egui::Key::R),
                i.consume_key(egui::Modifiers::NONE, egui::Key::F1)
                    || (!typing
                        && i.events
                            .iter()
                            .any(|e| matches!(e, egui::Event::Text(t) if t == "?"))),
                i.consume_key(cmd, egui::Key::O),
                i.consume_key(cmd, egui::Key::S),
                i.consume_key(cmd, egui::Key::P),
                i.consume_key(cmd, egui::Key::Num1),
                i.consume_key(cmd, egui::Key::Num2),
                i.consume_key(cmd, egui::Key::Num3),
            )
        });
        if space {
            self.toggle_run();
        }
        if step {
            self.send(Command::StepOnce);
        }
        if reset {
            self.send(Command::Reset);
        }
        if help {
            self.help_open = !self.help_open;
        }
        if open {
            self.request_leave(ctx, Leave::OpenDialog);
        }
        if save {
            self.save_setup(ctx, false, None);
        }
        if shot {
            self.ask_file(ctx, Ask::SavePicture, files::pick_png_to_save);
        }
        if v1 {
            self.view.settings.mode = ViewMode::Box3d;
        }
        if v2 {
            self.view.settings.mode = ViewMode::Slab;
        }
        if v3 {
            self.form_open = !self.form_open;
        }
    }

    fn top_bar(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                if ui.button("Open setup…  (Ctrl+O)").clicked() {
                    ui.close();
                    self.request_leave(&ctx, Leave::OpenDialog);
                }
                if ui.button("Open the bundled krypton scenario").clicked() {
                    ui.close();
                    self.request_leave(&ctx, Leave::OpenBundled);
                }
                if ui.button("Save setup  (Ctrl+S)").clicked() {
                    ui.close();
                    self.save_setup(&ctx, false, None);
                }
                if ui.button("Save setup as…").clicked() {
                    ui.close();
                    self.save_setup(&ctx, true, None);
                }
                ui.separator();
                if ui.button("Save checkpoint…").clicked() {
                    ui.close();
                    self.ask_file(&ctx, Ask::SaveCheckpoint, files::pick_checkpoint_to_save);
                }
                if ui.button("Load checkpoint…").clicked() {
                    ui.close();
                    self.ask_file(&ctx, Ask::LoadCheckpoint, files::pick_checkpoint_to_open);
                }
                ui.separator();
                if ui.button("Export energy log (CSV)…").clicked() {
                    ui.close();
                    self.ask_file(&ctx, Ask::ExportCsv, files::pick_csv_to_save);
                }
                if ui.button("Save picture of the window (PNG)…  (Ctrl+P)").clicked() {
                    ui.close();
                    self.ask_file(&ctx, Ask::SavePicture, files::pick_png_to_save);
                }
                ui.separator();
                if ui.button("Quit").clicked() {
                    ui.close();
                    self.request_leave(&ctx, Leave::Close);
                }
            });
            ui.separator();
            let running = self.status.status.running;
            let label = if running { "Pause" } else { "Run" };
            if ui.button(label).on_hover_text("Space").clicked() {
                self.toggle_run();
            }
            if ui.button("Step").on_hover_text("S: one step").clicked() {
                self.send(Command::StepOnce);
            }
            if ui
                .button("Reset")
                .on_hover_text("R: restart the present setup from step 0")
                .clicked()
            {
                self.send(Command::Reset);
            }
            ui.separator();
            ui.toggle_value(&mut self.form_open, "Setup form")
                .on_hover_text("Ctrl+3: show or hide the setup form");
            ui.toggle_value(&mut self.tuning_open, "Tuning")
                .on_hover_text("scan timesteps and cutoffs before a long run");
            if ui.button("Help").on_hover_text("F1").clicked() {
                self.help_open = !self.help_open;
            }
            ui.separator();
            let title = if self.running.title.is_empty() {
                "untitled setup".to_string()
            } else {
                self.running.title.clone()
            };
            let edited = if self.has_unkept_edits() { " · edited" } else { "" };
            ui.weak(format!("{title} · {} atoms{edited}", self.atoms));
        });
    }

    fn confirm_leave(&mut self, ctx: &egui::Context) {
        let Some(leave) = self.leave.clone() else { return };
        let what = match &leave {
            Leave::Close => "closing the window",
            Leave::OpenDialog | Leave::OpenPath(_) | Leave::OpenBundled => "opening another setup",
        };
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("confirm-leave")).show(ctx, |ui| {
            ui.heading("Keep your edits?");
            ui.label(format!("The setup form has edits that are not applied or not saved to a file. They will be lost by {what}."));
            ui.horizontal(|ui| {
                if ui.button("Save setup first").clicked() {
                    answer = Some(1);
                }
                if ui.button("Discard edits").clicked() {
                    answer = Some(2);
                }
                if ui.button("Cancel").clicked() {
                    answer = Some(0);
                }
            });
        });
        match answer {
            Some(0) => self.leave = None,
            Some(1) => {
                self.leave = None;
                self.save_setup(ctx, false, Some(leave));
            }
            Some(2) => {
                self.leave = None;
                self.do_leave(ctx, leave);
            }
            _ => {}
        }
    }

    fn watch_step(&mut self, ctx: &egui::Context) {
        if self.watch_done {
            return;
        }
        let Some((plan, rec, _)) = &mut self.watch else {
            return;
        };
        if plan.run && self.frames_drawn == 1 {
            if let Some(e) = &self.engine {
                e.send(Command::Run);
            }
            self.status.status.running = true;
        }
        let Some(n) = plan.frames else { return };
        rec.frame(Instant::now());
        // With `--view tuning` the picture waits for the scan's results.
        if self.shot_target.is_some()
            || rec.measured() < n as usize
            || self.tune_at_start
            || self.tuning.scanning()
        {
            return;
        }
        match plan.screenshot.clone() {
            Some(p) => {
                if !self.frame.is_empty() {
                    self.watch_done = true;
                    self.request_screenshot(ctx, p);
                }
            }
            None => {
                self.watch_done = true;
                self.finish_watch(ctx, None);
            }
        }
    }

    fn finish_watch(&mut self, ctx: &egui::Context, shot: Option<Result<String, String>>) {
        let Some((plan, rec, view)) = &self.watch else {
            return;
        };
        let shot_name = match &shot {
            Some(Ok(p)) => Some(p.clone()),
            Some(Err(e)) => {
                eprintln!("error: screenshot: {e}");
                None
            }
            None => None,
        };
        let report = rec.report(self.atoms, view, shot_name);
        eprintln!(
            "watch: {} frames, frame time p50 {:.1} ms, p95 {:.1} ms, max {:.1} ms; {:.3e} atom-steps/s while displayed",
            report.frames,
            report.frame_time_p50_ms,
            report.frame_time_p95_ms,
            report.frame_time_max_ms,
            report.atom_steps_per_second
        );
        if let Some(path) = &plan.report {
            let text = serde_json::to_string_pretty(&report).expect("a report serialises");
            if let Err(e) = std::fs::write(path, text) {
                eprintln!("error: {}: {e}", path.display());
            }
        }
        self.allow_close = true;
        ctx.send_viewport_cmd(egui::ViewportCommand::Close);
    }

    /// Draws the whole window into `ui` (eframe's root ui or a test harness's).
    pub fn show(&mut self, ui: &mut egui::Ui) {
        let started = Instant::now();
        self.show_inner(ui);
        if let Some((_, rec, _)) = &mut self.watch {
            rec.build_time(started.elapsed());
        }
    }

    fn show_inner(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        if self.engine.is_none() {
            self.start_engine(&ctx);
        }
        self.frames_drawn += 1;
        self.drain_events();
        if self.status.status.running || self.watch.is_some() {
            ctx.request_repaint_after(RUNNING_FRAME_INTERVAL);
        }
        if let Some(e) = &self.engine {
            e.take_frame(&mut self.frame);
        }
        if let Some(r) = self.receive_screenshot() {
            if self.watch.is_some() && self.watch_done {
                self.finish_watch(&ctx, Some(r));
            } else {
                self.status.message = Some(match r {
                    Ok(p) => (format!("Picture saved to {p}"), false),
                    Err(e) => (format!("Could not save the picture: {e}"), true),
                });
            }
        }
        self.answer_dialog(&ctx);
        self.keys(&ctx);
        self.watch_step(&ctx);

        // Leaving: closing the window or dropping a file asks first when edits would be lost.
        if ctx.input(|i| i.viewport().close_requested()) && !self.allow_close && self.has_unkept_edits() {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.leave = Some(Leave::Close);
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

        // Panels are not filled: the window is cleared to the panel colour once, which saves
        // software renderers a full-window blend per panel.
        let bare = |f: egui::Frame| f.fill(egui::Color32::TRANSPARENT);
        let style = ui.style().clone();
        egui::Panel::top("top-bar")
            .frame(bare(egui::Frame::side_top_panel(&style)))
            .show(ui, |ui| self.top_bar(ui));
        egui::Panel::bottom("status-bar")
            .frame(bare(egui::Frame::side_top_panel(&style)))
            .show(ui, |ui| {
                self.status.show(ui, self.running.units());
                ui.horizontal_wrapped(|ui| {
                    ui.label(
                        egui::RichText::new("About these numbers:")
                            .small()
                            .color(palette::CAUTION_TEXT),
                    );
                    ui.label(egui::RichText::new(MODEL_CAUTION).small().weak());
                });
            });
        if self.form_open {
            egui::Panel::left("setup-form")
                .frame(bare(egui::Frame::side_top_panel(&style)))
                .resizable(true)
                .default_size(430.0)
                .min_size(300.0)
                .show(ui, |ui| {
                    ui.heading("Setup");
                    egui::ScrollArea::vertical().show(ui, |ui| {
                        let running = self.running.clone();
                        if let Some(a) = self.form.show(ui, &running) {
                            self.apply_form(a);
                        }
                    });
                });
        }
        if self.tuning_open {
            if self.tune_at_start && self.atoms > 0 {
                self.tune_at_start = false;
                match self.tuning.request(&self.running) {
                    Ok(c) => {
                        let start = self.tuning.start_requested(c);
                        self.tuning_action(start);
                    }
                    Err(e) => self.tuning.rejected(e),
                }
            }
            egui::Panel::right("tuning-panel")
                .frame(bare(egui::Frame::side_top_panel(&style)))
                .resizable(true)
                .default_size(580.0)
                .min_size(380.0)
                .show(ui, |ui| {
                    ui.heading("Timestep and cutoff tuning");
                    egui::ScrollArea::vertical().show(ui, |ui| {
                        let running = self.running.clone();
                        if let Some(a) = self.tuning.show(ui, &running) {
                            self.tuning_action(a);
                        }
                    });
                });
        }
        egui::CentralPanel::default()
            .frame(bare(egui::Frame::central_panel(&style)))
            .show(ui, |ui| {
                if self.status.alarm_banner(ui) {
                    self.send(Command::Rewind);
                }
                for note in self.running.cautions() {
                    ui.colored_label(palette::CAUTION_TEXT, format!("Note: {note}"));
                }
                let h = ui.available_height();
                let w = ui.available_width();
                let units = self.running.units();
                ui.allocate_ui(egui::vec2(w, (h * 0.56).max(200.0)), |ui| {
                    self.view.show(ui, &self.frame, units)
                });
                ui.separator();
                self.plots.show(ui);
            });
        help::show(&ctx, &mut self.help_open);
        self.confirm_leave(&ctx);
        if ctx.input(|i| !i.raw.hovered_files.is_empty()) {
            let screen = ctx.content_rect();
            let painter = ctx.layer_painter(egui::LayerId::new(
                egui::Order::Foreground,
                egui::Id::unique("drop-hint"),
            ));
            painter.rect_filled(screen, 0.0, egui::Color32::from_black_alpha(170));
            painter.text(
                screen.center(),
                egui::Align2::CENTER_CENTER,
                "Drop a setup file (.ron) to open it",
                egui::FontId::proportional(22.0),
                egui::Color32::WHITE,
            );
        }
    }

    fn store(&self, storage: &mut dyn eframe::Storage) {
        let (draft, errors) = self.form.draft();
        let setup = if errors.is_empty() && draft.resolve().is_ok() {
            draft
        } else {
            self.running.clone()
        };
        storage.set_string(STORAGE_SETUP, setup.to_ron());
        storage.set_string(
            STORAGE_PATH,
            self.setup_path
                .as_ref()
                .map(|p| p.display().to_string())
                .unwrap_or_default(),
        );
        if let Ok(v) = ron::to_string(&self.view.settings) {
            storage.set_string(STORAGE_VIEW, v);
        }
        storage.set_string(STORAGE_FORM_OPEN, self.form_open.to_string());
    }
}

impl eframe::App for NoblescopeApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.show(ui);
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        if self.persist {
            self.store(storage);
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
