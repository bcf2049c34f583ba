//! One rail, analysed: its target, its worst impedance, its violation bands and anti-resonances, and the curves
//! the window and the reports draw. Every face reads this; nothing here is computed anywhere else.

use super::findings::{self, Extremum, ViolationBand};
use super::grid::log_grid;
use super::network::{Branch, BranchKind, Network, Scale, View};
use super::worst::{SearchOptions, WorstVertex, worst_vertex};
use crate::model::{Band, Board, Rail};
use crate::physics::{Corner, Derating, SeriesRlc, derate, mounting::group_mounting_h};
use num_complex::Complex64;

/// How densely to look, and what curves to keep.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AnalysisOptions {
    /// Log-spaced points over the band for finding peaks and violations (both edges included).
    pub band_points: usize,
    /// A display sweep (from, to, points) to keep, beside the in-band scan; `None` keeps only the scan.
    pub curve: Option<(f64, f64, usize)>,
    /// Keep each branch's own |Z| along the display sweep (for drawing them faintly beneath the total).
    pub branch_curves: bool,
    /// Where to look from; `None` takes the verdict view (the die when the rail gives a package).
    pub view: Option<View>,
    /// Which corner of the parts' values (the typical one by default).
    pub corner: Corner,
    /// How hard the worst corner searches the tolerance vertices.
    pub search: SearchOptions,
    /// On a placed rail, the load whose figures and curve to give (its index); `None` (or an index past the
    /// loads) gives the worst load's, the rail's verdict.
    pub load: Option<usize>,
}

impl Default for AnalysisOptions {
    fn default() -> Self {
        AnalysisOptions {
            band_points: 1000,
            curve: None,
            branch_curves: false,
            view: None,
            corner: Corner::Typical,
            search: SearchOptions::default(),
            load: None,
        }
    }
}

/// The target impedance of a rail: V × ripple / ΔI, with ΔI the sum of the loads' steps (the worst case, every
/// step at once). Ω.
pub fn target_impedance(rail: &Rail) -> f64 {
    rail.voltage_v * rail.ripple_pct / (100.0 * rail.total_step_a())
}

/// A branch named in a finding.
#[derive(Debug, Clone, PartialEq)]
pub struct BranchRef {
    /// Which input it is.
    pub kind: BranchKind,
    /// Its label, such as "c100n-0402 ×24".
    pub label: String,
    /// Its self-resonance, Hz (0 for the source, infinite for a branch with no inductance).
    pub resonance_hz: f64,
    /// At a peak: its share of the inductive (or capacitive) susceptance there, 0 to 1; 1 elsewhere.
    pub share: f64,
}

/// A local maximum of |Z| inside the band.
#[derive(Debug, Clone, PartialEq)]
pub struct AntiResonance {
    /// Frequency, Hz.
    pub freq_hz: f64,
    /// |Z| there, Ω.
    pub z_ohm: f64,
    /// True when the peak is above target.
    pub above_target: bool,
    /// The inductive branch that carries the most current at the peak (largest share of the inductive
    /// susceptance), with its share.
    pub inductive_side: Option<BranchRef>,
    /// The capacitive branch that carries the most current at the peak, with its share.
    pub capacitive_side: Option<BranchRef>,
}

/// One decap group as the analysis sees it.
#[derive(Debug, Clone, PartialEq)]
pub struct GroupInfo {
    /// Index in the rail's `decaps`.
    pub index: usize,
    /// Part id.
    pub part: String,
    /// Count fitted.
    pub count: u32,
    /// Self-resonance of one part with its mounting, Hz (`None` with no inductance or no such part), in the
    /// analysed corner.
    pub self_resonance_hz: Option<f64>,
    /// Mounting inductance of one part (given, or computed from the geometry), H.
    pub mounting_h: f64,
    /// The part's capacitance in the analysed corner, F.
    pub effective_c_f: f64,
    /// The part's ESR in the analysed corner, Ω.
    pub effective_esr_ohm: f64,
    /// How the capacitance was derated in the analysed corner (in the worst corner, `tolerance` is the end of
    /// the tolerance the search chose).
    pub derating: Option<Derating>,
}

/// A frequency sweep of the total impedance and, on request, of each branch.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Curve {
    /// Frequencies, Hz.
    pub freq_hz: Vec<f64>,
    /// Total impedance at each frequency.
    pub z: Vec<Complex64>,
    /// Each branch's own impedance (as fitted, count included), in network order; empty unless asked for.
    pub branches: Vec<(BranchRef, Vec<Complex64>)>,
}

