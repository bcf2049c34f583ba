//! `hushrail check`: every rail against its target, as text for people or JSON for machines.

use super::{EXIT_MISS, EXIT_PASS, emit, load_board};
use crate::analysis::{AnalysisOptions, BranchRef, Finding, RailAnalysis, Severity, analyze_rail, explain};
use crate::model::Board;
use crate::units::{Unit, format};
use clap::Args;
use serde_json::{Value, json};
use std::fmt::Write;
use std::path::PathBuf;

/// Options of `hushrail check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Check the board and print the verdict; the exit code says whether every rail meets target.
pub fn run(args: &CheckArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let options = AnalysisOptions::default();
    let results: Vec<(RailAnalysis, Vec<Finding>)> = (0..board.rails.len())
        .filter_map(|i| {
            analyze_rail(&board, i, &options).map(|a| {
                let f = explain(&board, &board.rails[i], &a);
                (a, f)
            })
        })
        .collect();
    let all_meet = results.iter().all(|(a, _)| a.meets_target);
    if args.json {
        emit(&(serde_json::to_string_pretty(&to_json(&board, &results, all_meet)).unwrap_or_default() + "\n"));
    } else {
        emit(&to_text(&board, &file, &results));
    }
    Ok(if all_meet { EXIT_PASS } else { EXIT_MISS })
}

fn branch_json(b: &Option<BranchRef>) -> Value {
    match b {
        None => Value::Null,
        Some(b) => json!({"label": b.label, "self_resonance_hz": b.resonance_hz}),
    }
}

/// The machine-readable verdict. Numbers carry full precision; a frequency that does not exist (a branch with no
/// inductance never self-resonates) is null.
fn to_json(board: &Board, results: &[(RailAnalysis, Vec<Finding>)], all_meet: bool) -> Value {
    let rails: Vec<Value> = results
        .iter()
        .map(|(a, findings)| {
            json!({
                "name": a.rail,
                "target_ohm": a.target_ohm,
                "band_hz": a.band_hz,
                "meets_target": a.meets_target,
                "worst_ohm": a.worst_ohm,
                "worst_hz": a.worst_hz,
                "margin_ratio": a.margin_ratio,
                "margin_db": a.margin_db,
                "violations": a.violations.iter().map(|v| json!({
                    "from_hz": v.from_hz, "to_hz": v.to_hz, "peak_hz": v.peak_hz, "peak_ohm": v.peak_ohm,
                })).collect::<Vec<_>>(),
                "antiresonances": a.antiresonances.iter().map(|r| json!({
                    "freq_hz": r.freq_hz, "z_ohm": r.z_ohm, "above_target": r.above_target,
                    "inductive_side": branch_json(&r.inductive_side),
                    "capacitive_side": branch_json(&r.capacitive_side),
                })).collect::<Vec<_>>(),
                "groups": a.groups.iter().map(|g| json!({
                    "part": g.part, "count": g.count, "self_resonance_hz": g.self_resonance_hz,
                })).collect::<Vec<_>>(),
                "findings": findings.iter().map(|f| json!({
                    "severity": match f.severity { Severity::Fail => "fail", Severity::Note => "note" },
                    "from_hz": f.range_hz[0], "to_hz": f.range_hz[1], "text": f.text, "hint": f.hint,
                })).collect::<Vec<_>>(),
            })
        })
        .collect();
    json!({"board": board.name, "meets_target": all_meet, "rails": rails})
}

/// The verdict for people.
fn to_text(board: &Board, file: &str, results: &[(RailAnalysis, Vec<Finding>)]) -> String {
    let mut t = String::new();
    let _ = writeln!(t, "{} ({file})", board.name);
    for ((a, findings), rail) in results.iter().zip(&board.rails) {
        let _ = writeln!(t);
        let _ = writeln!(
            t,
            "{}: {} at {} % ripple, ΔI {} -> target {} over {} to {}",
            a.rail,
            format(rail.voltage_v, Unit::Volt),
            rail.ripple_pct,
            format(rail.total_step_a(), Unit::Ampere),
            format(a.target_ohm, Unit::Ohm),
            format(a.band_hz[0], Unit::Hertz),
            format(a.band_hz[1], Unit::Hertz),
        );
        let verdict = if a.meets_target { "MEETS target" } else { "MISSES target" };
        let _ = writeln!(
            t,
            "  {verdict}: worst |Z| {} at {}, margin {:+.1} dB ({:.2}× target)",
            format(a.worst_ohm, Unit::Ohm),
            format(a.worst_hz, Unit::Hertz),
            a.margin_db,
            a.worst_ohm / a.target_ohm,
        );
        let groups: Vec<String> = a
            .groups
            .iter()
            .map(|g| match g.self_resonance_hz {
                Some(f) => format!("{} ×{} (self-resonant at {})", g.part, g.count, format(f, Unit::Hertz)),
                None => format!("{} ×{}", g.part, g.count),
            })
            .collect();
        if !groups.is_empty() {
            let _ = writeln!(t, "  groups: {}", groups.join(", "));
        }
        for f in findings {
            let mark = match f.severity {
                Severity::Fail => "x",
                Severity::Note => "-",
            };
            let _ = writeln!(t, "  {mark} {}", f.text);
            let _ = writeln!(t, "    try: {}", f.hint);
        }
    }
    let meeting = results.iter().filter(|(a, _)| a.meets_target).count();
    let _ = writeln!(t);
    let _ = writeln!(t, "{meeting} of {} rails meet target.", results.len());
    t
}
