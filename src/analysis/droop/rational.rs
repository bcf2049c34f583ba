//! The rail's impedance as an exact sum of simple poles, found without a general eigenvalue solver.
//!
//! Every function here is a rational function of s (series R-L-C branches in parallel, a package, a die). Its
//! poles are the zeros of an admittance that is itself a sum of simple poles, so each step of building the
//! network is "the reciprocal of a sum of simple poles": its poles are the zeros of the sum, found all at once by
//! the Aberth–Ehrlich iteration (Aberth, Math. Comp. 1973) on the numerator polynomial without ever forming it
//! (P'/P = f'/f + Σ 1/(x − pₖ)), and its residues are 1/f' at each zero.
//!
//! To keep everything proper (an inductor's sL has no pole at a finite s) the work is done in μ = 1/(s − σ) for
//! a real σ > 0: a rail's functions are positive real, so σ is never a pole or a zero, s = ∞ maps to μ = 0 and
//! every function of s becomes a constant plus simple poles in μ. [`Modal`] maps the result back to s.

use crate::analysis::network::{Branch, Network};
use crate::physics::TWO_PI;
use crate::physics::regulator::ParallelRlc;
use num_complex::Complex64;

type C = Complex64;

/// A constant plus simple poles in μ: f(μ) = d + Σ rₖ/(μ − pₖ).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Fractions {
    pub d: C,
    /// (pole, residue).
    pub terms: Vec<(C, C)>,
}

/// Why the network's poles could not be found (the caller falls back to the integrator).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct NoConvergence;

impl Fractions {
    fn constant(d: C) -> Fractions {
        Fractions { d, terms: Vec::new() }
    }

    /// f(μ).
    pub fn eval(&self, x: C) -> C {
        self.terms.iter().fold(self.d, |acc, &(p, r)| acc + r / (x - p))
    }

    /// f(μ) and f'(μ).
    fn eval_d(&self, x: C) -> (C, C) {
        let (mut f, mut df) = (self.d, C::new(0.0, 0.0));
        for &(p, r) in &self.terms {
            let q = 1.0 / (x - p);
            f += r * q;
            df -= r * q * q;
        }
        (f, df)
    }

    /// The sum of two such functions, with equal poles merged (identical branches give identical poles; keeping
    /// them apart would leave the sum's numerator a spurious root there).
    pub fn add(mut self, other: &Fractions) -> Fractions {
        self.d += other.d;
        self.terms.extend_from_slice(&other.terms);
        self.merge();
        self
    }

    fn merge(&mut self) {
        self.terms.sort_by(|a, b| a.0.re.total_cmp(&b.0.re).then(a.0.im.total_cmp(&b.0.im)));
        let mut out: Vec<(C, C)> = Vec::with_capacity(self.terms.len());
        for &(p, r) in &self.terms {
            match out.iter_mut().rev().take(8).find(|(q, _)| (*q - p).norm() <= 1e-13 * p.norm().max(q.norm())) {
                Some((_, acc)) => *acc += r,
                None => out.push((p, r)),
            }
        }
        let scale = out.iter().map(|(_, r)| r.norm()).fold(0.0, f64::max);
        out.retain(|(_, r)| r.norm() > 1e-15 * scale);
        self.terms = out;
    }

    /// 1/f as a constant plus simple poles: its poles are the zeros of f (Aberth–Ehrlich on f's numerator), each
    /// with residue 1/f'(zero); its constant is 1/d. Requires d ≠ 0 (true for a rail's functions at μ = ∞, s = σ).
    pub fn reciprocal(&self) -> Result<Fractions, NoConvergence> {
        if self.d.norm() == 0.0 || !self.d.is_finite() {
            return Err(NoConvergence);
        }
        let n = self.terms.len();
        if n == 0 {
            return Ok(Fractions::constant(1.0 / self.d));
        }
        let zeros = self.zeros()?;
        let smallest = self.terms.iter().map(|(p, _)| p.norm()).filter(|&m| m > 0.0).fold(f64::INFINITY, f64::min);
        let mut terms = Vec::with_capacity(n);
        for mut z in zeros {
            // A zero this close to μ = 0 is the zero at s = ∞ of an admittance whose branches are all inductive
            // there: it is exactly 0 (a pole of the impedance at s = ∞, its series inductance).
            if smallest.is_finite() && z.norm() < 1e-9 * smallest {
                z = C::new(0.0, 0.0);
            }
            let (_, df) = self.eval_d(z);
            if !(df.is_finite() && df.norm() > 0.0) {
                return Err(NoConvergence);
            }
            terms.push((z, 1.0 / df));
        }
        let mut out = Fractions { d: 1.0 / self.d, terms };
        out.merge();
        Ok(out)
    }

