//! The droop at each load of a placed rail (a rail with a plane pair).
//!
//! The noise at load k is Σ_l Z_kl·I_l(t): every load's current through the self and transfer impedances, at the
//! die when the load has a package. The loads step together, each by its own ΔI (scaled alike when a step is
//! given), so load k sees one current ΔI·u(t) through H_k = Σ_l Z_kl·ΔI_l / ΣΔI. Under `"combine": "rss"` the time
//! domain still takes every load stepping at once: root-sum-square describes the spectra of loads that do not act
//! together, a step is one event, and the coincident step is the larger (so the default step is ΣΔI, never the
//! root-sum-square). The worst pattern likewise has every load toggling together.
//!
//! H_k is sampled from the plane pair's circuit ([`PlacedCircuit::solve_grid`]) on a log grid reaching well past
//! the band and the loads' edges, fitted by vector fitting ([`super::vecfit`]), and handed to the same modal
//! stepping, band filter and figures as a lumped rail. The fit's error is checked against [`FIT_TOLERANCE`] and
//! stated in the result's warnings when above it.

use super::{Droop, DroopError, DroopOptions, Modal, Plan, WorstCase, assemble, step_walk, vecfit};
use crate::analysis::grid::log_grid;
use crate::analysis::network::View;
use crate::analysis::placed::{LoadMatrix, PlacedCircuit};
use crate::model::{Board, Rail};
use crate::physics::{Corner, TWO_PI};
use num_complex::Complex64 as C;

/// The largest relative fit error left unmentioned: above it the result's warnings give it.
pub const FIT_TOLERANCE: f64 = 1e-2;

/// Samples per decade of the fitted grid.
const PER_DECADE: f64 = 30.0;

/// One load's droop on a placed rail.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadDroop {
    /// The load's name.
    pub name: String,
    /// Where its figures are taken: at the die when it has a package, else at its pins.
    pub view: View,
    /// The lowest voltage after the step, V.
    pub min_v: f64,
    /// When it occurs, s after the start of the ramp.
    pub t_min_s: f64,
    /// nominal − min, V.
    pub droop_v: f64,
    /// True when the step's droop is within the allowed band.
    pub meets: bool,
    /// The worst on/off pattern at this load (every load toggling together) and its droop.
    pub worst_case: WorstCase,
    /// True when the worst pattern's droop is within the allowed band.
    pub worst_case_meets: bool,
    /// The largest relative deviation of the fitted impedance from the plane pair's over the sampled grid.
    pub fit_error: f64,
    /// The step's waveform at this load: (t, V) on the output grid plus each interval's lowest and highest point.
    pub waveform: Vec<[f64; 2]>,
}

impl LoadDroop {
    /// The worst pattern's droop, when bounded.
    pub fn worst_case_droop_v(&self) -> Option<f64> {
        self.worst_case.droop_v()
    }
}

/// The worst of a placed rail's loads: the largest step droop (the rail's figures are its). `None` when empty.
pub fn worst_load(loads: &[LoadDroop]) -> Option<usize> {
    (0..loads.len()).max_by(|&a, &b| loads[a].droop_v.total_cmp(&loads[b].droop_v))
}

/// The frequencies the loads' impedances are sampled at: from a hundredth of the band's lower edge (100 Hz at the
/// most, so the settled droop is the DC resistance's) to four times the higher of the band's edge and the loads'
/// edge content (past it the band filter, or the ramp's own spectrum, leaves little).
fn fit_grid(plan: &Plan) -> Vec<f64> {
    let lo = (plan.band_hz[0] / 100.0).min(100.0);
    let hi = 4.0 * plan.band_hz[1].max(crate::model::edge_content_hz(plan.rise_s));
    let n = ((hi / lo).log10() * PER_DECADE).ceil().max(60.0) as usize;
    log_grid(lo, hi, n)
}

/// A placed rail's plan: as a lumped rail's, except that the default step is every load's ΔI summed (the loads
/// step together, see the module's notes), never the root-sum-square a rail with `"combine": "rss"` totals.
fn placed_plan(rail: &Rail, mut plan: Plan, options: &DroopOptions) -> Plan {
    if options.step_a.is_none() {
        plan.step_a = rail.loads.iter().map(|l| l.step_a).sum();
    }
    plan
}

/// The loads' impedances sampled on the fit grid: what every time-domain figure of a placed rail starts from.
struct Sampled {
    circuit: PlacedCircuit,
    freq_hz: Vec<f64>,
    matrices: Vec<LoadMatrix>,
    sum_a: f64,
}

impl Sampled {
    /// Build rail `rail`'s placed circuit and solve it on the fit grid.
    fn of(board: &Board, rail: &Rail, plan: &Plan) -> Result<Sampled, DroopError> {
        let sum_a: f64 = rail.loads.iter().map(|l| l.step_a).sum();
        let freq_hz = fit_grid(plan);
        let f_max = freq_hz.last().copied().unwrap_or(plan.band_hz[1]);
        let circuit = PlacedCircuit::of_rail(board, rail, Corner::Typical, f_max)
            .ok_or_else(|| DroopError::BadOption(format!("rail {} has no loads on its plane pair", rail.name)))?;
        if circuit.loads.is_empty() || sum_a.is_nan() || sum_a <= 0.0 {
            return Err(DroopError::BadOption(format!("rail {} has no load step on its plane pair", rail.name)));
        }
        let matrices = circuit.solve_grid(&freq_hz);
        Ok(Sampled { circuit, freq_hz, matrices, sum_a })
    }

