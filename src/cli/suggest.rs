//! `hushrail suggest`: mixes of candidate parts that meet a rail's target with a margin in a corner, with few
//! distinct parts, at the least cost, count or area. The engine finds and words everything; this prints it.

use super::{EXIT_MISS, EXIT_PASS, emit, find_rail, load_board};
use crate::analysis::{
    Blocker, Candidate, CornerFigures, DEFAULT_MARGIN_DB, MAX_CANDIDATES, MixOption, Objective, SuggestOptions,
    Suggestion, VERDICT_CORNER, area_words, corner_words, cost_words, default_mounting_h, offered_parts, plural,
    ranges, suggest,
};
use crate::io::read_board;
use crate::model::Board;
use crate::physics::Corner;
use crate::units::{Unit, format};
use clap::Args;
use serde_json::{Value, json};
use std::fmt::Write;
use std::path::PathBuf;

/// What to minimise, as the command line spells it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ObjectiveArg {
    /// Total cost of the parts (plus --line-cost per new line item).
    Cost,
    /// Number of parts.
    Count,
    /// Board area of the parts.
    Area,
}

/// The corner every option must meet target in, as the command line spells it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum SuggestCorner {
    /// The corner the check's verdict uses.
    Typical,
    /// Lowest effective capacitance: DC bias, temperature class limit and tolerance.
    Worst,
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
    /// Most distinct parts on the rail (with --keep-existing, the kept groups' parts count).
    #[arg(long, default_value_t = 4)]
    pub max_kinds: u32,
    /// Cost of each line item the mix adds (a part the board does not use yet), added to the cost objective.
    #[arg(long, default_value_t = 0.0)]
    pub line_cost: f64,
    /// Margin under target every option must keep, dB.
    #[arg(long, default_value_t = DEFAULT_MARGIN_DB)]
    pub margin_db: f64,
    /// The corner every option must meet target in ("typical" is the one the check's verdict uses); the other
    /// corner's figures are shown beside.
    #[arg(long, value_enum, default_value = "typical")]
    pub corner: SuggestCorner,
    /// Every option must also keep the step droop within the allowed band (voltage × ripple).
    #[arg(long)]
    pub droop: bool,
    /// How many options to show.
    #[arg(long, default_value_t = 5)]
    pub options: usize,
    /// Keep the rail's existing groups and add to them (else the mix replaces them).
    #[arg(long)]
    pub keep_existing: bool,
    /// Mounting inductance of each added part ("0.6n") [default: the mean of the rail's groups, or 0.5 nH].
    #[arg(long)]
    pub mounting: Option<String>,
    /// On a placed rail: put the new parts beside this load (just outside its pin field) [default: beside the
    /// load that fares worst].
    #[arg(long, conflicts_with = "spot")]
    pub beside: Option<String>,
    /// On a placed rail: put the new parts at this point of the plane pair, "X,Y" from its lower-left corner in
    /// metres ("0.031,0.02").
    #[arg(long)]
    pub spot: Option<String>,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// The library's corner for the command line's.
fn corner_of(c: SuggestCorner) -> Corner {
    match c {
        SuggestCorner::Typical => VERDICT_CORNER,
        SuggestCorner::Worst => Corner::Worst,
    }
}

