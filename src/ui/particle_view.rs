//! The particle view: the box in 3D (orbit, zoom, pan) or a flat slab, coloured by species,
//! speed or per-atom kinetic energy, with a legend. Atoms are drawn by [`SphereRenderer`] in
//! one GL call; the vertex buffer is refilled in place only when a new frame arrives or the
//! look changes.

use super::alarm_view::Focus;
use super::cull::{Culler, Projected};
use super::gl_spheres::{FLOATS_PER_ATOM, SphereRenderer};
use super::palette;
use super::slab_view::Slab;
use crate::engine::Frame;
use crate::physics::UnitSystem;
use glam::{Mat4, Vec3, Vec4};

/// Camera distance (in box edges) when the view turns to an alarm's atoms.
const FOCUS_DISTANCE: f32 = 0.9;
/// Size of the atoms outside an alarm's focus, as a fraction of their own.
const FADED_SIZE: f32 = 0.35;

/// What a fill of the vertex buffer depends on: settings, frame step, atom count, view size in
/// pixels and the focus (its alarm's step).
type FillKey = (ViewSettings, u64, usize, [u32; 2], Option<u64>);

/// 3D box or flat slab.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum ViewMode {
    Box3d,
    Slab,
}

/// What the colour of an atom tells.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum ColourBy {
    Species,
    Speed,
    Kinetic,
}

/// Orbit camera around the box centre.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Orbit {
    /// Turn about the vertical, radians.
    pub yaw: f32,
    /// Tilt, radians, within ±1.5.
    pub pitch: f32,
    /// Distance from the target in box edges.
    pub distance: f32,
    /// Offset of the target from the box centre in box edges.
    pub pan: [f32; 3],
}

impl Default for Orbit {
    fn default() -> Self {
        Orbit {
            yaw: 0.65,
            pitch: 0.42,
            distance: 2.1,
            pan: [0.0; 3],
        }
    }
}

/// Everything about how the particles are shown (persisted between launches).
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ViewSettings {
    pub mode: ViewMode,
    pub colour_by: ColourBy,
    pub orbit: Orbit,
    pub slab: Slab,
    /// Sphere radius as a fraction of σ.
    pub size: f32,
}

impl Default for ViewSettings {
    fn default() -> Self {
        ViewSettings {
            mode: ViewMode::Box3d,
            colour_by: ColourBy::Species,
            orbit: Orbit::default(),
            slab: Slab::default(),
            size: 0.42,
        }
    }
}

/// The particle view widget: settings, the renderer and the scale of the last colouring.
pub struct ParticleView {
    pub settings: ViewSettings,
    renderer: SphereRenderer,
    /// Settings, frame step, atom count, view size and focus (its alarm's step) the vertex
    /// buffer was last filled for.
    filled_for: Option<FillKey>,
    culler: Culler,
    /// Atoms the culler kept in the last fill, nearest first.
    kept: Vec<u32>,
    /// Atoms the last fill placed in the view (in front of the camera in 3D, in the slab in 2D).
    placed: usize,
    /// Upper end of the colour scale of the last fill (σ/τ or ε).
    scale_max: f32,
    shown: usize,
}

impl ParticleView {
    /// A view with the given settings.
    pub fn new(settings: ViewSettings) -> Self {
        ParticleView {
            settings,
            renderer: SphereRenderer::new(),
            filled_for: None,
            culler: Culler::new(),
            kept: Vec::new(),
            placed: 0,
            scale_max: 1.0,
            shown: 0,
        }
    }

    /// The renderer (to free its GL objects on exit).
    pub fn renderer(&self) -> &SphereRenderer {
        &self.renderer
    }

    /// Atoms drawn in the last fill (those not hidden behind others).
    pub fn shown(&self) -> usize {
        self.shown
    }

    /// Turns the camera to `focus`: the 3D view centres on its first atom, closer in, and the
    /// slab is moved through it.
    pub fn look_at(&mut self, focus: &Focus, box_length: f32) {
        let l = box_length.max(1e-3);
        let c = focus.centre;
        self.settings.orbit.pan = [c[0] / l - 0.5, c[1] / l - 0.5, c[2] / l - 0.5];
        self.settings.orbit.distance = FOCUS_DISTANCE;
        let (a, _, _) = self.settings.slab.axis.indices();
        self.settings.slab.centre = (c[a] / l).clamp(0.0, 1.0);
    }

