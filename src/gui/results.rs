//! What the window shows about each rail, computed by `analysis` and kept until that rail's inputs change.
//!
//! The window never computes an impedance: it asks [`analyze_rail`] and [`explain`] and turns their answers into
//! plot-ready points (log10 of frequency and of |Z|). A rail is analysed again only when its own inputs or the
//! parts it uses change, so dragging one count re-analyses one rail, not the board.

use super::jobs::{Job, Poll};
use crate::analysis::{
    AnalysisOptions, CheckOptions, Droop, DroopOptions, Finding, RailAnalysis, RailCheck, View, analyze_rail,
    check_rail, curve_of, droop, edge_finding, explain,
};
use crate::model::{Board, Part, Rail};
use std::sync::Arc;

/// Points of the in-band scan: the default density, which the command line's check uses too, so the window's
/// verdict and figures are the check's (a test holds the two together).
pub const BAND_POINTS: usize = 1000;

/// Points of the drawn curve (log-spaced over the view range).
pub const CURVE_POINTS: usize = 600;

/// Points of the time view's waveform. The integration runs on its own finer step whatever this is; 600 points
/// are more than a plot a few hundred pixels wide can show.
pub const DROOP_POINTS: usize = 600;

/// How far the drawn curve reaches beyond the band on each side, as a factor in frequency.
pub const VIEW_MARGIN: f64 = 10.0;

/// One branch's curve, ready to draw.
#[derive(Debug, Clone, PartialEq)]
pub struct BranchLine {
    /// The branch's label ("source", "plane", "mlcc-100n-0402 ×24").
    pub label: String,
    /// Points as [log10 f, log10 |Z|].
    pub points: Vec<[f64; 2]>,
}

/// Everything the plot draws for one rail, in plot coordinates (log10 of Hz and Ω).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PlotData {
    /// The total impedance as [log10 f, log10 |Z|].
    pub total: Vec<[f64; 2]>,
    /// Each branch's own impedance, for drawing faintly beneath the total.
    pub branches: Vec<BranchLine>,
    /// The frequency range of the curve, Hz.
    pub view_hz: [f64; 2],
    /// A vertical range (log10 Ω) that shows the curve and the target with some room.
    pub home_y: [f64; 2],
}

/// How the window looks at the rails: from where, and which curves beside the main one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Look {
    /// Where the main figures and curve are taken; `None` is the verdict's own view (the die when the rail gives
    /// a package, as the check takes it). Rails without a package are always seen at the board.
    pub view: Option<View>,
    /// Also draw the curve seen from the other node, for rails with a package.
    pub both_views: bool,
    /// Also analyse the worst corner (the tolerance vertex search) and draw its curve.
    pub worst_corner: bool,
    /// On a placed rail, the load whose effective impedance the plot shows; `None` is the worst load (the rail's
    /// verdict). An index past the rail's loads is taken as `None`.
    pub load: Option<usize>,
    /// A part is held on the board map: each group's sensitivity waits until it is let go (on a placed rail it
    /// costs about twice the check itself, and a drag step must fit a frame).
    pub moving: bool,
}

impl Look {
    /// The load the window shows on a placed rail with these `loads`: the one chosen, else the worst (the rail's
    /// verdict); `None` on a rail without loads on a plane pair. The plot, its verdict line and the exports all
    /// take it from here.
    pub fn shown_load(&self, loads: &[crate::analysis::placed::LoadVerdict]) -> Option<usize> {
        self.load.filter(|&k| k < loads.len()).or_else(|| crate::analysis::placed::worst_load(loads))
    }
}

/// A second analysis of the rail (the other view, or the worst corner) and its drawn curve.
#[derive(Debug, Clone, PartialEq)]
pub struct Beside {
    /// What the engine says in that view or corner.
    pub analysis: RailAnalysis,
    /// Its total |Z| as [log10 f, log10 |Z|].
    pub total: Vec<[f64; 2]>,
}

