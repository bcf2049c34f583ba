//! Judging mixes fast on a fixed grid over the band: the rail's fixed admittance (source, plane, kept groups)
//! plus Σ countᵢ·yᵢ, one admittance per candidate part computed once, then the view at the die when the rail
//! gives a package. Every branch comes from the engine's own network builder in the chosen corner, so a candidate
//! is derated (DC bias, temperature) and a measured part read from its data exactly as `check` does.
//!
//! In the worst corner the engine judges a rail at the tolerance vertex (each group's capacitance and ESR at an
//! end of its tolerance) with the highest |Z| over the band. The highest |Z| over the band and over the vertices
//! is the highest over the band of the per-frequency highest over the vertices (two maxima commute), so the
//! evaluator takes, at each grid point, the highest |Z| over every vertex of the mix's groups (and the kept ones):
//! the figure the engine's search finds, on this grid. Each group's vertex admittances lie in a disk; the disks
//! add, and their image under the view gives a proven upper bound of |Z| at a point (the worst-corner search's
//! bound), so the vertices are enumerated, with pruning, only at the points where that bound could raise the
//! worst found so far: usually a few around the peaks.

use super::Candidate;
use super::placed_form::PlacedForm;
use crate::analysis::network::{Branch, BranchKind, Network, Scale, View, group_branch};
use crate::analysis::rail::target_impedance;
use crate::analysis::worst::{vertex_choices, z_bound};
use crate::model::{Board, DecapGroup, Rail};
use crate::physics::Corner;
use num_complex::Complex64;

/// A group's admittance over its tolerance vertices at every grid point, with the disk holding them.
struct Spread {
    /// `vertices[v][p]`: the admittance at vertex v and grid point p.
    vertices: Vec<Vec<Complex64>>,
    /// The disk's centre at each point (the middle of the vertices' box).
    centre: Vec<Complex64>,
    /// The disk's radius at each point.
    radius: Vec<f64>,
}

impl Spread {
    /// The spread of a group from its branch at each vertex (`None` when one cannot be built).
    fn of(branches: &[Option<Branch>], freq_hz: &[f64]) -> Spread {
        let vertices: Vec<Vec<Complex64>> = branches
            .iter()
            .map(|b| {
                freq_hz.iter().map(|&f| b.as_ref().map_or(Complex64::default(), |b| inverse(b.impedance(f)))).collect()
            })
            .collect();
        let mut centre = Vec::with_capacity(freq_hz.len());
        let mut radius = Vec::with_capacity(freq_hz.len());
        for p in 0..freq_hz.len() {
            let (mut lo, mut hi) = (vertices[0][p], vertices[0][p]);
            for v in &vertices {
                lo = Complex64::new(lo.re.min(v[p].re), lo.im.min(v[p].im));
                hi = Complex64::new(hi.re.max(v[p].re), hi.im.max(v[p].im));
            }
            let c = (lo + hi) / 2.0;
            let r = vertices.iter().map(|v| (v[p] - c).norm()).fold(0.0, f64::max);
            // A hair of slack so rounding can never put a vertex outside its disk.
            centre.push(c);
            radius.push(r * (1.0 + 1e-12) + f64::MIN_POSITIVE);
        }
        Spread { vertices, centre, radius }
    }
}

/// Judges mixes fast on a fixed grid: the rail's fixed admittance plus counts times each candidate's.
pub struct MixEvaluator {
    /// Grid frequencies, Hz.
    pub freq_hz: Vec<f64>,
    /// The fixed admittance (kept groups that vary at the centre of their disk).
    fixed_y: Vec<Complex64>,
    /// One part of each candidate (at the centre of its disk when it varies).
    unit_y: Vec<Vec<Complex64>>,
    /// In the worst corner, each candidate's spread over its tolerance vertices (`None`: it does not vary).
    unit_spread: Vec<Option<Spread>>,
    /// In the worst corner, the kept groups that vary (count folded in).
    kept_spread: Vec<Spread>,
    /// True when some group varies (the worst corner with a tolerance given).
    spreads: bool,
    /// Package and die impedances per grid point when the verdict is at the die.
    die: Option<(Vec<Complex64>, Vec<Option<Complex64>>)>,
    /// On a placed rail: the loads' view with the new parts at one spot (the fixed admittance is then zero: the
    /// source, the plane pair and the kept groups are inside the form).
    placed: Option<PlacedForm>,
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
        self.scaled(c, Scale::MIDDLE)
    }

    /// One part of `c` with its capacitance and ESR scaled by `scale` (a tolerance vertex).
    fn scaled(&mut self, c: &Candidate, scale: Scale) -> Option<Branch> {
        self.shell.parts.clear();
        self.shell.parts.push(c.part.clone());
        self.rail.decaps.clear();
        self.rail.decaps.push(DecapGroup::new(c.part.id.clone(), 1, c.mounting_h));
        group_branch(&self.shell, &self.rail, 0, self.corner, scale, None)
    }
}