    /// Draws the toolbar, the view and the legend; with a focus, its atoms stand out and the
    /// rest are faded and drawn small.
    pub fn show(&mut self, ui: &mut egui::Ui, frame: &Frame, units: UnitSystem, focus: Option<&Focus>) {
        self.toolbar(ui, frame);
        let legend_h = 26.0;
        let avail = ui.available_size();
        let size = egui::vec2(avail.x, (avail.y - legend_h).max(120.0));
        let (rect, response) = ui.allocate_exact_size(size, egui::Sense::click_and_drag());
        self.handle_input(ui, &response);
        let ppp = ui.ctx().pixels_per_point();
        self.fill(frame, rect, ppp, focus);
        let painter = ui.painter_at(rect);
        if frame.is_empty() {
            painter.text(
                rect.center(),
                egui::Align2::CENTER_CENTER,
                "waiting for the first frame…",
                egui::FontId::proportional(15.0),
                palette::BOX_LINE,
            );
        } else {
            painter.add(self.renderer.callback(rect));
            self.outline(&painter, rect, frame.box_length);
        }
        if let Some(e) = self.renderer.failure() {
            painter.text(
                rect.center(),
                egui::Align2::CENTER_CENTER,
                e,
                egui::FontId::proportional(14.0),
                palette::ERROR_TEXT,
            );
        }
        let hint = match self.settings.mode {
            ViewMode::Box3d => {
                "drag: turn · right-drag or shift-drag: move · wheel: zoom · double-click: reset"
            }
            ViewMode::Slab => "flat slab view: pick the axis, position and thickness above",
        };
        painter.text(
            rect.left_bottom() + egui::vec2(8.0, -8.0),
            egui::Align2::LEFT_BOTTOM,
            hint,
            egui::FontId::proportional(11.5),
            palette::BOX_LINE,
        );
        self.legend(ui, frame, units);
    }

    fn toolbar(&mut self, ui: &mut egui::Ui, frame: &Frame) {
        let s = &mut self.settings;
        ui.horizontal(|ui| {
            ui.selectable_value(&mut s.mode, ViewMode::Box3d, "Box 3D");
            ui.selectable_value(&mut s.mode, ViewMode::Slab, "Slab 2D");
            ui.separator();
            ui.label("Colour by");
            ui.selectable_value(&mut s.colour_by, ColourBy::Species, "species");
            ui.selectable_value(&mut s.colour_by, ColourBy::Speed, "speed");
            ui.selectable_value(&mut s.colour_by, ColourBy::Kinetic, "kinetic energy");
            ui.separator();
            let l = ui.label("Size");
            ui.add(
                egui::Slider::new(&mut s.size, 0.1..=0.7)
                    .fixed_decimals(2)
                    .suffix(" σ"),
            )
            .labelled_by(l.id);
            if s.mode == ViewMode::Box3d && ui.button("Reset view").clicked() {
                s.orbit = Orbit::default();
            }
        });
        if s.mode == ViewMode::Slab {
            s.slab.controls(ui, frame.box_length);
        }
    }

    fn handle_input(&mut self, ui: &egui::Ui, r: &egui::Response) {
        if self.settings.mode != ViewMode::Box3d {
            return;
        }
        let o = &mut self.settings.orbit;
        if r.double_clicked() {
            *o = Orbit::default();
        }
        let shift = ui.input(|i| i.modifiers.shift);
        let d = r.drag_delta();
        if r.dragged_by(egui::PointerButton::Primary) && !shift {
            o.yaw -= d.x * 0.008;
            o.pitch = (o.pitch + d.y * 0.008).clamp(-1.5, 1.5);
        } else if r.dragged_by(egui::PointerButton::Secondary)
            || r.dragged_by(egui::PointerButton::Middle)
            || (shift && r.dragged())
        {
            let (right, up, _) = basis(o);
            let k = o.distance / r.rect.height().max(1.0);
            let p = Vec3::from(o.pan) - right * d.x * k + up * d.y * k;
            o.pan = p.to_array();
        }
        if r.hovered() {
            let scroll = ui.input(|i| i.smooth_scroll_delta.y);
            if scroll != 0.0 {
                o.distance = (o.distance * (-scroll * 0.002).exp()).clamp(0.3, 8.0);
            }
        }
    }

