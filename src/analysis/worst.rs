//! The worst corner as a search: which end of its capacitance and ESR tolerance each group must sit at for the
//! rail's |Z| in the band to be highest.
//!
//! Every group with a tolerance has two (C or ESR only) or four (both) vertices. The rail's worst |Z| over the
//! band is evaluated on the band's scan grid with the bias and temperature of the worst corner. Where the number
//! of vertex combinations is small every one is tried. Otherwise a branch-and-bound search runs over the groups
//! (most influential first): at a node some groups are fixed and each free group's admittance, at every grid
//! frequency, lies in a disk holding all its vertices; the disks add, and the image of a disk under 1/Y (and the
//! shift and second inversion of the die view) is again a disk, so |Z| at each frequency has a proven upper
//! bound over every completion of the node. A node whose bound does not exceed the best vertex found is pruned.
//! The search is exact on the grid when it finishes; when its node budget runs out it says so and gives the
//! proven bound on what the unexplored vertices could reach.

use super::network::{Network, Scale, View, group_branch, invert};
use crate::model::{Board, Part, Rail};
use crate::physics::Corner;
use num_complex::Complex64;

/// Which end of a tolerance a group sits at.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// The low end.
    Low,
    /// Fixed: the part gives no tolerance for it (or it is measured).
    Middle,
    /// The high end.
    High,
}

impl Side {
    /// The word used in JSON and text.
    pub fn name(self) -> &'static str {
        match self {
            Side::Low => "low",
            Side::Middle => "fixed",
            Side::High => "high",
        }
    }

    fn factor(self, tolerance: f64) -> f64 {
        match self {
            Side::Low => 1.0 - tolerance,
            Side::Middle => 1.0,
            Side::High => 1.0 + tolerance,
        }
    }
}

/// Where one group sits at the worst vertex.
#[derive(Debug, Clone, PartialEq)]
pub struct GroupVertex {
    /// Index in the rail's `decaps`.
    pub index: usize,
    /// Its capacitance end.
    pub capacitance: Side,
    /// Its ESR end.
    pub esr: Side,
    /// The factors on capacitance and ESR that this means.
    pub scale: Scale,
}

/// The most group-by-grid-point evaluations one search may spend (about a second on this project's machine).
const MAX_SEARCH_WORK: u64 = 200_000_000;

/// How the vertex was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SearchMethod {
    /// Every combination tried.
    Exhaustive,
    /// Branch and bound, finished: exact on the grid.
    BranchAndBound,
    /// Branch and bound stopped at its node budget: the best vertex found and a proven bound on the rest.
    Bounded,
    /// Past the exhaustive limit on a placed rail: the best vertex a one-group-at-a-time ascent found, with no
    /// proven bound (`bound_ohm` is infinite).
    BestFound,
}

impl SearchMethod {
    /// The word used in JSON.
    pub fn name(self) -> &'static str {
        match self {
            SearchMethod::Exhaustive => "exhaustive",
            SearchMethod::BranchAndBound => "branch-and-bound",
            SearchMethod::Bounded => "bounded",
            SearchMethod::BestFound => "best-found",
        }
    }
}

/// The worst tolerance vertex of a rail.
#[derive(Debug, Clone, PartialEq)]
pub struct WorstVertex {
    /// Every group of the rail, in order.
    pub groups: Vec<GroupVertex>,
    /// The highest |Z| on the search grid at this vertex, Ω.
    pub grid_worst_ohm: f64,
    /// No vertex reaches above this on the search grid, Ω (equal to `grid_worst_ohm` when the search finished).
    pub bound_ohm: f64,
    /// How many vertex combinations there are.
    pub vertices: f64,
    /// How many were evaluated one by one.
    pub evaluated: u64,
    /// How it was found.
    pub method: SearchMethod,
}

impl WorstVertex {
    /// The factors for every group, to build the network at this vertex.
    pub fn scales(&self) -> Vec<Scale> {
        self.groups.iter().map(|g| g.scale).collect()
    }
}

/// How hard to search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SearchOptions {
    /// Up to this many combinations, try them all.
    pub exhaustive_limit: f64,
    /// Branch-and-bound nodes (each one pass over the grid) before the search stops with a bound.
    pub node_budget: u64,
}

impl Default for SearchOptions {
    fn default() -> Self {
        SearchOptions { exhaustive_limit: 1024.0, node_budget: 20_000 }
    }
}

/// One group that varies: its vertex choices and their admittances on the grid.
struct Varied {
    index: usize,
    choices: Vec<(Side, Side, Scale)>,
    /// `y[choice][k]`: the group's admittance at grid point k.
    y: Vec<Vec<Complex64>>,
    /// A disk holding every choice's admittance at each grid point: centre and radius.
    centre: Vec<Complex64>,
    radius: Vec<f64>,
}

