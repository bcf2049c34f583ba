//! Suggest capacitor mixes a designer would build: counts of candidate parts that meet a rail's target with a
//! stated margin in a stated corner, with few distinct parts (line items), at the least cost (or count, or area).
//!
//! How it works:
//! - Feasibility is judged on a fixed log grid over the band (plus every candidate's self-resonance inside it),
//!   every part derated for the chosen corner by the engine's own network builder ([`evaluator`]). A mix is
//!   feasible when its worst |Z| there is at most the target less the margin.
//! - Long candidate lists are first cut to the parts that could matter ([`shortlist`]), so the cost of a search
//!   does not grow with the list.
//! - Small problems (every combination of counts within the limits, the kinds limit included, up to
//!   [`EXHAUSTIVE_LIMIT`]) are searched exhaustively, so the answer is exact with respect to the grid. Larger ones
//!   use a greedy fill, improving moves and kind changes, restarted from several seeds ([`search`]).
//! - The options are the Pareto set over (objective, count, area, worst |Z|) sorted by the objective. Each is
//!   re-checked with [`analyze_rail`] (the engine `check` uses) in the chosen corner and in the other one, and by
//!   the droop engine when asked; an option the engine refuses tightens the search's grid margin and the search
//!   runs again. An option within [`DISTINCT_TOLERANCE`] of a cheaper one's figures is dropped.
//! - When no mix qualifies, [`limits`] says what stops it: bounds that prove it (the package alone, the count
//!   limits) or what the search found (the kinds limit, the margin, the droop).

mod evaluator;
mod limits;
mod placed_form;
mod search;
mod shortlist;

pub use evaluator::MixEvaluator;
pub use limits::{Blocker, plural};
pub use shortlist::SHORTLIST_SIZE;

use super::droop::{DroopOptions, droop};
use super::rail::{AnalysisOptions, analyze_rail};
use crate::model::{Board, DecapGroup, Part, Rail};
use crate::physics::Corner;
use crate::physics::mounting::group_mounting_h;
use crate::units::{Unit, format};
use search::{Judged, Problem, Search, combinations, pareto};
use std::collections::HashSet;

/// The corner the check's verdict uses (the typical corner: each part at the rail's DC bias), and so the default
/// corner of a search.
pub const VERDICT_CORNER: Corner = Corner::Typical;

/// The default margin under target, dB: about 11 % of headroom, so a mix does not sit on the line (our choice).
pub const DEFAULT_MARGIN_DB: f64 = 1.0;

/// Two options whose figures (worst |Z| in both corners, area) differ by less than this fraction, and of which the
/// costlier has no fewer parts, are the same option for a designer: the costlier is dropped.
pub const DISTINCT_TOLERANCE: f64 = 0.05;

/// Combinations at or below which the search is exhaustive.
pub const EXHAUSTIVE_LIMIT: u64 = 100_000;

/// The most candidates a search takes (a list longer than any real library's list of decoupling parts).
pub const MAX_CANDIDATES: usize = 20_000;

/// Ranges of the search's settings, each checked with a message that states it.
pub mod ranges {
    /// Most parts added in all: 1 to this.
    pub const MAX_TOTAL: u32 = 2_000;
    /// Most parts of one candidate: 1 to this.
    pub const MAX_PER_PART: u32 = 500;
    /// Most distinct parts on the rail: 1 to this.
    pub const MAX_KINDS: u32 = 16;
    /// Options asked for: 1 to this.
    pub const OPTIONS: usize = 20;
    /// Margin under target, dB: 0 to this (20 dB is a tenth of the target).
    pub const MARGIN_DB: f64 = 20.0;
    /// Cost per line item: 0 to this.
    pub const LINE_COST: f64 = 1e6;
    /// Grid points while searching: 3 to this.
    pub const GRID_POINTS: usize = 20_000;
}

/// Engine re-checks of candidate options per round (each about 0.2 ms).
const ENGINE_CHECKS: usize = 80;

/// Droop computations per search with `droop` (each takes a fraction of a second).
const DROOP_CHECKS: usize = 12;

/// What the optimizer minimises.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Objective {
    /// Total cost of the parts added (each part's `unit_cost`).
    #[default]
    Cost,
    /// Number of parts added.
    Count,
    /// Board area of the parts added (each part's `area_m2`).
    Area,
}

