//! Files in and out of the window: setup files, checkpoints, the energy CSV and PNG pictures.
//! Dialogs are native (rfd); the writers are plain functions so they can be tested.

use crate::io::setup::{Setup, SetupError};
use crate::physics::{Observables, UnitSystem};
use std::path::{Path, PathBuf};

/// Asks for a setup file to open.
pub fn pick_setup_to_open() -> Option<PathBuf> {
    rfd::FileDialog::new().set_title("Open a setup").add_filter("setup (RON)", &["ron"]).pick_file()
}

/// Asks where to save a setup.
pub fn pick_setup_to_save(current: Option<&Path>) -> Option<PathBuf> {
    let mut d = rfd::FileDialog::new().set_title("Save the setup").add_filter("setup (RON)", &["ron"]);
    if let Some(name) = current.and_then(|p| p.file_name()) {
        d = d.set_file_name(name.to_string_lossy());
    } else {
        d = d.set_file_name("setup.ron");
    }
    d.save_file()
}

/// Asks for a checkpoint to load.
pub fn pick_checkpoint_to_open() -> Option<PathBuf> {
    rfd::FileDialog::new().set_title("Load a checkpoint").add_filter("checkpoint", &["checkpoint"]).pick_file()
}

/// Asks where to save a checkpoint.
pub fn pick_checkpoint_to_save() -> Option<PathBuf> {
    rfd::FileDialog::new().set_title("Save a checkpoint").add_filter("checkpoint", &["checkpoint"]).set_file_name("window.checkpoint").save_file()
}

/// Asks where to export the energy log.
pub fn pick_csv_to_save() -> Option<PathBuf> {
    rfd::FileDialog::new().set_title("Export the energy log").add_filter("CSV", &["csv"]).set_file_name("energy.csv").save_file()
}

/// Asks where to save a picture of the window.
pub fn pick_png_to_save() -> Option<PathBuf> {
    rfd::FileDialog::new().set_title("Save a picture of the window").add_filter("PNG", &["png"]).set_file_name("noblescope.png").save_file()
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
    std::fs::write(path, crate::io::energy_log::to_csv(samples, units)).map_err(|e| format!("{}: {e}", path.display()))?;
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
}