    /// Load `k`'s impedance H_k = Σ_l Z_kl·ΔI_l / ΣΔI fitted as poles and residues, and that fit passed through
    /// the plan's band filter (the model every walk at load k takes). `k` is one of the rail's loads (the callers
    /// check it before any work).
    fn fit_load(&self, rail: &Rail, plan: &Plan, k: usize) -> Result<(vecfit::Fitted, Modal), DroopError> {
        let loads = &self.circuit.loads;
        let port = &loads[k];
        let h: Vec<C> = self
            .matrices
            .iter()
            .map(|m| loads.iter().enumerate().map(|(l, other)| m.die(k, l) * (other.step_a / self.sum_a)).sum())
            .collect();
        let w: Vec<f64> = self.freq_hz.iter().map(|f| TWO_PI * f).collect();
        let fitted = vecfit::fit(&w, &h).ok_or_else(|| {
            DroopError::BadOption(format!(
                "the impedance at load {} of rail {} could not be fitted as poles and residues",
                port.name, rail.name
            ))
        })?;
        let main = match plan.filter {
            Some(f) => fitted.modal.filtered(TWO_PI * f.poles_hz[0], TWO_PI * f.poles_hz[1]),
            None => fitted.modal.clone(),
        };
        Ok((fitted, main))
    }
}

/// Load `k`'s model on placed rail `rail`, filtered as the plan says, and the plan as a placed rail takes it: what
/// a pattern's response at that load walks through, the same model [`droop_placed`] gives the load's figures from.
pub(super) fn load_model(
    board: &Board,
    rail: &Rail,
    plan: Plan,
    options: &DroopOptions,
    k: usize,
) -> Result<(Plan, Modal), DroopError> {
    // The circuit's loads are the rail's that have a place (validation makes them all of them).
    let placed_loads = rail.placement.as_ref().map_or(0, |p| p.loads.len()).min(rail.loads.len());
    if k >= placed_loads {
        return Err(DroopError::BadOption(format!(
            "rail {} has {} loads on its plane pair, no load {}",
            rail.name,
            placed_loads,
            k + 1
        )));
    }
    let plan = placed_plan(rail, plan, options);
    let (_, main) = Sampled::of(board, rail, &plan)?.fit_load(rail, &plan, k)?;
    Ok((plan, main))
}

/// Every load's droop on placed rail `rail`; the rail's figures are its worst load's (the largest step droop), and
/// it meets only when every load does.
pub(super) fn droop_placed(
    board: &Board,
    rail: &Rail,
    plan: Plan,
    options: &DroopOptions,
) -> Result<Droop, DroopError> {
    let plan = placed_plan(rail, plan, options);
    let sampled = Sampled::of(board, rail, &plan)?;
    let (freq_hz, f_max) = (&sampled.freq_hz, sampled.freq_hz.last().copied().unwrap_or(plan.band_hz[1]));
    let mut all: Vec<(Droop, LoadDroop)> = Vec::with_capacity(sampled.circuit.loads.len());
    for (k, port) in sampled.circuit.loads.iter().enumerate() {
        let (fitted, main) = sampled.fit_load(rail, &plan, k)?;
        let samples = step_walk(&plan, &main, None);
        let mut d = assemble(rail, &plan, &samples, Some(&main));
        let view = if port.package.is_some() { View::Die } else { View::Board };
        d.node = view;
        if fitted.error > FIT_TOLERANCE {
            d.warnings.push(format!(
                "at load {}, the poles and residues fitted to the plane pair's impedance stray from it by up to \
                 {:.1} % over {:.3e} to {:.3e} Hz: the droop carries an error of that order",
                port.name,
                100.0 * fitted.error,
                freq_hz[0],
                f_max
            ));
        }
        let summary = LoadDroop {
            name: port.name.clone(),
            view,
            min_v: d.min_v,
            t_min_s: d.t_min_s,
            droop_v: d.droop_v,
            meets: d.meets,
            worst_case: d.worst_case.clone(),
            worst_case_meets: d.worst_case_meets,
            fit_error: fitted.error,
            waveform: d.waveform.clone(),
        };
        all.push((d, summary));
    }
    let loads: Vec<LoadDroop> = all.iter().map(|(_, l)| l.clone()).collect();
    let worst = worst_load(&loads).unwrap_or(0);
    let mut d = all.swap_remove(worst).0;
    d.meets = loads.iter().all(|l| l.meets);
    // The rail's worst pattern is the worst of its loads' (an unbounded one the worst of all), which need not be at
    // the load with the worst step: its figure and its verdict then describe the same load.
    let pattern_worst = (0..loads.len())
        .max_by(|&a, &b| {
            let v = |k: usize| loads[k].worst_case_droop_v().unwrap_or(f64::INFINITY);
            v(a).total_cmp(&v(b))
        })
        .unwrap_or(worst);
    d.worst_case = loads[pattern_worst].worst_case.clone();
    d.worst_case_meets = loads.iter().all(|l| l.worst_case_meets);
    if rail.combine == crate::model::Combine::Rss && loads.len() > 1 {
        d.warnings.push(
            "the rail combines its loads by root-sum-square: the time domain takes every load stepping at once \
             (a step is one event; root-sum-square is a rule for loads that do not act together), the larger case"
                .to_string(),
        );
    }
    d.loads = loads;
    Ok(d)
}
