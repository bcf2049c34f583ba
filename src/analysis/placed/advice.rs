//! What a placed rail adds to the findings, in plain words with the cause and a hint: the plane's own resonances
//! and the loads near their peaks, parts too far from the load they serve, and loads whose nearest parts are all of
//! one value.

use super::circuit::{PlacedCircuit, PortOwner};
use crate::analysis::{Finding, Severity};
use crate::model::{Board, Rail};
use crate::physics::TWO_PI;
use crate::units::{Unit, format};

/// A finding of a placed rail (the same shape every face already renders).
pub type PlacedFinding = Finding;

/// A load "sits near a peak" of a mode when the mode's voltage pattern there is at least this fraction of its
/// largest value (common practice for reading standing-wave patterns; a judgement, not a standard).
const NEAR_PEAK: f64 = 0.7;
/// The parts counted as a load's nearest when judging whether they are all of one value.
const NEAREST_PARTS: usize = 3;
/// Plane resonances named at most (the lowest ones in the band; the rest follow the same pattern).
const MAX_MODES: usize = 4;

fn mm(x: f64) -> String {
    format!("{:.0} mm", x * 1e3)
}

/// The findings a placed rail adds. `target_ohm` and `band_hz` are the rail's.
pub fn placed_findings(board: &Board, rail: &Rail, circuit: &PlacedCircuit, target_ohm: f64) -> Vec<Finding> {
    let mut out = Vec::new();
    if rail.placement.is_none() {
        return out;
    }
    let band = rail.band_hz_or_default();
    let st = circuit.plane.stackup;
    let [a, b] = st.size_m;
    let np = circuit.branches.len();
    let load_ports: Vec<_> = (0..circuit.loads.len()).map(|k| circuit.plane.ports[np + k]).collect();

    // The plane's resonances inside the band, lowest first.
    let mut modes = Vec::new();
    for m in 0..40usize {
        for n in 0..40usize {
            if (m, n) == (0, 0) {
                continue;
            }
            let f = st.resonance_hz(m, n);
            if f <= band[1] {
                modes.push((f, m, n));
            }
        }
    }
    modes.sort_by(|x, y| x.0.total_cmp(&y.0));
    for &(f, m, n) in modes.iter().take(MAX_MODES) {
        let lines = |count: usize, len: f64, axis: &str| -> String {
            let at: Vec<String> = (0..=count).map(|i| mm(len * i as f64 / count.max(1) as f64)).collect();
            if count == 0 { String::new() } else { format!("{axis} = {}", at.join(", ")) }
        };
        let peaks_at = [lines(m, a, "x"), lines(n, b, "y")].into_iter().filter(|s| !s.is_empty()).collect::<Vec<_>>();
        let near: Vec<String> = circuit
            .loads
            .iter()
            .zip(&load_ports)
            .filter(|(_, p)| {
                let v = ((m as f64) * std::f64::consts::PI * p.x / a).cos()
                    * ((n as f64) * std::f64::consts::PI * p.y / b).cos();
                v.abs() >= NEAR_PEAK
            })
            .map(|(l, _)| l.name.clone())
            .collect();
        let who = if near.is_empty() {
            "no load sits near its peaks".to_string()
        } else {
            format!("{} near a peak of it", near.join(", "))
        };
        out.push(Finding {
            severity: Severity::Note,
            range_hz: [f, f],
            text: format!(
                "The plane pair resonates in mode ({m}, {n}) at {} (lossless): its voltage peaks along {}; {}.",
                format(f, Unit::Hertz),
                peaks_at.join(" and "),
                who
            ),
            hint:
                "Parts placed near the peaks of a mode damp it best; a lossier or thinner dielectric lowers the peak."
                    .into(),
        });
    }

    // Parts too far from the load they serve (their nearest load).
    if !load_ports.is_empty() {
        for (i, bp) in circuit.branches.iter().enumerate() {
            let PortOwner::Group { group, reference } = &bp.owner else { continue };
            let p = circuit.plane.ports[i];
            let k = load_ports
                .iter()
                .enumerate()
                .map(|(k, c)| (k, ((p.x - c.x).powi(2) + (p.y - c.y).powi(2)).sqrt()))
                .min_by(|x, y| x.1.total_cmp(&y.1))
                .map_or(0, |(k, _)| k);
            let Some(path) = part_path(board, rail, circuit, i, k, target_ohm) else { continue };
            if path.plane_h <= path.mounting_h {
                continue;
            }
            let name = reference.clone().unwrap_or_else(|| format!("The {} group", rail.decaps[*group].part));
            let load = &circuit.loads[k].name;
            out.push(Finding {
                severity: Severity::Note,
                range_hz: [path.helps_below_hz, path.helps_below_hz],
                text: format!(
                    "{name} is {} from {load}: the planes add {} between them, more than its mounting ({}); its \
                     path to {load} stays under target only below {}.",
                    mm(path.distance_m),
                    format(path.plane_h, Unit::Henry),
                    format(path.mounting_h, Unit::Henry),
                    format(path.helps_below_hz, Unit::Hertz)
                ),
                hint: format!("Move it closer to {load}'s power pins, or count on it only below that frequency."),
            });
        }
    }

    // Loads whose nearest parts are all of one value.
    let values: Vec<f64> = circuit
        .branches
        .iter()
        .filter_map(|bp| match &bp.owner {
            PortOwner::Group { group, .. } => board.part(&rail.decaps[*group].part).map(|p| p.capacitance_f),
            PortOwner::Source => None,
        })
        .collect();
    let distinct = values.iter().fold(Vec::<f64>::new(), |mut v, c| {
        if !v.iter().any(|x| (x - c).abs() <= 1e-9 * c.abs()) {
            v.push(*c);
        }
        v
    });
    if distinct.len() > 1 {
        for (k, c) in load_ports.iter().enumerate() {
            let mut parts: Vec<(f64, usize)> = circuit
                .branches
                .iter()
                .enumerate()
                .filter(|(_, bp)| matches!(bp.owner, PortOwner::Group { .. }))
                .map(|(i, _)| {
                    let p = circuit.plane.ports[i];
                    (((p.x - c.x).powi(2) + (p.y - c.y).powi(2)).sqrt(), i)
                })
                .collect();
            parts.sort_by(|x, y| x.0.total_cmp(&y.0));
            let nearest: Vec<&str> = parts
                .iter()
                .take(NEAREST_PARTS)
                .filter_map(|(_, i)| match &circuit.branches[*i].owner {
                    PortOwner::Group { group, .. } => Some(rail.decaps[*group].part.as_str()),
                    PortOwner::Source => None,
                })
                .collect();
            if nearest.len() >= 2 && nearest.iter().all(|p| *p == nearest[0]) {
                let load = &circuit.loads[k].name;
                out.push(Finding {
                    severity: Severity::Note,
                    range_hz: band,
                    text: format!(
                        "The {} parts nearest {load} are all {}: one value near a load leaves the band between its \
                         self-resonance and the next value's to parts farther away.",
                        nearest.len(),
                        nearest[0]
                    ),
                    hint: format!("Place one of another value among the parts nearest {load}."),
                });
            }
        }
    }
    out.sort_by(|x, y| x.range_hz[0].total_cmp(&y.range_hz[0]));
    out
}

