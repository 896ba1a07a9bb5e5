//! What the window remembers between sessions (eframe's storage): the setup being edited, its
//! file, the view settings and whether the form is open; and the start state made from the start
//! options and what was remembered.

use super::particle_view::{ViewMode, ViewSettings};
use super::setup_form::SetupForm;
use super::start::{StartOptions, bundled_setup};
use super::watch::StartView;
use crate::io::setup::Setup;
use std::path::{Path, PathBuf};

const STORAGE_SETUP: &str = "noblescope.setup";
const STORAGE_PATH: &str = "noblescope.setup_path";
const STORAGE_VIEW: &str = "noblescope.view";
const STORAGE_FORM_OPEN: &str = "noblescope.form_open";

/// What the window starts with.
#[derive(Clone, Debug)]
pub struct StartState {
    /// The setup to start the engine on.
    pub setup: Setup,
    /// Its file, if it has one.
    pub path: Option<PathBuf>,
    /// The setup as last loaded from or saved to a file (or the bundled one).
    pub saved: Option<Setup>,
    /// View settings.
    pub settings: ViewSettings,
    /// Whether the setup form is open.
    pub form_open: bool,
    /// Whether the setup is the remembered one.
    pub restored: bool,
}

/// The start state: the setup of `opts`, else the remembered one (if it is still valid on this
/// machine), else the bundled one; the view settings remembered, changed by `opts.view`.
pub fn start_state(storage: Option<&dyn eframe::Storage>, opts: &StartOptions) -> StartState {
    let remembered = |key: &str| storage.filter(|_| opts.persist).and_then(|s| s.get_string(key));
    let mut path = None;
    let mut restored = false;
    let setup = match opts.setup.clone() {
        Some((s, p)) => {
            path = p;
            s
        }
        None => match remembered(STORAGE_SETUP)
            .and_then(|t| Setup::parse(&t, "remembered setup").ok())
            .filter(|s| s.resolve_for_this_machine().is_ok())
        {
            Some(s) => {
                restored = true;
                path = remembered(STORAGE_PATH).map(PathBuf::from);
                s
            }
            None => bundled_setup(),
        },
    };
    let mut settings: ViewSettings = remembered(STORAGE_VIEW)
        .and_then(|t| ron::from_str(&t).ok())
        .unwrap_or_default();
    let mut form_open = remembered(STORAGE_FORM_OPEN).map(|t| t == "true").unwrap_or(true);
    match opts.view {
        Some(StartView::Box3d) => {
            settings.mode = ViewMode::Box3d;
            form_open = false;
        }
        Some(StartView::Slab) => {
            settings.mode = ViewMode::Slab;
            form_open = false;
        }
        Some(StartView::Setup) => form_open = true,
        Some(StartView::Tuning) | Some(StartView::Structure) | Some(StartView::Averages) => form_open = false,
        None => {}
    }
    let saved = if restored {
        path.as_ref().and_then(|p| Setup::load(p).ok())
    } else {
        Some(setup.clone())
    };
    StartState {
        setup,
        path,
        saved,
        settings,
        form_open,
        restored,
    }
}

/// What is remembered at the end of a session.
pub struct Remembered<'a> {
    /// The form (its setup is kept if valid, else `running`).
    pub form: &'a SetupForm,
    /// The setup the engine runs.
    pub running: &'a Setup,
    /// The setup's file.
    pub setup_path: Option<&'a Path>,
    /// View settings.
    pub settings: &'a ViewSettings,
    /// Whether the setup form is open.
    pub form_open: bool,
}

/// Writes `what` into `storage`.
pub fn store(storage: &mut dyn eframe::Storage, what: Remembered<'_>) {
    let (draft, errors) = what.form.draft();
    let setup = if errors.is_empty() && draft.resolve_for_this_machine().is_ok() {
        draft
    } else {
        what.running.clone()
    };
    storage.set_string(STORAGE_SETUP, setup.to_ron());
    storage.set_string(
        STORAGE_PATH,
        what.setup_path
            .map(|p| p.display().to_string())
            .unwrap_or_default(),
    );
    if let Ok(v) = ron::to_string(what.settings) {
        storage.set_string(STORAGE_VIEW, v);
    }
    storage.set_string(STORAGE_FORM_OPEN, what.form_open.to_string());
}

#[cfg(test)]
mod tests {
    use super::*;
    use eframe::Storage as _;
    use std::collections::HashMap;

    #[derive(Default)]
    struct Memory(HashMap<String, String>);

    impl eframe::Storage for Memory {
        fn get_string(&self, key: &str) -> Option<String> {
            self.0.get(key).cloned()
        }
        fn set_string(&mut self, key: &str, value: String) {
            self.0.insert(key.into(), value);
        }
        fn remove_string(&mut self, key: &str) {
            self.0.remove(key);
        }
        fn flush(&mut self) {}
    }

    fn persisting() -> StartOptions {
        StartOptions {
            persist: true,
            ..Default::default()
        }
    }

    #[test]
    fn a_stored_form_is_restored_with_its_view_settings() {
        let mut setup = bundled_setup();
        setup.title = "remembered".into();
        let form = SetupForm::from_setup(&setup);
        let settings = ViewSettings {
            mode: ViewMode::Slab,
            ..Default::default()
        };
        let mut memory = Memory::default();
        store(
            &mut memory,
            Remembered {
                form: &form,
                running: &bundled_setup(),
                setup_path: None,
                settings: &settings,
                form_open: false,
            },
        );
        let start = start_state(Some(&memory), &persisting());
        assert!(start.restored);
        assert_eq!(start.setup, setup);
        assert_eq!(start.settings.mode, ViewMode::Slab);
        assert!(!start.form_open);
        assert_eq!(
            start.saved, None,
            "a remembered setup without a file is not saved"
        );
    }

    #[test]
    fn without_persisting_the_bundled_setup_opens_and_the_start_view_decides() {
        let mut memory = Memory::default();
        memory.set_string(STORAGE_FORM_OPEN, "false".into());
        let opts = StartOptions {
            view: Some(StartView::Setup),
            ..Default::default()
        };
        let start = start_state(Some(&memory), &opts);
        assert!(!start.restored);
        assert_eq!(start.setup, bundled_setup());
        assert_eq!(start.saved, Some(bundled_setup()));
        assert!(start.form_open);
    }
}