impl Objective {
    /// The word used on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Objective::Cost => "cost",
            Objective::Count => "count",
            Objective::Area => "area",
        }
    }
}

/// One candidate part, with the mounting inductance a fitted one would have.
#[derive(Debug, Clone, PartialEq)]
pub struct Candidate {
    /// The part.
    pub part: Part,
    /// Mounting inductance of one fitted part, H.
    pub mounting_h: f64,
}

/// The mounting inductance candidates get when the user gives none: the mean of the rail's groups' (so a mix is
/// mounted like the parts already there), or 0.5 nH for a rail with no groups (a typical small-case mounting
/// with short traces and one via per pad; common practice, from memory). H.
pub fn default_mounting_h(rail: &Rail) -> f64 {
    if rail.decaps.is_empty() {
        0.5e-9
    } else {
        rail.decaps.iter().map(group_mounting_h).sum::<f64>() / rail.decaps.len() as f64
    }
}

/// Every part offered by `sources` that is rated for `rail_v` (a part without a rating is offered: its data must
/// say), once per id, the first source's first.
pub fn offered_parts<'a>(sources: impl IntoIterator<Item = &'a Board>, rail_v: f64) -> Vec<Part> {
    let mut out: Vec<Part> = Vec::new();
    for p in sources.into_iter().flat_map(|b| b.parts.iter()) {
        if p.rated_voltage_v.is_none_or(|v| v >= rail_v) && !out.iter().any(|q| q.id == p.id) {
            out.push(p.clone());
        }
    }
    out
}

/// The board with a mix fitted on rail `rail_index`: candidates not yet on the board are added to its parts,
/// and the rail's groups are replaced by the mix (or the mix added to them when `keep_existing`).
///
/// On a placed rail every new group sits at `spot_m` (the suggestion's [`Suggestion::spot_m`]); without a spot
/// a placed rail's new groups go beside its first load.
pub fn apply_mix(
    board: &Board,
    rail_index: usize,
    candidates: &[Candidate],
    counts: &[u32],
    keep_existing: bool,
    spot_m: Option<[f64; 2]>,
) -> Board {
    let mut out = board.clone();
    for c in candidates {
        if out.part(&c.part.id).is_none() {
            out.parts.push(c.part.clone());
        }
    }
    let rail = &mut out.rails[rail_index];
    if !keep_existing {
        rail.decaps.clear();
        if let Some(p) = rail.placement.as_mut() {
            p.groups.clear();
        }
    }
    let spot = rail.placement.as_ref().and_then(|p| spot_m.or_else(|| p.beside_load(0)));
    for (c, &n) in candidates.iter().zip(counts) {
        if n > 0 {
            rail.decaps.push(DecapGroup::new(c.part.id.clone(), n, c.mounting_h));
            if let (Some(p), Some(spot)) = (rail.placement.as_mut(), spot) {
                p.groups.push(placed_form::new_group_placement(spot));
            }
        }
    }
    out
}

/// Where a search puts new parts on rail `rail_index`: `None` on a lumped rail (one node); on a placed rail the
/// spot the options give, else beside the load that fares worst as the rail stands (the one the verdict hangs
/// on). A spot given for a lumped rail, or one whose port would cross the plane's edge, is refused.
pub fn new_parts_spot(
    board: &Board,
    rail_index: usize,
    options: &SuggestOptions,
) -> Result<Option<[f64; 2]>, SuggestError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| SuggestError("no such rail".into()))?;
    let Some(placement) = &rail.placement else {
        return match options.spot_m {
            Some(_) => Err(SuggestError(format!(
                "rail {} is not placed (it has no plane_pair), so new parts have no spot: leave out the spot",
                rail.name
            ))),
            None => Ok(None),
        };
    };
    if let Some(spot) = options.spot_m {
        return match crate::model::spot_problem(spot, placement.plane_pair.size_m) {
            Some(why) => Err(SuggestError(why)),
            None => Ok(Some(spot)),
        };
    }
    let worst = crate::analysis::placed::analyze_placed(board, rail_index, &AnalysisOptions::default())
        .map_or(0, |a| a.worst_load);
    Ok(placement.beside_load(worst))
}

