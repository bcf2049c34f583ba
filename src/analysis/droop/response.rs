//! The exact response of the rail's modes to a piecewise-linear load current.
//!
//! Each mode x' = p·x + i(t) is advanced over a step h on which the current is linear by the ramp-invariant
//! update x₁ = e^{ph}·x₀ + i₀·(e^{ph} − 1)/p + (i₁ − i₀)·(e^{ph} − 1 − ph)/(p²h), exact for any h, so the step is
//! chosen only to see the waveform (its fastest mode still alive, the output grid, the load's corners), never for
//! stability or accuracy. The voltage drop is Re Σ rₖ·xₖ + d·i + e·di/dt.

use super::rational::Modal;
use num_complex::Complex64;

type C = Complex64;

/// A piecewise-linear load current: corners (t, A) by time; 0 before the first, constant after the last.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Pwl {
    pub corners: Vec<(f64, f64)>,
}

impl Pwl {
    /// The current at t.
    pub fn at(&self, t: f64) -> f64 {
        let c = &self.corners;
        if c.is_empty() || t <= c[0].0 {
            return c.first().map_or(0.0, |_| if t < c[0].0 { 0.0 } else { c[0].1 });
        }
        let k = c.partition_point(|&(tc, _)| tc <= t);
        if k >= c.len() {
            return c[c.len() - 1].1;
        }
        let ((t0, i0), (t1, i1)) = (c[k - 1], c[k]);
        if t1 > t0 { i0 + (i1 - i0) * (t - t0) / (t1 - t0) } else { i1 }
    }

    /// The slope just after t (right = true) or just before it.
    pub fn slope(&self, t: f64, right: bool) -> f64 {
        let c = &self.corners;
        // The segment [c[k-1], c[k]] holding t (just after it, or just before it at a corner).
        let k = if right { c.partition_point(|&(tc, _)| tc <= t) } else { c.partition_point(|&(tc, _)| tc < t) };
        if k == 0 || k >= c.len() {
            return 0.0;
        }
        let ((t0, i0), (t1, i1)) = (c[k - 1], c[k]);
        if t1 > t0 { (i1 - i0) / (t1 - t0) } else { 0.0 }
    }

    /// The first corner strictly after t.
    pub fn next_corner(&self, t: f64) -> Option<f64> {
        let k = self.corners.partition_point(|&(tc, _)| tc <= t);
        self.corners.get(k).map(|c| c.0)
    }
}

/// (e^z − 1)/z and (e^z − 1 − z)/z², by their series near 0 where the direct forms cancel.
fn phi12(z: C) -> (C, C) {
    let r2 = z.norm_sqr();
    if r2 < 0.0625 {
        // Σ z^k/(k+1)! and Σ z^k/(k+2)!, until the terms no longer move the sums (|z| < 1/4: a term is at most a
        // quarter of the one before, so what is left is below the last term).
        let (mut t1, mut t2) = (C::new(1.0, 0.0), C::new(0.5, 0.0));
        let (mut s1, mut s2) = (t1, t2);
        for k in 1..18 {
            t1 = t1 * z / (k as f64 + 1.0);
            t2 = t2 * z / (k as f64 + 2.0);
            s1 += t1;
            s2 += t2;
            if t1.norm_sqr() < 1e-36 * s1.norm_sqr() {
                break;
            }
        }
        (s1, s2)
    } else {
        let e = z.exp();
        ((e - 1.0) / z, (e - 1.0 - z) / (z * z))
    }
}

/// One mode's update coefficients for one step length: (e^{ph}, h·φ₁(ph), h·φ₂(ph)).
type Coef = (C, C, C);

/// Step lengths whose coefficients a [`Stepper`] keeps besides the current one.
const KEPT_STEPS: usize = 12;

