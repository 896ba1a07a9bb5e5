//! Shaded spheres through one OpenGL draw call: each atom is a point sprite whose fragment
//! shader draws a lit sphere. Atom data go into one vertex buffer that is reused from frame
//! to frame (grown only when the atom count grows).
//!
//! The renderer is created lazily inside the paint callback, so the UI also runs where no
//! OpenGL context exists (tests); there the callback is simply never called.

use eframe::egui_glow;
use eframe::glow::{self, HasContext};
use std::sync::{Arc, Mutex};

/// Floats per atom in the vertex buffer: position (3), radius (1), colour (3).
pub const FLOATS_PER_ATOM: usize = 7;

/// What the next draw shows: vertex data and camera. Shared between the UI thread, which
/// fills it, and the paint callback, which uploads and draws it.
#[derive(Debug, Default)]
pub struct SphereScene {
    /// `FLOATS_PER_ATOM` floats per atom.
    pub vertices: Vec<f32>,
    /// Bumped whenever `vertices` changed, so unchanged data are not uploaded again.
    pub generation: u64,
    /// World → view matrix (column major).
    pub view: [f32; 16],
    /// View → clip matrix (column major).
    pub proj: [f32; 16],
    /// Pixels per σ at unit view distance (perspective) or everywhere (orthographic).
    pub pixels_per_unit: f32,
    pub orthographic: bool,
    /// Colour the view is cleared to (gamma-space RGBA), cheaper than painting a rectangle.
    pub background: [f32; 4],
    /// Fraction of the view's resolution the spheres are drawn at (1 = full). Below 1 they
    /// are drawn into an offscreen target and scaled up with linear filtering: software
    /// OpenGL pays per fragment, so half resolution costs about a quarter.
    pub resolution: f32,
}

impl SphereScene {
    /// Atoms in the scene.
    pub fn atoms(&self) -> usize {
        self.vertices.len() / FLOATS_PER_ATOM
    }
}

struct Gl {
    program: glow::Program,
    vao: glow::VertexArray,
    vbo: glow::Buffer,
    /// Bytes the buffer holds.
    capacity: usize,
    uploaded: u64,
    u_view: Option<glow::UniformLocation>,
    u_proj: Option<glow::UniformLocation>,
    u_scale: Option<glow::UniformLocation>,
    u_ortho: Option<glow::UniformLocation>,
    embedded: bool,
    /// Offscreen target for reduced-resolution drawing, created on first use.
    target: Option<Target>,
}

/// A framebuffer with colour and depth renderbuffers of one size.
struct Target {
    fbo: glow::Framebuffer,
    colour: glow::Renderbuffer,
    depth: glow::Renderbuffer,
    size: (i32, i32),
}

/// The sphere renderer: scene data plus the GL objects, created on first paint.
#[derive(Clone, Default)]
pub struct SphereRenderer {
    scene: Arc<Mutex<SphereScene>>,
    gl: Arc<Mutex<Option<Result<Gl, String>>>>,
}

const VERTEX: &str = r#"
in vec3 a_pos;
in float a_radius;
in vec3 a_colour;
uniform mat4 u_view;
uniform mat4 u_proj;
uniform float u_scale;
uniform float u_ortho;
out vec3 v_colour;
void main() {
    vec4 vp = u_view * vec4(a_pos, 1.0);
    gl_Position = u_proj * vp;
    float s = u_ortho > 0.5 ? u_scale : u_scale / max(-vp.z, 0.001);
    gl_PointSize = max(2.0 * a_radius * s, 1.5);
    v_colour = a_colour;
}
"#;

const FRAGMENT: &str = r#"
in vec3 v_colour;
out vec4 o_colour;
void main() {
    vec2 p = gl_PointCoord * 2.0 - 1.0;
    p.y = -p.y;
    float r2 = dot(p, p);
    if (r2 > 1.0) discard;
    vec3 n = vec3(p, sqrt(1.0 - r2));
    vec3 l = normalize(vec3(-0.45, 0.6, 0.7));
    float diffuse = max(dot(n, l), 0.0);
    // A cheap highlight (no pow): a squared-off bump where the normal meets the half vector.
    float h = max(dot(n, normalize(l + vec3(0.0, 0.0, 1.0))), 0.0);
    float h4 = h * h;
    h4 = h4 * h4;
    vec3 c = v_colour * (0.3 + 0.7 * diffuse) + vec3(0.2) * h4 * h4;
    o_colour = vec4(c, 1.0);
}
"#;

