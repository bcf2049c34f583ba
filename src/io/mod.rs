//! The only part of the library that touches files: board files, netlists, Touchstone files, the bill of
//! materials, exports and the review report.

mod board_file;
mod bom;
mod bom_csv;
mod centroid;
mod csv_table;
mod impedance_csv;
pub mod layout_import;
mod mesh_netlist;
mod netlist;
mod png_image;
mod report;
mod strict_json;
mod svg_plot;
mod touchstone;
mod trace;
mod write;

pub use board_file::{
    FORMAT_TAG, FORMAT_VERSION, board_to_string, load_measurements, parse_board, read_board,
    read_board_keeping_unusable, write_board,
};
pub use bom::{Bom, BomLine, bill_of_materials, bom_csv, bom_text, cost_words, part_words, total_cost_words};
pub use bom_csv::{BomEntry, parse_bom};
pub use centroid::{Centroid, Columns, LengthUnit, PlacedPart, Side, parse_centroid};
pub use impedance_csv::{EXPORT_Z0_OHM, impedance_csv, impedance_s1p};
pub use layout_import::{GroupMatch, ImportOptions, ImportReport, place_rail};
pub use mesh_netlist::{
    EXPORT_MESH_CELLS, MAX_MESH_CELLS, export_mesh_cell_m, mesh_drive_node, mesh_netlist, mesh_tran_netlist,
};
pub use netlist::{
    AcSweep, DIE_NODE, RAIL_NODE, Transient, one_node_refusal, parse_wrdata, rail_netlist, rail_tran_netlist,
};
pub use png_image::{png_bytes, write_png};
pub use report::{DroopSection, ReportContext, civil_from_days, escape, report_html, utc_date_today, write_report};
pub use strict_json::parse as parse_json_strict;
pub use svg_plot::{
    PLOT_POINTS, PLOT_SIZE, SIZE_LIMITS, impedance_png, impedance_svg, impedance_svg_titled, plot_range_hz,
};
pub use touchstone::{
    DataFormat, Fixture, Parameter, Touchstone, TouchstoneError, Version, one_port_s_to_z, parse_touchstone,
    ports_from_extension, read_touchstone, s1p_string, shunt_through_s21_to_z, write_s1p, z_to_one_port_s,
};
pub use trace::{Trace, board_sha256, read_board_keeping_unusable_traced, read_board_traced, sha256_hex};
pub use write::{write_atomically, write_outputs};

use crate::model::Problem;
use std::fmt;
use std::path::Path;

/// Where in a file a problem is.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Place {
    /// The file as a whole (it cannot be read, or it is not an object).
    Whole,
    /// A line and column, 1-based, for text that is not valid JSON.
    LineColumn(usize, usize),
    /// A JSON path such as `rails[1].decaps[0].part`.
    Path(String),
}

impl fmt::Display for Place {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Place::Whole => Ok(()),
            Place::LineColumn(l, c) => write!(f, "{l}:{c}"),
            Place::Path(p) => write!(f, "{p}"),
        }
    }
}

/// One problem in a file: where and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Located {
    /// Where.
    pub place: Place,
    /// Why, in plain words.
    pub reason: String,
}

/// Everything wrong with one board file, with the file's name so every message can say where.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BoardError {
    /// The file as the user named it.
    pub file: String,
    /// Each problem, in the order found.
    pub problems: Vec<Located>,
}

impl BoardError {
    /// One problem in `file`.
    pub fn single(file: impl AsRef<Path>, place: Place, reason: impl Into<String>) -> BoardError {
        BoardError {
            file: file.as_ref().display().to_string(),
            problems: vec![Located { place, reason: reason.into() }],
        }
    }

    /// Model problems (located by JSON path) in `file`.
    pub fn from_problems(file: &str, problems: Vec<Problem>) -> BoardError {
        let problems = problems
            .into_iter()
            .map(|p| Located {
                place: if p.path.is_empty() { Place::Whole } else { Place::Path(p.path) },
                reason: p.reason,
            })
            .collect();
        BoardError { file: file.to_string(), problems }
    }

    /// One line per problem: `file:place: reason`, with control characters escaped (see [`printable`]).
    pub fn lines(&self) -> Vec<String> {
        self.problems
            .iter()
            .map(|p| match p.place {
                Place::Whole => printable(&format!("{}: {}", self.file, p.reason)),
                _ => printable(&format!("{}:{}: {}", self.file, p.place, p.reason)),
            })
            .collect()
    }
}

impl fmt::Display for BoardError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.lines().join("\n"))
    }
}

impl std::error::Error for BoardError {}

/// Read a whole file of at most `max_bytes`, refusing anything that is not a regular file (a FIFO would block
/// forever, /dev/zero never ends) before opening it. The error says why in plain words.
pub fn read_limited(path: &Path, max_bytes: u64) -> Result<Vec<u8>, String> {
    use std::io::Read;
    let meta = std::fs::metadata(path).map_err(|e| format!("cannot read the file: {e}"))?;
    if !meta.is_file() {
        let what = if meta.is_dir() { "a folder" } else { "not a regular file (a device, a pipe or a socket)" };
        return Err(format!("cannot read the file: it is {what}"));
    }
    if meta.len() > max_bytes {
        return Err(format!(
            "the file is {} bytes, more than the {} MiB hushrail reads (no real file of this kind is near that size)",
            meta.len(),
            max_bytes >> 20
        ));
    }
    let file = std::fs::File::open(path).map_err(|e| format!("cannot read the file: {e}"))?;
    let mut bytes = Vec::new();
    // The size may change between the look and the read: never take more than the limit.
    file.take(max_bytes + 1).read_to_end(&mut bytes).map_err(|e| format!("cannot read the file: {e}"))?;
    if bytes.len() as u64 > max_bytes {
        return Err(format!("the file grew past the {} MiB hushrail reads while it was read", max_bytes >> 20));
    }
    Ok(bytes)
}

/// A text file's contents (a CSV from the layout tool), read as board files are (regular file, size cap, UTF-8),
/// or a message naming the file, the place and the reason.
pub fn read_text_file(path: &Path) -> Result<String, String> {
    let bytes = read_limited(path, crate::model::ranges::MAX_BOARD_BYTES)
        .map_err(|why| BoardError::single(path, Place::Whole, why).to_string())?;
    text_of(bytes).map_err(|(place, why)| BoardError::single(path, place, why).to_string())
}

/// Text from a file's bytes: UTF-8, with a leading byte-order mark dropped (JSON allows a reader to ignore one).
/// An invalid byte is named with its line, column and offset.
pub fn text_of(bytes: Vec<u8>) -> Result<String, (Place, String)> {
    let body = bytes.strip_prefix("\u{feff}".as_bytes()).map(<[u8]>::to_vec).unwrap_or(bytes);
    String::from_utf8(body).map_err(|e| {
        let good = e.utf8_error().valid_up_to();
        let bytes = e.as_bytes();
        let prefix = String::from_utf8_lossy(&bytes[..good]);
        let line = prefix.matches('\n').count() + 1;
        let column = prefix.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
        (
            Place::LineColumn(line, column),
            format!("not UTF-8 text: byte 0x{:02x} at offset {good} is not valid UTF-8", bytes[good]),
        )
    })
}

/// A message fit for a terminal: every control character (CR, LF, ESC...) written as an escape, so text from a
/// file can never forge a line of the message or drive the terminal.
pub fn printable(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for ch in text.chars() {
        if ch.is_control() {
            out.extend(ch.escape_default());
        } else {
            out.push(ch);
        }
    }
    out
}