/// Each flag inside its range, or a message naming the flag, the value and the range.
fn check_flags(args: &SuggestArgs) -> Result<(), String> {
    let outside = |flag: &str, value: String, range: String| Err(format!("--{flag}: {value} is outside {range}"));
    if !(1..=ranges::MAX_TOTAL).contains(&args.max_total) {
        return outside("max-total", args.max_total.to_string(), format!("1 to {}", ranges::MAX_TOTAL));
    }
    if !(1..=ranges::MAX_PER_PART).contains(&args.max_per_part) {
        return outside("max-per-part", args.max_per_part.to_string(), format!("1 to {}", ranges::MAX_PER_PART));
    }
    if !(1..=ranges::MAX_KINDS).contains(&args.max_kinds) {
        return outside("max-kinds", args.max_kinds.to_string(), format!("1 to {}", ranges::MAX_KINDS));
    }
    if !(1..=ranges::OPTIONS).contains(&args.options) {
        return outside("options", args.options.to_string(), format!("1 to {}", ranges::OPTIONS));
    }
    if !(0.0..=ranges::MARGIN_DB).contains(&args.margin_db) {
        return outside("margin-db", args.margin_db.to_string(), format!("0 to {} dB", ranges::MARGIN_DB));
    }
    if !(0.0..=ranges::LINE_COST).contains(&args.line_cost) {
        return outside("line-cost", args.line_cost.to_string(), format!("0 to {}", ranges::LINE_COST));
    }
    if args.line_cost > 0.0 && args.objective != ObjectiveArg::Cost {
        return Err("--line-cost is added to the cost objective: use it with --objective cost".into());
    }
    Ok(())
}

/// Run the search and print the options; exit 0 when some option qualifies, 1 when none does.
pub fn run(args: &SuggestArgs) -> Result<i32, String> {
    check_flags(args)?;
    let (board, file) = load_board(args.board.as_ref())?;
    let rail = find_rail(&board, &file, &args.rail)?;
    let index = board.rail_index(&rail.name).unwrap_or(0);
    let mounting_h = match &args.mounting {
        Some(text) => super::flag_value(text, Unit::Henry, &crate::model::ranges::INDUCTANCE, "mounting")?,
        None => default_mounting_h(rail),
    };
    let (parts, from) = gather(args, &board, rail.voltage_v)?;
    let candidates = parts.into_iter().map(|part| Candidate { part, mounting_h }).collect::<Vec<_>>();
    let objective = match args.objective {
        ObjectiveArg::Cost => Objective::Cost,
        ObjectiveArg::Count => Objective::Count,
        ObjectiveArg::Area => Objective::Area,
    };
    let spot_m = spot_flag(args, rail, &file)?;
    let options = SuggestOptions {
        spot_m,
        objective,
        max_total: args.max_total,
        max_per_part: args.max_per_part,
        max_kinds: args.max_kinds,
        line_cost: args.line_cost,
        margin_db: args.margin_db,
        corner: corner_of(args.corner),
        droop: args.droop,
        options: args.options,
        keep_existing: args.keep_existing,
        ..Default::default()
    };
    let s = suggest(&board, index, &candidates, &options).map_err(|e| format!("{file}: rail {}: {e}", rail.name))?;
    let spot = crate::analysis::spot_words(rail, &s);
    let header =
        Header { rail: &rail.name, from: &from, candidates: &candidates, options: &options, mounting_h, spot: &spot };
    emit(&if args.json { to_json(&header, &s) } else { to_text(&header, &s) });
    Ok(if s.options.is_empty() { EXIT_MISS } else { EXIT_PASS })
}

/// The spot for new parts the flags give: --spot's point, or beside --beside's load (on a placed rail only).
fn spot_flag(args: &SuggestArgs, rail: &crate::model::Rail, file: &str) -> Result<Option<[f64; 2]>, String> {
    if let Some(text) = &args.spot {
        let metres = |t: &str| crate::units::parse(t, Unit::Metre).map_err(|e| e.to_string());
        return super::flag_pair("spot", text, "in metres", &metres).map(Some);
    }
    let Some(name) = &args.beside else { return Ok(None) };
    let Some(placement) = &rail.placement else {
        return Err(format!(
            "{file}: --beside needs a placed rail (one with a plane_pair); rail {} is lumped",
            rail.name
        ));
    };
    let k = rail.loads.iter().position(|l| &l.name == name).ok_or_else(|| {
        let names: Vec<&str> = rail.loads.iter().map(|l| l.name.as_str()).collect();
        format!("{file}: rail {} has no load \"{name}\" (its loads: {})", rail.name, names.join(", "))
    })?;
    Ok(placement.beside_load(k))
}

