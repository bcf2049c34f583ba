//! A rail's whole check, computed once: the verdict (its view and corner), the other view and corners, the
//! capacitance each part keeps, the cautions, the findings, each group's sensitivity and, on request, the yield;
//! and the sentences that say them. `hushrail check` (text and JSON), the report and the window only render
//! this: a rule or a wording changes here and every face follows.

use super::advice::{Finding, Severity, explain};
use super::cautions::{Caution, cautions};
use super::network::View;
use super::rail::{AnalysisOptions, RailAnalysis, analyze_rail};
use super::spread::{DEFAULT_SEED, Sensitivity, YieldEstimate, sensitivity, yield_estimate};
use super::worst::SearchOptions;
use crate::model::Board;
use crate::physics::Corner;
use crate::physics::derating::{BiasSource, Derating};
use crate::units::{Unit, format};

/// What to compute besides the verdict.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CheckOptions {
    /// The corner the verdict is taken in (the typical one by default).
    pub corner: Corner,
    /// Where the verdict is seen from; `None`: at the die when the rail gives a package, else at the board.
    pub view: Option<View>,
    /// Points of the band scan.
    pub band_points: usize,
    /// A display sweep (from, to, points) to keep with the verdict's analysis.
    pub curve: Option<(f64, f64, usize)>,
    /// Keep each branch's own curve along the display sweep.
    pub branch_curves: bool,
    /// Analyse the other view too (rails with a package), in the verdict's corner.
    pub other_view: bool,
    /// Analyse the other corners too, in the verdict's view (the worst one searches the tolerance vertices).
    pub corners: bool,
    /// Each group's sensitivity to one part more or fewer.
    pub sensitivity: bool,
    /// Draw this many random boards for the yield (0: none).
    pub yield_samples: usize,
    /// The seed of those draws.
    pub seed: u64,
    /// Threads for the yield.
    pub threads: usize,
    /// How hard the worst corner searches.
    pub search: SearchOptions,
}

impl Default for CheckOptions {
    /// Everything a reviewer's check gives, without the yield.
    fn default() -> Self {
        CheckOptions {
            corner: Corner::Typical,
            view: None,
            band_points: AnalysisOptions::default().band_points,
            curve: None,
            branch_curves: false,
            other_view: true,
            corners: true,
            sensitivity: true,
            yield_samples: 0,
            seed: DEFAULT_SEED,
            threads: 2,
            search: SearchOptions::default(),
        }
    }
}

/// The capacitance one group's part keeps, corner by corner.
#[derive(Debug, Clone, PartialEq)]
pub struct Kept {
    /// Index in the rail's `decaps`.
    pub group: usize,
    /// The part's id.
    pub part: String,
    /// Its capacitance as given, F.
    pub given_f: f64,
    /// In the typical corner.
    pub typical: Option<Derating>,
    /// In the worst corner, when it was analysed (tolerance at the end the search chose).
    pub worst: Option<Derating>,
}

/// One rail, checked.
#[derive(Debug, Clone, PartialEq)]
pub struct RailCheck {
    /// The verdict's analysis: its view and corner, with the display sweep when asked for.
    pub verdict: RailAnalysis,
    /// True when the rail meets target and no caution fails it: the rail's verdict.
    pub passes: bool,
    /// The other view in the verdict's corner, when asked for and the rail has a package.
    pub other_view: Option<RailAnalysis>,
    /// The other corners in the verdict's view, in the order of [`Corner::ALL`], when asked for.
    pub corners: Vec<RailAnalysis>,
    /// The capacitance each group keeps.
    pub kept: Vec<Kept>,
    /// Cautions about the parts as fitted.
    pub cautions: Vec<Caution>,
    /// The findings: failing cautions first, then the verdict analysis's findings.
    pub findings: Vec<Finding>,
    /// Each group's sensitivity, when asked for.
    pub sensitivity: Vec<Sensitivity>,
    /// The yield, when asked for.
    pub yield_estimate: Option<YieldEstimate>,
    /// Each load's verdict on a placed rail (empty on a lumped rail, whose loads share one node).
    pub loads: Vec<super::placed::LoadVerdict>,
    /// Where the loads' edges have content up to, when a load gives a rise time.
    pub edges: Option<EdgeReach>,
}

/// How far the fastest load's edge has content (0.35/t_r, common practice) against the rail's band.
#[derive(Debug, Clone, PartialEq)]
pub struct EdgeReach {
    /// The fastest load.
    pub load: String,
    /// Its 10-90 % rise time, s.
    pub rise_s: f64,
    /// Where its edge has content up to, Hz.
    pub edge_hz: f64,
    /// The band's upper edge, Hz.
    pub band_top_hz: f64,
}

