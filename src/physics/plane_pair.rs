//! The plane pair as an N-port: the cavity model of a rectangular power plane over its return plane.
//!
//! The voltage between two ideal-edged planes (open edges as magnetic walls: no fringing, no radiation) obeys a
//! 2-D Helmholtz equation; expanded in the rectangle's modes, the impedance between two rectangular ports i and j
//! (uniform current over each, voltage averaged over each) is
//!
//! ```text
//! Z_ij = Z_sq/(a·b) · Σ_m Σ_n ε_m ε_n X_m(i) X_m(j) Y_n(i) Y_n(j) / (k_mn² − k²)
//! X_m(i) = cos(mπx_i/a)·sinc(mπu_i/2a),   Y_n(i) = cos(nπy_i/b)·sinc(nπv_i/2b),   k_mn² = (mπ/a)² + (nπ/b)²
//! ```
//!
//! with Z_sq the series impedance per square, Y_sq the shunt admittance per area and k² = −Z_sq·Y_sq (the cavity
//! model: T. Okoshi, Planar Circuits for Microwaves and Lightwaves, Springer 1985; G.-T. Lei, R. W. Techentin and
//! B. K. Gilbert, "High-frequency characterization of power/ground-plane structures", IEEE Trans. Microwave Theory
//! Tech. 47(5), 1999; both from memory, every formula here is checked numerically in the tests).
//!
//! Three forms are computed here:
//! - [`double_sum`]: the series as written, for tests only (it converges slowly).
//! - [`single_sum`]: the sum over one index in closed form. For a fixed m the sum over n is the 1-D Green's
//!   function of a line with open (Neumann) ends, averaged over both ports' extents; it is written as its four
//!   image terms with decaying exponentials so nothing overflows. The axis of the closed form is chosen per pair
//!   so the remaining sum decays fastest, and the number of terms follows from the accuracy asked for.
//! - [`PreparedPlane`]: a layout prepared once. With 1/(k_K² − k²) = 1/k_K² + k²/(k_K²(k_K² − k²)):
//!   `Z(f) = 11ᵀ/(a·b·Y_sq) + Z_sq·[G_s + Φ·diag(w_K k²/(k_K²(k_K² − k²)))·Φᵀ + k²·T_s + k⁴·U_s]`, where G_s (the
//!   static sum without the (0,0) mode), T_s and U_s (the 1/k_K⁴ and 1/k_K⁶ sums of the modes past the cut) are
//!   computed once from the single sum, and Φ holds the ports' values of the modes below the cut. Per frequency
//!   the work is a few small matrix products. The term left out is of order (f/f_cut)⁶ relative to the tail.

use super::jet::{Field, Jet};
use num_complex::Complex64 as C;
use std::f64::consts::PI;

/// Permeability of free space, H/m (CODATA 2018: 1.25663706212e-6).
pub const MU0: f64 = 1.256_637_062_12e-6;
/// Permittivity of free space, F/m (CODATA 2018: 8.8541878128e-12).
pub const EPS0: f64 = 8.854_187_812_8e-12;
/// Speed of light in vacuum, m/s (exact by the SI definition).
pub const C0: f64 = 299_792_458.0;

/// The conductors of the pair, as far as they add series impedance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Conductor {
    /// Perfect conductors: no conductor loss.
    Perfect,
    /// Two foils of this thickness and conductivity, with skin effect (the surface impedance of a foil).
    Foil {
        /// Thickness of each foil, m.
        thickness_m: f64,
        /// Conductivity, S/m.
        conductivity_s_m: f64,
    },
    /// A constant resistance per square for both planes together, Ω (what a SPICE mesh holds; no skin effect).
    Sheet {
        /// Ω per square.
        ohm_per_square: f64,
    },
}

/// The plane pair's outline and stack-up: a rectangle a × b with its lower-left corner at (0, 0).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stackup {
    /// Sides [a (x), b (y)], m.
    pub size_m: [f64; 2],
    /// Dielectric thickness d, m.
    pub dielectric_m: f64,
    /// Relative permittivity.
    pub er: f64,
    /// Loss tangent of the dielectric.
    pub loss_tangent: f64,
    /// Conductor loss.
    pub conductor: Conductor,
}

impl Stackup {
    /// Series impedance per square, Ω: jωμ0·d plus the conductors' share.
    pub fn series_per_square(&self, f_hz: f64) -> C {
        let w = 2.0 * PI * f_hz;
        let inductive = C::new(0.0, w * MU0 * self.dielectric_m);
        match self.conductor {
            Conductor::Perfect => inductive,
            Conductor::Sheet { ohm_per_square } => inductive + ohm_per_square,
            Conductor::Foil { thickness_m, conductivity_s_m } => {
                inductive + 2.0 * foil_surface_impedance(f_hz, thickness_m, conductivity_s_m)
            }
        }
    }

    /// Shunt admittance per area, S/m²: jω·ε0·εr·(1 − j·tanδ)/d.
    pub fn shunt_per_area(&self, f_hz: f64) -> C {
        let w = 2.0 * PI * f_hz;
        C::new(0.0, w * EPS0 * self.er / self.dielectric_m) * C::new(1.0, -self.loss_tangent)
    }

    /// k² = −Z_sq·Y_sq, 1/m².
    pub fn k2(&self, f_hz: f64) -> C {
        -self.series_per_square(f_hz) * self.shunt_per_area(f_hz)
    }

    /// The parallel-plate capacitance ε0·εr·a·b/d, F.
    pub fn plate_capacitance_f(&self) -> f64 {
        EPS0 * self.er * self.size_m[0] * self.size_m[1] / self.dielectric_m
    }

    /// The lossless resonance of mode (m, n): c/(2√εr)·√((m/a)² + (n/b)²), Hz.
    pub fn resonance_hz(&self, m: usize, n: usize) -> f64 {
        let [a, b] = self.size_m;
        C0 / (2.0 * self.er.sqrt()) * ((m as f64 / a).powi(2) + (n as f64 / b).powi(2)).sqrt()
    }

    /// The lossless wavenumber at `f_hz`, 2πf·√εr/c, 1/m.
    fn k_lossless(&self, f_hz: f64) -> f64 {
        2.0 * PI * f_hz * self.er.sqrt() / C0
    }

    /// The frequency at which k (lossless) equals `k`, Hz.
    fn freq_of_k(&self, k: f64) -> f64 {
        k * C0 / (2.0 * PI * self.er.sqrt())
    }
}

/// The surface impedance of a foil of thickness t: (1+j)/(σδ)·coth((1+j)t/δ), δ = 1/√(πfμ0σ). Its low-frequency
/// limit is 1/(σt) + jωμ0t/3 (DC resistance plus internal inductance).
pub fn foil_surface_impedance(f_hz: f64, thickness_m: f64, conductivity_s_m: f64) -> C {
    let delta = 1.0 / (PI * f_hz * MU0 * conductivity_s_m).sqrt();
    let z = C::new(1.0, 1.0) * (thickness_m / delta);
    // coth z = (1 + e^{−2z}) / (1 − e^{−2z}), with 1 − e^{−2z} = 2z·φ₁(2z) so small z does not cancel.
    let e = (-2.0 * z).exp();
    let coth = (1.0 + e) / (2.0 * z * phi(1, 2.0 * z));
    C::new(1.0, 1.0) / (conductivity_s_m * delta) * coth
}

