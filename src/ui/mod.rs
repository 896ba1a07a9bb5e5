//! The desktop workbench window. It only draws and sends commands to the engine thread; the
//! physics stays in [`crate::engine`].
//!
//! - [`app`]: the eframe application, owning the engine handle;
//! - [`setup_form`], [`unit_field`]: editing and validating a setup;
//! - [`particle_view`], [`slab_view`], [`gl_spheres`], [`cull`]: the atoms in 3D or as a flat slab;
//! - [`plots`], [`series`]: live plots on bounded, envelope-keeping series;
//! - [`tuning_panel`]: timestep and cutoff scans before a long run;
//! - [`status`], [`help`], [`palette`]: status line, keys and colours;
//! - [`files`]: dialogs and writers; [`watch`]: scripted watching for reports and pictures;
//! - [`window`]: opening the native window.

pub mod app;
pub mod cull;
pub mod files;
pub mod gl_spheres;
pub mod help;
pub mod palette;
pub mod particle_view;
pub mod plots;
pub mod series;
pub mod setup_form;
pub mod slab_view;
pub mod status;
pub mod tuning_panel;
pub mod unit_field;
pub mod watch;
pub mod window;

pub use app::{NoblescopeApp, StartOptions};
