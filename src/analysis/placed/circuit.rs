//! A placed rail's circuit: the plane pair as an N-port with every branch at its port, reduced to the loads.
//!
//! ```text
//!   port of the source ---- R-L ---- supply (AC ground)
//!   port of each part  ---- ESR, ESL + mounting, C ---- return plane
//!   plane pair (N-port: Z = 11ᵀ/(a·b·Y_sq) + Q(f))
//!   port of each load ---- package R-L ---- die node ---- die R-C ---- return plane
//! ```
//!
//! The common (0,0) term of the plane's matrix is kept apart as one more unknown u (the voltage it carries), so
//! the system solved per frequency is, with A = Q_pp + D_p (D_p the branch impedances at the branch ports p):
//!
//! ```text
//!   [ A   1   ] [I_p]   [−Q_pl]          V_c = u·1 + Q_cp·I_p + Q_cl
//!   [ 1ᵀ −Y_0 ] [ u ] = [ −1  ]          (a 1 A drive at load port l)
//! ```
//!
//! which is Z_cc − Z_cp·(Z_pp + D_p)⁻¹·Z_pc written without subtracting the large plate term from itself, and
//! which stays exact in the lumped limit (every port at one point: A = D_p, and the system is the admittance sum).

use super::lanes::Lanes;
use super::ldl::solve_general;
use crate::analysis::network::{Branch, BranchKind, Network};
use crate::model::{Board, GroupSpots, Rail};
use crate::physics::plane_pair::{DEFAULT_TOLERANCE, PortRect, PreparedPlane, StaticParts};
use crate::physics::{Corner, SeriesRlc};
use num_complex::Complex64 as C;
use std::sync::Arc;

/// What sits at a branch port.
#[derive(Debug, Clone, PartialEq)]
pub enum PortOwner {
    /// The regulator.
    Source,
    /// A decap group's parts: all of them at one spot (`reference` None) or one placed part.
    Group {
        /// Index in the rail's `decaps`.
        group: usize,
        /// The part's reference designator, for a group placed part by part.
        reference: Option<String>,
    },
}

/// A branch at its port.
#[derive(Debug, Clone, PartialEq)]
pub struct BranchPort {
    /// What it is.
    pub owner: PortOwner,
    /// Its impedance to the return plane (count folded in for a group at one spot).
    pub branch: Branch,
}

/// A load at its port, with what sits between its pins and its die.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadPort {
    /// The load's name.
    pub name: String,
    /// Its current step, A.
    pub step_a: f64,
    /// Its package (series R-L from the pins to the die).
    pub package: Option<SeriesRlc>,
    /// Its die capacitance (behind the package).
    pub die: Option<SeriesRlc>,
}

/// The impedances among the loads at one frequency: at their pins (the plane side) and at their dies (through each
/// load's package, with its die capacitance; the pins' values where a load has no package). Row-major n × n.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadMatrix {
    /// Number of loads.
    pub n: usize,
    /// Z among the load ports.
    pub at_pins: Vec<C>,
    /// Z among the dies.
    pub at_dies: Vec<C>,
}

impl LoadMatrix {
    /// Z(k, l) at the dies.
    pub fn die(&self, k: usize, l: usize) -> C {
        self.at_dies[k * self.n + l]
    }
    /// Z(k, l) at the pins.
    pub fn pins(&self, k: usize, l: usize) -> C {
        self.at_pins[k * self.n + l]
    }
}

/// Buffers reused from one frequency to the next.
#[derive(Debug, Clone, Default)]
pub struct Workspace {
    a: Vec<Lanes<1>>,
    col: Vec<Lanes<1>>,
}

/// Frequencies factored together (the lanes of one batch).
pub(super) const BATCH: usize = 2;

/// The smallest pivot magnitude accepted; a smaller one is replaced so the solve stays finite (it means a port
/// shorted to another with no impedance between them, which the validated inputs never give at f > 0).
const TINY_PIVOT: f64 = 1e-300;

/// One unknown of the system solved per frequency, in elimination order.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Row {
    /// The current into branch b's port (b in `branches` order, also its plane port).
    Branch(usize),
    /// The voltage u the plate term carries.
    Border,
    /// Load k's port (plane port np + k): kept, not eliminated.
    Load(usize),
}

/// Where row i of a packed lower triangle starts.
pub(super) fn row_start(i: usize) -> usize {
    i * (i + 1) / 2
}

