//! Droop in the time domain: the rail's voltage after a load-current step, and the worst on/off pattern a load can
//! produce.
//!
//! Method: the rail's network is linear, so the voltage drop at the load is the load's current through the
//! impedance Z(s). Z(s) is found exactly as poles and residues ([`rational`]) and the response to a
//! piecewise-linear current is stepped mode by mode with an update that is exact for any step ([`response`]):
//! the cost grows with the number of poles and the points shown, not with the window or the rail's fastest
//! resonance. The trapezoidal integrator ([`integrator`]) is kept as the reference the tests hold the exact method
//! to, and as the fallback should the poles not be found.
//!
//! One band for both domains: the verdict judges |Z| over the rail's band, so the time domain judges the same
//! spectrum. Where the loads' edges reach past the band's upper edge (0.35/t_r above it, common practice), the
//! load's current is passed through a low-pass at the band's edge before it meets the network, and the result says
//! so. The low-pass has two real poles at 1.194 and 2.388 times the band's upper edge: 3 dB down at the edge,
//! 40 dB per decade beyond, and no overshoot, so the filtered current never exceeds ΔI.

mod eigen;
mod integrator;
mod pattern;
mod placed;
mod rational;
mod response;
mod vecfit;
mod words;

pub use integrator::{IntegratedStep, MAX_STEPS, step_integrated};
pub use placed::{FIT_TOLERANCE, LoadDroop};
pub use rational::{Modal, RailModes};
pub use words::{
    droop_figure, lines as droop_lines, load_line as droop_load_line, stimulus_line as droop_stimulus_line,
    verdict_line as droop_verdict_line,
};

use super::findings::scan;
use super::network::{Network, View};
use super::rail::{AntiResonance, BranchRef};
use crate::model::ranges::{self, Range};
use crate::model::{Board, Rail};
use crate::physics::TWO_PI;
use response::{Pwl, Samples, Walk};
use std::fmt;

/// How to run a droop analysis; `None` fields take the defaults documented on each.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct DroopOptions {
    /// Current step, A. Default: the rail's total ΔI.
    pub step_a: Option<f64>,
    /// 10-90 % rise time of the edge, s (a linear ramp of rise/0.8 from 0 to ΔI). Default: the fastest load's, or
    /// 1 ns.
    pub rise_s: Option<f64>,
    /// Time shown, s. Default: five periods of the network's lowest anti-resonance (and at least 200 rise times).
    /// The figures do not depend on it: the response is followed until it settles, whatever the window.
    pub window_s: Option<f64>,
    /// Points of the returned waveform's grid (each interval's lowest and highest point are added). Default 2000.
    pub points: Option<usize>,
    /// Filter the load's current to the rail's band when its edges reach past it. Default: yes.
    pub band_limit: Option<bool>,
}

/// A droop past this fraction of the rail's voltage is beyond the model: the load's current would not stay
/// constant and the parts would not stay linear (common practice: a rail 20 % low has browned out).
pub const LINEAR_LIMIT: f64 = 0.2;

/// Why a droop cannot be computed.
#[derive(Debug, Clone, PartialEq)]
pub enum DroopError {
    /// No regulator model: nothing restores the charge the load draws, so the voltage falls without end.
    NoDcPath {
        /// The rail's name.
        rail: String,
    },
    /// An option out of range.
    BadOption(String),
    /// The reference integrator would need more steps than it may take.
    TooManySteps {
        /// Steps the window and the rail's fastest dynamics need.
        needed: f64,
        /// The most it takes.
        limit: usize,
    },
}

impl fmt::Display for DroopError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DroopError::NoDcPath { rail } => write!(
                f,
                "rail {rail} has no source: with no DC path to a supply, a load step drains the capacitors and the \
                 voltage falls without end. Give the rail a \"source\" (the regulator's output R and L) to compute \
                 its droop"
            ),
            DroopError::BadOption(m) => write!(f, "{m}"),
            DroopError::TooManySteps { needed, limit } => write!(
                f,
                "the time-stepping reference would need {needed:.3e} steps for this window and rail, more than its \
                 limit of {limit}: shorten the window"
            ),
        }
    }
}

impl std::error::Error for DroopError {}

/// One "on" interval of a load pattern, s: the load ramps up from `on_s` and down from `off_s`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pulse {
    /// Start of the rising edge, s.
    pub on_s: f64,
    /// Start of the falling edge, s.
    pub off_s: f64,
}