/// A port: a rectangle centred at (x, y) with sides w (along x) and h (along y), m.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PortRect {
    /// Centre x, m.
    pub x: f64,
    /// Centre y, m.
    pub y: f64,
    /// Side along x, m.
    pub w: f64,
    /// Side along y, m.
    pub h: f64,
}

impl PortRect {
    /// A square port of side `side` centred at (x, y).
    pub fn square(x: f64, y: f64, side: f64) -> PortRect {
        PortRect { x, y, w: side, h: side }
    }

    fn along(&self, axis: usize) -> Interval {
        let (c, s) = if axis == 0 { (self.x, self.w) } else { (self.y, self.h) };
        Interval { lo: c - s / 2.0, hi: c + s / 2.0 }
    }
}

/// A closed interval along one axis.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Interval {
    lo: f64,
    hi: f64,
}

impl Interval {
    fn width(&self) -> f64 {
        self.hi - self.lo
    }
    fn centre(&self) -> f64 {
        (self.lo + self.hi) / 2.0
    }
}

/// Below this |z| [`phi`] takes its series, above it the closed form. The closed form cancels near 0: φ₂ and the
/// derivatives a jet carries lose some tens of ε/|z|³ relative, a few parts in 1e12 at the switch, far inside the
/// static sums' tolerance ([`DEFAULT_TOLERANCE`]).
const PHI_SERIES_BELOW: f64 = 0.125;

/// Terms of [`phi`]'s series after the first: the next, |z|¹⁰·k!/(10 + k)!, is below 3e-17 of the sum at the switch.
const PHI_SERIES_TERMS: usize = 9;

/// 1/n for n up to the series' last divisor, so the series multiplies where it would divide.
const RECIPROCALS: [f64; 12] =
    [0.0, 1.0, 1.0 / 2.0, 1.0 / 3.0, 1.0 / 4.0, 1.0 / 5.0, 1.0 / 6.0, 1.0 / 7.0, 1.0 / 8.0, 1.0 / 9.0, 0.1, 1.0 / 11.0];

/// φ_k(z) = Σ_j (−z)^j/(j + k)! = (e^{−z} − Σ_{j<k} (−z)^j/j!)/(−z)^k: φ₁ = (1 − e^{−z})/z, φ₂ = (e^{−z} − 1 + z)/z²
/// (the "phi functions" of exponential integrators), k = 1 or 2. Below [`PHI_SERIES_BELOW`] the series with a fixed
/// number of terms by Horner's rule, k!·φ_k = 1 + (−z)/(k + 1)·(1 + (−z)/(k + 2)·(1 + …)) (no test per term: this
/// is the static sums' innermost work); the closed form above.
fn phi<T: Field>(k: usize, z: T) -> T {
    let factorial = if k == 2 { 2.0 } else { 1.0 };
    if z.size() < PHI_SERIES_BELOW {
        let mut acc = T::real(1.0);
        for j in (1..=PHI_SERIES_TERMS).rev() {
            acc = T::real(1.0) + acc * (-z) * RECIPROCALS[k + j];
        }
        acc / factorial
    } else {
        let mut head = T::real(0.0);
        let mut power = T::real(1.0);
        for j in 0..k {
            head = head + power;
            power = power * (-z) * RECIPROCALS[j + 1];
        }
        // power is now (−z)^k/k!; the closed form needs (−z)^k itself.
        ((-z).exp() - head) / (power * factorial)
    }
}

/// ∫_p ∫_q h(y' − y) dy' dy for an even h with H'' = h, from its double antiderivative H.
fn rect_diff<T: Field>(p: Interval, q: Interval, hh: impl Fn(f64) -> T) -> T {
    hh(q.hi - p.lo) - hh(q.hi - p.hi) - hh(q.lo - p.lo) + hh(q.lo - p.hi)
}

/// As [`rect_diff`] for an H with H(0) = 0, skipping the ends that coincide (a port's own entry has two).
fn rect_diff0<T: Field>(p: Interval, q: Interval, hh: impl Fn(f64) -> T) -> T {
    let h = |s: f64| if s == 0.0 { T::real(0.0) } else { hh(s) };
    h(q.hi - p.lo) - h(q.hi - p.hi) - h(q.lo - p.lo) + h(q.lo - p.hi)
}

/// ∫_p ∫_q h(y + y') dy' dy from the double antiderivative K of h.
fn rect_sum(p: Interval, q: Interval, kk: impl Fn(f64) -> f64) -> f64 {
    kk(p.hi + q.hi) - kk(p.hi + q.lo) - kk(p.lo + q.hi) + kk(p.lo + q.lo)
}

/// The 1-D Green's function of a line of length `len` with open ends, −g'' + α²g = δ(y − y′), averaged over
/// y ∈ p and y′ ∈ q:  Σ_n ε_n cos(nπy/L)cos(nπy′/L)/(L·((nπ/L)² + α²)), averaged. Re α ≥ 0, α ≠ 0.
///
/// Written as its four image terms, e^{−α|y−y′|}, e^{−α(y+y′)}, e^{−α(2L−y−y′)}, e^{−α(2L−|y−y′|)}, over
/// 2α(1 − e^{−2αL}); every exponent has a non-positive real part, so nothing overflows for any mode. An image term
/// that does not change sign over the ports is a product of one exponential per port, and the average of
/// e^{−α(y − y₀)} over an interval of width w starting at y₀ is φ₁(αw): so the edges' two terms, and all four when
/// the ports do not overlap, are φ₁(αw_p)·φ₁(αw_q) times one exponential each (the static sums' innermost work:
/// three φ₁ and four exponentials per mode, where averaging each term on its own took about twice as many).
fn green_avg<T: Field>(alpha: T, len: f64, p: Interval, q: Interval) -> T {
    let both = phi(1, alpha * p.width()) * phi(1, alpha * q.width());
    let edges = (-alpha * (p.lo + q.lo)).exp() + (-alpha * (2.0 * len - p.hi - q.hi)).exp();
    let sum = if p.hi <= q.lo || q.hi <= p.lo {
        let (lo, hi) = if p.hi <= q.lo { (p, q) } else { (q, p) };
        // |y − y′| = y′ − y with y in the lower interval: e^{−α(hi.lo − lo.hi)} at the nearest ends, and
        // 2L − y′ + y = (2L − hi.hi) + lo.lo at the farthest.
        let direct = (-alpha * (hi.lo - lo.hi)).exp() + (-alpha * (2.0 * len - hi.hi + lo.lo)).exp();
        both * (edges + direct)
    } else {
        let area = p.width() * q.width();
        let s1 = rect_diff0(p, q, |s| phi(2, alpha * s.abs()) * (s * s)) / area;
        let e2l = (-alpha * (2.0 * len)).exp();
        let s4 = rect_diff0(p, q, |s| {
            let x = alpha * s.abs();
            if x.size() < 1.0 {
                e2l * phi(2, -x) * (s * s)
            } else {
                ((-alpha * (2.0 * len - s.abs())).exp() - e2l * (x + T::real(1.0))) / (alpha * alpha)
            }
        }) / area;
        both * edges + s1 + s4
    };
    sum / (alpha * alpha * (4.0 * len) * phi(1, alpha * (2.0 * len)))
}