/// A placed rail, ready to evaluate at any frequency up to the one it was prepared for.
#[derive(Debug, Clone)]
pub struct PlacedCircuit {
    /// The plane pair with every port: the branch ports first (in `branches` order), then the loads. Shared with
    /// the kept planes ([`super::plane_cache`]) until a port moves.
    pub plane: Arc<PreparedPlane>,
    /// The branches at their ports.
    pub branches: Vec<BranchPort>,
    /// The loads at their ports.
    pub loads: Vec<LoadPort>,
}

impl PlacedCircuit {
    /// Build a placed rail's circuit in `corner`, prepared for frequencies up to `f_max_hz`. `None` for a lumped
    /// rail. Groups of count 0 or of an unusable measured part are left out, as in the lumped network.
    pub fn of_rail(board: &Board, rail: &Rail, corner: Corner, f_max_hz: f64) -> Option<PlacedCircuit> {
        PlacedCircuit::of_rail_scaled(board, rail, corner, &[], f_max_hz)
    }

    /// [`PlacedCircuit::of_rail`] with group `i`'s capacitance and ESR multiplied by `scales[i]` (a tolerance
    /// vertex, as [`Network::of_rail_scaled`] takes it).
    pub fn of_rail_scaled(
        board: &Board,
        rail: &Rail,
        corner: Corner,
        scales: &[crate::analysis::network::Scale],
        f_max_hz: f64,
    ) -> Option<PlacedCircuit> {
        let placement = rail.placement.as_ref()?;
        // The lumped network gives each branch (derating, measured data, mounting) exactly as the lumped engine
        // has it; a group placed part by part is built with a count of one, so each branch is one part.
        let mut single = rail.clone();
        for (g, gp) in single.decaps.iter_mut().zip(&placement.groups) {
            if matches!(gp.spots, GroupSpots::Each(_)) && g.count > 0 {
                g.count = 1;
            }
        }
        let network = Network::of_rail_scaled(board, &single, corner, scales);
        let mut ports = Vec::new();
        let mut branches = Vec::new();
        for b in &network.branches {
            match b.kind {
                BranchKind::Source => {
                    if let Some(s) = &placement.source {
                        ports.push(s.port());
                        branches.push(BranchPort { owner: PortOwner::Source, branch: b.clone() });
                    }
                }
                BranchKind::Group(i) => {
                    let Some(gp) = placement.groups.get(i) else { continue };
                    let side = gp.port_side_m();
                    match &gp.spots {
                        GroupSpots::At(xy) => {
                            ports.push(PortRect::square(xy[0], xy[1], side));
                            branches.push(BranchPort {
                                owner: PortOwner::Group { group: i, reference: None },
                                branch: b.clone(),
                            });
                        }
                        GroupSpots::Each(spots) => {
                            for s in spots {
                                ports.push(PortRect::square(s.at_m[0], s.at_m[1], side));
                                let mut one = b.clone();
                                one.label = format!("{} {}", s.reference, rail.decaps[i].part);
                                branches.push(BranchPort {
                                    owner: PortOwner::Group { group: i, reference: Some(s.reference.clone()) },
                                    branch: one,
                                });
                            }
                        }
                    }
                }
                // A placed rail has no lumped plane, package or die (validation refuses them).
                BranchKind::Plane | BranchKind::Package | BranchKind::Die => {}
            }
        }
        let mut loads = Vec::new();
        for (load, lp) in rail.loads.iter().zip(&placement.loads) {
            ports.push(lp.port());
            let package = lp.package.map(|p| SeriesRlc { r_ohm: p.r_ohm, l_h: p.l_h, c_f: None });
            let die = lp.die.filter(|_| package.is_some()).map(|d| SeriesRlc {
                r_ohm: d.esr_ohm,
                l_h: 0.0,
                c_f: Some(d.capacitance_f),
            });
            loads.push(LoadPort { name: load.name.clone(), step_a: load.step_a, package, die });
        }
        let plane = super::plane_cache::prepared(placement.plane_pair.stackup(), ports, f_max_hz, DEFAULT_TOLERANCE);
        Some(PlacedCircuit { plane, branches, loads })
    }

    /// Move branch port `i` (in `branches` order) and recompute what depends on it.
    pub fn move_branch(&mut self, i: usize, port: PortRect) {
        Arc::make_mut(&mut self.plane).move_port(i, port);
    }

