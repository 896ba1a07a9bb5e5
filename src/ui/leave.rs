//! Leaving the present setup (closing the window, opening another setup) when the form holds
//! edits that would be lost: the question, its answers and what follows, as a small state
//! machine ([`LeaveQuestion`]), and the dialog that asks it ([`ask_keep_edits`]).

use std::path::PathBuf;

/// Something that would drop the form's edits.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Leave {
    /// Close the window.
    Close,
    /// Choose a setup file in the open dialog.
    OpenDialog,
    /// Open this setup file (dropped on the window).
    OpenPath(PathBuf),
    /// Open the bundled krypton scenario.
    OpenBundled,
}

impl Leave {
    /// What the edits would be lost by, for the question.
    pub fn what(&self) -> &'static str {
        match self {
            Leave::Close => "closing the window",
            Leave::OpenDialog | Leave::OpenPath(_) | Leave::OpenBundled => "opening another setup",
        }
    }
}

/// The user's answer to "Keep your edits?".
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum KeepEdits {
    /// Save the setup to a file, then leave.
    SaveFirst,
    /// Leave; the edits are lost.
    Discard,
    /// Stay; nothing happens.
    Cancel,
}

/// What the window does next about leaving.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum LeaveStep {
    /// Nothing now: the question is open, or was answered with Cancel.
    Stay,
    /// Leave now.
    Go(Leave),
    /// Save the setup first; leave once it is saved (if saving fails, ask again).
    SaveThen(Leave),
}

/// The open question, if any.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct LeaveQuestion {
    pending: Option<Leave>,
}

impl LeaveQuestion {
    /// The user wants to `leave`: ask first if edits would be lost, else go at once.
    pub fn request(&mut self, leave: Leave, edits_would_be_lost: bool) -> LeaveStep {
        if edits_would_be_lost {
            self.pending = Some(leave);
            LeaveStep::Stay
        } else {
            LeaveStep::Go(leave)
        }
    }

    /// Asks about `leave` (or, with `None`, closes the question): a save that was to come
    /// before leaving failed or was cancelled, or the window was asked to close.
    pub fn ask_again(&mut self, leave: Option<Leave>) {
        self.pending = leave;
    }

    /// The leave waiting for an answer.
    pub fn pending(&self) -> Option<&Leave> {
        self.pending.as_ref()
    }

    /// The user answered: the question closes and this says what follows.
    pub fn answer(&mut self, answer: KeepEdits) -> LeaveStep {
        let Some(leave) = self.pending.take() else {
            return LeaveStep::Stay;
        };
        match answer {
            KeepEdits::SaveFirst => LeaveStep::SaveThen(leave),
            KeepEdits::Discard => LeaveStep::Go(leave),
            KeepEdits::Cancel => LeaveStep::Stay,
        }
    }
}

/// Draws the "Keep your edits?" dialog about `leave`; the answer, on the frame it is given.
pub fn ask_keep_edits(ctx: &egui::Context, leave: &Leave) -> Option<KeepEdits> {
    let mut answer = None;
    egui::Modal::new(egui::Id::unique("confirm-leave")).show(ctx, |ui| {
        ui.heading("Keep your edits?");
        ui.label(format!(
            "The setup form has edits that are not applied or not saved to a file. They will be lost by {}.",
            leave.what()
        ));
        ui.horizontal(|ui| {
            for (label, a) in [
                ("Save setup first", KeepEdits::SaveFirst),
                ("Discard edits", KeepEdits::Discard),
                ("Cancel", KeepEdits::Cancel),
            ] {
                if ui.button(label).clicked() {
                    answer = Some(a);
                }
            }
        });
    });
    answer
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn without_edits_to_lose_it_goes_at_once() {
        let mut q = LeaveQuestion::default();
        assert_eq!(q.request(Leave::Close, false), LeaveStep::Go(Leave::Close));
        assert_eq!(q.pending(), None);
    }

    #[test]
    fn with_edits_it_asks_and_each_answer_closes_the_question() {
        for (answer, then) in [
            (KeepEdits::SaveFirst, LeaveStep::SaveThen(Leave::OpenBundled)),
            (KeepEdits::Discard, LeaveStep::Go(Leave::OpenBundled)),
            (KeepEdits::Cancel, LeaveStep::Stay),
        ] {
            let mut q = LeaveQuestion::default();
            assert_eq!(q.request(Leave::OpenBundled, true), LeaveStep::Stay);
            assert_eq!(q.pending(), Some(&Leave::OpenBundled));
            assert_eq!(q.answer(answer), then, "{answer:?}");
            assert_eq!(q.pending(), None, "{answer:?} closes the question");
        }
    }

    #[test]
    fn a_failed_save_asks_again_and_an_answer_without_a_question_does_nothing() {
        let mut q = LeaveQuestion::default();
        assert_eq!(q.answer(KeepEdits::Discard), LeaveStep::Stay);
        q.request(Leave::OpenPath("a.ron".into()), true);
        let LeaveStep::SaveThen(leave) = q.answer(KeepEdits::SaveFirst) else {
            panic!("save first")
        };
        q.ask_again(Some(leave));
        assert_eq!(q.pending(), Some(&Leave::OpenPath("a.ron".into())));
        q.ask_again(None);
        assert_eq!(q.pending(), None);
    }

    #[test]
    fn the_question_names_what_loses_the_edits() {
        assert_eq!(Leave::Close.what(), "closing the window");
        assert_eq!(Leave::OpenDialog.what(), "opening another setup");
    }
}