/// Everything the tool says about one rail.
#[derive(Debug, Clone, PartialEq)]
pub struct RailAnalysis {
    /// The rail's name.
    pub rail: String,
    /// Where the impedance is seen from.
    pub view: View,
    /// Which corner of the parts' values.
    pub corner: Corner,
    /// In the worst corner: the tolerance vertex the search found and how.
    pub vertex: Option<WorstVertex>,
    /// Target impedance, Ω.
    pub target_ohm: f64,
    /// The rail's ΔI under its combine rule, A.
    pub step_a: f64,
    /// The band the target applies over, Hz.
    pub band_hz: [f64; 2],
    /// The band with where each edge came from.
    pub band: Band,
    /// The highest |Z| over the closed band, Ω.
    pub worst_ohm: f64,
    /// Where it is, Hz.
    pub worst_hz: f64,
    /// target ÷ worst |Z|: above 1 means headroom (README defines it beside the text's "× target").
    pub margin_ratio: f64,
    /// The same margin in dB: 20·log10(target / worst).
    pub margin_db: f64,
    /// True when the worst |Z| over the band is at or below target.
    pub meets_target: bool,
    /// Ranges above target, by frequency.
    pub violations: Vec<ViolationBand>,
    /// Local maxima inside the band, by frequency.
    pub antiresonances: Vec<AntiResonance>,
    /// Local minima inside the band (series resonances of the network), by frequency.
    pub dips: Vec<Extremum>,
    /// Each decap group, in the rail's order.
    pub groups: Vec<GroupInfo>,
    /// The in-band scan (the grid the findings came from).
    pub scan: Curve,
    /// The display sweep, when asked for.
    pub curve: Option<Curve>,
    /// What a placed rail adds to the findings (plane resonances, far parts, one-value loads), from the circuit the
    /// analysis solved; empty on a lumped rail.
    pub placed_findings: Vec<super::Finding>,
}

/// Analyse rail `rail_index` of a (validated) board. A placed rail's verdict is its worst load's (see
/// `analysis::placed`).
pub fn analyze_rail(board: &Board, rail_index: usize, options: &AnalysisOptions) -> Option<RailAnalysis> {
    let rail = board.rails.get(rail_index)?;
    if rail.placement.is_some() {
        return super::placed::analyze_placed(board, rail_index, options).map(|p| p.rail);
    }
    analyze_lumped(board, rail, options)
}

/// Analyse a rail as one node (its placement, if any, ignored).
pub(super) fn analyze_lumped(board: &Board, rail: &Rail, options: &AnalysisOptions) -> Option<RailAnalysis> {
    let band = rail.band()?;
    let view = match options.view {
        Some(View::Die) if rail.package.is_some() => View::Die,
        Some(_) => View::Board,
        None if rail.package.is_some() => View::Die,
        None => View::Board,
    };
    // The worst corner is the tolerance vertex with the highest |Z| on the band's scan grid.
    let vertex = (options.corner == Corner::Worst).then(|| {
        worst_vertex(board, rail, view, &log_grid(band.hz[0], band.hz[1], options.band_points.max(2)), &options.search)
    });
    analyze_lumped_at(board, rail, options, view, vertex)
}

