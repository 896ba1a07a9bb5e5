//! The window's panels around the view: status bar, setup form, tuning panel, the atoms and
//! plots in the centre, and the overlays (help, leave question, drop hint); and the commands
//! the form and the tuning panel ask for.

use super::alarm_view::{self, AlarmAction, Focus};
use super::app::NoblescopeApp;
use super::help;
use super::palette;
use super::pending::Ask;
use super::plot_marks::PlotMarks;
use super::setup_form::{FormAction, SetupForm};
use super::start_line::StartDrag;
use super::structure_panel::StructureAction;
use super::timeline;
use super::tuning_panel::TuningAction;
use crate::engine::Command;
use crate::io::summary::MODEL_CAUTION;

/// Narrowest the centre (atoms and the 2×2 plots) is squeezed to by the side panels, points.
const MIN_CENTRE_WIDTH: f32 = 520.0;
/// Narrowest setup form, points.
const FORM_MIN_WIDTH: f32 = 300.0;
/// Narrowest tuning panel, points.
const TUNING_MIN_WIDTH: f32 = 380.0;
/// Narrowest averages panel, points.
const AVERAGES_MIN_WIDTH: f32 = 360.0;

impl NoblescopeApp {
    /// Draws every panel and overlay into `ui`.
    pub(super) fn panels(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        // Panels are not filled: the window is cleared to the panel colour once, which saves
        // software renderers a full-window blend per panel.
        let bare = |f: egui::Frame| f.fill(egui::Color32::TRANSPARENT);
        let style = ui.style().clone();
        egui::Panel::top("top-bar")
            .frame(bare(egui::Frame::side_top_panel(&style)))
            .show(ui, |ui| self.menu_bar(ui));
        egui::Panel::bottom("status-bar")
            .frame(bare(egui::Frame::side_top_panel(&style)))
            .show(ui, |ui| {
                self.run.status.show(ui, self.run.running.units());
                ui.horizontal_wrapped(|ui| {
                    ui.label(
                        egui::RichText::new("About these numbers:")
                            .small()
                            .color(palette::CAUTION_TEXT),
                    );
                    ui.label(egui::RichText::new(MODEL_CAUTION).small().weak());
                });
            });
        // The side panels give way before the view and plots do: each may grow only as far as
        // leaves the centre MIN_CENTRE_WIDTH (and the other panel its minimum).
        let total = ui.available_width();
        let mut form_width = 0.0;
        let averages_min = if self.averages_open {
            AVERAGES_MIN_WIDTH
        } else {
            0.0
        };
        if self.form_open {
            let others = if self.tuning_open { TUNING_MIN_WIDTH } else { 0.0 } + averages_min;
            form_width = egui::Panel::left("setup-form")
                .frame(bare(egui::Frame::side_top_panel(&style)))
                .resizable(true)
                .default_size(430.0)
                .min_size(FORM_MIN_WIDTH)
                .max_size((total - MIN_CENTRE_WIDTH - others).max(FORM_MIN_WIDTH))
                .show(ui, |ui| {
                    ui.heading("Setup");
                    egui::ScrollArea::vertical().show(ui, |ui| {
                        let running = self.run.running.clone();
                        if let Some(a) = self.run.form.show(ui, &running) {
                            self.apply_form(a);
                        }
                    });
                })
                .response
                .rect
                .width();
        }
        let mut tuning_width = 0.0;
        if self.tuning_open {
            self.start_scan_if_asked();
            tuning_width = egui::Panel::right("tuning-panel")
                .frame(bare(egui::Frame::side_top_panel(&style)))
                .resizable(true)
                .default_size(580.0)
                .min_size(TUNING_MIN_WIDTH)
                .max_size((total - form_width - averages_min - MIN_CENTRE_WIDTH).max(TUNING_MIN_WIDTH))
                .show(ui, |ui| {
                    ui.heading("Timestep and cutoff tuning");
                    // Both ways: at the panel's narrowest its tables scroll instead of spilling
                    // over the plots.
                    egui::ScrollArea::both().show(ui, |ui| {
                        let running = self.run.running.clone();
                        if let Some(a) = self.run.tuning.show(ui, &running) {
                            self.tuning_action(a);
                        }
                    });
                })
                .response
                .rect
                .width();
        }
        if self.averages_open {
            egui::Panel::right("averages-panel")
                .frame(bare(egui::Frame::side_top_panel(&style)))
                .resizable(true)
                .default_size(600.0)
                .min_size(AVERAGES_MIN_WIDTH)
                .max_size((total - form_width - tuning_width - MIN_CENTRE_WIDTH).max(AVERAGES_MIN_WIDTH))
                .show(ui, |ui| {
                    ui.heading("Averages");
                    // Vertical only: the texts wrap to the panel, the table fits its narrowest.
                    egui::ScrollArea::vertical().show(ui, |ui| {
                        if let Some(c) = self.run.averages.show(ui) {
                            self.send(c);
                        }
                    });
                });
        }
        egui::CentralPanel::default()
            .frame(bare(egui::Frame::central_panel(&style)))
            .show(ui, |ui| {
                let units = self.run.running.units();
                if let Some(alarm) = self.run.status.alarm.clone() {
                    let run = &mut self.run;
                    match alarm_view::show(ui, &alarm, run.recording.as_ref(), &mut run.scrub, units) {
                        AlarmAction::Rewind => self.send(Command::Rewind),
                        AlarmAction::Dismiss => {
                            self.run.status.alarm = None;
                            self.run.recording = None;
                        }
                        AlarmAction::None => {}
                    }
                }
                for note in self.run.running.cautions() {
                    ui.colored_label(palette::CAUTION_TEXT, format!("Note: {note}"));
                }
                let focus = self.run.status.alarm.as_ref().and_then(Focus::of);
                if let Some(f) = &focus
                    && self.focused_for != Some(f.step)
                {
                    self.focused_for = Some(f.step);
                    self.view.look_at(f, self.frame.box_length);
                }
                let shown = match (
                    &self.run.status.alarm,
                    alarm_view::scrubbed(self.run.recording.as_ref(), self.run.scrub),
                ) {
                    (Some(_), Some(f)) => f,
                    _ => &self.frame,
                };
                let cursor = self.run.status.alarm.as_ref().map(|_| shown.time_tau);
                let h = ui.available_height();
                let w = ui.available_width();
                ui.allocate_ui(egui::vec2(w, (h * 0.56).max(200.0)), |ui| {
                    self.view.show(ui, shown, units, focus.as_ref())
                });
                ui.separator();
                let alarm_mark = self.run.status.alarm.as_ref().map(|a| (a.step, a.time));
                let latest = self.run.status.status.time_tau;
                let run = &self.run;
                if let Some(step) =
                    timeline::show(ui, &run.snapshots, run.snapshot_bytes, alarm_mark, latest, units)
                {
                    self.run.status.info(format!(
                        "Going back to step {step}; change timestep, cutoff or bath in the setup form (Change live), then Run."
                    ));
                    self.send(Command::RewindTo(step));
                }
                let marks = PlotMarks::of(&self.run.averages);
                match self.run.plots.show(ui, w, cursor, &marks) {
                    Some(StartDrag::Moved(t)) if self.run.averages.dragged != Some(t) => {
                        self.run.averages.dragged = Some(t);
                        let c = self.run.averages.ask_dragged(t);
                        self.send(c);
                    }
                    Some(StartDrag::Released(t)) => {
                        self.run.averages.dragged = None;
                        let c = self.run.averages.ask_dragged(t);
                        self.send(c);
                    }
                    Some(StartDrag::Moved(_)) | None => {}
                }
            });
        if self.structure_open {
            let mut open = true;
            let running = self.run.running.clone();
            let mut asked = None;
            // Below the top bar and to the right, so Run, Step and the panel toggles stay free.
            let right = ctx.content_rect().max.x;
            egui::Window::new("Structure and motion")
                .open(&mut open)
                .default_pos(egui::pos2((right - 780.0).max(0.0), 48.0))
                .default_size([760.0, 600.0])
                .vscroll(true)
                .show(&ctx, |ui| asked = self.run.structure.show(ui, &running));
            self.structure_open = open;
            if let Some(a) = asked {
                self.structure_action(&ctx, a);
            }
        }
        help::show(&ctx, &mut self.help_open);
        self.confirm_leave(&ctx);
        drop_hint(&ctx);
    }

