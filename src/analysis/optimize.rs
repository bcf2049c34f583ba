//! Suggest capacitor mixes: counts of candidate parts that meet a rail's target over its band at the least cost
//! (or count, or board area).
//!
//! How it works:
//! - Feasibility is judged on a fixed log grid over the band (plus every candidate's self-resonance inside it).
//!   Each candidate's admittance per part is computed once; a mix's admittance is the fixed part of the rail
//!   (source, plane, kept groups) plus Σ countᵢ·yᵢ, so judging a mix costs one multiply-add per candidate and
//!   grid point, then the view at the die when the rail gives a package.
//! - Small problems (every combination of counts up to a few thousand) are searched exhaustively, so the answer
//!   is exact with respect to the grid. Larger ones use a greedy fill (the part that most reduces the excess over
//!   target per unit of the objective), then pruning, then improving moves (remove one; swap one for another;
//!   swap two of one for one of another) until none helps, restarted from perturbed solutions.
//! - Every feasible mix seen is kept; the options are the Pareto set over (objective, count, area, worst |Z|)
//!   sorted by the objective. Each option is re-checked with [`analyze_rail`], the engine `check` uses, with its
//!   refined peaks; an option that fails there is dropped (and the search's margin is tightened so the next
//!   candidates pass).

use super::network::{Network, View};
use super::rail::{AnalysisOptions, analyze_rail, target_impedance};
use crate::model::{Board, DecapGroup, Part, Rail};
use crate::physics::SeriesRlc;
use crate::physics::mounting::group_mounting_h;
use num_complex::Complex64;
use std::collections::HashSet;

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

/// Limits and choices of a search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SuggestOptions {
    /// What to minimise.
    pub objective: Objective,
    /// Most parts added in all.
    pub max_total: u32,
    /// Most parts of one candidate.
    pub max_per_part: u32,
    /// How many options to return.
    pub options: usize,
    /// Keep the rail's existing groups in place (else they are replaced by the mix).
    pub keep_existing: bool,
    /// Grid points over the band used while searching.
    pub grid_points: usize,
}

impl Default for SuggestOptions {
    fn default() -> Self {
        SuggestOptions {
            objective: Objective::Cost,
            max_total: 200,
            max_per_part: 50,
            options: 5,
            keep_existing: false,
            grid_points: 300,
        }
    }
}

/// One suggested mix.
#[derive(Debug, Clone, PartialEq)]
pub struct MixOption {
    /// Count per candidate, in the candidates' order.
    pub counts: Vec<u32>,
    /// Total cost of the parts added (0 for parts without a cost).
    pub cost: f64,
    /// Number of parts added.
    pub count: u32,
    /// Board area of the parts added, m² (0 for parts without an area).
    pub area_m2: f64,
    /// Worst |Z| over the band by the full engine, Ω.
    pub worst_ohm: f64,
    /// Where, Hz.
    pub worst_hz: f64,
    /// target / worst, in dB.
    pub margin_db: f64,
    /// True when the full engine finds the rail meeting target with this mix.
    pub meets_target: bool,
}

/// The optimizer's answer.
#[derive(Debug, Clone, PartialEq)]
pub struct Suggestion {
    /// The options, best first by the objective; all meet target, or (when none can) the closest one.
    pub options: Vec<MixOption>,
    /// True when every combination was tried.
    pub exhaustive: bool,
    /// When no mix meets target: what limits it, in plain words.
    pub limit: Option<String>,
    /// Mixes judged.
    pub evaluations: usize,
}

/// Why a search cannot start.
#[derive(Debug, Clone, PartialEq)]
pub struct SuggestError(pub String);

impl std::fmt::Display for SuggestError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.0)
    }
}

/// Judges mixes fast on a fixed grid: the rail's fixed admittance plus counts times each candidate's.
pub struct MixEvaluator {
    /// Grid frequencies, Hz.
    pub freq_hz: Vec<f64>,
    fixed_y: Vec<Complex64>,
    unit_y: Vec<Vec<Complex64>>,
    /// Package and die impedances per grid point when the verdict is at the die.
    die: Option<(Vec<Complex64>, Vec<Option<Complex64>>)>,
    target: f64,
}