/// The static remainders of the sum over n without its n = 0 term, averaged over p × q:
/// R = Σ_{n≥1} 2·cos·cos/(L(nπ/L)²), D the same over (nπ/L)⁴ and U over (nπ/L)⁶, from the Fourier series of the
/// Bernoulli polynomials on [0, 2π] (Σ cos(nx)/n^2k, each the second antiderivative of the one before, from
/// memory; the unit test checks them against the series).
fn static_remainders(len: f64, p: Interval, q: Interval) -> (f64, f64, f64) {
    let area = p.width() * q.width();
    // Integrands as polynomials in u = |y − y′| and in σ = y + y′ (each half of 2cos·cos = cos(Δ) + cos(Σ)).
    // R: L/6 − u/2 + u²/(4L);  D: L³/90 − L·u²/12 + u³/12 − u⁴/(48L);
    // U (from Σ cos(nx)/n⁶ = π⁶/945 − π⁴x²/180 + π²x⁴/144 − πx⁵/240 + x⁶/1440):
    // L⁵/945 − L³u²/180 + L·u⁴/144 − u⁵/240 + u⁶/(1440L).
    let r_coef = [len / 6.0, -0.5, 1.0 / (4.0 * len)];
    let d_coef = [len.powi(3) / 90.0, 0.0, -len / 12.0, 1.0 / 12.0, -1.0 / (48.0 * len)];
    let u_coef = [len.powi(5) / 945.0, 0.0, -len.powi(3) / 180.0, 0.0, len / 144.0, -1.0 / 240.0, 1.0 / (1440.0 * len)];
    let avg = |coef: &[f64]| {
        // Double antiderivative of Σ c_k |s|^k is Σ c_k |s|^{k+2}/((k+1)(k+2)).
        let anti = |s: f64| -> f64 {
            coef.iter().enumerate().map(|(k, c)| c * s.abs().powi(k as i32 + 2) / ((k + 1) * (k + 2)) as f64).sum()
        };
        (rect_diff(p, q, anti) + rect_sum(p, q, anti)) / area
    };
    (avg(&r_coef), avg(&d_coef), avg(&u_coef))
}

/// One port's interval along `axis` and its mode factor cos(mπc/L)·sinc(mπw/2L) along the other.
fn mode_factor(m: usize, len: f64, iv: Interval) -> f64 {
    let arg = m as f64 * PI / len;
    let half = arg * iv.width() / 2.0;
    let sinc = if half.abs() < 1e-8 { 1.0 } else { half.sin() / half };
    (arg * iv.centre()).cos() * sinc
}

/// How a pair's sum is taken: the axis summed over (modes along it) and the axis in closed form, the two ports'
/// intervals along each, and how many terms. Both sums of a pair ([`single_sum`], [`static_pair`]) read it, so the
/// choice of axis is made in one place.
struct PairPlan {
    /// Length of the plane along the summed axis, m.
    len_sum: f64,
    /// Length along the closed-form axis, m.
    len_closed: f64,
    /// The two ports along the summed axis.
    sum: (Interval, Interval),
    /// The two ports along the closed-form axis.
    closed: (Interval, Interval),
    /// The last mode index summed.
    terms: usize,
}

impl PairPlan {
    /// The plan along `sum_axis` (0: modes along x, closed form along y; 1: the reverse).
    fn along(st: &Stackup, pi: &PortRect, pj: &PortRect, sum_axis: usize, tol: f64) -> PairPlan {
        let closed = 1 - sum_axis;
        let len_sum = st.size_m[sum_axis];
        let len_closed = st.size_m[closed];
        let (p, q) = (pi.along(closed), pj.along(closed));
        let (ip, iq) = (pi.along(sum_axis), pj.along(sum_axis));
        // The smallest distance any image term decays over along the closed-form axis.
        let sep = (q.lo - p.hi).max(p.lo - q.hi).max(0.0);
        let gap = sep.min(p.lo + q.lo).min(2.0 * len_closed - p.hi - q.hi);
        let by_gap = if gap > 0.0 { (len_sum * (1.0 / tol).ln() / (PI * gap)).ceil() } else { f64::INFINITY };
        // With the powers 1/α² and 1/α³ of each line summed in closed form ([`static_pair`]), what is left of a
        // line's Green's function decays as e^{−α·d}, d the shortest non-zero distance among the intervals' ends,
        // their images in the edges and their widths, with at most 4/(α³·w_p·w_q) in front; with two sincs (each
        // at most 2L/(mπu)) the tail past M is at most 8L⁴·e^{−Mπd/L}/(π⁵·M⁴·u_i·u_j·w_p·w_q).
        let (ui, uj) = (ip.width(), iq.width());
        let d = shortest_decay(len_closed, p, q);
        let k = 8.0 * len_sum.powi(4) / (PI.powi(5) * ui * uj * p.width() * q.width());
        let tail = |m: f64| k * (-m * PI * d / len_sum).exp() / m.powi(4);
        let mut by_sinc = 8.0;
        while by_sinc < 200_000.0 && tail(by_sinc) > tol {
            by_sinc *= 1.25;
        }
        let by_sinc = by_sinc.ceil();
        let terms = by_gap.min(by_sinc).clamp(8.0, 200_000.0) as usize;
        PairPlan { len_sum, len_closed, sum: (ip, iq), closed: (p, q), terms }
    }

    /// The cheaper of the two axes.
    fn new(st: &Stackup, pi: &PortRect, pj: &PortRect, tol: f64) -> PairPlan {
        let x = PairPlan::along(st, pi, pj, 0, tol);
        let y = PairPlan::along(st, pi, pj, 1, tol);
        if y.terms < x.terms { y } else { x }
    }

    /// ε_m·X_m(i)·X_m(j) for m = 0, 1, 2, …: the two ports' mode factors along the summed axis, with the mode's
    /// weight.
    fn factors(&self) -> impl Iterator<Item = f64> + use<> {
        let (mut i, mut j) = (ModeWalk::new(self.len_sum, self.sum.0), ModeWalk::new(self.len_sum, self.sum.1));
        (0usize..).map(move |m| {
            let eps = if m == 0 { 1.0 } else { 2.0 };
            eps * i.next_factor() * j.next_factor()
        })
    }
}

/// [`mode_factor`] for m = 0, 1, 2, … in turn, by rotating e^{imθ} one step at a time instead of a cosine and a sine
/// per mode (these were a tenth of a plane's preparation). After M steps the rotation has drifted by about M·ε: 1e-13
/// at a few hundred modes, about 1e-12 at the several thousand a narrow port's single sum can take, 4e-11 at the
/// 200 000 the sums stop at, all far inside [`DEFAULT_TOLERANCE`] (the unit test holds it to [`mode_factor`] over
/// 2000 modes to 1e-12).
struct ModeWalk {
    /// e^{imθ_c} for the interval's centre, and its step e^{iθ_c}, θ_c = π·c/L.
    centre: (f64, f64),
    centre_step: (f64, f64),
    /// e^{imθ_h} for its half width, and its step, θ_h = π·w/(2L).
    half: (f64, f64),
    half_step: (f64, f64),
    theta_h: f64,
    m: usize,
}

