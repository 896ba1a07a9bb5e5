//! What the window waits for across frames: the purpose of the open file dialog, and a picture
//! of the window asked of the integration.

use super::files;
use super::leave::Leave;
use std::path::PathBuf;
use std::sync::Arc;
use std::sync::mpsc::{self, Receiver, Sender};

/// What the open file dialog is for.
#[derive(Clone, Debug, PartialEq)]
pub enum Ask {
    /// Open a setup file.
    OpenSetup,
    /// Save the form's setup, then go on with `then` (the answer to a leave question).
    SaveSetup {
        /// What to do once saved.
        then: Option<Leave>,
    },
    /// Write a checkpoint.
    SaveCheckpoint,
    /// Continue from a checkpoint.
    LoadCheckpoint,
    /// Export the energy log as CSV.
    ExportCsv,
    /// Save a PNG picture of the window.
    SavePicture,
    /// Open a sweep's output folder.
    OpenSweep,
    /// Export one of the structure and motion analyses as CSV.
    ExportAnalysis(crate::engine::AnalysisFile),
    /// Save a PNG picture of this part of the window (points), e.g. one plot.
    SavePlotPicture(egui::Rect),
}

/// Pictures of the window: asked of the integration, written to a file when they arrive.
#[derive(Debug)]
pub struct PictureTaker {
    tx: Sender<Arc<egui::ColorImage>>,
    rx: Receiver<Arc<egui::ColorImage>>,
    target: Option<PathBuf>,
    /// Part of the window to keep, in pixels (None: all of it).
    region: Option<egui::Rect>,
}

impl Default for PictureTaker {
    fn default() -> Self {
        Self::new()
    }
}

impl PictureTaker {
    /// Takes no picture yet.
    pub fn new() -> Self {
        let (tx, rx) = mpsc::channel();
        PictureTaker {
            tx,
            rx,
            target: None,
            region: None,
        }
    }

    /// Asks for a picture of the next frame, to be written to `path`.
    pub fn request(&mut self, ctx: &egui::Context, path: PathBuf) {
        self.region = None;
        self.ask(ctx, path);
    }

    /// Asks for a picture of `rect` (points) of the next frame, to be written to `path`.
    pub fn request_region(&mut self, ctx: &egui::Context, path: PathBuf, rect: egui::Rect) {
        let ppp = ctx.pixels_per_point();
        self.region = Some(egui::Rect::from_min_max(
            (rect.min.to_vec2() * ppp).to_pos2(),
            (rect.max.to_vec2() * ppp).to_pos2(),
        ));
        self.ask(ctx, path);
    }

    fn ask(&mut self, ctx: &egui::Context, path: PathBuf) {
        let tx = self.tx.clone();
        let c = ctx.clone();
        self.target = Some(path);
        ctx.request_screenshot(move |img| {
            let _ = tx.send(img);
            c.request_repaint();
        });
    }

    /// Whether a picture was asked for and not yet written.
    pub fn pending(&self) -> bool {
        self.target.is_some()
    }

    /// Writes the picture if it has arrived: the path written, or why it could not be.
    pub fn receive(&mut self) -> Option<Result<String, String>> {
        let img = self.rx.try_recv().ok()?;
        let path = self.target.take()?;
        let written = match self.region.take() {
            Some(r) => {
                // Clamped to the picture, so a part that has moved off the window cannot fail.
                let (w, h) = (img.width() as f32, img.height() as f32);
                let x0 = r.min.x.clamp(0.0, w) as usize;
                let y0 = r.min.y.clamp(0.0, h) as usize;
                let x1 = (r.max.x.clamp(0.0, w) as usize).max(x0 + 1).min(img.width());
                let y1 = (r.max.y.clamp(0.0, h) as usize).max(y0 + 1).min(img.height());
                if x0 >= x1 || y0 >= y1 {
                    return Some(Err("the plot is not on the window".into()));
                }
                files::write_png(&path, &img.region_by_pixels([x0, y0], [x1 - x0, y1 - y0]))
            }
            None => files::write_png(&path, &img),
        };
        Some(written.map(|()| path.display().to_string()))
    }
}

#[cfg(test)]
mod picture_tests {
    use super::*;

    #[test]
    fn a_region_picture_keeps_that_part_clamped_to_the_window() {
        let dir = std::env::temp_dir().join(format!("noblescope-region-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let mut p = PictureTaker::new();
        let img = Arc::new(egui::ColorImage::filled(
            [40, 30],
            egui::Color32::from_rgb(1, 2, 3),
        ));
        for (rect, want) in [
            (
                egui::Rect::from_min_max(egui::pos2(5.0, 6.0), egui::pos2(25.0, 16.0)),
                (20, 10),
            ),
            // Partly off the window: cut at its edge.
            (
                egui::Rect::from_min_max(egui::pos2(30.0, 20.0), egui::pos2(90.0, 90.0)),
                (10, 10),
            ),
        ] {
            let path = dir.join("plot.png");
            p.target = Some(path.clone());
            p.region = Some(rect);
            p.tx.send(img.clone()).unwrap();
            assert!(p.receive().unwrap().is_ok());
            let dec = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&path).unwrap()));
            let info = dec.read_info().unwrap();
            assert_eq!((info.info().width, info.info().height), want);
        }
        let _ = std::fs::remove_dir_all(&dir);
    }
}
