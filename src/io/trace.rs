//! What a verdict was judged on, so a reviewer can re-run it: the board's SHA-256 (of the bytes read, or of the
//! board as the window shows it), where it came from, the tool's version, the re-run command and the date.

use super::{BoardError, board_to_string};
use crate::model::Board;
use sha2::{Digest, Sha256};
use std::path::Path;

/// Where a verdict comes from.
#[derive(Debug, Clone, PartialEq)]
pub struct Trace {
    /// The board file as the user named it (or "built-in sample ...").
    pub source: String,
    /// SHA-256 of the board's bytes, lowercase hex.
    pub sha256: String,
    /// The command that re-runs the check.
    pub command: String,
    /// The day it was made, YYYY-MM-DD (UTC).
    pub date: String,
    /// True when the board judged has edits not saved to `source`: the file on disk is a different board.
    pub unsaved_edits: bool,
}

impl Trace {
    /// The tool's version.
    pub fn version(&self) -> &'static str {
        env!("CARGO_PKG_VERSION")
    }

    /// The trace in lines for people, the same in `check` and the report.
    pub fn lines(&self) -> Vec<String> {
        let mut out = Vec::new();
        if self.unsaved_edits {
            out.push(format!(
                "UNSAVED EDITS: this is the board as shown in the window, not the file {}; the hash is of the board \
                 as shown, and the file on disk gives another verdict.",
                self.source
            ));
        }
        out.push(format!("board: {}", self.source));
        out.push(format!("SHA-256: {}", self.sha256));
        out.push(format!("hushrail {} on {} (UTC)", self.version(), self.date));
        out.push(format!("re-run: {}", self.command));
        out
    }
}

/// SHA-256 (FIPS 180-4) of some bytes, lowercase hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes).iter().map(|b| format!("{b:02x}")).collect()
}

/// SHA-256 of a board as it stands (its file text as it would be saved): what the window's report judged.
pub fn board_sha256(board: &Board) -> String {
    sha256_hex(board_to_string(board).as_bytes())
}

/// Read and check a board file as [`super::read_board`] does, and the SHA-256 of exactly the bytes read.
pub fn read_board_traced(path: &Path) -> Result<(Board, String), BoardError> {
    let bytes = super::board_file::read_board_bytes(path)?;
    let digest = sha256_hex(&bytes);
    let board = super::board_file::board_from_bytes(path, bytes)?;
    super::board_file::refuse_unusable(path, board).map(|b| (b, digest))
}

/// Read and check a board file as [`super::read_board_keeping_unusable`] does (the window's reader), and the
/// SHA-256 of exactly the bytes read: what a report of the unchanged board judged, even if the file changes later.
pub fn read_board_keeping_unusable_traced(path: &Path) -> Result<(Board, String), BoardError> {
    let bytes = super::board_file::read_board_bytes(path)?;
    let digest = sha256_hex(&bytes);
    super::board_file::board_from_bytes(path, bytes).map(|b| (b, digest))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_of_the_fips_examples() {
        // FIPS 180-4 / NIST example values for "abc" and the empty message.
        assert_eq!(sha256_hex(b"abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
        assert_eq!(sha256_hex(b""), "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
    }
}
