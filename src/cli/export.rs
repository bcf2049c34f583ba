//! `hushrail export`: one rail's impedance for other tools, as a one-port Touchstone file and/or CSV.

use super::{EXIT_PASS, load_board};
use crate::analysis::{log_grid, sweep_in, target_impedance};
use clap::Args;
use std::path::PathBuf;

/// Options of `hushrail export`.
#[derive(Debug, Args)]
#[command(group(clap::ArgGroup::new("output").required(true).multiple(true).args(["touchstone", "csv"])))]
pub struct ExportArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Name of the rail.
    #[arg(long)]
    pub rail: String,
    /// Write the impedance seen from the rail as a one-port Touchstone 1.1 file (S-parameters, RI, 50 Ω).
    #[arg(long, value_name = "FILE.s1p")]
    pub touchstone: Option<PathBuf>,
    /// Write freq_hz,z_re_ohm,z_im_ohm,z_mag_ohm,z_phase_deg,target_ohm as CSV.
    #[arg(long, value_name = "FILE")]
    pub csv: Option<PathBuf>,
    /// The frequencies and how the rail is seen.
    #[command(flatten)]
    pub spec: super::SweepSpec,
}

/// Write the requested files; nothing is written when an option is bad.
pub fn run(args: &ExportArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let rail = super::find_rail(&board, &file, &args.rail)?;
    let (from, to) = super::frequency_range(&args.spec.from, &args.spec.to, rail.band_hz_or_default())?;
    let view = args.spec.view.resolve(rail)?;
    let points = args.spec.points()?;
    if let Some(path) = &args.touchstone {
        let ext = path.extension().map(|e| e.to_string_lossy().to_ascii_lowercase());
        if ext.as_deref() != Some("s1p") {
            return Err(format!("{}: a one-port Touchstone file must end in .s1p", path.display()));
        }
    }
    let grid = log_grid(from, to, points);
    let z = sweep_in(&board, rail, &grid, view, args.spec.corner.into());
    let mut outputs: Vec<(&PathBuf, String)> = Vec::new();
    if let Some(path) = &args.touchstone {
        let corner = crate::physics::Corner::from(args.spec.corner);
        outputs.push((path, crate::io::impedance_s1p(&board, rail, &grid, &z, view, corner, &file)));
    }
    if let Some(path) = &args.csv {
        outputs.push((path, crate::io::impedance_csv(&grid, &z, target_impedance(rail))));
    }
    let files: Vec<(&std::path::Path, &[u8])> = outputs.iter().map(|(p, t)| (p.as_path(), t.as_bytes())).collect();
    super::write_files(&files, args.board.as_ref(), &board)?;
    Ok(EXIT_PASS)
}