/// The droop at one node.
#[derive(Debug, Clone, PartialEq)]
pub struct NodeDroop {
    /// The lowest voltage after the step, V.
    pub min_v: f64,
    /// When it occurs, s after the start of the ramp.
    pub t_min_s: f64,
    /// nominal − min, V.
    pub droop_v: f64,
    /// The step's waveform there: (t, V) on the output grid plus each interval's lowest and highest point.
    pub waveform: Vec<[f64; 2]>,
}

/// The low-pass the load's current went through, when its edges reach past the band.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BandFilter {
    /// The band's upper edge, where the filter is 3 dB down, Hz.
    pub edge_hz: f64,
    /// Where the loads' edges have content up to (0.35/t_r, common practice), Hz.
    pub load_edge_hz: f64,
    /// The filter's two real poles, Hz.
    pub poles_hz: [f64; 2],
}

/// The sustained-resonance estimate: a load toggling as a square wave at the highest in-band peak drives it with
/// its fundamental, (2/π)·ΔI (the Fourier series of a square wave), on top of its mean ΔI/2 through the DC
/// resistance: ΔI·((2/π)|Z(f_p)| + R_dc/2). Common practice, as a quick bound to compare the pattern with.
#[derive(Debug, Clone, PartialEq)]
pub struct Sustained {
    /// The peak's frequency, Hz.
    pub peak_hz: f64,
    /// |Z| there, Ω.
    pub z_ohm: f64,
    /// The rail's DC resistance, Ω.
    pub r_dc_ohm: f64,
    /// The estimate, V.
    pub droop_v: f64,
    /// What makes the peak, in the check's words ("Cause: ..."), so both domains name it alike.
    pub cause: String,
}

/// The worst on/off pattern the load can produce, or why there is no bound.
#[derive(Debug, Clone, PartialEq)]
pub enum WorstCase {
    /// The worst pattern and its droop.
    Bounded {
        /// Its droop, V.
        droop_v: f64,
        /// Its pulses, oldest first.
        pattern: Vec<Pulse>,
        /// When it reaches its lowest voltage, s.
        t_s: f64,
        /// Its pulses per second (1/mean on-to-on spacing), when it has two or more.
        dominant_hz: Option<f64>,
    },
    /// A mode without damping: a pattern that keeps pumping it makes the droop grow without limit.
    Unbounded,
}

impl WorstCase {
    /// The droop, when bounded.
    pub fn droop_v(&self) -> Option<f64> {
        match self {
            WorstCase::Bounded { droop_v, .. } => Some(*droop_v),
            WorstCase::Unbounded => None,
        }
    }

    /// The pattern (empty when unbounded).
    pub fn pattern(&self) -> &[Pulse] {
        match self {
            WorstCase::Bounded { pattern, .. } => pattern,
            WorstCase::Unbounded => &[],
        }
    }
}

/// The result of a droop analysis. The figures are at the die when the rail gives a package (the load draws its
/// current there), else at the board's rail node.
#[derive(Debug, Clone, PartialEq)]
pub struct Droop {
    /// The rail's name.
    pub rail: String,
    /// Where the main figures are taken.
    pub node: View,
    /// The board node's figures, when the main figures are at the die.
    pub board_node: Option<NodeDroop>,
    /// The step, A.
    pub step_a: f64,
    /// The 10-90 % rise time, s.
    pub rise_s: f64,
    /// The linear ramp's duration from 0 to ΔI (rise/0.8), s.
    pub ramp_s: f64,
    /// The window shown, s.
    pub window_s: f64,
    /// The filter applied to the load's current, when its edges reach past the band.
    pub filter: Option<BandFilter>,
    /// The rail's nominal voltage, V.
    pub nominal_v: f64,
    /// The lowest voltage after the step, V.
    pub min_v: f64,
    /// When it occurs, s after the start of the ramp.
    pub t_min_s: f64,
    /// nominal − min, V.
    pub droop_v: f64,
    /// The allowed droop: voltage × ripple, V.
    pub allowed_v: f64,
    /// True when the step's droop is within the allowed band.
    pub meets: bool,
    /// The voltage the rail settles to (the regulator's resistance carries the step), V.
    pub final_v: f64,
    /// When the voltage last leaves final ± 10 % of the peak droop, judged over the whole response until every
    /// mode has died out; `None` when it never settles (a mode without damping).
    pub settling_s: Option<f64>,
    /// The step's waveform: (t, V) on the output grid plus each interval's lowest and highest point.
    pub waveform: Vec<[f64; 2]>,
    /// The worst on/off pattern.
    pub worst_case: WorstCase,
    /// True when the worst-case droop is within the allowed band (false when unbounded).
    pub worst_case_meets: bool,
    /// The shortest on or off interval a pattern may have, s, and where it comes from.
    pub min_interval_s: f64,
    /// Where the shortest interval comes from, in words.
    pub min_interval_from: String,
    /// The most pulses in a burst, when a load limits it.
    pub max_pulses: Option<usize>,
    /// The sustained-resonance estimate at the highest in-band peak, when the band has a peak.
    pub sustained: Option<Sustained>,
    /// Things the user asked for that the answer cannot honour, and what was done instead.
    pub warnings: Vec<String>,
    /// On a placed rail, each load's droop in the rail's order (the figures above are the worst load's); empty on
    /// a lumped rail.
    pub loads: Vec<LoadDroop>,
}