/// The fixed part of a network on a grid and how a board-node admittance becomes |Z| in the view: what the
/// worst-case search, the yield and the sensitivity vary the groups against.
pub(super) struct Frame {
    /// Admittance at the board node of everything that does not vary (with the package-and-die path in the
    /// board view).
    pub(super) y0: Vec<Complex64>,
    /// In the die view: the package impedance and the die admittance at each point.
    die: Option<(Vec<Complex64>, Vec<Complex64>)>,
}

impl Frame {
    /// The frame of `network` on `freq_hz`, leaving out the groups for which `varies` is true; seen from the die
    /// when `die_view` (and the network has a package), else from the board.
    pub(super) fn build(network: &Network, varies: impl Fn(usize) -> bool, freq_hz: &[f64], die_view: bool) -> Frame {
        let zero = Complex64::new(0.0, 0.0);
        let mut y0 = vec![zero; freq_hz.len()];
        for b in &network.branches {
            if let super::network::BranchKind::Group(i) = b.kind
                && varies(i)
            {
                continue;
            }
            for (k, &f) in freq_hz.iter().enumerate() {
                y0[k] += invert(b.impedance(f));
            }
        }
        let die = match &network.package {
            Some(pk) if die_view => {
                let zp = freq_hz.iter().map(|&f| pk.impedance(f)).collect();
                let yd =
                    freq_hz.iter().map(|&f| network.die.as_ref().map_or(zero, |d| invert(d.impedance(f)))).collect();
                Some((zp, yd))
            }
            _ => {
                // The board sees the package in series with the die as one more branch (open without a die).
                if let (Some(pk), Some(d)) = (&network.package, &network.die) {
                    for (k, &f) in freq_hz.iter().enumerate() {
                        y0[k] += invert(pk.impedance(f) + d.impedance(f));
                    }
                }
                None
            }
        };
        Frame { y0, die }
    }

    /// |Z| at grid point k when the board node's admittance is `y_board`.
    pub(super) fn z(&self, k: usize, y_board: Complex64) -> f64 {
        match &self.die {
            None => invert(y_board).norm(),
            Some((zp, yd)) => invert(yd[k] + invert(zp[k] + invert(y_board))).norm(),
        }
    }

    /// A proven upper bound of |Z| at point k when the board admittance lies in the disk (c, r).
    fn bound(&self, k: usize, c: Complex64, r: f64) -> f64 {
        z_bound(c, r, self.die.as_ref().map(|(zp, yd)| (zp[k], yd[k])))
    }
}

/// A proven upper bound of |Z| when the board node's admittance lies in the disk |y − c| ≤ r: seen from the board
/// (`die` None), or from the die behind a package of impedance zp with a die admittance yd (`die` Some((zp, yd))).
pub(super) fn z_bound(c: Complex64, r: f64, die: Option<(Complex64, Complex64)>) -> f64 {
    match die {
        None => {
            let d = c.norm() - r;
            if d > 0.0 { 1.0 / d } else { f64::INFINITY }
        }
        Some((zp, yd)) => {
            let Some((c1, r1)) = disk_inverse(c, r) else { return f64::INFINITY };
            let Some((c2, r2)) = disk_inverse(c1 + zp, r1) else { return f64::INFINITY };
            let d = (c2 + yd).norm() - r2;
            if d > 0.0 { 1.0 / d } else { f64::INFINITY }
        }
    }
}

/// A part's tolerance vertices: (capacitance end, ESR end, the factors they mean); one choice, the middle, for a
/// part that gives no tolerance (or is measured). The worst corner's search and the optimizer both take them here.
pub(super) fn vertex_choices(part: &Part) -> Vec<(Side, Side, Scale)> {
    let (tc, tr) = (part.c_tolerance(), part.esr_tolerance());
    let c_sides: &[Side] = if tc > 0.0 { &[Side::Low, Side::High] } else { &[Side::Middle] };
    let r_sides: &[Side] = if tr > 0.0 { &[Side::Low, Side::High] } else { &[Side::Middle] };
    let mut choices = Vec::new();
    for &cs in c_sides {
        for &rs in r_sides {
            choices.push((cs, rs, Scale { c: cs.factor(tc), esr: rs.factor(tr) }));
        }
    }
    choices
}

/// The image of the disk |z − c| ≤ r under 1/z, when the disk leaves out 0: the disk centred at
/// conj(c) / (|c|² − r²) with radius r / (|c|² − r²) (a Möbius map takes circles to circles).
pub(super) fn disk_inverse(c: Complex64, r: f64) -> Option<(Complex64, f64)> {
    let d = c.norm_sqr() - r * r;
    (d > 0.0 && d.is_finite()).then(|| (c.conj() / d, r / d))
}

