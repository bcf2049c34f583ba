//! `hushrail sweep`: one rail's |Z(f)| as CSV.

use super::{EXIT_PASS, emit, load_board};
use crate::analysis::{log_grid, magnitude_phase, sweep_in, target_impedance};
use crate::units::{full_precision, push_full_precision};
use clap::Args;
use std::path::PathBuf;

/// Options of `hushrail sweep`.
#[derive(Debug, Args)]
pub struct SweepArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Name of the rail to sweep.
    #[arg(long)]
    pub rail: String,
    /// The frequencies and how the rail is seen.
    #[command(flatten)]
    pub spec: super::SweepSpec,
}

/// Print the CSV; errors are messages for stderr.
pub fn run(args: &SweepArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let rail = super::find_rail(&board, &file, &args.rail)?;
    let (from, to) = super::frequency_range(&args.spec.from, &args.spec.to, rail.band_hz_or_default())?;
    let points = args.spec.points()?;
    let target = target_impedance(rail);
    let grid = log_grid(from, to, points);
    let view = args.spec.view.resolve(rail)?;
    let z = sweep_in(&board, rail, &grid, view, args.spec.corner.into());
    let mut text = String::with_capacity(64 * grid.len() + 64);
    text.push_str("freq_hz,z_mag_ohm,z_phase_deg,target_ohm\n");
    let target_text = full_precision(target);
    for (f, z) in grid.iter().zip(&z) {
        let (mag, phase) = magnitude_phase(*z);
        for x in [*f, mag, phase] {
            push_full_precision(&mut text, x);
            text.push(',');
        }
        text.push_str(&target_text);
        text.push('\n');
    }
    emit(&text);
    Ok(EXIT_PASS)
}
