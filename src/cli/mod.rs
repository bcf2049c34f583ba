//! The command line: a reviewer's or CI's face of the library. Human text by default, `--json` for machines;
//! exit 0 when every rail meets target, 1 when some rail misses, 2 on bad input.

mod bom;
mod check;
mod coupling;
mod droop;
mod export;
mod mounting;
mod netlist;
mod report;
mod suggest;
mod sweep;

use crate::io::{BoardError, read_board};
use crate::model::Board;
use clap::{Parser, Subcommand};
use std::io::Write;
use std::path::PathBuf;

/// Exit code: every rail meets target.
pub const EXIT_PASS: i32 = 0;
/// Exit code: some rail misses target.
pub const EXIT_MISS: i32 = 1;
/// Exit code: bad input (the message is on stderr).
pub const EXIT_BAD_INPUT: i32 = 2;

/// Plan the decoupling of a board's power rails.
///
/// With no subcommand, opens the planner window on BOARD (or on the built-in sample board).
#[derive(Debug, Parser)]
#[command(name = "hushrail", version, args_conflicts_with_subcommands = true)]
pub struct Cli {
    /// Board file to open in the window.
    pub board: Option<PathBuf>,
    /// What to do instead of opening the window.
    #[command(subcommand)]
    pub command: Option<Command>,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Check every rail of a board against its target: verdict, worst |Z|, margin and findings.
    ///
    /// Exit status: 0 when every rail meets target, 1 when some rail misses, 2 on bad input.
    Check(check::CheckArgs),
    /// Print |Z(f)| of one rail as CSV: freq_hz,z_mag_ohm,z_phase_deg,target_ohm.
    Sweep(sweep::SweepArgs),
    /// The rail's voltage after a load-current step, and the worst case over on/off load patterns.
    ///
    /// Exit status: 0 when the step's droop stays within voltage × ripple, 1 when not, 2 on bad input.
    Droop(droop::DroopArgs),
    /// The mounting inductance of a capacitor from its pad, trace and via geometry, term by term.
    Mounting(mounting::MountingArgs),
    /// Size a series coupling capacitor for the lowest frequency it must pass.
    Coupling(coupling::CouplingArgs),
    /// Suggest mixes of candidate parts that meet a rail's target at the least cost, count or board area.
    ///
    /// Exit status: 0 when some option meets target, 1 when none can (the reason is printed), 2 on bad input.
    Suggest(suggest::SuggestArgs),
    /// Write one rail's network as a SPICE netlist with an AC sweep (ngspice runs it to the same |Z|).
    Netlist(netlist::NetlistArgs),
    /// Write one rail's impedance for other tools: a one-port Touchstone file (--touchstone) and/or CSV (--csv).
    Export(export::ExportArgs),
    /// The bill of materials: each fitted part with its count per rail, total count and cost.
    Bom(bom::BomArgs),
    /// Write the review report: one self-contained HTML file with every rail's plot, verdict and findings.
    Report(report::ReportArgs),
}

/// Run a subcommand and return the process exit code.
pub fn run(command: Command) -> i32 {
    let result = match command {
        Command::Check(args) => check::run(&args),
        Command::Sweep(args) => sweep::run(&args),
        Command::Netlist(args) => netlist::run(&args),
        Command::Droop(args) => droop::run(&args),
        Command::Mounting(args) => mounting::run(&args),
        Command::Coupling(args) => coupling::run(&args),
        Command::Suggest(args) => suggest::run(&args),
        Command::Export(args) => export::run(&args),
        Command::Bom(args) => bom::run(&args),
        Command::Report(args) => report::run(&args),
    };
    match result {
        Ok(code) => code,
        Err(message) => {
            eprintln!("hushrail: {message}");
            EXIT_BAD_INPUT
        }
    }
}

/// Load the board a command names, or the built-in sample when none is named.
fn load_board(path: Option<&PathBuf>) -> Result<(Board, String), String> {
    match path {
        Some(p) => read_board(p).map(|b| (b, p.display().to_string())).map_err(|e: BoardError| e.to_string()),
        None => crate::samples::default_board()
            .map(|b| (b, format!("built-in sample \"{}\"", crate::samples::DEFAULT_SAMPLE_NAME)))
            .map_err(|e| e.to_string()),
    }
}