    /// View and projection for the present mode, and whether it is orthographic.
    fn camera(&self, rect: egui::Rect, l: f32) -> (Mat4, Mat4, bool) {
        let aspect = (rect.width() / rect.height().max(1.0)).max(0.05);
        match self.settings.mode {
            ViewMode::Box3d => {
                let o = &self.settings.orbit;
                let centre = Vec3::splat(0.5 * l) + Vec3::from(o.pan) * l;
                let (_, _, back) = basis(o);
                let eye = centre + back * o.distance * l;
                let view = glam::camera::rh::view::look_at_mat4(eye, centre, Vec3::Y);
                let fov = 35f32.to_radians();
                let proj = glam::camera::rh::proj::opengl::perspective(fov, aspect, 0.05 * l, 20.0 * l);
                (view, proj, false)
            }
            ViewMode::Slab => {
                let half = 0.55 * l;
                let (hw, hh) = if aspect >= 1.0 {
                    (half * aspect, half)
                } else {
                    (half, half / aspect)
                };
                let view = Mat4::from_translation(Vec3::new(-0.5 * l, -0.5 * l, 0.0));
                let proj = glam::camera::rh::proj::opengl::orthographic(-hw, hw, -hh, hh, -l, l);
                (view, proj, true)
            }
        }
    }