/// Find the worst tolerance vertex of rail `rail` in `view` over the grid `freq_hz`.
pub fn worst_vertex(board: &Board, rail: &Rail, view: View, freq_hz: &[f64], options: &SearchOptions) -> WorstVertex {
    let corner = Corner::Worst;
    let network = Network::of_rail_in(board, rail, corner);
    let die_view = view == View::Die;
    let p = freq_hz.len();

    // The groups that vary, with their choices.
    let mut varied = Vec::new();
    for (i, g) in rail.decaps.iter().enumerate() {
        let Some(part) = board.part(&g.part) else { continue };
        if group_branch(board, rail, i, corner, Scale::MIDDLE, None).is_none() {
            continue;
        }
        let choices = vertex_choices(part);
        if choices.len() == 1 {
            continue;
        }
        let y: Vec<Vec<Complex64>> = choices
            .iter()
            .map(|(_, _, s)| {
                let b = group_branch(board, rail, i, corner, *s, None);
                freq_hz
                    .iter()
                    .map(|&f| b.as_ref().map_or(Complex64::new(0.0, 0.0), |b| invert(b.impedance(f))))
                    .collect()
            })
            .collect();
        let mut centre = Vec::with_capacity(p);
        let mut radius = Vec::with_capacity(p);
        for k in 0..p {
            let (mut lo, mut hi) =
                (Complex64::new(f64::INFINITY, f64::INFINITY), Complex64::new(f64::NEG_INFINITY, f64::NEG_INFINITY));
            for yc in &y {
                lo = Complex64::new(lo.re.min(yc[k].re), lo.im.min(yc[k].im));
                hi = Complex64::new(hi.re.max(yc[k].re), hi.im.max(yc[k].im));
            }
            let c = (lo + hi) / 2.0;
            let r = y.iter().map(|yc| (yc[k] - c).norm()).fold(0.0, f64::max);
            // A hair of slack so rounding can never put a vertex outside its disk.
            centre.push(c);
            radius.push(r * (1.0 + 1e-12) + f64::MIN_POSITIVE);
        }
        varied.push(Varied { index: i, choices, y, centre, radius });
    }

    // The fixed part: every board branch that does not vary, and the view.
    let frame = Frame::build(&network, |i| varied.iter().any(|v| v.index == i), freq_hz, die_view);

    // Most influential first: the largest spread of a group's admittance against the rail's own, anywhere.
    let mid_total: Vec<Complex64> =
        (0..p).map(|k| frame.y0[k] + varied.iter().map(|v| v.centre[k]).sum::<Complex64>()).collect();
    let influence = |v: &Varied| (0..p).map(|k| v.radius[k] / mid_total[k].norm().max(1e-300)).fold(0.0, f64::max);
    varied.sort_by(|a, b| influence(b).total_cmp(&influence(a)));

    let vertices: f64 = varied.iter().map(|v| v.choices.len() as f64).product();
    let mut search = Search::new(&frame, &varied, p);
    let method = if vertices <= options.exhaustive_limit {
        search.prune = false;
        search.run(0);
        SearchMethod::Exhaustive
    } else {
        search.seed();
        // Each node costs about one pass over the varied groups at every grid point: keep the whole search to a
        // bounded amount of work however many groups a rail has (a stopped search states its bound).
        let per_node = (varied.len().max(1) * p.max(1)) as u64;
        search.budget = options.node_budget.min((MAX_SEARCH_WORK / per_node).max(1));
        search.run(0);
        if search.unexplored > search.best { SearchMethod::Bounded } else { SearchMethod::BranchAndBound }
    };

    let mut groups: Vec<GroupVertex> = (0..rail.decaps.len())
        .map(|index| GroupVertex { index, capacitance: Side::Middle, esr: Side::Middle, scale: Scale::MIDDLE })
        .collect();
    for (d, v) in varied.iter().enumerate() {
        let (cs, rs, scale) = v.choices[search.best_choice[d]];
        groups[v.index] = GroupVertex { index: v.index, capacitance: cs, esr: rs, scale };
    }
    WorstVertex {
        groups,
        grid_worst_ohm: search.best,
        bound_ohm: search.best.max(search.unexplored),
        vertices,
        evaluated: search.leaves,
        method,
    }
}