impl MixEvaluator {
    /// Prepare the grid for a rail and candidates.
    pub fn new(board: &Board, rail_index: usize, candidates: &[Candidate], keep_existing: bool, points: usize) -> Self {
        let rail = &board.rails[rail_index];
        let mut fixed_rail = rail.clone();
        if !keep_existing {
            fixed_rail.decaps.clear();
        }
        let network = Network::of_rail(board, &fixed_rail);
        let band = rail.band_hz_or_default();
        let mut freq_hz = super::grid::log_grid(band[0], band[1], points.max(3));
        let ones: Vec<SeriesRlc> = candidates
            .iter()
            .map(|c| SeriesRlc {
                r_ohm: c.part.esr_ohm,
                l_h: c.part.esl_h + c.mounting_h,
                c_f: Some(c.part.capacitance_f),
            })
            .collect();
        // Each candidate's own resonance is where adding it changes |Z| most sharply: look there too.
        freq_hz.extend(ones.iter().filter_map(|o| o.self_resonance_hz()).filter(|f| *f > band[0] && *f < band[1]));
        freq_hz.sort_by(f64::total_cmp);
        let fixed_y = freq_hz
            .iter()
            .map(|&f| network.branches.iter().map(|b| inverse(b.impedance(f))).sum::<Complex64>())
            .collect();
        let unit_y = ones.iter().map(|o| freq_hz.iter().map(|&f| inverse(o.impedance(f))).collect()).collect();
        let die = (network.verdict_view() == View::Die).then(|| {
            let pkg = freq_hz
                .iter()
                .map(|&f| network.package.as_ref().map_or(Complex64::default(), |p| p.impedance(f)))
                .collect();
            let die = freq_hz.iter().map(|&f| network.die.as_ref().map(|d| d.impedance(f))).collect();
            (pkg, die)
        });
        MixEvaluator { freq_hz, fixed_y, unit_y, die, target: target_impedance(rail) }
    }

    /// The target impedance, Ω.
    pub fn target(&self) -> f64 {
        self.target
    }

    /// |Z| over the grid for a mix, as (worst |Z|, its frequency, Σ excess over target relative to target).
    pub fn judge(&self, counts: &[u32]) -> (f64, f64, f64) {
        let (mut worst, mut worst_f, mut excess) = (0.0f64, 0.0, 0.0);
        for p in 0..self.freq_hz.len() {
            let mut y = self.fixed_y[p];
            for (i, &n) in counts.iter().enumerate() {
                if n > 0 {
                    y += self.unit_y[i][p] * n as f64;
                }
            }
            let mut z = inverse(y);
            if let Some((pkg, die)) = &self.die {
                let behind = z + pkg[p];
                z = inverse(inverse(behind) + die[p].map_or(Complex64::default(), inverse));
            }
            let m = z.norm();
            if m > worst {
                worst = m;
                worst_f = self.freq_hz[p];
            }
            excess += (m / self.target - 1.0).max(0.0);
        }
        (worst, worst_f, excess)
    }
}

/// 1/z, with a zero impedance giving an infinite admittance.
fn inverse(z: Complex64) -> Complex64 {
    let d = z.norm_sqr();
    if d == 0.0 { Complex64::new(f64::INFINITY, 0.0) } else { Complex64::new(z.re / d, -z.im / d) }
}

/// Combinations at or below which the search is exhaustive.
const EXHAUSTIVE_LIMIT: u64 = 50_000;

/// A mix's figures on the grid.
#[derive(Debug, Clone)]
struct Judged {
    counts: Vec<u32>,
    objective: f64,
    count: u32,
    area: f64,
    cost: f64,
    worst: f64,
    feasible: bool,
}