/// The modes' state and the update coefficients for the current step length.
#[derive(Debug, Clone)]
pub(super) struct Stepper<'a> {
    pub modal: &'a Modal,
    pub x: Vec<C>,
    h: f64,
    /// (e^{ph}, h·φ₁(ph), h·φ₂(ph)) per mode for step `h`.
    coef: Vec<Coef>,
    /// Coefficients of the step lengths used before (a few: the walk's steps are powers of two of one length).
    kept: Vec<(f64, Vec<Coef>)>,
}

impl<'a> Stepper<'a> {
    pub fn new(modal: &'a Modal) -> Stepper<'a> {
        Stepper { modal, x: vec![C::new(0.0, 0.0); modal.modes.len()], h: f64::NAN, coef: Vec::new(), kept: Vec::new() }
    }

    /// Advance by h with the current going linearly from i0 to i1.
    pub fn advance(&mut self, h: f64, i0: f64, i1: f64) {
        if h <= 0.0 {
            return;
        }
        self.shift(h, i0, i1);
    }

    /// Move forward by h > 0 with the current linear from i0 to i1 (never back: a step back grows every decaying
    /// mode by e^{|Re p|·h}). The coefficients are kept while h stays within rounding of the last step's (a step snapped to a
    /// grid time differs from its neighbours in the last bits only), so a run of equal steps costs no exponential.
    fn shift(&mut self, h: f64, i0: f64, i1: f64) {
        if (h - self.h).abs() > 1e-12 * h.abs() || self.coef.len() != self.x.len() {
            let same = |k: f64| (h - k).abs() <= 1e-12 * h.abs();
            if let Some(at) = self.kept.iter().position(|(k, _)| same(*k)) {
                let (k, c) = self.kept.swap_remove(at);
                let old = std::mem::replace(&mut self.coef, c);
                let was = std::mem::replace(&mut self.h, k);
                self.remember(was, old);
            } else {
                let old = std::mem::take(&mut self.coef);
                let was = std::mem::replace(&mut self.h, h);
                self.remember(was, old);
                self.coef = self
                    .modal
                    .modes
                    .iter()
                    .map(|&(p, _)| {
                        let z = p * h;
                        let (f1, f2) = phi12(z);
                        (z.exp(), f1 * h, f2 * h)
                    })
                    .collect();
            }
        }
        let di = i1 - i0;
        for (x, &(a, b0, b1)) in self.x.iter_mut().zip(&self.coef) {
            *x = a * *x + b0 * i0 + b1 * di;
        }
    }

    /// Keep the coefficients of step `h` for later (at most [`KEPT_STEPS`], the oldest dropped).
    fn remember(&mut self, h: f64, coef: Vec<Coef>) {
        if coef.len() == self.x.len() && h.is_finite() {
            if self.kept.len() >= KEPT_STEPS {
                self.kept.remove(0);
            }
            self.kept.push((h, coef));
        }
    }

    /// The voltage drop now, for a load current `i` with slope `di` at this instant.
    pub fn drop_with(&self, modal: &Modal, i: f64, di: f64) -> f64 {
        let sum: f64 = self.x.iter().zip(&modal.modes).map(|(x, &(_, r))| (r * x).re).sum();
        sum + modal.d * i + modal.e * di
    }

    /// How far mode k is from its steady state under a constant current `i` (x = −i/p), times its residue.
    fn deviation(&self, k: usize, i: f64) -> f64 {
        let (p, r) = self.modal.modes[k];
        let steady = if p.norm() > 0.0 { -i / p } else { C::new(0.0, 0.0) };
        (r * (self.x[k] - steady)).norm()
    }

    /// A bound on how far the drop can still move from its final value under a constant current `i` from now on:
    /// Σ |rₖ·(xₖ − xₖ,∞)| (no mode grows).
    pub fn alive(&self, i: f64) -> f64 {
        (0..self.x.len()).map(|k| self.deviation(k, i)).sum()
    }

    /// The fastest mode still more than `tol` from its steady state under `i`, rad/s (0 when none is). Compared
    /// in squares: no square root per mode.
    pub fn fastest_alive(&self, tol: f64, i: f64) -> f64 {
        let tol2 = tol * tol;
        let mut fastest2 = 0.0f64;
        for (k, &(p, r)) in self.modal.modes.iter().enumerate() {
            let p2 = p.norm_sqr();
            if p2 <= fastest2 {
                continue;
            }
            let steady = if p2 > 0.0 { -i * p.conj() / p2 } else { C::new(0.0, 0.0) };
            if (r * (self.x[k] - steady)).norm_sqr() > tol2 {
                fastest2 = p2;
            }
        }
        fastest2.sqrt()
    }

    /// Advance from t0 to t1 under `load`, splitting the step at the load's corners.
    pub fn advance_through(&mut self, load: &Pwl, t0: f64, t1: f64) {
        let mut t = t0;
        while t < t1 {
            let next = load.next_corner(t).filter(|&c| c < t1).unwrap_or(t1);
            self.advance(next - t, load.at(t), load.at(next));
            t = next;
        }
    }
}

/// Voltage drops at the times the response was sampled.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Samples {
    pub t: Vec<f64>,
    /// The drop at the load's node (left limit at a corner where it jumps).
    pub main: Vec<f64>,
    /// The drop at the board node, when the load is at the die.
    pub board: Option<Vec<f64>>,
    /// The largest drop and where: (index of the sample before it, refined t, refined drop).
    pub peak: (usize, f64, f64),
    /// The same at the board node.
    pub board_peak: Option<(usize, f64, f64)>,
    /// The drop the response settles to (all modes gone), V.
    pub final_drop: f64,
    /// At the walk's end, a bound on how far the drop can still move from `final_drop` at any later time, V.
    pub end_bound: f64,
    /// Up to when the response was followed; at least the window unless the sample limit stopped it.
    pub end_s: f64,
    /// False when the sample limit stopped the walk before the window's end (the fastest live mode was not
    /// resolved up to the end).
    pub resolved: bool,
    /// A mode with no damping carries part of the drop: it never settles and patterns can pump it without end.
    pub undamped: bool,
}