impl ModeWalk {
    fn new(len: f64, iv: Interval) -> ModeWalk {
        let theta_c = PI * iv.centre() / len;
        let theta_h = PI * iv.width() / (2.0 * len);
        ModeWalk {
            centre: (1.0, 0.0),
            centre_step: (theta_c.cos(), theta_c.sin()),
            half: (1.0, 0.0),
            half_step: (theta_h.cos(), theta_h.sin()),
            theta_h,
            m: 0,
        }
    }

    /// The factor of mode m, then step to m + 1.
    fn next_factor(&mut self) -> f64 {
        let half = self.m as f64 * self.theta_h;
        let sinc = if half.abs() < 1e-8 { 1.0 } else { self.half.1 / half };
        let factor = self.centre.0 * sinc;
        let rotate = |(c, s): (f64, f64), (dc, ds): (f64, f64)| (c * dc - s * ds, s * dc + c * ds);
        self.centre = rotate(self.centre, self.centre_step);
        self.half = rotate(self.half, self.half_step);
        self.m += 1;
        factor
    }
}

/// The tolerance the static sums are carried to (absolute, on the dimensionless static matrix whose entries are of
/// order 1). With it and the modes kept per frequency ([`CUT_FACTOR`]), the engine promises each entry of the
/// plane's matrix within 1e-4 relative of the converged single sum up to half the highest frequency prepared for,
/// and within 5e-4 up to that frequency (tests/integration/plane_pair.rs checks both, and that doubling the modes
/// moves no entry by more).
pub const DEFAULT_TOLERANCE: f64 = 1e-6;

/// Z_ij at `f_hz` by the single sum (closed form along one axis), to `tol`.
pub fn single_sum(st: &Stackup, pi: &PortRect, pj: &PortRect, f_hz: f64, tol: f64) -> C {
    let plan = PairPlan::new(st, pi, pj, tol);
    let (p, q) = plan.closed;
    let terms = single_sum_terms(&plan, tol);
    let k2 = st.k2(f_hz);
    let mut total = C::new(0.0, 0.0);
    for (m, factor) in plan.factors().take(terms + 1).enumerate() {
        let alpha = (C::new((m as f64 * PI / plan.len_sum).powi(2), 0.0) - k2).sqrt();
        total += factor * green_avg(alpha, plan.len_closed, p, q);
    }
    st.series_per_square(f_hz) * total / plan.len_sum
}

/// Terms for the single sum, whose terms (nothing summed in closed form) fall as m⁻⁴ past the sinc's knee: the tail
/// past M is about 8L³/(3π⁴·M³·u_i·u_j·w), the closed-form axis' smaller width w.
fn single_sum_terms(plan: &PairPlan, tol: f64) -> usize {
    let (ip, iq) = plan.sum;
    let (p, q) = plan.closed;
    let (ui, uj) = (ip.width(), iq.width());
    let w = p.width().min(q.width());
    let by_sinc = (8.0 * plan.len_sum.powi(3) / (3.0 * PI.powi(4) * ui * uj * w * tol)).cbrt().ceil();
    let sep = (q.lo - p.hi).max(p.lo - q.hi).max(0.0);
    let gap = sep.min(p.lo + q.lo).min(2.0 * plan.len_closed - p.hi - q.hi);
    let by_gap = if gap > 0.0 { (plan.len_sum * (1.0 / tol).ln() / (PI * gap)).ceil() } else { f64::INFINITY };
    by_gap.min(by_sinc).clamp(8.0, 200_000.0) as usize
}

/// Z_ij at `f_hz` by the double sum over m < `m_max`, n < `n_max` (a test reference: slow to converge).
pub fn double_sum(st: &Stackup, pi: &PortRect, pj: &PortRect, f_hz: f64, m_max: usize, n_max: usize) -> C {
    let [a, b] = st.size_m;
    let k2 = st.k2(f_hz);
    let xs: Vec<f64> = (0..m_max).map(|m| mode_factor(m, a, pi.along(0)) * mode_factor(m, a, pj.along(0))).collect();
    let ys: Vec<f64> = (0..n_max).map(|n| mode_factor(n, b, pi.along(1)) * mode_factor(n, b, pj.along(1))).collect();
    let mut total = C::new(0.0, 0.0);
    for (m, xx) in xs.iter().enumerate() {
        let em = if m == 0 { 1.0 } else { 2.0 };
        for (n, yy) in ys.iter().enumerate() {
            let en = if n == 0 { 1.0 } else { 2.0 };
            let kmn2 = (m as f64 * PI / a).powi(2) + (n as f64 * PI / b).powi(2);
            total += em * en * xx * yy / (kmn2 - k2);
        }
    }
    st.series_per_square(f_hz) * total / (a * b)
}

/// The voltage averaged over each cell of a `cells` = [nx, ny] grid covering the plane, driven by the currents
/// `currents[j]` injected at `ports[j]`, without the common (0, 0) term (the plate's voltage, which the caller
/// adds). Written as the double sum of the cavity model (the same series as [`double_sum`], with a cell in place
/// of the first port), in separable form: the modes' amplitudes Σ_j I_j·X_mj·Y_nj once, then the cells' averages
/// (a cos·sinc factor each) along x and y, so the cost is modes × (ports + cells) rather than their product. The
/// series is cut at `modes_per_cell` modes per cell along each axis; the cells' own sinc factors make the tail
/// fall as 1/(m·n·k²). Row-major by y: entry [iy·nx + ix] is the cell from (ix·a/nx, iy·b/ny).
pub fn cell_voltages(
    st: &Stackup,
    ports: &[PortRect],
    currents: &[C],
    f_hz: f64,
    cells: [usize; 2],
    modes_per_cell: usize,
) -> Vec<C> {
    let [a, b] = st.size_m;
    let [nx, ny] = [cells[0].max(1), cells[1].max(1)];
    let (mm, nn) = ((modes_per_cell * nx).max(8), (modes_per_cell * ny).max(8));
    let k2 = st.k2(f_hz);
    let x_of: Vec<Vec<f64>> = ports.iter().map(|p| (0..mm).map(|m| mode_factor(m, a, p.along(0))).collect()).collect();
    let y_of: Vec<Vec<f64>> = ports.iter().map(|p| (0..nn).map(|n| mode_factor(n, b, p.along(1))).collect()).collect();
    // G[m][n] = ε_m·ε_n·Σ_j I_j·X_mj·Y_nj / (k_mn² − k²), the (0, 0) term left out.
    let mut g = vec![C::new(0.0, 0.0); mm * nn];
    let mut weighted = vec![C::new(0.0, 0.0); ports.len()];
    for m in 0..mm {
        for (j, w) in weighted.iter_mut().enumerate() {
            *w = currents[j] * x_of[j][m];
        }
        let km2 = (m as f64 * PI / a).powi(2);
        let em = if m == 0 { 1.0 } else { 2.0 };
        for n in 0..nn {
            if m == 0 && n == 0 {
                continue;
            }
            let amp: C = weighted.iter().zip(&y_of).map(|(w, y)| w * y[n]).sum();
            let en = if n == 0 { 1.0 } else { 2.0 };
            let kmn2 = km2 + (n as f64 * PI / b).powi(2);
            g[m * nn + n] = em * en * amp / (kmn2 - k2);
        }
    }
    let cell = |i: usize, size: f64, count: usize| Interval {
        lo: size * i as f64 / count as f64,
        hi: size * (i + 1) as f64 / count as f64,
    };
    let cx: Vec<Vec<f64>> = (0..nx).map(|i| (0..mm).map(|m| mode_factor(m, a, cell(i, a, nx))).collect()).collect();
    let cy: Vec<Vec<f64>> = (0..ny).map(|i| (0..nn).map(|n| mode_factor(n, b, cell(i, b, ny))).collect()).collect();
    let scale = st.series_per_square(f_hz) / (a * b);
    let mut out = vec![C::new(0.0, 0.0); nx * ny];
    for (iy, cyi) in cy.iter().enumerate() {
        // T_m = Σ_n G[m][n]·cy_n for this row of cells, then each cell's Σ_m cx_m·T_m.
        let t: Vec<C> = (0..mm).map(|m| g[m * nn..(m + 1) * nn].iter().zip(cyi).map(|(gv, c)| gv * c).sum()).collect();
        for (ix, cxi) in cx.iter().enumerate() {
            let v: C = t.iter().zip(cxi).map(|(tv, c)| tv * c).sum();
            out[iy * nx + ix] = scale * v;
        }
    }
    out
}

