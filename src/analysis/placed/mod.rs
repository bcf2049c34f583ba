//! Placed rails: the plane pair as an N-port with the regulator, every part and every load at its port, and the
//! verdict at each load.
//!
//! The verdict at load k: over the band, the noise Σ_l |Z_kl(f)|·ΔI_l (each load's step through the self and
//! transfer impedances; root-sum-square under `"combine": "rss"`) against V × ripple, written as an effective
//! impedance (that sum / ΔI, ΔI the rail's step under its combine rule) against the rail's target. With every port
//! at one point all Z_kl are equal and this is exactly the lumped verdict. The rail meets target when every load
//! does; the rail's own figures are its worst load's.
//!
//! [`PlacedCircuit`] is the circuit (built once from a rail, evaluated per frequency); the scan, the findings and
//! the faces only read it.

mod advice;
mod circuit;
mod field;
mod lanes;
mod ldl;
mod plane_cache;
mod sensitivity;
mod worst;

pub use advice::{PartPath, PlacedFinding, part_path, placed_findings};
pub use circuit::{BranchPort, Drag, LoadMatrix, LoadPort, PlacedCircuit, PortOwner, Workspace};
pub use field::{PlaneField, plane_field, port_currents};
pub use plane_cache::{forget_prepared_planes, prepared};
pub use sensitivity::placed_sensitivity;
pub use worst::{MAX_ASCENT_TRIES, placed_worst_vertex};

use super::findings::{self, Extremum, ViolationBand};
use super::grid::log_grid;
use super::network::{Network, View};
use super::rail::{
    AnalysisOptions, AntiResonance, BranchRef, Curve, RailAnalysis, analyze_lumped_at, target_impedance,
};
use super::worst::{SearchOptions, WorstVertex};
use crate::model::{Board, Combine, Rail};
use crate::physics::Corner;
use num_complex::Complex64 as C;
use std::cell::RefCell;
use std::collections::HashMap;

/// One load's verdict on a placed rail.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadVerdict {
    /// The load's name.
    pub name: String,
    /// Where its impedance is seen: at the die when the load has a package, else at its pins.
    pub view: View,
    /// True when its effective impedance stays at or below target over the band.
    pub meets_target: bool,
    /// Its highest effective impedance over the closed band, Ω.
    pub worst_ohm: f64,
    /// Where, Hz.
    pub worst_hz: f64,
    /// target / worst.
    pub margin_ratio: f64,
    /// 20·log10(target / worst).
    pub margin_db: f64,
    /// Ranges above target.
    pub violations: Vec<ViolationBand>,
    /// Local maxima inside the band.
    pub peaks: Vec<Extremum>,
    /// Local minima inside the band.
    pub dips: Vec<Extremum>,
    /// The scan: the effective impedance with the phase of the load's self-impedance.
    pub scan: Curve,
}

/// A placed rail analysed: the rail's figures (its worst load's) and each load's.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedAnalysis {
    /// The rail's analysis as every face reads it: the worst load's figures, the rail's target, band and groups.
    pub rail: RailAnalysis,
    /// Each load, in the rail's order.
    pub loads: Vec<LoadVerdict>,
    /// Index of the worst load.
    pub worst_load: usize,
}

/// The highest frequency a placed rail is prepared for: the band's top, or a display sweep's end if higher.
fn f_max_for(rail: &Rail, options: &AnalysisOptions) -> f64 {
    let band_hi = rail.band_hz_or_default()[1];
    options.curve.map_or(band_hi, |(_, to, _)| to.max(band_hi))
}

/// Each load's effective impedance at one frequency: combine(|Z_kl|·ΔI_l)/ΔI with the phase of Z_kk (at the
/// dies).
pub fn effective(circuit: &PlacedCircuit, m: &LoadMatrix, combine: Combine, step_a: f64) -> Vec<C> {
    (0..m.n)
        .map(|k| {
            let terms = circuit.loads.iter().enumerate().map(|(l, load)| m.die(k, l).norm() * load.step_a);
            C::from_polar(combine_terms(combine, terms) / step_a, m.die(k, k).arg())
        })
        .collect()
}

/// The load a placed rail's verdict is taken at: the one with the highest worst effective |Z|. `None` without loads.
pub fn worst_load(loads: &[LoadVerdict]) -> Option<usize> {
    (0..loads.len()).max_by(|&a, &b| loads[a].worst_ohm.total_cmp(&loads[b].worst_ohm))
}

/// The noise at a load from each load's share |Z_kl|·ΔI_l: their sum, or their root-sum-square under
/// [`Combine::Rss`]. The one rule the verdict and the optimizer apply.
pub fn combine_terms(combine: Combine, terms: impl Iterator<Item = f64>) -> f64 {
    match combine {
        Combine::Sum => terms.sum::<f64>(),
        Combine::Rss => terms.map(|x| x * x).sum::<f64>().sqrt(),
    }
}

