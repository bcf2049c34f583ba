//! A rail's network: every branch in parallel between the rail node and ground, summed as admittances; and, when
//! the rail gives a package, the die node behind it.
//!
//! ```text
//!   board node --+-- source (R-L [+ crossover tank]) --+-- package (R-L) -- die node --+
//!                +-- plane (R-L-C)                                              die (R-C)
//!                +-- each group (R-L-C)/n                                          |
//!   ground ------+--------------------------------------------------------------+
//! ```

use crate::model::{Board, Rail};
use crate::physics::measured::ImpedanceTable;
use crate::physics::regulator::ParallelRlc;
use crate::physics::{Corner, SeriesRlc, TWO_PI, derate, mounting::group_mounting_h};
use num_complex::Complex64;
use std::sync::Arc;

/// Which input a branch comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BranchKind {
    /// The regulator's output (series R-L, and its crossover tank when the source gives its loop).
    Source,
    /// The power/ground plane pair.
    Plane,
    /// A decap group, by its index in the rail's `decaps`.
    Group(usize),
    /// The package between the board and the die (series R-L).
    Package,
    /// The on-die capacitance.
    Die,
}

/// Where the impedance is seen from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum View {
    /// At the board's rail node.
    #[default]
    Board,
    /// At the die, through the package.
    Die,
}

impl View {
    /// The word used on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            View::Board => "board",
            View::Die => "die",
        }
    }
}

/// One branch of the network, with `count` identical parts already folded into one R-L-C.
#[derive(Debug, Clone, PartialEq)]
pub struct Branch {
    /// Where it comes from.
    pub kind: BranchKind,
    /// A short label for people: "source", "plane", "100n-0402 ×24".
    pub label: String,
    /// The branch as one series R-L-C (for a group: one part with its mounting, divided by the count). For a
    /// measured part this is the R-L-C fitted to its data (used in the time domain and in netlists).
    pub rlc: SeriesRlc,
    /// A measured part's data: the table, the count and the mounting inductance of one part.
    pub measured: Option<(Arc<ImpedanceTable>, u32, f64)>,
    /// The regulator's crossover tank in series with `rlc`, when the source gives its control loop
    /// (`physics::regulator`); `None` on every other branch.
    pub tank: Option<ParallelRlc>,
    /// The part's own self-resonance (independent of count), used to say which branches bracket a peak. The
    /// source and the package count as resonating at 0 Hz (inductive at every frequency), a branch with no
    /// inductance at infinity (capacitive at every frequency).
    pub resonance_hz: f64,
}

impl Branch {
    /// The branch's impedance at `f_hz`: a measured part's table (one part plus its mounting, divided by the
    /// count), else the series R-L-C.
    pub fn impedance(&self, f_hz: f64) -> Complex64 {
        match &self.measured {
            Some((table, count, mounting_h)) => {
                let n = (*count).max(1) as f64;
                (table.impedance(f_hz) + Complex64::new(0.0, TWO_PI * f_hz * mounting_h)) / n
            }
            None => match &self.tank {
                Some(t) => self.rlc.impedance(f_hz) + t.impedance(f_hz),
                None => self.rlc.impedance(f_hz),
            },
        }
    }
}

/// The network of one rail, ready to evaluate at any frequency and from either view.
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    /// The branches at the board node, in the order source, plane, groups.
    pub branches: Vec<Branch>,
    /// The package path to the die, when the rail gives one.
    pub package: Option<Branch>,
    /// The die capacitance behind the package, when the rail gives one.
    pub die: Option<Branch>,
}

impl Network {
    /// Build a rail's network at the default corner, the typical one (each part at the rail's DC bias), as the
    /// verdict, the netlist, the droop and the optimizer take it. Groups with count 0, or naming a part the
    /// board lacks, are left out (a validated board has no such reference).
    pub fn of_rail(board: &Board, rail: &Rail) -> Network {
        Network::of_rail_in(board, rail, Corner::Typical)
    }

    /// Build a rail's network with each part's capacitance derated for `corner` (bias and temperature), every
    /// part at the middle of its tolerance.
    pub fn of_rail_in(board: &Board, rail: &Rail, corner: Corner) -> Network {
        Network::of_rail_scaled(board, rail, corner, &[])
    }