    /// The n zeros of f (n poles, d ≠ 0), by the Aberth–Ehrlich iteration started beside each pole (zeros of a
    /// sum of passive branches interlace with its poles), then checked.
    fn zeros(&self) -> Result<Vec<C>, NoConvergence> {
        let n = self.terms.len();
        if n == 1 {
            // d + r/(x − p) = 0 at x = p − r/d.
            let (p, r) = self.terms[0];
            return Ok(vec![p - r / self.d]);
        }
        let scale_all = self.terms.iter().map(|(p, _)| p.norm()).fold(0.0, f64::max).max(1e-300);
        // Start beside each pole, a hundredth of the way to its nearest neighbour, in distinct directions.
        let mut x: Vec<C> = self
            .terms
            .iter()
            .enumerate()
            .map(|(k, &(p, _))| {
                let near = self
                    .terms
                    .iter()
                    .enumerate()
                    .filter(|&(j, _)| j != k)
                    .map(|(_, &(q, _))| (q - p).norm())
                    .fold(f64::INFINITY, f64::min);
                let angle = 0.7 + 2.0 * std::f64::consts::PI * k as f64 / n as f64;
                p + near * 1e-2 * C::from_polar(1.0, angle)
            })
            .collect();
        let smallest = self.terms.iter().map(|(p, _)| p.norm()).filter(|&m| m > 0.0).fold(f64::INFINITY, f64::min);
        let mut done = vec![false; n];
        for _ in 0..500 {
            let mut moved = false;
            for i in 0..n {
                if done[i] {
                    continue;
                }
                let xi = x[i];
                let (f, df) = self.eval_d(xi);
                let mut ratio = df / f; // P'/P = f'/f + Σ 1/(x − pₖ)
                for &(p, _) in &self.terms {
                    ratio += 1.0 / (xi - p);
                }
                if !ratio.is_finite() || ratio.norm() == 0.0 {
                    // Landed on a zero (f = 0) or a pole: nudge.
                    if f.norm() == 0.0 {
                        done[i] = true;
                        continue;
                    }
                    x[i] = xi * (1.0 + 1e-8) + 1e-12 * scale_all;
                    moved = true;
                    continue;
                }
                let newton = 1.0 / ratio;
                let mut repel = C::new(0.0, 0.0);
                for (j, &xj) in x.iter().enumerate() {
                    if j != i {
                        repel += 1.0 / (xi - xj);
                    }
                }
                let w = newton / (1.0 - newton * repel);
                if !w.is_finite() {
                    return Err(NoConvergence);
                }
                x[i] = xi - w;
                // Converged, or deep inside the radius where a zero is taken as the one at s = ∞ (μ = 0).
                if w.norm() <= 1e-15 * xi.norm() || x[i].norm() < 1e-12 * smallest {
                    done[i] = true;
                } else {
                    moved = true;
                }
            }
            if !moved {
                break;
            }
        }
        // Check: f small at every zero compared with the size of its terms there.
        for &z in &x {
            let size = self.terms.iter().map(|&(p, r)| (r / (z - p)).norm()).sum::<f64>() + self.d.norm();
            let residual = self.eval(z).norm();
            if residual.is_nan() || residual > 1e-7 * size {
                return Err(NoConvergence);
            }
        }
        Ok(x)
    }
}

/// The rail's response as poles and residues in s: G(s) = e·s + d + Σ rₖ/(s − pₖ).
#[derive(Debug, Clone, PartialEq)]
pub struct Modal {
    /// The coefficient of s, Ω·s (a series inductance seen at the node, H).
    pub e: f64,
    /// The constant, Ω.
    pub d: f64,
    /// (pole, residue) in s, both members of each complex pair.
    pub modes: Vec<(C, C)>,
}

