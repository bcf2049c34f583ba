//! Droop in the time domain: the rail's voltage after a load-current step, and the worst-case on/off pattern.
//!
//! Method: the rail network is integrated in time with the trapezoidal rule (the companion-model method SPICE
//! uses), on a fixed step fine enough for every branch's own dynamics. Each series R-L-C branch becomes a
//! conductance G and a history current J per step, so one step costs one pass over the branches and one scalar
//! solve of the rail node's current balance. The source branch ties the rail through its R-L to an ideal supply
//! at the rail voltage; the run starts from the DC operating point (no load current, every capacitor charged to
//! the rail voltage, no current anywhere), and the load draws a linear ramp from 0 to ΔI over the rise time.
//!
//! The worst case over every on/off pattern of amplitude ΔI with that rise time follows from linearity (the idea
//! of the reverse pulse technique, Drabkin et al., EPEP 2002): a pattern is a sum of ±ramp-steps, so its droop at
//! an instant T is an alternating sum of the step-droop s(τ) at the edges' ages τ. That sum is largest when each
//! "on" interval spans one rise of s(τ) (from a local minimum to the next local maximum), so the worst droop is
//! the total rise of s over the window, and the pattern switches the load on and off at those extrema.

use super::findings::scan;
use super::network::{Branch, Network, View};
use crate::model::{Board, Rail};
use crate::physics::SeriesRlc;
use std::fmt;

/// How to run a droop analysis; `None` fields take the defaults documented on each.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct DroopOptions {
    /// Current step, A. Default: the rail's total ΔI.
    pub step_a: Option<f64>,
    /// 10-90 % edge taken as a linear ramp of this duration, s. Default: the fastest load's rise time, or 1 ns.
    pub rise_s: Option<f64>,
    /// Simulated time, s. Default: five periods of the network's lowest anti-resonance (and at least 200 rise
    /// times), so the minimum and the settling both fall inside.
    pub window_s: Option<f64>,
    /// Points of the returned waveform (the integration itself runs on a finer step). Default 2000.
    pub points: Option<usize>,
}

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
    /// The step's waveform there: (t, V) at evenly spaced times over the window.
    pub waveform: Vec<[f64; 2]>,
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
    /// The rise time used, s.
    pub rise_s: f64,
    /// The window simulated, s.
    pub window_s: f64,
    /// The integration step, s.
    pub dt_s: f64,
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
    /// When the voltage last leaves final ± 10 % of the peak droop; `None` if it has not settled in the window.
    pub settling_s: Option<f64>,
    /// The step's waveform: (t, V) at evenly spaced times over the window.
    pub waveform: Vec<[f64; 2]>,
    /// The worst droop of any on/off pattern of this amplitude and rise time, V.
    pub worst_case_droop_v: f64,
    /// The pattern that reaches it; its droop peaks at `worst_case_t_s`.
    pub worst_case_pattern: Vec<Pulse>,
    /// When the worst-case pattern reaches its lowest voltage, s.
    pub worst_case_t_s: f64,
    /// True when the worst-case droop is within the allowed band.
    pub worst_case_meets: bool,
}

/// A branch in the time domain: series R, L and (optionally) C between two points, with its state.
struct TimeBranch {
    r: f64,
    l: f64,
    /// 1/C, or 0 for a branch without capacitor.
    c_inv: f64,
    /// Current through the branch, A.
    i: f64,
    /// Capacitor voltage plus any fixed potential at the far end (the supply, for the source), V.
    vc: f64,
    /// The voltage across the branch at the last step, V.
    v: f64,
}

impl TimeBranch {
    fn new(b: &Branch, vc: f64, v: f64) -> TimeBranch {
        TimeBranch { r: b.rlc.r_ohm, l: b.rlc.l_h, c_inv: b.rlc.c_f.map_or(0.0, |c| 1.0 / c), i: 0.0, vc, v }
    }