impl Droop {
    /// On a placed rail, its worst load (the largest step droop, whose figures the rail's are); `None` on a lumped
    /// rail.
    pub fn worst_load(&self) -> Option<&LoadDroop> {
        self.worst_load_index().map(|k| &self.loads[k])
    }

    /// The index of [`Droop::worst_load`] among the rail's loads.
    pub fn worst_load_index(&self) -> Option<usize> {
        placed::worst_load(&self.loads)
    }

    /// The worst pattern's droop, V (`None` when unbounded).
    pub fn worst_case_droop_v(&self) -> Option<f64> {
        self.worst_case.droop_v()
    }

    /// True when a droop of `v` is past [`LINEAR_LIMIT`] of the rail's voltage, where the model no longer holds.
    pub fn beyond_model(&self, v: f64) -> bool {
        v > LINEAR_LIMIT * self.nominal_v
    }
}

/// The rail's impedance at the load's node (and the transfer to the board node) as poles and residues, as the
/// time domain uses it (measured parts as their fitted R-L-C); `None` when the poles cannot be found.
pub fn rail_modes(network: &Network) -> Option<RailModes> {
    rational::rail_modes(network).ok()
}

/// The worst pattern over sampled ages `tau` (ascending, `tau[0]` = 0 with `s[0]` = 0) of a step droop `s`:
/// the largest Σ s(τ_on) − s(τ_off) with consecutive ages at least `min_gap` apart (a load still on at the instant
/// excepted: its on interval goes on past it) and at most `max_pulses` pulses,
/// and its pulses as (index of τ_on, index of τ_off). Exposed so tests can hold it to a brute-force search.
pub fn worst_pattern_over(
    tau: &[f64],
    s: &[f64],
    min_gap: f64,
    max_pulses: Option<usize>,
) -> (f64, Vec<(usize, usize)>) {
    let w = pattern::worst_pattern(tau, s, min_gap, max_pulses);
    let index = |t: f64| tau.iter().position(|&x| x == t).unwrap_or(0);
    (w.droop, w.pulses.iter().map(|&(on, off)| (index(on), index(off))).collect())
}

/// Everything a run needs, resolved from the options and the network.
struct Plan {
    network: Network,
    nominal_v: f64,
    step_a: f64,
    rise_s: f64,
    ramp_s: f64,
    window_s: f64,
    points: usize,
    band_hz: [f64; 2],
    filter: Option<BandFilter>,
}

/// An option inside its documented range (`model::ranges`, the same constants the command line checks).
fn check_range(v: f64, range: &Range) -> Result<f64, DroopError> {
    range.problem(v).map_or(Ok(v), |why| Err(DroopError::BadOption(format!("{}: {why}", range.what))))
}

fn plan(board: &Board, rail: &Rail, options: &DroopOptions) -> Result<Plan, DroopError> {
    // A measured source whose file cannot be used is out of the network, so it gives no DC path either.
    rail.source
        .as_ref()
        .filter(|s| s.unusable().is_none())
        .ok_or_else(|| DroopError::NoDcPath { rail: rail.name.clone() })?;
    let step_a = check_range(options.step_a.unwrap_or_else(|| rail.total_step_a()), &ranges::LOAD_STEP)?;
    let rise_s = check_range(options.rise_s.or_else(|| rail.fastest_rise_s()).unwrap_or(1e-9), &ranges::RISE_TIME)?;
    let points = options.points.unwrap_or(2000);
    check_range(points as f64, &ranges::WAVEFORM_POINTS)?;
    let network = Network::of_rail(board, rail);
    let window_s = match options.window_s {
        Some(w) => check_range(w, &ranges::DROOP_WINDOW)?,
        None => integrator::default_window(&network, rail, rise_s),
    };
    let band_hz = rail.band_hz_or_default();
    let load_edge_hz = crate::model::edge_content_hz(rise_s);
    let filter =
        (options.band_limit.unwrap_or(true) && crate::model::reaches_past(load_edge_hz, band_hz[1])).then(|| {
            // Two real poles a and 2a with |H| = 1/√2 at the edge: (1 + x²)(1 + x²/4) = 2 at x = f_edge/a.
            let x = ((41f64.sqrt() - 5.0) / 2.0).sqrt();
            let a = band_hz[1] / x;
            BandFilter { edge_hz: band_hz[1], load_edge_hz, poles_hz: [a, 2.0 * a] }
        });
    Ok(Plan {
        network,
        nominal_v: rail.voltage_v,
        step_a,
        rise_s,
        ramp_s: rise_s / 0.8,
        window_s,
        points,
        band_hz,
        filter,
    })
}