/// One rail's check, the analysis the plot shows, its findings and plot data.
#[derive(Debug, Clone, PartialEq)]
pub struct RailResult {
    /// The engine's check of the rail: its verdict (the verdict's view, typical corner), cautions, capacitance
    /// kept, sensitivity, and the other corners when the worst one is asked for. The rails list and the header
    /// give this verdict, whatever view the plot shows.
    pub check: RailCheck,
    /// What the engine says in the view the plot shows (the check's own analysis when that is the verdict's
    /// view), typical corner.
    pub analysis: RailAnalysis,
    /// The findings in plain words: the check's failing cautions, then the shown analysis's findings.
    pub findings: Vec<Finding>,
    /// What the plot draws.
    pub plot: PlotData,
    /// The same rail seen from the other node, when asked for and the rail has a package.
    pub other_view: Option<Beside>,
    /// The worst corner in the shown view, when asked for.
    pub worst: Option<Beside>,
}

impl RailResult {
    /// The analysis the verdict is judged by: the verdict's view (the die when the rail gives a package), the
    /// typical corner, whatever view the plot shows.
    pub fn verdict(&self) -> &RailAnalysis {
        &self.check.verdict
    }
}

/// The inputs a rail's result depends on, kept to tell when it must be computed again: the rail, the parts it
/// uses, and the board-wide settings the derating reads.
#[derive(Debug, Clone, PartialEq)]
struct Inputs {
    rail: Rail,
    parts: Vec<Part>,
    temperature_c: Option<[f64; 2]>,
    generic_dc_bias: Option<bool>,
}

impl Inputs {
    fn of(board: &Board, rail: &Rail) -> Inputs {
        let parts = rail.decaps.iter().filter_map(|g| board.part(&g.part).cloned()).collect();
        Inputs { rail: rail.clone(), parts, temperature_c: board.temperature_c, generic_dc_bias: board.generic_dc_bias }
    }
}

/// A rail's droop, or why it has none (the engine's own words).
pub type DroopResult = Result<Droop, String>;

/// The droop the time view can show now.
#[derive(Debug, Clone, Default)]
pub struct DroopNow {
    /// The latest droop computed for the rail, if any (it may be for the rail's inputs before the last edit).
    pub result: Option<Arc<DroopResult>>,
    /// True when `result` is for the rail as it stands; false while a newer one is being computed.
    pub current: bool,
}

/// A droop being computed on its own thread.
#[derive(Debug)]
struct DroopJob {
    index: usize,
    inputs: Inputs,
    job: Job<DroopResult>,
}

/// The results of every rail of the board, refreshed rail by rail.
#[derive(Debug, Default)]
pub struct Results {
    entries: Vec<Option<(Inputs, Look, Arc<RailResult>)>>,
    /// Droops are computed only for rails whose time view is shown, so they have their own cache.
    droops: Vec<Option<(Inputs, Arc<DroopResult>)>>,
    /// At most one droop in flight (the machine has few cores and the latest inputs are all that matter).
    job: Option<DroopJob>,
    look: Look,
}

impl Results {
    /// Bring every rail's result up to date with `board`, analysing only rails whose inputs changed. Returns how
    /// many rails were analysed.
    pub fn refresh(&mut self, board: &Board) -> usize {
        self.entries.resize(board.rails.len(), None);
        let mut analysed = 0;
        for (i, rail) in board.rails.iter().enumerate() {
            let inputs = Inputs::of(board, rail);
            if matches!(&self.entries[i], Some((known, look, _)) if *known == inputs && *look == self.look) {
                continue;
            }
            analysed += 1;
            self.entries[i] = compute_with(board, i, self.look).map(|r| (inputs, self.look, Arc::new(r)));
        }
        analysed
    }

    /// How rails are looked at; the next [`Results::refresh`] analyses every rail again when it changes.
    pub fn look(&self) -> Look {
        self.look
    }

    /// Change how rails are looked at.
    pub fn set_look(&mut self, look: Look) {
        self.look = look;
    }

    /// The droop of rail `index` after a step of its ΔI.
    ///
    /// A droop of a sample rail takes a few milliseconds (the exact modal method: its cost follows the rail's
    /// poles, not the window), so the time view follows a drag step by step, as the impedance plot does. It still
    /// runs on its own thread, since a rail of a thousand groups takes longer than a frame: the last droop stays on
    /// show, marked not current, until the new one lands, and the caller asks for another frame. One droop is in
    /// flight at a time, always for the latest inputs once the previous lands, so a fast drag is followed with a
    /// lag of at most one droop and never queues work.
    pub fn droop(&mut self, board: &Board, index: usize) -> DroopNow {
        let Some(rail) = board.rails.get(index) else { return DroopNow::default() };
        self.droops.resize(board.rails.len(), None);
        // Take a finished job's answer.
        if let Some(job) = &mut self.job {
            match job.job.poll() {
                Poll::Done(answer) => {
                    if let Some(job) = self.job.take()
                        && job.index < self.droops.len()
                    {
                        self.droops[job.index] = Some((job.inputs, Arc::new(answer)));
                    }
                }
                Poll::Running => {}
                Poll::Lost => self.job = None,
            }
        }
        let inputs = Inputs::of(board, rail);
        let kept = self.droops[index].as_ref();
        let current = kept.is_some_and(|(known, _)| *known == inputs);
        let result = kept.map(|(_, d)| d.clone());
        if !current && self.job.is_none() {
            let board = board.clone();
            let job = Job::start("droop", move || droop(&board, index, &droop_options()).map_err(|e| e.to_string()));
            self.job = Some(DroopJob { index, inputs, job });
        }
        DroopNow { result, current }
    }

