//! The keyboard shortcuts, in one table: the key handling reads it, and so do the labels in
//! the menus, the tooltips and the help overlay, so they cannot disagree; and what the window
//! does when they are pressed.

use super::app::NoblescopeApp;
use super::files;
use super::leave::Leave;
use super::particle_view::ViewMode;
use super::pending::Ask;
use crate::engine::Command;
use egui::{Key, KeyboardShortcut, ModifierNames, Modifiers};

/// What a shortcut does.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Action {
    /// Run or pause the simulation.
    RunPause,
    /// Take one step.
    StepOnce,
    /// Restart the present setup from step 0.
    Reset,
    /// Show or hide the help overlay.
    ToggleHelp,
    /// Open a setup file.
    OpenSetup,
    /// Save the form's setup to its file.
    SaveSetup,
    /// Save a PNG picture of the window.
    SavePicture,
    /// Show the box in 3D.
    ViewBox3d,
    /// Show the flat slab.
    ViewSlab,
    /// Show or hide the setup form.
    ToggleSetupForm,
}

/// One shortcut: its key, and what it does in words.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Shortcut {
    /// What it does.
    pub action: Action,
    /// The key (with modifiers).
    pub key: KeyboardShortcut,
    /// A character that does the same when typed (e.g. "?", whatever keys type it).
    pub typed: Option<&'static str>,
    /// Whether it works while a text field has the keyboard. Plain keys that type text (Space,
    /// S, R, ?) do not; keys with Ctrl, and F1, do.
    pub while_typing: bool,
    /// What it does, for the help overlay and tooltips.
    pub what: &'static str,
}

const fn plain(action: Action, key: Key, what: &'static str) -> Shortcut {
    Shortcut {
        action,
        key: KeyboardShortcut::new(Modifiers::NONE, key),
        typed: None,
        while_typing: false,
        what,
    }
}

const fn command(action: Action, key: Key, what: &'static str) -> Shortcut {
    Shortcut {
        action,
        key: KeyboardShortcut::new(Modifiers::COMMAND, key),
        typed: None,
        while_typing: true,
        what,
    }
}

/// Every shortcut, in the order they are handled within a frame.
pub const SHORTCUTS: &[Shortcut] = &[
    plain(Action::RunPause, Key::Space, "run / pause"),
    plain(Action::StepOnce, Key::S, "one step (pauses first)"),
    plain(Action::Reset, Key::R, "restart the present setup from step 0"),
    Shortcut {
        action: Action::ToggleHelp,
        key: KeyboardShortcut::new(Modifiers::NONE, Key::F1),
        typed: Some("?"),
        while_typing: true,
        what: "show or hide this help",
    },
    command(Action::OpenSetup, Key::O, "open a setup file"),
    command(Action::SaveSetup, Key::S, "save the setup file"),
    command(Action::SavePicture, Key::P, "save a PNG picture of the window"),
    command(Action::ViewBox3d, Key::Num1, "box 3D view"),
    command(Action::ViewSlab, Key::Num2, "slab 2D view"),
    command(Action::ToggleSetupForm, Key::Num3, "show or hide the setup form"),
];

impl Shortcut {
    /// The shortcut of `action`.
    pub fn of(action: Action) -> &'static Shortcut {
        SHORTCUTS
            .iter()
            .find(|s| s.action == action)
            .expect("every action has a shortcut")
    }

    /// The keys as this platform names them ("Ctrl+O", "⌘O", "F1 or ?").
    pub fn keys(&self, ctx: &egui::Context) -> String {
        self.with_typed(ctx.format_shortcut(&self.key))
    }

    /// The keys as named on Linux and Windows, without a context ("Ctrl+O").
    pub fn keys_plain(&self) -> String {
        self.with_typed(self.key.format(&ModifierNames::NAMES, false))
    }

    /// "keys: what it does", for tooltips.
    pub fn hint(&self, ctx: &egui::Context) -> String {
        format!("{}: {}", self.keys(ctx), self.what)
    }

    fn with_typed(&self, keys: String) -> String {
        match self.typed {
            Some(t) => format!("{keys} or {t}"),
            None => keys,
        }
    }
}

/// The keys of `action` as this platform names them, for menu items.
pub fn keys_of(ctx: &egui::Context, action: Action) -> String {
    Shortcut::of(action).keys(ctx)
}

/// The tooltip "keys: what it does" of `action`.
pub fn hint_of(ctx: &egui::Context, action: Action) -> String {
    Shortcut::of(action).hint(ctx)
}

/// The actions whose shortcuts were pressed this frame, in table order; their key presses are
/// consumed. While a text field has the keyboard, plain keys are left to the text field.
pub fn pressed(ctx: &egui::Context) -> Vec<Action> {
    let typing = ctx.egui_wants_keyboard_input();
    ctx.input_mut(|i| {
        let mut actions = Vec::new();
        for s in SHORTCUTS {
            let live = s.while_typing || !typing;
            let key = live && i.consume_shortcut(&s.key);
            let typed = !typing
                && s.typed.is_some_and(|t| {
                    i.events
                        .iter()
                        .any(|e| matches!(e, egui::Event::Text(x) if x == t))
                });
            if key || typed {
                actions.push(s.action);
            }
        }
        actions
    })
}

impl NoblescopeApp {
    /// Does what the pressed shortcuts ask.
    pub(super) fn keys(&mut self, ctx: &egui::Context) {
        for action in pressed(ctx) {
            match action {
                Action::RunPause => self.toggle_run(),
                Action::StepOnce => self.send(Command::StepOnce),
                Action::Reset => self.send(Command::Reset),
                Action::ToggleHelp => self.help_open = !self.help_open,
                Action::OpenSetup => self.request_leave(ctx, Leave::OpenDialog),
                Action::SaveSetup => self.save_setup(ctx, false, None),
                Action::SavePicture => self.ask_file(ctx, Ask::SavePicture, files::pick_png_to_save),
                Action::ViewBox3d => self.view.settings.mode = ViewMode::Box3d,
                Action::ViewSlab => self.view.settings.mode = ViewMode::Slab,
                Action::ToggleSetupForm => self.form_open = !self.form_open,
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_action_has_one_shortcut_with_words() {
        let all = [
            Action::RunPause,
            Action::StepOnce,
            Action::Reset,
            Action::ToggleHelp,
            Action::OpenSetup,
            Action::SaveSetup,
            Action::SavePicture,
            Action::ViewBox3d,
            Action::ViewSlab,
            Action::ToggleSetupForm,
        ];
        for a in all {
            assert_eq!(SHORTCUTS.iter().filter(|s| s.action == a).count(), 1, "{a:?}");
        }
        assert!(SHORTCUTS.iter().all(|s| !s.what.is_empty()));
    }

    #[test]
    fn keys_are_named_as_before() {
        let names: Vec<String> = SHORTCUTS.iter().map(Shortcut::keys_plain).collect();
        assert_eq!(
            names,
            [
                "Space", "S", "R", "F1 or ?", "Ctrl+O", "Ctrl+S", "Ctrl+P", "Ctrl+1", "Ctrl+2", "Ctrl+3"
            ]
        );
    }

    #[test]
    fn only_plain_text_keys_give_way_to_typing() {
        for s in SHORTCUTS {
            let types_text = s.key.modifiers.is_none() && s.key.logical_key != Key::F1;
            assert_eq!(s.while_typing, !types_text, "{:?}", s.action);
        }
    }
}
