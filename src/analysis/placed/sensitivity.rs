//! How one part more or one fewer of each group moves a placed rail's worst effective impedance, through the
//! planes.
//!
//! A part added beside a group's part sits at the same port, so it is an admittance Y (one part with its
//! mounting) shunted across that port; a part taken out is −Y there. Each group's port is solved once per
//! frequency as a probe (a port at the same spot and of the same size, drawing no current), and the loads'
//! matrix with the shunt is the rank-one change of a linear network's port matrix:
//!
//! ```text
//!   Z'_kl = Z_kl − Z_kP·Z_Pl / (Z_PP + 1/Y)
//! ```
//!
//! The worst is taken over every load's effective impedance (the engine's combine rule) on the analysis's own
//! scan grid, in its corner and at its tolerance vertex, as the lumped engine's sensitivity is.
//!
//! Which part: a group at one spot adds or loses a part at that spot (exactly its count ± 1); a group placed part
//! by part adds a part beside, or takes out, its part nearest a load, the one that matters most at the top of
//! the band.

use super::circuit::PlacedCircuit;
use super::{Workspace, combine_terms};
use crate::analysis::network::{Scale, group_branch, invert};
use crate::analysis::rail::RailAnalysis;
use crate::analysis::spread::Sensitivity;
use crate::model::{Board, GroupSpots, Load, LoadPlacement, Rail};
use num_complex::Complex64 as C;

/// Each group's sensitivity on a placed rail in the corner and tolerance vertex of `analysis`, on its scan grid.
/// Empty for a lumped rail.
pub fn placed_sensitivity(board: &Board, rail: &Rail, analysis: &RailAnalysis) -> Vec<Sensitivity> {
    let Some(placement) = rail.placement.as_ref() else { return Vec::new() };
    let n = rail.loads.len();
    if n == 0 {
        return Vec::new();
    }
    // One probe per group that has a spot: a zero-step load at the spot, the size of the group's ports.
    let probes: Vec<(usize, LoadPlacement)> = placement
        .groups
        .iter()
        .enumerate()
        .filter_map(|(i, gp)| {
            let at_m = match &gp.spots {
                GroupSpots::At(xy) => *xy,
                GroupSpots::Each(spots) => spots
                    .iter()
                    .map(|s| s.at_m)
                    .min_by(|a, b| nearest_load_m(placement, *a).total_cmp(&nearest_load_m(placement, *b)))?,
            };
            let side = gp.port_side_m();
            Some((i, LoadPlacement { at_m, pins_m: Some([side, side]), package: None, die: None }))
        })
        .collect();
    let groups: Vec<usize> = probes.iter().map(|(i, _)| *i).collect();
    let mut probed = rail.clone();
    let mut probed_placement = placement.clone();
    for (i, at) in probes {
        probed.loads.push(Load::new(format!("probe of group {}", i + 1), 0.0, None));
        probed_placement.loads.push(at);
    }
    probed.placement = Some(probed_placement);
    let scales: Vec<Scale> = analysis.vertex.as_ref().map(|v| v.scales()).unwrap_or_default();
    let freq = &analysis.scan.freq_hz;
    let f_max = freq.iter().copied().fold(rail.band_hz_or_default()[1], f64::max);
    let Some(circuit) = PlacedCircuit::of_rail_scaled(board, &probed, analysis.corner, &scales, f_max) else {
        return Vec::new();
    };
    // One part of each probed group, with its mounting, at the vertex.
    let one: Vec<_> = groups
        .iter()
        .map(|&i| {
            group_branch(board, rail, i, analysis.corner, scales.get(i).copied().unwrap_or(Scale::MIDDLE), Some(1))
        })
        .collect();
    let steps: Vec<f64> = rail.loads.iter().map(|l| l.step_a).collect();
    let step_total = rail.total_step_a();
    let worst_of = |z: &dyn Fn(usize, usize) -> C| {
        (0..n)
            .map(|k| combine_terms(rail.combine, (0..n).map(|l| z(k, l).norm() * steps[l])) / step_total)
            .fold(0.0f64, f64::max)
    };
    let mut base = 0.0f64;
    let mut more = vec![0.0f64; groups.len()];
    let mut fewer = vec![0.0f64; groups.len()];
    let mut ws = Workspace::default();
    for &f in freq {
        let m = circuit.solve(f, &mut ws);
        base = base.max(worst_of(&|k, l| m.die(k, l)));
        for (j, branch) in one.iter().enumerate() {
            let Some(branch) = branch else { continue };
            let p = n + j;
            let z_one = branch.impedance(f);
            // Y = 1/Z_one shunted at the probe: g = 1/(Z_PP + Z_one); taken out: Y = −1/Z_one.
            let with = |sign: f64| {
                let g = invert(m.die(p, p) + z_one * sign);
                worst_of(&|k, l| m.die(k, l) - m.die(k, p) * m.die(p, l) * g)
            };
            more[j] = more[j].max(with(1.0));
            fewer[j] = fewer[j].max(with(-1.0));
        }
    }
    groups
        .iter()
        .enumerate()
        .filter(|&(j, _)| one[j].is_some())
        .map(|(j, &i)| {
            let g = &rail.decaps[i];
            // The plane pair stays between the rail and ground, so one fewer always leaves a network to judge.
            let fewer = (g.count > 0).then(|| fewer[j] - base).filter(|x| x.is_finite());
            Sensitivity { group: i, part: g.part.clone(), count: g.count, more_ohm: more[j] - base, fewer_ohm: fewer }
        })
        .collect()
}

/// The distance from `at_m` to the nearest load's pins, m.
fn nearest_load_m(placement: &crate::model::Placement, at_m: [f64; 2]) -> f64 {
    placement.loads.iter().map(|l| (l.at_m[0] - at_m[0]).hypot(l.at_m[1] - at_m[1])).fold(f64::INFINITY, f64::min)
}