    /// The plane port of a row (the border has none).
    fn port_of(&self, row: Row) -> Option<usize> {
        match row {
            Row::Branch(b) => Some(b),
            Row::Border => None,
            Row::Load(k) => Some(self.branches.len() + k),
        }
    }

    /// The rows in the usual order: every branch, the border, the loads.
    fn rows(&self) -> Vec<Row> {
        let mut rows: Vec<Row> = (0..self.branches.len()).map(Row::Branch).collect();
        rows.push(Row::Border);
        rows.extend((0..self.loads.len()).map(Row::Load));
        rows
    }

    /// Q(x, y) at the lanes' frequencies without the modes (those are added by [`PlacedCircuit::add_modes`]).
    fn static_entry<const N: usize>(&self, lanes: &[LaneSetup<'_>; N], x: usize, y: usize) -> Lanes<N> {
        let n = self.plane.ports.len();
        let xy = x * n + y;
        Lanes::from_fn(|l| {
            let s = &lanes[l];
            s.coef[0] * s.parts.g[xy] + s.coef[1] * s.parts.t[xy] + s.coef[2] * s.parts.u[xy]
        })
    }

    /// Fill the packed lower triangle of the system for `rows` at the lanes' frequencies.
    pub(super) fn fill<const N: usize>(&self, rows: &[Row], lanes: &[LaneSetup<'_>; N], a: &mut Vec<Lanes<N>>) {
        let size = rows.len();
        a.clear();
        a.resize(row_start(size), Lanes::default());
        let one = Lanes::splat(C::new(1.0, 0.0));
        let plate = Lanes::from_fn(|l| -lanes[l].plate);
        let n = self.plane.ports.len();
        let ports: Vec<Option<usize>> = rows.iter().map(|&r| self.port_of(r)).collect();
        for (i, (&ri, &pi)) in rows.iter().zip(&ports).enumerate() {
            let start = row_start(i);
            let row = &mut a[start..start + i + 1];
            match pi {
                // Row x of each lane's G, T and U taken once for the whole row (the entries are
                // `static_entry`'s, the same expression).
                Some(x) => {
                    let g: [&[f64]; N] = std::array::from_fn(|l| &lanes[l].parts.g[x * n..(x + 1) * n]);
                    let t: [&[f64]; N] = std::array::from_fn(|l| &lanes[l].parts.t[x * n..(x + 1) * n]);
                    let u: [&[f64]; N] = std::array::from_fn(|l| &lanes[l].parts.u[x * n..(x + 1) * n]);
                    for (slot, pj) in row.iter_mut().zip(&ports) {
                        *slot = match *pj {
                            Some(y) => Lanes::from_fn(|l| {
                                let c = &lanes[l].coef;
                                c[0] * g[l][y] + c[1] * t[l][y] + c[2] * u[l][y]
                            }),
                            None => one,
                        };
                    }
                }
                None => {
                    for (slot, pj) in row.iter_mut().zip(&ports) {
                        *slot = if pj.is_some() { one } else { plate };
                    }
                }
            }
            if let Row::Branch(b) = ri {
                a[start + i] = a[start + i] + Lanes::from_fn(|l| lanes[l].branch[b]);
            }
        }
        self.add_modes(rows, lanes, a);
    }

    /// Add the modes each lane sums per frequency (a lane whose level leaves mode K in its tails adds nothing).
    fn add_modes<const N: usize>(&self, rows: &[Row], lanes: &[LaneSetup<'_>; N], a: &mut [Lanes<N>]) {
        let top = lanes.iter().map(|s| s.parts.modes).max().unwrap_or(0);
        let ports: Vec<Option<usize>> = rows.iter().map(|&r| self.port_of(r)).collect();
        let n = rows.len();
        // values[k·n + i]: mode k at row i's port (0 for the border); coef[k]: its coefficient in each lane.
        let mut values = vec![0.0; top * n];
        let mut coef = Vec::with_capacity(top);
        for k in 0..top {
            coef.push(Lanes::from_fn(|l| if k < lanes[l].parts.modes { lanes[l].modes[k] } else { C::new(0.0, 0.0) }));
            let phi = self.plane.mode_values(k);
            for (v, p) in values[k * n..(k + 1) * n].iter_mut().zip(&ports) {
                *v = p.map_or(0.0, |x| phi[x]);
            }
        }
        add_modes_rows(a, &values, &coef, n);
    }

    /// The impedances among the loads at `f_hz`.
    pub fn solve(&self, f_hz: f64, ws: &mut Workspace) -> LoadMatrix {
        let lanes = [LaneSetup::new(self, f_hz)];
        let rows = self.rows();
        self.fill(&rows, &lanes, &mut ws.a);
        eliminate(&mut ws.a, &mut ws.col, rows.len(), self.branches.len() + 1);
        self.load_matrix(f_hz, &ws.a, self.branches.len() + 1, 0)
    }

    /// The impedances among the loads at every frequency of `freq_hz`, one frequency at a time with the buffers
    /// reused. (Factoring two frequencies side by side, as a drag does, was slower here: 40.9 against 34.7 ms for
    /// 60 ports at 1000 frequencies, `cargo bench --bench placed`; neighbours on a log grid can sit at different
    /// levels of the plane's modes, and the batch then adds the larger level's modes to both.)
    pub fn solve_grid(&self, freq_hz: &[f64]) -> Vec<LoadMatrix> {
        let mut ws = Workspace::default();
        freq_hz.iter().map(|&f| self.solve(f, &mut ws)).collect()
    }

    /// The loads' matrix of lane `l` from a factored system whose first `pivots` rows are eliminated and whose
    /// last rows are the loads.
    pub(super) fn load_matrix<const N: usize>(&self, f_hz: f64, a: &[Lanes<N>], pivots: usize, l: usize) -> LoadMatrix {
        let nc = self.loads.len();
        let mut at_pins = vec![C::new(0.0, 0.0); nc * nc];
        for k in 0..nc {
            let start = row_start(pivots + k) + pivots;
            for m in 0..=k {
                let z = a[start + m].lane(l);
                at_pins[k * nc + m] = z;
                at_pins[m * nc + k] = z;
            }
        }
        let at_dies = self.through_packages(f_hz, &at_pins);
        LoadMatrix { n: nc, at_pins, at_dies }
    }

    /// Start dragging branch `branch` over `freq_hz`: every other port is factored once per frequency, so each
    /// position of the dragged part then costs one triangular solve per frequency ([`Drag::move_to`]).
    pub fn drag(self, branch: usize, freq_hz: &[f64]) -> Drag {
        let np = self.branches.len();
        if branch >= np {
            // Nothing to drag: every move gives the plain solve.
            return Drag {
                rows: self.rows(),
                pivots: np + 1,
                circuit: self,
                branch,
                freq_hz: freq_hz.to_vec(),
                factors: Vec::new(),
                dragged_branch: Vec::new(),
            };
        }
        let mut rows: Vec<Row> = (0..np).filter(|&b| b != branch).map(Row::Branch).collect();
        rows.push(Row::Border);
        let pivots = rows.len();
        rows.push(Row::Branch(branch));
        rows.extend((0..self.loads.len()).map(Row::Load));
        let mut factors = Vec::new();
        let mut col = Vec::new();
        let mut a = Vec::new();
        let mut dragged_branch = Vec::new();
        for chunk in freq_hz.chunks(BATCH) {
            let f: [f64; BATCH] = std::array::from_fn(|l| chunk[l.min(chunk.len() - 1)]);
            let lanes: [LaneSetup<'_>; BATCH] = std::array::from_fn(|l| LaneSetup::new(&self, f[l]));
            self.fill(&rows, &lanes, &mut a);
            eliminate(&mut a, &mut col, rows.len(), pivots);
            factors.extend_from_slice(&a);
            dragged_branch.push(Lanes::from_fn(|l| lanes[l].branch[branch]));
        }
        Drag { circuit: self, branch, freq_hz: freq_hz.to_vec(), rows, pivots, factors, dragged_branch }
    }

    /// The dies' matrix from the pins' one: with P the packages and Y the dies' admittances (zero where absent),
    /// Z_die = (1 + (Z + P)·Y)⁻¹·(Z + P).
    fn through_packages(&self, f_hz: f64, at_pins: &[C]) -> Vec<C> {
        let nc = self.loads.len();
        if self.loads.iter().all(|l| l.package.is_none()) {
            return at_pins.to_vec();
        }
        let mut zp = at_pins.to_vec();
        for (k, l) in self.loads.iter().enumerate() {
            if let Some(p) = &l.package {
                zp[k * nc + k] += p.impedance(f_hz);
            }
        }
        let y: Vec<C> = self
            .loads
            .iter()
            .map(|l| match &l.die {
                Some(d) => {
                    let z = d.impedance(f_hz);
                    if z.norm() == 0.0 { C::new(0.0, 0.0) } else { 1.0 / z }
                }
                None => C::new(0.0, 0.0),
            })
            .collect();
        let mut a = vec![C::new(0.0, 0.0); nc * nc];
        for k in 0..nc {
            for l in 0..nc {
                a[k * nc + l] = zp[k * nc + l] * y[l] + if k == l { 1.0 } else { 0.0 };
            }
        }
        let mut x = zp.clone();
        if solve_general(&mut a, &mut x, nc, nc) { x } else { zp }
    }
}

/// a += Σ_k coef[k]·v_k·v_kᵀ over the packed lower triangle (v_k = values[k·n..(k + 1)·n]), row by row so a row
/// stays in cache while every mode is added to it; compiled for AVX2 where the processor has it (the same
/// operations in the same order, so the same bits).
fn add_modes_rows<const N: usize>(a: &mut [Lanes<N>], values: &[f64], coef: &[Lanes<N>], n: usize) {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx2") {
        // SAFETY: the processor has AVX2, checked on the line above; nothing else is required of the caller.
        unsafe { add_modes_rows_avx2(a, values, coef, n) };
        return;
    }
    add_modes_rows_plain(a, values, coef, n);
}

/// [`add_modes_rows_plain`] compiled with AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn add_modes_rows_avx2<const N: usize>(a: &mut [Lanes<N>], values: &[f64], coef: &[Lanes<N>], n: usize) {
    add_modes_rows_plain(a, values, coef, n);
}

/// See [`add_modes_rows`].
#[inline(always)]
fn add_modes_rows_plain<const N: usize>(a: &mut [Lanes<N>], values: &[f64], coef: &[Lanes<N>], n: usize) {
    for i in 0..n {
        let start = row_start(i);
        let row = &mut a[start..start + i + 1];
        for (k, c) in coef.iter().enumerate() {
            let v = &values[k * n..k * n + i + 1];
            let vi = v[i];
            if vi == 0.0 {
                continue;
            }
            let ci = c.scale(vi);
            for (x, &vj) in row.iter_mut().zip(v) {
                *x = x.add_scaled(ci, vj);
            }
        }
    }
}

/// What one lane needs at its frequency: the plane's level and multipliers, the modes' coefficients, the branches'
/// impedances and the plate admittance.
pub(super) struct LaneSetup<'a> {
    parts: StaticParts<'a>,
    coef: [C; 3],
    modes: Vec<C>,
    /// Each branch's impedance at the lane's frequency (added to its port's diagonal by `fill`).
    pub(super) branch: Vec<C>,
    plate: C,
}

impl<'a> LaneSetup<'a> {
    pub(super) fn new(circuit: &'a PlacedCircuit, f_hz: f64) -> LaneSetup<'a> {
        let mut setup = LaneSetup::plane_only(circuit, f_hz);
        setup.branch = circuit.branches.iter().map(|b| b.branch.impedance(f_hz)).collect();
        setup
    }

    /// Without the branches' impedances (a drag needs only the dragged one's, kept from its start).
    fn plane_only(circuit: &'a PlacedCircuit, f_hz: f64) -> LaneSetup<'a> {
        let plane = &circuit.plane;
        let parts = plane.static_parts(f_hz);
        LaneSetup {
            parts,
            coef: plane.static_coefficients(f_hz),
            modes: plane.mode_coefficients(parts.modes, f_hz),
            branch: Vec::new(),
            plate: plane.plate_admittance(f_hz),
        }
    }
}

/// Eliminate the first `pivots` rows of the packed symmetric matrix `a` (size × size) by LDLᵀ without pivoting
/// (the plane's matrix plus branch impedances: the diagonal dominates the elimination): rows below keep the
/// multipliers L, the diagonal D, and the trailing block becomes the Schur complement.
fn eliminate<const N: usize>(a: &mut [Lanes<N>], col: &mut Vec<Lanes<N>>, size: usize, pivots: usize) {
    eliminate_rows(a, col, size, 0..pivots);
}

/// Eliminate rows `pivots` of the packed symmetric matrix `a` (size × size), every row before them already
/// eliminated: the same LDLᵀ steps as [`eliminate`], so a factorization can be carried on from a kept prefix.
pub(super) fn eliminate_rows<const N: usize>(
    a: &mut [Lanes<N>],
    col: &mut Vec<Lanes<N>>,
    size: usize,
    pivots: std::ops::Range<usize>,
) {
    // Each lane is eliminated on its own with real and imaginary parts in separate arrays (the rows from the first
    // pivot on, copied out and back): the inner update is then a plain loop over contiguous f64s, which the compiler
    // vectorizes, where lanes of complex pairs spill registers. The steps and their order are the same in each lane.
    col.clear();
    if pivots.is_empty() {
        return;
    }
    let offset = row_start(pivots.start);
    let end = row_start(size);
    let len = end - offset;
    let mut re = vec![0.0; len];
    let mut im = vec![0.0; len];
    let mut col_re = vec![0.0; size];
    let mut col_im = vec![0.0; size];
    for l in 0..N {
        for (x, (r, i)) in a[offset..end].iter().zip(re.iter_mut().zip(im.iter_mut())) {
            *r = x.re[l];
            *i = x.im[l];
        }
        eliminate_lane(Lane {
            re: &mut re,
            im: &mut im,
            col_re: &mut col_re,
            col_im: &mut col_im,
            offset,
            size,
            pivots: pivots.clone(),
        });
        for (x, (r, i)) in a[offset..end].iter_mut().zip(re.iter().zip(&im)) {
            x.re[l] = *r;
            x.im[l] = *i;
        }
    }
}

/// One lane's elimination: its packed rows split into real and imaginary parts, the column buffers, where the
/// rows start, the system's size and the pivots to eliminate.
struct Lane<'a> {
    re: &'a mut [f64],
    im: &'a mut [f64],
    col_re: &'a mut [f64],
    col_im: &'a mut [f64],
    offset: usize,
    size: usize,
    pivots: std::ops::Range<usize>,
}

/// [`eliminate_rows`] on one lane: `re`, `im` hold the packed rows from the one starting at `offset` on. Where the
/// processor has AVX2 the same code is compiled for it (four f64s per instruction instead of two); the operations
/// and their order are the same (no fused multiply-add), so every machine gives the same bits.
fn eliminate_lane(lane: Lane<'_>) {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx2") {
        // SAFETY: the processor has AVX2, checked on the line above; nothing else is required of the caller.
        unsafe { eliminate_lane_avx2(lane) };
        return;
    }
    eliminate_lane_plain(lane);
}

/// [`eliminate_lane_plain`] compiled with AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn eliminate_lane_avx2(lane: Lane<'_>) {
    eliminate_lane_plain(lane);
}