/// A part's path to a load through the planes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PartPath {
    /// Centre to centre, m.
    pub distance_m: f64,
    /// The loop inductance the planes add between the part's port and the load's pins, L_ii + L_kk − 2·L_ik, H.
    pub plane_h: f64,
    /// The part's mounting inductance, H.
    pub mounting_h: f64,
    /// The frequency below which the path (part and mounting over the parts at that port, plus the planes) stays
    /// under the rail's target: target / (2π·L), Hz.
    pub helps_below_hz: f64,
}

/// The path from branch port `i` (a decap group's port) to load `k` on a placed rail's circuit, against
/// `target_ohm`. `None` for the regulator's port or an index out of range.
pub fn part_path(
    board: &Board,
    rail: &Rail,
    circuit: &PlacedCircuit,
    i: usize,
    k: usize,
    target_ohm: f64,
) -> Option<PartPath> {
    let PortOwner::Group { group, reference } = &circuit.branches.get(i)?.owner else { return None };
    circuit.loads.get(k)?;
    let c = circuit.branches.len() + k;
    let (p, q) = (circuit.plane.ports[i], circuit.plane.ports[c]);
    let l = |x: usize, y: usize| circuit.plane.spreading_inductance_h(x, y);
    let plane_h = (l(i, i) + l(c, c) - 2.0 * l(i, c)).max(0.0);
    let g = rail.decaps.get(*group)?;
    let mounting_h = crate::physics::mounting::group_mounting_h(g);
    let esl = board.part(&g.part).map_or(0.0, |p| p.esl_h);
    let count = if reference.is_some() { 1 } else { g.count.max(1) };
    let path_h = (esl + mounting_h) / count as f64 + plane_h;
    Some(PartPath {
        distance_m: (p.x - q.x).hypot(p.y - q.y),
        plane_h,
        mounting_h,
        helps_below_hz: target_ohm / (TWO_PI * path_h),
    })
}