    /// The branch over the next step as i1 = (v1 − e)/k: its discrete impedance k and the voltage e its history
    /// leaves.
    ///  BE:  v1 = R i1 + L (i1 − i0)/h + vc1,  vc1 = vc0 + h i1 / C
    ///  TR:  (v1 + v0)/2 = R (i1 + i0)/2 + L (i1 − i0)/h + (vc1 + vc0)/2,  vc1 = vc0 + h (i0 + i1) / (2C)
    fn companion(&self, h: f64, restart: bool) -> (f64, f64) {
        if restart {
            (self.r + self.l / h + h * self.c_inv, self.vc - self.l / h * self.i)
        } else {
            let k = self.r + 2.0 * self.l / h + h * self.c_inv / 2.0;
            (k, 2.0 * self.vc - self.v - self.i * (2.0 * self.l / h - self.r - h * self.c_inv / 2.0))
        }
    }

    /// Take the step: the new voltage across is `v1`.
    fn advance(&mut self, v1: f64, (k, e): (f64, f64), h: f64, restart: bool) {
        let i1 = if k > 0.0 { (v1 - e) / k } else { self.i };
        self.vc += if restart { h * self.c_inv * i1 } else { h * self.c_inv * (self.i + i1) / 2.0 };
        self.i = i1;
        self.v = v1;
    }
}

/// The fixed-step integrator of one rail: the trapezoidal rule, with a backward-Euler step wherever the load's
/// slope jumps (as SPICE does at breakpoints). The restart matters because the rail node may see only inductive
/// branches: its voltage then jumps with the load's slope, and a trapezoidal step across the jump would leave an
/// undamped step-to-step ringing.
///
/// With a package, the load draws its current at the die node; the board node and the die node are solved
/// together (two current balances) each step.
struct Integrator {
    branches: Vec<TimeBranch>,
    /// The package from the board node to the die node, and the die capacitance, when given.
    package: Option<TimeBranch>,
    die: Option<TimeBranch>,
    /// The board node is tied to the supply by a branch of zero impedance.
    pinned: bool,
    supply_v: f64,
    dt: f64,
    v_board: f64,
    v_die: f64,
}

impl Integrator {
    fn new(network: &Network, supply_v: f64, dt: f64) -> Integrator {
        // DC operating point: every capacitor holds the rail voltage, the source's far end is the supply, no
        // current flows, and nothing drops across the package.
        let branches: Vec<TimeBranch> =
            network.branches.iter().map(|b| TimeBranch::new(b, supply_v, supply_v)).collect();
        let pinned = branches.iter().any(|b| b.r == 0.0 && b.l == 0.0 && b.c_inv == 0.0);
        let package = network.package.as_ref().map(|b| TimeBranch::new(b, 0.0, 0.0));
        let die = network.die.as_ref().map(|b| TimeBranch::new(b, supply_v, supply_v));
        Integrator { branches, package, die, pinned, supply_v, dt, v_board: supply_v, v_die: supply_v }
    }

