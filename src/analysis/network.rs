//! A rail's network: every branch in parallel between the rail node and ground, summed as admittances; and, when
//! the rail gives a package, the die node behind it.
//!
//! ```text
//!   board node --+-- source (R-L to the supply) --+-- package (R-L) -- die node --+
//!                +-- plane (R-L-C)                                              die (R-C)
//!                +-- each group (R-L-C)/n                                          |
//!   ground ------+--------------------------------------------------------------+
//! ```

use crate::model::{Board, Rail};
use crate::physics::measured::ImpedanceTable;
use crate::physics::{Corner, SeriesRlc, TWO_PI, derate, mounting::group_mounting_h};
use num_complex::Complex64;
use std::sync::Arc;

/// Which input a branch comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BranchKind {
    /// The regulator's output (series R-L).
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
            None => self.rlc.impedance(f_hz),
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
    /// Build a rail's network with the part values as given (the nominal corner). Groups with count 0, or
    /// naming a part the board lacks, are left out (a validated board has no such reference).
    pub fn of_rail(board: &Board, rail: &Rail) -> Network {
        Network::of_rail_in(board, rail, Corner::Nominal)
    }

    /// Build a rail's network with each part's capacitance derated for `corner`.
    pub fn of_rail_in(board: &Board, rail: &Rail, corner: Corner) -> Network {
        let mut branches = Vec::new();
        if let Some(s) = rail.source {
            branches.push(Branch {
                kind: BranchKind::Source,
                label: "source".into(),
                rlc: SeriesRlc { r_ohm: s.r_ohm, l_h: s.l_h, c_f: None },
                resonance_hz: 0.0,
                measured: None,
            });
        }
        if let Some(p) = rail.plane {
            let rlc = SeriesRlc { r_ohm: p.esr_ohm, l_h: p.esl_h, c_f: Some(p.capacitance_f) };
            branches.push(Branch {
                kind: BranchKind::Plane,
                label: "plane".into(),
                rlc,
                measured: None,
                resonance_hz: rlc.self_resonance_hz().unwrap_or(f64::INFINITY),
            });
        }
        for (i, group) in rail.decaps.iter().enumerate() {
            let Some(part) = board.part(&group.part) else { continue };
            // A measured part whose data could not be loaded is left out (the findings say so).
            if group.count == 0 || part.unusable().is_some() {
                continue;
            }
            let c = part.capacitance_f * derate(board, part, rail.voltage_v, corner).ratio();
            let one = SeriesRlc { r_ohm: part.esr_ohm, l_h: part.esl_h + group_mounting_h(group), c_f: Some(c) };
            branches.push(Branch {
                kind: BranchKind::Group(i),
                label: format!("{} ×{}", part.id, group.count),
                rlc: one.parallel(group.count),
                measured: part.table().map(|t| (Arc::new(t.clone()), group.count, group_mounting_h(group))),
                resonance_hz: one.self_resonance_hz().unwrap_or(f64::INFINITY),
            });
        }
        let package = rail.package.map(|p| Branch {
            kind: BranchKind::Package,
            label: "package".into(),
            rlc: SeriesRlc { r_ohm: p.r_ohm, l_h: p.l_h, c_f: None },
            measured: None,
            resonance_hz: 0.0,
        });
        let die = rail.die.filter(|_| package.is_some()).map(|d| Branch {
            kind: BranchKind::Die,
            label: "die".into(),
            rlc: SeriesRlc { r_ohm: d.esr_ohm, l_h: 0.0, c_f: Some(d.capacitance_f) },
            measured: None,
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

    /// The branches that bracket a peak at `f_hz` in `view`: the one already inductive just below it and the
    /// one still capacitive just above it. At the board these are the branches with the nearest self-resonances
    /// below and above. At the die, a peak where the path behind the die (package plus board) is inductive and
    /// the die's admittance is of the order of the path's is that path against the die capacitance; its
    /// inductive side is the package when the package's reactance exceeds the board's, else the board's
    /// inductive branch.
    pub fn bracketing(&self, f_hz: f64, view: View) -> (Option<&Branch>, Option<&Branch>) {
        let (below, above) = self.board_bracketing(f_hz);
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
                let inductive = if package_z.im > board_z.im { Some(p) } else { below };
                return (inductive, Some(d));
            }
        }
        (below, above)
    }

    /// The board branches with the nearest self-resonances below and above `f_hz`.
    fn board_bracketing(&self, f_hz: f64) -> (Option<&Branch>, Option<&Branch>) {
        let mut below: Option<&Branch> = None;
        let mut above: Option<&Branch> = None;
        for b in &self.branches {
            let r = b.resonance_hz;
            if r < f_hz {
                if below.is_none_or(|x| r > x.resonance_hz) {
                    below = Some(b);
                }
            } else if r > f_hz && above.is_none_or(|x| r < x.resonance_hz) {
                above = Some(b);
            }
        }
        (below, above)
    }
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
fn invert(y: Complex64) -> Complex64 {
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
