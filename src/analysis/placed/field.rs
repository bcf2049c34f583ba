//! The voltage across a placed rail's plane pair at one frequency when one load draws its step: where a plane
//! resonance puts its peaks, and which parts pull it down. The board map draws it as a colour field.
//!
//! The ports' currents come from the whole circuit solved at that frequency (every branch at its port, every other
//! load's package and die as a shunt, the chosen load drawing its step at its die); the voltage between each cell
//! of a grid is then the cavity model's sum over those currents ([`cell_voltages`]) plus the plate's own voltage.

use super::circuit::PlacedCircuit;
use super::ldl::solve_general;
use crate::model::{Board, Rail};
use crate::physics::Corner;
use crate::physics::plane_pair::cell_voltages;
use num_complex::Complex64 as C;

/// Modes per cell along each axis in the field's series (enough that a cell away from a port is within about 1 %
/// of the converged sum; a test holds it there).
const MODES_PER_CELL: usize = 6;

/// The plane's voltage over a grid of cells at one frequency, for one load's step.
#[derive(Debug, Clone, PartialEq)]
pub struct PlaneField {
    /// The frequency, Hz.
    pub f_hz: f64,
    /// The load drawing its step (index in the rail's loads).
    pub load: usize,
    /// Its step, A.
    pub step_a: f64,
    /// Cells [along x, along y].
    pub cells: [usize; 2],
    /// |V| averaged over each cell, V; row-major by y, row 0 at y = 0.
    pub volts: Vec<f64>,
    /// The highest of `volts`, V.
    pub max_v: f64,
    /// The lowest of `volts`, V.
    pub min_v: f64,
    /// The voltage at each port (the branches' in the circuit's order, then the loads'), V.
    pub port_v: Vec<C>,
}

/// The currents the circuit draws into the plane at each port (the branches' in the circuit's order, then the
/// loads'), with the plate's voltage u, when load `load` draws `step_a` at `f_hz` and the other loads draw nothing.
///
/// One system: for a branch port i, Σ_j Q_ij·I_j + u + Z_i·I_i = 0 (the branch draws −V/Z_i); for a load with a
/// package and die, Σ_j Q_kj·I_j + u + (Z_pkg + Z_die)·I_k = −ΔI·Z_die (its step at the die, the die capacitance
/// beside it); for a load without both, I_k = −ΔI (or 0 for an idle one); and Σ_j I_j = a·b·Y_sq·u (the plate).
/// `None` when the system is singular.
pub fn port_currents(circuit: &PlacedCircuit, load: usize, step_a: f64, f_hz: f64) -> Option<(Vec<C>, C)> {
    let mut q = Vec::new();
    circuit.plane.rest_into(f_hz, &mut q);
    solve_ports(circuit, &q, load, step_a, f_hz)
}

/// [`port_currents`] with the plane's matrix Q at `f_hz` (without its common term) already at hand.
fn solve_ports(circuit: &PlacedCircuit, q: &[C], load: usize, step_a: f64, f_hz: f64) -> Option<(Vec<C>, C)> {
    let np = circuit.branches.len();
    let n = np + circuit.loads.len();
    let size = n + 1;
    let mut a = vec![C::new(0.0, 0.0); size * size];
    let mut rhs = vec![C::new(0.0, 0.0); size];
    let zero = C::new(0.0, 0.0);
    for i in 0..n {
        let row = &mut a[i * size..(i + 1) * size];
        let shunt = if i < np {
            Some(circuit.branches[i].branch.impedance(f_hz))
        } else {
            let lp = &circuit.loads[i - np];
            match (lp.package, lp.die) {
                (Some(p), Some(d)) => {
                    let zd = d.impedance(f_hz);
                    if i - np == load {
                        rhs[i] = -step_a * zd;
                    }
                    Some(p.impedance(f_hz) + zd)
                }
                _ => None,
            }
        };
        match shunt {
            Some(z) => {
                row[..n].copy_from_slice(&q[i * n..(i + 1) * n]);
                row[n] = C::new(1.0, 0.0);
                row[i] += z;
            }
            None => {
                row.fill(zero);
                row[i] = C::new(1.0, 0.0);
                if i - np == load {
                    rhs[i] = C::new(-step_a, 0.0);
                }
            }
        }
    }
    let border = &mut a[n * size..];
    border[..n].fill(C::new(1.0, 0.0));
    border[n] = -circuit.plane.plate_admittance(f_hz);
    if !solve_general(&mut a, &mut rhs, size, 1) || rhs.iter().any(|x| !x.re.is_finite() || !x.im.is_finite()) {
        return None;
    }
    let u = rhs[n];
    rhs.truncate(n);
    Some((rhs, u))
}

/// The voltage across rail `rail`'s plane pair at `f_hz` when its load `load` draws its step, over a grid of about
/// `cells_long` cells along the longer side (square cells), in `corner`. `None` for a lumped rail, a load out of
/// range, or a circuit that cannot be solved there.
pub fn plane_field(
    board: &Board,
    rail: &Rail,
    load: usize,
    f_hz: f64,
    corner: Corner,
    cells_long: usize,
) -> Option<PlaneField> {
    if !(f_hz.is_finite() && f_hz > 0.0) {
        return None;
    }
    let circuit = PlacedCircuit::of_rail(board, rail, corner, f_hz)?;
    let step_a = circuit.loads.get(load)?.step_a;
    let mut q = Vec::new();
    circuit.plane.rest_into(f_hz, &mut q);
    let (currents, u) = solve_ports(&circuit, &q, load, step_a, f_hz)?;
    let st = circuit.plane.stackup;
    let [a, b] = st.size_m;
    let long = cells_long.clamp(4, 400) as f64;
    let cells = if a >= b {
        [long as usize, ((long * b / a).round() as usize).max(2)]
    } else {
        [((long * a / b).round() as usize).max(2), long as usize]
    };
    let field = cell_voltages(&st, &circuit.plane.ports, &currents, f_hz, cells, MODES_PER_CELL);
    let volts: Vec<f64> = field.iter().map(|v| (v + u).norm()).collect();
    if volts.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let max_v = volts.iter().copied().fold(0.0, f64::max);
    let min_v = volts.iter().copied().fold(f64::INFINITY, f64::min);
    let n = currents.len();
    let port_v = (0..n).map(|i| (0..n).map(|j| q[i * n + j] * currents[j]).sum::<C>() + u).collect();
    Some(PlaneField { f_hz, load, step_a, cells, volts, max_v, min_v, port_v })
}
