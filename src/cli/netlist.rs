//! `hushrail netlist`: one rail's network as a SPICE netlist that ngspice runs to the same |Z|.

use super::{EXIT_PASS, emit, load_board};
use crate::analysis::droop;
use crate::io::{AcSweep, Transient, mesh_netlist, mesh_tran_netlist, rail_netlist, rail_tran_netlist};
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
    /// On a placed rail: mesh the plane pair into square cells of about this side (engineering notation, metres:
    /// "1m", "0.5m") and attach every branch at its port; the AC sweep drives the load given by --at, and with
    /// --droop every load draws its share of the step at once and every load's voltage is written.
    #[arg(long)]
    pub mesh: Option<String>,
    /// With --mesh: the load whose impedance the netlist reads (at its die when it has a package) [default: the
    /// first].
    #[arg(long, requires = "mesh", conflicts_with = "droop")]
    pub at: Option<String>,
    /// With --mesh and --at: drive this load instead, so V(at) is the transfer impedance.
    #[arg(long, requires = "at")]
    pub from_load: Option<String>,
    /// Write the netlist to this file instead of stdout.
    #[arg(short, long)]
    pub output: Option<PathBuf>,
}

/// Write the netlist.
pub fn run(args: &NetlistArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let rail = super::find_rail(&board, &file, &args.rail)?;
    if args.mesh.is_none()
        && let Some(why) = crate::io::one_node_refusal(rail)
    {
        return Err(format!("{file}: {why}"));
    }
    if args.droop {
        let options = super::droop_options(&args.step, &args.rise, &args.window, 2)?;
        let index = board.rail_index(&rail.name).unwrap_or(0);
        let d = droop(&board, index, &options).map_err(|e| format!("{file}: {e}"))?;
        // The same stimulus as `hushrail droop`, over its window.
        let tran = Transient::of_step(&d);
        let text = match &args.mesh {
            Some(h) => {
                mesh_tran_netlist(&board, rail, &tran, mesh_cell(h)?, &args.data, crate::physics::Corner::Typical)
                    .map_err(|e| format!("{file}: {e}"))?
            }
            None => rail_tran_netlist(&board, rail, &tran, &args.data),
        };
        return write_out(args, &board, &text);
    }
    let from = super::flag_value(&args.from, Unit::Hertz, &crate::model::ranges::FREQUENCY, "from")?;
    let to = super::flag_value(&args.to, Unit::Hertz, &crate::model::ranges::FREQUENCY, "to")?;
    if to <= from {
        return Err(format!("--to ({to} Hz) must be above --from ({from} Hz)"));
    }
    if !(1..=10_000).contains(&args.per_decade) {
        return Err(format!("--per-decade: must be a whole number from 1 to 10000, not {}", args.per_decade));
    }
    let sweep = AcSweep { from_hz: from, to_hz: to, points_per_decade: args.per_decade };
    if let Some(h) = &args.mesh {
        let cell = mesh_cell(h)?;
        let index = |name: &str| {
            rail.loads.iter().position(|l| l.name == name).ok_or_else(|| {
                let names: Vec<&str> = rail.loads.iter().map(|l| l.name.as_str()).collect();
                format!("{file}: rail {} has no load \"{name}\" (its loads: {})", rail.name, names.join(", "))
            })
        };
        let at = args.at.as_deref().map(index).transpose()?.unwrap_or(0);
        let from_load = args.from_load.as_deref().map(index).transpose()?;
        let text =
            mesh_netlist(&board, rail, &sweep, cell, (at, from_load), &args.data, crate::physics::Corner::Typical)
                .map_err(|e| format!("{file}: {e}"))?;
        return write_out(args, &board, &text);
    }
    let view = args.view.resolve(rail)?;
    let text = rail_netlist(&board, rail, &sweep, view, &args.data);
    write_out(args, &board, &text)
}

/// The --mesh cell size, m.
fn mesh_cell(h: &str) -> Result<f64, String> {
    parse(h, Unit::Metre).map_err(|e| format!("--mesh: {e}"))
}

fn write_out(args: &NetlistArgs, board: &crate::model::Board, text: &str) -> Result<i32, String> {
    match &args.output {
        Some(path) => super::write_files(&[(path, text.as_bytes())], args.board.as_ref(), board)?,
        None => emit(text),
    }
    Ok(EXIT_PASS)
}