impl SphereRenderer {
    /// A renderer with an empty scene.
    pub fn new() -> Self {
        Self::default()
    }

    /// The scene, to fill before painting.
    pub fn scene(&self) -> &Arc<Mutex<SphereScene>> {
        &self.scene
    }

    /// The GL error if the shaders could not be built (shown in the view), once painted.
    pub fn failure(&self) -> Option<String> {
        match &*self.gl.lock().unwrap_or_else(|p| p.into_inner()) {
            Some(Err(e)) => Some(e.clone()),
            _ => None,
        }
    }

    /// A paint callback that draws the present scene into `rect`.
    pub fn callback(&self, rect: egui::Rect) -> egui::PaintCallback {
        let scene = self.scene.clone();
        let gl = self.gl.clone();
        egui::PaintCallback {
            rect,
            callback: Arc::new(egui_glow::CallbackFn::new(move |info, painter| {
                let mut slot = gl.lock().unwrap_or_else(|p| p.into_inner());
                if slot.is_none() {
                    *slot = Some(unsafe { Gl::new(painter.gl()) });
                }
                if let Some(Ok(g)) = slot.as_mut() {
                    let scene = scene.lock().unwrap_or_else(|p| p.into_inner());
                    unsafe { g.paint(painter.gl(), &scene, &info) };
                }
            })),
        }
    }

    /// Frees the GL objects (call on exit with the context).
    pub fn destroy(&self, gl: &glow::Context) {
        if let Some(Ok(g)) = self.gl.lock().unwrap_or_else(|p| p.into_inner()).take() {
            unsafe {
                gl.delete_program(g.program);
                gl.delete_vertex_array(g.vao);
                gl.delete_buffer(g.vbo);
                if let Some(t) = g.target {
                    gl.delete_framebuffer(t.fbo);
                    gl.delete_renderbuffer(t.colour);
                    gl.delete_renderbuffer(t.depth);
                }
            }
        }
    }
}

impl Gl {
    unsafe fn new(gl: &glow::Context) -> Result<Gl, String> {
        let version = egui_glow::ShaderVersion::get(gl);
        if !version.is_new_shader_interface() {
            return Err(format!("OpenGL shader version {version:?} is too old for the sphere view (need GLSL 1.40 or ES 3.00)"));
        }
        let embedded = version.is_embedded();
        let prefix = format!("{}{}", version.version_declaration(), if embedded { "precision mediump float;\n" } else { "" });
        unsafe {
            let program = gl.create_program()?;
            let mut shaders = Vec::new();
            for (kind, src) in [(glow::VERTEX_SHADER, VERTEX), (glow::FRAGMENT_SHADER, FRAGMENT)] {
                let s = gl.create_shader(kind)?;
                gl.shader_source(s, &format!("{prefix}{src}"));
                gl.compile_shader(s);
                if !gl.get_shader_compile_status(s) {
                    return Err(format!("sphere shader: {}", gl.get_shader_info_log(s)));
                }
                gl.attach_shader(program, s);
                shaders.push(s);
            }
            gl.bind_attrib_location(program, 0, "a_pos");
            gl.bind_attrib_location(program, 1, "a_radius");
            gl.bind_attrib_location(program, 2, "a_colour");
            gl.link_program(program);
            if !gl.get_program_link_status(program) {
                return Err(format!("sphere program: {}", gl.get_program_info_log(program)));
            }
            for s in shaders {
                gl.detach_shader(program, s);
                gl.delete_shader(s);
            }
            let vao = gl.create_vertex_array()?;
            let vbo = gl.create_buffer()?;
            gl.bind_vertex_array(Some(vao));
            gl.bind_buffer(glow::ARRAY_BUFFER, Some(vbo));
            let stride = (FLOATS_PER_ATOM * 4) as i32;
            gl.enable_vertex_attrib_array(0);
            gl.vertex_attrib_pointer_f32(0, 3, glow::FLOAT, false, stride, 0);
            gl.enable_vertex_attrib_array(1);
            gl.vertex_attrib_pointer_f32(1, 1, glow::FLOAT, false, stride, 12);
            gl.enable_vertex_attrib_array(2);
            gl.vertex_attrib_pointer_f32(2, 3, glow::FLOAT, false, stride, 16);
            gl.bind_vertex_array(None);
            gl.bind_buffer(glow::ARRAY_BUFFER, None);
            Ok(Gl {
                u_view: gl.get_uniform_location(program, "u_view"),
                u_proj: gl.get_uniform_location(program, "u_proj"),
                u_scale: gl.get_uniform_location(program, "u_scale"),
                u_ortho: gl.get_uniform_location(program, "u_ortho"),
                program,
                vao,
                vbo,
                capacity: 0,
                uploaded: u64::MAX,
                embedded,
                target: None,
            })
        }
    }