/// The search state: the evaluator, the candidates' costs, and every feasible mix seen.
struct Search<'a> {
    eval: &'a MixEvaluator,
    unit: Vec<f64>,
    cost: Vec<f64>,
    area: Vec<f64>,
    options: SuggestOptions,
    /// Required grid worst as a fraction of target (tightened when the engine disagrees).
    margin: f64,
    seen: HashSet<Vec<u32>>,
    feasible: Vec<Judged>,
    evaluations: usize,
}

impl Search<'_> {
    fn judge(&mut self, counts: &[u32]) -> Judged {
        self.evaluations += 1;
        let (worst, _, _) = self.eval.judge(counts);
        self.figures(counts, worst)
    }

    fn figures(&self, counts: &[u32], worst: f64) -> Judged {
        let dot = |w: &[f64]| counts.iter().zip(w).map(|(&n, &x)| n as f64 * x).sum::<f64>();
        Judged {
            counts: counts.to_vec(),
            objective: dot(&self.unit),
            count: counts.iter().sum(),
            area: dot(&self.area),
            cost: dot(&self.cost),
            worst,
            feasible: worst <= self.eval.target * self.margin,
        }
    }

    fn record(&mut self, j: &Judged) {
        if j.feasible && self.seen.insert(j.counts.clone()) {
            self.feasible.push(j.clone());
        }
    }

    fn within_limits(&self, counts: &[u32]) -> bool {
        counts.iter().all(|&n| n <= self.options.max_per_part) && counts.iter().sum::<u32>() <= self.options.max_total
    }

    /// Every combination of counts.
    fn exhaustive(&mut self) {
        let k = self.unit.len();
        let mut counts = vec![0u32; k];
        loop {
            if counts.iter().sum::<u32>() <= self.options.max_total {
                let j = self.judge(&counts);
                self.record(&j);
            }
            // Next combination, like an odometer.
            let mut i = 0;
            while i < k {
                if counts[i] < self.options.max_per_part {
                    counts[i] += 1;
                    break;
                }
                counts[i] = 0;
                i += 1;
            }
            if i == k {
                break;
            }
        }
    }

    /// Fill greedily from `start` until feasible or out of room.
    fn greedy(&mut self, start: Vec<u32>) -> Judged {
        let mut counts = start;
        let mut current = self.judge(&counts);
        while !current.feasible {
            let (_, _, excess_now) = self.eval.judge(&counts);
            let mut best: Option<(f64, usize)> = None;
            for i in 0..counts.len() {
                counts[i] += 1;
                if self.within_limits(&counts) {
                    self.evaluations += 1;
                    let (worst, _, excess) = self.eval.judge(&counts);
                    let gain = (excess_now - excess) + (current.worst - worst) / self.eval.target;
                    let score = gain / self.unit[i].max(1e-12);
                    if gain > 0.0 && best.is_none_or(|(s, _)| score > s) {
                        best = Some((score, i));
                    }
                }
                counts[i] -= 1;
            }
            match best {
                Some((_, i)) => {
                    counts[i] += 1;
                    current = self.judge(&counts);
                }
                None => break,
            }
        }
        self.record(&current);
        current
    }

    /// Improve a feasible mix by removals and swaps until no move lowers the objective.
    fn improve(&mut self, mut best: Judged) -> Judged {
        let k = best.counts.len();
        loop {
            let mut moved = false;
            // Moves, cheapest idea first: drop one; swap one for one; swap two for one.
            let mut moves: Vec<Vec<(usize, i64)>> = Vec::new();
            for i in 0..k {
                moves.push(vec![(i, -1)]);
                for j in 0..k {
                    if i != j {
                        moves.push(vec![(i, -1), (j, 1)]);
                        moves.push(vec![(i, -2), (j, 1)]);
                    }
                }
            }
            for m in moves {
                let mut counts = best.counts.clone();
                let ok = m.iter().all(|&(i, d)| {
                    let n = counts[i] as i64 + d;
                    counts[i] = n.max(0) as u32;
                    n >= 0
                });
                if !ok || !self.within_limits(&counts) {
                    continue;
                }
                let delta: f64 = m.iter().map(|&(i, d)| d as f64 * self.unit[i]).sum();
                if delta >= -1e-15 {
                    continue;
                }
                let j = self.judge(&counts);
                self.record(&j);
                if j.feasible {
                    best = j;
                    moved = true;
                    break;
                }
            }
            if !moved {
                return best;
            }
        }
    }

    /// Greedy, improve, then restarts from perturbed copies of the best.
    fn heuristic(&mut self, start: Vec<u32>) {
        let first = self.greedy(start.clone());
        if !first.feasible {
            return;
        }
        let mut best = self.improve(first);
        let mut rng = 0x9e37_79b9_7f4a_7c15u64;
        for _ in 0..40 {
            let mut counts = best.counts.clone();
            // Take out a few parts at random, and refill greedily.
            for _ in 0..3 {
                rng = rng.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                let i = (rng >> 33) as usize % counts.len();
                counts[i] = counts[i].saturating_sub(1 + (rng >> 60) as u32 % 3);
            }
            for (c, s) in counts.iter_mut().zip(&start) {
                *c = (*c).max(*s);
            }
            let refilled = self.greedy(counts);
            if refilled.feasible {
                let improved = self.improve(refilled);
                if improved.objective < best.objective - 1e-15 {
                    best = improved;
                }
            }
        }
    }
}

