//! The desktop workbench window. It only draws and sends commands to the engine thread; the
//! physics stays in [`crate::engine`].
//!
//! - [`app`]: the eframe application, owning the engine handle and running each frame;
//! - [`events`]: engine events turned into window state (a plain function, tested without egui);
//! - [`leave`]: the "Keep your edits?" question before closing or opening another setup;
//! - [`shortcuts`]: the one table of keys, read by the key handling, menus, tooltips and help;
//! - [`start`]: the bundled scenario and the start options; [`persist`]: what is remembered
//!   between sessions, and the start state;
//! - [`file_actions`]: opening and saving setups, checkpoints, the energy log and pictures;
//!   [`pending`]: the open dialog's purpose and a picture being taken;
//! - [`menu_bar`], [`panels`]: the top bar, and the panels and overlays around the view;
//! - [`setup_form`], [`unit_field`]: editing and validating a setup;
//! - [`particle_view`], [`slab_view`], [`gl_spheres`], [`cull`]: the atoms in 3D or as a flat slab;
//! - [`plots`], [`series`]: live plots on bounded, envelope-keeping series; [`plot_marks`] and
//!   [`start_line`]: the equilibration start (draggable) and the equation-of-state references on them;
//! - [`averages`], [`averages_panel`]: the run's averages with their errors and verdicts;
//! - [`tuning_panel`]: timestep and cutoff scans before a long run;
//! - [`structure_panel`]: the "Structure and motion" panel (g(r), MSD, VACF, speeds, D);
//! - [`status`], [`help`], [`palette`]: status line and messages, the help overlay and colours;
//! - [`files`]: dialogs and writers; [`watch`]: scripted watching for reports and pictures,
//!   driven each frame by [`scripted`];
//! - [`window`]: opening the native window.

pub mod alarm_view;
pub mod app;
pub mod averages;
pub mod averages_panel;
pub mod cull;
pub mod events;
pub mod file_actions;
pub mod files;
pub mod gl_spheres;
pub mod help;
pub mod leave;
pub mod menu_bar;
pub mod palette;
pub mod panels;
pub mod particle_view;
pub mod pending;
pub mod persist;
pub mod plot_marks;
pub mod plots;
pub mod scripted;
pub mod series;
pub mod setup_form;
pub mod shortcuts;
pub mod slab_view;
pub mod start;
pub mod start_line;
pub mod status;
pub mod structure_panel;
pub mod sweep_view;
pub mod timeline;
pub mod tuning_panel;
pub mod unit_field;
pub mod watch;
pub mod window;

pub use app::NoblescopeApp;
pub use start::{BUNDLED_NAME, BUNDLED_SCENARIO, StartOptions, bundled_setup};
