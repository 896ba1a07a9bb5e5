//! Noblescope's own colours: a calm set that stays apart for the common forms of colour
//! blindness (the species hues differ in lightness as well as hue) and a sequential ramp whose
//! lightness rises monotonically, so scalar colourings also read in greyscale.

use crate::physics::Species;
use egui::Color32;

/// Colour of a species in the particle views and legends.
pub fn species_colour(s: Species) -> Color32 {
    match s {
        Species::Helium => Color32::from_rgb(0xF3, 0xD3, 0x6B), // straw
        Species::Neon => Color32::from_rgb(0xE0, 0x7A, 0x5F),   // clay
        Species::Argon => Color32::from_rgb(0x3E, 0x74, 0xB8),  // lake
        Species::Krypton => Color32::from_rgb(0x8F, 0xC4, 0x8F), // moss
        Species::Xenon => Color32::from_rgb(0xB4, 0x8C, 0xD8),  // heather
        Species::ReducedLJ => Color32::from_rgb(0xB8, 0xBE, 0xC8), // slate
        // Custom species: one of three more hues, picked by the name, so two custom species
        // of a mixture usually differ (the legend names them either way).
        Species::Custom { name, .. } => {
            let h = name
                .as_str()
                .bytes()
                .fold(0u32, |h, b| h.wrapping_mul(31).wrapping_add(b as u32));
            [
                Color32::from_rgb(0xC9, 0x7B, 0x4A), // copper
                Color32::from_rgb(0x4F, 0xB3, 0xB0), // teal
                Color32::from_rgb(0xD9, 0x8F, 0xB0), // rose
            ][(h % 3) as usize]
        }
    }
}

/// Stops of the scalar ramp, dark to light: ink, deep sea, reed, dune, shell.
const RAMP: [[f32; 3]; 5] = [
    [0.13, 0.15, 0.33],
    [0.16, 0.40, 0.52],
    [0.38, 0.63, 0.50],
    [0.84, 0.76, 0.42],
    [0.97, 0.93, 0.82],
];

/// Colour of `t` in [0, 1] on the scalar ramp (values outside are clamped).
pub fn ramp(t: f32) -> [f32; 3] {
    let t = if t.is_finite() { t.clamp(0.0, 1.0) } else { 0.0 };
    let x = t * (RAMP.len() - 1) as f32;
    let i = (x.floor() as usize).min(RAMP.len() - 2);
    let f = x - i as f32;
    let (a, b) = (RAMP[i], RAMP[i + 1]);
    [
        a[0] + (b[0] - a[0]) * f,
        a[1] + (b[1] - a[1]) * f,
        a[2] + (b[2] - a[2]) * f,
    ]
}

/// [`ramp`] as an egui colour.
pub fn ramp_colour(t: f32) -> Color32 {
    let c = ramp(t);
    Color32::from_rgb((c[0] * 255.0) as u8, (c[1] * 255.0) as u8, (c[2] * 255.0) as u8)
}

/// Species colour as linear-ish floats for the sphere shader.
pub fn species_rgb(s: Species) -> [f32; 3] {
    let c = species_colour(s);
    [c.r() as f32 / 255.0, c.g() as f32 / 255.0, c.b() as f32 / 255.0]
}

