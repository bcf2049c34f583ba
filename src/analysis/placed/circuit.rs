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

use super::ldl::{Ldl, solve_general};
use crate::analysis::network::{Branch, BranchKind, Network};
use crate::model::{Board, GroupSpots, Rail};
use crate::physics::plane_pair::{DEFAULT_TOLERANCE, PortRect, PreparedPlane};
use crate::physics::{Corner, SeriesRlc};
use num_complex::Complex64 as C;

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
    q: Vec<C>,
    ldl: Ldl,
    rhs: Vec<C>,
}

/// A placed rail, ready to evaluate at any frequency up to the one it was prepared for.
#[derive(Debug, Clone)]
pub struct PlacedCircuit {
    /// The plane pair with every port: the branch ports first (in `branches` order), then the loads.
    pub plane: PreparedPlane,
    /// The branches at their ports.
    pub branches: Vec<BranchPort>,
    /// The loads at their ports.
    pub loads: Vec<LoadPort>,
}

impl PlacedCircuit {
    /// Build a placed rail's circuit in `corner`, prepared for frequencies up to `f_max_hz`. `None` for a lumped
    /// rail. Groups of count 0 or of an unusable measured part are left out, as in the lumped network.
    pub fn of_rail(board: &Board, rail: &Rail, corner: Corner, f_max_hz: f64) -> Option<PlacedCircuit> {
        let placement = rail.placement.as_ref()?;
        // The lumped network gives each branch (derating, measured data, mounting) exactly as the lumped engine
        // has it; a group placed part by part is built with a count of one, so each branch is one part.
        let mut single = rail.clone();
        for (g, gp) in single.decaps.iter_mut().zip(&placement.groups) {
            if matches!(gp.spots, GroupSpots::Each(_)) && g.count > 0 {
                g.count = 1;
            }
        }
        let network = Network::of_rail_in(board, &single, corner);
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
        let plane = PreparedPlane::new(placement.plane_pair.stackup(), ports, f_max_hz, DEFAULT_TOLERANCE);
        Some(PlacedCircuit { plane, branches, loads })
    }

    /// Move branch port `i` (in `branches` order) and recompute what depends on it.
    pub fn move_branch(&mut self, i: usize, port: PortRect) {
        self.plane.move_port(i, port);
    }

    /// The impedances among the loads at `f_hz`.
    pub fn solve(&self, f_hz: f64, ws: &mut Workspace) -> LoadMatrix {
        let n = self.plane.ports.len();
        let np = self.branches.len();
        let nc = self.loads.len();
        self.plane.rest_into(f_hz, &mut ws.q);
        let q = &ws.q;
        let size = np + 1;
        let m = ws.ldl.matrix_mut(size);
        for i in 0..np {
            m[i * size..i * size + i + 1].copy_from_slice(&q[i * n..i * n + i + 1]);
            m[i * size + i] += self.branches[i].branch.impedance(f_hz);
        }
        for j in 0..np {
            m[np * size + j] = C::new(1.0, 0.0);
        }
        m[np * size + np] = -self.plane.plate_admittance(f_hz);
        ws.ldl.factor();
        let mut at_pins = vec![C::new(0.0, 0.0); nc * nc];
        ws.rhs.resize(size, C::new(0.0, 0.0));
        for l in 0..nc {
            let col = np + l;
            for i in 0..np {
                ws.rhs[i] = -q[i * n + col];
            }
            ws.rhs[np] = C::new(-1.0, 0.0);
            ws.ldl.solve(&mut ws.rhs);
            let u = ws.rhs[np];
            for k in 0..nc {
                let row = &q[(np + k) * n..(np + k) * n + np];
                let v: C = row.iter().zip(&ws.rhs[..np]).map(|(a, b)| a * b).sum();
                at_pins[k * nc + l] = u + v + q[(np + k) * n + col];
            }
        }
        let at_dies = self.through_packages(f_hz, &at_pins);
        LoadMatrix { n: nc, at_pins, at_dies }
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