/// The network's transfer from load current to voltage drop, filtered as the plan says.
fn modes_of(plan: &Plan) -> Option<(Modal, Option<Modal>)> {
    let modes = rational::rail_modes(&plan.network).ok()?;
    let filt = |m: Modal| match plan.filter {
        Some(f) => m.filtered(TWO_PI * f.poles_hz[0], TWO_PI * f.poles_hz[1]),
        None => m,
    };
    Some((filt(modes.main), modes.board.map(filt)))
}

/// Most adaptive samples one walk takes (beyond the output grid and the load's corners): bounds memory and time
/// whatever the window.
const MAX_SAMPLES: usize = 400_000;

/// The waveform on the output grid, plus each grid interval's lowest and highest sample (in time order) where
/// they lie beyond the interval's ends, so the lowest point printed is on the curve drawn.
fn decimate(t: &[f64], v: &[f64], nominal_v: f64, window_s: f64, points: usize) -> Vec<[f64; 2]> {
    let dt = window_s / (points - 1) as f64;
    let mut out: Vec<[f64; 2]> = Vec::with_capacity(points * 2);
    let mut k = 0usize; // sample index
    let n = t.len().min(v.len());
    let final_v = v.get(n.saturating_sub(1)).copied().unwrap_or(0.0);
    let at = |k: usize| if k < n { v[k] } else { final_v };
    for g in 0..points {
        let tg = if g + 1 == points { window_s } else { g as f64 * dt };
        // Interior extremes between the previous grid time and this one.
        if g > 0 {
            let (mut lo, mut hi): (Option<usize>, Option<usize>) = (None, None);
            while k < n && t[k] < tg {
                if lo.is_none_or(|j| v[k] > v[j]) {
                    lo = Some(k);
                }
                if hi.is_none_or(|j| v[k] < v[j]) {
                    hi = Some(k);
                }
                k += 1;
            }
            // The two in time order, once (no allocation: this runs for every interval of the grid).
            let extra = match (lo, hi) {
                (Some(a), Some(b)) if a != b => [Some(a.min(b)), Some(a.max(b))],
                (a, b) => [a.or(b), None],
            };
            for j in extra.into_iter().flatten() {
                if t[j] > out.last().map_or(-1.0, |p: &[f64; 2]| p[0]) {
                    out.push([t[j], nominal_v - v[j]]);
                }
            }
        }
        // The grid time itself: the sample taken there (the walk always stops on grid times inside the window).
        while k < n && t[k] < tg {
            k += 1;
        }
        let val = if k < n && t[k] == tg { at(k) } else { at(k.min(n)) };
        out.push([tg, nominal_v - val]);
        // A second sample at the same time (the right limit at a load corner): keep it too.
        while k < n && t[k] == tg {
            if v[k] != val {
                out.push([tg, nominal_v - v[k]]);
            }
            k += 1;
        }
    }
    out
}

/// The waveform with the refined lowest point put in its place, so the curve drawn reaches the lowest point
/// printed (when it falls inside the window).
fn with_point(mut w: Vec<[f64; 2]>, t: f64, v: f64, window_s: f64) -> Vec<[f64; 2]> {
    if t <= window_s && !w.iter().any(|p| p[0] == t && p[1] == v) {
        let at = w.partition_point(|p| p[0] <= t);
        w.insert(at, [t, v]);
    }
    w
}