/// Background of the window and so of the particle views.
pub const VIEW_BACKGROUND: Color32 = Color32::from_rgb(0x16, 0x1A, 0x21);
/// Periodic box outline.
pub const BOX_LINE: Color32 = Color32::from_rgb(0x8A, 0x93, 0xA3);
/// Plot series colours: conserved drift, kinetic, potential, total, temperature, pressure.
pub const SERIES: [Color32; 6] = [
    Color32::from_rgb(0xE0, 0x9F, 0x3E),
    Color32::from_rgb(0xD9, 0x77, 0x5B),
    Color32::from_rgb(0x5E, 0x92, 0xC2),
    Color32::from_rgb(0xC9, 0xCF, 0xD6),
    Color32::from_rgb(0x86, 0xBA, 0x8A),
    Color32::from_rgb(0x9F, 0x7E, 0xBE),
];
/// Target lines in plots.
pub const TARGET: Color32 = Color32::from_rgb(0xF0, 0xC8, 0x5A);
/// Atoms an alarm names, and the plots' cursor while the flight recorder is scrubbed: a
/// bright vermilion, far from every species colour in brightness as well as hue.
pub const FOCUS: Color32 = Color32::from_rgb(0xFF, 0x4A, 0x1C);
/// [`FOCUS`] as the sphere renderer takes colours (as [`species_rgb`] gives them).
pub const FOCUS_RGB: [f32; 3] = [1.0, 0x4A as f32 / 255.0, 0x1C as f32 / 255.0];

/// A colour three quarters of the way to the view's background, for atoms outside an alarm's
/// focus.
pub fn faded(c: [f32; 3]) -> [f32; 3] {
    let b = VIEW_BACKGROUND;
    let bg = [b.r() as f32 / 255.0, b.g() as f32 / 255.0, b.b() as f32 / 255.0];
    [
        0.25 * c[0] + 0.75 * bg[0],
        0.25 * c[1] + 0.75 * bg[1],
        0.25 * c[2] + 0.75 * bg[2],
    ]
}

/// Alarm banner fill.
pub const ALARM: Color32 = Color32::from_rgb(0x8C, 0x2F, 0x2A);
/// Error text at a field.
pub const ERROR_TEXT: Color32 = Color32::from_rgb(0xF2, 0x8B, 0x7A);
/// Caution text (model limits, quantum notes).
pub const CAUTION_TEXT: Color32 = Color32::from_rgb(0xF0, 0xC8, 0x5A);

/// The equilibration start line in the time plots, and its handle.
pub const START_LINE: Color32 = Color32::from_rgb(0x7F, 0xD1, 0xD8);
/// Dimming laid over the part of a time plot before the equilibration start.
pub const BEFORE_START: Color32 = Color32::from_rgba_premultiplied(0x0B, 0x0D, 0x11, 0x9C);
/// The equation of state's reference line.
pub const EOS_LINE: Color32 = Color32::from_rgb(0xE8, 0xE8, 0xE8);
/// The run's full-potential mean and its ±2 standard error band.
pub const RUN_BAND: Color32 = Color32::from_rgb(0xE0, 0x9F, 0x3E);
/// Verdict text: equilibrated (the words always say it too).
pub const VERDICT_GOOD: Color32 = Color32::from_rgb(0x8F, 0xD0, 0x8F);

#[cfg(test)]
mod tests {
    use super::*;

    fn lightness(c: [f32; 3]) -> f32 {
        0.2126 * c[0] + 0.7152 * c[1] + 0.0722 * c[2]
    }

    #[test]
    fn ramp_lightness_rises_monotonically() {
        let mut last = -1.0;
        for i in 0..=100 {
            let l = lightness(ramp(i as f32 / 100.0));
            assert!(l > last, "ramp lightness falls at {i}");
            last = l;
        }
    }

    #[test]
    fn species_colours_are_distinct_in_lightness() {
        let mut ls: Vec<f32> = Species::ALL.iter().map(|&s| lightness(species_rgb(s))).collect();
        ls.sort_by(|a, b| a.partial_cmp(b).unwrap());
        for w in ls.windows(2) {
            assert!(
                w[1] - w[0] > 0.02,
                "two species are too close in lightness: {ls:?}"
            );
        }
    }

    #[test]
    fn ramp_clamps_and_survives_nan() {
        assert_eq!(ramp(-3.0), RAMP[0]);
        assert_eq!(ramp(7.0), RAMP[4]);
        assert_eq!(ramp(f32::NAN), RAMP[0]);
    }
}
