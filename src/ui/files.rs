//! Files in and out of the window: setup files, checkpoints, the energy CSV and PNG pictures.
//! Dialogs are native (rfd) and, on Linux, run on a thread of their own ([`Dialog`]) so the
//! window keeps drawing while one is open; the writers are plain functions so they can be tested.

use crate::io::setup::{Setup, SetupError};
use crate::physics::{Observables, UnitSystem};
use std::path::{Path, PathBuf};
use std::sync::mpsc::{self, Receiver, TryRecvError};

/// At most one file dialog at a time, tagged with what it was opened for.
#[derive(Debug)]
pub struct Dialog<T> {
    pending: Option<(T, Receiver<Option<PathBuf>>)>,
}

impl<T> Default for Dialog<T> {
    fn default() -> Self {
        Dialog { pending: None }
    }
}

impl<T> Dialog<T> {
    /// Whether a dialog is open (its answer has not been taken yet).
    pub fn is_open(&self) -> bool {
        self.pending.is_some()
    }

    /// Runs `pick` for `purpose` and calls `wake` once the answer is in; returns false, doing
    /// nothing, if a dialog is open already. On Linux `pick` runs on its own thread (the portal
    /// and zenity dialogs rfd uses there may run on any thread); elsewhere native dialogs
    /// belong to the main thread, so it runs at once.
    pub fn open(
        &mut self,
        purpose: T,
        wake: impl FnOnce() + Send + 'static,
        pick: impl FnOnce() -> Option<PathBuf> + Send + 'static,
    ) -> bool {
        if self.pending.is_some() {
            return false;
        }
        let (tx, rx) = mpsc::channel();
        let job = move || {
            let _ = tx.send(pick());
            wake();
        };
        if cfg!(target_os = "linux") {
            // If the thread cannot start, the sender is dropped and `poll` reports no file.
            let _ = std::thread::Builder::new()
                .name("noblescope-file-dialog".into())
                .spawn(job);
        } else {
            job();
        }
        self.pending = Some((purpose, rx));
        true
    }

    /// The purpose and the chosen path (`None`: cancelled, or the dialog failed) once the
    /// dialog has closed.
    pub fn poll(&mut self) -> Option<(T, Option<PathBuf>)> {
        let (_, rx) = self.pending.as_ref()?;
        let answer = match rx.try_recv() {
            Ok(p) => p,
            Err(TryRecvError::Empty) => return None,
            Err(TryRecvError::Disconnected) => None,
        };
        self.pending.take().map(|(purpose, _)| (purpose, answer))
    }
}

/// Asks for a sweep's output folder to open.
pub fn pick_sweep_folder() -> Option<PathBuf> {
    rfd::FileDialog::new()
        .set_title("Open a sweep's folder")
        .pick_folder()
}

/// Asks for a setup file to open.
pub fn pick_setup_to_open() -> Option<PathBuf> {
    rfd::FileDialog::new()
        .set_title("Open a setup")
        .add_filter("setup (RON)", &["ron"])
        .pick_file()
}

/// Asks where to save a setup.
pub fn pick_setup_to_save(current: Option<&Path>) -> Option<PathBuf> {
    let mut d = rfd::FileDialog::new()
        .set_title("Save the setup")
        .add_filter("setup (RON)", &["ron"]);
    if let Some(name) = current.and_then(|p| p.file_name()) {
        d = d.set_file_name(name.to_string_lossy());
    } else {
        d = d.set_file_name("setup.ron");
    }
    d.save_file()
}

/// Asks for a checkpoint to load.
pub fn pick_checkpoint_to_open() -> Option<PathBuf> {
    rfd::FileDialog::new()
        .set_title("Load a checkpoint")
        .add_filter("checkpoint", &["checkpoint"])
        .pick_file()
}

/// Asks where to save a checkpoint.
pub fn pick_checkpoint_to_save() -> Option<PathBuf> {
    rfd::FileDialog::new()
        .set_title("Save a checkpoint")
        .add_filter("checkpoint", &["checkpoint"])
        .set_file_name("window.checkpoint")
        .save_file()
}

/// Asks where to export the energy log.
pub fn pick_csv_to_save() -> Option<PathBuf> {
    rfd::FileDialog::new()
        .set_title("Export the energy log")
        .add_filter("CSV", &["csv"])
        .set_file_name("energy.csv")
        .save_file()
}

/// Asks where to export one analysis as CSV, offering its headless file name.
pub fn pick_analysis_csv_to_save(name: &'static str) -> Option<PathBuf> {
    rfd::FileDialog::new()
        .set_title("Export an analysis")
        .add_filter("CSV", &["csv"])
        .set_file_name(name)
        .save_file()
}