    /// Advance one step to a load current `i_load`; `restart` takes a backward-Euler step (the load's slope
    /// changed inside or at the start of this step). Returns the (board, die) node voltages; the die is the board
    /// node when the rail has no package.
    fn step(&mut self, i_load: f64, restart: bool) -> (f64, f64) {
        let h = self.dt;
        let coefficients: Vec<(f64, f64)> = self.branches.iter().map(|b| b.companion(h, restart)).collect();
        let (mut g, mut j) = (0.0, 0.0);
        for &(k, e) in &coefficients {
            g += 1.0 / k;
            j += e / k;
        }
        let pkg = self.package.as_ref().map(|p| p.companion(h, restart));
        let die = self.die.as_ref().map(|d| d.companion(h, restart));
        let (vb, vd) = match pkg {
            // The load at the board node: Σ (vb − e)/k + i_load = 0.
            None => (if self.pinned { self.supply_v } else { (j - i_load) / g }, f64::NAN),
            // A short package: one node.
            Some((0.0, _)) => {
                let (gd, jd) = die.map_or((0.0, 0.0), |(k, e)| (1.0 / k, e / k));
                let v = if self.pinned { self.supply_v } else { (j + jd - i_load) / (g + gd) };
                (v, v)
            }
            Some((kp, ep)) => {
                // Board: Σ (vb − e)/k + (vb − vd − ep)/kp = 0
                // Die:   −(vb − vd − ep)/kp + (vd − ed)/kd + i_load = 0
                let gp = 1.0 / kp;
                let (gd, jd) = die.map_or((0.0, 0.0), |(k, e)| (1.0 / k, e / k));
                if self.pinned {
                    let vb = self.supply_v;
                    (vb, (gp * (vb - ep) + jd - i_load) / (gp + gd))
                } else {
                    let (a11, a12, b1) = (g + gp, -gp, j + gp * ep);
                    let (a21, a22, b2) = (-gp, gp + gd, -gp * ep + jd - i_load);
                    let det = a11 * a22 - a12 * a21;
                    ((b1 * a22 - a12 * b2) / det, (a11 * b2 - a21 * b1) / det)
                }
            }
        };
        for (b, c) in self.branches.iter_mut().zip(coefficients) {
            b.advance(vb, c, h, restart);
        }
        if let (Some(p), Some(c)) = (self.package.as_mut(), pkg) {
            p.advance(vb - vd, c, h, restart);
        }
        if let (Some(d), Some(c)) = (self.die.as_mut(), die) {
            d.advance(vd, c, h, restart);
        }
        self.v_board = vb;
        self.v_die = if vd.is_nan() { vb } else { vd };
        (self.v_board, self.v_die)
    }
}

/// Everything a run needs, resolved from the options and the network.
struct Plan {
    network: Network,
    nominal_v: f64,
    step_a: f64,
    rise_s: f64,
    window_s: f64,
    points: usize,
    dt: f64,
    steps: usize,
}

/// The most integration steps one run may take; past this the step is widened (and stays far below the rise).
const MAX_STEPS: usize = 4_000_000;

fn plan(board: &Board, rail: &Rail, options: &DroopOptions) -> Result<Plan, DroopError> {
    let source = rail.source.ok_or_else(|| DroopError::NoDcPath { rail: rail.name.clone() })?;
    let step_a = options.step_a.unwrap_or_else(|| rail.total_step_a());
    let rise_s = options.rise_s.or_else(|| rail.fastest_rise_s()).unwrap_or(1e-9);
    let points = options.points.unwrap_or(2000);
    if !(step_a.is_finite() && step_a > 0.0) {
        return Err(DroopError::BadOption(format!("the step must be greater than 0 A, not {step_a}")));
    }
    if !(rise_s.is_finite() && rise_s > 0.0) {
        return Err(DroopError::BadOption(format!("the rise time must be greater than 0 s, not {rise_s}")));
    }
    if !(2..=1_000_000).contains(&points) {
        return Err(DroopError::BadOption(format!("the waveform needs 2 to 1 000 000 points, not {points}")));
    }
    let network = Network::of_rail(board, rail);
    let window_s = match options.window_s {
        Some(w) if w.is_finite() && w > 0.0 => w,
        Some(w) => return Err(DroopError::BadOption(format!("the window must be greater than 0 s, not {w}"))),
        None => default_window(&network, source.r_ohm, source.l_h, rise_s),
    };
    // Resolve the fastest dynamics of any branch (self-resonance, L/R and RC corners) with 40 steps a period,
    // the rise with 50 steps, and the output grid.
    let mut f_fast: f64 = 0.0;
    for b in network.branches.iter().chain(&network.package).chain(&network.die) {
        let (r, l) = (b.rlc.r_ohm, b.rlc.l_h);
        if let Some(f0) = b.rlc.self_resonance_hz() {
            f_fast = f_fast.max(f0);
        }
        if l > 0.0 && r > 0.0 {
            f_fast = f_fast.max(r / (crate::physics::TWO_PI * l));
        }
        if let (Some(c), true) = (b.rlc.c_f, l == 0.0 && r > 0.0) {
            f_fast = f_fast.max(1.0 / (crate::physics::TWO_PI * r * c));
        }
    }
    if let (Some(p), Some(d)) = (&network.package, &network.die)
        && let Some(f0) = (SeriesRlc { r_ohm: 0.0, l_h: p.rlc.l_h, c_f: d.rlc.c_f }).self_resonance_hz()
    {
        f_fast = f_fast.max(f0);
    }
    let mut dt = (window_s / points as f64).min(rise_s / 50.0);
    if f_fast > 0.0 {
        dt = dt.min(1.0 / (40.0 * f_fast));
    }
    if window_s / dt > MAX_STEPS as f64 {
        dt = window_s / MAX_STEPS as f64;
    }
    // Whole steps per rise, so the end of the ramp (where the droop often bottoms out) falls on a step.
    let per_rise = (rise_s / dt).ceil().max(1.0);
    dt = rise_s / per_rise;
    let steps = ((window_s / dt).round() as usize).max(1);
    Ok(Plan { network, nominal_v: rail.voltage_v, step_a, rise_s, window_s, points, dt, steps })
}

