//! Every change to the board is an [`Edit`], applied in one place ([`History::apply`]). An edit is checked
//! against the board's rules before it lands; a refused edit leaves the board exactly as it was. Each applied edit
//! keeps its inverse, so undo and redo are just more edits, and "unsaved changes" is a position in the history.
//!
//! Nothing here knows about the window: the history is plain data and is tested without one.

use crate::model::{Board, Part, Problem, Rail, validate_board};

/// One change to the board.
#[derive(Debug, Clone, PartialEq)]
pub enum Edit {
    /// Set how many parts a decap group fits.
    SetCount {
        /// Rail index.
        rail: usize,
        /// Group index within the rail.
        group: usize,
        /// The new count.
        count: u32,
    },
    /// Replace a rail's inputs (voltage, ripple, band, source, plane, loads, groups, name).
    SetRail {
        /// Rail index.
        rail: usize,
        /// The rail as it should be.
        value: Box<Rail>,
    },
    /// Insert a rail at a position.
    AddRail {
        /// Where it goes (0 ..= number of rails).
        at: usize,
        /// The new rail.
        value: Box<Rail>,
    },
    /// Take a rail out.
    RemoveRail {
        /// Rail index.
        at: usize,
    },
    /// Replace a part. When its id changes, every group that named the old id follows to the new one.
    SetPart {
        /// Part index.
        at: usize,
        /// The part as it should be.
        value: Box<Part>,
    },
    /// Insert a part at a position.
    AddPart {
        /// Where it goes (0 ..= number of parts).
        at: usize,
        /// The new part.
        value: Box<Part>,
    },
    /// Take a part out; refused while any decap group uses it.
    RemovePart {
        /// Part index.
        at: usize,
    },
    /// Rename the board.
    SetBoardName {
        /// The new name.
        name: String,
    },
    /// Replace the whole board at once: for a change that touches parts and rails together (a suggested mix
    /// applied adds parts and sets a rail's groups) and must be one undo step.
    SetBoard {
        /// The board as it should be.
        value: Box<Board>,
    },
}

/// Why an edit did not land: one or more problems, each with the board path it concerns.
pub type Refusal = Vec<Problem>;

fn refuse(path: impl Into<String>, reason: impl Into<String>) -> Refusal {
    vec![Problem::new(path, reason)]
}

impl Edit {
    /// Apply this edit to `board`. On success the board is changed and the edit that undoes it is returned; on
    /// failure the board is untouched and the problems say why.
    pub fn apply(&self, board: &mut Board) -> Result<Edit, Refusal> {
        // Work on a copy so that a refused edit cannot leave half a change behind. Boards are small (tens of
        // parts and groups), so the copy costs microseconds.
        let mut next = board.clone();
        let inverse = self.apply_unchecked(&mut next)?;
        let problems = validate_board(&next);
        if !problems.is_empty() {
            return Err(problems);
        }
        *board = next;
        Ok(inverse)
    }

    /// Whether this edit would land on `board`, leaving `board` as it is: the problems if it would be refused.
    pub fn check(&self, board: &Board) -> Result<(), Refusal> {
        let mut next = board.clone();
        self.apply_unchecked(&mut next)?;
        let problems = validate_board(&next);
        if problems.is_empty() { Ok(()) } else { Err(problems) }
    }

