//! `hushrail check`: every rail against its target, as text for people or JSON for machines.
//!
//! The verdict of a rail is taken at the die when it gives a package (else at the board), in the chosen corner;
//! the other view and the other corner are reported beside it.

use super::{CornerArg, EXIT_MISS, EXIT_PASS, emit, load_board};
use crate::analysis::placed::{LoadVerdict, analyze_placed};
use crate::analysis::{
    AnalysisOptions, BranchRef, Finding, RailAnalysis, Severity, View, analyze_rail, explain, explain_band,
};
use crate::model::Board;
use crate::physics::Corner;
use crate::physics::derating::BiasSource;
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
    /// The derating corner the verdict is taken in (the other is reported beside it).
    #[arg(long, value_enum, default_value = "nominal")]
    pub corner: CornerArg,
}

/// One rail, checked: the verdict analysis, its findings, and the other view and corner.
struct RailCheck {
    verdict: RailAnalysis,
    findings: Vec<Finding>,
    /// The board view, when the verdict is at the die.
    board_view: Option<RailAnalysis>,
    /// The other corner, in the verdict's view.
    other_corner: RailAnalysis,
    /// Each load's verdict on a placed rail (empty on a lumped rail, whose loads share one node).
    loads: Vec<LoadVerdict>,
}

/// Check the board and print the verdict; the exit code says whether every rail meets target.
pub fn run(args: &CheckArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let corner: Corner = args.corner.into();
    let other = match corner {
        Corner::Nominal => Corner::Worst,
        Corner::Worst => Corner::Nominal,
    };
    let checks: Vec<RailCheck> = (0..board.rails.len())
        .filter_map(|i| {
            let options = AnalysisOptions { corner, ..Default::default() };
            let verdict = analyze_rail(&board, i, &options)?;
            let findings = explain(&board, &board.rails[i], &verdict);
            let board_view = (verdict.view == View::Die)
                .then(|| analyze_rail(&board, i, &AnalysisOptions { view: Some(View::Board), ..options }))
                .flatten();
            let other_corner = analyze_rail(&board, i, &AnalysisOptions { corner: other, ..options })?;
            let loads = analyze_placed(&board, i, &options).map(|p| p.loads).unwrap_or_default();
            Some(RailCheck { verdict, findings, board_view, other_corner, loads })
        })
        .collect();
    let all_meet = checks.iter().all(|c| c.verdict.meets_target);
    if args.json {
        emit(&(serde_json::to_string_pretty(&to_json(&board, &checks, all_meet)).unwrap_or_default() + "\n"));
    } else {
        emit(&to_text(&board, &file, &checks));
    }
    Ok(if all_meet { EXIT_PASS } else { EXIT_MISS })
}

fn branch_json(b: &Option<BranchRef>) -> Value {
    match b {
        None => Value::Null,
        Some(b) => json!({"label": b.label, "self_resonance_hz": b.resonance_hz}),
    }
}

/// The headline figures of one analysis.
fn summary_json(a: &RailAnalysis) -> Value {
    json!({
        "view": a.view.name(), "corner": a.corner.name(), "meets_target": a.meets_target,
        "worst_ohm": a.worst_ohm, "worst_hz": a.worst_hz, "margin_ratio": a.margin_ratio, "margin_db": a.margin_db,
    })
}

/// The machine-readable verdict. Numbers carry full precision; a frequency that does not exist (a branch with no
/// inductance never self-resonates) is null.
fn to_json(board: &Board, checks: &[RailCheck], all_meet: bool) -> Value {
    let rails: Vec<Value> = checks
        .iter()
        .map(|c| {
            let a = &c.verdict;
            let mut views = vec![summary_json(a)];
            views.extend(c.board_view.as_ref().map(summary_json));
            let corners = vec![summary_json(a), summary_json(&c.other_corner)];
            let mut rail = json!({
                "name": a.rail,
                "view": a.view.name(),
                "corner": a.corner.name(),
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
                "groups": a.groups.iter().map(|g| json!({
                    "part": g.part, "count": g.count, "self_resonance_hz": g.self_resonance_hz,
                    "mounting_h": g.mounting_h, "effective_capacitance_f": g.effective_c_f,
                    "capacitance_ratio": g.derating.as_ref().map(|d| d.ratio()),
                })).collect::<Vec<_>>(),
                "views": views,
                "corners": corners,
                "findings": c.findings.iter().map(|f| json!({
                    "severity": match f.severity { Severity::Fail => "fail", Severity::Note => "note" },
                    "from_hz": f.range_hz[0], "to_hz": f.range_hz[1], "text": f.text, "hint": f.hint,
                })).collect::<Vec<_>>(),
            });
            if !c.loads.is_empty() {
                rail["loads"] = c.loads.iter().map(|l| json!({
                    "name": l.name, "view": l.view.name(), "meets_target": l.meets_target, "worst_ohm": l.worst_ohm,
                    "worst_hz": l.worst_hz, "margin_ratio": l.margin_ratio, "margin_db": l.margin_db,
                })).collect();
            }
            rail
        })
        .collect();
    json!({"board": board.name, "meets_target": all_meet, "rails": rails})
}