/// The length two intervals share, m.
fn overlap(p: Interval, q: Interval) -> f64 {
    (p.hi.min(q.hi) - p.lo.max(q.lo)).max(0.0)
}

/// The powers of 1/α in the line's averaged Green's function for large α (every exponential dropped):
/// F ≈ c₂/α² + c₃/α³, with c₂ = overlap/(w_p·w_q) and c₃ from the ends that coincide (and intervals touching each
/// other or both touching the same edge), read off the four image terms of [`green_avg`].
fn asymptote(len: f64, p: Interval, q: Interval) -> (f64, f64) {
    let area = p.width() * q.width();
    let mut count = 0.0;
    if p.hi <= q.lo || q.hi <= p.lo {
        // Disjoint: e^{−α·gap}·φ₁φ₁ keeps a power only when they touch.
        if p.hi == q.lo || q.hi == p.lo {
            count += 1.0;
        }
    } else {
        // Overlapping: rect_diff of e^{−α|s|} keeps ±1 for every end difference that is zero.
        for (sign, diff) in [(1.0, q.hi - p.lo), (-1.0, q.hi - p.hi), (-1.0, q.lo - p.lo), (1.0, q.lo - p.hi)] {
            if diff == 0.0 {
                count += sign;
            }
        }
    }
    if p.lo == 0.0 && q.lo == 0.0 {
        count += 1.0;
    }
    if p.hi == len && q.hi == len {
        count += 1.0;
    }
    (overlap(p, q) / area, count / (2.0 * area))
}

/// The shortest non-zero distance the exponentials of [`green_avg`] decay over (ends, edges' images, widths).
fn shortest_decay(len: f64, p: Interval, q: Interval) -> f64 {
    [
        (q.hi - p.lo).abs(),
        (q.hi - p.hi).abs(),
        (q.lo - p.lo).abs(),
        (q.lo - p.hi).abs(),
        p.lo + q.lo,
        2.0 * len - p.hi - q.hi,
        p.width(),
        q.width(),
        2.0 * len,
    ]
    .into_iter()
    .filter(|&d| d > 0.0)
    .fold(f64::INFINITY, f64::min)
}

/// ζ(3) and ζ(5) (Apéry's constant and its next odd neighbour, from memory; the unit test checks Σ cos(mθ)/m⁵
/// built on them against its series).
const ZETA3: f64 = 1.202_056_903_159_594_2;
const ZETA5: f64 = 1.036_927_755_143_37;

/// Σ_{m≥1} cos(mθ)/m⁵, the real part of the polylogarithm Li₅(e^{iθ}), from its expansion in powers of θ
/// (valid for |θ| < 2π; D. C. Wood, "The computation of polylogarithms", 1992, from memory):
/// ζ(5) − ζ(3)θ²/2 + θ⁴(25/12 − ln θ)/24 + Σ_{n≥1} 2(2n−1)!·ζ(2n)·θ^{2n+4}/((2π)^{2n}·(2n+4)!), for θ in [0, π]
/// (the sum is even and 2π-periodic).
fn cos_sum5(theta: f64) -> f64 {
    let mut t = theta.rem_euclid(2.0 * PI);
    if t > PI {
        t = 2.0 * PI - t;
    }
    let t2 = t * t;
    let mut s = ZETA5 - ZETA3 * t2 / 2.0;
    if t > 0.0 {
        s += t2 * t2 * (25.0 / 12.0 - t.ln()) / 24.0;
    }
    // term_n = 2(2n−1)!ζ(2n)t^{2n+4}/((2π)^{2n}(2n+4)!): the power and the ratio of factorials carried from one
    // term to the next ((2n−1)!/(2n+4)! = the previous one × (2n−2)(2n−1)/((2n+3)(2n+4)), 1!/6! to start).
    let mut power = t2 * t2;
    let mut ratio = 1.0 / 720.0;
    let two_pi2 = (2.0 * PI).powi(2);
    for n in 1..40usize {
        power *= t2 / two_pi2;
        if n > 1 {
            ratio *= ((2 * n - 2) * (2 * n - 1)) as f64 / ((2 * n + 3) * (2 * n + 4)) as f64;
        }
        let term = 2.0 * ratio * zeta_even(n) * power;
        s += term;
        if term.abs() < 1e-18 {
            break;
        }
    }
    s
}

/// ζ(2n) for n ≥ 1: the closed forms π²/6 … π¹⁰/93555 (Euler), then the series (its tail past 40 terms is below
/// 40^{1−2n}/(2n−1), under 1e-18 from n = 6).
fn zeta_even(n: usize) -> f64 {
    match n {
        1 => PI.powi(2) / 6.0,
        2 => PI.powi(4) / 90.0,
        3 => PI.powi(6) / 945.0,
        4 => PI.powi(8) / 9450.0,
        5 => PI.powi(10) / 93555.0,
        _ => (1..=40).map(|k| (k as f64).powi(-(2 * n as i32))).sum(),
    }
}

/// Σ_{m≥1} 2·X_m(i)·X_m(j)/α_m³ for two intervals on a line of length `len` (α_m = mπ/len), in closed form through
/// Σ cos(mθ)/m⁵: with A, B the centres and C, D the half-widths in units of π/len,
/// 2·cos(Am)cos(Bm)·sin(Cm)sin(Dm)/(C·D·m²)·(len/(πm))³, the product of cosines expanded into eight cosines.
fn odd_remainder(len: f64, ip: Interval, iq: Interval) -> f64 {
    let k = PI / len;
    let (a, b) = (k * ip.centre(), k * iq.centre());
    let (c, d) = (k * ip.width() / 2.0, k * iq.width() / 2.0);
    let mut sum = 0.0;
    for pp in [a - b, a + b] {
        for (sign, qq) in [(1.0, c - d), (-1.0, c + d)] {
            sum += sign * (cos_sum5(pp - qq) + cos_sum5(pp + qq));
        }
    }
    2.0 * (len / PI).powi(3) / (c * d) * sum / 8.0
}