    /// Apply without the board's rules (they are checked by [`Edit::apply`] on the result).
    fn apply_unchecked(&self, board: &mut Board) -> Result<Edit, Refusal> {
        match self {
            Edit::SetCount { rail, group, count } => {
                let path = format!("rails[{rail}].decaps[{group}].count");
                let g = board
                    .rails
                    .get_mut(*rail)
                    .and_then(|r| r.decaps.get_mut(*group))
                    .ok_or_else(|| refuse(&path, "no such decap group"))?;
                let old = std::mem::replace(&mut g.count, *count);
                Ok(Edit::SetCount { rail: *rail, group: *group, count: old })
            }
            Edit::SetRail { rail, value } => {
                let slot =
                    board.rails.get_mut(*rail).ok_or_else(|| refuse(format!("rails[{rail}]"), "no such rail"))?;
                let old = std::mem::replace(slot, (**value).clone());
                Ok(Edit::SetRail { rail: *rail, value: Box::new(old) })
            }
            Edit::AddRail { at, value } => {
                if *at > board.rails.len() {
                    return Err(refuse(format!("rails[{at}]"), "position past the end of the rails"));
                }
                board.rails.insert(*at, (**value).clone());
                Ok(Edit::RemoveRail { at: *at })
            }
            Edit::RemoveRail { at } => {
                if *at >= board.rails.len() {
                    return Err(refuse(format!("rails[{at}]"), "no such rail"));
                }
                if board.rails.len() == 1 {
                    return Err(refuse("rails", "a board keeps at least one rail"));
                }
                let old = board.rails.remove(*at);
                Ok(Edit::AddRail { at: *at, value: Box::new(old) })
            }
            Edit::SetPart { at, value } => {
                let path = format!("parts[{at}]");
                let old = board.parts.get(*at).cloned().ok_or_else(|| refuse(&path, "no such part"))?;
                if old.id != value.id {
                    if board.part(&value.id).is_some() {
                        return Err(refuse(
                            format!("{path}.id"),
                            format!("another part already has the id \"{}\"", value.id),
                        ));
                    }
                    // Groups follow the rename, so renaming a part never breaks a rail.
                    for rail in &mut board.rails {
                        for g in &mut rail.decaps {
                            if g.part == old.id {
                                g.part = value.id.clone();
                            }
                        }
                    }
                }
                board.parts[*at] = (**value).clone();
                Ok(Edit::SetPart { at: *at, value: Box::new(old) })
            }
            Edit::AddPart { at, value } => {
                if *at > board.parts.len() {
                    return Err(refuse(format!("parts[{at}]"), "position past the end of the parts"));
                }
                board.parts.insert(*at, (**value).clone());
                Ok(Edit::RemovePart { at: *at })
            }
            Edit::RemovePart { at } => {
                let path = format!("parts[{at}]");
                let part = board.parts.get(*at).ok_or_else(|| refuse(&path, "no such part"))?;
                let users = part_users(board, &part.id);
                if !users.is_empty() {
                    return Err(refuse(
                        path,
                        format!("\"{}\" is still used by {}; remove those groups first", part.id, users.join(", ")),
                    ));
                }
                let old = board.parts.remove(*at);
                Ok(Edit::AddPart { at: *at, value: Box::new(old) })
            }
            Edit::SetBoardName { name } => {
                if name.trim().is_empty() {
                    return Err(refuse("name", "the board's name must not be empty"));
                }
                let old = std::mem::replace(&mut board.name, name.clone());
                Ok(Edit::SetBoardName { name: old })
            }
            Edit::SetBoard { value } => {
                let old = std::mem::replace(board, (**value).clone());
                Ok(Edit::SetBoard { value: Box::new(old) })
            }
        }
    }

    /// Edits of the same field that may fold into one undo step while a drag goes on.
    fn merge_key(&self) -> Option<(u8, usize, usize)> {
        match self {
            Edit::SetCount { rail, group, .. } => Some((0, *rail, *group)),
            // A part dragged on the board map: every step of one drag replaces the same rail.
            Edit::SetRail { rail, .. } => Some((1, *rail, 0)),
            _ => None,
        }
    }
}

/// The groups that use a part, in words: "VCORE group 3 (×24)".
pub fn part_users(board: &Board, id: &str) -> Vec<String> {
    board
        .uses_of_part(id)
        .into_iter()
        .map(|(ri, gi)| {
            let rail = &board.rails[ri];
            format!("{} group {} (×{})", rail.name, gi + 1, rail.decaps[gi].count)
        })
        .collect()
}

/// One step of the history.
#[derive(Debug, Clone)]
struct Step {
    /// What the user did, in words, for the Undo/Redo menu.
    label: String,
    /// The edit as applied.
    edit: Edit,
    /// The edit that takes it back.
    inverse: Edit,
}

/// The undo and redo stacks of one document, and where it was last saved.
#[derive(Debug, Clone, Default)]
pub struct History {
    undo: Vec<Step>,
    redo: Vec<Step>,
    /// Length of the undo stack when the document was last saved; `None` when that state can no longer be
    /// reached (a save, an undo past it, then a new edit).
    saved_at: Option<usize>,
    /// Bumped on every change to the board, so caches and views know when to look again.
    revision: u64,
}

impl History {
    /// A fresh history for a document just opened or saved (no unsaved changes).
    pub fn new() -> History {
        History { saved_at: Some(0), ..History::default() }
    }

    /// A fresh history for a document that has never been saved where it came from (restored work).
    pub fn new_unsaved() -> History {
        History { saved_at: None, ..History::default() }
    }

    /// Apply `edit` to `board` and record it. With `merge`, an edit of the same field as the last step (a count
    /// being dragged) folds into that step, so one drag is one undo; a step that was saved is never folded into.
    pub fn apply(
        &mut self,
        board: &mut Board,
        edit: Edit,
        label: impl Into<String>,
        merge: bool,
    ) -> Result<(), Refusal> {
        let inverse = edit.apply(board)?;
        self.revision += 1;
        self.redo.clear();
        if self.saved_at.is_some_and(|s| s > self.undo.len()) {
            self.saved_at = None;
        }
        let label = label.into();
        let top_is_saved = self.saved_at == Some(self.undo.len());
        if merge
            && !top_is_saved
            && let Some(top) = self.undo.last_mut()
            && top.edit.merge_key().is_some()
            && top.edit.merge_key() == edit.merge_key()
        {
            // Keep the first step's inverse: undo takes the whole drag back.
            top.edit = edit;
            top.label = label;
            return Ok(());
        }
        self.undo.push(Step { label, edit, inverse });
        Ok(())
    }

    /// Take the last step back. Returns its label, or `None` when there is nothing to undo.
    pub fn undo(&mut self, board: &mut Board) -> Option<String> {
        let step = self.undo.pop()?;
        match step.inverse.apply(board) {
            Ok(_) => {
                self.revision += 1;
                let label = step.label.clone();
                self.redo.push(step);
                Some(label)
            }
            Err(_) => {
                // The inverse of an applied edit always fits the board it came from; if it ever does not, keep
                // the step where it was rather than lose it.
                self.undo.push(step);
                None
            }
        }
    }

