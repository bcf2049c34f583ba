//! The command line: a reviewer's or CI's face of the library. Human text by default, `--json` for machines;
//! exit 0 when every rail meets target, 1 when some rail misses, 2 on bad input.

mod bom;
mod check;
mod coupling;
mod droop;
mod export;
mod mounting;
mod netlist;
mod place;
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

/// How values are written on the command line, shown under every `--help`.
pub const NOTATION_HELP: &str = "Values are in engineering notation: 100n, 4u7, 10m, 1.5k, 2e-9, 1MHz; lengths also \
as 0.3mm, 300um, 20mil or \"12 mil\" (1 mil = 25.4 µm). A negative value needs an equals sign so that it is not taken \
as a flag: --from=-5n (not --from -5n).";

/// Plan the decoupling of a board's power rails.
///
/// With no subcommand, opens the planner window on BOARD (or on the built-in sample board).
#[derive(Debug, Parser)]
#[command(name = "hushrail", version, args_conflicts_with_subcommands = true, after_help = NOTATION_HELP)]
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
    #[command(after_help = NOTATION_HELP)]
    Check(check::CheckArgs),
    /// Print |Z(f)| of one rail as CSV: freq_hz,z_mag_ohm,z_phase_deg,target_ohm.
    #[command(after_help = NOTATION_HELP)]
    Sweep(sweep::SweepArgs),
    /// The rail's voltage after a load-current step, and the worst case over on/off load patterns.
    ///
    /// Exit status: 0 when the step's droop stays within voltage × ripple, 1 when not, 2 on bad input.
    #[command(after_help = NOTATION_HELP)]
    Droop(droop::DroopArgs),
    /// The mounting inductance of a capacitor from its pad, trace and via geometry, term by term.
    #[command(after_help = NOTATION_HELP)]
    Mounting(mounting::MountingArgs),
    /// Size a series coupling capacitor for the lowest frequency it must pass.
    #[command(after_help = NOTATION_HELP)]
    Coupling(coupling::CouplingArgs),
    /// Suggest mixes of candidate parts that meet a rail's target at the least cost, count or board area.
    ///
    /// Exit status: 0 when some option meets target, 1 when none can (the reason is printed), 2 on bad input.
    #[command(after_help = NOTATION_HELP)]
    Suggest(suggest::SuggestArgs),
    /// Write one rail's network as a SPICE netlist with an AC sweep (ngspice runs it to the same |Z|).
    #[command(after_help = NOTATION_HELP)]
    Netlist(netlist::NetlistArgs),
    /// Write one rail's impedance for other tools: a one-port Touchstone file (--touchstone) and/or CSV (--csv).
    #[command(after_help = NOTATION_HELP)]
    Export(export::ExportArgs),
    /// The bill of materials: each fitted part with its count per rail, total count and cost.
    #[command(after_help = NOTATION_HELP)]
    Bom(bom::BomArgs),
    /// Write the review report: one self-contained HTML file with every rail's plot, verdict and findings.
    #[command(after_help = NOTATION_HELP)]
    Report(report::ReportArgs),
    /// Place a rail from the layout's exports: a placement (centroid) CSV and an optional BOM CSV, matched by
    /// designator; writes the placed board to a new file.
    Place(place::PlaceArgs),
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
        Command::Place(args) => place::run(&args),
    };
    match result {
        Ok(code) => code,
        Err(message) => {
            // Each line of the message is made printable on its own: the line breaks between problems stay, any
            // control character inside a line (from a file's text) is shown as an escape.
            let lines: Vec<String> = message.split('\n').map(crate::io::printable).collect();
            eprintln!("hushrail: {}", lines.join("\n"));
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

/// The files a command reads: the board file and every measured part's data, so that no output overwrites them.
fn inputs_of(board_path: Option<&PathBuf>, board: &Board) -> Vec<PathBuf> {
    let Some(path) = board_path else { return Vec::new() };
    let dir = path.parent().unwrap_or(std::path::Path::new(""));
    std::iter::once(path.clone())
        .chain(board.parts.iter().filter_map(|p| p.touchstone.as_ref().map(|t| dir.join(t))))
        .collect()
}

/// Write a command's output files, all or none, never over one of its inputs.
fn write_files(
    outputs: &[(&std::path::Path, &[u8])],
    board_path: Option<&PathBuf>,
    board: &Board,
) -> Result<(), String> {
    let inputs = inputs_of(board_path, board);
    let inputs: Vec<&std::path::Path> = inputs.iter().map(PathBuf::as_path).collect();
    crate::io::write_outputs(outputs, &inputs)
}

/// Load the board a command names, as [`load_board`] does, with the SHA-256 of the bytes read.
fn load_board_traced(path: Option<&PathBuf>) -> Result<(Board, String, String), String> {
    match path {
        Some(p) => crate::io::read_board_traced(p)
            .map(|(b, sha)| (b, p.display().to_string(), sha))
            .map_err(|e: BoardError| e.to_string()),
        None => {
            let (board, file) = load_board(None)?;
            Ok((board, file, crate::io::sha256_hex(crate::samples::default_board_text().as_bytes())))
        }
    }
}

/// One argument quoted for a POSIX shell where it needs it.
fn shell_word(a: &str) -> String {
    if !a.is_empty() && a.chars().all(|c| c.is_ascii_alphanumeric() || "-_./=,:+@%".contains(c)) {
        a.to_string()
    } else {
        format!("'{}'", a.replace('\'', "'\\''"))
    }
}

/// The command line that re-runs this command on the same board: `hushrail` and every argument as given.
fn rerun_command() -> String {
    let args: Vec<String> = std::env::args().skip(1).map(|a| shell_word(&a)).collect();
    std::iter::once("hushrail".to_string()).chain(args).collect::<Vec<_>>().join(" ")
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
    /// Which corner of the parts' values.
    #[arg(long, value_enum, default_value = "typical")]
    pub corner: CornerArg,
    /// Number of log-spaced points, both ends included (2 to 1,000,000).
    #[arg(long, default_value_t = 1000)]
    pub points: usize,
}

impl SweepSpec {
    /// The number of points, inside its documented range.
    fn points(&self) -> Result<usize, String> {
        flag_count(self.points, &crate::model::ranges::SWEEP_POINTS, "points")
    }
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

/// Which corner, as the command line spells it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum CornerArg {
    /// Each part at the rail's DC bias (own curve or the generic class II model), room temperature, no tolerance.
    Typical,
    /// The values exactly as typed.
    AsGiven,
    /// Bias, the temperature class limit, and the worst vertex of every group's C and ESR tolerance.
    Worst,
}

impl From<CornerArg> for crate::physics::Corner {
    fn from(c: CornerArg) -> Self {
        match c {
            CornerArg::Typical => crate::physics::Corner::Typical,
            CornerArg::AsGiven => crate::physics::Corner::AsGiven,
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
    use crate::units::Unit;
    let frequency = |t: &str, flag: &str| flag_value(t, Unit::Hertz, &crate::model::ranges::FREQUENCY, flag);
    let from = from.as_deref().map(|t| frequency(t, "from")).transpose()?.unwrap_or(band_hz[0]);
    let to = to.as_deref().map(|t| frequency(t, "to")).transpose()?.unwrap_or(band_hz[1]);
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
    use crate::model::ranges::{DROOP_WINDOW, LOAD_STEP, RISE_TIME, WAVEFORM_POINTS};
    use crate::units::Unit;
    let value = |opt: &Option<String>, unit: Unit, range: &crate::model::ranges::Range, flag: &str| {
        opt.as_ref().map(|t| flag_value(t, unit, range, flag)).transpose()
    };
    let window_s = value(window, Unit::Second, &DROOP_WINDOW, "window")?;
    let points = flag_count(points, &WAVEFORM_POINTS, "points")?;
    Ok(crate::analysis::DroopOptions {
        step_a: value(step, Unit::Ampere, &LOAD_STEP, "step")?,
        rise_s: value(rise, Unit::Second, &RISE_TIME, "rise")?,
        window_s,
        points: Some(points),
        band_limit: None,
    })
}

/// A flag's value in engineering notation, inside its documented range: `--flag: reason` otherwise.
fn flag_value(
    text: &str,
    unit: crate::units::Unit,
    range: &crate::model::ranges::Range,
    flag: &str,
) -> Result<f64, String> {
    let value = crate::units::parse(text, unit).map_err(|e| format!("--{flag}: {e}"))?;
    range.problem(value).map_or(Ok(value), |why| Err(format!("--{flag}: {why}")))
}

/// A flag of two coordinates "X,Y" (`unit_words` says in what), each parsed by `parse`.
fn flag_pair(
    flag: &str,
    text: &str,
    unit_words: &str,
    parse: &dyn Fn(&str) -> Result<f64, String>,
) -> Result<[f64; 2], String> {
    let xy: Vec<&str> = text.split(',').map(str::trim).collect();
    let [x, y] = xy[..] else {
        return Err(format!("--{flag}: give two coordinates \"X,Y\" {unit_words}, not \"{text}\""));
    };
    let value = |t: &str| parse(t).map_err(|e| format!("--{flag}: {e}"));
    Ok([value(x)?, value(y)?])
}

/// A whole-number flag inside its documented range.
fn flag_count(value: usize, range: &crate::model::ranges::Range, flag: &str) -> Result<usize, String> {
    let x = value as f64;
    if range.contains(x) {
        Ok(value)
    } else {
        Err(format!("--{flag}: must be a whole number {} ({}), not {value}", range.words(), range.what))
    }
}

/// Write text to stdout; a closed pipe (as with `| head`) ends the output quietly instead of panicking.
fn emit(text: &str) {
    let mut out = std::io::stdout().lock();
    let _ = out.write_all(text.as_bytes()).and_then(|_| out.flush());
}