/// The static sums of one pair: G = Σ_{K≠0} w_K Φ_K(i)Φ_K(j)/k_K², D the same over k_K⁴ and U over k_K⁶.
///
/// The m = 0 line uses the Bernoulli-polynomial closed forms; every other line the Green's function at the real
/// α_m = mπ/L as a jet in x = α² (its value F, and F′ and F″/2 by the chain rule, in real arithmetic): G takes F,
/// D takes −F′ and U takes F″/2. Where the two ports' intervals along the closed axis overlap, F falls as
/// c/α² (c = overlap/(w_p·w_q)); that part of every line is summed in closed form (Kummer's transformation, with
/// the same Bernoulli-polynomial sums along the summed axis); so is its 1/α³ part where interval ends coincide or
/// touch an edge (a port's own entry), through Σ cos(mθ)/m⁵. Only the rest, which decays exponentially, is summed
/// term by term.
pub fn static_pair(st: &Stackup, pi: &PortRect, pj: &PortRect, tol: f64) -> (f64, f64, f64) {
    let plan = PairPlan::new(st, pi, pj, tol);
    let (p, q) = plan.closed;
    let (r0, d0, u0) = static_remainders(plan.len_closed, p, q);
    let mut factors = plan.factors();
    let xx0 = factors.next().unwrap_or(0.0);
    let (mut g, mut d, mut u) = (xx0 * r0, xx0 * d0, xx0 * u0);
    let (c, c3) = asymptote(plan.len_closed, p, q);
    if c != 0.0 {
        // Σ_{m≥1} 2·X_m(i)X_m(j)/α_m^{2k} = L·(R, D, U) of the summed axis.
        let (rs, ds, us) = static_remainders(plan.len_sum, plan.sum.0, plan.sum.1);
        g += c * plan.len_sum * rs;
        d += c * plan.len_sum * ds;
        u += c * plan.len_sum * us;
    }
    if c3 != 0.0 {
        g += c3 * odd_remainder(plan.len_sum, plan.sum.0, plan.sum.1);
    }
    for (m, xx) in (1..=plan.terms).zip(factors) {
        let x = (m as f64 * PI / plan.len_sum).powi(2);
        let f = green_avg(Jet::sqrt_of(x), plan.len_closed, p, q);
        g += xx * (f.v - c / x - c3 / (x * x.sqrt()));
        d += xx * (-f.d1 - c / (x * x));
        u += xx * (f.d2 - c / (x * x * x));
    }
    (g / plan.len_sum, d / plan.len_sum, u / plan.len_sum)
}

/// One mode kept in the per-frequency part.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Mode {
    m: usize,
    n: usize,
    /// k_mn², 1/m².
    k2: f64,
    /// ε_m ε_n/(a·b).
    weight: f64,
}

/// The modes summed per frequency at one level of the cut, and the tails of the rest.
#[derive(Debug, Clone, PartialEq)]
struct Level {
    /// The level's cut, k² (1/m²): its modes are those with k_K² at or below it.
    cut_k2: f64,
    /// How many of the modes (sorted by k²) are summed per frequency.
    modes: usize,
    /// T_s (the 1/k_K⁴ sum of the modes past the cut), n × n row-major.
    t_s: Vec<f64>,
    /// U_s (the 1/k_K⁶ sum of the modes past the cut), n × n row-major.
    u_s: Vec<f64>,
}

/// A layout prepared once: the static matrix, the tail past the cut and the ports' values of the kept modes, so
/// that each frequency costs a few small products. Moving one port recomputes one row and column.
///
/// The modes are summed per frequency only up to a cut that follows the frequency: levels whose cuts halve from
/// `cut_factor` × f_max down to below the first mode, each with its own tails; a frequency f takes the lowest
/// level whose cut is at least 2·`cut_factor`·f (the top level above f_max/2). Every frequency up to f_max/2 so
/// sees the modes as the top level sees them at f_max/2, and a low frequency needs no mode at all.
#[derive(Debug, Clone, PartialEq)]
pub struct PreparedPlane {
    /// The outline and stack-up.
    pub stackup: Stackup,
    /// The ports, in the order of the matrix.
    pub ports: Vec<PortRect>,
    tol: f64,
    cut_factor: f64,
    /// Every mode below the top cut, by k².
    modes: Vec<Mode>,
    /// The levels, lowest cut first; the last is the top.
    levels: Vec<Level>,
    /// G_s, n × n row-major.
    g_s: Vec<f64>,
    /// Φ, modes × n row-major (each mode's values at every port).
    phi: Vec<f64>,
}

/// The static parts of the plane's matrix at one frequency's level: Q = Z_sq·(G + k²·T + k⁴·U) + Σ_K c_K φ_K φ_Kᵀ.
#[derive(Debug, Clone, Copy)]
pub struct StaticParts<'a> {
    /// G_s, n × n row-major.
    pub g: &'a [f64],
    /// T_s of the level, n × n row-major.
    pub t: &'a [f64],
    /// U_s of the level, n × n row-major.
    pub u: &'a [f64],
    /// The modes summed at this level.
    pub modes: usize,
}

/// How far past the highest frequency the kept modes reach. With the tail's k² and k⁴ terms kept, the term left
/// out of each mode past the cut is (f/f_K)⁶ of it or less: 5× keeps it under 6.4e-5 of the nearest such mode's
/// share (the tests check the whole against the single sum to 1e-4 up to the highest frequency, also on a port at
/// the centre, which sees only the modes past the cut).
const CUT_FACTOR: f64 = 5.0;

impl PreparedPlane {
    /// Prepare `ports` on `stackup` for frequencies up to `f_max_hz`, to the accuracy `tol`.
    pub fn new(stackup: Stackup, ports: Vec<PortRect>, f_max_hz: f64, tol: f64) -> PreparedPlane {
        PreparedPlane::with_cut(stackup, ports, f_max_hz, tol, CUT_FACTOR)
    }