/// How the walk is asked to run.
pub(super) struct Walk<'a> {
    pub main: &'a Modal,
    pub board: Option<&'a Modal>,
    pub load: &'a Pwl,
    pub window_s: f64,
    /// Output grid times that must be sampled (evenly spaced over the window).
    pub grid_points: usize,
    /// Most adaptive samples (beyond the grid and the corners).
    pub max_samples: usize,
}

/// Samples per period of the fastest live mode (in |p|·h, radians per step).
const RADIANS_PER_STEP: f64 = 0.15;

/// Follow the response from t = 0: at every output grid time and load corner, and in between at a step that
/// resolves the fastest mode still alive; past the window's end until no mode is left (so settling is judged on
/// the whole future, not one sample), within the sample limit.
pub(super) fn walk(w: &Walk) -> Samples {
    let mut st = Stepper::new(w.main);
    let final_current = w.load.corners.last().map_or(0.0, |c| c.1);
    let final_drop = w.main.dc() * final_current;
    // Scale of the response: every mode's size after the load's first edge, and the DC drop.
    let slope_max =
        w.load.corners.windows(2).map(|c| ((c[1].1 - c[0].1) / (c[1].0 - c[0].0)).abs()).fold(0.0, f64::max);
    let first_edge = w.load.corners.windows(2).map(|c| c[1].0 - c[0].0).fold(f64::INFINITY, f64::min);
    let potential = |p: C, r: C| -> f64 {
        let z = p * first_edge;
        let (_, f2) = phi12(z);
        (r * f2).norm() * slope_max * first_edge * first_edge + (r / p).norm() * final_current.abs()
    };
    let scale = w.main.modes.iter().map(|&(p, r)| potential(p, r)).sum::<f64>() + final_drop.abs();
    let tol = 1e-7 * scale.max(1e-300);
    // The step resolves every mode carrying more than this of the response (a smaller one moves the extremes
    // between samples by less than that).
    let tol_res = 1e-5 * scale.max(1e-300);
    // Where the load moves, resolve the fastest mode it can excite.
    let fastest_possible =
        w.main.modes.iter().filter(|&&(p, r)| potential(p, r) > tol_res).map(|(p, _)| p.norm()).fold(0.0, f64::max);
    let h_fast = if fastest_possible > 0.0 { RADIANS_PER_STEP / fastest_possible } else { f64::INFINITY };
    let mut t = 0.0;
    let mut s = Samples {
        t: vec![0.0],
        main: vec![0.0],
        board: w.board.map(|_| vec![0.0]),
        peak: (0, 0.0, 0.0),
        board_peak: w.board.map(|_| (0, 0.0, 0.0)),
        final_drop,
        end_bound: 0.0,
        end_s: w.window_s,
        resolved: true,
        undamped: false,
    };
    let mut board_x: Option<Stepper> = w.board.map(Stepper::new);
    let mut adaptive = 0usize;
    let mut grid_k = 1usize;
    let mut h_live = h_fast;
    let mut count = 0usize;
    let last_corner = w.load.corners.last().map_or(0.0, |c| c.0);
    // The largest drop so far at each node: (sample index, drop, the modes' state at the sample before it), so the
    // peak is refined from where it lies instead of from t = 0, moving forward only (see `peak_of`).
    let mut best: (usize, f64, Vec<C>) = (0, 0.0, st.x.clone());
    let mut board_best: Option<(usize, f64, Vec<C>)> = board_x.as_ref().map(|b| (0, 0.0, b.x.clone()));
    // The modes' state at the previous sample (the one before the step just taken).
    let mut before: Vec<C> = st.x.clone();
    let mut board_before: Vec<C> = board_x.as_ref().map_or_else(Vec::new, |b| b.x.clone());
    loop {
        let past_window = t >= w.window_s * (1.0 - 1e-12);
        // Past the window, stop once nothing is left to see (judged every 16 steps: each test costs a square root
        // per mode, a step only a multiply-add).
        if past_window
            && count.is_multiple_of(16)
            && (st.alive(final_current) <= 1e-6 * scale.max(1e-300) || undamped_alive(&st, tol, final_current))
        {
            break;
        }
        // Re-aim the step at the fastest mode still alive now and then (it gets longer as modes die out); each
        // corner of the load excites every mode again, so the step starts over from the fastest there.
        if count.is_multiple_of(32) && t > 0.0 {
            let i_now = if t >= last_corner { final_current } else { w.load.at(t) };
            let f = st.fastest_alive(tol_res, i_now);
            h_live = if f > 0.0 { RADIANS_PER_STEP / f } else { f64::INFINITY };
            if t < last_corner {
                // Between corners the current may still ramp: never coarser than the ramp's own pace.
                h_live = h_live.min(w.load.next_corner(t).map_or(f64::INFINITY, |c| (c - t).max(h_fast)));
            }
        }
        count += 1;
        let mut next = t + h_live;
        let mut is_grid = false;
        if !past_window {
            let g = if grid_k + 1 >= w.grid_points {
                w.window_s
            } else {
                w.window_s * grid_k as f64 / (w.grid_points - 1) as f64
            };
            // Equal steps that land on the next grid time: the same step (and its coefficients) over and over.
            let gap = g - t;
            let n = if h_live.is_finite() { (gap / h_live * (1.0 - 1e-9)).ceil().max(1.0) } else { 1.0 };
            if n <= 1.0 {
                next = g;
                is_grid = true;
            } else {
                next = t + gap / n;
            }
        }
        let corner = w.load.next_corner(t);
        if let Some(c) = corner.filter(|&c| c < next) {
            next = c;
            is_grid = false;
        }
        if !next.is_finite() {
            break;
        }
        if is_grid {
            grid_k += 1;
        } else {
            adaptive += 1;
            if adaptive > w.max_samples {
                if t < w.window_s {
                    s.resolved = false;
                }
                break;
            }
        }
        if corner == Some(next) {
            h_live = h_fast;
            count = 1;
        }
        let (i0, i1) = (w.load.at(t), w.load.at(next));
        before.clone_from(&st.x);
        st.advance(next - t, i0, i1);
        if let Some(b) = board_x.as_mut() {
            board_before.clone_from(&b.x);
            b.advance(next - t, i0, i1);
        }
        t = next;
        let slope_in = w.load.slope(t, false);
        let v = st.drop_with(w.main, i1, slope_in);
        s.t.push(t);
        s.main.push(v);
        if v >= best.1 {
            best.0 = s.main.len() - 1;
            best.1 = v;
            best.2.clone_from(&before);
        }
        if let (Some(b), Some(m), Some(bv)) = (&board_x, w.board, s.board.as_mut()) {
            let vb = b.drop_with(m, i1, slope_in);
            bv.push(vb);
            if let Some(bb) = board_best.as_mut()
                && vb >= bb.1
            {
                bb.0 = bv.len() - 1;
                bb.1 = vb;
                bb.2.clone_from(&board_before);
            }
        }
        // Where the slope jumps and the drop with it (a series inductance at the node), keep the right limit too.
        let slope_out = w.load.slope(t, true);
        if w.main.e != 0.0 && slope_out != slope_in {
            s.t.push(t);
            s.main.push(st.drop_with(w.main, i1, slope_out));
            if let (Some(b), Some(m), Some(bv)) = (&board_x, w.board, s.board.as_mut()) {
                bv.push(b.drop_with(m, i1, slope_out));
            }
        }
    }
    s.end_s = t;
    s.end_bound = st.alive(final_current);
    // An undamped mode still carrying part of the drop when the walk stopped.
    s.undamped = undamped_alive(&st, 1e-4 * scale.max(1e-300), final_current);
    s.peak = peak_of(&s.t, &s.main, w.main, w.load, Some((best.0, &best.2)));
    if let (Some(b), Some(m)) = (&s.board, w.board) {
        s.board_peak = Some(peak_of(&s.t, b, m, w.load, board_best.as_ref().map(|bb| (bb.0, &bb.2[..]))));
    }
    s
}