/// The options that are not worse in every respect than another: (objective, count, area, worst |Z|).
fn pareto(mut mixes: Vec<Judged>) -> Vec<Judged> {
    mixes.sort_by(|a, b| a.objective.total_cmp(&b.objective).then(a.worst.total_cmp(&b.worst)));
    let mut front: Vec<Judged> = Vec::new();
    for m in mixes {
        let dominated = front
            .iter()
            .any(|f| f.objective <= m.objective && f.count <= m.count && f.area <= m.area && f.worst <= m.worst);
        if !dominated {
            front.push(m);
        }
    }
    front
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
pub fn apply_mix(
    board: &Board,
    rail_index: usize,
    candidates: &[Candidate],
    counts: &[u32],
    keep_existing: bool,
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
    }
    for (c, &n) in candidates.iter().zip(counts) {
        if n > 0 {
            rail.decaps.push(DecapGroup::new(c.part.id.clone(), n, c.mounting_h));
        }
    }
    out
}

/// Search mixes of `candidates` for rail `rail_index` of a validated board.
pub fn suggest(
    board: &Board,
    rail_index: usize,
    candidates: &[Candidate],
    options: &SuggestOptions,
) -> Result<Suggestion, SuggestError> {
    if rail_index >= board.rails.len() {
        return Err(SuggestError("no such rail".into()));
    }
    if candidates.is_empty() {
        return Err(SuggestError("no candidate parts to choose from".into()));
    }
    let value = |c: &Candidate, what: Objective| -> Result<f64, SuggestError> {
        match what {
            Objective::Count => Ok(1.0),
            Objective::Cost => c.part.unit_cost.ok_or_else(|| {
                SuggestError(format!("part {} has no unit_cost: give one, or use --objective count", c.part.id))
            }),
            Objective::Area => c.part.area_m2.ok_or_else(|| {
                SuggestError(format!("part {} has no area_m2: give one, or use --objective count", c.part.id))
            }),
        }
    };
    let unit = candidates.iter().map(|c| value(c, options.objective)).collect::<Result<Vec<_>, _>>()?;
    let eval = MixEvaluator::new(board, rail_index, candidates, options.keep_existing, options.grid_points);
    let mut search = Search {
        eval: &eval,
        unit,
        cost: candidates.iter().map(|c| c.part.unit_cost.unwrap_or(0.0)).collect(),
        area: candidates.iter().map(|c| c.part.area_m2.unwrap_or(0.0)).collect(),
        options: *options,
        margin: 1.0,
        seen: HashSet::new(),
        feasible: Vec::new(),
        evaluations: 0,
    };
    let combinations = (options.max_per_part as u64 + 1).checked_pow(candidates.len() as u32);
    let exhaustive = combinations.is_some_and(|c| c <= EXHAUSTIVE_LIMIT);
    let start = vec![0u32; candidates.len()];
    let mut verified: Vec<MixOption> = Vec::new();
    // Search, then re-check the best options with the full engine; if the grid let a mix through that the
    // engine refuses (a sharp peak between grid points), tighten the margin and search again.
    for _round in 0..4 {
        if exhaustive {
            search.exhaustive();
        } else {
            search.heuristic(start.clone());
        }
        let front =
            pareto(search.feasible.iter().filter(|j| j.worst <= eval.target * search.margin).cloned().collect());
        let mut refused = None;
        for j in front.iter().take(options.options.max(1) * 3) {
            let option = check_mix(board, rail_index, candidates, j, options.keep_existing);
            if option.meets_target {
                verified.push(option);
            } else {
                refused = Some(j.worst / eval.target);
            }
            if verified.len() >= options.options.max(1) {
                break;
            }
        }
        match refused {
            Some(ratio) if verified.len() < options.options.max(1) => {
                search.margin = search.margin.min(ratio) * 0.995;
                verified.clear();
            }
            _ => break,
        }
    }
    verified.truncate(options.options.max(1));
    let limit = if verified.is_empty() { Some(diagnose(&mut search, board, rail_index)) } else { None };
    if verified.is_empty() {
        // The closest we can get: every candidate at its bound, for the user to see how far off it is.
        let all = closest_mix(&search);
        let j = search.figures(&all, eval.judge(&all).0);
        verified.push(check_mix(board, rail_index, candidates, &j, options.keep_existing));
    }
    Ok(Suggestion { options: verified, exhaustive, limit, evaluations: search.evaluations })
}

