//! The flat view: a slab of the box, cut across one axis, projected onto the other two.

/// The axis a slab is cut across.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Axis {
    X,
    Y,
    Z,
}

impl Axis {
    /// Index of this axis and of the two axes the slab is drawn in (right, up).
    pub fn indices(self) -> (usize, usize, usize) {
        match self {
            Axis::X => (0, 1, 2),
            Axis::Y => (1, 2, 0),
            Axis::Z => (2, 0, 1),
        }
    }

    /// Letter for labels.
    pub fn name(self) -> &'static str {
        match self {
            Axis::X => "x",
            Axis::Y => "y",
            Axis::Z => "z",
        }
    }
}

/// Which slab to show.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Slab {
    pub axis: Axis,
    /// Centre of the slab as a fraction of the box edge, 0 to 1.
    pub centre: f32,
    /// Thickness in σ.
    pub thickness: f32,
}

impl Default for Slab {
    fn default() -> Self {
        Slab {
            axis: Axis::Z,
            centre: 0.5,
            thickness: 2.0,
        }
    }
}

impl Slab {
    /// Whether position `p` (folded into the box of edge `l`) lies in the slab, and its depth
    /// from the slab centre (periodic, so a slab may wrap across the box face).
    pub fn depth(&self, p: [f32; 3], l: f32) -> Option<f32> {
        let (a, _, _) = self.axis.indices();
        let c = self.centre.clamp(0.0, 1.0) * l;
        let mut d = p[a] - c;
        d -= l * (d / l).round();
        (d.abs() <= 0.5 * self.thickness).then_some(d)
    }

    /// Where position `p` is drawn in the flat view: its coordinates along the two drawn axes
    /// (right, up) and its depth from the slab centre, if it lies in the slab.
    pub fn place(&self, p: [f32; 3], l: f32) -> Option<[f32; 3]> {
        let (_, r, u) = self.axis.indices();
        self.depth(p, l).map(|d| [p[r], p[u], d])
    }

    /// Draws the slab controls; `box_length` in σ for the thickness range.
    pub fn controls(&mut self, ui: &mut egui::Ui, box_length: f32) {
        ui.horizontal(|ui| {
            ui.label("Cut across");
            for a in [Axis::X, Axis::Y, Axis::Z] {
                ui.radio_value(&mut self.axis, a, a.name());
            }
            ui.separator();
            let l = ui.label("at");
            ui.add(
                egui::Slider::new(&mut self.centre, 0.0..=1.0)
                    .fixed_decimals(2)
                    .text("of the edge"),
            )
            .labelled_by(l.id);
            ui.separator();
            let l = ui.label("thickness");
            // Before the first frame the box edge is unknown (0): keep the present thickness
            // in range instead of letting the slider clamp it down.
            let max = if box_length > 0.0 {
                box_length.max(0.5)
            } else {
                self.thickness.max(2.0)
            };
            ui.add(
                egui::Slider::new(&mut self.thickness, 0.2..=max)
                    .fixed_decimals(1)
                    .suffix(" σ"),
            )
            .labelled_by(l.id);
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn selects_atoms_within_half_the_thickness_with_wrap() {
        let slab = Slab {
            axis: Axis::X,
            centre: 0.0,
            thickness: 2.0,
        };
        let l = 10.0;
        assert_eq!(slab.depth([0.5, 3.0, 3.0], l), Some(0.5));
        assert!(
            (slab.depth([9.5, 3.0, 3.0], l).unwrap() + 0.5).abs() < 1e-6,
            "wraps across the face"
        );
        assert_eq!(slab.depth([2.0, 3.0, 3.0], l), None);
    }

    #[test]
    fn projects_onto_the_other_two_axes() {
        let slab = Slab {
            axis: Axis::Z,
            centre: 0.5,
            thickness: 1.0,
        };
        assert_eq!(slab.place([1.0, 2.0, 5.0], 10.0), Some([1.0, 2.0, 0.0]));
        assert_eq!(slab.place([1.0, 2.0, 9.0], 10.0), None);
        let slab = Slab {
            axis: Axis::X,
            centre: 0.5,
            thickness: 1.0,
        };
        assert_eq!(slab.place([5.25, 2.0, 3.0], 10.0), Some([2.0, 3.0, 0.25]));
    }
}