/// The elimination of one lane (see [`eliminate_lane`]); inlined into each instruction-set version.
#[inline(always)]
fn eliminate_lane_plain(lane: Lane<'_>) {
    let Lane { re, im, col_re, col_im, offset, size, pivots } = lane;
    for k in pivots {
        let kk = row_start(k) + k - offset;
        let (pr, pi) = (re[kk], im[kk]);
        let n2 = pr * pr + pi * pi;
        // A tiny (or NaN) pivot is replaced by TINY_PIVOT, as Lanes::recip_guarded does.
        let (inv_re, inv_im) = if n2.is_nan() || n2.sqrt() < TINY_PIVOT {
            re[kk] = TINY_PIVOT;
            im[kk] = 0.0;
            (1.0 / TINY_PIVOT, 0.0)
        } else {
            (pr / n2, -pi / n2)
        };
        for j in k + 1..size {
            let x = row_start(j) + k - offset;
            col_re[j] = re[x];
            col_im[j] = im[x];
        }
        for i in k + 1..size {
            let start = row_start(i) - offset;
            let (ar, ai) = (re[start + k], im[start + k]);
            let (sr, si) = (ar * inv_re - ai * inv_im, ar * inv_im + ai * inv_re);
            let xr = &mut re[start + k + 1..start + i + 1];
            let xi = &mut im[start + k + 1..start + i + 1];
            let cr = &col_re[k + 1..=i];
            let ci = &col_im[k + 1..=i];
            for (((xr, xi), cr), ci) in xr.iter_mut().zip(xi.iter_mut()).zip(cr).zip(ci) {
                *xr -= sr * cr - si * ci;
                *xi -= sr * ci + si * cr;
            }
            re[start + k] = sr;
            im[start + k] = si;
        }
    }
}