/// The mix with as many parts as the bounds allow, shared evenly between the candidates.
fn closest_mix(search: &Search) -> Vec<u32> {
    let k = search.unit.len() as u32;
    let each = search.options.max_per_part.min(search.options.max_total / k.max(1));
    let mut counts = vec![each; k as usize];
    let mut left = search.options.max_total - each * k;
    for c in counts.iter_mut() {
        let extra = (search.options.max_per_part - *c).min(left);
        *c += extra;
        left -= extra;
    }
    counts
}

/// Full-engine figures of a mix.
fn check_mix(board: &Board, rail_index: usize, candidates: &[Candidate], j: &Judged, keep: bool) -> MixOption {
    let fitted = apply_mix(board, rail_index, candidates, &j.counts, keep);
    let a = analyze_rail(&fitted, rail_index, &AnalysisOptions::default());
    let (worst_ohm, worst_hz, margin_db, meets_target) =
        a.map_or((f64::NAN, f64::NAN, f64::NAN, false), |a| (a.worst_ohm, a.worst_hz, a.margin_db, a.meets_target));
    MixOption {
        counts: j.counts.clone(),
        cost: j.cost,
        count: j.count,
        area_m2: j.area,
        worst_ohm,
        worst_hz,
        margin_db,
        meets_target,
    }
}

/// Why no mix meets target: with every candidate at its bound, where is |Z| still too high?
fn diagnose(search: &mut Search, board: &Board, rail_index: usize) -> String {
    let rail = &board.rails[rail_index];
    let band = rail.band_hz_or_default();
    let all = closest_mix(search);
    let (worst, at, _) = search.eval.judge(&all);
    let target = search.eval.target;
    let top = at >= band[1] * 0.5;
    let bound = format!(
        "with {} parts (at most {} of each), |Z| still reaches {:.3e} Ω at {:.3e} Hz against a target of {:.3e} Ω",
        all.iter().sum::<u32>(),
        search.options.max_per_part,
        worst,
        at,
        target
    );
    if top {
        format!(
            "{bound}: near the band's upper edge ({:.3e} Hz) the parts' ESL plus mounting inductance sets a floor \
             (ω·L/N) that more parts lower only slowly; cut the mounting inductance, use lower-inductance parts, \
             lower the band's upper edge, or rely on the package and die",
            band[1]
        )
    } else {
        format!(
            "{bound}: the bound on counts limits it; allow more parts (--max-total, --max-per-part) or add candidates"
        )
    }
}
