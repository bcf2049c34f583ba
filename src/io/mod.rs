//! The only part of the library that touches files: board files, netlists, Touchstone files, the bill of
//! materials, exports and the review report.

mod board_file;
mod bom;
mod mesh_netlist;
mod netlist;
mod png_image;
mod report;
mod svg_plot;
mod touchstone;

pub use board_file::{
    FORMAT_TAG, FORMAT_VERSION, board_to_string, load_measurements, parse_board, read_board,
    read_board_keeping_unusable, write_board,
};
pub use bom::{Bom, BomLine, bill_of_materials, bom_csv, bom_text, cost_words, part_words, total_cost_words};
pub use mesh_netlist::{MAX_MESH_CELLS, mesh_drive_node, mesh_netlist};
pub use netlist::{AcSweep, DIE_NODE, RAIL_NODE, Transient, parse_wrdata, rail_netlist, rail_tran_netlist};
pub use png_image::{png_bytes, write_png};
pub use report::{
    CAUTIONS, DroopSection, ReportContext, civil_from_days, escape, report_html, utc_date_today, write_report,
};
pub use svg_plot::{PLOT_POINTS, PLOT_SIZE, impedance_svg, plot_range_hz};
pub use touchstone::{
    DataFormat, Fixture, Parameter, Touchstone, TouchstoneError, Version, one_port_s_to_z, parse_touchstone,
    ports_from_extension, read_touchstone, s1p_string, shunt_through_s21_to_z, write_s1p, z_to_one_port_s,
};

use crate::model::Problem;
use std::fmt;
use std::io::Write;
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

    /// One line per problem: `file:place: reason`.
    pub fn lines(&self) -> Vec<String> {
        self.problems
            .iter()
            .map(|p| match p.place {
                Place::Whole => format!("{}: {}", self.file, p.reason),
                _ => format!("{}:{}: {}", self.file, p.place, p.reason),
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

/// Write `bytes` to `path` so that a crash at any moment leaves either the old file or the new one, never half of
/// one: a temporary file beside the target (same directory, so the rename stays on one file system), written,
/// flushed and synced, then renamed over the target.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => std::path::PathBuf::from("."),
    };
    let name = path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_else(|| "board".into());
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let mut file = std::fs::File::create(&tmp)?;
        file.write_all(bytes)?;
        file.flush()?;
        file.sync_all()?;
        drop(file);
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}
