//! `hushrail netlist`: one rail's network as a SPICE netlist that ngspice runs to the same |Z|.

use super::{EXIT_PASS, emit, load_board};
use crate::analysis::droop;
use crate::io::{AcSweep, Transient, rail_netlist, rail_tran_netlist, write_atomically};
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
    #[arg(long, default_value = "hushrail_out.txt")]
    pub data: String,
    /// Where the AC sweep drives and reads the network.
    #[arg(long, value_enum, default_value = "board")]
    pub view: super::ViewArg,
    /// Write a transient of the load step instead of the AC sweep: the same stimulus, window and time step that
    /// `hushrail droop` uses (with its --step, --rise and --window).
    #[arg(long)]
    pub droop: bool,
    /// With --droop: the current step [default: the rail's total ΔI].
    #[arg(long, requires = "droop")]
    pub step: Option<String>,
    /// With --droop: the rise time [default: the fastest load's, or 1 ns].
    #[arg(long, requires = "droop")]
    pub rise: Option<String>,
    /// With --droop: the simulated time [default: as `hushrail droop`].
    #[arg(long, requires = "droop")]
    pub window: Option<String>,
    /// Write the netlist to this file instead of stdout.
    #[arg(short, long)]
    pub output: Option<PathBuf>,
}

/// Write the netlist.
pub fn run(args: &NetlistArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let rail = super::find_rail(&board, &file, &args.rail)?;
    if args.droop {
        let options = super::droop_options(&args.step, &args.rise, &args.window, 2)?;
        let index = board.rail_index(&rail.name).unwrap_or(0);
        let d = droop(&board, index, &options).map_err(|e| format!("{file}: {e}"))?;
        // The same stimulus and grid as `hushrail droop`: the ramp over rise/0.8, the filter when it applies, and
        // a step that resolves the ramp and the output grid.
        let tran = Transient {
            load: vec![(0.0, 0.0), (d.ramp_s, d.step_a)],
            step_s: d.window_s / 2000.0,
            stop_s: d.window_s,
            max_step_s: (d.ramp_s / 50.0).min(d.window_s / 2000.0),
            filter_poles_hz: d.filter.map(|f| f.poles_hz),
        };
        return write_out(args, &rail_tran_netlist(&board, rail, &tran, &args.data));
    }
    let from = parse(&args.from, Unit::Hertz).map_err(|e| format!("--from: {e}"))?;
    let to = parse(&args.to, Unit::Hertz).map_err(|e| format!("--to: {e}"))?;
    if !(from > 0.0 && to > from) {
        return Err(format!("--from and --to must satisfy 0 < from < to, not {from} and {to}"));
    }
    if args.per_decade == 0 {
        return Err("--per-decade must be at least 1".into());
    }
    let view = args.view.resolve(rail)?;
    let sweep = AcSweep { from_hz: from, to_hz: to, points_per_decade: args.per_decade };
    let text = rail_netlist(&board, rail, &sweep, view, &args.data);
    write_out(args, &text)
}

fn write_out(args: &NetlistArgs, text: &str) -> Result<i32, String> {
    match &args.output {
        Some(path) => {
            write_atomically(path, text.as_bytes()).map_err(|e| format!("{}: cannot write: {e}", path.display()))?
        }
        None => emit(text),
    }
    Ok(EXIT_PASS)
}
