//! `hushrail droop`: the rail's voltage after a load step, and the worst case over on/off load patterns.

use super::{EXIT_MISS, EXIT_PASS, emit, load_board};
use crate::analysis::{Droop, WorstCase, droop, droop_lines, step_waveform};
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
    /// Print the waveform as CSV (t_s,v): the grid of --points plus each interval's lowest and highest point.
    /// On a placed rail, the waveform at its worst load (the largest step droop; the text and JSON name it) and
    /// the exit code of every load.
    #[arg(long)]
    pub csv: bool,
    /// Do not filter the load's current to the rail's band (the whole spectrum of its edges meets the network).
    #[arg(long)]
    pub unfiltered: bool,
}

/// The droop as JSON. No value is ever null: a figure that does not exist is left out and a field says why
/// ("settles": false, "worst_case": {"bounded": false, ...}).
pub fn droop_json(d: &Droop) -> serde_json::Value {
    let board_node =
        d.board_node.as_ref().map(|b| json!({"min_v": b.min_v, "t_min_s": b.t_min_s, "droop_v": b.droop_v}));
    let mut v = json!({
        "rail": d.rail, "node": d.node.name(), "step_a": d.step_a, "rise_s": d.rise_s, "ramp_s": d.ramp_s,
        "window_s": d.window_s, "band_limited": d.filter.is_some(),
        "nominal_v": d.nominal_v, "min_v": d.min_v, "t_min_s": d.t_min_s, "droop_v": d.droop_v,
        "beyond_linear_model": d.beyond_model(d.droop_v),
        "allowed_v": d.allowed_v, "meets": d.meets, "final_v": d.final_v, "settles": d.settling_s.is_some(),
        "worst_case_meets": d.worst_case_meets, "min_interval_s": d.min_interval_s,
        "warnings": d.warnings,
    });
    let o = v.as_object_mut().expect("an object");
    if let Some(b) = board_node {
        o.insert("board_node".into(), b);
    }
    if !d.loads.is_empty() {
        // The shape `check` gives a placed rail's loads: one object per load, in the rail's order.
        o.insert(
            "loads".into(),
            d.loads
                .iter()
                .map(|l| {
                    let mut j = json!({"name": l.name, "view": l.view.name(), "meets": l.meets,
                                       "min_v": l.min_v, "t_min_s": l.t_min_s, "droop_v": l.droop_v,
                                       "beyond_linear_model": d.beyond_model(l.droop_v),
                                       "worst_case_meets": l.worst_case_meets, "fit_error": l.fit_error});
                    if let Some(v) = l.worst_case_droop_v() {
                        j["worst_case_droop_v"] = json!(v);
                    }
                    j
                })
                .collect(),
        );
    }
    if let Some(t) = d.settling_s {
        o.insert("settling_s".into(), json!(t));
    }
    if let Some(f) = d.filter {
        o.insert(
            "filter".into(),
            json!({"edge_hz": f.edge_hz, "load_edge_hz": f.load_edge_hz, "poles_hz": f.poles_hz}),
        );
    }
    if let Some(p) = d.max_pulses {
        o.insert("max_pulses".into(), json!(p));
    }
    if let Some(s) = &d.sustained {
        o.insert(
            "sustained".into(),
            json!({"peak_hz": s.peak_hz, "z_ohm": s.z_ohm, "r_dc_ohm": s.r_dc_ohm, "droop_v": s.droop_v,
                   "cause": s.cause, "beyond_linear_model": d.beyond_model(s.droop_v)}),
        );
    }
    match &d.worst_case {
        WorstCase::Bounded { droop_v, pattern, t_s, dominant_hz } => {
            o.insert("worst_case_droop_v".into(), json!(droop_v));
            o.insert("worst_case_t_s".into(), json!(t_s));
            o.insert(
                "worst_case_pattern".into(),
                pattern.iter().map(|p| json!({"on_s": p.on_s, "off_s": p.off_s})).collect(),
            );
            let mut w = json!({"bounded": true, "droop_v": droop_v, "t_s": t_s,
                               "beyond_linear_model": d.beyond_model(*droop_v)});
            if let Some(f) = dominant_hz {
                w["dominant_hz"] = json!(f);
            }
            o.insert("worst_case".into(), w);
        }
        WorstCase::Unbounded => {
            o.insert(
                "worst_case".into(),
                json!({"bounded": false, "reason": "a resonance without damping: a pattern at its frequency pumps it without limit"}),
            );
        }
    }
    v
}

/// Run the droop analysis and print it; exit 0 when the step's droop is within the allowed band, 1 when not.
pub fn run(args: &DroopArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    super::find_rail(&board, &file, &args.rail)?;
    let index = board.rail_index(&args.rail).unwrap_or(0);
    let mut options = super::droop_options(&args.step, &args.rise, &args.window, args.points)?;
    options.band_limit = Some(!args.unfiltered);
    if args.csv {
        // The waveform alone: the step's walk without the worst pattern or the sustained estimate, which the CSV
        // does not carry (the same waveform and exit code as the full analysis).
        let step = step_waveform(&board, index, &options).map_err(|e| format!("{file}: {e}"))?;
        let mut t = String::with_capacity(48 * step.waveform.len() + 8);
        t.push_str("t_s,v\n");
        for [time, v] in &step.waveform {
            push_full_precision(&mut t, *time);
            t.push(',');
            push_full_precision(&mut t, *v);
            t.push('\n');
        }
        emit(&t);
        return Ok(if step.meets { EXIT_PASS } else { EXIT_MISS });
    }
    let d = droop(&board, index, &options).map_err(|e| format!("{file}: {e}"))?;
    if args.json {
        emit(&(serde_json::to_string_pretty(&droop_json(&d)).unwrap_or_default() + "\n"));
    } else {
        let mut t = String::new();
        let _ = writeln!(t, "{} ({file})", board.name);
        let _ = writeln!(t, "{}: shown over {}", d.rail, format(d.window_s, Unit::Second));
        for line in droop_lines(&d) {
            let _ = writeln!(t, "  {line}");
        }
        emit(&t);
    }
    Ok(if d.meets { EXIT_PASS } else { EXIT_MISS })
}