impl EdgeReach {
    /// True when the band reaches the loads' edge content (the verdict judges all of it).
    pub fn covered(&self) -> bool {
        !crate::model::reaches_past(self.edge_hz, self.band_top_hz)
    }
}

/// The fastest load's edge content against the rail's band; `None` when no load gives a rise time.
pub fn edge_reach(rail: &crate::model::Rail) -> Option<EdgeReach> {
    let (load, rise_s) =
        rail.loads.iter().filter_map(|l| l.rise_time_s.map(|t| (l, t))).min_by(|a, b| a.1.total_cmp(&b.1))?;
    Some(EdgeReach {
        load: load.name.clone(),
        rise_s,
        edge_hz: crate::model::edge_content_hz(rise_s),
        band_top_hz: rail.band_hz_or_default()[1],
    })
}

/// The finding that a band stops short of the loads' edges, in the words every face shows; `None` when it reaches.
pub fn edge_finding(e: &EdgeReach) -> Option<Finding> {
    (!e.covered()).then(|| Finding {
        severity: Severity::Note,
        range_hz: [e.band_top_hz, e.edge_hz],
        text: format!(
            "The band stops at {}, short of the loads' edges: load {}'s {} rise has content up to {} (0.35/rise, \
             common practice), which this verdict does not judge; the droop filters the load's current to the band \
             and says so.",
            format(e.band_top_hz, Unit::Hertz),
            e.load,
            format(e.rise_s, Unit::Second),
            format(e.edge_hz, Unit::Hertz),
        ),
        hint: format!(
            "Widen band_hz to {} to judge everything the edges carry, or leave band_hz out so it follows the rise \
             time; keep it if the package and die filter the rest (check them at the die).",
            format(e.edge_hz, Unit::Hertz)
        ),
    })
}

/// One load's verdict on a placed rail in words, the same on every face.
pub fn load_line(l: &super::placed::LoadVerdict, target_ohm: f64) -> String {
    let verdict = if l.meets_target { "MEETS target" } else { "MISSES target" };
    let at = match l.view {
        View::Board => "at its pins",
        View::Die => "at its die",
    };
    format!(
        "load {}: {verdict} {at}: worst effective |Z| {} at {} = {:.2}× target (margin {:+.1} dB)",
        l.name,
        crate::units::format(l.worst_ohm, crate::units::Unit::Ohm),
        crate::units::format(l.worst_hz, crate::units::Unit::Hertz),
        l.worst_ohm / target_ohm,
        l.margin_db,
    )
}

impl RailCheck {
    /// The analysis in `corner` (the verdict's, or one of the others), in the verdict's view.
    pub fn corner(&self, corner: Corner) -> Option<&RailAnalysis> {
        std::iter::once(&self.verdict).chain(&self.corners).find(|a| a.corner == corner)
    }

    /// Every corner analysed, the verdict's first.
    pub fn all_corners(&self) -> impl Iterator<Item = &RailAnalysis> {
        std::iter::once(&self.verdict).chain(&self.corners)
    }

    /// The cautions that fail the rail.
    pub fn failing_cautions(&self) -> impl Iterator<Item = &Caution> {
        self.cautions.iter().filter(|c| c.fails)
    }

    /// The rail's verdict in one line: "FAILS: …" when a caution fails it, then the figures.
    pub fn verdict_line(&self) -> String {
        let failing: Vec<&str> = self.failing_cautions().map(|c| c.part.as_str()).collect();
        if failing.is_empty() {
            summary(&self.verdict)
        } else {
            format!("FAILS: {} rated below the rail's voltage. {}", failing.join(", "), summary(&self.verdict))
        }
    }

    /// The verdict in a word: "passes" or "fails".
    pub fn word(&self) -> &'static str {
        verdict_word(self.passes)
    }
}

/// "passes" or "fails": the one word for a rail's verdict.
pub fn verdict_word(passes: bool) -> &'static str {
    if passes { "passes" } else { "fails" }
}

/// Where a rail is seen from, in words.
pub fn view_words(view: View) -> &'static str {
    match view {
        View::Die => "at the die",
        View::Board => "at the board",
    }
}

/// The figures of one analysis in a sentence: "MEETS target at the die, typical corner: worst |Z| 12.3 mΩ at
/// 4.56 MHz = 0.69× target (margin +3.2 dB)". "× target" is worst |Z| ÷ target (below 1 is headroom), the
/// inverse of the JSON's `margin_ratio`.
pub fn summary(a: &RailAnalysis) -> String {
    format!(
        "{} target {}, {} corner: worst |Z| {} at {} = {:.2}× target (margin {:+.1} dB)",
        if a.meets_target { "MEETS" } else { "MISSES" },
        view_words(a.view),
        a.corner.name(),
        format(a.worst_ohm, Unit::Ohm),
        format(a.worst_hz, Unit::Hertz),
        a.worst_ohm / a.target_ohm,
        a.margin_db,
    )
}