/// The shortest on or off interval of a pattern: each load's own (`min_period_s`, or one cycle of `clock_hz`), or
/// for a load that gives neither, half a period of the band's upper edge (a pattern faster than that has no
/// content the band checks); the rail's is the shortest of its loads'.
fn min_interval(rail: &Rail, band_hz: [f64; 2]) -> (f64, String) {
    let half = 0.5 / band_hz[1];
    let mut best = (f64::INFINITY, String::new());
    for load in &rail.loads {
        let (t, from) = match (load.min_period_s, load.clock_hz) {
            (Some(t), _) => (t, format!("load {}'s min_period_s", load.name)),
            (None, Some(f)) => (1.0 / f, format!("one cycle of load {}'s clock", load.name)),
            (None, None) => (half, "half a period of the band's upper edge".to_string()),
        };
        if t < best.0 {
            best = (t, from);
        }
    }
    if best.0.is_finite() { best } else { (half, "half a period of the band's upper edge".into()) }
}

/// The most pulses in a burst: the largest of the loads' `max_pulses` when every load gives one, else no limit.
fn max_pulses(rail: &Rail) -> Option<usize> {
    rail.loads.iter().map(|l| l.max_pulses.map(|n| n as usize)).collect::<Option<Vec<_>>>()?.into_iter().max()
}

/// The highest in-band peak's sustained-resonance estimate, with its cause in the check's words.
fn sustained(rail: &Rail, network: &Network, band_hz: [f64; 2], step_a: f64, r_dc: f64) -> Option<Sustained> {
    let view = network.verdict_view();
    let s = scan(&|f| network.impedance_in(f, view), band_hz, 400, f64::INFINITY);
    let p = s.peaks.iter().max_by(|a, b| a.z_ohm.total_cmp(&b.z_ohm))?;
    let droop_v = step_a * (2.0 / std::f64::consts::PI * p.z_ohm + r_dc / 2.0);
    let (inductive, capacitive) = network.peak_sides(p.freq_hz, view);
    let side = |(b, share): (&crate::analysis::Branch, f64)| BranchRef {
        kind: b.kind,
        label: b.label.clone(),
        resonance_hz: b.resonance_hz,
        share,
    };
    let peak = AntiResonance {
        freq_hz: p.freq_hz,
        z_ohm: p.z_ohm,
        above_target: false,
        inductive_side: inductive.map(side),
        capacitive_side: capacitive.map(side),
    };
    let cause = crate::analysis::advice::cause(rail, &peak);
    Some(Sustained { peak_hz: p.freq_hz, z_ohm: p.z_ohm, r_dc_ohm: r_dc, droop_v, cause })
}

/// Droop of rail `rail_index` after a load step, and the worst case over on/off patterns.
pub fn droop(board: &Board, rail_index: usize, options: &DroopOptions) -> Result<Droop, DroopError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| DroopError::BadOption("no such rail".into()))?;
    let plan = plan(board, rail, options)?;
    if rail.placement.is_some() {
        return placed::droop_placed(board, rail, plan, options);
    }
    let Some((main, board_modes)) = modes_of(&plan) else {
        return fallback(board, rail_index, rail, &plan, options);
    };
    let samples = step_walk(&plan, &main, board_modes.as_ref());
    Ok(assemble(rail, &plan, &samples, Some(&main)))
}

/// The step's waveform and verdict alone: what [`droop`] gives in [`Droop::waveform`] and [`Droop::meets`], by the
/// same walk and the same figures, without the worst pattern, the sustained estimate or the board node's waveform
/// (for a face that prints only the waveform: `droop --csv`). On a placed rail it is the worst load's waveform
/// (the load with the largest step droop) and the verdict of every load, exactly [`droop`]'s.
#[derive(Debug, Clone, PartialEq)]
pub struct StepWaveform {
    /// The step's waveform: (t, V) on the output grid plus each interval's lowest and highest point.
    pub waveform: Vec<[f64; 2]>,
    /// True when the step's droop is within the allowed band.
    pub meets: bool,
}

/// The step's waveform and verdict, equal to [`droop`]'s [`Droop::waveform`] and [`Droop::meets`].
pub fn step_waveform(board: &Board, rail_index: usize, options: &DroopOptions) -> Result<StepWaveform, DroopError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| DroopError::BadOption("no such rail".into()))?;
    let plan = plan(board, rail, options)?;
    if rail.placement.is_some() {
        // A placed rail's waveform is its worst load's (the largest step droop) and its verdict every load's,
        // as in [`droop`]: never the lumped network's.
        let d = placed::droop_placed(board, rail, plan, options)?;
        return Ok(StepWaveform { waveform: d.waveform, meets: d.meets });
    }
    let Some((main, board_modes)) = modes_of(&plan) else {
        let d = fallback(board, rail_index, rail, &plan, options)?;
        return Ok(StepWaveform { waveform: d.waveform, meets: d.meets });
    };
    // The board node's modes stay in the walk: its samples' times follow both nodes, and the waveform is taken
    // on those samples.
    let samples = step_walk(&plan, &main, board_modes.as_ref());
    let step = step_figures(rail, &plan, &samples);
    Ok(StepWaveform { waveform: step.waveform, meets: step.meets })
}

