//! `hushrail coupling`: size a series coupling capacitor for the lowest frequency it must pass.

use super::{EXIT_PASS, emit};
use crate::physics::coupling::{COUPLING_NOTES, ESeries, size_coupling};
use crate::units::{Unit, format};
use clap::Args;
use serde_json::json;
use std::fmt::Write;

/// An E series on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum SeriesArg {
    /// 6 values a decade.
    E6,
    /// 12 values a decade.
    E12,
    /// 24 values a decade.
    E24,
    /// 96 values a decade.
    E96,
}

/// Options of `hushrail coupling`.
#[derive(Debug, Args)]
pub struct CouplingArgs {
    /// The impedance the capacitor drives (the load's input resistance), in engineering notation ("100", "10k").
    #[arg(long)]
    pub impedance: String,
    /// The lowest frequency to pass ("20").
    #[arg(long)]
    pub lowest: String,
    /// How far below the lowest frequency the corner sits (10 is common practice).
    #[arg(long, default_value = "10")]
    pub factor: String,
    /// Preferred values (IEC 60063) to round up to (E6, E12, E24 or E96, in any case).
    #[arg(long, value_enum, ignore_case = true, default_value = "e12")]
    pub series: SeriesArg,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Print the sized capacitor and its cautions.
pub fn run(args: &CouplingArgs) -> Result<i32, String> {
    use crate::model::ranges::{COUPLING_FACTOR, COUPLING_IMPEDANCE, FREQUENCY};
    let z = super::flag_value(&args.impedance, Unit::Ohm, &COUPLING_IMPEDANCE, "impedance")?;
    let f = super::flag_value(&args.lowest, Unit::Hertz, &FREQUENCY, "lowest")?;
    let factor = super::flag_value(&args.factor, Unit::None, &COUPLING_FACTOR, "factor")?;
    let series = match args.series {
        SeriesArg::E6 => ESeries::E6,
        SeriesArg::E12 => ESeries::E12,
        SeriesArg::E24 => ESeries::E24,
        SeriesArg::E96 => ESeries::E96,
    };
    let c = size_coupling(z, f, factor, series);
    if args.json {
        let value = json!({
            "impedance_ohm": z, "lowest_hz": f, "factor": factor, "series": series.name(),
            "exact_f": c.exact_f, "target_corner_hz": c.target_corner_hz, "preferred_f": c.preferred_f,
            "corner_hz": c.corner_hz, "loss_at_lowest_db": c.loss_db, "notes": COUPLING_NOTES,
        });
        emit(&(serde_json::to_string_pretty(&value).unwrap_or_default() + "\n"));
    } else {
        let mut t = String::new();
        let _ = writeln!(
            t,
            "corner {} (= {} / {factor}) into {}: C = 1/(2π·Z·f) = {}",
            format(c.target_corner_hz, Unit::Hertz),
            format(f, Unit::Hertz),
            format(z, Unit::Ohm),
            format(c.exact_f, Unit::Farad)
        );
        let _ = writeln!(
            t,
            "next {} value up: {}, corner {}, loss at {}: {:.3} dB",
            series.name(),
            format(c.preferred_f, Unit::Farad),
            format(c.corner_hz, Unit::Hertz),
            format(f, Unit::Hertz),
            c.loss_db
        );
        for note in COUPLING_NOTES {
            let _ = writeln!(t, "note: {note}");
        }
        emit(&t);
    }
    Ok(EXIT_PASS)
}
