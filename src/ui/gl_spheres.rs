//! Shaded spheres through one OpenGL draw call: each atom is a point sprite whose fragment
//! shader draws a lit sphere. Atoms arrive farthest first, so later (nearer) sprites paint
//! over earlier ones and no depth buffer is needed: each sprite is a disc at one depth, so
//! this gives the picture a depth test would. Atom data go into one vertex buffer that is
//! reused from frame to frame (grown only when the atom count grows). The view is not
//! cleared: it shows the window's background, which software OpenGL clears for free, while a
//! clear limited to the view would cost a full pass over its pixels.
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
    /// `FLOATS_PER_ATOM` floats per atom, farthest atom first.
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
            callback: Arc::new(egui_glow::CallbackFn::new(move |_info, painter| {
                let mut slot = gl.lock().unwrap_or_else(|p| p.into_inner());
                if slot.is_none() {
                    *slot = Some(unsafe { Gl::new(painter.gl()) });
                }
                if let Some(Ok(g)) = slot.as_mut() {
                    let scene = scene.lock().unwrap_or_else(|p| p.into_inner());
                    unsafe { g.paint(painter.gl(), &scene) };
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
            }
        }
    }
}

impl Gl {
    unsafe fn new(gl: &glow::Context) -> Result<Gl, String> {
        let version = egui_glow::ShaderVersion::get(gl);
        if !version.is_new_shader_interface() {
            return Err(format!(
                "OpenGL shader version {version:?} is too old for the sphere view (need GLSL 1.40 or ES 3.00)"
            ));
        }
        let embedded = version.is_embedded();
        let prefix = format!(
            "{}{}",
            version.version_declaration(),
            if embedded {
                "precision mediump float;\n"
            } else {
                ""
            }
        );
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
            })
        }
    }

    /// Draws the spheres into the viewport egui set up, clipped by its scissor.
    unsafe fn paint(&mut self, gl: &glow::Context, scene: &SphereScene) {
        let n = scene.atoms();
        if n == 0 {
            return;
        }
        unsafe {
            gl.disable(glow::DEPTH_TEST);
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
                let bytes: &[u8] =
                    std::slice::from_raw_parts(scene.vertices.as_ptr().cast(), scene.vertices.len() * 4);
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
            gl.uniform_1_f32(self.u_scale.as_ref(), scene.pixels_per_unit);
            gl.uniform_1_f32(self.u_ortho.as_ref(), if scene.orthographic { 1.0 } else { 0.0 });
            gl.draw_arrays(glow::POINTS, 0, n as i32);
            gl.bind_vertex_array(None);
            gl.bind_buffer(glow::ARRAY_BUFFER, None);
            if !self.embedded {
                gl.disable(glow::PROGRAM_POINT_SIZE);
            }
        }
    }
}