    /// Refills the vertex buffer if the frame or the look changed (no allocation once the
    /// buffers have grown to the atom count).
    fn fill(&mut self, frame: &Frame, rect: egui::Rect, ppp: f32, focus: Option<&Focus>) {
        let l = frame.box_length.max(1e-3);
        let (view, proj, ortho) = self.camera(rect, l);
        // The view in whole pixels, rounded as egui rounds the paint callback's viewport.
        let px = [
            ((rect.max.x * ppp).round() - (rect.min.x * ppp).round()).max(1.0) as u32,
            ((rect.max.y * ppp).round() - (rect.min.y * ppp).round()).max(1.0) as u32,
        ];
        let (w_px, h_px) = (px[0] as f32, px[1] as f32);
        // Pixels per σ at unit view distance (perspective) or everywhere (orthographic).
        let ppu = proj.y_axis.y * 0.5 * h_px;
        let mut scene = self.renderer.scene().lock().unwrap_or_else(|p| p.into_inner());
        scene.view = view.to_cols_array();
        scene.proj = proj.to_cols_array();
        scene.pixels_per_unit = ppu;
        scene.orthographic = ortho;
        let key = (self.settings, frame.step, frame.len(), px, focus.map(|f| f.step));
        if self.filled_for == Some(key) {
            return;
        }
        self.filled_for = Some(key);
        let n = frame.len().max(1) as f32;
        self.scale_max = match self.settings.colour_by {
            ColourBy::Species => 1.0,
            ColourBy::Speed => 2.2 * (frame.speed.iter().map(|v| v * v).sum::<f32>() / n).sqrt(),
            ColourBy::Kinetic => 3.5 * frame.kinetic.iter().sum::<f32>() / n,
        }
        .max(1e-6);
        let colour_by = self.settings.colour_by;
        let scale = self.scale_max;
        let size = self.settings.size;
        let colour = |i: usize| -> [f32; 3] {
            match colour_by {
                ColourBy::Species => frame
                    .kinds
                    .get(frame.types[i] as usize)
                    .map(|&k| palette::species_rgb(k))
                    .unwrap_or([0.7; 3]),
                ColourBy::Speed => palette::ramp(frame.speed[i] / scale),
                ColourBy::Kinetic => palette::ramp(frame.kinetic[i] / scale),
            }
        };
        // With a focus: named atoms in the alarm colour, neighbours as they are, the rest
        // faded and small, so the named ones show through from inside the box.
        let role = |i: usize| -> u8 {
            match focus {
                None => 1,
                Some(f) if f.atoms.contains(&i) => 2,
                Some(f) if f.neighbours.binary_search(&i).is_ok() => 1,
                Some(_) => 0,
            }
        };
        let colour = |i: usize| -> [f32; 3] {
            match role(i) {
                2 => palette::FOCUS_RGB,
                1 => colour(i),
                _ => palette::faded(colour(i)),
            }
        };
        let radius = |i: usize| {
            let r = frame.sigmas.get(frame.types[i] as usize).copied().unwrap_or(1.0) * size;
            if role(i) == 0 { r * FADED_SIZE } else { r }
        };
        let mode = self.settings.mode;
        let slab = self.settings.slab;
        // Where atom i is drawn: its position (3D) or its slab coordinates (2D), if at all.
        let place = |i: usize| -> Option<[f32; 3]> {
            let p = frame.positions[i];
            match mode {
                ViewMode::Box3d => Some(p),
                ViewMode::Slab => slab.place(p, l),
            }
        };
        let near = 0.05 * l;
        let clip = proj * view;
        let eye_z = view.row(2);
        let project = |i: usize| -> Option<Projected> {
            let p = place(i)?;
            let p = Vec4::new(p[0], p[1], p[2], 1.0);
            let c = clip * p;
            // Perspective: w is the distance in front of the camera.
            let depth = if ortho { -eye_z.dot(p) } else { c.w };
            if !ortho && depth <= near {
                return None;
            }
            let (nx, ny) = (c.x / c.w, c.y / c.w);
            // As the vertex shader sizes the point sprite (never below 1.5 pixels).
            let s = if ortho { ppu } else { ppu / depth };
            let r = (radius(i) * s).max(0.75);
            Some(Projected {
                x: (nx * 0.5 + 0.5) * w_px,
                y: (0.5 - ny * 0.5) * h_px,
                r,
                depth,
            })
        };
        let kept = &mut self.kept;
        kept.clear();
        self.placed = self
            .culler
            .run(frame.len(), px[0] as usize, px[1] as usize, project, |i| {
                kept.push(i as u32)
            });
        // Farthest first, so nearer sprites paint over farther ones.
        let v = &mut scene.vertices;
        v.clear();
        v.reserve(kept.len() * FLOATS_PER_ATOM);
        for &i in kept.iter().rev() {
            let i = i as usize;
            if let Some(p) = place(i) {
                let c = colour(i);
                v.extend_from_slice(&[p[0], p[1], p[2], radius(i), c[0], c[1], c[2]]);
            }
        }
        self.shown = v.len() / FLOATS_PER_ATOM;
        scene.generation = scene.generation.wrapping_add(1);
    }

    /// The periodic box (3D) or the slab's square (2D), drawn over the spheres.
    fn outline(&self, painter: &egui::Painter, rect: egui::Rect, l: f32) {
        let (view, proj, _) = self.camera(rect, l);
        let vp = proj * view;
        let to_screen = |p: Vec3| -> Option<egui::Pos2> {
            let c = vp * Vec4::new(p.x, p.y, p.z, 1.0);
            if c.w <= 1e-4 {
                return None;
            }
            let ndc = c.truncate() / c.w;
            Some(egui::pos2(
                rect.center().x + ndc.x * rect.width() * 0.5,
                rect.center().y - ndc.y * rect.height() * 0.5,
            ))
        };
        let stroke = egui::Stroke::new(1.2, palette::BOX_LINE);
        match self.settings.mode {
            ViewMode::Box3d => {
                let corner =
                    |i: u8| Vec3::new((i & 1) as f32, ((i >> 1) & 1) as f32, ((i >> 2) & 1) as f32) * l;
                for a in 0u8..8 {
                    for bit in [1u8, 2, 4] {
                        if a & bit == 0
                            && let (Some(p), Some(q)) = (to_screen(corner(a)), to_screen(corner(a | bit)))
                        {
                            painter.line_segment([p, q], stroke);
                        }
                    }
                }
            }
            ViewMode::Slab => {
                let pts: Vec<egui::Pos2> = [[0.0, 0.0], [l, 0.0], [l, l], [0.0, l]]
                    .iter()
                    .filter_map(|c| to_screen(Vec3::new(c[0], c[1], 0.0)))
                    .collect();
                if pts.len() == 4 {
                    painter.add(egui::Shape::closed_line(pts, stroke));
                }
            }
        }
    }