    /// As [`PreparedPlane::new`], keeping the modes up to `cut_factor` × `f_max_hz` per frequency (the tests
    /// double it to show the answer does not move).
    pub fn with_cut(stackup: Stackup, ports: Vec<PortRect>, f_max_hz: f64, tol: f64, cut_factor: f64) -> PreparedPlane {
        let [a, b] = stackup.size_m;
        let k_cut = cut_factor * stackup.k_lossless(f_max_hz);
        let mut modes = Vec::new();
        let m_top = (k_cut * a / PI).floor() as usize;
        let n_top = (k_cut * b / PI).floor() as usize;
        for m in 0..=m_top {
            for n in 0..=n_top {
                let k2 = (m as f64 * PI / a).powi(2) + (n as f64 * PI / b).powi(2);
                if (m, n) != (0, 0) && k2 <= k_cut * k_cut {
                    let weight = if m == 0 { 1.0 } else { 2.0 } * if n == 0 { 1.0 } else { 2.0 } / (a * b);
                    modes.push(Mode { m, n, k2, weight });
                }
            }
        }
        modes.sort_by(|x, y| x.k2.total_cmp(&y.k2));
        let n = ports.len();
        // Cuts halving from the top until one lies below every mode (or the modes run out).
        let mut levels = Vec::new();
        let mut cut_k2 = k_cut * k_cut;
        loop {
            let count = modes.iter().take_while(|m| m.k2 <= cut_k2).count();
            levels.push(Level { cut_k2, modes: count, t_s: vec![0.0; n * n], u_s: vec![0.0; n * n] });
            if count == 0 || levels.len() >= 64 {
                break;
            }
            cut_k2 /= 4.0;
        }
        levels.reverse();
        let mut plane =
            PreparedPlane { stackup, ports, tol, cut_factor, modes, levels, g_s: vec![0.0; n * n], phi: Vec::new() };
        plane.phi = vec![0.0; plane.modes.len() * n];
        for i in 0..n {
            plane.fill_port(i, i + 1);
        }
        plane
    }

    /// The highest lossless mode frequency kept per frequency, Hz (past it the tail T_s stands in).
    pub fn cut_hz(&self) -> f64 {
        self.modes.iter().map(|m| self.stackup.freq_of_k(m.k2.sqrt())).fold(0.0, f64::max)
    }

    /// The memory its tables take, bytes (G, each level's T and U, the modes' values at the ports).
    pub fn table_bytes(&self) -> usize {
        let n2 = self.ports.len() * self.ports.len();
        8 * (n2 * (1 + 2 * self.levels.len()) + self.phi.len())
    }

    /// The number of modes kept per frequency at the top level (the highest frequencies).
    pub fn mode_count(&self) -> usize {
        self.modes.len()
    }

    /// Move port `i` and recompute its row and column.
    pub fn move_port(&mut self, i: usize, port: PortRect) {
        self.ports[i] = port;
        self.fill_port(i, self.ports.len());
    }

    /// Recompute port i's mode values and its entries against ports 0..upto (and the symmetric ones).
    fn fill_port(&mut self, i: usize, upto: usize) {
        let n = self.ports.len();
        let [a, b] = self.stackup.size_m;
        let pi = self.ports[i];
        for (k, mode) in self.modes.iter().enumerate() {
            self.phi[k * n + i] = mode_factor(mode.m, a, pi.along(0)) * mode_factor(mode.n, b, pi.along(1));
        }
        for j in 0..upto {
            // Every pair is taken with the later port first, as a fresh preparation takes it, so a moved port's
            // entries are the fresh layout's to the bit (a pair's sum in the other order differs in rounding).
            let (x, y) = if j > i { (j, i) } else { (i, j) };
            let (g, mut d, mut u) = static_pair(&self.stackup, &self.ports[x], &self.ports[y], self.tol);
            self.g_s[i * n + j] = g;
            self.g_s[j * n + i] = g;
            // Each level's tails: the full sums less the modes it sums per frequency (levels by rising cut).
            let mut taken = 0;
            for level in &mut self.levels {
                for mode_k in taken..level.modes {
                    let mode = &self.modes[mode_k];
                    let w = mode.weight * self.phi[mode_k * n + x] * self.phi[mode_k * n + y] / (mode.k2 * mode.k2);
                    d -= w;
                    u -= w / mode.k2;
                }
                taken = level.modes;
                level.t_s[i * n + j] = d;
                level.t_s[j * n + i] = d;
                level.u_s[i * n + j] = u;
                level.u_s[j * n + i] = u;
            }
        }
    }

    /// The level a frequency is computed at.
    fn level_for(&self, f_hz: f64) -> &Level {
        let k = 2.0 * self.cut_factor * self.stackup.k_lossless(f_hz);
        let top = self.levels.len() - 1;
        let at = self.levels.iter().position(|l| l.cut_k2 >= k * k).unwrap_or(top);
        &self.levels[at]
    }