/// Analyse a rail as one node with its parts at `vertex` (in the worst corner; `None` elsewhere), seen from `view`.
pub(super) fn analyze_lumped_at(
    board: &Board,
    rail: &Rail,
    options: &AnalysisOptions,
    view: View,
    vertex: Option<WorstVertex>,
) -> Option<RailAnalysis> {
    let band = rail.band()?;
    let scales = vertex.as_ref().map(WorstVertex::scales).unwrap_or_default();
    let network = Network::of_rail_scaled(board, rail, options.corner, &scales);
    let z_at = |f: f64| network.impedance_in(f, view);
    let target_ohm = target_impedance(rail);
    let scan = findings::scan(&z_at, band.hz, options.band_points, target_ohm);

    let antiresonances = scan
        .peaks
        .iter()
        .map(|p| {
            let (inductive, capacitive) = network.peak_sides(p.freq_hz, view);
            let with_share = |(b, share): (&Branch, f64)| BranchRef { share, ..branch_ref(b) };
            AntiResonance {
                freq_hz: p.freq_hz,
                z_ohm: p.z_ohm,
                above_target: p.z_ohm > target_ohm,
                inductive_side: inductive.map(with_share),
                capacitive_side: capacitive.map(with_share),
            }
        })
        .collect();

    let groups = rail
        .decaps
        .iter()
        .enumerate()
        .map(|(index, g)| {
            let mounting_h = group_mounting_h(g);
            let part = board.part(&g.part);
            let scale = scales.get(index).copied().unwrap_or(Scale::MIDDLE);
            let derating =
                part.map(|p| Derating { tolerance: scale.c, ..derate(board, p, rail.voltage_v, options.corner) });
            let effective_c_f = match (part, &derating) {
                (Some(p), Some(d)) => p.capacitance_f * d.ratio(),
                _ => f64::NAN,
            };
            let effective_esr_ohm = part.map_or(f64::NAN, |p| p.esr_ohm * scale.esr);
            GroupInfo {
                index,
                part: g.part.clone(),
                count: g.count,
                self_resonance_hz: part.and_then(|p| {
                    SeriesRlc { r_ohm: effective_esr_ohm, l_h: p.esl_h + mounting_h, c_f: Some(effective_c_f) }
                        .self_resonance_hz()
                }),
                mounting_h,
                effective_c_f,
                effective_esr_ohm,
                derating,
            }
        })
        .collect();

    let curve = options.curve.map(|(from, to, n)| {
        let freq_hz = log_grid(from, to, n);
        let z = freq_hz.iter().map(|&f| z_at(f)).collect();
        let branches = if options.branch_curves {
            network
                .branches
                .iter()
                .chain(&network.die)
                .map(|b| (branch_ref(b), freq_hz.iter().map(|&f| b.impedance(f)).collect()))
                .collect()
        } else {
            Vec::new()
        };
        Curve { freq_hz, z, branches }
    });

    let worst = scan.worst;
    let margin_ratio = target_ohm / worst.z_ohm;
    Some(RailAnalysis {
        rail: rail.name.clone(),
        view,
        corner: options.corner,
        vertex,
        target_ohm,
        step_a: rail.total_step_a(),
        band_hz: band.hz,
        band,
        worst_ohm: worst.z_ohm,
        worst_hz: worst.freq_hz,
        margin_ratio,
        margin_db: 20.0 * margin_ratio.log10(),
        meets_target: worst.z_ohm <= target_ohm,
        violations: scan.violations,
        antiresonances,
        dips: scan.dips,
        groups,
        scan: Curve { freq_hz: scan.freq_hz, z: scan.z, branches: Vec::new() },
        curve,
        placed_findings: Vec::new(),
    })
}

fn branch_ref(b: &Branch) -> BranchRef {
    BranchRef { kind: b.kind, label: b.label.clone(), resonance_hz: b.resonance_hz, share: 1.0 }
}

/// Analyse every rail of a (validated) board with the same options.
pub fn analyze_board(board: &Board, options: &AnalysisOptions) -> Vec<RailAnalysis> {
    (0..board.rails.len()).filter_map(|i| analyze_rail(board, i, options)).collect()
}

/// The total impedance of a rail at each of `freq_hz` seen from the board in the typical corner (for sweeps and
/// exports).
pub fn sweep(board: &Board, rail: &Rail, freq_hz: &[f64]) -> Vec<Complex64> {
    sweep_in(board, rail, freq_hz, View::Board, Corner::Typical)
}

/// The impedance of a rail at each of `freq_hz`, seen from `view`, in `corner`. In the worst corner the parts
/// sit at the tolerance vertex the check's search finds over the rail's band (default density).
///
/// On a placed rail: the self-impedance at its first load (at the die when that load has a package); the placed
/// engine's `load_sweep` chooses the load.
pub fn sweep_in(board: &Board, rail: &Rail, freq_hz: &[f64], view: View, corner: Corner) -> Vec<Complex64> {
    if let Some(z) = super::placed::load_sweep(board, rail, 0, None, freq_hz, corner) {
        return z;
    }
    let scales = match (corner, rail.band()) {
        (Corner::Worst, Some(band)) => {
            let grid = log_grid(band.hz[0], band.hz[1], AnalysisOptions::default().band_points);
            worst_vertex(board, rail, view, &grid, &SearchOptions::default()).scales()
        }
        _ => Vec::new(),
    };
    let network = Network::of_rail_scaled(board, rail, corner, &scales);
    freq_hz.iter().map(|&f| network.impedance_in(f, view)).collect()
}

/// The total impedance of an analysis (its corner, tolerance vertex and view) along a log sweep from `from` to
/// `to` Hz in `n` points: for drawing a second curve of an analysis made without one.
pub fn curve_of(board: &Board, rail: &Rail, a: &RailAnalysis, from: f64, to: f64, n: usize) -> Curve {
    let scales = a.vertex.as_ref().map(WorstVertex::scales).unwrap_or_default();
    let network = Network::of_rail_scaled(board, rail, a.corner, &scales);
    let freq_hz = log_grid(from, to, n);
    let z = freq_hz.iter().map(|&f| network.impedance_in(f, a.view)).collect();
    Curve { freq_hz, z, branches: Vec::new() }
}