    /// The offscreen target at `size`, (re)created when the size changes.
    unsafe fn target(&mut self, gl: &glow::Context, size: (i32, i32)) -> Result<glow::Framebuffer, String> {
        if let Some(t) = &self.target {
            if t.size == size {
                return Ok(t.fbo);
            }
        }
        unsafe {
            if let Some(t) = self.target.take() {
                gl.delete_framebuffer(t.fbo);
                gl.delete_renderbuffer(t.colour);
                gl.delete_renderbuffer(t.depth);
            }
            let fbo = gl.create_framebuffer()?;
            let colour = gl.create_renderbuffer()?;
            let depth = gl.create_renderbuffer()?;
            gl.bind_renderbuffer(glow::RENDERBUFFER, Some(colour));
            gl.renderbuffer_storage(glow::RENDERBUFFER, glow::RGBA8, size.0, size.1);
            gl.bind_renderbuffer(glow::RENDERBUFFER, Some(depth));
            gl.renderbuffer_storage(glow::RENDERBUFFER, glow::DEPTH_COMPONENT24, size.0, size.1);
            gl.bind_renderbuffer(glow::RENDERBUFFER, None);
            gl.bind_framebuffer(glow::FRAMEBUFFER, Some(fbo));
            gl.framebuffer_renderbuffer(glow::FRAMEBUFFER, glow::COLOR_ATTACHMENT0, glow::RENDERBUFFER, Some(colour));
            gl.framebuffer_renderbuffer(glow::FRAMEBUFFER, glow::DEPTH_ATTACHMENT, glow::RENDERBUFFER, Some(depth));
            let complete = gl.check_framebuffer_status(glow::FRAMEBUFFER) == glow::FRAMEBUFFER_COMPLETE;
            self.target = Some(Target { fbo, colour, depth, size });
            if !complete {
                return Err("offscreen sphere target is incomplete".into());
            }
            Ok(fbo)
        }
    }

