//! Opening the native window (eframe with the glow backend).

use super::app::{NoblescopeApp, StartOptions};

/// Opens the workbench window and blocks until it closes.
pub fn run(opts: StartOptions, size: Option<[f32; 2]>) -> anyhow::Result<()> {
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
        depth_buffer: 24,
        persist_window: opts.persist,
        ..Default::default()
    };
    eframe::run_native(
        "noblescope",
        options,
        Box::new(move |cc| {
            cc.egui_ctx.set_theme(egui::Theme::Dark);
            Ok(Box::new(NoblescopeApp::new(cc.storage, opts)))
        }),
    )
    .map_err(|e| anyhow::anyhow!("the window could not open: {e}"))
}
