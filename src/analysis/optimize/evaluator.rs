//! Judging mixes fast on a fixed grid over the band: the rail's fixed admittance (source, plane, kept groups)
//! plus Σ countᵢ·yᵢ, one admittance per candidate part computed once, then the view at the die when the rail
//! gives a package. Every branch comes from the engine's own network builder in the chosen corner, so a candidate
//! is derated (DC bias, temperature, tolerance) and a measured part read from its data exactly as `check` does.

use super::Candidate;
use crate::analysis::network::{Branch, Network, View};
use crate::analysis::rail::target_impedance;
use crate::model::{Board, DecapGroup, Rail};
use crate::physics::Corner;
use num_complex::Complex64;

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

/// Builds one candidate's branch (one part with its mounting) the way the engine builds a group, reusing one
/// board shell so a long candidate list costs no copy of the board per part.
pub(super) struct BranchMaker {
    shell: Board,
    rail: Rail,
    corner: Corner,
}

impl BranchMaker {
    /// A maker for candidates on `rail` of `board` in `corner`.
    pub(super) fn new(board: &Board, rail: &Rail, corner: Corner) -> BranchMaker {
        // The board's derating settings (temperature range, generic DC bias) without its parts and rails: cloned
        // once here, whatever fields the board grows.
        let shell = Board { parts: Vec::new(), rails: Vec::new(), ..board.clone() };
        let rail = Rail { source: None, plane: None, package: None, die: None, decaps: Vec::new(), ..rail.clone() };
        BranchMaker { shell, rail, corner }
    }

    /// One part of `c` as the engine sees it, or `None` when the part cannot be used (its data failed to load).
    pub(super) fn branch(&mut self, c: &Candidate) -> Option<Branch> {
        self.shell.parts.clear();
        self.shell.parts.push(c.part.clone());
        self.rail.decaps.clear();
        self.rail.decaps.push(DecapGroup::new(c.part.id.clone(), 1, c.mounting_h));
        Network::of_rail_in(&self.shell, &self.rail, self.corner).branches.pop()
    }
}

impl MixEvaluator {
    /// Prepare the grid for a rail and candidates, with the part values as the check takes them.
    pub fn new(board: &Board, rail_index: usize, candidates: &[Candidate], keep_existing: bool, points: usize) -> Self {
        Self::in_corner(board, rail_index, candidates, keep_existing, points, super::VERDICT_CORNER)
    }

    /// Prepare the grid for a rail and candidates with every part derated for `corner`.
    pub fn in_corner(
        board: &Board,
        rail_index: usize,
        candidates: &[Candidate],
        keep_existing: bool,
        points: usize,
        corner: Corner,
    ) -> Self {
        let rail = &board.rails[rail_index];
        let mut fixed_rail = rail.clone();
        if !keep_existing {
            fixed_rail.decaps.clear();
        }
        let network = Network::of_rail_in(board, &fixed_rail, corner);
        let band = rail.band_hz_or_default();
        let mut freq_hz = crate::analysis::grid::log_grid(band[0], band[1], points.max(3));
        let mut maker = BranchMaker::new(board, rail, corner);
        let ones: Vec<Option<Branch>> = candidates.iter().map(|c| maker.branch(c)).collect();
        // Each candidate's own resonance is where adding it changes |Z| most sharply: look there too.
        freq_hz.extend(
            ones.iter().flatten().filter_map(|b| b.rlc.self_resonance_hz()).filter(|f| *f > band[0] && *f < band[1]),
        );
        freq_hz.sort_by(f64::total_cmp);
        freq_hz.dedup();
        let fixed_y = freq_hz.iter().map(|&f| network.branches.iter().map(|b| inverse(b.impedance(f))).sum()).collect();
        let unit_y = ones
            .iter()
            .map(|o| match o {
                Some(b) => freq_hz.iter().map(|&f| inverse(b.impedance(f))).collect(),
                None => vec![Complex64::default(); freq_hz.len()],
            })
            .collect();
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
        let y = self.admittance(counts);
        let (worst, at, excess) = self.score(&y, self.target);
        (worst, self.freq_hz[at], excess)
    }

    /// The board node's admittance at every grid point for a mix.
    pub(super) fn admittance(&self, counts: &[u32]) -> Vec<Complex64> {
        let mut y = self.fixed_y.clone();
        for (i, &n) in counts.iter().enumerate() {
            if n > 0 {
                for (a, u) in y.iter_mut().zip(&self.unit_y[i]) {
                    *a += u * n as f64;
                }
            }
        }
        y
    }

    /// The fixed admittance at every grid point (source, plane, kept groups).
    pub(super) fn fixed(&self) -> &[Complex64] {
        &self.fixed_y
    }

    /// One part of candidate `i` at every grid point.
    pub(super) fn unit(&self, i: usize) -> &[Complex64] {
        &self.unit_y[i]
    }

    /// Number of candidates.
    pub(super) fn candidates(&self) -> usize {
        self.unit_y.len()
    }

    /// True when the verdict is taken at the die.
    pub(super) fn at_die(&self) -> bool {
        self.die.is_some()
    }

    /// The package and die impedance at grid point `p`, when the verdict is at the die.
    pub(super) fn package_and_die(&self, p: usize) -> Option<(Complex64, Option<Complex64>)> {
        self.die.as_ref().map(|(pkg, die)| (pkg[p], die[p]))
    }

    /// |Z| in the verdict's view at grid point `p` for a board-node admittance `y`.
    #[inline]
    pub(super) fn magnitude(&self, p: usize, y: Complex64) -> f64 {
        let z = inverse(y);
        match &self.die {
            None => z.norm(),
            Some((pkg, die)) => {
                let behind = z + pkg[p];
                inverse(inverse(behind) + die[p].map_or(Complex64::default(), inverse)).norm()
            }
        }
    }

    /// (worst |Z|, its grid index, Σ excess over `limit` relative to it) for a board-node admittance per point.
    pub(super) fn score(&self, y: &[Complex64], limit: f64) -> (f64, usize, f64) {
        let (mut worst, mut at, mut excess) = (0.0f64, 0, 0.0);
        for (p, &yp) in y.iter().enumerate() {
            let m = self.magnitude(p, yp);
            if m > worst || m.is_nan() {
                worst = if m.is_nan() { f64::INFINITY } else { m };
                at = p;
            }
            excess += (m / limit - 1.0).max(0.0);
        }
        (worst, at, excess)
    }

    /// Like [`MixEvaluator::score`] for `y` plus `d` parts of candidate `i`, without building the sum.
    pub(super) fn score_with(&self, y: &[Complex64], i: usize, d: f64, limit: f64) -> (f64, f64) {
        let (mut worst, mut excess) = (0.0f64, 0.0);
        for (p, (&yp, u)) in y.iter().zip(&self.unit_y[i]).enumerate() {
            let m = self.magnitude(p, yp + u * d);
            worst = if m.is_nan() { f64::INFINITY } else { worst.max(m) };
            excess += (m / limit - 1.0).max(0.0);
        }
        (worst, excess)
    }
}

/// 1/z, with a zero impedance giving an infinite admittance.
pub(super) fn inverse(z: Complex64) -> Complex64 {
    let d = z.norm_sqr();
    if d == 0.0 { Complex64::new(f64::INFINITY, 0.0) } else { Complex64::new(z.re / d, -z.im / d) }
}