/// The state of a search over the varied groups.
struct Search<'a> {
    frame: &'a Frame,
    varied: &'a [Varied],
    /// levels[d][k]: the board admittance with groups 0..d fixed as in `choice` (and nothing of the rest).
    levels: Vec<Vec<Complex64>>,
    /// Sum of the free groups' disks from depth d on: centres and radii.
    suffix_centre: Vec<Vec<Complex64>>,
    suffix_radius: Vec<Vec<f64>>,
    choice: Vec<usize>,
    best: f64,
    best_choice: Vec<usize>,
    /// The highest bound of a node left unexplored when the budget ran out.
    unexplored: f64,
    nodes: u64,
    leaves: u64,
    budget: u64,
    prune: bool,
}

impl<'a> Search<'a> {
    fn new(frame: &'a Frame, varied: &'a [Varied], p: usize) -> Search<'a> {
        let g = varied.len();
        let mut suffix_centre = vec![vec![Complex64::new(0.0, 0.0); p]; g + 1];
        let mut suffix_radius = vec![vec![0.0; p]; g + 1];
        for d in (0..g).rev() {
            for k in 0..p {
                suffix_centre[d][k] = suffix_centre[d + 1][k] + varied[d].centre[k];
                suffix_radius[d][k] = suffix_radius[d + 1][k] + varied[d].radius[k];
            }
        }
        let mut levels = vec![vec![Complex64::new(0.0, 0.0); p]; g + 1];
        levels[0].clone_from(&frame.y0);
        Search {
            frame,
            varied,
            levels,
            suffix_centre,
            suffix_radius,
            choice: vec![0; g],
            best: f64::NEG_INFINITY,
            best_choice: vec![0; g],
            unexplored: f64::NEG_INFINITY,
            nodes: 0,
            leaves: 0,
            budget: u64::MAX,
            prune: true,
        }
    }

    /// A good vertex to start from, so the bound prunes early: one group at a time takes its worst choice with
    /// the others held, until no change helps. The node's admittance is kept as a running sum, so each try costs
    /// one pass over the grid, not one over every group as well (a rail of thousands of groups stays quick).
    fn seed(&mut self) {
        let p = self.frame.y0.len();
        let frame = self.frame;
        let varied = self.varied;
        let value = |total: &[Complex64]| {
            // A NaN never counts as worst; an infinite |Z| (an open node) does.
            (0..p).map(|k| frame.z(k, total[k])).fold(0.0f64, |w, z| if z > w { z } else { w })
        };
        let mut choice = vec![0; varied.len()];
        let mut total: Vec<Complex64> =
            (0..p).map(|k| frame.y0[k] + varied.iter().map(|v| v.y[0][k]).sum::<Complex64>()).collect();
        let mut best = value(&total);
        let mut tries = 0;
        for _ in 0..4 {
            let mut changed = false;
            for (d, v) in varied.iter().enumerate() {
                for c in 0..v.choices.len() {
                    let old = choice[d];
                    if c == old {
                        continue;
                    }
                    let trial: Vec<Complex64> = (0..p).map(|k| total[k] - v.y[old][k] + v.y[c][k]).collect();
                    let z = value(&trial);
                    tries += 1;
                    if z > best {
                        best = z;
                        changed = true;
                        choice[d] = c;
                        total = trial;
                    }
                }
            }
            if !changed {
                break;
            }
        }
        self.leaves += tries;
        self.best = best;
        self.best_choice = choice;
    }

    fn run(&mut self, d: usize) {
        let p = self.frame.y0.len();
        if d == self.varied.len() {
            self.leaves += 1;
            let mut worst: f64 = 0.0;
            for k in 0..p {
                let z = self.frame.z(k, self.levels[d][k]);
                if z > worst {
                    worst = z;
                }
            }
            if worst > self.best {
                self.best = worst;
                self.best_choice.clone_from(&self.choice);
            }
            return;
        }
        if self.prune {
            // The bound over every completion of this node; stop at the first point that beats the best.
            let mut bound: f64 = 0.0;
            for k in 0..p {
                let c = self.levels[d][k] + self.suffix_centre[d][k];
                let b = self.frame.bound(k, c, self.suffix_radius[d][k]);
                if b > bound {
                    bound = b;
                    if bound > self.best && self.nodes < self.budget {
                        break;
                    }
                }
            }
            if bound <= self.best {
                return;
            }
            if self.nodes >= self.budget {
                self.unexplored = self.unexplored.max(bound);
                return;
            }
            self.nodes += 1;
        }
        for c in 0..self.varied[d].choices.len() {
            self.choice[d] = c;
            let (head, tail) = self.levels.split_at_mut(d + 1);
            let y = &self.varied[d].y[c];
            for k in 0..p {
                tail[0][k] = head[d][k] + y[k];
            }
            self.run(d + 1);
        }
    }
}