/// "MEETS target at the die: worst |Z| 12.3 mΩ at 4.56 MHz, margin +3.2 dB (0.69× target)".
fn summary_text(a: &RailAnalysis) -> String {
    let verdict = if a.meets_target { "MEETS target" } else { "MISSES target" };
    let at = match a.view {
        View::Board => "at the board",
        View::Die => "at the die",
    };
    format!(
        "{verdict} {at}: worst |Z| {} at {}, margin {:+.1} dB ({:.2}× target)",
        format(a.worst_ohm, Unit::Ohm),
        format(a.worst_hz, Unit::Hertz),
        a.margin_db,
        a.worst_ohm / a.target_ohm,
    )
}

/// "MEETS target at its die: worst effective |Z| 12.3 mΩ at 4.56 MHz, margin +3.2 dB".
fn load_text(l: &LoadVerdict, target_ohm: f64) -> String {
    let verdict = if l.meets_target { "MEETS target" } else { "MISSES target" };
    let at = match l.view {
        View::Board => "at its pins",
        View::Die => "at its die",
    };
    format!(
        "{verdict} {at}: worst effective |Z| {} at {}, margin {:+.1} dB ({:.2}× target)",
        format(l.worst_ohm, Unit::Ohm),
        format(l.worst_hz, Unit::Hertz),
        l.margin_db,
        l.worst_ohm / target_ohm,
    )
}

/// The verdict for people.
fn to_text(board: &Board, file: &str, checks: &[RailCheck]) -> String {
    let mut t = String::new();
    let _ = writeln!(t, "{} ({file})", board.name);
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
        let _ = writeln!(t, "  {}", summary_text(a));
        for l in &c.loads {
            let _ = writeln!(t, "    load {}: {}", l.name, load_text(l, a.target_ohm));
        }
        if let Some(b) = &c.board_view {
            let _ = writeln!(t, "  ({})", summary_text(b));
        }
        let o = &c.other_corner;
        let _ = writeln!(t, "  ({} corner: {})", o.corner.name(), summary_text(o));
        let worst = if a.corner == Corner::Worst { a } else { o };
        let losers = losing_parts(worst);
        if !losers.is_empty() {
            let _ = writeln!(t, "  worst corner keeps: {}", losers.join(", "));
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
        for f in &c.findings {
            let mark = match f.severity {
                Severity::Fail => "x",
                Severity::Note => "-",
            };
            let _ = writeln!(t, "  {mark} {}", f.text);
            let _ = writeln!(t, "    try: {}", f.hint);
        }
    }
    let meeting = checks.iter().filter(|c| c.verdict.meets_target).count();
    let _ = writeln!(t);
    let _ = writeln!(t, "{meeting} of {} rails meet target.", checks.len());
    t
}

/// The groups whose capacitance falls most in the worst corner, most first: "mlcc-10u ×4 38 % (generic bias)".
fn losing_parts(a: &RailAnalysis) -> Vec<String> {
    let mut groups: Vec<_> = a.groups.iter().filter_map(|g| g.derating.as_ref().map(|d| (g, d))).collect();
    groups.sort_by(|x, y| x.1.ratio().total_cmp(&y.1.ratio()));
    groups
        .into_iter()
        .filter(|(_, d)| d.ratio() < 0.999)
        .take(3)
        .map(|(g, d)| {
            let tag = match d.bias_source {
                BiasSource::Generic => " (generic DC-bias model, typical)",
                BiasSource::PartCurve => " (part's DC-bias curve)",
                BiasSource::None => "",
            };
            format!("{} {:.0} %{tag}", g.part, d.ratio() * 100.0)
        })
        .collect()
}