    /// With `--view tuning`, starts a scan of the default lists once the engine runs.
    fn start_scan_if_asked(&mut self) {
        if !(self.tune_at_start && self.run.atoms > 0) {
            return;
        }
        self.tune_at_start = false;
        match self.run.tuning.request(&self.run.running) {
            Ok(c) => {
                let start = self.run.tuning.start_requested(c);
                self.tuning_action(start);
            }
            Err(e) => self.run.tuning.rejected(e),
        }
    }

    fn apply_form(&mut self, action: FormAction) {
        match action {
            FormAction::Apply(s) => {
                self.run.status.info("Restarting with the edited setup (paused).");
                self.send(Command::Apply(s));
            }
            FormAction::ApplyLive(s) => {
                let r = &self.run.running;
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
            FormAction::Revert => self.run.form = SetupForm::from_setup(&self.run.running),
        }
    }

    fn structure_action(&mut self, ctx: &egui::Context, action: StructureAction) {
        match action {
            StructureAction::Reset => self.send(Command::ResetAnalyses),
            StructureAction::FitWindow(w) => self.send(Command::SetFitWindow(w)),
            StructureAction::MeasureInNve => {
                self.send(Command::SetThermostat {
                    ensemble: crate::io::setup::Ensemble::Nve,
                    temperature: self.run.running.temperature,
                });
                self.send(Command::ResetAnalyses);
                self.run
                    .status
                    .info("Switched to constant energy (NVE); the analyses start again from here.");
            }
            StructureAction::Picture(rect) => {
                self.ask_file(ctx, Ask::SavePlotPicture(rect), super::files::pick_png_to_save);
            }
            StructureAction::Export(file) => {
                let name = file.file_name();
                self.ask_file(ctx, Ask::ExportAnalysis(file), move || {
                    super::files::pick_analysis_csv_to_save(name)
                });
            }
        }
    }

    fn tuning_action(&mut self, action: TuningAction) {
        match action {
            TuningAction::Start(c) => {
                self.run
                    .status
                    .info("Tuning scan started on copies of the present state.");
                self.send(c);
            }
            TuningAction::Cancel => self.send(Command::CancelTune),
            TuningAction::UseTimestep(dt) => {
                let running = self.run.running.clone();
                self.run.form.timestep.show_value(&running, dt);
                self.form_open = true;
                self.run.status.info("Recommended timestep put into the setup form: press Change live or Apply and restart to use it.");
            }
            TuningAction::UseCutoff(rc) => {
                let running = self.run.running.clone();
                self.run.form.cutoff.show_value(&running, rc);
                self.form_open = true;
                self.run.status.info("Recommended cutoff put into the setup form: press Change live or Apply and restart to use it.");
            }
        }
    }
}

/// While files are dragged over the window, says that dropping a setup opens it.
fn drop_hint(ctx: &egui::Context) {
    if ctx.input(|i| i.raw.hovered_files.is_empty()) {
        return;
    }
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