impl Modal {
    /// G at a complex frequency s.
    pub fn eval(&self, s: C) -> C {
        self.modes.iter().fold(C::new(self.d, 0.0) + self.e * s, |acc, &(p, r)| acc + r / (s - p))
    }

    /// G(0): the DC resistance.
    pub fn dc(&self) -> f64 {
        self.modes.iter().filter(|(p, _)| p.norm() > 0.0).fold(self.d, |acc, &(p, r)| acc - (r / p).re)
    }

    /// Back from μ = 1/(s − σ): r/(μ − λ) = −r/λ − (r/λ²)/(s − (σ + 1/λ)); r/μ = r·(s − σ).
    fn from_mu(f: &Fractions, sigma: f64) -> Modal {
        let (mut e, mut d) = (0.0, f.d.re);
        let mut modes = Vec::with_capacity(f.terms.len());
        for &(lambda, r) in &f.terms {
            if lambda.norm() == 0.0 {
                e += r.re;
                d -= r.re * sigma;
            } else {
                d -= (r / lambda).re;
                let mut p = sigma + 1.0 / lambda;
                // A passive network has no pole in the right half plane; rounding may leave one a hair across.
                if p.re > 0.0 {
                    p.re = 0.0;
                }
                modes.push((p, -r / (lambda * lambda)));
            }
        }
        Modal { e, d, modes }
    }

    /// This response followed by (multiplied with) the low-pass H(s) = ω₁ω₂/((s + ω₁)(s + ω₂)): the result is
    /// strictly proper, with the filter's two poles added.
    pub fn filtered(&self, w1: f64, w2: f64) -> Modal {
        let h = |s: C| w1 * w2 / ((s + w1) * (s + w2));
        let mut modes: Vec<(C, C)> = self.modes.iter().map(|&(p, r)| (p, r * h(p))).collect();
        let g1 = self.eval(C::new(-w1, 0.0)) * (w1 * w2 / (w2 - w1));
        let g2 = self.eval(C::new(-w2, 0.0)) * (w1 * w2 / (w1 - w2));
        modes.push((C::new(-w1, 0.0), g1));
        modes.push((C::new(-w2, 0.0), g2));
        Modal { e: 0.0, d: 0.0, modes }
    }
}

/// A parallel R ∥ L ∥ C (the regulator's crossover tank) as an impedance in μ: the reciprocal of its admittance
/// 1/R + 1/(sL) + sC = 1/R + 1/(σL) + σC − (1/(σ²L))/(μ + 1/σ) + C/μ, with s = σ + 1/μ.
fn tank_impedance(t: &ParallelRlc, sigma: f64) -> Result<Fractions, NoConvergence> {
    let y = Fractions {
        d: C::new(1.0 / t.r_ohm + 1.0 / (sigma * t.l_h) + sigma * t.c_f, 0.0),
        terms: vec![
            (C::new(-1.0 / sigma, 0.0), C::new(-1.0 / (sigma * sigma * t.l_h), 0.0)),
            (C::new(0.0, 0.0), C::new(t.c_f, 0.0)),
        ],
    };
    y.reciprocal()
}

/// A branch's impedance in μ: its series R-L-C, plus the crossover tank on a source that gives its loop.
fn branch_impedance(b: &Branch, sigma: f64) -> Result<Fractions, NoConvergence> {
    let series = series_impedance(b, sigma);
    match &b.tank {
        Some(t) => Ok(series.add(&tank_impedance(t, sigma)?)),
        None => Ok(series),
    }
}

/// A series R-L-C (C optional) as an impedance in μ: R + σL + 1/(σC) + L/μ − (1/(σ²C))/(μ + 1/σ).
fn series_impedance(b: &Branch, sigma: f64) -> Fractions {
    let (r, l) = (b.rlc.r_ohm, b.rlc.l_h);
    let mut f = Fractions::constant(C::new(r + sigma * l, 0.0));
    if l > 0.0 {
        f.terms.push((C::new(0.0, 0.0), C::new(l, 0.0)));
    }
    if let Some(c) = b.rlc.c_f {
        f.d += 1.0 / (sigma * c);
        f.terms.push((C::new(-1.0 / sigma, 0.0), C::new(-1.0 / (sigma * sigma * c), 0.0)));
    }
    f
}