impl MixEvaluator {
    /// Prepare the grid for a rail and candidates, with the part values as the check takes them.
    pub fn new(board: &Board, rail_index: usize, candidates: &[Candidate], keep_existing: bool, points: usize) -> Self {
        Self::in_corner(board, rail_index, candidates, keep_existing, points, super::VERDICT_CORNER, None)
    }

    /// Prepare the grid for a rail and candidates in `corner`: every part derated for it, and in the worst corner
    /// every group over its tolerance vertices. On a placed rail the new parts sit at `spot_m` (required there:
    /// without it the rail is judged as one node) and the mix is judged at the loads.
    pub fn in_corner(
        board: &Board,
        rail_index: usize,
        candidates: &[Candidate],
        keep_existing: bool,
        points: usize,
        corner: Corner,
        spot_m: Option<[f64; 2]>,
    ) -> Self {
        let rail = &board.rails[rail_index];
        let mut fixed_rail = rail.clone();
        if !keep_existing {
            fixed_rail.decaps.clear();
            if let Some(p) = fixed_rail.placement.as_mut() {
                p.groups.clear();
            }
        }
        let placed_spot = spot_m.filter(|_| rail.placement.is_some());
        if placed_spot.is_none() {
            fixed_rail.placement = None;
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
        let worst = corner == Corner::Worst;
        let placed = placed_spot.and_then(|spot| PlacedForm::new(board, &fixed_rail, spot, corner, &freq_hz));
        // In the worst corner, the kept groups that vary leave the fixed sum for their own spread (on a placed
        // rail they stay inside the circuit, at their middle values: the engine's re-check judges the mix).
        let mut kept_spread = Vec::new();
        let mut varies = vec![false; fixed_rail.decaps.len()];
        if worst && placed.is_none() {
            for (j, g) in fixed_rail.decaps.iter().enumerate() {
                let Some(part) = board.part(&g.part) else { continue };
                let choices = vertex_choices(part);
                if choices.len() < 2 || group_branch(board, &fixed_rail, j, corner, Scale::MIDDLE, None).is_none() {
                    continue;
                }
                let branches: Vec<Option<Branch>> =
                    choices.iter().map(|(_, _, s)| group_branch(board, &fixed_rail, j, corner, *s, None)).collect();
                kept_spread.push(Spread::of(&branches, &freq_hz));
                varies[j] = true;
            }
        }
        let fixed_y = freq_hz
            .iter()
            .enumerate()
            .map(|(p, &f)| {
                if placed.is_some() {
                    return Complex64::default();
                }
                let own: Complex64 = network
                    .branches
                    .iter()
                    .filter(|b| !matches!(b.kind, BranchKind::Group(j) if varies[j]))
                    .map(|b| inverse(b.impedance(f)))
                    .sum();
                own + kept_spread.iter().map(|s| s.centre[p]).sum::<Complex64>()
            })
            .collect();
        let unit_spread: Vec<Option<Spread>> = candidates
            .iter()
            .zip(&ones)
            .map(|(c, one)| {
                let choices = vertex_choices(&c.part);
                (worst && one.is_some() && choices.len() > 1).then(|| {
                    let branches: Vec<Option<Branch>> = choices.iter().map(|(_, _, s)| maker.scaled(c, *s)).collect();
                    Spread::of(&branches, &freq_hz)
                })
            })
            .collect();
        let unit_y = ones
            .iter()
            .zip(&unit_spread)
            .map(|(o, spread)| match (o, spread) {
                (_, Some(s)) => s.centre.clone(),
                (Some(b), None) => freq_hz.iter().map(|&f| inverse(b.impedance(f))).collect(),
                (None, None) => vec![Complex64::default(); freq_hz.len()],
            })
            .collect();
        let die = (placed.is_none() && network.verdict_view() == View::Die).then(|| {
            let pkg = freq_hz
                .iter()
                .map(|&f| network.package.as_ref().map_or(Complex64::default(), |p| p.impedance(f)))
                .collect();
            let die = freq_hz.iter().map(|&f| network.die.as_ref().map(|d| d.impedance(f))).collect();
            (pkg, die)
        });
        let spreads = !kept_spread.is_empty() || unit_spread.iter().any(Option::is_some);
        MixEvaluator {
            freq_hz,
            fixed_y,
            unit_y,
            unit_spread,
            kept_spread,
            spreads,
            die,
            placed,
            target: target_impedance(rail),
        }
    }

    /// The target impedance, Ω.
    pub fn target(&self) -> f64 {
        self.target
    }

    /// |Z| over the grid for a mix, as (worst |Z|, its frequency, Σ excess over target relative to target).
    pub fn judge(&self, counts: &[u32]) -> (f64, f64, f64) {
        let y = self.admittance(counts);
        let (worst, at, excess) = self.score(&y, counts, self.target);
        (worst, self.freq_hz[at], excess)
    }

    /// The board node's admittance at every grid point for a mix (each group that varies at its disk's centre).
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

    /// The fixed admittance at every grid point (source, plane, kept groups; those that vary at their centre).
    pub(super) fn fixed(&self) -> &[Complex64] {
        &self.fixed_y
    }

    /// The most the fixed admittance's magnitude can be at grid point `p` over the kept groups' vertices.
    pub(super) fn fixed_most(&self, p: usize) -> f64 {
        self.fixed_y[p].norm() + self.kept_spread.iter().map(|s| s.radius[p]).sum::<f64>()
    }

    /// One part of candidate `i` at every grid point (at its disk's centre when it varies).
    pub(super) fn unit(&self, i: usize) -> &[Complex64] {
        &self.unit_y[i]
    }

    /// The least |admittance| of one part of candidate `i` at grid point `p` over its tolerance vertices.
    pub(super) fn unit_least(&self, i: usize, p: usize) -> f64 {
        match &self.unit_spread[i] {
            Some(s) => s.vertices.iter().map(|v| v[p].norm()).fold(f64::INFINITY, f64::min),
            None => self.unit_y[i][p].norm(),
        }
    }

    /// Number of candidates.
    pub(super) fn candidates(&self) -> usize {
        self.unit_y.len()
    }

    /// True when the verdict is taken at the die.
    pub(super) fn at_die(&self) -> bool {
        self.die.is_some()
    }

    /// True when the mix is judged at the loads of a placed rail.
    pub(super) fn is_placed(&self) -> bool {
        self.placed.is_some()
    }

    /// On a placed rail, with a perfect short where the new parts go: the worst load's effective impedance at
    /// grid point `p` and that load's index.
    pub(super) fn shorted_at_spot(&self, p: usize) -> Option<(f64, usize)> {
        self.placed.as_ref().map(|f| f.shorted(p))
    }

    /// The package and die impedance at grid point `p`, when the verdict is at the die.
    pub(super) fn package_and_die(&self, p: usize) -> Option<(Complex64, Option<Complex64>)> {
        self.die.as_ref().map(|(pkg, die)| (pkg[p], die[p]))
    }

    /// |Z| in the verdict's view at grid point `p` for a board-node admittance `y`.
    #[inline]
    pub(super) fn magnitude(&self, p: usize, y: Complex64) -> f64 {
        if let Some(form) = &self.placed {
            return form.magnitude(p, y);
        }
        let z = inverse(y);
        match &self.die {
            None => z.norm(),
            Some((pkg, die)) => {
                let behind = z + pkg[p];
                inverse(inverse(behind) + die[p].map_or(Complex64::default(), inverse)).norm()
            }
        }
    }

    /// A proven upper bound of |Z| at grid point `p` when the board-node admittance lies in the disk (c, r).
    fn bound(&self, p: usize, c: Complex64, r: f64) -> f64 {
        if let Some(form) = &self.placed {
            return form.bound(p, c, r);
        }
        z_bound(c, r, self.die.as_ref().map(|(pkg, die)| (pkg[p], die[p].map_or(Complex64::default(), inverse))))
    }

    /// The groups of a mix that vary over their tolerance, as (count, spread): the kept ones and the candidates
    /// used. Empty outside the worst corner.
    fn varying<'a>(&'a self, counts: &[u32]) -> Vec<(f64, &'a Spread)> {
        let kept = self.kept_spread.iter().map(|s| (1.0, s));
        let used = counts.iter().zip(&self.unit_spread).filter(|(n, _)| **n > 0);
        kept.chain(used.filter_map(|(&n, s)| s.as_ref().map(|s| (n as f64, s)))).collect()
    }

