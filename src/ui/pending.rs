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
    /// Export one of the structure and motion analyses as CSV.
    ExportAnalysis(crate::engine::AnalysisFile),
}

/// Pictures of the window: asked of the integration, written to a file when they arrive.
#[derive(Debug)]
pub struct PictureTaker {
    tx: Sender<Arc<egui::ColorImage>>,
    rx: Receiver<Arc<egui::ColorImage>>,
    target: Option<PathBuf>,
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
        PictureTaker { tx, rx, target: None }
    }

    /// Asks for a picture of the next frame, to be written to `path`.
    pub fn request(&mut self, ctx: &egui::Context, path: PathBuf) {
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
        Some(files::write_png(&path, &img).map(|()| path.display().to_string()))
    }
}
