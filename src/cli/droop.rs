//! `hushrail droop`: the rail's voltage after a load step, and the worst case over on/off load patterns.

use super::{EXIT_MISS, EXIT_PASS, emit, load_board};
use crate::analysis::droop;
use crate::units::{Unit, format, push_full_precision};
use clap::Args;
use serde_json::json;
use std::fmt::Write;
use std::path::PathBuf;

/// Options of `hushrail droop`.
#[derive(Debug, Args)]
pub struct DroopArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Name of the rail.
    #[arg(long)]
    pub rail: String,
    /// Current step in engineering notation ("4", "500m") [default: the rail's total ΔI].
    #[arg(long)]
    pub step: Option<String>,
    /// Rise time of the step ("2n") [default: the fastest load's, or 1 ns].
    #[arg(long)]
    pub rise: Option<String>,
    /// Time to simulate ("20u") [default: five periods of the lowest anti-resonance].
    #[arg(long)]
    pub window: Option<String>,
    /// Points of the printed waveform.
    #[arg(long, default_value_t = 2000)]
    pub points: usize,
    /// Print JSON instead of text.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print the waveform as CSV (t_s,v).
    #[arg(long)]
    pub csv: bool,
}

/// Run the droop analysis and print it; exit 0 when the step's droop is within the allowed band, 1 when not.
pub fn run(args: &DroopArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    super::find_rail(&board, &file, &args.rail)?;
    let index = board.rail_index(&args.rail).unwrap_or(0);
    let options = super::droop_options(&args.step, &args.rise, &args.window, args.points)?;
    let d = droop(&board, index, &options).map_err(|e| format!("{file}: {e}"))?;
    if args.csv {
        let mut t = String::with_capacity(48 * d.waveform.len() + 8);
        t.push_str("t_s,v\n");
        for [time, v] in &d.waveform {
            push_full_precision(&mut t, *time);
            t.push(',');
            push_full_precision(&mut t, *v);
            t.push('\n');
        }
        emit(&t);
    } else if args.json {
        let board_node =
            d.board_node.as_ref().map(|b| json!({"min_v": b.min_v, "t_min_s": b.t_min_s, "droop_v": b.droop_v}));
        let value = json!({
            "rail": d.rail, "node": d.node.name(), "board_node": board_node, "step_a": d.step_a, "rise_s": d.rise_s, "window_s": d.window_s, "dt_s": d.dt_s,
            "nominal_v": d.nominal_v, "min_v": d.min_v, "t_min_s": d.t_min_s, "droop_v": d.droop_v,
            "allowed_v": d.allowed_v, "meets": d.meets, "final_v": d.final_v, "settling_s": d.settling_s,
            "worst_case_droop_v": d.worst_case_droop_v, "worst_case_t_s": d.worst_case_t_s,
            "worst_case_meets": d.worst_case_meets,
            "worst_case_pattern": d.worst_case_pattern.iter().map(|p| json!({"on_s": p.on_s, "off_s": p.off_s})).collect::<Vec<_>>(),
        });
        emit(&(serde_json::to_string_pretty(&value).unwrap_or_default() + "\n"));
    } else {
        let mut t = String::new();
        let v = |x: f64| format(x, Unit::Volt);
        let s = |x: f64| format(x, Unit::Second);
        let _ = writeln!(t, "{} ({file})", board.name);
        let _ = writeln!(
            t,
            "{}: step {} with a {} rise, from {} (simulated {} in steps of {})",
            d.rail,
            format(d.step_a, Unit::Ampere),
            s(d.rise_s),
            v(d.nominal_v),
            s(d.window_s),
            s(d.dt_s)
        );
        let verdict = if d.meets { "WITHIN" } else { "OUTSIDE" };
        let at = match d.node {
            crate::analysis::View::Board => "at the board",
            crate::analysis::View::Die => "at the die",
        };
        let _ = writeln!(
            t,
            "  {verdict} the allowed band {at}: droop {} (lowest {} at {}), allowed {}",
            v(d.droop_v),
            v(d.min_v),
            s(d.t_min_s),
            v(d.allowed_v)
        );
        if let Some(b) = &d.board_node {
            let _ = writeln!(t, "  at the board: droop {} (lowest {} at {})", v(b.droop_v), v(b.min_v), s(b.t_min_s));
        }
        let settle = d.settling_s.map_or("not within the window".to_string(), s);
        let _ = writeln!(t, "  settles to {} (within 10 % of the droop) after {settle}", v(d.final_v));
        let verdict = if d.worst_case_meets { "within" } else { "OUTSIDE" };
        let _ = writeln!(
            t,
            "  worst on/off pattern: droop {} ({verdict} the allowed band), {} pulses, lowest at {}",
            v(d.worst_case_droop_v),
            d.worst_case_pattern.len(),
            s(d.worst_case_t_s)
        );
        emit(&t);
    }
    Ok(if d.meets { EXIT_PASS } else { EXIT_MISS })
}