/// Where a part's DC-bias ratio comes from, in words.
pub fn bias_words(source: BiasSource) -> &'static str {
    match source {
        BiasSource::None => "no DC-bias loss",
        BiasSource::PartCurve => "the part's own DC-bias curve",
        BiasSource::Generic => "generic DC-bias model, typical values from memory",
    }
}

/// The capacitance each part keeps, one line per group that loses any, most lost first: "mlcc-10u-0603 ×4
/// keeps 60 % typical (the part's own DC-bias curve), 41 % worst (bias ×0.60, temperature ×0.85, tolerance
/// ×0.80)".
pub fn kept_words(check: &RailCheck) -> Vec<String> {
    let counts = &check.verdict.groups;
    let mut lines: Vec<(f64, String)> = check
        .kept
        .iter()
        .filter_map(|k| {
            let low = k.worst.as_ref().or(k.typical.as_ref())?.ratio();
            let typical = k.typical.as_ref().map_or(1.0, Derating::ratio);
            if low >= 0.999 && typical >= 0.999 {
                return None;
            }
            let count = counts.iter().find(|g| g.index == k.group).map_or(0, |g| g.count);
            let mut t = format!("{} ×{count} keeps", k.part);
            if let Some(d) = &k.typical {
                t += &format!(" {:.0} % typical ({})", d.ratio() * 100.0, bias_words(d.bias_source));
            }
            if let Some(d) = &k.worst {
                t += &format!(
                    ", {:.0} % worst (bias ×{:.2}, temperature ×{:.2}, tolerance ×{:.2})",
                    d.ratio() * 100.0,
                    d.bias,
                    d.temperature,
                    d.tolerance
                );
            }
            Some((low, t))
        })
        .collect();
    lines.sort_by(|a, b| a.0.total_cmp(&b.0));
    lines.into_iter().map(|(_, t)| t).collect()
}

/// Which way each group went at the worst vertex: "mlcc-10u-0603 ×4: C low, ESR high".
pub fn vertex_words(a: &RailAnalysis) -> Vec<String> {
    let Some(v) = &a.vertex else { return Vec::new() };
    v.groups
        .iter()
        .filter(|g| g.capacitance != super::worst::Side::Middle || g.esr != super::worst::Side::Middle)
        .filter_map(|g| {
            let info = a.groups.iter().find(|x| x.index == g.index)?;
            Some(format!("{} ×{}: C {}, ESR {}", info.part, info.count, g.capacitance.name(), g.esr.name()))
        })
        .collect()
}

/// How the worst vertex was found, in words.
/// A count of tolerance vertices in words: the number, or its size when it is past any plain figure.
fn vertex_count_words(n: f64) -> String {
    if n.is_finite() && n < 1e15 {
        format!("{n:.0}")
    } else if n.is_finite() {
        format!("about 10^{:.0}", n.log10())
    } else {
        "more than 10^308".to_string()
    }
}

pub fn search_words(a: &RailAnalysis) -> Option<String> {
    let v = a.vertex.as_ref()?;
    Some(match v.method {
        super::worst::SearchMethod::Exhaustive => {
            format!("every one of {} tolerance vertices tried", vertex_count_words(v.vertices))
        }
        super::worst::SearchMethod::BranchAndBound => {
            format!(
                "{} tolerance vertices searched by branch and bound: exact on the scan grid",
                vertex_count_words(v.vertices)
            )
        }
        super::worst::SearchMethod::BestFound => format!(
            "{} tolerance vertices, more than are tried one by one: the worst of {} found by changing one group at a \
             time, not proven the worst",
            vertex_count_words(v.vertices),
            v.evaluated
        ),
        super::worst::SearchMethod::Bounded => format!(
            "{} tolerance vertices, search stopped at its budget: no vertex exceeds {} on the scan grid",
            vertex_count_words(v.vertices),
            format(v.bound_ohm, Unit::Ohm)
        ),
    })
}

/// Each group's sensitivity in words: "mlcc-100n-0402 ×24: +1 part −0.12 mΩ, −1 part +0.13 mΩ".
pub fn sensitivity_words(s: &Sensitivity) -> String {
    let signed = |x: f64| {
        let sign = if x < 0.0 { "−" } else { "+" };
        format!("{sign}{}", format(x.abs(), Unit::Ohm))
    };
    match s.fewer_ohm {
        Some(f) => format!("{} ×{}: one more {}, one fewer {}", s.part, s.count, signed(s.more_ohm), signed(f)),
        None => format!("{} ×{}: one more {}", s.part, s.count, signed(s.more_ohm)),
    }
}