/// Limits and choices of a search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SuggestOptions {
    /// What to minimise.
    pub objective: Objective,
    /// Most parts added in all.
    pub max_total: u32,
    /// Most parts of one candidate.
    pub max_per_part: u32,
    /// Most distinct parts on the rail after the mix (the kept groups' parts count).
    pub max_kinds: u32,
    /// Added to the cost objective for each part the mix brings that the board does not use yet (a reel, a feeder,
    /// a BOM line). Parts the board already uses on any rail are existing lines and cost nothing more.
    pub line_cost: f64,
    /// Every option's worst |Z| is at least this far under target, dB.
    pub margin_db: f64,
    /// The corner every option is judged in.
    pub corner: Corner,
    /// Every option must also keep the step droop within the allowed band (voltage × ripple).
    pub droop: bool,
    /// How many options to return.
    pub options: usize,
    /// Keep the rail's existing groups in place (else they are replaced by the mix).
    pub keep_existing: bool,
    /// Grid points over the band used while searching.
    pub grid_points: usize,
    /// On a placed rail, where the new parts go, m (`None`: beside the load that fares worst). Refused on a
    /// lumped rail.
    pub spot_m: Option<[f64; 2]>,
}

impl Default for SuggestOptions {
    fn default() -> Self {
        SuggestOptions {
            objective: Objective::Cost,
            max_total: 200,
            max_per_part: 50,
            max_kinds: 4,
            line_cost: 0.0,
            margin_db: DEFAULT_MARGIN_DB,
            corner: VERDICT_CORNER,
            droop: false,
            options: 5,
            keep_existing: false,
            grid_points: 300,
            spot_m: None,
        }
    }
}

impl SuggestOptions {
    /// Each setting inside its range, or a message naming the setting, its value and the range.
    pub fn check(&self) -> Result<(), SuggestError> {
        let bad = |what: &str, value: String, range: String| {
            Err(SuggestError(format!("{what} is {value}; it must be {range}")))
        };
        if !(1..=ranges::MAX_TOTAL).contains(&self.max_total) {
            return bad("the most parts in all", self.max_total.to_string(), format!("1 to {}", ranges::MAX_TOTAL));
        }
        if !(1..=ranges::MAX_PER_PART).contains(&self.max_per_part) {
            return bad(
                "the most of one part",
                self.max_per_part.to_string(),
                format!("1 to {}", ranges::MAX_PER_PART),
            );
        }
        if !(1..=ranges::MAX_KINDS).contains(&self.max_kinds) {
            return bad("the most kinds of part", self.max_kinds.to_string(), format!("1 to {}", ranges::MAX_KINDS));
        }
        if !(1..=ranges::OPTIONS).contains(&self.options) {
            return bad("the number of options", self.options.to_string(), format!("1 to {}", ranges::OPTIONS));
        }
        if !(0.0..=ranges::MARGIN_DB).contains(&self.margin_db) {
            return bad("the margin", format!("{} dB", self.margin_db), format!("0 to {} dB", ranges::MARGIN_DB));
        }
        if !(0.0..=ranges::LINE_COST).contains(&self.line_cost) {
            return bad("the cost per line item", self.line_cost.to_string(), format!("0 to {}", ranges::LINE_COST));
        }
        if !(3..=ranges::GRID_POINTS).contains(&self.grid_points) {
            return bad("the grid", self.grid_points.to_string(), format!("3 to {} points", ranges::GRID_POINTS));
        }
        Ok(())
    }
}

/// The other corner shown beside the judged one.
pub fn other_corner(corner: Corner) -> Corner {
    if corner == Corner::Worst { VERDICT_CORNER } else { Corner::Worst }
}

/// A mix's figures by the full engine in one corner.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CornerFigures {
    /// The corner.
    pub corner: Corner,
    /// Worst |Z| over the band, Ω.
    pub worst_ohm: f64,
    /// Where, Hz.
    pub worst_hz: f64,
    /// target / worst, dB.
    pub margin_db: f64,
    /// True when the worst |Z| is at or below target.
    pub meets_target: bool,
}

/// A mix's step droop by the droop engine (in the check's corner).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DroopFigures {
    /// The step's droop, V.
    pub droop_v: f64,
    /// The allowed droop, V.
    pub allowed_v: f64,
    /// True when the droop is within the allowed band.
    pub meets: bool,
}