/// The walk of the load's step (a ramp over rise/0.8 to ΔI) through the modes.
fn step_walk(plan: &Plan, main: &Modal, board: Option<&Modal>) -> Samples {
    let load = Pwl { corners: vec![(0.0, 0.0), (plan.ramp_s, plan.step_a)] };
    response::walk(&Walk {
        main,
        board,
        load: &load,
        window_s: plan.window_s,
        grid_points: plan.points,
        max_samples: MAX_SAMPLES,
    })
}

/// The step's own figures from its walk: its lowest point, the verdict and the waveform shown.
struct StepFigures {
    min_v: f64,
    t_min_s: f64,
    droop_v: f64,
    allowed_v: f64,
    meets: bool,
    waveform: Vec<[f64; 2]>,
}

fn step_figures(rail: &Rail, plan: &Plan, s: &Samples) -> StepFigures {
    let nominal_v = plan.nominal_v;
    let (_, t_min_s, droop_v) = s.peak;
    let min_v = nominal_v - droop_v;
    let allowed_v = rail.voltage_v * rail.ripple_pct / 100.0;
    StepFigures {
        min_v,
        t_min_s,
        droop_v,
        allowed_v,
        meets: droop_v <= allowed_v,
        waveform: with_point(
            decimate(&s.t, &s.main, nominal_v, plan.window_s, plan.points),
            t_min_s,
            min_v,
            plan.window_s,
        ),
    }
}

/// When the poles cannot be found: the reference integrator for the step (within its step budget), no pattern.
fn fallback(
    board: &Board,
    rail_index: usize,
    rail: &Rail,
    plan: &Plan,
    options: &DroopOptions,
) -> Result<Droop, DroopError> {
    let step = step_integrated(board, rail_index, &DroopOptions { band_limit: Some(false), ..*options })?;
    let t: Vec<f64> = step.waveform.iter().map(|p| p[0]).collect();
    let v: Vec<f64> = step.waveform.iter().map(|p| plan.nominal_v - p[1]).collect();
    let n = v.len();
    let samples = Samples {
        peak: (0, step.t_min_s, plan.nominal_v - step.min_v),
        t,
        main: v.clone(),
        board: None,
        board_peak: None,
        final_drop: v.last().copied().unwrap_or(0.0),
        end_bound: f64::INFINITY,
        end_s: plan.window_s,
        resolved: true,
        undamped: false,
    };
    let mut d = assemble(rail, &Plan { filter: None, ..plan.clone_plan() }, &samples, None);
    d.worst_case = WorstCase::Unbounded;
    d.worst_case_meets = false;
    d.warnings.push(format!(
        "the rail's poles could not be found: the step droop comes from the time-stepping reference ({n} points, \
         not filtered to the band), and no worst pattern is given"
    ));
    Ok(d)
}

impl Plan {
    fn clone_plan(&self) -> Plan {
        Plan { network: self.network.clone(), ..*self }
    }
}

