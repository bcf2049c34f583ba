//! `hushrail place`: place a rail from the layout's exports (a placement CSV and, optionally, a BOM CSV) and
//! write the placed board to a new file. The matching rules live in `io::layout_import`; this reads the flags and
//! files and says what matched.

use super::{EXIT_PASS, find_rail, load_board};
use crate::io::{BoardError, Columns, ImportOptions, LengthUnit, board_to_string, parse_bom, parse_centroid};
use crate::model::PlanePair;
use crate::units::Unit;
use clap::Args;
use std::fmt::Write;
use std::path::{Path, PathBuf};

/// A unit of the placement file, as the command line spells it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum UnitArg {
    /// Millimetres.
    Mm,
    /// Mils (thousandths of an inch).
    Mil,
    /// Inches.
    Inch,
}

/// Options of `hushrail place`.
#[derive(Debug, Args)]
pub struct PlaceArgs {
    /// Board file.
    pub board: PathBuf,
    /// Name of the rail to place.
    #[arg(long)]
    pub rail: String,
    /// The placement (centroid, pick-and-place) CSV: designator, x, y, and side and rotation if given.
    #[arg(long, value_name = "FILE.csv")]
    pub centroid: PathBuf,
    /// A BOM CSV listing each line's designators with its value, footprint or part: tells which designators
    /// belong to which group (else the groups' ref fields do).
    #[arg(long, value_name = "FILE.csv")]
    pub bom: Option<PathBuf>,
    /// The new board file (never the input).
    #[arg(short, long, value_name = "NEW.json")]
    pub output: PathBuf,
    /// The placement file's unit [default: from its header or values].
    #[arg(long, value_enum)]
    pub units: Option<UnitArg>,
    /// Where the plane pair's lower-left corner is in the placement file's coordinates, "X,Y" in its unit.
    #[arg(long, default_value = "0,0")]
    pub origin: String,
    /// The regulator's designator.
    #[arg(long)]
    pub regulator: Option<String>,
    /// For a rail not yet placed: the plane pair's sides, "X,Y" in metres ("0.1,0.08").
    #[arg(long)]
    pub size: Option<String>,
    /// For a rail not yet placed: the dielectric's thickness ("100u").
    #[arg(long)]
    pub dielectric: Option<String>,
    /// For a rail not yet placed: the dielectric's relative permittivity.
    #[arg(long)]
    pub er: Option<f64>,
    /// For a rail not yet placed: the dielectric's loss tangent [default: 0].
    #[arg(long)]
    pub loss_tangent: Option<f64>,
    /// The designator column's name, if the file calls it something unusual.
    #[arg(long)]
    pub col_ref: Option<String>,
    /// The x column's name.
    #[arg(long)]
    pub col_x: Option<String>,
    /// The y column's name.
    #[arg(long)]
    pub col_y: Option<String>,
    /// The side column's name.
    #[arg(long)]
    pub col_side: Option<String>,
    /// The rotation column's name.
    #[arg(long)]
    pub col_rotation: Option<String>,
}

/// The plane pair the flags give, for a rail that has none.
fn plane_pair_of(args: &PlaceArgs) -> Result<Option<PlanePair>, String> {
    let Some(size) = &args.size else {
        if args.dielectric.is_some() || args.er.is_some() {
            return Err("--dielectric and --er go with --size (the plane pair of a rail not yet placed)".into());
        }
        return Ok(None);
    };
    let metres = |t: &str| crate::units::parse(t, Unit::Metre).map_err(|e| e.to_string());
    let size_m = super::flag_pair("size", size, "in metres", &metres)?;
    let dielectric_m = match &args.dielectric {
        Some(d) => metres(d).map_err(|e| format!("--dielectric: {e}"))?,
        None => return Err("--size needs --dielectric (the dielectric's thickness) and --er".into()),
    };
    let er = args.er.ok_or("--size needs --er (the dielectric's relative permittivity)")?;
    Ok(Some(PlanePair {
        size_m,
        dielectric_m,
        er,
        loss_tangent: args.loss_tangent,
        copper_m: None,
        conductivity_s_m: None,
    }))
}

/// Place the rail and write the new board; say what matched and what did not.
pub fn run(args: &PlaceArgs) -> Result<i32, String> {
    let (board, file) = load_board(Some(&args.board))?;
    let rail = find_rail(&board, &file, &args.rail)?;
    let index = board.rail_index(&rail.name).unwrap_or(0);
    let unit = args.units.map(|u| match u {
        UnitArg::Mm => LengthUnit::Mm,
        UnitArg::Mil => LengthUnit::Mil,
        UnitArg::Inch => LengthUnit::Inch,
    });
    let columns = Columns {
        reference: args.col_ref.clone(),
        x: args.col_x.clone(),
        y: args.col_y.clone(),
        side: args.col_side.clone(),
        rotation: args.col_rotation.clone(),
    };
    let centroid = parse_centroid(&crate::io::read_text_file(&args.centroid)?, &columns, unit)
        .map_err(|(place, why)| BoardError::single(&args.centroid, place, why).to_string())?;
    let bom = match &args.bom {
        Some(p) => Some(
            parse_bom(&crate::io::read_text_file(p)?)
                .map_err(|(place, why)| BoardError::single(p, place, why).to_string())?,
        ),
        None => None,
    };
    let number = |t: &str| t.parse::<f64>().ok().filter(|v| v.is_finite()).ok_or(format!("\"{t}\" is not a number"));
    let origin = super::flag_pair("origin", &args.origin, "in the placement file's unit", &number)?
        .map(|v| v * centroid.unit.metres());
    let options =
        ImportOptions { origin_m: origin, regulator: args.regulator.clone(), plane_pair: plane_pair_of(args)? };
    let (placed, report) = crate::io::place_rail(&board, index, &centroid, bom.as_deref(), &options)
        .map_err(|problems| format!("{}: rail {} cannot be placed:\n  {}", file, rail.name, problems.join("\n  ")))?;
    let mut inputs: Vec<&Path> = vec![&args.board, &args.centroid];
    inputs.extend(args.bom.as_deref());
    crate::io::write_outputs(&[(&args.output, board_to_string(&placed).as_bytes())], &inputs)?;

    let mut t = String::new();
    let _ = writeln!(
        t,
        "Placed rail {} from {} ({} parts, coordinates in {unit} from {}, columns {}), with ({}) {unit} as the \
         plane's lower-left corner, seen from the top; rotations are read but not used (ports are squares).",
        rail.name,
        args.centroid.display(),
        centroid.parts.len(),
        centroid.unit_from,
        centroid.columns.join(", "),
        args.origin,
        unit = centroid.unit.name(),
    );
    for line in crate::io::layout_import::report_lines(&report) {
        let _ = writeln!(t, "  {line}");
    }
    let _ = writeln!(t, "Wrote {}.", args.output.display());
    super::emit(&t);
    Ok(EXIT_PASS)
}