/// One suggested mix.
#[derive(Debug, Clone, PartialEq)]
pub struct MixOption {
    /// Count per candidate, in the candidates' order.
    pub counts: Vec<u32>,
    /// The objective: cost (with the line items' cost), count or area.
    pub objective: f64,
    /// Total cost of the parts added; `None` when a part of the mix gives no cost.
    pub cost: Option<f64>,
    /// Parts of the mix the board does not use yet (new line items).
    pub new_lines: u32,
    /// Distinct parts on the rail with the mix (kept groups included).
    pub kinds: u32,
    /// Number of parts added.
    pub count: u32,
    /// Board area of the parts added, m²; `None` when a part of the mix gives no area.
    pub area_m2: Option<f64>,
    /// The engine's figures in the corner the search judged.
    pub judged: CornerFigures,
    /// The engine's figures in the other corner.
    pub other: CornerFigures,
    /// The step droop, when asked for.
    pub droop: Option<DroopFigures>,
    /// True when the mix meets target with the margin in the judged corner (and the droop when asked): only such
    /// a mix is offered to apply.
    pub accepted: bool,
}

/// Why fewer options than asked came back.
#[derive(Debug, Clone, PartialEq)]
pub struct Shortfall {
    /// Options asked for.
    pub asked: usize,
    /// Options found.
    pub found: usize,
    /// Mixes dropped as within [`DISTINCT_TOLERANCE`] of a cheaper option.
    pub similar: usize,
    /// Mixes dropped for their step droop.
    pub droop_failed: usize,
    /// True when the checks stopped at their budget with mixes left unchecked.
    pub budget_reached: bool,
}

impl Shortfall {
    /// The reasons in plain words.
    pub fn words(&self) -> String {
        let mut why = Vec::new();
        if self.similar > 0 {
            why.push(format!(
                "{} within {:.0} % of a cheaper option's figures (|Z| in both corners, count, area)",
                plural(self.similar as u64, "other mix was", "other mixes were"),
                DISTINCT_TOLERANCE * 100.0
            ));
        }
        if self.droop_failed > 0 {
            why.push(format!("{} the step droop", plural(self.droop_failed as u64, "mix misses", "mixes miss")));
        }
        why.push(if self.budget_reached {
            "the checks stopped at their budget".into()
        } else {
            "every other mix found is worse in every respect (objective, count, area, |Z|) than one shown".into()
        });
        format!(
            "{} of the {} asked for: {}.",
            plural(self.found as u64, "option", "options"),
            self.asked,
            why.join("; ")
        )
    }
}

/// The optimizer's answer.
#[derive(Debug, Clone, PartialEq)]
pub struct Suggestion {
    /// The options, best first by the objective; every one accepted.
    pub options: Vec<MixOption>,
    /// When no option qualifies: the closest mix found, to look at, never to apply.
    pub closest: Option<MixOption>,
    /// When no option qualifies: what stops it.
    pub blockers: Vec<Blocker>,
    /// When fewer options than asked came back (but some did): why.
    pub shortfall: Option<Shortfall>,
    /// The target impedance, Ω.
    pub target_ohm: f64,
    /// The worst |Z| allowed: target less the margin, Ω.
    pub required_ohm: f64,
    /// True when every combination was tried.
    pub exhaustive: bool,
    /// When the candidate list was cut (see [`SHORTLIST_SIZE`]): how many were searched.
    pub shortlisted: Option<usize>,
    /// Mixes judged.
    pub evaluations: usize,
    /// On a placed rail, where the new parts go, m (every option is judged, and applied, with them there).
    pub spot_m: Option<[f64; 2]>,
}

/// Why a search cannot start.
#[derive(Debug, Clone, PartialEq)]
pub struct SuggestError(pub String);

impl std::fmt::Display for SuggestError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.0)
    }
}

/// Words for a mix's area: "12.3 mm²", or "no area given".
pub fn area_words(area_m2: Option<f64>) -> String {
    match area_m2 {
        Some(a) => format!("area {:.1} mm²", a * 1e6),
        None => "no area given".into(),
    }
}

/// Words for a mix's cost: "cost 1.234 (2 new line items)", or "no cost given".
pub fn cost_words(o: &MixOption) -> String {
    let lines = match o.new_lines {
        0 => String::new(),
        n => format!(" ({})", plural(n as u64, "new line item", "new line items")),
    };
    match o.cost {
        Some(c) => format!("cost {c:.3}{lines}"),
        None => format!("no cost given{lines}"),
    }
}