    /// Build a rail's network in `corner` with group `i`'s capacitance and ESR multiplied by `scales[i]` (a
    /// tolerance vertex or a random draw); groups beyond `scales` are at the middle of their tolerance.
    pub fn of_rail_scaled(board: &Board, rail: &Rail, corner: Corner, scales: &[Scale]) -> Network {
        let mut branches = Vec::new();
        // A measured source whose file cannot be used is left out, as a measured part's groups are.
        if let Some(s) = rail.source.as_ref().filter(|s| s.unusable().is_none()) {
            branches.push(Branch {
                kind: BranchKind::Source,
                label: "source".into(),
                rlc: SeriesRlc { r_ohm: s.r_ohm, l_h: s.l_h, c_f: None },
                resonance_hz: 0.0,
                measured: None,
                tank: s.tank(),
            });
        }
        if let Some(p) = rail.plane {
            let rlc = SeriesRlc { r_ohm: p.esr_ohm, l_h: p.esl_h, c_f: Some(p.capacitance_f) };
            branches.push(Branch {
                kind: BranchKind::Plane,
                label: "plane".into(),
                rlc,
                measured: None,
                tank: None,
                resonance_hz: rlc.self_resonance_hz().unwrap_or(f64::INFINITY),
            });
        }
        for i in 0..rail.decaps.len() {
            let scale = scales.get(i).copied().unwrap_or(Scale::MIDDLE);
            branches.extend(group_branch(board, rail, i, corner, scale, None));
        }
        let package = rail.package.map(|p| Branch {
            kind: BranchKind::Package,
            label: "package".into(),
            rlc: SeriesRlc { r_ohm: p.r_ohm, l_h: p.l_h, c_f: None },
            measured: None,
            tank: None,
            resonance_hz: 0.0,
        });
        let die = rail.die.filter(|_| package.is_some()).map(|d| Branch {
            kind: BranchKind::Die,
            label: "die".into(),
            rlc: SeriesRlc { r_ohm: d.esr_ohm, l_h: 0.0, c_f: Some(d.capacitance_f) },
            measured: None,
            tank: None,
            resonance_hz: f64::INFINITY,
        });
        Network { branches, package, die }
    }

    /// True when the rail has a die node to look from.
    pub fn has_die_view(&self) -> bool {
        self.package.is_some()
    }

    /// The view a verdict is taken in: at the die when the rail gives a package, else at the board.
    pub fn verdict_view(&self) -> View {
        if self.has_die_view() { View::Die } else { View::Board }
    }

    /// The impedance at the board node (every board branch, and the package-and-die path hanging off it).
    pub fn impedance(&self, f_hz: f64) -> Complex64 {
        self.impedance_in(f_hz, View::Board)
    }

    /// The impedance seen from `view` at `f_hz`. The die view of a rail without package is the board view.
    pub fn impedance_in(&self, f_hz: f64, view: View) -> Complex64 {
        let board_y = admittance(self.branches.iter().map(|b| b.impedance(f_hz)));
        let package = self.package.as_ref().map(|p| p.impedance(f_hz));
        let die = self.die.as_ref().map(|d| d.impedance(f_hz));
        match (view, package) {
            (View::Die, Some(zp)) => {
                // The die sees its own capacitance in parallel with the package in series with the board.
                let behind = invert(board_y) + zp;
                invert(admittance([behind].into_iter().chain(die)))
            }
            _ => {
                // The board sees its branches in parallel with the package in series with the die (an open end
                // when the rail gives a package without a die).
                let path = match (package, die) {
                    (Some(zp), Some(zd)) => Some(zp + zd),
                    _ => None,
                };
                match path {
                    Some(z) => invert(board_y + admittance([z])),
                    None => invert(board_y),
                }
            }
        }
    }

    /// |Z(f)| at the board node.
    pub fn magnitude(&self, f_hz: f64) -> f64 {
        self.impedance(f_hz).norm()
    }

    /// The branches behind a peak at `f_hz` in `view`, by the current they carry there: on the inductive side
    /// the branch with the largest share of the node's inductive susceptance (|Im Y| of the branches with
    /// Im Y < 0), on the capacitive side the largest share of the capacitive susceptance; each with its share
    /// (0 to 1). At the board node the package-and-die path counts as one branch (named by the package).
    ///
    /// At the die, a peak where the path behind the die (package plus board) is inductive and the die's
    /// admittance is of the order of the path's is that path against the die capacitance (the die carries all
    /// the capacitive current there); its inductive side is the package, with its share of the path's
    /// reactance, when the package's reactance exceeds the board's, else the board's largest inductive branch.
    pub fn peak_sides(&self, f_hz: f64, view: View) -> (Side<'_>, Side<'_>) {
        let board = self.board_sides(f_hz);
        if view == View::Die
            && let (Some(p), Some(d)) = (&self.package, &self.die)
        {
            let board_z = invert(admittance(self.branches.iter().map(|b| b.impedance(f_hz))));
            let package_z = p.impedance(f_hz);
            let path_z = board_z + package_z;
            // The die capacitance makes the peak only where its admittance is of the order of the path's (they
            // cancel at the peak); far below, the die is a bystander to a peak of the board's own.
            let die_y = invert(d.impedance(f_hz)).norm();
            if path_z.im > 0.0 && die_y >= 0.3 * invert(path_z).norm() {
                let inductive = if package_z.im > board_z.im { Some((p, package_z.im / path_z.im)) } else { board.0 };
                return (inductive, Some((d, 1.0)));
            }
        }
        board
    }

