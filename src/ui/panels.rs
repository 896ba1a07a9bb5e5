//! The window's panels around the view: status bar, setup form, tuning panel, the atoms and
//! plots in the centre, and the overlays (help, leave question, drop hint); and the commands
//! the form and the tuning panel ask for.

use super::app::NoblescopeApp;
use super::help;
use super::palette;
use super::plot_marks::PlotMarks;
use super::setup_form::{FormAction, SetupForm};
use super::start_line::StartDrag;
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
                if self.run.status.alarm_banner(ui) {
                    self.send(Command::Rewind);
                }
                for note in self.run.running.cautions() {
                    ui.colored_label(palette::CAUTION_TEXT, format!("Note: {note}"));
                }
                let h = ui.available_height();
                let w = ui.available_width();
                let units = self.run.running.units();
                ui.allocate_ui(egui::vec2(w, (h * 0.56).max(200.0)), |ui| {
                    self.view.show(ui, &self.frame, units)
                });
                ui.separator();
                let marks = PlotMarks::of(&self.run.averages);
                match self.run.plots.show(ui, w, &marks) {
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
