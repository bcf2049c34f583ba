//! The reference for the step droop: the rail's network integrated in time with the trapezoidal rule (the
//! companion-model method SPICE uses), on a fixed step fine enough for every branch's own dynamics.
//!
//! Each series R-L-C branch becomes a conductance G and a history current J per step, so one step costs one pass
//! over the branches and one scalar solve of the rail node's current balance. The source branch ties the rail
//! through its R-L to an ideal supply at the rail voltage; the run starts from the DC operating point (no load
//! current, every capacitor charged to the rail voltage, no current anywhere), and the load draws a linear ramp
//! from 0 to ΔI over rise/0.8 (so its 10-90 % time is the rise time). Its cost grows with the window over the
//! fastest dynamics, so it refuses a run of more than [`MAX_STEPS`] steps, saying how many it would need.

use super::{DroopError, DroopOptions};
use crate::analysis::findings::scan;
use crate::analysis::network::{Branch, Network};
use crate::model::{Board, Rail};
use crate::physics::SeriesRlc;

/// A branch in the time domain: series R, L and (optionally) C between two points, with its state, and the
/// regulator's crossover tank in series when the source gives its loop.
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
    tank: Option<TimeTank>,
}

/// A parallel R ∥ L ∥ C in the time domain: its voltage, its inductor's current and its capacitor's current.
struct TimeTank {
    g_r: f64,
    l: f64,
    c: f64,
    v: f64,
    i_l: f64,
    i_c: f64,
}

impl TimeTank {
    /// The tank over the next step as i1 = G·v1 + J (its current from its voltage).
    ///  BE:  i_L1 = i_L0 + h v1/L,  i_C1 = C (v1 − v0)/h
    ///  TR:  i_L1 = i_L0 + h (v0 + v1)/(2L),  i_C1 = 2C (v1 − v0)/h − i_C0
    fn companion(&self, h: f64, restart: bool) -> (f64, f64) {
        if restart {
            (self.g_r + h / self.l + self.c / h, self.i_l - self.c / h * self.v)
        } else {
            let (a, b) = (h / (2.0 * self.l), 2.0 * self.c / h);
            (self.g_r + a + b, self.i_l + (a - b) * self.v - self.i_c)
        }
    }

    /// Take the step with `i1` through the tank.
    fn advance(&mut self, i1: f64, h: f64, restart: bool) {
        let (g, j) = self.companion(h, restart);
        let v1 = (i1 - j) / g;
        let (i_l, i_c) = if restart {
            (self.i_l + h * v1 / self.l, self.c * (v1 - self.v) / h)
        } else {
            (self.i_l + h * (self.v + v1) / (2.0 * self.l), 2.0 * self.c * (v1 - self.v) / h - self.i_c)
        };
        (self.v, self.i_l, self.i_c) = (v1, i_l, i_c);
    }
}

impl TimeBranch {
    fn new(b: &Branch, vc: f64, v: f64) -> TimeBranch {
        let tank = b.tank.map(|t| TimeTank { g_r: 1.0 / t.r_ohm, l: t.l_h, c: t.c_f, v: 0.0, i_l: 0.0, i_c: 0.0 });
        TimeBranch { r: b.rlc.r_ohm, l: b.rlc.l_h, c_inv: b.rlc.c_f.map_or(0.0, |c| 1.0 / c), i: 0.0, vc, v, tank }
    }

    /// The branch over the next step as i1 = (v1 − e)/k: its discrete impedance k and the voltage e its history
    /// leaves. For the series R-L-C (v_s: the voltage across it, the branch's less the tank's):
    ///  BE:  v_s1 = R i1 + L (i1 − i0)/h + vc1,  vc1 = vc0 + h i1 / C
    ///  TR:  (v_s1 + v_s0)/2 = R (i1 + i0)/2 + L (i1 − i0)/h + (vc1 + vc0)/2,  vc1 = vc0 + h (i0 + i1) / (2C)
    /// and a tank in series adds v_t1 = (i1 − J)/G.
    fn companion(&self, h: f64, restart: bool) -> (f64, f64) {
        let v_s = self.v - self.tank.as_ref().map_or(0.0, |t| t.v);
        let (k, e) = if restart {
            (self.r + self.l / h + h * self.c_inv, self.vc - self.l / h * self.i)
        } else {
            let k = self.r + 2.0 * self.l / h + h * self.c_inv / 2.0;
            (k, 2.0 * self.vc - v_s - self.i * (2.0 * self.l / h - self.r - h * self.c_inv / 2.0))
        };
        match &self.tank {
            Some(t) => {
                let (g, j) = t.companion(h, restart);
                (k + 1.0 / g, e - j / g)
            }
            None => (k, e),
        }
    }