/// One corner's figures in words: "worst |Z| 4.1 mΩ at 12.0 MHz, margin +1.3 dB".
pub fn corner_words(c: &CornerFigures) -> String {
    format!(
        "worst |Z| {} at {}, margin {:+.1} dB",
        format(c.worst_ohm, Unit::Ohm),
        format(c.worst_hz, Unit::Hertz),
        c.margin_db
    )
}

/// Where the new parts go, in words: "New parts go at (31.0 mm, 20.0 mm)." (empty on a lumped rail).
pub fn spot_words(rail: &Rail, s: &Suggestion) -> String {
    let Some([x, y]) = s.spot_m else { return String::new() };
    let beside = rail.placement.as_ref().and_then(|p| {
        (0..rail.loads.len())
            .find(|&k| p.beside_load(k) == Some([x, y]))
            .map(|k| format!(", beside {}", rail.loads[k].name))
    });
    format!(
        "New parts go at ({:.1} mm, {:.1} mm){}; every option is judged at the loads through the plane pair.",
        x * 1e3,
        y * 1e3,
        beside.unwrap_or_default()
    )
}

/// Search mixes of `candidates` for rail `rail_index` of a validated board.
pub fn suggest(
    board: &Board,
    rail_index: usize,
    candidates: &[Candidate],
    options: &SuggestOptions,
) -> Result<Suggestion, SuggestError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| SuggestError("no such rail".into()))?;
    options.check()?;
    if rail.band().is_none() {
        return Err(SuggestError("the rail has no band to meet target over: give band_hz, or loads".into()));
    }
    if candidates.is_empty() {
        return Err(SuggestError("no candidate parts to choose from".into()));
    }
    if candidates.len() > MAX_CANDIDATES {
        return Err(SuggestError(format!(
            "{} candidate parts; a search takes at most {MAX_CANDIDATES}: name fewer",
            candidates.len()
        )));
    }
    for c in candidates {
        // The same range a group's mounting inductance has on a board.
        if let Some(why) = crate::model::ranges::INDUCTANCE.problem(c.mounting_h) {
            return Err(SuggestError(format!("mounting inductance for part {}: {why}", c.part.id)));
        }
        if let Some(why) = c.part.unusable() {
            return Err(SuggestError(format!("part {} cannot be used: {why}", c.part.id)));
        }
    }
    if options.droop && rail.source.is_none() {
        return Err(SuggestError(
            "the rail has no source, so its step droop cannot be computed: give it one, or leave out the droop".into(),
        ));
    }
    let value = |c: &Candidate| -> Result<f64, SuggestError> {
        match options.objective {
            Objective::Count => Ok(1.0),
            Objective::Cost => c.part.unit_cost.ok_or_else(|| {
                SuggestError(format!("part {} has no unit_cost: give one, or minimise the count", c.part.id))
            }),
            Objective::Area => c.part.area_m2.ok_or_else(|| {
                SuggestError(format!("part {} has no area_m2: give one, or minimise the count", c.part.id))
            }),
        }
    };
    let unit = candidates.iter().map(value).collect::<Result<Vec<_>, _>>()?;
    let setting = Setting::of(board, rail, options);
    let kept = shortlist::shortlist(board, rail, candidates, &unit, options.corner);
    let sub: Vec<Candidate> = kept.iter().map(|&i| candidates[i].clone()).collect();
    let spot_m = new_parts_spot(board, rail_index, options)?;
    let eval = MixEvaluator::in_corner(
        board,
        rail_index,
        &sub,
        options.keep_existing,
        options.grid_points,
        options.corner,
        spot_m,
    );
    let problem = Problem {
        eval: &eval,
        unit: kept.iter().map(|&i| unit[i]).collect(),
        line: sub.iter().map(|c| setting.line_cost(&c.part.id)).collect(),
        slot: sub.iter().map(|c| setting.slot(&c.part.id)).collect(),
        area: sub.iter().map(|c| c.part.area_m2.unwrap_or(0.0)).collect(),
        max_total: options.max_total,
        max_per_part: options.max_per_part,
        kinds_free: setting.kinds_free,
    };
    let exhaustive = combinations(&problem.slot, options.max_per_part, setting.kinds_free) <= EXHAUSTIVE_LIMIT;
    let required = eval.target() * 10f64.powf(-options.margin_db / 20.0);
    let check = Checker { board, rail_index, sub: &sub, options, setting: &setting, required, spot_m };

    let mut tighten = 1.0;
    let mut evaluations = 0;
    let mut found: Vec<MixOption> = Vec::new();
    let mut tally = Tally::default();
    let mut closest = None;
    // Search, then re-check the best options with the full engine; if the grid let a mix through that the
    // engine refuses (a sharp peak between grid points), tighten the grid's margin and search again.
    for round in 0..4 {
        let mut search = Search::new(&problem, required * tighten);
        if exhaustive {
            search.exhaustive();
        } else {
            search.heuristic();
        }
        evaluations += search.evaluations;
        closest = search.closest.take();
        let front = distinct_on_grid(pareto(std::mem::take(&mut search.feasible)));
        (found, tally) = check.walk(&front)?;
        match tally.refused_ratio {
            Some(ratio) if found.len() < options.options && round < 3 => tighten = tighten.min(ratio) * 0.995,
            _ => break,
        }
    }
    let shortfall = (!found.is_empty() && found.len() < options.options).then_some(Shortfall {
        asked: options.options,
        found: found.len(),
        similar: tally.similar,
        droop_failed: tally.droop_failed,
        budget_reached: tally.budget_reached,
    });
    let mut blockers = Vec::new();
    let mut closest_option = None;
    if found.is_empty() {
        // The closest the cost-minded search came, or a fill that only lowers |Z|, whichever gets lower.
        let mut lowest = Search::new(&problem, required * tighten);
        lowest.lowest();
        evaluations += lowest.evaluations;
        let closest = match (closest, lowest.closest) {
            (Some(a), Some(b)) => Some(if b.worst < a.worst { b } else { a }),
            (a, b) => a.or(b),
        };
        closest_option = match tally.best_droop_mix.take() {
            // When mixes met the impedance requirement and missed the droop, the closest is the one that droops
            // least.
            Some(m) => Some(m),
            None => closest.as_ref().map(|j| check.option(&j.counts)).transpose()?.map(|(o, _)| o),
        };
        blockers.extend(limits::package_floor(rail, &eval, required));
        blockers.extend(limits::planes_floor(rail, &eval, required, spot_m));
        let refs: Vec<&Candidate> = sub.iter().collect();
        blockers.extend(limits::count_floor(
            &eval,
            &refs,
            &problem.slot,
            options.max_total,
            options.max_per_part,
            setting.kinds_free,
            required,
        ));
        if blockers.is_empty() {
            // No bound proves it: say what the search found (each that applies).
            if let Some(best) = tally.best_droop.filter(|_| tally.droop_failed > 0) {
                blockers.push(Blocker::Droop {
                    checked: tally.droop_failed,
                    best_droop_v: best.droop_v,
                    allowed_v: best.allowed_v,
                });
            }
            // The margin and the kinds limit are reasons only when no mix met the impedance requirement at all.
            if tally.engine_passed == 0 {
                let margin = closest_option.as_ref().map(|o| o.judged.margin_db);
                if let Some(m) = margin.filter(|m| *m >= 0.0 && *m < options.margin_db) {
                    blockers.push(Blocker::Margin { margin_db: options.margin_db, best_margin_db: m });
                }
                if let Some(needed) = kinds_needed(&problem, required * tighten, &setting) {
                    blockers.push(Blocker::Kinds { max_kinds: options.max_kinds, needed_kinds: needed });
                }
            }
            if blockers.is_empty() {
                blockers.push(Blocker::NotFound { max_total: options.max_total, max_per_part: options.max_per_part });
            }
        }
    }
    // Counts over the whole candidate list, in its order.
    let widen = |mut o: MixOption| {
        let mut counts = vec![0; candidates.len()];
        for (&i, &n) in kept.iter().zip(&o.counts) {
            counts[i] = n;
        }
        o.counts = counts;
        o
    };
    Ok(Suggestion {
        options: found.into_iter().map(widen).collect(),
        closest: closest_option.map(widen),
        blockers,
        shortfall,
        target_ohm: eval.target(),
        required_ohm: required,
        exhaustive: exhaustive && kept.len() == candidates.len(),
        shortlisted: (kept.len() < candidates.len()).then_some(kept.len()),
        evaluations,
        spot_m,
    })
}