/// Analyse a placed rail: every load's verdict, and the rail's (its worst load's). `None` for a lumped rail or a
/// rail without band.
pub fn analyze_placed(board: &Board, rail_index: usize, options: &AnalysisOptions) -> Option<PlacedAnalysis> {
    let rail = board.rails.get(rail_index)?;
    let band = rail.band()?;
    let mut circuit = PlacedCircuit::of_rail(board, rail, options.corner, f_max_for(rail, options))?;
    if circuit.loads.is_empty() {
        return None;
    }
    // The worst corner: the tolerance vertex searched on this circuit, which is left at it.
    let vertex = (options.corner == Corner::Worst).then(|| {
        let grid = log_grid(band.hz[0], band.hz[1], options.band_points.max(2));
        placed_worst_vertex(board, rail, &mut circuit, &grid, &options.search)
    });
    let scales = vertex.as_ref().map(WorstVertex::scales).unwrap_or_default();
    let circuit = circuit;
    let target = target_impedance(rail);
    let step = rail.total_step_a();
    // One solve gives every load; the scans of the loads share them through this cache.
    let cache: RefCell<HashMap<u64, Vec<C>>> = RefCell::new(HashMap::new());
    let ws = RefCell::new(Workspace::default());
    let eff_at = |f: f64| -> Vec<C> {
        if let Some(v) = cache.borrow().get(&f.to_bits()) {
            return v.clone();
        }
        let m = circuit.solve(f, &mut ws.borrow_mut());
        let v = effective(&circuit, &m, rail.combine, step);
        cache.borrow_mut().insert(f.to_bits(), v.clone());
        v
    };
    let mut loads = Vec::new();
    for (k, load) in circuit.loads.iter().enumerate() {
        let z_at = |f: f64| eff_at(f)[k];
        let scan = findings::scan(&z_at, band.hz, options.band_points, target);
        let worst = scan.worst;
        let margin_ratio = target / worst.z_ohm;
        loads.push(LoadVerdict {
            name: load.name.clone(),
            view: if load.package.is_some() { View::Die } else { View::Board },
            meets_target: worst.z_ohm <= target,
            worst_ohm: worst.z_ohm,
            worst_hz: worst.freq_hz,
            margin_ratio,
            margin_db: 20.0 * margin_ratio.log10(),
            violations: scan.violations,
            peaks: scan.peaks,
            dips: scan.dips,
            scan: Curve { freq_hz: scan.freq_hz, z: scan.z, branches: Vec::new() },
        });
    }
    let worst_load = worst_load(&loads).unwrap_or(0);
    // The rail's band, target and groups as the lumped engine gives them; its verdict figures from the worst load.
    let mut lumped_rail = rail.clone();
    lumped_rail.placement = None;
    let lumped_options = AnalysisOptions { curve: None, ..*options };
    let mut a = analyze_lumped_at(board, &lumped_rail, &lumped_options, View::Board, vertex)?;
    // The figures shown: the load asked for, else the worst (the rail's verdict: it meets target only when every
    // load does).
    let shown = options.load.filter(|&k| k < loads.len()).unwrap_or(worst_load);
    let w = &loads[shown];
    let network = Network::of_rail_scaled(board, &lumped_rail, options.corner, &scales);
    a.view = w.view;
    a.worst_ohm = w.worst_ohm;
    a.worst_hz = w.worst_hz;
    a.margin_ratio = w.margin_ratio;
    a.margin_db = w.margin_db;
    a.meets_target = if shown == worst_load { loads.iter().all(|l| l.meets_target) } else { w.meets_target };
    a.violations = w.violations.clone();
    a.dips = w.dips.clone();
    a.antiresonances = w
        .peaks
        .iter()
        .map(|p| {
            // The lumped network names the branches behind a peak by their share of the susceptance there.
            let (inductive, capacitive) = network.peak_sides(p.freq_hz, View::Board);
            let r = |(b, share): (&crate::analysis::Branch, f64)| BranchRef {
                kind: b.kind,
                label: b.label.clone(),
                resonance_hz: b.resonance_hz,
                share,
            };
            AntiResonance {
                freq_hz: p.freq_hz,
                z_ohm: p.z_ohm,
                above_target: p.z_ohm > target,
                inductive_side: inductive.map(r),
                capacitive_side: capacitive.map(r),
            }
        })
        .collect();
    a.scan = w.scan.clone();
    a.placed_findings = placed_findings(board, rail, &circuit, target);
    a.curve = options.curve.map(|(from, to, n)| {
        let freq_hz = log_grid(from, to, n);
        let z = freq_hz.iter().map(|&f| eff_at(f)[shown]).collect();
        let branches = if options.branch_curves {
            network
                .branches
                .iter()
                .map(|b| {
                    let r =
                        BranchRef { kind: b.kind, label: b.label.clone(), resonance_hz: b.resonance_hz, share: 1.0 };
                    (r, freq_hz.iter().map(|&f| b.impedance(f)).collect())
                })
                .collect()
        } else {
            Vec::new()
        };
        Curve { freq_hz, z, branches }
    });
    Some(PlacedAnalysis { rail: a, loads, worst_load })
}

/// The impedance at load `at` (its die when it has a package) at each of `freq_hz`: its self-impedance, or with
/// `from` the transfer impedance Z(at, from); in the worst corner at the tolerance vertex the check finds. `None` when the rail is not placed or a load index is out of range.
pub fn load_sweep(
    board: &Board,
    rail: &Rail,
    at: usize,
    from: Option<usize>,
    freq_hz: &[f64],
    corner: Corner,
) -> Option<Vec<C>> {
    let f_max = freq_hz.iter().copied().fold(rail.band_hz_or_default()[1], f64::max);
    let mut circuit = PlacedCircuit::of_rail(board, rail, corner, f_max)?;
    let other = from.unwrap_or(at);
    if at >= circuit.loads.len() || other >= circuit.loads.len() {
        return None;
    }
    // In the worst corner the parts sit at the vertex the check's search finds over the band (default density).
    if let (Corner::Worst, Some(band)) = (corner, rail.band()) {
        let grid = log_grid(band.hz[0], band.hz[1], AnalysisOptions::default().band_points);
        placed_worst_vertex(board, rail, &mut circuit, &grid, &SearchOptions::default());
    }
    let mut ws = Workspace::default();
    Some(freq_hz.iter().map(|&f| circuit.solve(f, &mut ws).die(at, other)).collect())
}