    /// The static parts at `f_hz`'s level, for callers that assemble the matrix themselves (several frequencies
    /// at once): Q(f) = Z_sq·(G + k²·T + k⁴·U) + Σ over the level's modes of [`PreparedPlane::mode_coefficient`]
    /// × φ_K φ_Kᵀ.
    pub fn static_parts(&self, f_hz: f64) -> StaticParts<'_> {
        let level = self.level_for(f_hz);
        StaticParts { g: &self.g_s, t: &level.t_s, u: &level.u_s, modes: level.modes }
    }

    /// Mode K's values at every port (modes by rising k²).
    pub fn mode_values(&self, k: usize) -> &[f64] {
        let n = self.ports.len();
        &self.phi[k * n..(k + 1) * n]
    }

    /// Mode K's coefficient at `f_hz`: Z_sq·w_K·k²/(k_K²·(k_K² − k²)).
    pub fn mode_coefficient(&self, k: usize, f_hz: f64) -> C {
        let mode = &self.modes[k];
        let k2 = self.stackup.k2(f_hz);
        self.stackup.series_per_square(f_hz) * mode.weight * k2 / (mode.k2 * (mode.k2 - k2))
    }

    /// The first `count` modes' coefficients at `f_hz`, each as [`PreparedPlane::mode_coefficient`] gives it (the
    /// same expression, so the same bits) with Z_sq and k² computed once for all of them.
    pub fn mode_coefficients(&self, count: usize, f_hz: f64) -> Vec<C> {
        let k2 = self.stackup.k2(f_hz);
        let zsq = self.stackup.series_per_square(f_hz);
        self.modes[..count].iter().map(|mode| zsq * mode.weight * k2 / (mode.k2 * (mode.k2 - k2))).collect()
    }

    /// The multipliers of G, T and U at `f_hz`: Z_sq, Z_sq·k², Z_sq·k⁴.
    pub fn static_coefficients(&self, f_hz: f64) -> [C; 3] {
        let k2 = self.stackup.k2(f_hz);
        let zsq = self.stackup.series_per_square(f_hz);
        [zsq, zsq * k2, zsq * k2 * k2]
    }

    /// The common term 1/(a·b·Y_sq) every entry carries (the (0,0) mode: the plate capacitance), Ω.
    pub fn common_impedance(&self, f_hz: f64) -> C {
        let [a, b] = self.stackup.size_m;
        1.0 / (a * b * self.stackup.shunt_per_area(f_hz))
    }

    /// The plate admittance a·b·Y_sq (the inverse of [`PreparedPlane::common_impedance`]), S.
    pub fn plate_admittance(&self, f_hz: f64) -> C {
        let [a, b] = self.stackup.size_m;
        a * b * self.stackup.shunt_per_area(f_hz)
    }

    /// The matrix without its common term, Q(f) = Z_sq·[G_s + Φ·diag(…)·Φᵀ + k²·T_s + k⁴·U_s], written row-major into
    /// `out` (n × n). The full matrix is Q + common_impedance·11ᵀ.
    pub fn rest_into(&self, f_hz: f64, out: &mut Vec<C>) {
        let n = self.ports.len();
        out.clear();
        out.resize(n * n, C::new(0.0, 0.0));
        let parts = self.static_parts(f_hz);
        let [zsq, zk, zkk] = self.static_coefficients(f_hz);
        // The lower triangle first (the modes' outer products cost half), then mirrored.
        for i in 0..n {
            for j in 0..=i {
                let ij = i * n + j;
                out[ij] = zsq * parts.g[ij] + zk * parts.t[ij] + zkk * parts.u[ij];
            }
        }
        for (k, &c) in self.mode_coefficients(parts.modes, f_hz).iter().enumerate() {
            let row = self.mode_values(k);
            for i in 0..n {
                let ci = c * row[i];
                let out_row = &mut out[i * n..i * n + i + 1];
                for (o, pj) in out_row.iter_mut().zip(&row[..=i]) {
                    *o += ci * *pj;
                }
            }
        }
        for i in 0..n {
            for j in 0..i {
                out[j * n + i] = out[i * n + j];
            }
        }
    }

    /// The full impedance matrix at `f_hz`, row-major n × n.
    pub fn matrix(&self, f_hz: f64) -> Vec<C> {
        let mut out = Vec::new();
        self.rest_into(f_hz, &mut out);
        let common = self.common_impedance(f_hz);
        for z in &mut out {
            *z += common;
        }
        out
    }

    /// The static (spreading) inductance between ports i and j, μ0·d·G_s(i, j), H: the low-frequency part of Z_ij
    /// beyond the plate capacitance. The loop inductance between two ports is L_ii + L_jj − 2·L_ij.
    pub fn spreading_inductance_h(&self, i: usize, j: usize) -> f64 {
        MU0 * self.stackup.dielectric_m * self.g_s[i * self.ports.len() + j]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mode_coefficients_give_each_modes_coefficient_to_the_bit() {
        let stackup = Stackup {
            size_m: [0.1, 0.08],
            dielectric_m: 1e-4,
            er: 4.3,
            loss_tangent: 0.02,
            conductor: Conductor::Perfect,
        };
        let ports = vec![PortRect::square(0.02, 0.03, 5e-4), PortRect::square(0.07, 0.05, 5e-4)];
        let plane = PreparedPlane::new(stackup, ports, 1e9, 1e-4);
        // The highest frequency's level sums the most modes; every frequency is checked over all of them.
        let count = plane.static_parts(9e8).modes;
        assert!(count > 0);
        for f in [1e5, 3.7e7, 9e8] {
            let all = plane.mode_coefficients(count, f);
            for (k, c) in all.iter().enumerate() {
                assert_eq!(*c, plane.mode_coefficient(k, f), "mode {k} at {f} Hz");
            }
        }
    }

    #[test]
    fn the_mode_walk_gives_each_modes_factor() {
        let len = 0.1;
        for iv in [Interval { lo: 0.0312, hi: 0.0317 }, Interval { lo: 0.0, hi: 0.005 }, Interval { lo: 0.06, hi: 0.1 }]
        {
            let mut walk = ModeWalk::new(len, iv);
            for m in 0..2000 {
                let (walked, direct) = (walk.next_factor(), mode_factor(m, len, iv));
                assert!((walked - direct).abs() < 1e-12, "mode {m}: {walked} vs {direct}");
            }
        }
    }

    #[test]
    fn phi_agrees_on_both_sides_of_its_switch() {
        for r in [0.03, 0.12, 0.13, 0.49] {
            let z = C::from_polar(r, 0.7);
            let direct1 = (1.0 - (-z).exp()) / z;
            assert!((phi(1, z) - direct1).norm() < 1e-13);
            let direct2 = ((-z).exp() - 1.0 + z) / (z * z);
            assert!((phi(2, z) - direct2).norm() < 1e-12);
        }
    }

    #[test]
    fn the_fifth_power_cosine_sum_and_its_use_match_their_series() {
        for t in [0.0, 1e-3, 0.3, 1.0, 2.5, 3.1, 4.0, 6.2, -1.3, 9.0] {
            let series: f64 = (1..200_000).map(|m| (m as f64 * t).cos() / (m as f64).powi(5)).sum();
            assert!((cos_sum5(t) - series).abs() < 1e-13, "{t}: {} vs {series}", cos_sum5(t));
        }
        let len = 0.1;
        for (p, q) in [
            (Interval { lo: 0.01, hi: 0.0105 }, Interval { lo: 0.01, hi: 0.0105 }),
            (Interval { lo: 0.03, hi: 0.035 }, Interval { lo: 0.06, hi: 0.0605 }),
        ] {
            let series: f64 = (1..200_000)
                .map(|m| {
                    let a = m as f64 * PI / len;
                    2.0 * mode_factor(m, len, p) * mode_factor(m, len, q) / (a * a * a)
                })
                .sum();
            let closed = odd_remainder(len, p, q);
            assert!((closed - series).abs() < 1e-9 * series.abs().max(1e-12), "{closed} vs {series}");
        }
    }

    #[test]
    fn static_remainders_match_their_series() {
        // The Bernoulli-polynomial closed forms against the cosine series they stand for.
        let len = 0.08;
        for (p, q) in [
            (Interval { lo: 0.01, hi: 0.015 }, Interval { lo: 0.05, hi: 0.052 }),
            (Interval { lo: 0.01, hi: 0.015 }, Interval { lo: 0.012, hi: 0.02 }),
        ] {
            let (r, d, u) = static_remainders(len, p, q);
            let (mut rs, mut ds, mut us) = (0.0, 0.0, 0.0);
            for n in 1..200_000 {
                let yy = 2.0 * mode_factor(n, len, p) * mode_factor(n, len, q) / len;
                let k2 = (n as f64 * PI / len).powi(2);
                rs += yy / k2;
                ds += yy / (k2 * k2);
                us += yy / (k2 * k2 * k2);
            }
            assert!((r - rs).abs() < 1e-9 * rs.abs().max(1e-3), "{r} vs {rs}");
            assert!((d - ds).abs() < 1e-9 * ds.abs(), "{d} vs {ds}");
            assert!((u - us).abs() < 1e-9 * us.abs(), "{u} vs {us}");
        }
    }

    #[test]
    fn green_function_matches_its_cosine_series() {
        // Eigenfunction expansion of the Neumann line (any text on Sturm-Liouville problems): the closed form
        // and the series agree, for disjoint and overlapping intervals and a lossy α.
        let len = 0.08;
        let alpha = C::new(40.0, 7.0);
        let cases = [
            (Interval { lo: 0.01, hi: 0.015 }, Interval { lo: 0.05, hi: 0.052 }),
            (Interval { lo: 0.01, hi: 0.015 }, Interval { lo: 0.012, hi: 0.02 }),
            (Interval { lo: 0.03, hi: 0.034 }, Interval { lo: 0.03, hi: 0.034 }),
        ];
        for (p, q) in cases {
            let closed = green_avg(alpha, len, p, q);
            let mut series = C::new(0.0, 0.0);
            for n in 0..200_000 {
                let e = if n == 0 { 1.0 } else { 2.0 };
                let yy = mode_factor(n, len, p) * mode_factor(n, len, q);
                series += e * yy / (len * ((n as f64 * PI / len).powi(2) + alpha * alpha));
            }
            assert!((closed - series).norm() < 1e-6 * closed.norm(), "{closed} vs {series}");
        }
    }
}