/// Asks where to save a picture of the window.
pub fn pick_png_to_save() -> Option<PathBuf> {
    rfd::FileDialog::new()
        .set_title("Save a picture of the window")
        .add_filter("PNG", &["png"])
        .set_file_name("noblescope.png")
        .save_file()
}

/// Reads a setup file; the error names the file (and line for syntax errors).
pub fn read_setup(path: &Path) -> Result<Setup, SetupError> {
    Setup::load(path)
}

/// Writes a setup file.
pub fn write_setup(path: &Path, setup: &Setup) -> Result<(), String> {
    std::fs::write(path, setup.to_ron()).map_err(|e| format!("{}: {e}", path.display()))
}

/// Writes the energy log; returns how many rows were written.
pub fn write_csv(path: &Path, samples: &[Observables], units: UnitSystem) -> Result<usize, String> {
    std::fs::write(path, crate::io::energy_log::to_csv(samples, units))
        .map_err(|e| format!("{}: {e}", path.display()))?;
    Ok(samples.len())
}

/// Encodes an egui image as an 8-bit RGBA PNG.
pub fn encode_png(image: &egui::ColorImage) -> Result<Vec<u8>, String> {
    let [w, h] = image.size;
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, w as u32, h as u32);
        enc.set_color(png::ColorType::Rgba);
        enc.set_depth(png::BitDepth::Eight);
        let mut writer = enc.write_header().map_err(|e| e.to_string())?;
        let bytes: Vec<u8> = image.pixels.iter().flat_map(|c| c.to_array()).collect();
        writer.write_image_data(&bytes).map_err(|e| e.to_string())?;
    }
    Ok(out)
}

/// Writes an egui image as a PNG file.
pub fn write_png(path: &Path, image: &egui::ColorImage) -> Result<(), String> {
    let bytes = encode_png(image)?;
    std::fs::write(path, bytes).map_err(|e| format!("{}: {e}", path.display()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn png_round_trips_size_and_pixels() {
        let mut img = egui::ColorImage::filled([3, 2], egui::Color32::from_rgb(10, 20, 30));
        img.pixels[4] = egui::Color32::from_rgb(200, 100, 50);
        let bytes = encode_png(&img).unwrap();
        let dec = png::Decoder::new(std::io::Cursor::new(bytes));
        let mut reader = dec.read_info().unwrap();
        let mut buf = vec![0; reader.output_buffer_size().unwrap()];
        let info = reader.next_frame(&mut buf).unwrap();
        assert_eq!((info.width, info.height), (3, 2));
        assert_eq!(&buf[16..19], &[200, 100, 50]);
        assert_eq!(&buf[0..3], &[10, 20, 30]);
    }

    fn wait<T>(d: &mut Dialog<T>) -> (T, Option<PathBuf>) {
        let until = std::time::Instant::now() + std::time::Duration::from_secs(10);
        loop {
            if let Some(answer) = d.poll() {
                return answer;
            }
            assert!(std::time::Instant::now() < until, "the dialog never answered");
            std::thread::sleep(std::time::Duration::from_millis(5));
        }
    }

    #[test]
    fn one_dialog_at_a_time_and_its_answer_keeps_its_purpose() {
        let mut d = Dialog::default();
        let (gate_tx, gate_rx) = mpsc::channel::<()>();
        let (woke_tx, woke_rx) = mpsc::channel();
        assert!(d.open(
            "open",
            move || woke_tx.send(()).unwrap(),
            move || {
                let _ = gate_rx.recv();
                Some(PathBuf::from("a.ron"))
            }
        ));
        assert!(d.is_open());
        assert!(
            !d.open("save", || {}, || Some(PathBuf::from("b.ron"))),
            "a second dialog opened"
        );
        let _ = gate_tx.send(());
        assert_eq!(wait(&mut d), ("open", Some(PathBuf::from("a.ron"))));
        woke_rx
            .recv_timeout(std::time::Duration::from_secs(10))
            .expect("the window was woken");
        assert!(!d.is_open());
        assert!(d.poll().is_none());
        // Cancelled, and a dialog that failed outright: no file, purpose kept, none left open.
        assert!(d.open("save", || {}, || None));
        assert_eq!(wait(&mut d), ("save", None));
        if cfg!(target_os = "linux") {
            assert!(d.open("load", || {}, || panic!("the dialog crashed")));
            assert_eq!(wait(&mut d), ("load", None));
        }
        assert!(!d.is_open());
    }
}