/// True when a mode without damping (Q beyond 10⁹) carries more than `tol` of the drop.
fn undamped_alive(st: &Stepper, tol: f64, i: f64) -> bool {
    (0..st.x.len()).any(|k| {
        let p = st.modal.modes[k].0;
        p.re.abs() <= 1e-9 * p.norm() && st.deviation(k, i) > tol
    })
}

/// The largest drop: the largest sample, refined by a golden-section search on the exact response between its
/// neighbours (no search at a corner of the load, where the drop has a kink or a jump). `saved` is a sample's index
/// and the modes' state at the sample before it: when that sample is the largest, the search moves forward from its
/// left neighbour (no corner lies between neighbouring samples, so the current is linear there and one exact step
/// reaches any instant); otherwise it walks from t = 0.
///
/// Only forward: a step back by h multiplies each mode by e^{−p·h}, which for a fast mode long dead overflows (past
/// |Re p|·h ≈ 709) or amplifies its rounding; that made the pumped droop of a 1 H source over 2e7 F infinite, where
/// the steps between samples had grown to seconds while the band filter's poles decay at 10⁴ per second.
fn peak_of(t: &[f64], v: &[f64], modal: &Modal, load: &Pwl, saved: Option<(usize, &[C])>) -> (usize, f64, f64) {
    let Some((i, &best)) = v.iter().enumerate().max_by(|a, b| a.1.total_cmp(b.1)) else { return (0, 0.0, 0.0) };
    if i == 0 || i + 1 >= t.len() || t[i - 1] == t[i] || t[i + 1] == t[i] {
        return (i, t[i], best);
    }
    let at_corner = load.corners.iter().any(|&(c, _)| c == t[i]);
    if at_corner {
        return (i, t[i], best);
    }
    let (a, b) = (t[i - 1], t[i + 1]);
    let from = saved.filter(|(k, x)| *k == i && x.len() == modal.modes.len()).map(|(_, x)| x);
    let drop_at = |x: f64| match from {
        Some(state) => {
            let mut st = Stepper::new(modal);
            st.x.copy_from_slice(state);
            st.advance(x - a, load.at(a), load.at(x));
            st.drop_with(modal, load.at(x), load.slope(x, false))
        }
        None => response_at(modal, load, x),
    };
    let (tm, _) = crate::analysis::findings::golden_section_max(a, b, 1e-12 * b.abs(), drop_at);
    let vm = drop_at(tm);
    if vm >= best { (i, tm, vm) } else { (i, t[i], best) }
}

