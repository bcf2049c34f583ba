//! The status line's message: what just happened, of one of a few kinds, each drawn its own way (an error in the
//! verdict-fail colour, work under way with a spinner). One type for every place that says something there.

/// What kind of message the status line shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StatusKind {
    /// Something done, or something to know (saved, opened, undone).
    Info,
    /// Something that did not happen, and why (a refused edit, a file that could not be written).
    Error,
    /// Work going on in the background (a report being written); replaced by its outcome when it ends.
    Busy,
}

/// One message for the status line.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Status {
    /// Its kind.
    pub kind: StatusKind,
    /// Its words, one sentence or two.
    pub text: String,
}

impl Status {
    /// Something done, or something to know.
    pub fn info(text: impl Into<String>) -> Status {
        Status { kind: StatusKind::Info, text: text.into() }
    }

    /// Something that did not happen, and why.
    pub fn error(text: impl Into<String>) -> Status {
        Status { kind: StatusKind::Error, text: text.into() }
    }

    /// Work going on in the background.
    pub fn busy(text: impl Into<String>) -> Status {
        Status { kind: StatusKind::Busy, text: text.into() }
    }

    /// True for an error.
    pub fn is_error(&self) -> bool {
        self.kind == StatusKind::Error
    }
}