/// Five periods of the lowest anti-resonance (where the regulator hands over to the capacitors), at least 200
/// rise times and at least five L/R time constants of the source.
fn default_window(network: &Network, r: f64, l: f64, rise_s: f64) -> f64 {
    let view = network.verdict_view();
    let wide = scan(&|f| network.impedance_in(f, view), [1.0, 1e10], 1500, f64::INFINITY);
    let mut window = 200.0 * rise_s;
    if let Some(p) = wide.peaks.first() {
        window = window.max(5.0 / p.freq_hz);
    }
    if r > 0.0 && l > 0.0 {
        window = window.max(5.0 * l / r);
    }
    window.min(1.0)
}

/// The voltages of one run at every integration step (index 0 is t = 0).
struct Run {
    /// At the node the figures are taken at (the die when the rail gives a package).
    main: Vec<f64>,
    /// At the board node, when the main node is the die.
    board: Option<Vec<f64>>,
}

/// Run the integrator under a load current whose slope changes only at `breakpoints` (s).
fn integrate(plan: &Plan, load: impl Fn(f64) -> f64, breakpoints: &[f64]) -> Run {
    let mut sim = Integrator::new(&plan.network, plan.nominal_v, plan.dt);
    let mut sorted: Vec<f64> = breakpoints.to_vec();
    sorted.sort_by(f64::total_cmp);
    let mut next = 0;
    let with_die = plan.network.package.is_some();
    let mut v = Vec::with_capacity(plan.steps + 1);
    let mut board = Vec::with_capacity(if with_die { plan.steps + 1 } else { 0 });
    v.push(plan.nominal_v);
    if with_die {
        board.push(plan.nominal_v);
    }
    // A breakpoint within half a step of a grid time belongs to that time (pulse edges are multiples of dt).
    let tol = 0.5 * plan.dt;
    for n in 1..=plan.steps {
        let t0 = (n - 1) as f64 * plan.dt;
        let mut restart = n == 1;
        while next < sorted.len() && sorted[next] < n as f64 * plan.dt - tol {
            restart |= sorted[next] >= t0 - tol;
            next += 1;
        }
        let (vb, vd) = sim.step(load(n as f64 * plan.dt), restart);
        if with_die {
            v.push(vd);
            board.push(vb);
        } else {
            v.push(vb);
        }
    }
    Run { main: v, board: with_die.then_some(board) }
}

/// Where the load's slope changes for a pattern: the start and end of every ramp.
fn pattern_breakpoints(pattern: &[Pulse], rise_s: f64) -> Vec<f64> {
    pattern.iter().flat_map(|p| [p.on_s, p.on_s + rise_s, p.off_s, p.off_s + rise_s]).collect()
}

