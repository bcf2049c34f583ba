//! A rail's network: every branch in parallel between the rail node and ground, summed as admittances.

use crate::model::{Board, Rail};
use crate::physics::SeriesRlc;
use num_complex::Complex64;

/// Which input a branch comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum BranchKind {
    /// The regulator's output (series R-L).
    Source,
    /// The power/ground plane pair.
    Plane,
    /// A decap group, by its index in the rail's `decaps`.
    Group(usize),
}

/// One branch of the network, with `count` identical parts already folded into one R-L-C.
#[derive(Debug, Clone, PartialEq)]
pub struct Branch {
    /// Where it comes from.
    pub kind: BranchKind,
    /// A short label for people: "source", "plane", "100n-0402 ×24".
    pub label: String,
    /// The branch as one series R-L-C (for a group: one part with its mounting, divided by the count).
    pub rlc: SeriesRlc,
    /// The part's own self-resonance (independent of count), used to say which branches bracket a peak. The
    /// source counts as resonating at 0 Hz (it is inductive at every frequency), a branch with no inductance at
    /// infinity (capacitive at every frequency).
    pub resonance_hz: f64,
}

/// The parallel network of one rail, ready to evaluate at any frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    /// The branches, in the order source, plane, groups.
    pub branches: Vec<Branch>,
}

impl Network {
    /// Build a rail's network. Groups with count 0, or naming a part the board lacks, are left out (a validated
    /// board has no such reference).
    pub fn of_rail(board: &Board, rail: &Rail) -> Network {
        let mut branches = Vec::new();
        if let Some(s) = rail.source {
            branches.push(Branch {
                kind: BranchKind::Source,
                label: "source".into(),
                rlc: SeriesRlc { r_ohm: s.r_ohm, l_h: s.l_h, c_f: None },
                resonance_hz: 0.0,
            });
        }
        if let Some(p) = rail.plane {
            let rlc = SeriesRlc { r_ohm: p.esr_ohm, l_h: p.esl_h, c_f: Some(p.capacitance_f) };
            branches.push(Branch {
                kind: BranchKind::Plane,
                label: "plane".into(),
                rlc,
                resonance_hz: rlc.self_resonance_hz().unwrap_or(f64::INFINITY),
            });
        }
        for (i, group) in rail.decaps.iter().enumerate() {
            let Some(part) = board.part(&group.part) else {
                continue;
            };
            if group.count == 0 {
                continue;
            }
            let one =
                SeriesRlc { r_ohm: part.esr_ohm, l_h: part.esl_h + group.mounting_h, c_f: Some(part.capacitance_f) };
            branches.push(Branch {
                kind: BranchKind::Group(i),
                label: format!("{} ×{}", part.id, group.count),
                rlc: one.parallel(group.count),
                resonance_hz: one.self_resonance_hz().unwrap_or(f64::INFINITY),
            });
        }
        Network { branches }
    }

    /// The impedance seen from the rail node at `f_hz`: Z = 1 / Σ 1/Z_branch. A branch of exactly zero impedance
    /// shorts the node (Z = 0); a network with no branch is open (infinite).
    pub fn impedance(&self, f_hz: f64) -> Complex64 {
        let mut y = Complex64::new(0.0, 0.0);
        for b in &self.branches {
            let z = b.rlc.impedance(f_hz);
            let d = z.norm_sqr();
            if d == 0.0 {
                return Complex64::new(0.0, 0.0);
            }
            // 1/z = conj(z)/|z|², cheaper than a general complex division.
            y += Complex64::new(z.re / d, -z.im / d);
        }
        let d = y.norm_sqr();
        if d == 0.0 { Complex64::new(f64::INFINITY, 0.0) } else { Complex64::new(y.re / d, -y.im / d) }
    }

    /// |Z(f)|.
    pub fn magnitude(&self, f_hz: f64) -> f64 {
        self.impedance(f_hz).norm()
    }

    /// The branches that bracket a frequency: the one with the highest self-resonance below it (already
    /// inductive) and the one with the lowest above it (still capacitive). Indices into `branches`.
    pub fn bracketing(&self, f_hz: f64) -> (Option<usize>, Option<usize>) {
        let mut below: Option<usize> = None;
        let mut above: Option<usize> = None;
        for (i, b) in self.branches.iter().enumerate() {
            let r = b.resonance_hz;
            if r < f_hz {
                if below.is_none_or(|j| r > self.branches[j].resonance_hz) {
                    below = Some(i);
                }
            } else if r > f_hz && above.is_none_or(|j| r < self.branches[j].resonance_hz) {
                above = Some(i);
            }
        }
        (below, above)
    }
}

/// Magnitude in Ω and phase in degrees in (-180, 180], positive when inductive.
pub fn magnitude_phase(z: Complex64) -> (f64, f64) {
    let mut phase = z.im.atan2(z.re).to_degrees();
    if phase <= -180.0 {
        phase += 360.0;
    }
    (z.norm(), phase)
}