/// The frequencies a command sweeps and how it sees the rail (shared by `sweep` and `export`).
#[derive(Debug, clap::Args)]
pub struct SweepSpec {
    /// Lowest frequency, in engineering notation ("1k", "100") [default: the rail's band].
    #[arg(long)]
    pub from: Option<String>,
    /// Highest frequency, in engineering notation ("1G", "200meg") [default: the rail's band].
    #[arg(long)]
    pub to: Option<String>,
    /// Where to look from: the board's rail node or the die (through the package).
    #[arg(long, value_enum, default_value = "board")]
    pub view: ViewArg,
    /// Which derating corner of the parts' capacitance.
    #[arg(long, value_enum, default_value = "nominal")]
    pub corner: CornerArg,
    /// Number of log-spaced points, both ends included.
    #[arg(long, default_value_t = 1000)]
    pub points: usize,
}

/// Where to look from, as the command line spells it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ViewArg {
    /// At the board's rail node.
    Board,
    /// At the die, through the package (the rail must give one).
    Die,
}

impl ViewArg {
    /// The library's view, or a message when the rail has no die to look from.
    fn resolve(self, rail: &crate::model::Rail) -> Result<crate::analysis::View, String> {
        match self {
            ViewArg::Board => Ok(crate::analysis::View::Board),
            ViewArg::Die if rail.package.is_some() => Ok(crate::analysis::View::Die),
            ViewArg::Die => Err(format!("rail {} gives no package, so it has no die view", rail.name)),
        }
    }
}

/// Which derating corner, as the command line spells it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum CornerArg {
    /// Part values as given (with a part's own DC-bias curve at the rail voltage).
    Nominal,
    /// Lowest effective capacitance: DC bias, temperature class limit and tolerance.
    Worst,
}

impl From<CornerArg> for crate::physics::Corner {
    fn from(c: CornerArg) -> Self {
        match c {
            CornerArg::Nominal => crate::physics::Corner::Nominal,
            CornerArg::Worst => crate::physics::Corner::Worst,
        }
    }
}

/// The rail a command names, or a message that lists the board's rails.
fn find_rail<'b>(board: &'b Board, file: &str, name: &str) -> Result<&'b crate::model::Rail, String> {
    board.rail(name).ok_or_else(|| {
        let names: Vec<_> = board.rails.iter().map(|r| r.name.as_str()).collect();
        format!("{file}: no rail named \"{name}\" (rails: {})", names.join(", "))
    })
}

/// The frequency range of --from/--to, each defaulting to the rail's band; both positive, from below to.
fn frequency_range(from: &Option<String>, to: &Option<String>, band_hz: [f64; 2]) -> Result<(f64, f64), String> {
    let from = from.as_deref().map(|t| export::frequency(t, "from")).transpose()?.unwrap_or(band_hz[0]);
    let to = to.as_deref().map(|t| export::frequency(t, "to")).transpose()?.unwrap_or(band_hz[1]);
    if to <= from {
        return Err(format!("--to ({to} Hz) must be above --from ({from} Hz)"));
    }
    Ok((from, to))
}

/// Droop options from the command line's --step, --rise and --window (engineering notation), with `points`; a
/// value outside the droop's ranges is refused naming its flag.
fn droop_options(
    step: &Option<String>,
    rise: &Option<String>,
    window: &Option<String>,
    points: usize,
) -> Result<crate::analysis::DroopOptions, String> {
    use crate::analysis::{RISE_RANGE_S, STEP_RANGE_A, WINDOW_RANGE_S};
    use crate::units::{Unit, parse};
    let value = |opt: &Option<String>, unit: Unit, flag: &str, [lo, hi]: [f64; 2]| -> Result<Option<f64>, String> {
        let Some(text) = opt else { return Ok(None) };
        let v = parse(text, unit).map_err(|e| format!("--{flag}: {e}"))?;
        if !(v.is_finite() && v >= lo && v <= hi) {
            return Err(format!("--{flag}: {text:?} is outside {lo:e} to {hi:e} {}", unit.symbol()));
        }
        Ok(Some(v))
    };
    Ok(crate::analysis::DroopOptions {
        step_a: value(step, Unit::Ampere, "step", STEP_RANGE_A)?,
        rise_s: value(rise, Unit::Second, "rise", RISE_RANGE_S)?,
        window_s: value(window, Unit::Second, "window", WINDOW_RANGE_S)?,
        points: Some(points),
        band_limit: None,
    })
}

/// Write text to stdout; a closed pipe (as with `| head`) ends the output quietly instead of panicking.
fn emit(text: &str) {
    let mut out = std::io::stdout().lock();
    let _ = out.write_all(text.as_bytes()).and_then(|_| out.flush());
}
