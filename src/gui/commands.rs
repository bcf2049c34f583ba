//! What the panels ask of the window. A panel does not change the board or the document itself: it queues a
//! [`Command`], and [`App::apply_commands`] carries the frame's commands out in order, once, after every panel
//! is drawn. So a frame draws one board from top to bottom, every change takes the one path through the history,
//! and a new panel only has to say what it wants.
//!
//! An edit is checked against the board when it is asked for ([`Draft::propose`]), so a refused value shows its
//! reason at its field at once; it lands when the commands are applied.

use super::app::{App, Pending};
use super::exports::FileAction;
use super::history::{Edit, Refusal};
use super::status::Status;
use crate::model::Board;

/// One thing a panel asks for.
#[derive(Debug, Clone, PartialEq)]
pub enum Command {
    /// Change the board.
    Edit {
        /// The change.
        edit: Edit,
        /// What it does, in words, for the Undo menu.
        label: String,
        /// Fold into the last step when it edits the same value (a count being dragged).
        merge: bool,
        /// The field whose message a refusal replaces (its key in [`super::number_field::Fields`]).
        field: Option<String>,
    },
    /// Select rail n (a rail just added), once the edits before it have landed.
    SelectRail(usize),
    /// Select part n (a part just added), once the edits before it have landed.
    SelectPart(usize),
    /// Undo the last edit.
    Undo,
    /// Redo the last undone edit.
    Redo,
    /// Open a file, start a new board, close: asks first when there are unsaved changes.
    Request(Pending),
    /// Replace the board by the built-in sample.
    OpenSample,
    /// Save to the board's file (or ask where).
    Save,
    /// Ask where to save, then save.
    SaveAs,
    /// Ask for a file for a read or a write (open, save, the report, an export).
    ChooseFile(FileAction),
    /// Switch the theme (true: dark).
    SetDark(bool),
    /// Pin option n of the last search on the plot.
    PinOption(usize),
    /// Apply option n of the last search as one edit.
    ApplyOption(usize),
    /// Say this on the status line once the commands before it have landed (an edit clears the line).
    Say(super::status::Status),
}

/// The board as a panel sees it while drawing, and the queue its requests go to.
pub struct Draft<'a> {
    /// The board as it stands this frame.
    pub board: &'a Board,
    commands: &'a mut Vec<Command>,
}

impl<'a> Draft<'a> {
    /// A panel's view of `board`, queueing into `commands`.
    pub fn new(board: &'a Board, commands: &'a mut Vec<Command>) -> Draft<'a> {
        Draft { board, commands }
    }

    /// Ask for `edit`: checked against the board now (a refusal comes back at once, for the field to show), and
    /// queued to land when the frame's commands are applied.
    pub fn propose(&mut self, edit: Edit, label: String, merge: bool, field: Option<&str>) -> Result<(), Refusal> {
        edit.check(self.board)?;
        self.commands.push(Command::Edit { edit, label, merge, field: field.map(str::to_string) });
        Ok(())
    }

    /// Queue a command that is not an edit.
    pub fn ask(&mut self, command: Command) {
        self.commands.push(command);
    }
}

impl App {
    /// A panel's view of the board and the window's command queue.
    pub(super) fn draft(&mut self) -> Draft<'_> {
        Draft::new(&self.doc.board, &mut self.commands)
    }

    /// Ask for an edit from the window's own code (see [`Draft::propose`]).
    pub(super) fn propose(
        &mut self,
        edit: Edit,
        label: String,
        merge: bool,
        field: Option<&str>,
    ) -> Result<(), Refusal> {
        self.draft().propose(edit, label, merge, field)
    }

    /// Queue a command for the end of the frame.
    pub fn ask(&mut self, command: Command) {
        self.commands.push(command);
    }

    /// Carry out the frame's commands in the order they were asked. Returns true when any was there (the
    /// window then draws again, showing their outcome).
    pub fn apply_commands(&mut self) -> bool {
        let commands = std::mem::take(&mut self.commands);
        let any = !commands.is_empty();
        for command in commands {
            self.apply_command(command);
        }
        any
    }

    fn apply_command(&mut self, command: Command) {
        match command {
            Command::Edit { edit, label, merge, field } => {
                // Checked when asked; an earlier command of the same frame may still have changed the board since.
                let refused = self.edit(edit, label, merge).err();
                match (refused, field) {
                    (None, Some(key)) => self.view.fields.forget(&key),
                    (None, None) => {}
                    (Some(problems), Some(key)) => {
                        let reason = super::number_field::refusal_text(&key, &problems);
                        self.view.fields.set_error(&key, String::new(), reason);
                    }
                    (Some(problems), None) => {
                        let why: Vec<String> = problems.iter().map(|p| p.to_string()).collect();
                        self.status = Some(Status::error(format!("Not changed: {}", why.join("; "))));
                    }
                }
            }
            Command::Say(status) => self.status = Some(status),
            Command::SelectRail(n) => {
                if n < self.doc.board.rails.len() {
                    self.view.selected_rail = n;
                    self.view.selected_finding = None;
                }
            }
            Command::SelectPart(n) => {
                if n < self.doc.board.parts.len() {
                    self.view.selected_part = n;
                }
            }
            Command::Undo => self.undo(),
            Command::Redo => self.redo(),
            Command::Request(pending) => self.request(pending),
            Command::OpenSample => self.open_sample(),
            Command::Save => {
                self.save();
            }
            Command::SaveAs => {
                self.save_as();
            }
            Command::ChooseFile(action) => self.choose_file(action),
            Command::SetDark(dark) => self.set_dark(dark),
            Command::PinOption(n) => self.pin_option(n),
            Command::ApplyOption(n) => self.apply_option(n),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn app() -> App {
        App::new_with_board(crate::samples::default_board().expect("the sample reads"), "sample", None)
    }

    #[test]
    fn an_edit_is_checked_when_asked_and_lands_once_when_the_commands_are_applied() {
        let mut app = app();
        let before = app.board().clone();
        let count = before.rails[0].decaps[0].count;
        let edit = Edit::SetCount { rail: 0, group: 0, count: count + 1 };
        app.propose(edit, "one more".into(), false, Some("rails[0].decaps[0].count")).unwrap();
        assert_eq!(app.board(), &before, "asked, not yet applied");
        assert!(app.apply_commands());
        assert_eq!(app.board().rails[0].decaps[0].count, count + 1);
        assert!(!app.apply_commands(), "applied once");
        // A refused edit comes back at once and queues nothing.
        let bad = Edit::SetRail {
            rail: 0,
            value: Box::new(crate::model::Rail { voltage_v: -1.0, ..before.rails[0].clone() }),
        };
        assert!(app.propose(bad, "negative".into(), false, None).is_err());
        assert!(!app.apply_commands());
        // Undo is a command too, and takes the edit back.
        app.ask(Command::Undo);
        app.apply_commands();
        assert_eq!(app.board(), &before);
    }

    #[test]
    fn a_new_rail_is_selected_once_it_is_there() {
        let mut app = app();
        let at = app.board().rails.len();
        let rail = super::super::app::new_rail("EXTRA");
        app.propose(Edit::AddRail { at, value: Box::new(rail) }, "add".into(), false, None).unwrap();
        app.ask(Command::SelectRail(at));
        // Asking to select a rail that is not there changes nothing.
        app.ask(Command::SelectRail(at + 5));
        app.apply_commands();
        assert_eq!(app.selected_rail(), at);
        assert_eq!(app.board().rails[at].name, "EXTRA");
    }
}