/// What the board and the options say about line items and kinds.
struct Setting {
    /// Parts the board already uses on some rail: existing line items.
    existing_lines: HashSet<String>,
    /// Parts of the rail's kept groups: kinds the rail has whatever the mix.
    rail_kinds: HashSet<String>,
    /// Kind slots left for the mix.
    kinds_free: u32,
    /// Cost per new line item (0 unless the objective is cost).
    line_cost: f64,
}

impl Setting {
    fn of(board: &Board, rail: &Rail, options: &SuggestOptions) -> Setting {
        let existing_lines =
            board.rails.iter().flat_map(|r| r.decaps.iter()).filter(|g| g.count > 0).map(|g| g.part.clone()).collect();
        let rail_kinds: HashSet<String> = if options.keep_existing {
            rail.decaps.iter().filter(|g| g.count > 0).map(|g| g.part.clone()).collect()
        } else {
            HashSet::new()
        };
        let kinds_free = options.max_kinds.saturating_sub(rail_kinds.len() as u32);
        let line_cost = if options.objective == Objective::Cost { options.line_cost } else { 0.0 };
        Setting { existing_lines, rail_kinds, kinds_free, line_cost }
    }

    fn line_cost(&self, id: &str) -> f64 {
        if self.existing_lines.contains(id) { 0.0 } else { self.line_cost }
    }