/// The drop at one instant t (left limit at a corner), from rest at t = 0.
pub(super) fn response_at(modal: &Modal, load: &Pwl, t: f64) -> f64 {
    let mut st = Stepper::new(modal);
    st.advance_through(load, 0.0, t);
    st.drop_with(modal, load.at(t), load.slope(t, false))
}

/// e^z and (e^z − 1)/z, by the series near 0 where the direct form cancels.
fn exp_phi1(z: C) -> (C, C) {
    if z.norm_sqr() < 0.0625 {
        let (f1, _) = phi12(z);
        (1.0 + z * f1, f1)
    } else {
        let e = z.exp();
        (e, (e - 1.0) / z)
    }
}

/// The exact drop at any age τ after one ramp of the load from 0 to `amp` over `ramp_s` starting at age 0, in
/// closed form per mode: on the ramp x(τ) = (amp/ramp)·τ²·φ₂(pτ), after it x(τ) = e^{p(τ−R)}·x(R) +
/// amp·(τ−R)·φ₁(p(τ−R)) (the ramp-invariant update of one step from rest). A pattern's drop is a sum of these at its
/// edges' ages, so it is evaluated at any instant without walking through the pattern; ages are used as given, so
/// an age of 10⁸ s keeps a 1 ns ramp that an absolute time of that size could not.
#[derive(Debug, Clone)]
pub(super) struct RampStep<'a> {
    modal: &'a Modal,
    ramp_s: f64,
    amp: f64,
    /// Each mode's state at the ramp's end.
    end: Vec<C>,
}