    /// (worst |Z|, its grid index, Σ excess over `limit` relative to it) for a mix of `counts` whose board-node
    /// admittance (groups that vary at their centres) is `y`. The worst |Z| is over the tolerance vertices in the
    /// worst corner; the excess, a guide for the search, is taken at the centres.
    pub(super) fn score(&self, y: &[Complex64], counts: &[u32], limit: f64) -> (f64, usize, f64) {
        let varying = self.varying(counts);
        let (mut worst, mut at, mut excess) = (0.0f64, 0, 0.0);
        for (p, &yp) in y.iter().enumerate() {
            let m = self.magnitude(p, yp);
            if m > worst || m.is_nan() {
                worst = if m.is_nan() { f64::INFINITY } else { m };
                at = p;
            }
            excess += (m / limit - 1.0).max(0.0);
        }
        if varying.is_empty() {
            return (worst, at, excess);
        }
        // Over the vertices: first where the centres peak, then wherever the disk bound could go higher.
        let mut worst = self.vertex_worst(at, y[at], &varying, 0.0);
        for (p, &yp) in y.iter().enumerate() {
            let r: f64 = varying.iter().map(|(n, s)| n * s.radius[p]).sum();
            if p != at && self.bound(p, yp, r) > worst {
                let w = self.vertex_worst(p, yp, &varying, worst);
                if w > worst {
                    worst = w;
                    at = p;
                }
            }
        }
        (worst, at, excess)
    }