    fn slot(&self, id: &str) -> u32 {
        u32::from(!self.rail_kinds.contains(id))
    }
}

/// What walking the candidate options found besides the options.
#[derive(Debug, Default)]
struct Tally {
    similar: usize,
    droop_failed: usize,
    best_droop: Option<DroopFigures>,
    /// The mix with that droop, with its figures.
    best_droop_mix: Option<MixOption>,
    budget_reached: bool,
    /// Mixes the engine found meeting the impedance requirement (before the distinctness and droop rules).
    engine_passed: usize,
    /// The lowest ratio of grid worst to engine worst among mixes the engine refused.
    refused_ratio: Option<f64>,
}

/// Re-checks mixes with the full engine.
struct Checker<'a> {
    board: &'a Board,
    rail_index: usize,
    sub: &'a [Candidate],
    options: &'a SuggestOptions,
    setting: &'a Setting,
    required: f64,
    /// Where new parts go on a placed rail.
    spot_m: Option<[f64; 2]>,
}

impl Checker<'_> {
    /// A mix's figures by the engine in both corners (no droop yet), and the board with the mix fitted.
    fn option(&self, counts: &[u32]) -> Result<(MixOption, Board), SuggestError> {
        let fitted = apply_mix(self.board, self.rail_index, self.sub, counts, self.options.keep_existing, self.spot_m);
        let figures = |corner: Corner| -> Result<CornerFigures, SuggestError> {
            let a = analyze_rail(&fitted, self.rail_index, &AnalysisOptions { corner, ..Default::default() })
                .ok_or_else(|| SuggestError("the rail could not be analysed with the mix".into()))?;
            Ok(CornerFigures {
                corner,
                worst_ohm: a.worst_ohm,
                worst_hz: a.worst_hz,
                margin_db: a.margin_db,
                meets_target: a.meets_target,
            })
        };
        let used = || self.sub.iter().zip(counts).filter(|(_, n)| **n > 0);
        let sum = |f: &dyn Fn(&Part) -> Option<f64>| -> Option<f64> {
            used().map(|(c, &n)| f(&c.part).map(|x| x * n as f64)).sum::<Option<f64>>()
        };
        let new_lines = used().filter(|(c, _)| !self.setting.existing_lines.contains(&c.part.id)).count() as u32;
        let added_kinds: u32 = used().map(|(c, _)| self.setting.slot(&c.part.id)).sum();
        let objective = used()
            .map(|(c, &n)| {
                let unit = match self.options.objective {
                    Objective::Count => 1.0,
                    Objective::Cost => c.part.unit_cost.unwrap_or(0.0),
                    Objective::Area => c.part.area_m2.unwrap_or(0.0),
                };
                unit * n as f64 + self.setting.line_cost(&c.part.id)
            })
            .sum();
        let judged = figures(self.options.corner)?;
        let option = MixOption {
            counts: counts.to_vec(),
            objective,
            cost: sum(&|p| p.unit_cost),
            new_lines,
            kinds: self.setting.rail_kinds.len() as u32 + added_kinds,
            count: counts.iter().sum(),
            area_m2: sum(&|p| p.area_m2),
            judged,
            other: figures(other_corner(self.options.corner))?,
            droop: None,
            accepted: false,
        };
        Ok((option, fitted))
    }

    /// Walk the grid's options by objective: re-check each with the engine, drop those within the tolerance of a
    /// kept one, check the droop when asked, until enough are kept.
    fn walk(&self, front: &[Judged]) -> Result<(Vec<MixOption>, Tally), SuggestError> {
        let mut kept: Vec<MixOption> = Vec::new();
        let mut tally = Tally::default();
        let mut droops = 0;
        for (n, j) in front.iter().enumerate() {
            if n >= ENGINE_CHECKS || (self.options.droop && droops >= DROOP_CHECKS) {
                tally.budget_reached = true;
                break;
            }
            let (mut o, fitted) = self.option(&j.counts)?;
            if o.judged.worst_ohm > self.required * (1.0 + 1e-12) {
                let ratio = j.worst / o.judged.worst_ohm;
                tally.refused_ratio = Some(tally.refused_ratio.map_or(ratio, |r: f64| r.min(ratio)));
                continue;
            }
            tally.engine_passed += 1;
            if kept.iter().any(|k| similar(&o, k)) {
                tally.similar += 1;
                continue;
            }
            if self.options.droop {
                droops += 1;
                let d = step_droop(&fitted, self.rail_index)?;
                o.droop = Some(d);
                if !d.meets {
                    tally.droop_failed += 1;
                    if tally.best_droop.is_none_or(|b| d.droop_v < b.droop_v) {
                        tally.best_droop = Some(d);
                        tally.best_droop_mix = Some(o.clone());
                    }
                    continue;
                }
            }
            o.accepted = true;
            kept.push(o);
            if kept.len() >= self.options.options {
                break;
            }
        }
        Ok((kept, tally))
    }
}