impl<'a> RampStep<'a> {
    pub fn new(modal: &'a Modal, ramp_s: f64, amp: f64) -> RampStep<'a> {
        let slope = amp / ramp_s;
        let end = modal.modes.iter().map(|&(p, _)| slope * ramp_s * ramp_s * phi12(p * ramp_s).1).collect();
        RampStep { modal, ramp_s, amp, end }
    }

    /// The drop at age τ (0 before the ramp starts; the left limit at the ramp's end).
    pub fn drop_at(&self, tau: f64) -> f64 {
        if tau.is_nan() || tau <= 0.0 {
            return 0.0;
        }
        let m = self.modal;
        let slope = self.amp / self.ramp_s;
        if tau <= self.ramp_s {
            let sum: f64 = m.modes.iter().map(|&(p, r)| (r * (slope * tau * tau * phi12(p * tau).1)).re).sum();
            sum + m.d * slope * tau + m.e * slope
        } else {
            let u = tau - self.ramp_s;
            let sum: f64 = m
                .modes
                .iter()
                .zip(&self.end)
                .map(|(&(p, r), &x_end)| {
                    let (e, f1) = exp_phi1(p * u);
                    (r * (e * x_end + self.amp * u * f1)).re
                })
                .sum();
            sum + m.d * self.amp
        }
    }

    /// A pattern's drop observed `delta` after the instant its ages are counted from: Σ S(τ_on + δ) − S(τ_off + δ).
    pub fn pattern_drop(&self, ages: &[(f64, f64)], delta: f64) -> f64 {
        ages.iter().map(|&(on, off)| self.drop_at(on + delta) - self.drop_at(off + delta)).sum()
    }
}