/// What a search was asked, for its printout.
struct Header<'a> {
    rail: &'a str,
    from: &'a str,
    candidates: &'a [Candidate],
    options: &'a SuggestOptions,
    mounting_h: f64,
    /// Where new parts go on a placed rail, in words (empty on a lumped rail).
    spot: &'a str,
}

/// The parts of a mix in words: "3 × a + 5 × b".
fn mix_words(candidates: &[Candidate], counts: &[u32]) -> String {
    let parts: Vec<String> =
        candidates.iter().zip(counts).filter(|(_, n)| **n > 0).map(|(c, n)| format!("{n} × {}", c.part.id)).collect();
    if parts.is_empty() { "no parts added".into() } else { parts.join(" + ") }
}

/// One corner's line: "nominal corner: worst |Z| ... (meets target)".
fn corner_line(c: &CornerFigures) -> String {
    let verdict = if c.meets_target { "meets target" } else { "MISSES target" };
    format!("{} corner: {}, {verdict}", c.corner.name(), corner_words(c))
}

/// The figures of one option, indented under its title.
fn option_text(t: &mut String, o: &MixOption) {
    let _ = writeln!(t, "  {}", corner_line(&o.judged));
    let _ = writeln!(t, "  {}", corner_line(&o.other));
    if let Some(d) = &o.droop {
        let _ = writeln!(
            t,
            "  step droop {} against {} allowed{}",
            format(d.droop_v, Unit::Volt),
            format(d.allowed_v, Unit::Volt),
            if d.meets { "" } else { ": OUTSIDE" }
        );
    }
    let _ = writeln!(
        t,
        "  {}, {}, {}, {}",
        plural(o.count as u64, "part", "parts"),
        plural(o.kinds as u64, "kind", "kinds"),
        cost_words(o),
        area_words(o.area_m2)
    );
}

fn to_text(h: &Header, s: &Suggestion) -> String {
    let o = h.options;
    let mut t = String::new();
    let _ = writeln!(
        t,
        "{}: {} {}, each part mounted with {}; least {} first.",
        h.rail,
        plural(h.candidates.len() as u64, "candidate", "candidates"),
        h.from,
        format(h.mounting_h, Unit::Henry),
        o.objective.name()
    );
    let mut rules = format!(
        "Each option must meet target ({}) with {:.1} dB margin (|Z| at most {}) in the {} corner, with at most {}",
        format(s.target_ohm, Unit::Ohm),
        o.margin_db,
        format(s.required_ohm, Unit::Ohm),
        o.corner.name(),
        plural(o.max_kinds as u64, "kind of part", "kinds of part"),
    );
    if o.line_cost > 0.0 {
        let _ = write!(rules, ", each new line item costing {}", o.line_cost);
    }
    if o.droop {
        rules.push_str(", and keep the step droop within the allowed band");
    }
    rules.push('.');
    if s.exhaustive {
        rules.push_str(" Every combination was tried.");
    }
    if let Some(n) = s.shortlisted {
        let _ = write!(rules, " The {} candidates were cut to the {n} that could matter.", h.candidates.len());
    }
    let _ = writeln!(t, "{rules}");
    if !h.spot.is_empty() {
        let _ = writeln!(t, "{}", h.spot);
    }
    for (n, m) in s.options.iter().enumerate() {
        let _ = writeln!(t, "option {}: {}", n + 1, mix_words(h.candidates, &m.counts));
        option_text(&mut t, m);
    }
    if let Some(f) = &s.shortfall {
        let _ = writeln!(t, "{}", f.words());
    }
    if s.options.is_empty() {
        let _ = writeln!(
            t,
            "No mix meets target with {:.1} dB margin in the {} corner within the limits.",
            o.margin_db,
            o.corner.name()
        );
        for b in &s.blockers {
            let _ = writeln!(t, "  {}", b.words());
        }
        if let Some(c) = &s.closest {
            let _ = writeln!(t, "closest mix found (not offered: it misses): {}", mix_words(h.candidates, &c.counts));
            option_text(&mut t, c);
        }
    }
    t
}

