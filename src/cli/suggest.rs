//! `hushrail suggest`: mixes of candidate parts that meet a rail's target at the least cost, count or area.

use super::{EXIT_MISS, EXIT_PASS, emit, find_rail, load_board};
use crate::analysis::{Candidate, Objective, SuggestOptions, default_mounting_h, offered_parts, suggest};
use crate::io::read_board;
use crate::model::Board;
use crate::units::{Unit, format, parse};
use clap::Args;
use serde_json::json;
use std::fmt::Write;
use std::path::PathBuf;

/// What to minimise, as the command line spells it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ObjectiveArg {
    /// Total cost of the parts.
    Cost,
    /// Number of parts.
    Count,
    /// Board area of the parts.
    Area,
}

/// Options of `hushrail suggest`.
#[derive(Debug, Args)]
pub struct SuggestArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Name of the rail.
    #[arg(long)]
    pub rail: String,
    /// Take candidates from the built-in shelf of generic parts (all of them rated for the rail, unless
    /// --candidates names some).
    #[arg(long)]
    pub from_shelf: bool,
    /// Candidate part ids, comma-separated: the board's parts, the shelf's (with --from-shelf) or those of
    /// --candidates-from.
    #[arg(long, value_delimiter = ',')]
    pub candidates: Vec<String>,
    /// Another board file whose parts are candidates too.
    #[arg(long)]
    pub candidates_from: Option<PathBuf>,
    /// What to minimise.
    #[arg(long, value_enum, default_value = "cost")]
    pub objective: ObjectiveArg,
    /// Most parts in all.
    #[arg(long, default_value_t = 200)]
    pub max_total: u32,
    /// Most parts of one candidate.
    #[arg(long, default_value_t = 50)]
    pub max_per_part: u32,
    /// How many options to show.
    #[arg(long, default_value_t = 5)]
    pub options: usize,
    /// Keep the rail's existing groups and add to them (else the mix replaces them).
    #[arg(long)]
    pub keep_existing: bool,
    /// Mounting inductance of each added part ("0.6n") [default: the mean of the rail's groups, or 0.5 nH].
    #[arg(long)]
    pub mounting: Option<String>,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Run the search and print the options; exit 0 when some option meets target, 1 when none can.
pub fn run(args: &SuggestArgs) -> Result<i32, String> {
    let (board, file) = load_board(args.board.as_ref())?;
    let rail = find_rail(&board, &file, &args.rail)?;
    let index = board.rail_index(&rail.name).unwrap_or(0);
    let mounting_h = match &args.mounting {
        Some(text) => parse(text, Unit::Henry).map_err(|e| format!("--mounting: {e}"))?,
        None => default_mounting_h(rail),
    };
    let candidates = gather(args, &board, rail.voltage_v)?
        .into_iter()
        .map(|part| Candidate { part, mounting_h })
        .collect::<Vec<_>>();
    let objective = match args.objective {
        ObjectiveArg::Cost => Objective::Cost,
        ObjectiveArg::Count => Objective::Count,
        ObjectiveArg::Area => Objective::Area,
    };
    let options = SuggestOptions {
        objective,
        max_total: args.max_total,
        max_per_part: args.max_per_part,
        options: args.options.max(1),
        keep_existing: args.keep_existing,
        ..Default::default()
    };
    let s = suggest(&board, index, &candidates, &options).map_err(|e| format!("{file}: rail {}: {e}", rail.name))?;
    let any = s.options.iter().any(|o| o.meets_target);
    if args.json {
        let opts: Vec<_> = s
            .options
            .iter()
            .map(|o| {
                let counts: serde_json::Map<String, serde_json::Value> = candidates
                    .iter()
                    .zip(&o.counts)
                    .filter(|(_, n)| **n > 0)
                    .map(|(c, n)| (c.part.id.clone(), json!(n)))
                    .collect();
                json!({"counts": counts, "cost": o.cost, "count": o.count, "area_m2": o.area_m2,
                       "worst_ohm": o.worst_ohm, "worst_hz": o.worst_hz, "margin_db": o.margin_db,
                       "meets_target": o.meets_target})
            })
            .collect();
        let value = json!({"rail": rail.name, "objective": objective.name(), "exhaustive": s.exhaustive,
                           "mounting_h": mounting_h, "keep_existing": args.keep_existing,
                           "candidates": candidates.iter().map(|c| c.part.id.clone()).collect::<Vec<_>>(),
                           "options": opts, "limit": s.limit});
        emit(&(serde_json::to_string_pretty(&value).unwrap_or_default() + "\n"));
    } else {
        let mut t = String::new();
        let _ = writeln!(
            t,
            "{}: {} candidates, least {} first, each part mounted with {}{}",
            rail.name,
            candidates.len(),
            objective.name(),
            format(mounting_h, Unit::Henry),
            if s.exhaustive { " (every combination tried)" } else { "" }
        );
        for (n, o) in s.options.iter().enumerate() {
            let parts: Vec<String> = candidates
                .iter()
                .zip(&o.counts)
                .filter(|(_, k)| **k > 0)
                .map(|(c, k)| format!("{k} × {}", c.part.id))
                .collect();
            let verdict = if o.meets_target { "meets target" } else { "MISSES target" };
            let _ = writeln!(t, "option {}: {}", n + 1, parts.join(" + "));
            let _ = writeln!(
                t,
                "  {verdict}: worst |Z| {} at {}, margin {:+.1} dB; {} parts, cost {:.3}, area {:.1} mm²",
                format(o.worst_ohm, Unit::Ohm),
                format(o.worst_hz, Unit::Hertz),
                o.margin_db,
                o.count,
                o.cost,
                o.area_m2 * 1e6
            );
        }
        if let Some(limit) = &s.limit {
            let _ = writeln!(t, "no mix meets target: {limit}");
        }
        emit(&t);
    }
    Ok(if any { EXIT_PASS } else { EXIT_MISS })
}

/// The candidate parts the options name, deduplicated by id, in a stable order.
fn gather(args: &SuggestArgs, board: &Board, rail_v: f64) -> Result<Vec<crate::model::Part>, String> {
    let shelf = if args.from_shelf { Some(crate::samples::shelf().map_err(|e| e.to_string())?) } else { None };
    let other = match &args.candidates_from {
        Some(p) => Some(read_board(p).map_err(|e| e.to_string())?),
        None => None,
    };
    let mut out: Vec<crate::model::Part> = Vec::new();
    if args.candidates.is_empty() {
        // Everything offered, rated for the rail.
        out = match (&shelf, &other) {
            (None, None) => offered_parts([board], rail_v),
            _ => offered_parts(shelf.iter().chain(&other), rail_v),
        };
    } else {
        let mut push = |p: &crate::model::Part| {
            if !out.iter().any(|q| q.id == p.id) {
                out.push(p.clone());
            }
        };
        for id in &args.candidates {
            let found = board
                .part(id)
                .or_else(|| shelf.as_ref().and_then(|s| s.part(id)))
                .or_else(|| other.as_ref().and_then(|o| o.part(id)))
                .ok_or_else(|| {
                    format!(
                        "--candidates: no part \"{id}\" on the board{}{}",
                        if shelf.is_some() { ", the shelf" } else { "" },
                        if other.is_some() { " or --candidates-from" } else { "" }
                    )
                })?;
            push(found);
        }
    }
    if out.is_empty() {
        return Err("no candidate parts: name some with --candidates, or use --from-shelf".into());
    }
    Ok(out)
}