    /// The result of rail `index`, if it could be analysed.
    pub fn get(&self, index: usize) -> Option<&Arc<RailResult>> {
        self.entries.get(index).and_then(|e| e.as_ref()).map(|(_, _, r)| r)
    }

    /// Forget everything (a new board was opened).
    pub fn clear(&mut self) {
        self.entries.clear();
        self.droops.clear();
        self.job = None;
    }
}

/// How the window runs a droop: the engine's default window, stimulus and step, fewer points to draw.
pub fn droop_options() -> DroopOptions {
    DroopOptions { points: Some(DROOP_POINTS), ..DroopOptions::default() }
}

/// Check one rail as `hushrail check` does (the verdict's view, typical corner) and prepare its plot data.
pub fn compute(board: &Board, index: usize) -> Option<RailResult> {
    compute_with(board, index, Look::default())
}

/// Check one rail and analyse it as `look` asks, and prepare its plot data.
pub fn compute_with(board: &Board, index: usize, look: Look) -> Option<RailResult> {
    let rail = board.rails.get(index)?;
    // The band as the engine will take it (given, or from the loads' rise times).
    let [lo, hi] = rail.band()?.hz;
    let view_hz = [lo / VIEW_MARGIN, hi * VIEW_MARGIN];
    let curve = Some((view_hz[0], view_hz[1], CURVE_POINTS));
    // The check as the command line takes it; only the density of the drawn curve and which extra corners to
    // analyse are the window's. The worst corner's vertex search runs only when its curve is asked for.
    let check = check_rail(
        board,
        index,
        &CheckOptions {
            band_points: BAND_POINTS,
            curve,
            branch_curves: true,
            other_view: false,
            corners: look.worst_corner,
            sensitivity: !look.moving,
            ..CheckOptions::default()
        },
    )?;
    let shown_view = match look.view {
        Some(View::Board) => View::Board,
        _ => check.verdict.view,
    };
    // On a placed rail the plot may show another load than the worst (whose figures are the verdict's).
    let shown_load = look.load.filter(|&k| rail.placement.is_some() && k < rail.loads.len());
    let options = AnalysisOptions {
        band_points: BAND_POINTS,
        curve,
        branch_curves: true,
        view: Some(shown_view),
        corner: check.verdict.corner,
        load: shown_load,
        ..AnalysisOptions::default()
    };
    let (analysis, findings) = if shown_view == check.verdict.view && shown_load.is_none() {
        (check.verdict.clone(), check.findings.clone())
    } else {
        let analysis = analyze_rail(board, index, &options)?;
        let mut findings: Vec<Finding> =
            check.findings.iter().filter(|f| check.failing_cautions().any(|c| c.text == f.text)).cloned().collect();
        findings.extend(explain(board, rail, &analysis));
        findings.extend(check.edges.as_ref().and_then(edge_finding));
        (analysis, findings)
    };
    let plot = plot_data(&analysis, view_hz);
    let beside = |a: RailAnalysis| {
        let total = plot_data(&a, view_hz).total;
        Beside { analysis: a, total }
    };
    let other_view = if look.both_views && rail.package.is_some() {
        let other = match analysis.view {
            View::Die => View::Board,
            View::Board => View::Die,
        };
        let options = AnalysisOptions { branch_curves: false, view: Some(other), ..options };
        analyze_rail(board, index, &options).map(beside)
    } else {
        None
    };
    let worst = match check.corner(crate::physics::Corner::Worst) {
        // The check searched the worst vertex in the verdict's view: draw that analysis along the curve.
        Some(w) if w.view == shown_view => {
            let mut w = w.clone();
            w.curve = Some(curve_of(board, rail, &w, view_hz[0], view_hz[1], CURVE_POINTS));
            Some(beside(w))
        }
        Some(_) => {
            let options = AnalysisOptions { branch_curves: false, corner: crate::physics::Corner::Worst, ..options };
            analyze_rail(board, index, &options).map(beside)
        }
        None => None,
    };
    Some(RailResult { check, analysis, findings, plot, other_view, worst })
}