/// Resample the integration to `points` evenly spaced times (linear between steps).
fn resample(v: &[f64], dt: f64, window_s: f64, points: usize) -> Vec<[f64; 2]> {
    (0..points)
        .map(|k| {
            let t = window_s * k as f64 / (points - 1) as f64;
            let x = t / dt;
            let i = (x.floor() as usize).min(v.len() - 1);
            let j = (i + 1).min(v.len() - 1);
            let frac = x - i as f64;
            [t, v[i] + (v[j] - v[i]) * frac]
        })
        .collect()
}

/// The lowest sample, refined by a parabola through it and its neighbours where the curve is smooth there (not
/// at a breakpoint of the load, where the voltage has a corner); (t, v).
fn minimum(v: &[f64], dt: f64, breakpoints: &[f64]) -> (f64, f64) {
    let (i, &vmin) = v.iter().enumerate().min_by(|a, b| a.1.total_cmp(b.1)).unwrap_or((0, &f64::NAN));
    let t = i as f64 * dt;
    let at_corner = breakpoints.iter().any(|b| (b - t).abs() <= 1.5 * dt);
    if i == 0 || i + 1 >= v.len() || at_corner {
        return (i as f64 * dt, vmin);
    }
    let (a, b, c) = (v[i - 1], v[i], v[i + 1]);
    let denom = a - 2.0 * b + c;
    if denom <= 0.0 {
        return (i as f64 * dt, vmin);
    }
    let shift = 0.5 * (a - c) / denom;
    (((i as f64) + shift) * dt, b - 0.25 * (a - c) * shift)
}

/// The worst on/off pattern from the step droop s (s[n] = droop n steps after an edge): the rises of s between
/// its local extrema (with a small hysteresis so numerical ripple makes no extra pulses) give the "on" intervals.
fn worst_pattern(s: &[f64], dt: f64) -> (f64, Vec<Pulse>, f64) {
    let scale = s.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    let eps = 1e-6 * scale;
    // Zig-zag extrema of s(τ), τ = n·dt, starting from τ = 0 (s = 0).
    let mut rises: Vec<(usize, usize)> = Vec::new(); // (index of minimum, index of maximum)
    let mut low = 0usize;
    let mut high: Option<usize> = None;
    for (n, &x) in s.iter().enumerate() {
        match high {
            None => {
                if x < s[low] {
                    low = n;
                } else if x > s[low] + eps {
                    high = Some(n);
                }
            }
            Some(h) => {
                if x > s[h] {
                    high = Some(n);
                } else if x < s[h] - eps {
                    rises.push((low, h));
                    low = n;
                    high = None;
                }
            }
        }
    }
    if let Some(h) = high {
        rises.push((low, h));
    }
    let total: f64 = rises.iter().map(|&(lo, hi)| s[hi] - s[lo]).sum();
    // Observation instant T = the age of the oldest edge; edges at T − τ. An "on" interval spans τ from the
    // maximum (switch on) down to the minimum (switch off); a minimum at τ = 0 means the load stays on until T.
    let t_obs = rises.iter().map(|&(_, hi)| hi as f64 * dt).fold(0.0, f64::max);
    let mut pattern: Vec<Pulse> =
        rises.iter().map(|&(lo, hi)| Pulse { on_s: t_obs - hi as f64 * dt, off_s: t_obs - lo as f64 * dt }).collect();
    pattern.sort_by(|a, b| a.on_s.total_cmp(&b.on_s));
    (total, pattern, t_obs)
}

