//! What the window does with files: open and save setups (asking first when edits would be
//! lost), checkpoints, the energy log and pictures of the window. The native dialogs do not
//! block the window: each asks through [`files::Dialog`] and is answered in
//! [`NoblescopeApp::answer_dialog`] once it has closed.

use super::app::NoblescopeApp;
use super::files;
use super::leave::{self, Leave, LeaveStep};
use super::pending::Ask;
use super::setup_form::SetupForm;
use super::start::{BUNDLED_NAME, bundled_setup};
use super::sweep_view::SweepView;
use crate::engine::Command;
use crate::io::setup::Setup;
use std::path::{Path, PathBuf};

impl NoblescopeApp {
    /// Asks before `leave` if edits would be lost, else does it.
    pub(super) fn request_leave(&mut self, ctx: &egui::Context, leave: Leave) {
        let lose = self.has_unkept_edits();
        let step = self.leave.request(leave, lose);
        self.follow(ctx, step);
    }

    /// Shows the leave question while one is open, and follows its answer.
    pub(super) fn confirm_leave(&mut self, ctx: &egui::Context) {
        let Some(pending) = self.leave.pending() else {
            return;
        };
        if let Some(answer) = leave::ask_keep_edits(ctx, pending) {
            let step = self.leave.answer(answer);
            self.follow(ctx, step);
        }
    }

    fn follow(&mut self, ctx: &egui::Context, step: LeaveStep) {
        match step {
            LeaveStep::Stay => {}
            LeaveStep::Go(leave) => self.do_leave(ctx, leave),
            LeaveStep::SaveThen(leave) => self.save_setup(ctx, false, Some(leave)),
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
            Err(e) => self.run.status.error(format!("Could not open the setup: {e}")),
        }
    }

    /// Shows `s` in the form and, if valid, restarts the engine on it (paused).
    fn open_setup(&mut self, s: Setup, path: Option<PathBuf>, name: &str) {
        self.run.form = SetupForm::from_setup(&s);
        self.saved = Some(s.clone());
        self.setup_path = path;
        match s.resolve_for_this_machine() {
            Ok(_) => {
                self.run
                    .status
                    .info(format!("Opened {name} (paused; press Space to run)."));
                self.send(Command::Apply(Box::new(s)));
            }
            Err(e) => {
                self.form_open = true;
                self.run.status.error(format!(
                    "{name} has an error: {e}. The running simulation is unchanged."
                ));
            }
        }
    }

    /// Opens a file dialog for `ask`; its answer is handled in `answer_dialog`.
    pub(super) fn ask_file(
        &mut self,
        ctx: &egui::Context,
        ask: Ask,
        pick: impl FnOnce() -> Option<PathBuf> + Send + 'static,
    ) {
        let c = ctx.clone();
        if !self.dialog.open(ask, move || c.request_repaint(), pick) {
            self.run
                .status
                .error("A file dialog is open already; finish it first.");
        }
    }

    /// Acts on the file dialog's answer once it has closed.
    pub(super) fn answer_dialog(&mut self, ctx: &egui::Context) {
        let Some((ask, path)) = self.dialog.poll() else {
            return;
        };
        let Some(path) = path else {
            // Cancelled: a leave question waiting on the save is asked again.
            if let Ask::SaveSetup { then: Some(leave) } = ask {
                self.leave.ask_again(Some(leave));
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
            Ask::OpenSweep => self.open_sweep(&path),
            Ask::ExportAnalysis(file) => self.send(Command::SaveAnalysis { file, path }),
            Ask::SavePlotPicture(rect) => self.pictures.request_region(ctx, path, rect),
        }
    }

    /// Saves the form's setup to its file, or asks for one (always with `ask`); then goes on
    /// with `then`. If the setup cannot be saved, the leave question is asked again.
    pub(super) fn save_setup(&mut self, ctx: &egui::Context, ask: bool, then: Option<Leave>) {
        let (_, errors) = self.run.form.draft();
        if !errors.is_empty() {
            self.run
                .status
                .error("The form has fields that are not numbers; fix them before saving.");
            self.leave.ask_again(then);
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
        let (draft, _) = self.run.form.draft();
        match files::write_setup(&path, &draft) {
            Ok(()) => {
                self.run.status.info(format!("Setup saved to {}", path.display()));
                self.saved = Some(draft);
                self.setup_path = Some(path);
                if let Some(leave) = then {
                    self.do_leave(ctx, leave);
                }
            }
            Err(e) => {
                self.run.status.error(format!("Could not save the setup: {e}"));
                self.leave.ask_again(then);
            }
        }
    }

    /// Opens a sweep's folder in the sweep window.
    pub(super) fn open_sweep(&mut self, dir: &Path) {
        match SweepView::load(dir) {
            Ok(v) => {
                self.run.status.info(format!(
                    "Opened the sweep in {} ({} points)",
                    dir.display(),
                    v.table.tally.points
                ));
                self.sweep = Some(v);
            }
            Err(e) => self.run.status.error(format!("Could not open the sweep: {e}")),
        }
    }

    pub(super) fn export_csv(&mut self, path: &Path) {
        let (samples, stride) = self.run.plots.export_log();
        match files::write_csv(path, samples, self.run.plots.units()) {
            Ok(n) => {
                let note = if stride > 1 {
                    format!(" (long run: every {stride}th sample kept)")
                } else {
                    String::new()
                };
                self.run
                    .status
                    .info(format!("Exported {n} samples to {}{note}", path.display()));
            }
            Err(e) => self.run.status.error(format!("Could not export: {e}")),
        }
    }
}