fn corner_json(c: &CornerFigures) -> Value {
    json!({"corner": c.corner.name(), "worst_ohm": c.worst_ohm, "worst_hz": c.worst_hz, "margin_db": c.margin_db,
           "meets_target": c.meets_target})
}

fn option_json(candidates: &[Candidate], o: &MixOption) -> Value {
    let counts: serde_json::Map<String, Value> =
        candidates.iter().zip(&o.counts).filter(|(_, n)| **n > 0).map(|(c, n)| (c.part.id.clone(), json!(n))).collect();
    let mut v = json!({"counts": counts, "objective": o.objective, "count": o.count, "kinds": o.kinds,
                       "new_lines": o.new_lines, "corners": [corner_json(&o.judged), corner_json(&o.other)],
                       "accepted": o.accepted});
    // A missing cost or area is left out rather than written as a number that is not one.
    if let Some(c) = o.cost {
        v["cost"] = json!(c);
    }
    if let Some(a) = o.area_m2 {
        v["area_m2"] = json!(a);
    }
    if let Some(d) = &o.droop {
        v["droop"] = json!({"droop_v": d.droop_v, "allowed_v": d.allowed_v, "meets": d.meets});
    }
    v
}

/// A blocker's JSON: its serialisation (kind and figures) and its words.
fn blocker_json(b: &Blocker) -> Value {
    let mut v = serde_json::to_value(b).unwrap_or_else(|_| json!({"kind": b.kind()}));
    v["text"] = json!(b.words());
    v
}

fn to_json(h: &Header, s: &Suggestion) -> String {
    let o = h.options;
    let mut v = json!({
        "rail": h.rail, "objective": o.objective.name(), "corner": o.corner.name(), "margin_db": o.margin_db,
        "target_ohm": s.target_ohm, "required_ohm": s.required_ohm, "max_kinds": o.max_kinds,
        "max_total": o.max_total, "max_per_part": o.max_per_part, "line_cost": o.line_cost, "droop": o.droop,
        "exhaustive": s.exhaustive, "mounting_h": h.mounting_h, "keep_existing": o.keep_existing,
        "candidates": h.candidates.iter().map(|c| c.part.id.clone()).collect::<Vec<_>>(),
        "options": s.options.iter().map(|m| option_json(h.candidates, m)).collect::<Vec<_>>(),
        "blockers": s.blockers.iter().map(blocker_json).collect::<Vec<_>>(),
    });
    if let Some(spot) = s.spot_m {
        v["spot_m"] = json!(spot);
    }
    if let Some(n) = s.shortlisted {
        v["shortlisted"] = json!(n);
    }
    if let Some(c) = &s.closest {
        v["closest"] = option_json(h.candidates, c);
    }
    if let Some(f) = &s.shortfall {
        v["shortfall"] = json!({"asked": f.asked, "found": f.found, "similar": f.similar,
                                "droop_failed": f.droop_failed, "text": f.words()});
    }
    serde_json::to_string_pretty(&v).unwrap_or_default() + "\n"
}

/// The candidate parts the options name, deduplicated by id, in a stable order.
fn gather(args: &SuggestArgs, board: &Board, rail_v: f64) -> Result<(Vec<crate::model::Part>, String), String> {
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
    if out.len() > MAX_CANDIDATES {
        return Err(format!("{} candidate parts; a search takes at most {MAX_CANDIDATES}: name fewer", out.len()));
    }
    // Where the candidates came from, for the header.
    let from = if !args.candidates.is_empty() {
        "named".to_string()
    } else {
        let mut sources: Vec<String> = Vec::new();
        if args.from_shelf {
            sources.push("the shelf".into());
        }
        if let Some(p) = &args.candidates_from {
            sources.push(p.display().to_string());
        }
        if sources.is_empty() {
            sources.push("the board's own parts".into());
        }
        format!("from {}", sources.join(" and "))
    };
    Ok((out, from))
}
