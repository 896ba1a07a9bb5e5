//! The bar at the top of the window: the File menu, Run / Step / Reset, the panel toggles, and
//! the title of the running setup. Key labels come from [`super::shortcuts`].

use super::app::NoblescopeApp;
use super::files;
use super::leave::Leave;
use super::pending::Ask;
use super::shortcuts::{Action, hint_of, keys_of};
use crate::engine::Command;

/// A menu item showing its shortcut at the right.
fn item(ctx: &egui::Context, text: &str, action: Action) -> egui::Button<'static> {
    egui::Button::new(text.to_string()).shortcut_text(keys_of(ctx, action))
}

impl NoblescopeApp {
    pub(super) fn menu_bar(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| self.file_menu(ui, &ctx));
            ui.separator();
            let label = if self.run.status.status.running {
                "Pause"
            } else {
                "Run"
            };
            if ui
                .button(label)
                .on_hover_text(hint_of(&ctx, Action::RunPause))
                .clicked()
            {
                self.toggle_run();
            }
            if ui
                .button("Step")
                .on_hover_text(hint_of(&ctx, Action::StepOnce))
                .clicked()
            {
                self.send(Command::StepOnce);
            }
            if ui
                .button("Reset")
                .on_hover_text(hint_of(&ctx, Action::Reset))
                .clicked()
            {
                self.send(Command::Reset);
            }
            ui.separator();
            ui.toggle_value(&mut self.form_open, "Setup form")
                .on_hover_text(hint_of(&ctx, Action::ToggleSetupForm));
            ui.toggle_value(&mut self.tuning_open, "Tuning")
                .on_hover_text("scan timesteps and cutoffs before a long run");
            ui.toggle_value(&mut self.structure_open, "Structure and motion")
                .on_hover_text(
                    "g(r), mean squared displacement, velocity autocorrelation, speeds and D, live",
                );
            ui.toggle_value(&mut self.averages_open, "Averages")
                .on_hover_text("means with their errors, and whether the run has equilibrated");
            if ui
                .button("Help")
                .on_hover_text(hint_of(&ctx, Action::ToggleHelp))
                .clicked()
            {
                self.help_open = !self.help_open;
            }
            ui.separator();
            let title = if self.run.running.title.is_empty() {
                "untitled setup".to_string()
            } else {
                self.run.running.title.clone()
            };
            let edited = if self.has_unkept_edits() { " · edited" } else { "" };
            ui.weak(format!("{title} · {} atoms{edited}", self.run.atoms));
        });
    }

    fn file_menu(&mut self, ui: &mut egui::Ui, ctx: &egui::Context) {
        if ui.add(item(ctx, "Open setup…", Action::OpenSetup)).clicked() {
            ui.close();
            self.request_leave(ctx, Leave::OpenDialog);
        }
        if ui.button("Open the bundled krypton scenario").clicked() {
            ui.close();
            self.request_leave(ctx, Leave::OpenBundled);
        }
        if ui.add(item(ctx, "Save setup", Action::SaveSetup)).clicked() {
            ui.close();
            self.save_setup(ctx, false, None);
        }
        if ui.button("Save setup as…").clicked() {
            ui.close();
            self.save_setup(ctx, true, None);
        }
        if ui
            .button("Open sweep folder…")
            .on_hover_text("A folder written by `noblescope sweep`: its points as a table and a plot")
            .clicked()
        {
            ui.close();
            self.ask_file(ctx, Ask::OpenSweep, files::pick_sweep_folder);
        }
        ui.separator();
        if ui.button("Save checkpoint…").clicked() {
            ui.close();
            self.ask_file(ctx, Ask::SaveCheckpoint, files::pick_checkpoint_to_save);
        }
        if ui.button("Load checkpoint…").clicked() {
            ui.close();
            self.ask_file(ctx, Ask::LoadCheckpoint, files::pick_checkpoint_to_open);
        }
        ui.separator();
        if ui.button("Export energy log (CSV)…").clicked() {
            ui.close();
            self.ask_file(ctx, Ask::ExportCsv, files::pick_csv_to_save);
        }
        if ui
            .add(item(
                ctx,
                "Save picture of the window (PNG)…",
                Action::SavePicture,
            ))
            .clicked()
        {
            ui.close();
            self.ask_file(ctx, Ask::SavePicture, files::pick_png_to_save);
        }
        ui.separator();
        if ui.button("Quit").clicked() {
            ui.close();
            self.request_leave(ctx, Leave::Close);
        }
    }
}