    unsafe fn paint(&mut self, gl: &glow::Context, scene: &SphereScene, info: &egui::PaintCallbackInfo) {
        let vp = info.viewport_in_pixels();
        let clip = info.clip_rect_in_pixels();
        let scale = scene.resolution.clamp(0.25, 1.0);
        unsafe {
            if scale < 1.0 && scene.atoms() > 0 {
                let size = (((vp.width_px as f32) * scale).ceil().max(1.0) as i32, ((vp.height_px as f32) * scale).ceil().max(1.0) as i32);
                let previous = gl.get_parameter_i32(glow::DRAW_FRAMEBUFFER_BINDING) as u32;
                let previous = std::num::NonZeroU32::new(previous).map(glow::NativeFramebuffer);
                if let Ok(fbo) = self.target(gl, size) {
                    gl.bind_framebuffer(glow::FRAMEBUFFER, Some(fbo));
                    gl.disable(glow::SCISSOR_TEST);
                    gl.viewport(0, 0, size.0, size.1);
                    self.draw(gl, scene, scale);
                    // Scale up into the view, clipped by egui's scissor.
                    gl.bind_framebuffer(glow::READ_FRAMEBUFFER, Some(fbo));
                    gl.bind_framebuffer(glow::DRAW_FRAMEBUFFER, previous);
                    gl.enable(glow::SCISSOR_TEST);
                    gl.scissor(clip.left_px, clip.from_bottom_px, clip.width_px, clip.height_px);
                    gl.blit_framebuffer(
                        0,
                        0,
                        size.0,
                        size.1,
                        vp.left_px,
                        vp.from_bottom_px,
                        vp.left_px + vp.width_px,
                        vp.from_bottom_px + vp.height_px,
                        glow::COLOR_BUFFER_BIT,
                        glow::LINEAR,
                    );
                    gl.bind_framebuffer(glow::FRAMEBUFFER, previous);
                    gl.viewport(vp.left_px, vp.from_bottom_px, vp.width_px, vp.height_px);
                    return;
                }
                gl.bind_framebuffer(glow::FRAMEBUFFER, previous);
                gl.viewport(vp.left_px, vp.from_bottom_px, vp.width_px, vp.height_px);
            }
            // Full resolution, straight into the window; depth only inside this view: the
            // scissor egui set limits the clear.
            gl.enable(glow::SCISSOR_TEST);
            gl.scissor(clip.left_px, clip.from_bottom_px, clip.width_px, clip.height_px);
            self.draw(gl, scene, 1.0);
        }
    }

    /// Clears the bound target and draws the spheres; `scale` shrinks point sizes to match a
    /// reduced-resolution target.
    unsafe fn draw(&mut self, gl: &glow::Context, scene: &SphereScene, scale: f32) {
        let n = scene.atoms();
        unsafe {
            gl.depth_mask(true);
            gl.clear_depth_f32(1.0);
            let [r, g, b, a] = scene.background;
            gl.clear_color(r, g, b, a);
            gl.clear(glow::DEPTH_BUFFER_BIT | glow::COLOR_BUFFER_BIT);
            if n == 0 {
                return;
            }
            gl.enable(glow::DEPTH_TEST);
            gl.depth_func(glow::LESS);
            gl.disable(glow::BLEND);
            if !self.embedded {
                gl.enable(glow::PROGRAM_POINT_SIZE);
                // Needed for gl_PointCoord in compatibility contexts; an error in core ones.
                gl.enable(0x8861);
                let _ = gl.get_error();
            }
            gl.use_program(Some(self.program));
            gl.bind_vertex_array(Some(self.vao));
            gl.bind_buffer(glow::ARRAY_BUFFER, Some(self.vbo));
            if self.uploaded != scene.generation {
                let bytes: &[u8] = std::slice::from_raw_parts(scene.vertices.as_ptr().cast(), scene.vertices.len() * 4);
                if bytes.len() > self.capacity {
                    gl.buffer_data_u8_slice(glow::ARRAY_BUFFER, bytes, glow::DYNAMIC_DRAW);
                    self.capacity = bytes.len();
                } else {
                    gl.buffer_sub_data_u8_slice(glow::ARRAY_BUFFER, 0, bytes);
                }
                self.uploaded = scene.generation;
            }
            gl.uniform_matrix_4_f32_slice(self.u_view.as_ref(), false, &scene.view);
            gl.uniform_matrix_4_f32_slice(self.u_proj.as_ref(), false, &scene.proj);
            gl.uniform_1_f32(self.u_scale.as_ref(), scene.pixels_per_unit * scale);
            gl.uniform_1_f32(self.u_ortho.as_ref(), if scene.orthographic { 1.0 } else { 0.0 });
            gl.draw_arrays(glow::POINTS, 0, n as i32);
            gl.bind_vertex_array(None);
            gl.bind_buffer(glow::ARRAY_BUFFER, None);
            gl.disable(glow::DEPTH_TEST);
            if !self.embedded {
                gl.disable(glow::PROGRAM_POINT_SIZE);
            }
        }
    }
}
