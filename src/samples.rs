//! The invented demo boards shipped with the program. One is built into the binary so that the planner and the
//! check always have a board to show.

use crate::io::{BoardError, parse_board};
use crate::model::Board;

/// The file name of the built-in board, as shown to people.
pub const DEFAULT_SAMPLE_NAME: &str = "sample_boards/edge_camera.json";

const DEFAULT_SAMPLE_TEXT: &str = include_str!("../sample_boards/edge_camera.json");

/// The built-in sample board (an invented edge-camera main board).
pub fn default_board() -> Result<Board, BoardError> {
    parse_board(DEFAULT_SAMPLE_TEXT, DEFAULT_SAMPLE_NAME)
}

/// The built-in sample board's file text, as shipped (what its SHA-256 is taken of).
pub fn default_board_text() -> &'static str {
    DEFAULT_SAMPLE_TEXT
}

/// The name of the built-in shelf, as shown to people.
pub const SHELF_NAME: &str = "assets/shelf.json";

const SHELF_TEXT: &str = include_str!("../assets/shelf.json");

/// The built-in shelf of generic parts (typical, recalled values), as a board with parts and no rails.
pub fn shelf() -> Result<Board, BoardError> {
    parse_board(SHELF_TEXT, SHELF_NAME)
}