/// A part being dragged: every other port factored once per frequency of the grid, so each new position costs the
/// dragged port's new row of the plane's matrix, one triangular solve per frequency and a rank-one update of the
/// loads' matrix (bordering the factorization with the dragged port).
#[derive(Debug, Clone)]
pub struct Drag {
    circuit: PlacedCircuit,
    branch: usize,
    freq_hz: Vec<f64>,
    rows: Vec<Row>,
    pivots: usize,
    /// Per batch of frequencies, the packed system after eliminating every row but the dragged port's and the
    /// loads'.
    factors: Vec<Lanes<BATCH>>,
    /// Per batch, the dragged part's branch impedance.
    dragged_branch: Vec<Lanes<BATCH>>,
}

impl Drag {
    /// The circuit as the last move left it.
    pub fn circuit(&self) -> &PlacedCircuit {
        &self.circuit
    }

    /// End the drag, keeping the circuit with the part where it was last put.
    pub fn into_circuit(self) -> PlacedCircuit {
        self.circuit
    }

    /// Put the dragged part at `port` and give the loads' matrix at every frequency of the drag's grid.
    pub fn move_to(&mut self, port: PortRect) -> Vec<LoadMatrix> {
        let circuit = &mut self.circuit;
        if self.branch >= circuit.branches.len() {
            return circuit.solve_grid(&self.freq_hz);
        }
        circuit.move_branch(self.branch, port);
        let circuit = &self.circuit;
        let e = self.pivots;
        let nc = circuit.loads.len();
        let moved = self.branch;
        let stride = row_start(self.rows.len());
        let ports: Vec<Option<usize>> = self.rows.iter().map(|&r| circuit.port_of(r)).collect();
        let mut column = vec![Lanes::<BATCH>::default(); self.rows.len()];
        let mut coupling = vec![Lanes::<BATCH>::default(); nc];
        let mut out = Vec::with_capacity(self.freq_hz.len());
        for (batch, chunk) in self.freq_hz.chunks(BATCH).enumerate() {
            let a = &self.factors[batch * stride..(batch + 1) * stride];
            let f: [f64; BATCH] = std::array::from_fn(|l| chunk[l.min(chunk.len() - 1)]);
            let lanes: [LaneSetup<'_>; BATCH] = std::array::from_fn(|l| LaneSetup::plane_only(circuit, f[l]));
            // The dragged port's new column against every row (the border's entry is 1), its own entry with its
            // branch, and against the loads.
            for (x, p) in column.iter_mut().zip(&ports) {
                *x = match p {
                    Some(p) => circuit.static_entry(&lanes, *p, moved),
                    None => Lanes::splat(C::new(1.0, 0.0)),
                };
            }
            let top = lanes.iter().map(|s| s.parts.modes).max().unwrap_or(0);
            for k in 0..top {
                let phi = circuit.plane.mode_values(k);
                let c = Lanes::from_fn(|l| if k < lanes[l].parts.modes { lanes[l].modes[k] } else { C::new(0.0, 0.0) })
                    .scale(phi[moved]);
                for (x, p) in column.iter_mut().zip(&ports) {
                    if let Some(p) = p {
                        *x = x.add_scaled(c, phi[*p]);
                    }
                }
            }
            column[e] = column[e] + self.dragged_branch[batch];
            // y = L⁻¹·n over the eliminated rows, then the dragged port's pivot and its coupling to the loads.
            let mut pivot = column[e];
            for k in 0..e {
                let start = row_start(k);
                let y = sub_dot(column[k], &a[start..start + k], &column[..k]);
                column[k] = y;
                let mut d = a[start + k];
                let inv = d.recip_guarded(TINY_PIVOT);
                pivot = pivot.sub_mul(y, y * inv);
            }
            for (c, slot) in coupling.iter_mut().enumerate() {
                let start = row_start(e + 1 + c);
                *slot = sub_dot(column[e + 1 + c], &a[start..start + e], &column[..e]);
            }
            let inv_pivot = pivot.recip_guarded(TINY_PIVOT);
            for (l, &fl) in chunk.iter().enumerate() {
                let mut at_pins = vec![C::new(0.0, 0.0); nc * nc];
                for k in 0..nc {
                    let start = row_start(e + 1 + k) + e + 1;
                    let sk = coupling[k].lane(l) * inv_pivot.lane(l);
                    for m in 0..=k {
                        let z = a[start + m].lane(l) - sk * coupling[m].lane(l);
                        at_pins[k * nc + m] = z;
                        at_pins[m * nc + k] = z;
                    }
                }
                let at_dies = circuit.through_packages(fl, &at_pins);
                out.push(LoadMatrix { n: nc, at_pins, at_dies });
            }
        }
        out
    }
}

/// y − Σ_i l[i]·x[i] (l and x of one length), summed in four interleaved partial sums added together at the end:
/// four independent chains the processor overlaps, where one chain waits on every addition's latency (the drag's
/// triangular solve was bound by it). The order is fixed, so every machine gives the same bits.
#[inline(always)]
fn sub_dot<const N: usize>(y: Lanes<N>, l: &[Lanes<N>], x: &[Lanes<N>]) -> Lanes<N> {
    let mut acc = [Lanes::<N>::default(); 4];
    let (mut lq, mut xq) = (l.chunks_exact(4), x.chunks_exact(4));
    for (lq, xq) in (&mut lq).zip(&mut xq) {
        for q in 0..4 {
            acc[q] = acc[q].sub_mul(lq[q], xq[q]);
        }
    }
    for (a, b) in lq.remainder().iter().zip(xq.remainder()) {
        acc[0] = acc[0].sub_mul(*a, *b);
    }
    y + ((acc[0] + acc[1]) + (acc[2] + acc[3]))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A packed complex-symmetric matrix whose diagonal dominates (no pivoting needed), size × size.
    fn packed(size: usize) -> Vec<Lanes<BATCH>> {
        (0..row_start(size))
            .map(|x| {
                let i = (1..=size).find(|&i| row_start(i) > x).unwrap() - 1;
                let j = x - row_start(i);
                let diag = if i == j { 20.0 } else { 0.0 };
                Lanes::from_fn(|l| C::new(diag + 1.0 / (1.0 + (i + j + l) as f64), 0.3 * ((i * j + l) as f64).sin()))
            })
            .collect()
    }

    #[test]
    fn sub_dot_matches_the_running_sum_to_rounding() {
        for len in [0, 1, 3, 4, 7, 56] {
            let a = packed(12);
            let l = &a[..len.min(a.len())];
            let x: Vec<Lanes<BATCH>> = l.iter().rev().copied().collect();
            let y = Lanes::from_fn(|l| C::new(1.5, -0.5 * l as f64));
            let mut running = y;
            for (p, q) in l.iter().zip(&x) {
                running = running.sub_mul(*p, *q);
            }
            let got = sub_dot(y, l, &x);
            for lane in 0..BATCH {
                let scale: f64 = 1.0 + l.iter().zip(&x).map(|(p, q)| (p.lane(lane) * q.lane(lane)).norm()).sum::<f64>();
                assert!((got.lane(lane) - running.lane(lane)).norm() <= 1e-15 * scale, "length {len}");
            }
        }
    }

    #[test]
    fn the_plain_elimination_gives_the_same_bits_as_the_dispatched_one() {
        // On a machine with AVX2 this compares the two compiled versions; without it both run the plain one.
        let size = 9;
        let src = packed(size);
        let (mut a, mut b) = (src.clone(), src.clone());
        let mut col = Vec::new();
        eliminate(&mut a, &mut col, size, 6);
        let len = row_start(size);
        for l in 0..BATCH {
            let mut re: Vec<f64> = b.iter().map(|x| x.re[l]).collect();
            let mut im: Vec<f64> = b.iter().map(|x| x.im[l]).collect();
            let (mut col_re, mut col_im) = (vec![0.0; size], vec![0.0; size]);
            eliminate_lane_plain(Lane {
                re: &mut re,
                im: &mut im,
                col_re: &mut col_re,
                col_im: &mut col_im,
                offset: 0,
                size,
                pivots: 0..6,
            });
            for x in 0..len {
                b[x].re[l] = re[x];
                b[x].im[l] = im[x];
            }
        }
        assert_eq!(a, b);
        assert_ne!(a, src, "the elimination changed nothing");
    }
}