/// The yield in words: "7 812 of 10 000 boards (78.1 %) meet target; failing boards go above it at 5.9-7.1 MHz".
pub fn yield_words(y: &YieldEstimate) -> String {
    let mut t = format!(
        "{} of {} random boards ({:.1} %) meet target (each group's C and ESR drawn once, uniformly within their \
         tolerances, at the typical corner)",
        y.meeting,
        y.samples,
        y.fraction * 100.0
    );
    if !y.failing.is_empty() {
        let ranges: Vec<String> = y
            .failing
            .iter()
            .map(|r| {
                if r.from_hz == r.to_hz {
                    format!("{} ({} boards)", format(r.from_hz, Unit::Hertz), r.samples)
                } else {
                    format!(
                        "{} to {} ({} boards)",
                        format(r.from_hz, Unit::Hertz),
                        format(r.to_hz, Unit::Hertz),
                        r.samples
                    )
                }
            })
            .collect();
        t += &format!("; failing boards go above target at {}", ranges.join(", "));
    }
    t
}

/// Check rail `index` of a (validated) board. `None` when the rail has no band.
pub fn check_rail(board: &Board, index: usize, options: &CheckOptions) -> Option<RailCheck> {
    let rail = board.rails.get(index)?;
    let base = AnalysisOptions {
        band_points: options.band_points,
        curve: options.curve,
        branch_curves: options.branch_curves,
        view: options.view,
        corner: options.corner,
        search: options.search,
        // The verdict is the rail's: its worst load's.
        load: None,
    };
    // A placed rail's analysis gives its loads' verdicts too: taken once.
    let (verdict, loads) = if rail.placement.is_some() {
        let placed = super::placed::analyze_placed(board, index, &base)?;
        (placed.rail, placed.loads)
    } else {
        (analyze_rail(board, index, &base)?, Vec::new())
    };
    let plain = AnalysisOptions { curve: None, branch_curves: false, view: Some(verdict.view), ..base };
    let other_view = (options.other_view && rail.package.is_some())
        .then(|| {
            let other = if verdict.view == View::Die { View::Board } else { View::Die };
            analyze_rail(board, index, &AnalysisOptions { view: Some(other), ..plain })
        })
        .flatten();
    let corners: Vec<RailAnalysis> = if options.corners {
        Corner::ALL
            .into_iter()
            .filter(|c| *c != verdict.corner)
            .filter_map(|corner| analyze_rail(board, index, &AnalysisOptions { corner, ..plain }))
            .collect()
    } else {
        Vec::new()
    };
    let cautions = cautions(board, rail);
    let mut findings: Vec<Finding> = cautions
        .iter()
        .filter(|c| c.fails)
        .map(|c| Finding {
            severity: Severity::Fail,
            range_hz: verdict.band_hz,
            text: c.text.clone(),
            hint: "Fit a part rated for the rail's voltage, with the margin its data ask for.".into(),
        })
        .collect();
    findings.extend(explain(board, rail, &verdict));
    let edges = edge_reach(rail);
    findings.extend(edges.as_ref().and_then(edge_finding));
    let passes = verdict.meets_target && !cautions.iter().any(|c| c.fails);
    let of = |corner: Corner, i: usize| {
        std::iter::once(&verdict)
            .chain(&corners)
            .find(|a| a.corner == corner)
            .and_then(|a| a.groups.iter().find(|g| g.index == i))
            .and_then(|g| g.derating.clone())
    };
    let kept = rail
        .decaps
        .iter()
        .enumerate()
        .map(|(i, g)| Kept {
            group: i,
            part: g.part.clone(),
            given_f: board.part(&g.part).map_or(f64::NAN, |p| p.capacitance_f),
            typical: of(Corner::Typical, i),
            worst: of(Corner::Worst, i),
        })
        .collect();
    let sensitivity = if options.sensitivity { sensitivity(board, rail, &verdict) } else { Vec::new() };
    let yield_estimate = (options.yield_samples > 0)
        .then(|| {
            yield_estimate(
                board,
                index,
                verdict.view,
                options.band_points,
                options.yield_samples,
                options.seed,
                options.threads,
            )
        })
        .flatten();
    Some(RailCheck {
        verdict,
        passes,
        other_view,
        corners,
        kept,
        cautions,
        findings,
        sensitivity,
        yield_estimate,
        loads,
        edges,
    })
}

/// Check every rail of a board with the same options.
pub fn check_board(board: &Board, options: &CheckOptions) -> Vec<RailCheck> {
    (0..board.rails.len()).filter_map(|i| check_rail(board, i, options)).collect()
}