    fn legend(&self, ui: &mut egui::Ui, frame: &Frame, units: UnitSystem) {
        // Wrapped, so a narrow centre (both side panels open) is not widened by the legend.
        ui.horizontal_wrapped(|ui| {
            match self.settings.colour_by {
                ColourBy::Species => {
                    for (k, kind) in frame.kinds.iter().enumerate() {
                        let count = frame.types.iter().filter(|&&t| t as usize == k).count();
                        swatch(ui, palette::species_colour(*kind));
                        ui.label(format!("{} ({count})", kind.label()));
                    }
                }
                ColourBy::Speed | ColourBy::Kinetic => {
                    let (name, unit, real) = if self.settings.colour_by == ColourBy::Speed {
                        let ms = units.sigma_angstrom() * 1e-10 / units.tau_seconds();
                        (
                            "speed",
                            "σ/τ",
                            units
                                .has_real_units()
                                .then(|| format!("{:.0} m/s", self.scale_max as f64 * ms)),
                        )
                    } else {
                        (
                            "kinetic energy",
                            "ε",
                            units.has_real_units().then(|| {
                                format!("{:.2} kJ/mol", self.scale_max as f64 * units.energy_kj_mol())
                            }),
                        )
                    };
                    ui.label(format!("{name}: 0"));
                    let (rect, _) = ui.allocate_exact_size(egui::vec2(160.0, 12.0), egui::Sense::hover());
                    let steps = 32;
                    for s in 0..steps {
                        let x0 = rect.left() + rect.width() * s as f32 / steps as f32;
                        let x1 = rect.left() + rect.width() * (s + 1) as f32 / steps as f32;
                        ui.painter().rect_filled(
                            egui::Rect::from_x_y_ranges(x0..=x1, rect.y_range()),
                            0.0,
                            palette::ramp_colour((s as f32 + 0.5) / steps as f32),
                        );
                    }
                    let top = format!("{:.3} {unit}", self.scale_max);
                    ui.label(match real {
                        Some(r) => format!("{top} ({r}) and above"),
                        None => format!("{top} and above"),
                    });
                }
            }
            ui.separator();
            ui.weak(match self.settings.mode {
                ViewMode::Box3d => format!(
                    "{} atoms, box edge {:.2} σ ({})",
                    frame.len(),
                    frame.box_length,
                    drawn(self.shown, frame.len())
                ),
                ViewMode::Slab => format!(
                    "{} of {} atoms in the slab ({})",
                    self.placed,
                    frame.len(),
                    drawn(self.shown, self.placed)
                ),
            });
        });
    }
}

/// How many of `of` atoms were drawn, for the legend.
fn drawn(shown: usize, of: usize) -> String {
    if shown >= of {
        "all drawn".into()
    } else {
        format!("{shown} drawn; the rest are hidden behind them or out of view")
    }
}

fn swatch(ui: &mut egui::Ui, c: egui::Color32) {
    let (rect, _) = ui.allocate_exact_size(egui::vec2(12.0, 12.0), egui::Sense::hover());
    ui.painter().circle_filled(rect.center(), 5.5, c);
}

/// Right, up and backward unit vectors of the orbit camera.
fn basis(o: &Orbit) -> (Vec3, Vec3, Vec3) {
    let back = Vec3::new(
        o.pitch.cos() * o.yaw.sin(),
        o.pitch.sin(),
        o.pitch.cos() * o.yaw.cos(),
    );
    let right = Vec3::Y.cross(back).normalize_or_zero();
    let up = back.cross(right);
    (right, up, back)
}
