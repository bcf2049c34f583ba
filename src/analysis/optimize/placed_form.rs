//! Judging mixes on a placed rail: every new part sits at one spot of the plane pair, so the mix is one admittance
//! Y attached at one port P of the rail's circuit (the plane pair with the regulator, the kept parts and the
//! loads at their ports). The circuit is solved once per grid frequency with P open; attaching Y at P is then a
//! rank-one change of the loads' impedance matrix (at their dies):
//!
//! ```text
//!   Z'_kl = Z_kl − Z_kP·Z_Pl·g,   g = Y / (1 + Z_PP·Y) = 1 / (Z_PP + 1/Y)
//! ```
//!
//! (the port impedance matrix of a linear network with an admittance shunted across one of its ports), and each
//! load's effective impedance is the engine's: combine(|Z'_kl|·ΔI_l)/ΔI. The mix is judged by its worst load.

use super::evaluator::inverse;
use crate::analysis::placed::{PlacedCircuit, Workspace, combine_terms};
use crate::analysis::worst::disk_inverse;
use crate::model::{Board, Combine, GroupSpots, Load, LoadPlacement, Rail};
use crate::model::{DEFAULT_PART_PORT_M, GroupPlacement};
use crate::physics::Corner;
use num_complex::Complex64;

/// The name of the probe port the new parts attach at (it draws no current).
const PROBE_NAME: &str = "new parts";

/// The loads' view of a placed rail at every grid point, with the port P where new parts go.
pub(super) struct PlacedForm {
    /// Number of loads.
    n: usize,
    /// Per grid point: Z among the loads (at their dies), row-major n × n.
    z: Vec<Vec<Complex64>>,
    /// Per grid point: Z_kP for each load k.
    to_spot: Vec<Vec<Complex64>>,
    /// Per grid point: Z_Pl for each load l.
    from_spot: Vec<Vec<Complex64>>,
    /// Per grid point: Z_PP.
    spot: Vec<Complex64>,
    /// Each load's current step, A.
    steps: Vec<f64>,
    /// How the loads' steps combine.
    combine: Combine,
    /// The rail's step under its combine rule, A.
    step_total: f64,
}

impl PlacedForm {
    /// Prepare the form of `fixed` (the rail with the groups that stay) of `board` in `corner`, new parts at
    /// `spot_m`, on the grid `freq_hz`. `None` for a lumped rail or one without loads.
    pub(super) fn new(
        board: &Board,
        fixed: &Rail,
        spot_m: [f64; 2],
        corner: Corner,
        freq_hz: &[f64],
    ) -> Option<PlacedForm> {
        let mut probe = fixed.clone();
        let placement = probe.placement.as_mut()?;
        let n = fixed.loads.len();
        if n == 0 {
            return None;
        }
        probe.loads.push(Load::new(PROBE_NAME, 0.0, None));
        placement.loads.push(LoadPlacement {
            at_m: spot_m,
            pins_m: Some([DEFAULT_PART_PORT_M; 2]),
            package: None,
            die: None,
        });
        let f_max = freq_hz.iter().copied().fold(fixed.band_hz_or_default()[1], f64::max);
        let circuit = PlacedCircuit::of_rail(board, &probe, corner, f_max)?;
        let mut ws = Workspace::default();
        let (mut z, mut to_spot, mut from_spot, mut spot) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
        for &f in freq_hz {
            let m = circuit.solve(f, &mut ws);
            z.push((0..n * n).map(|i| m.die(i / n, i % n)).collect());
            to_spot.push((0..n).map(|k| m.die(k, n)).collect());
            from_spot.push((0..n).map(|l| m.die(n, l)).collect());
            spot.push(m.die(n, n));
        }
        Some(PlacedForm {
            n,
            z,
            to_spot,
            from_spot,
            spot,
            steps: fixed.loads.iter().map(|l| l.step_a).collect(),
            combine: fixed.combine,
            step_total: fixed.total_step_a(),
        })
    }

    /// The worst load's effective impedance at grid point `p` with admittance `y` at the spot (an infinite `y`
    /// is a short there).
    pub(super) fn magnitude(&self, p: usize, y: Complex64) -> f64 {
        let g = if y.norm().is_infinite() { inverse(self.spot[p]) } else { inverse(self.spot[p] + inverse(y)) };
        self.worst_load(p, g, 0.0).0
    }

    /// A proven upper bound of the worst load's effective impedance at grid point `p` when the admittance at the
    /// spot lies in the disk (c, r): g = 1/(Z_PP + 1/Y) then lies in a disk (Möbius maps take disks to disks),
    /// and each |Z_kl − Z_kP·Z_Pl·g| is at most its value at the disk's centre plus |Z_kP·Z_Pl| times its radius.
    pub(super) fn bound(&self, p: usize, c: Complex64, r: f64) -> f64 {
        let Some((c1, r1)) = disk_inverse(c, r) else { return f64::INFINITY };
        let Some((g, rg)) = disk_inverse(c1 + self.spot[p], r1) else { return f64::INFINITY };
        self.worst_load(p, g, rg).0
    }

    /// The highest effective impedance over the loads at grid point `p` when g (the shunt's term) is within
    /// `slack` of `g`, and the load it is at.
    fn worst_load(&self, p: usize, g: Complex64, slack: f64) -> (f64, usize) {
        let (z, to, from) = (&self.z[p], &self.to_spot[p], &self.from_spot[p]);
        (0..self.n)
            .map(|k| {
                let terms = (0..self.n).map(|l| {
                    let coupling = to[k] * from[l];
                    ((z[k * self.n + l] - coupling * g).norm() + coupling.norm() * slack) * self.steps[l]
                });
                (combine_terms(self.combine, terms) / self.step_total, k)
            })
            .fold((0.0, 0), |a, b| if b.0 > a.0 || b.0.is_nan() { b } else { a })
    }

    /// With a perfect short at the spot: the worst load's effective impedance at grid point `p`, and that load.
    pub(super) fn shorted(&self, p: usize) -> (f64, usize) {
        self.worst_load(p, inverse(self.spot[p]), 0.0)
    }
}

/// The placement of a group of new parts at `spot_m` (each part's port the default side).
pub fn new_group_placement(spot_m: [f64; 2]) -> GroupPlacement {
    GroupPlacement { spots: GroupSpots::At(spot_m), port_m: None }
}