    /// Take the step: the new voltage across is `v1`.
    fn advance(&mut self, v1: f64, (k, e): (f64, f64), h: f64, restart: bool) {
        let i1 = if k > 0.0 { (v1 - e) / k } else { self.i };
        if let Some(t) = self.tank.as_mut() {
            t.advance(i1, h, restart);
        }
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
        let pinned = branches.iter().any(|b| b.r == 0.0 && b.l == 0.0 && b.c_inv == 0.0 && b.tank.is_none());
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

/// The most integration steps one run may take.
pub const MAX_STEPS: usize = 4_000_000;

/// The reference integrator's step response at the load's node (unfiltered).
#[derive(Debug, Clone, PartialEq)]
pub struct IntegratedStep {
    /// The integration step, s.
    pub dt_s: f64,
    /// Steps taken.
    pub steps: usize,
    /// The window, s.
    pub window_s: f64,
    /// The lowest voltage, V.
    pub min_v: f64,
    /// When, s.
    pub t_min_s: f64,
    /// The step, A.
    pub step_a: f64,
    /// The ramp from 0 to ΔI, s (rise/0.8).
    pub ramp_s: f64,
    /// (t, V) at `points` evenly spaced times.
    pub waveform: Vec<[f64; 2]>,
}

/// The step droop by time-stepping: the reference the exact method is tested against. Refuses with
/// [`DroopError::TooManySteps`] when the window needs more than [`MAX_STEPS`] steps.
pub fn step_integrated(board: &Board, rail_index: usize, options: &DroopOptions) -> Result<IntegratedStep, DroopError> {
    let rail = board.rails.get(rail_index).ok_or_else(|| DroopError::BadOption("no such rail".into()))?;
    let p = super::plan(board, rail, &DroopOptions { band_limit: Some(false), ..*options })?;
    let network = p.network;
    // Resolve the fastest dynamics of any branch (self-resonance, L/R and RC corners) with 40 steps a period,
    // the ramp with 50 steps, and the output grid.
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
        if let Some(t) = &b.tank {
            // Its resonance and its R-C corner (high when the phase margin nears 90°).
            f_fast = f_fast.max(t.resonance_hz()).max(1.0 / (crate::physics::TWO_PI * t.r_ohm * t.c_f));
        }
    }
    if let (Some(pk), Some(d)) = (&network.package, &network.die)
        && let Some(f0) = (SeriesRlc { r_ohm: 0.0, l_h: pk.rlc.l_h, c_f: d.rlc.c_f }).self_resonance_hz()
    {
        f_fast = f_fast.max(f0);
    }
    let ramp_s = p.ramp_s;
    let mut dt = (p.window_s / p.points as f64).min(ramp_s / 50.0);
    if f_fast > 0.0 {
        dt = dt.min(1.0 / (40.0 * f_fast));
    }
    // Whole steps per ramp, so the end of the ramp (where the droop often bottoms out) falls on a step.
    let per_ramp = (ramp_s / dt).ceil().max(1.0);
    dt = ramp_s / per_ramp;
    let needed = p.window_s / dt;
    if needed.is_nan() || needed > MAX_STEPS as f64 {
        return Err(DroopError::TooManySteps { needed, limit: MAX_STEPS });
    }
    let steps = (needed.round() as usize).max(1);
    let step_a = p.step_a;
    let breakpoints = [0.0, ramp_s];
    let mut sim = Integrator::new(&network, p.nominal_v, dt);
    let mut v = Vec::with_capacity(steps + 1);
    v.push(p.nominal_v);
    let with_die = network.package.is_some();
    let tol = 0.5 * dt;
    for n in 1..=steps {
        let t0 = (n - 1) as f64 * dt;
        let restart = n == 1 || breakpoints.iter().any(|&b| b >= t0 - tol && b < n as f64 * dt - tol);
        let (vb, vd) = sim.step(step_a * (n as f64 * dt / ramp_s).clamp(0.0, 1.0), restart);
        v.push(if with_die { vd } else { vb });
    }
    let (t_min_s, min_v) = minimum(&v, dt, &breakpoints);
    Ok(IntegratedStep {
        dt_s: dt,
        steps,
        window_s: p.window_s,
        min_v,
        t_min_s,
        step_a,
        ramp_s,
        waveform: resample(&v, dt, p.window_s, p.points),
    })
}

/// Five periods of the lowest anti-resonance (where the regulator hands over to the capacitors), at least 200
/// rise times and at least five L/R time constants of the source; at most 1 s.
pub(super) fn default_window(network: &Network, rail: &Rail, rise_s: f64) -> f64 {
    let view = network.verdict_view();
    let wide = scan(&|f| network.impedance_in(f, view), [1.0, 1e10], 1500, f64::INFINITY);
    let mut window = 200.0 * rise_s;
    if let Some(p) = wide.peaks.first() {
        window = window.max(5.0 / p.freq_hz);
    }
    if let Some(s) = &rail.source
        && s.r_ohm > 0.0
        && s.l_h > 0.0
    {
        window = window.max(5.0 * s.l_h / s.r_ohm);
    }
    window.min(1.0)
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
