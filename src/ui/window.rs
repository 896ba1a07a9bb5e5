//! Opening the native window (eframe with the glow backend).

use super::app::NoblescopeApp;
use super::start::StartOptions;

/// Why the window could not be shown.
#[derive(Debug, thiserror::Error)]
pub enum WindowError {
    /// The native window or its OpenGL context could not be created.
    #[error("the window could not open: {reason}")]
    Open {
        /// What eframe reported.
        reason: String,
    },
}

/// Opens the workbench window and blocks until it closes.
pub fn run(opts: StartOptions, size: Option<[f32; 2]>) -> Result<(), WindowError> {
    keep_freed_memory();
    let scripted = opts.watch.as_ref().is_some_and(|w| w.scripted());
    let mut viewport = egui::ViewportBuilder::default()
        .with_title("Noblescope")
        .with_app_id("noblescope")
        .with_inner_size(size.unwrap_or([1440.0, 900.0]))
        .with_min_inner_size([900.0, 600.0])
        .with_drag_and_drop(true);
    if scripted {
        viewport = viewport.with_resizable(false);
    }
    let options = eframe::NativeOptions {
        viewport,
        renderer: eframe::Renderer::Glow,
        persist_window: opts.persist,
        ..Default::default()
    };
    eframe::run_native(
        "noblescope",
        options,
        Box::new(move |cc| {
            cc.egui_ctx.set_theme(egui::Theme::Dark);
            // One background for the whole window, the particle view included: the view then
            // needs no clearing of its own (see gl_spheres).
            cc.egui_ctx.style_mut_of(egui::Theme::Dark, |s| {
                s.visuals.panel_fill = super::palette::VIEW_BACKGROUND
            });
            Ok(Box::new(NoblescopeApp::new(cc.storage, opts)))
        }),
    )
    .map_err(|e| WindowError::Open {
        reason: e.to_string(),
    })
}

/// Tells the C allocator to keep freed memory for reuse instead of handing it back to the
/// system. Software OpenGL allocates and frees megabyte-sized vertex and bin buffers on every
/// frame; by default glibc maps and unmaps them each time, and the page faults of touching the
/// fresh pages cost about 4 ms per frame at 32,000 atoms (measured with perf on the 3D view).
fn keep_freed_memory() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    // SAFETY: mallopt only sets allocator parameters (it takes the allocator's own lock).
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, 64 << 20);
        libc::mallopt(libc::M_TRIM_THRESHOLD, 512 << 20);
    }
}