/// The figures from a walk of the step response.
fn assemble(rail: &Rail, plan: &Plan, s: &Samples, main: Option<&Modal>) -> Droop {
    let nominal_v = plan.nominal_v;
    let StepFigures { min_v, t_min_s, droop_v, allowed_v, meets, waveform } = step_figures(rail, plan, s);
    let final_v = nominal_v - s.final_drop;
    let tolerance = 0.1 * (s.final_drop - droop_v).abs().max(droop_v.abs());
    let settling_s = if s.undamped || s.end_bound > tolerance {
        None
    } else {
        match s.main.iter().rposition(|&x| (x - s.final_drop).abs() > tolerance) {
            None => Some(0.0),
            Some(n) => Some(s.t.get(n + 1).copied().unwrap_or(s.t[n])),
        }
    };
    let board_node = match (&s.board, s.board_peak) {
        (Some(b), Some((_, t, p))) => Some(NodeDroop {
            min_v: nominal_v - p,
            t_min_s: t,
            droop_v: p,
            waveform: with_point(
                decimate(&s.t, b, nominal_v, plan.window_s, plan.points),
                t,
                nominal_v - p,
                plan.window_s,
            ),
        }),
        _ => None,
    };
    let mut warnings = Vec::new();
    if !s.resolved {
        warnings.push(format!(
            "the window ({:.3e} s) is too long to follow the rail's fastest live dynamics in {MAX_SAMPLES} samples: \
             the waveform is followed to {:.3e} s",
            plan.window_s, s.end_s
        ));
    }
    if plan.window_s < plan.ramp_s {
        warnings.push(format!(
            "the window ({:.3e} s) ends before the load's edge does ({:.3e} s): the figures are over the whole \
             response, the waveform shows only its start",
            plan.window_s, plan.ramp_s
        ));
    }
    if t_min_s > plan.window_s {
        warnings.push(format!(
            "the lowest voltage comes at {t_min_s:.3e} s, after the window's end ({:.3e} s): widen the window to see it",
            plan.window_s
        ));
    }
    let (min_interval_s, min_interval_from) = min_interval(rail, plan.band_hz);
    let max_pulses = max_pulses(rail);
    let worst_case = if s.undamped {
        WorstCase::Unbounded
    } else {
        let mut w = pattern::worst_pattern(&s.t, &s.main, min_interval_s, max_pulses);
        // A load still on at the observed instant (its "off" at age 0) stays on for its shortest interval: its off
        // edge moves into the future (a negative age, no effect on the drop at the instant), so the pattern given
        // keeps every interval.
        for p in w.pulses.iter_mut().filter(|p| p.1 <= 0.0) {
            p.1 = p.1.min(p.0 - min_interval_s);
        }
        let t_obs = w.pulses.iter().map(|p| p.0).fold(0.0, f64::max);
        let mut pattern: Vec<Pulse> =
            w.pulses.iter().map(|&(on, off)| Pulse { on_s: t_obs - on, off_s: t_obs - off }).collect();
        pattern.sort_by(|a, b| a.on_s.total_cmp(&b.on_s));
        // The pattern's own response, exactly, by superposing the closed-form ramp response at its edges' ages:
        // at the observed instant it is the programme's sum; the ages were picked on samples, so the instant is
        // refined within the samples' spacing there (the response between them can only go a hair lower). No walk
        // through the pattern: its cost is the pulses times the modes per evaluation, whatever the pattern's length.
        let (mut droop_v, mut t_s) = (w.droop, t_obs);
        if let (Some(m), false) = (main, w.pulses.is_empty()) {
            let ramp = response::RampStep::new(m, plan.ramp_s, plan.step_a);
            let youngest = w.pulses.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
            let j = s.t.partition_point(|&x| x < youngest);
            let gap = |k: usize, l: usize| match (s.t.get(k), s.t.get(l)) {
                (Some(a), Some(b)) => (b - a).abs(),
                _ => 0.0,
            };
            let d = gap(j, j + 1).max(if j > 0 { gap(j - 1, j) } else { 0.0 });
            let at = |delta: f64| ramp.pattern_drop(&w.pulses, delta);
            let v0 = at(0.0);
            if d > 0.0 {
                let (dm, _) = crate::analysis::findings::golden_section_max(-d, d, 1e-4 * d, at);
                let vm = at(dm);
                if vm > v0 {
                    (droop_v, t_s) = (vm, t_obs + dm);
                }
            }
        }
        let dominant_hz = (pattern.len() >= 2).then(|| {
            let span = pattern[pattern.len() - 1].on_s - pattern[0].on_s;
            (pattern.len() - 1) as f64 / span
        });
        // A mode so lightly damped that the pumped droop leaves the numbers (found by the property test on a
        // 1 H source over 2e7 F) is, for any figure the tool could print, the undamped case.
        if droop_v.is_finite() {
            WorstCase::Bounded { droop_v, pattern, t_s, dominant_hz }
        } else {
            WorstCase::Unbounded
        }
    };
    let worst_case_meets = worst_case.droop_v().is_some_and(|v| v <= allowed_v);
    let r_dc = s.final_drop / plan.step_a;
    Droop {
        rail: rail.name.clone(),
        node: plan.network.verdict_view(),
        board_node,
        step_a: plan.step_a,
        rise_s: plan.rise_s,
        ramp_s: plan.ramp_s,
        window_s: plan.window_s,
        filter: plan.filter,
        nominal_v,
        min_v,
        t_min_s,
        droop_v,
        allowed_v,
        meets,
        final_v,
        settling_s,
        waveform,
        worst_case,
        worst_case_meets,
        min_interval_s,
        min_interval_from,
        max_pulses,
        // On a placed rail the lumped network's peak is not the load's: the caller gives no estimate there.
        sustained: if rail.placement.is_none() {
            sustained(rail, &plan.network, plan.band_hz, plan.step_a, r_dc)
        } else {
            None
        },
        warnings,
        loads: Vec::new(),
    }
}

