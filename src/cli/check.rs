//! `hushrail check`: every rail's check, as text for people or JSON for machines. The engine computes each rail's
//! whole check once (`analysis::check_rail`); this file only renders it.

use super::{CornerArg, EXIT_MISS, EXIT_PASS, emit, load_board_traced, rerun_command};
use crate::analysis::{
    BranchRef, CheckOptions, DEFAULT_SEED, RailAnalysis, RailCheck, Severity, check_rail, explain_band, kept_words,
    search_words, sensitivity_words, summary, vertex_words, yield_words,
};
use crate::io::{Trace, utc_date_today};
use crate::model::Board;
use crate::units::{Unit, format};
use clap::Args;
use serde_json::{Value, json};
use std::fmt::Write;
use std::path::PathBuf;

/// The most boards `--yield` draws per rail.
const MAX_YIELD_SAMPLES: usize = 10_000_000;

/// Options of `hushrail check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
    /// The corner the verdict is taken in (the others are reported beside it).
    #[arg(long, value_enum, default_value = "typical")]
    pub corner: CornerArg,
    /// Draw N random boards per rail within the parts' tolerances and report the share that meets target.
    #[arg(long = "yield", value_name = "N")]
    pub yield_samples: Option<usize>,
    /// The seed of the yield's draws (the same seed gives the same boards).
    #[arg(long, default_value_t = DEFAULT_SEED)]
    pub seed: u64,
}

/// Check the board and print the verdict; the exit code says whether every rail passes.
pub fn run(args: &CheckArgs) -> Result<i32, String> {
    let (board, file, sha256) = load_board_traced(args.board.as_ref())?;
    let samples = args.yield_samples.unwrap_or(0);
    if samples > MAX_YIELD_SAMPLES || args.yield_samples == Some(0) {
        return Err(format!("--yield: from 1 to {MAX_YIELD_SAMPLES} boards, not {samples}"));
    }
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let options = CheckOptions {
        corner: args.corner.into(),
        yield_samples: samples,
        seed: args.seed,
        threads,
        ..CheckOptions::default()
    };
    let checks: Vec<RailCheck> = (0..board.rails.len()).filter_map(|i| check_rail(&board, i, &options)).collect();
    let all_pass = checks.iter().all(|c| c.passes);
    let trace = Trace { source: file, sha256, command: rerun_command(), date: utc_date_today(), unsaved_edits: false };
    if args.json {
        emit(&(serde_json::to_string_pretty(&to_json(&board, &trace, &checks, all_pass)).unwrap_or_default() + "\n"));
    } else {
        emit(&to_text(&board, &trace, &checks));
    }
    Ok(if all_pass { EXIT_PASS } else { EXIT_MISS })
}

fn branch_json(b: &Option<BranchRef>) -> Value {
    match b {
        None => Value::Null,
        Some(b) => json!({"label": b.label, "self_resonance_hz": b.resonance_hz, "share": b.share}),
    }
}

/// The headline figures of one analysis; in the worst corner, which way each group went and how it was found.
fn summary_json(a: &RailAnalysis) -> Value {
    let mut v = json!({
        "view": a.view.name(), "corner": a.corner.name(), "meets_target": a.meets_target,
        "worst_ohm": a.worst_ohm, "worst_hz": a.worst_hz, "margin_ratio": a.margin_ratio, "margin_db": a.margin_db,
    });
    if let Some(w) = &a.vertex {
        v["search"] = json!({
            "method": w.method.name(), "vertices": w.vertices, "evaluated": w.evaluated,
            "grid_worst_ohm": w.grid_worst_ohm, "bound_ohm": w.bound_ohm,
        });
        // Past f64's range the count is left out (documented in README), never written as null.
        if !w.vertices.is_finite() {
            v["search"].as_object_mut().map(|o| o.remove("vertices"));
        }
        // A search that proves no bound (best found, on a placed rail past the exhaustive limit) gives none.
        if !w.bound_ohm.is_finite() {
            v["search"].as_object_mut().map(|o| o.remove("bound_ohm"));
        }
        v["groups"] = w
            .groups
            .iter()
            .filter_map(|g| {
                let info = a.groups.iter().find(|x| x.index == g.index)?;
                Some(json!({
                    "part": info.part, "capacitance": g.capacitance.name(), "esr": g.esr.name(),
                    "capacitance_factor": g.scale.c, "esr_factor": g.scale.esr,
                }))
            })
            .collect();
    }
    v
}