/// Droop of rail `rail_index` after a load step, and the worst case over on/off patterns.
pub fn droop(board: &Board, rail_index: usize, options: &DroopOptions) -> Result<Droop, DroopError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| DroopError::BadOption("no such rail".into()))?;
    let plan = plan(board, rail, options)?;
    let (step_a, rise_s) = (plan.step_a, plan.rise_s);
    let breakpoints = [0.0, rise_s];
    let run = integrate(&plan, |t| step_a * (t / rise_s).clamp(0.0, 1.0), &breakpoints);
    let v = run.main;
    let (t_min_s, min_v) = minimum(&v, plan.dt, &breakpoints);
    let nominal_v = plan.nominal_v;
    let droop_v = nominal_v - min_v;
    let allowed_v = rail.voltage_v * rail.ripple_pct / 100.0;
    // At DC the step flows through the source's and the package's resistance.
    let dc_r = rail.source.map_or(0.0, |s| s.r_ohm) + rail.package.map_or(0.0, |p| p.r_ohm);
    let final_v = nominal_v - step_a * dc_r;
    let board_node = run.board.map(|b| {
        let (t_min_s, min_v) = minimum(&b, plan.dt, &breakpoints);
        NodeDroop {
            min_v,
            t_min_s,
            droop_v: nominal_v - min_v,
            waveform: resample(&b, plan.dt, plan.window_s, plan.points),
        }
    });
    let tolerance = 0.1 * (final_v - min_v).abs().max(droop_v.abs());
    let settling_s = match v.iter().rposition(|&x| (x - final_v).abs() > tolerance) {
        None => Some(0.0),
        Some(n) if n + 1 < v.len() => Some((n + 1) as f64 * plan.dt),
        Some(_) => None,
    };
    let s: Vec<f64> = v.iter().map(|x| nominal_v - x).collect();
    let (worst_case_droop_v, worst_case_pattern, worst_case_t_s) = worst_pattern(&s, plan.dt);
    Ok(Droop {
        rail: rail.name.clone(),
        node: plan.network.verdict_view(),
        board_node,
        step_a,
        rise_s,
        window_s: plan.window_s,
        dt_s: plan.dt,
        nominal_v,
        min_v,
        t_min_s,
        droop_v,
        allowed_v,
        meets: droop_v <= allowed_v,
        final_v,
        settling_s,
        waveform: resample(&v, plan.dt, plan.window_s, plan.points),
        worst_case_droop_v,
        worst_case_pattern,
        worst_case_t_s,
        worst_case_meets: worst_case_droop_v <= allowed_v,
    })
}

/// The rail's voltage under a load pattern.
#[derive(Debug, Clone, PartialEq)]
pub struct PatternResponse {
    /// (t, V) at evenly spaced times over the window.
    pub waveform: Vec<[f64; 2]>,
    /// When the voltage is lowest, s.
    pub t_min_s: f64,
    /// The lowest voltage, V.
    pub min_v: f64,
}

/// The rail's voltage under any on/off pattern of amplitude `step_a` (ramps of `rise_s`) over `window_s`, by
/// superposing the step response [`droop`] integrates (the network is linear and time-invariant): each pulse adds
/// the step droop at its rising edge and removes it at its falling edge. Edges are taken at the nearest
/// integration step.
pub fn pattern_response(
    board: &Board,
    rail_index: usize,
    pattern: &[Pulse],
    options: &DroopOptions,
) -> Result<PatternResponse, DroopError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| DroopError::BadOption("no such rail".into()))?;
    let plan = plan(board, rail, options)?;
    let (step_a, rise_s) = (plan.step_a, plan.rise_s);
    let step = integrate(&plan, |t| step_a * (t / rise_s).clamp(0.0, 1.0), &[0.0, rise_s]).main;
    let s: Vec<f64> = step.iter().map(|x| plan.nominal_v - x).collect();
    let index = |t: f64| (t / plan.dt).round().max(0.0) as usize;
    let mut v = vec![plan.nominal_v; s.len()];
    for p in pattern {
        for (edge, sign) in [(index(p.on_s), 1.0), (index(p.off_s), -1.0)] {
            for (n, x) in v.iter_mut().enumerate().skip(edge) {
                *x -= sign * s[n - edge];
            }
        }
    }
    let corners = pattern_breakpoints(pattern, rise_s);
    let (t_min_s, min_v) = minimum(&v, plan.dt, &corners);
    Ok(PatternResponse { waveform: resample(&v, plan.dt, plan.window_s, plan.points), t_min_s, min_v })
}