/// The admittance in μ of a branch: the reciprocal of its impedance. A branch of zero impedance has none (the
/// node is pinned); the caller handles that.
fn branch_admittance(b: &Branch, sigma: f64) -> Result<Fractions, NoConvergence> {
    branch_impedance(b, sigma)?.reciprocal()
}

/// The transfer from the load's current to the voltage drop at the node the load draws from (the die when the
/// rail gives a package, else the board node), and, with a package, to the board node.
#[derive(Debug, Clone, PartialEq)]
pub struct RailModes {
    /// At the load's node.
    pub main: Modal,
    /// At the board node when the load is at the die.
    pub board: Option<Modal>,
}

fn is_short(b: &Branch) -> bool {
    b.rlc.r_ohm == 0.0 && b.rlc.l_h == 0.0 && b.rlc.c_f.is_none() && b.tank.is_none()
}

/// The shift σ: a real frequency inside the network's range (the geometric mean of its branches' corners), where
/// no positive-real function has a pole or a zero.
fn shift(network: &Network) -> f64 {
    let mut logs = Vec::new();
    for b in network.branches.iter().chain(&network.package).chain(&network.die) {
        let (r, l) = (b.rlc.r_ohm, b.rlc.l_h);
        if let Some(c) = b.rlc.c_f {
            if l > 0.0 {
                logs.push((1.0 / (l * c).sqrt()).ln());
            } else if r > 0.0 {
                logs.push((1.0 / (r * c)).ln());
            }
        } else if l > 0.0 && r > 0.0 {
            logs.push((r / l).ln());
        }
        if let Some(t) = &b.tank {
            logs.push((TWO_PI * t.resonance_hz()).ln());
        }
    }
    if logs.is_empty() { 1e6 } else { (logs.iter().sum::<f64>() / logs.len() as f64).exp() * 1.0317 }
}

/// The rail's poles and residues. A short branch at the board node pins it: the board node then does not move,
/// and only the package and die (if any) respond.
pub(super) fn rail_modes(network: &Network) -> Result<RailModes, NoConvergence> {
    let sigma = shift(network);
    let zero = Fractions::constant(C::new(0.0, 0.0));
    let pinned = network.branches.iter().any(is_short);
    // Board-node impedance Z_b in μ (zero when pinned).
    let z_board = if pinned {
        zero.clone()
    } else {
        let mut y = zero.clone();
        for b in &network.branches {
            y = y.add(&branch_admittance(b, sigma)?);
        }
        y.reciprocal()?
    };
    let Some(package) = &network.package else {
        return Ok(RailModes { main: Modal::from_mu(&z_board, sigma), board: None });
    };
    // The path behind the die: package in series with the board.
    let z_path = z_board.clone().add(&branch_impedance(package, sigma)?);
    let die = network.die.as_ref().map(|d| branch_impedance(d, sigma)).transpose()?;
    let z_die = match (&die, z_path.d.norm() == 0.0 && z_path.terms.is_empty()) {
        // Pinned board and a short package: the die node is pinned too.
        (_, true) => zero.clone(),
        (None, false) => z_path.clone(),
        (Some(zd), false) => {
            let w = z_path.reciprocal()?.add(&zd.reciprocal()?);
            w.reciprocal()?
        }
    };
    // Board voltage = Z_die · Z_b / (Z_b + Z_package) times the load current: same poles as Z_die.
    let ratio = |x: C| {
        let zp = z_path.eval(x);
        if zp.norm() == 0.0 { C::new(0.0, 0.0) } else { z_board.eval(x) / zp }
    };
    let board = Fractions {
        d: if z_path.d.norm() == 0.0 { C::new(0.0, 0.0) } else { z_die.d * z_board.d / z_path.d },
        terms: z_die.terms.iter().map(|&(p, r)| (p, r * ratio(p))).collect(),
    };
    Ok(RailModes { main: Modal::from_mu(&z_die, sigma), board: Some(Modal::from_mu(&board, sigma)) })
}