/// The machine-readable verdict. Numbers carry full precision; a frequency that does not exist (a branch with no
/// inductance never self-resonates) is null.
fn to_json(board: &Board, trace: &Trace, checks: &[RailCheck], all_pass: bool) -> Value {
    let rails: Vec<Value> = checks
        .iter()
        .map(|c| {
            let a = &c.verdict;
            let mut views = vec![summary_json(a)];
            views.extend(c.other_view.as_ref().map(summary_json));
            let mut rail = json!({
                "name": a.rail,
                "view": a.view.name(),
                "corner": a.corner.name(),
                "passes": c.passes,
                "verdict": c.verdict_line(),
                "step_a": a.step_a,
                "target_ohm": a.target_ohm,
                "band_hz": a.band_hz,
                "band_edges": explain_band(&a.band),
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
                "groups": a.groups.iter().map(|g| {
                    let kept = c.kept.iter().find(|k| k.group == g.index);
                    let sens = c.sensitivity.iter().find(|s| s.group == g.index);
                    json!({
                        "part": g.part, "count": g.count, "self_resonance_hz": g.self_resonance_hz,
                        "mounting_h": g.mounting_h, "effective_capacitance_f": g.effective_c_f,
                        "capacitance_ratio": g.derating.as_ref().map(|d| d.ratio()),
                        "typical_capacitance_ratio": kept.and_then(|k| k.typical.as_ref()).map(|d| d.ratio()),
                        "worst_capacitance_ratio": kept.and_then(|k| k.worst.as_ref()).map(|d| d.ratio()),
                        "one_more_ohm": sens.map(|s| s.more_ohm),
                        "one_fewer_ohm": sens.and_then(|s| s.fewer_ohm),
                    })
                }).collect::<Vec<_>>(),
                "views": views,
                "corners": c.all_corners().map(summary_json).collect::<Vec<_>>(),
                "cautions": c.cautions.iter().map(|k| json!({
                    "part": k.part, "kind": k.kind.name(), "fails": k.fails, "text": k.text,
                })).collect::<Vec<_>>(),
                "band_covers_load_edges": c.edges.as_ref().is_none_or(|e| e.covered()),
                "findings": c.findings.iter().map(|f| json!({
                    "severity": match f.severity { Severity::Fail => "fail", Severity::Note => "note" },
                    "from_hz": f.range_hz[0], "to_hz": f.range_hz[1], "text": f.text, "hint": f.hint,
                })).collect::<Vec<_>>(),
            });
            if let Some(e) = &c.edges {
                rail["load_edge_hz"] = json!(e.edge_hz);
            }
            if !c.loads.is_empty() {
                rail["loads"] = c
                    .loads
                    .iter()
                    .map(|l| {
                        json!({"name": l.name, "view": l.view.name(), "meets_target": l.meets_target,
                               "worst_ohm": l.worst_ohm, "worst_hz": l.worst_hz, "margin_ratio": l.margin_ratio,
                               "margin_db": l.margin_db})
                    })
                    .collect();
            }
            if let Some(y) = &c.yield_estimate {
                rail["yield"] = json!({
                    "samples": y.samples, "meeting": y.meeting, "fraction": y.fraction, "seed": y.seed,
                    "failing": y.failing.iter().map(|r| json!({
                        "from_hz": r.from_hz, "to_hz": r.to_hz, "samples": r.samples,
                    })).collect::<Vec<_>>(),
                });
            }
            rail
        })
        .collect();
    json!({
        "board": board.name,
        "passes": all_pass,
        "meets_target": all_pass,
        "trace": {
            "source": trace.source, "sha256": trace.sha256, "version": trace.version(), "date": trace.date,
            "command": trace.command,
        },
        "rails": rails,
    })
}

/// The verdict for people.
fn to_text(board: &Board, trace: &Trace, checks: &[RailCheck]) -> String {
    let mut t = String::new();
    let _ = writeln!(t, "{}", board.name);
    for line in trace.lines() {
        let _ = writeln!(t, "  {line}");
    }
    for (c, rail) in checks.iter().zip(&board.rails) {
        let a = &c.verdict;
        let _ = writeln!(t);
        let _ = writeln!(
            t,
            "{}: {} at {} % ripple, ΔI {}{} -> target {} over {} to {}",
            a.rail,
            format(rail.voltage_v, Unit::Volt),
            rail.ripple_pct,
            format(a.step_a, Unit::Ampere),
            if rail.combine == crate::model::Combine::Rss { " (root-sum-square of the loads)" } else { "" },
            format(a.target_ohm, Unit::Ohm),
            format(a.band_hz[0], Unit::Hertz),
            format(a.band_hz[1], Unit::Hertz),
        );
        if rail.band_hz.is_none() {
            let edges = explain_band(&a.band);
            let _ = writeln!(t, "  band: {}; {}", edges[0], edges[1]);
        }
        let _ = writeln!(t, "  {}", c.verdict_line());
        for l in &c.loads {
            let _ = writeln!(t, "    {}", crate::analysis::load_line(l, c.verdict.target_ohm));
        }
        if let Some(b) = &c.other_view {
            let _ = writeln!(t, "  ({})", summary(b));
        }
        for o in &c.corners {
            let _ = writeln!(t, "  ({})", summary(o));
        }
        if let Some(w) = c.corner(crate::physics::Corner::Worst) {
            let dirs = vertex_words(w);
            if !dirs.is_empty() {
                let _ = writeln!(t, "  worst vertex: {}", dirs.join("; "));
            }
            if let Some(s) = search_words(w) {
                let _ = writeln!(t, "  worst search: {s}");
            }
        }
        for k in kept_words(c) {
            let _ = writeln!(t, "  capacitance: {k}");
        }
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
        if !c.sensitivity.is_empty() {
            let words: Vec<String> = c.sensitivity.iter().map(sensitivity_words).collect();
            let _ = writeln!(t, "  worst |Z| per part: {}", words.join("; "));
        }
        if let Some(y) = &c.yield_estimate {
            let _ = writeln!(t, "  yield: {}", yield_words(y));
        }
        // A failing caution is among the findings below; the others are reminders.
        for k in c.cautions.iter().filter(|k| !k.fails) {
            let _ = writeln!(t, "  ! caution: {}", k.text);
        }
        for f in &c.findings {
            let mark = match f.severity {
                Severity::Fail => "x",
                Severity::Note => "-",
            };
            let _ = writeln!(t, "  {mark} {}", f.text);
            let _ = writeln!(t, "    try: {}", f.hint);
        }
    }
    let passing = checks.iter().filter(|c| c.passes).count();
    let _ = writeln!(t);
    let _ = writeln!(t, "{passing} of {} rails pass.", checks.len());
    t
}
