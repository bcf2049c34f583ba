//! `hushrail netlist`: one rail's network as a SPICE netlist that ngspice runs to the same |Z|.

use super::{EXIT_PASS, emit, load_board};
use crate::io::{AcSweep, rail_netlist, write_atomically};
use crate::units::{Unit, parse};
use clap::Args;
use std::path::PathBuf;

/// Options of `hushrail netlist`.
#[derive(Debug, Args)]
pub struct NetlistArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Name of the rail.
    #[arg(long)]
    pub rail: String,
    /// Start of the AC sweep, in engineering notation.
    #[arg(long, default_value = "1k")]
    pub from: String,
    /// End of the AC sweep, in engineering notation.
    #[arg(long, default_value = "1G")]
    pub to: String,
    /// Points per decade of the AC sweep.
    #[arg(long, default_value_t = 20)]
    pub per_decade: usize,
    /// File the netlist's control block writes the results to (frequency, Re V, Im V).
    #[arg(long, default_value = "hushrail_ac.txt")]
    pub data: String,
    /// Write the netlist to this file instead of stdout.
    #[arg(short, long)]
    pub output: Option<PathBuf>,
}

/// Write the netlist.
pub fn run(args: &NetlistArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let rail = super::find_rail(&board, &file, &args.rail)?;
    let from = parse(&args.from, Unit::Hertz).map_err(|e| format!("--from: {e}"))?;
    let to = parse(&args.to, Unit::Hertz).map_err(|e| format!("--to: {e}"))?;
    if !(from > 0.0 && to > from) {
        return Err(format!("--from and --to must satisfy 0 < from < to, not {from} and {to}"));
    }
    if args.per_decade == 0 {
        return Err("--per-decade must be at least 1".into());
    }
    let text = rail_netlist(
        &board,
        rail,
        &AcSweep { from_hz: from, to_hz: to, points_per_decade: args.per_decade },
        &args.data,
    );
    match &args.output {
        Some(path) => {
            write_atomically(path, text.as_bytes()).map_err(|e| format!("{}: cannot write: {e}", path.display()))?
        }
        None => emit(&text),
    }
    Ok(EXIT_PASS)
}
