//! `hushrail mounting`: the loop inductance of a capacitor's mounting from its geometry, term by term.

use super::{EXIT_PASS, emit};
use crate::model::MountingGeometry;
use crate::physics::mounting::{geometry_problems, mounting_breakdown};
use crate::units::{Unit, format, parse};
use clap::Args;
use serde_json::json;
use std::fmt::Write;

/// Options of `hushrail mounting` (lengths in engineering notation of metres: "0.8m" is 0.8 mm).
#[derive(Debug, Args)]
pub struct MountingArgs {
    /// Length of the trace from each pad to its via ("0.5m"; 0 for via-in-pad).
    #[arg(long, default_value = "0.5m")]
    pub trace_length: String,
    /// Width of that trace.
    #[arg(long, default_value = "0.3m")]
    pub trace_width: String,
    /// Height of the trace above its reference plane.
    #[arg(long, default_value = "0.1m")]
    pub trace_height: String,
    /// Via drill diameter.
    #[arg(long, default_value = "0.25m")]
    pub via_drill: String,
    /// Via length from the surface to the power/ground plane pair.
    #[arg(long, default_value = "0.8m")]
    pub via_length: String,
    /// Centre distance between the power via and the ground via.
    #[arg(long, default_value = "0.7m")]
    pub via_pitch: String,
    /// Vias per pad.
    #[arg(long, default_value_t = 1)]
    pub vias_per_pad: u32,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Print the breakdown; bad geometry is an error naming the option.
pub fn run(args: &MountingArgs) -> Result<i32, String> {
    let length = |text: &str, flag: &str| parse(text, Unit::Metre).map_err(|e| format!("--{flag}: {e}"));
    let g = MountingGeometry {
        trace_length_m: length(&args.trace_length, "trace-length")?,
        trace_width_m: length(&args.trace_width, "trace-width")?,
        trace_height_m: length(&args.trace_height, "trace-height")?,
        via_drill_m: length(&args.via_drill, "via-drill")?,
        via_length_m: length(&args.via_length, "via-length")?,
        via_pitch_m: length(&args.via_pitch, "via-pitch")?,
        vias_per_pad: args.vias_per_pad,
    };
    if let Some((field, reason)) = geometry_problems(&g).into_iter().next() {
        let flag = field.trim_end_matches("_m").replace('_', "-");
        return Err(format!("--{flag}: {reason}"));
    }
    let b = mounting_breakdown(&g);
    if args.json {
        let terms: Vec<_> = b
            .terms
            .iter()
            .map(|t| {
                json!({"name": t.name, "inductance_h": t.inductance_h, "formula": t.formula, "source": t.source,
                       "in_total": t.in_total})
            })
            .collect();
        let value = json!({"terms": terms, "total_h": b.total_h, "warnings": b.warnings});
        emit(&(serde_json::to_string_pretty(&value).unwrap_or_default() + "\n"));
    } else {
        let mut t = String::new();
        for term in &b.terms {
            let _ = writeln!(t, "{:>9.3} nH  {}", term.inductance_h * 1e9, term.name);
            let _ = writeln!(t, "              {}  [{}]", term.formula, term.source);
        }
        let _ =
            writeln!(t, "{:>9.3} nH  total mounting inductance ({})", b.total_h * 1e9, format(b.total_h, Unit::Henry));
        for w in &b.warnings {
            let _ = writeln!(t, "note: {w}");
        }
        emit(&t);
    }
    Ok(EXIT_PASS)
}