/// A point in plot coordinates, or `None` where |Z| cannot be drawn on a log axis (zero, infinite, NaN).
fn log_point(f: f64, z: f64) -> Option<[f64; 2]> {
    (f > 0.0 && z > 0.0 && f.is_finite() && z.is_finite()).then(|| [f.log10(), z.log10()])
}

fn plot_data(analysis: &RailAnalysis, view_hz: [f64; 2]) -> PlotData {
    let Some(curve) = &analysis.curve else {
        return PlotData { view_hz, ..PlotData::default() };
    };
    let total: Vec<[f64; 2]> =
        curve.freq_hz.iter().zip(&curve.z).filter_map(|(&f, z)| log_point(f, z.norm())).collect();
    let branches = curve
        .branches
        .iter()
        .map(|(b, zs)| BranchLine {
            label: b.label.clone(),
            points: curve.freq_hz.iter().zip(zs).filter_map(|(&f, z)| log_point(f, z.norm())).collect(),
        })
        .collect();
    PlotData { total, branches, view_hz, home_y: home_y(analysis, &curve.freq_hz, &curve.z) }
}

/// The vertical range to show first: the curve over the band and the target, with half a decade of room, kept
/// within five decades so that a steep capacitive slope at the low end cannot squash the interesting part.
fn home_y(analysis: &RailAnalysis, freq: &[f64], z: &[num_complex::Complex64]) -> [f64; 2] {
    let target = analysis.target_ohm.log10();
    let [lo, hi] = analysis.band_hz;
    let in_band = freq.iter().zip(z).filter(|(f, _)| **f >= lo && **f <= hi).map(|(_, z)| z.norm());
    let logs: Vec<f64> = in_band.filter(|m| *m > 0.0 && m.is_finite()).map(f64::log10).collect();
    let (mut y0, mut y1) = logs.iter().fold((target, target), |(a, b), &y| (a.min(y), b.max(y)));
    if !target.is_finite() {
        (y0, y1) = (-3.0, 1.0);
    }
    y0 = y0.max(target - 3.0) - 0.5;
    y1 = y1.min(target + 2.0) + 0.5;
    if y1 - y0 < 1.0 {
        let mid = (y0 + y1) / 2.0;
        (y0, y1) = (mid - 0.5, mid + 0.5);
    }
    [y0, y1]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_changed_rails_are_analysed_again() {
        let mut board = crate::samples::default_board().unwrap();
        let mut results = Results::default();
        assert_eq!(results.refresh(&board), board.rails.len());
        assert_eq!(results.refresh(&board), 0);
        board.rails[1].decaps[0].count += 1;
        assert_eq!(results.refresh(&board), 1);
        // A part's change reaches every rail that uses it and no other.
        let users: std::collections::HashSet<usize> =
            board.uses_of_part("mlcc-1u-0402").into_iter().map(|(r, _)| r).collect();
        let i = board.parts.iter().position(|p| p.id == "mlcc-1u-0402").unwrap();
        board.parts[i].esr_ohm *= 2.0;
        assert_eq!(results.refresh(&board), users.len());
    }

    #[test]
    fn figures_are_the_engines() {
        let board = crate::samples::default_board().unwrap();
        let mut results = Results::default();
        results.refresh(&board);
        for i in 0..board.rails.len() {
            let mine = &results.get(i).unwrap().analysis;
            // The check's default corner and view, as `hushrail check` takes them.
            let engine = analyze_rail(&board, i, &AnalysisOptions::default()).unwrap();
            assert_eq!(mine.worst_ohm, engine.worst_ohm);
            assert_eq!(mine.meets_target, engine.meets_target);
            let p = &results.get(i).unwrap().plot;
            assert_eq!(p.total.len(), CURVE_POINTS);
            assert!(p.home_y[0] < engine.target_ohm.log10() && engine.target_ohm.log10() < p.home_y[1]);
        }
    }
}