/// The rail's voltage under a load pattern.
#[derive(Debug, Clone, PartialEq)]
pub struct PatternResponse {
    /// (t, V) on the output grid plus each interval's lowest and highest point.
    pub waveform: Vec<[f64; 2]>,
    /// When the voltage is lowest, s.
    pub t_min_s: f64,
    /// The lowest voltage, V.
    pub min_v: f64,
}

/// The load current of a pattern of ramped pulses as piecewise-linear corners (exact: the current is linear
/// between them).
fn pattern_load(pattern: &[Pulse], step_a: f64, ramp_s: f64) -> Pwl {
    let mut times: Vec<f64> = vec![0.0];
    for p in pattern {
        times.extend([p.on_s, p.on_s + ramp_s, p.off_s, p.off_s + ramp_s]);
    }
    times.retain(|t| t.is_finite() && *t >= 0.0);
    times.sort_by(f64::total_cmp);
    times.dedup();
    let ramp = |x: f64| (x / ramp_s).clamp(0.0, 1.0);
    let corners = times
        .iter()
        .map(|&t| (t, step_a * pattern.iter().map(|p| ramp(t - p.on_s) - ramp(t - p.off_s)).sum::<f64>()))
        .collect();
    Pwl { corners }
}

/// The rail's voltage under any on/off pattern of amplitude `step_a` (ramps of rise/0.8) over the window, from
/// the same exact modal response [`droop`] uses, filtered to the band as [`droop`] says. On a placed rail the
/// voltage is at load `at` (index among the rail's loads, required there), every load toggling together as
/// [`droop`] takes them, through that load's own model; on a lumped rail `at` must be `None`.
pub fn pattern_response(
    board: &Board,
    rail_index: usize,
    at: Option<usize>,
    pattern: &[Pulse],
    options: &DroopOptions,
) -> Result<PatternResponse, DroopError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| DroopError::BadOption("no such rail".into()))?;
    let plan = plan(board, rail, options)?;
    if pattern.len() > 1_000_000 {
        return Err(DroopError::BadOption(format!("a pattern may have up to 1 000 000 pulses, not {}", pattern.len())));
    }
    let (plan, main) = match (rail.placement.is_some(), at) {
        (true, Some(k)) => placed::load_model(board, rail, plan, options, k)?,
        (true, None) => {
            return Err(DroopError::BadOption(format!(
                "rail {} is placed on a plane pair: a pattern's response is at one of its loads, name it",
                rail.name
            )));
        }
        (false, Some(_)) => {
            return Err(DroopError::BadOption(format!(
                "rail {} is one node (no plane pair): its pattern's response is not at a load",
                rail.name
            )));
        }
        (false, None) => {
            let (main, _) = modes_of(&plan).ok_or_else(|| {
                DroopError::BadOption(format!(
                    "the poles of rail {} could not be found for a pattern response",
                    rail.name
                ))
            })?;
            (plan, main)
        }
    };
    let load = pattern_load(pattern, plan.step_a, plan.ramp_s);
    let s = response::walk(&Walk {
        main: &main,
        board: None,
        load: &load,
        window_s: plan.window_s,
        grid_points: plan.points,
        max_samples: MAX_SAMPLES,
    });
    // The lowest voltage within the window.
    let (mut t_min_s, mut peak) = (0.0, f64::NEG_INFINITY);
    for (t, v) in s.t.iter().zip(&s.main) {
        if *t <= plan.window_s && *v > peak {
            (t_min_s, peak) = (*t, *v);
        }
    }
    Ok(PatternResponse {
        waveform: decimate(&s.t, &s.main, plan.nominal_v, plan.window_s, plan.points),
        t_min_s,
        min_v: plan.nominal_v - peak,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A rail whose every branch has resistance has no undamped mode, and its step settles.
    #[test]
    fn a_damped_rail_settles() {
        let text = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/tests/networks/package_die.json"))
            .expect("test network");
        let board = crate::io::parse_board(&text, "package_die.json").expect("valid");
        let network = Network::of_rail(&board, &board.rails[0]);
        let modes = rail_modes(&network).expect("poles");
        for (p, r) in &modes.main.modes {
            assert!(p.re < -1e-6 * p.norm(), "an undamped pole {p} (residue {r})");
        }
        let d = droop(&board, 0, &DroopOptions { window_s: Some(4e-6), ..Default::default() }).expect("droop");
        assert!(d.settling_s.is_some());
    }
}