/// The step droop of a board with a mix fitted, by the droop engine as it is: the one place a search asks for it.
fn step_droop(board: &Board, rail_index: usize) -> Result<DroopFigures, SuggestError> {
    let d = droop(board, rail_index, &DroopOptions::default()).map_err(|e| SuggestError(e.to_string()))?;
    Ok(DroopFigures { droop_v: d.droop_v, allowed_v: d.allowed_v, meets: d.meets })
}

/// True when `b` is no better than the cheaper `a` by more than [`DISTINCT_TOLERANCE`] in any figure: worst |Z| in
/// both corners, area, and it has no fewer parts.
fn similar(b: &MixOption, a: &MixOption) -> bool {
    let no_better = |x: f64, y: f64| x >= y * (1.0 - DISTINCT_TOLERANCE);
    no_better(b.judged.worst_ohm, a.judged.worst_ohm)
        && no_better(b.other.worst_ohm, a.other.worst_ohm)
        && b.count >= a.count
        && match (b.area_m2, a.area_m2) {
            (Some(x), Some(y)) => no_better(x, y),
            _ => true,
        }
}

/// The grid's options less those within the tolerance of a cheaper one on the grid's figures (the engine applies
/// the full rule later); saves engine checks of near-copies.
fn distinct_on_grid(front: Vec<Judged>) -> Vec<Judged> {
    let mut out: Vec<Judged> = Vec::new();
    for j in front {
        let no_better = |x: f64, y: f64| x >= y * (1.0 - DISTINCT_TOLERANCE);
        if !out.iter().any(|k| no_better(j.worst, k.worst) && j.count >= k.count && no_better(j.area, k.area)) {
            out.push(j);
        }
    }
    out
}

/// With the kinds limit lifted, the kinds of the cheapest feasible mix the heuristic finds (`None` when the limit
/// does not bind or nothing is found even so).
fn kinds_needed(problem: &Problem, limit: f64, setting: &Setting) -> Option<u32> {
    let all = problem.slot.iter().sum::<u32>();
    if all <= problem.kinds_free {
        return None;
    }
    let open = Problem {
        eval: problem.eval,
        unit: problem.unit.clone(),
        line: problem.line.clone(),
        slot: problem.slot.clone(),
        area: problem.area.clone(),
        max_total: problem.max_total,
        max_per_part: problem.max_per_part,
        kinds_free: all,
    };
    let mut search = Search::new(&open, limit);
    search.heuristic();
    let best = pareto(search.feasible).into_iter().next()?;
    let added: u32 = best.counts.iter().zip(&problem.slot).filter(|(n, _)| **n > 0).map(|(_, s)| s).sum();
    Some(setting.rail_kinds.len() as u32 + added)
}
