//! Scripted watching inside the window: each frame's step of a [`WatchPlan`](super::watch::WatchPlan)
//! (start the run, take the picture, finish) and the report at the end.

use super::app::NoblescopeApp;
use super::watch::WatchNext;
use crate::engine::Command;
use std::time::Instant;

impl NoblescopeApp {
    /// Takes the scripted watch's step for this frame: start the run, take the picture, finish.
    pub(super) fn watch_step(&mut self, ctx: &egui::Context) {
        let Some(w) = &mut self.watch else { return };
        if w.starts_run_now(self.frames_drawn) {
            if let Some(e) = &self.engine {
                e.send(Command::Run);
            }
            self.run.status.status.running = true;
        }
        // With `--view tuning` the picture waits for the scan's results.
        let waiting = self.pictures.pending() || self.tune_at_start || self.run.tuning.scanning();
        match w.step(Instant::now(), waiting, !self.frame.is_empty()) {
            WatchNext::Wait => {}
            WatchNext::Screenshot(p) => self.request_screenshot(ctx, p),
            WatchNext::Finish => self.finish_watch(ctx, None),
        }
    }

    /// Writes the watch's report and closes the window.
    pub(super) fn finish_watch(&mut self, ctx: &egui::Context, shot: Option<Result<String, String>>) {
        let Some(w) = &self.watch else { return };
        w.finish(self.run.atoms, shot);
        self.allow_close = true;
        ctx.send_viewport_cmd(egui::ViewportCommand::Close);
    }
}