    /// The highest |Z| at grid point `p` over the vertices of the `varying` groups, when the board-node admittance
    /// with them at their centres is `y`; `floor` when no vertex goes above it. Depth-first over the groups,
    /// a branch left when the disk bound of its completions does not exceed the best found.
    fn vertex_worst(&self, p: usize, y: Complex64, varying: &[(f64, &Spread)], floor: f64) -> f64 {
        let base = y - varying.iter().map(|(n, s)| s.centre[p] * n).sum::<Complex64>();
        // suffix[d]: the centres and radii of the groups from d on.
        let mut suffix = vec![(Complex64::default(), 0.0); varying.len() + 1];
        for d in (0..varying.len()).rev() {
            let (n, s) = varying[d];
            suffix[d] = (suffix[d + 1].0 + s.centre[p] * n, suffix[d + 1].1 + s.radius[p] * n);
        }
        let mut best = floor;
        self.vertex_dfs(p, base, varying, &suffix, 0, &mut best);
        best
    }

    fn vertex_dfs(
        &self,
        p: usize,
        partial: Complex64,
        varying: &[(f64, &Spread)],
        suffix: &[(Complex64, f64)],
        d: usize,
        best: &mut f64,
    ) {
        if d == varying.len() {
            let m = self.magnitude(p, partial);
            if m.is_nan() {
                *best = f64::INFINITY;
            } else if m > *best {
                *best = m;
            }
            return;
        }
        if self.bound(p, partial + suffix[d].0, suffix[d].1) <= *best {
            return;
        }
        let (n, s) = varying[d];
        for v in &s.vertices {
            self.vertex_dfs(p, partial + v[p] * n, varying, suffix, d + 1, best);
        }
    }

    /// Like [`MixEvaluator::score`] for `y` plus `d` parts of candidate `i`, returning (worst |Z|, excess).
    pub(super) fn score_with(&self, y: &[Complex64], counts: &[u32], i: usize, d: f64, limit: f64) -> (f64, f64) {
        if self.spreads {
            let mut with = counts.to_vec();
            with[i] = (with[i] as f64 + d).max(0.0) as u32;
            let sum: Vec<Complex64> = y.iter().zip(&self.unit_y[i]).map(|(a, u)| a + u * d).collect();
            let (worst, _, excess) = self.score(&sum, &with, limit);
            return (worst, excess);
        }
        // Outside the worst corner, without building the sum.
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