    /// The board node's sides of a peak by susceptance share.
    fn board_sides(&self, f_hz: f64) -> (Side<'_>, Side<'_>) {
        let mut parts: Vec<(&Branch, f64)> = self.branches.iter().map(|b| (b, invert(b.impedance(f_hz)).im)).collect();
        if let (Some(p), Some(d)) = (&self.package, &self.die) {
            parts.push((p, invert(p.impedance(f_hz) + d.impedance(f_hz)).im));
        }
        let side = |inductive: bool| {
            let of_side = |b: f64| if inductive { b < 0.0 } else { b > 0.0 };
            let total: f64 = parts.iter().filter(|(_, b)| of_side(*b)).map(|(_, b)| b.abs()).sum();
            parts
                .iter()
                .filter(|(_, b)| of_side(*b) && b.is_finite())
                .max_by(|x, y| x.1.abs().total_cmp(&y.1.abs()))
                .map(|(br, b)| (*br, if total > 0.0 && total.is_finite() { b.abs() / total } else { 1.0 }))
        };
        (side(true), side(false))
    }

    /// The susceptance Im(1/Z) of each board branch at `f_hz` (negative: inductive), for checks and the
    /// curious.
    pub fn susceptances(&self, f_hz: f64) -> Vec<(BranchKind, f64)> {
        self.branches.iter().map(|b| (b.kind, invert(b.impedance(f_hz)).im)).collect()
    }
}

/// The branch on one side of a peak and its share of that side's susceptance (0 to 1).
pub type Side<'a> = Option<(&'a Branch, f64)>;

/// A group's capacitance and ESR as multiples of their values in a corner: 1 is the middle of the tolerance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Scale {
    /// Capacitance factor.
    pub c: f64,
    /// ESR factor.
    pub esr: f64,
}

impl Scale {
    /// The middle of the tolerance: the values of the corner.
    pub const MIDDLE: Scale = Scale { c: 1.0, esr: 1.0 };
}

/// The branch of decap group `i` of `rail` in `corner` with its values scaled by `scale`, with `count` parts
/// (the group's own count when `None`). `None` when the group names no part, has no parts, or its part is a
/// measured one whose data could not be loaded (the findings say so).
pub fn group_branch(
    board: &Board,
    rail: &Rail,
    i: usize,
    corner: Corner,
    scale: Scale,
    count: Option<u32>,
) -> Option<Branch> {
    let group = rail.decaps.get(i)?;
    let part = board.part(&group.part)?;
    let count = count.unwrap_or(group.count);
    if count == 0 || part.unusable().is_some() {
        return None;
    }
    let c = part.capacitance_f * derate(board, part, rail.voltage_v, corner).ratio() * scale.c;
    let mounting_h = group_mounting_h(group);
    let one = SeriesRlc { r_ohm: part.esr_ohm * scale.esr, l_h: part.esl_h + mounting_h, c_f: Some(c) };
    Some(Branch {
        kind: BranchKind::Group(i),
        label: format!("{} ×{}", part.id, count),
        rlc: one.parallel(count),
        measured: part.table().map(|t| (Arc::new(t.clone()), count, mounting_h)),
        tank: None,
        resonance_hz: one.self_resonance_hz().unwrap_or(f64::INFINITY),
    })
}

/// Σ 1/Z over some impedances. A branch of exactly zero impedance shorts the node: the admittance is infinite.
fn admittance(zs: impl IntoIterator<Item = Complex64>) -> Complex64 {
    let mut y = Complex64::new(0.0, 0.0);
    for z in zs {
        let d = z.norm_sqr();
        if d == 0.0 {
            return Complex64::new(f64::INFINITY, 0.0);
        }
        // 1/z = conj(z)/|z|², cheaper than a general complex division.
        y += Complex64::new(z.re / d, -z.im / d);
    }
    y
}

/// 1/y, with an infinite admittance giving 0 (a short) and a zero admittance an infinite impedance (open).
pub(crate) fn invert(y: Complex64) -> Complex64 {
    if y.re.is_infinite() || y.im.is_infinite() {
        return Complex64::new(0.0, 0.0);
    }
    let d = y.norm_sqr();
    if d == 0.0 { Complex64::new(f64::INFINITY, 0.0) } else { Complex64::new(y.re / d, -y.im / d) }
}

/// Magnitude in Ω and phase in degrees in (-180, 180], positive when inductive.
pub fn magnitude_phase(z: Complex64) -> (f64, f64) {
    let mut phase = z.im.atan2(z.re).to_degrees();
    if phase <= -180.0 {
        phase += 360.0;
    }
    (z.norm(), phase)
}