    /// Apply the last undone step again. Returns its label, or `None` when there is nothing to redo.
    pub fn redo(&mut self, board: &mut Board) -> Option<String> {
        let step = self.redo.pop()?;
        match step.edit.apply(board) {
            Ok(_) => {
                self.revision += 1;
                let label = step.label.clone();
                self.undo.push(step);
                Some(label)
            }
            Err(_) => {
                self.redo.push(step);
                None
            }
        }
    }

    /// What Undo would take back.
    pub fn undo_label(&self) -> Option<&str> {
        self.undo.last().map(|s| s.label.as_str())
    }

    /// What Redo would apply again.
    pub fn redo_label(&self) -> Option<&str> {
        self.redo.last().map(|s| s.label.as_str())
    }

    /// True when the board differs from what was last saved (or was never saved).
    pub fn is_dirty(&self) -> bool {
        self.saved_at != Some(self.undo.len())
    }

    /// Remember the current state as saved.
    pub fn mark_saved(&mut self) {
        self.saved_at = Some(self.undo.len());
    }

    /// A number that changes whenever the board changes through this history.
    pub fn revision(&self) -> u64 {
        self.revision
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn board() -> Board {
        crate::samples::default_board().expect("sample board")
    }

    #[test]
    fn undo_and_redo_restore_exactly() {
        let mut b = board();
        let original = b.clone();
        let mut h = History::new();
        h.apply(&mut b, Edit::SetCount { rail: 0, group: 2, count: 3 }, "count", false).unwrap();
        assert_eq!(b.rails[0].decaps[2].count, 3);
        assert!(h.is_dirty());
        let changed = b.clone();
        assert_eq!(h.undo(&mut b).as_deref(), Some("count"));
        assert_eq!(b, original);
        assert!(!h.is_dirty());
        h.redo(&mut b);
        assert_eq!(b, changed);
    }

    #[test]
    fn refused_edit_leaves_board_untouched() {
        let mut b = board();
        let original = b.clone();
        let mut h = History::new();
        let mut rail = b.rails[0].clone();
        rail.voltage_v = -1.0;
        let err = h.apply(&mut b, Edit::SetRail { rail: 0, value: Box::new(rail) }, "voltage", false).unwrap_err();
        assert_eq!(err[0].path, "rails[0].voltage_v");
        assert_eq!(b, original);
        assert!(!h.is_dirty());
        assert!(h.apply(&mut b, Edit::SetCount { rail: 9, group: 0, count: 1 }, "x", false).is_err());
    }

    #[test]
    fn a_drag_is_one_step_but_not_across_a_save() {
        let mut b = board();
        let before = b.rails[0].decaps[2].count;
        let mut h = History::new();
        for c in [25, 26, 27] {
            h.apply(&mut b, Edit::SetCount { rail: 0, group: 2, count: c }, "drag", c != 25).unwrap();
        }
        h.undo(&mut b);
        assert_eq!(b.rails[0].decaps[2].count, before);
        h.redo(&mut b);
        h.mark_saved();
        h.apply(&mut b, Edit::SetCount { rail: 0, group: 2, count: 28 }, "drag", true).unwrap();
        assert!(h.is_dirty());
        h.undo(&mut b);
        assert_eq!(b.rails[0].decaps[2].count, 27);
        assert!(!h.is_dirty());
    }

    #[test]
    fn part_in_use_is_not_removed_and_rename_follows() {
        let mut b = board();
        let mut h = History::new();
        let i = b.parts.iter().position(|p| p.id == "mlcc-100n-0402").unwrap();
        let err = h.apply(&mut b, Edit::RemovePart { at: i }, "remove", false).unwrap_err();
        assert!(err[0].reason.contains("VCORE group 3"), "{}", err[0].reason);
        let mut renamed = b.parts[i].clone();
        renamed.id = "small-100n".into();
        h.apply(&mut b, Edit::SetPart { at: i, value: Box::new(renamed) }, "rename", false).unwrap();
        assert_eq!(b.rails[0].decaps[2].part, "small-100n");
        h.undo(&mut b);
        assert_eq!(b.rails[0].decaps[2].part, "mlcc-100n-0402");
        assert_eq!(validate_board(&b), vec![]);
    }

    #[test]
    fn saved_state_lost_after_undo_then_new_edit() {
        let mut b = board();
        let mut h = History::new();
        h.apply(&mut b, Edit::SetCount { rail: 0, group: 0, count: 5 }, "a", false).unwrap();
        h.mark_saved();
        h.undo(&mut b);
        assert!(h.is_dirty());
        h.apply(&mut b, Edit::SetCount { rail: 0, group: 0, count: 7 }, "b", false).unwrap();
        assert!(h.is_dirty());
        h.undo(&mut b);
        assert!(h.is_dirty(), "the saved state (count 5) is gone from the history");
    }
}
