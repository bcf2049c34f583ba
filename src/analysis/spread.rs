//! How the verdict moves with the parts: the yield over random boards within the tolerances, and each group's
//! sensitivity to one part more or fewer.
//!
//! Yield: each sample draws every group's capacitance and ESR uniformly within their tolerances, one draw per
//! group (the parts of a group come from one reel, so they move together), around the typical corner (the rail's
//! DC bias, room temperature). A sample meets target when its |Z| on the band's scan grid stays at or under the
//! target. The draws come from SplitMix64 (Steele, Lea and Flood, "Fast splittable pseudorandom number
//! generators", OOPSLA 2014) seeded per sample, so the answer is the same whatever the number of threads.

use super::network::{Network, Scale, View, group_branch, invert};
use super::rail::RailAnalysis;
use super::worst::Frame;
use crate::model::{Board, Rail};
use crate::physics::{Corner, TWO_PI};
use num_complex::Complex64;

/// The seed `check --yield` uses unless told otherwise.
pub const DEFAULT_SEED: u64 = 0x6875_7368_7261_696c;

/// A range of frequencies where failing samples go above target.
#[derive(Debug, Clone, PartialEq)]
pub struct FailRange {
    /// Lowest frequency of the range, Hz.
    pub from_hz: f64,
    /// Highest frequency of the range, Hz.
    pub to_hz: f64,
    /// How many samples are above target somewhere in it.
    pub samples: usize,
}

/// The share of random boards that meet target.
#[derive(Debug, Clone, PartialEq)]
pub struct YieldEstimate {
    /// Boards drawn.
    pub samples: usize,
    /// Boards that meet target.
    pub meeting: usize,
    /// meeting ÷ samples.
    pub fraction: f64,
    /// The seed of the draws.
    pub seed: u64,
    /// Where failing boards go above target, by frequency.
    pub failing: Vec<FailRange>,
}

/// One group's part as the yield varies it: R, the reactance terms at each grid point, the count and tolerances.
struct Drawn {
    count: f64,
    r: f64,
    /// ωL at each point (part plus mounting).
    wl: Vec<f64>,
    /// 1/(ωC) at each point, at the corner's capacitance.
    inv_wc: Vec<f64>,
    tc: f64,
    tr: f64,
}

/// SplitMix64: the next state and a uniform draw in [0, 1).
fn splitmix(state: &mut u64) -> f64 {
    *state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^= z >> 31;
    (z >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// Draw `samples` boards of rail `rail_index` seen from `view` on the band's scan grid of `points`, and count
/// those that meet target. `threads` splits the work (1 or more). `None` when the rail has no band.
pub fn yield_estimate(
    board: &Board,
    rail_index: usize,
    view: View,
    points: usize,
    samples: usize,
    seed: u64,
    threads: usize,
) -> Option<YieldEstimate> {
    let rail = board.rails.get(rail_index)?;
    let band = rail.band()?;
    let freq = super::grid::log_grid(band.hz[0], band.hz[1], points.max(2));
    let target = super::rail::target_impedance(rail);
    let corner = Corner::Typical;
    let network = Network::of_rail_in(board, rail, corner);
    let mut drawn = Vec::new();
    let mut varied = Vec::new();
    for (i, g) in rail.decaps.iter().enumerate() {
        let Some(part) = board.part(&g.part) else { continue };
        let (tc, tr) = (part.c_tolerance(), part.esr_tolerance());
        // Measured parts and parts with no tolerance stay in the fixed part of the network.
        if (tc == 0.0 && tr == 0.0) || part.table().is_some() {
            continue;
        }
        let Some(b) = group_branch(board, rail, i, corner, Scale::MIDDLE, Some(1)) else { continue };
        let c = b.rlc.c_f.unwrap_or(f64::INFINITY);
        drawn.push(Drawn {
            count: f64::from(g.count),
            r: b.rlc.r_ohm,
            wl: freq.iter().map(|&f| TWO_PI * f * b.rlc.l_h).collect(),
            inv_wc: freq.iter().map(|&f| 1.0 / (TWO_PI * f * c)).collect(),
            tc,
            tr,
        });
        varied.push(i);
    }
    let frame = Frame::build(&network, |i| varied.contains(&i), &freq, view == View::Die);
    let threads = threads.clamp(1, 64).min(samples.max(1));
    let per = samples.div_ceil(threads);
    let parts: Vec<(usize, Vec<usize>)> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..threads)
            .map(|t| {
                let (frame, drawn, freq) = (&frame, &drawn, &freq);
                let range = (t * per).min(samples)..((t + 1) * per).min(samples);
                s.spawn(move || run_samples(frame, drawn, freq.len(), target, seed, range))
            })
            .collect();
        handles.into_iter().filter_map(|h| h.join().ok()).collect()
    });
    let mut meeting = 0;
    let mut above = vec![0usize; freq.len()];
    for (m, a) in parts {
        meeting += m;
        for (x, y) in above.iter_mut().zip(a) {
            *x += y;
        }
    }
    let mut failing = Vec::new();
    let mut k = 0;
    while k < freq.len() {
        if above[k] == 0 {
            k += 1;
            continue;
        }
        let start = k;
        let mut most = 0;
        while k < freq.len() && above[k] > 0 {
            most = most.max(above[k]);
            k += 1;
        }
        failing.push(FailRange { from_hz: freq[start], to_hz: freq[k - 1], samples: most });
    }
    Some(YieldEstimate {
        samples,
        meeting,
        fraction: if samples == 0 { 0.0 } else { meeting as f64 / samples as f64 },
        seed,
        failing,
    })
}

/// Samples `range`: how many meet target, and at each grid point how many failing ones are above it there.
fn run_samples(
    frame: &Frame,
    drawn: &[Drawn],
    points: usize,
    target: f64,
    seed: u64,
    range: std::ops::Range<usize>,
) -> (usize, Vec<usize>) {
    let mut meeting = 0;
    let mut above = vec![0usize; points];
    let mut scales = vec![(1.0, 1.0); drawn.len()];
    let mut z = vec![0.0; points];
    for n in range {
        // One stream per sample: the same boards whatever the split between threads.
        let mut state = seed ^ (n as u64).wrapping_mul(0xd1b5_4a32_d192_ed03);
        for (s, d) in scales.iter_mut().zip(drawn) {
            let uc = splitmix(&mut state);
            let ur = splitmix(&mut state);
            *s = (1.0 + d.tc * (2.0 * uc - 1.0), 1.0 + d.tr * (2.0 * ur - 1.0));
        }
        let mut fails = false;
        for (k, zk) in z.iter_mut().enumerate() {
            let mut y = frame.y0[k];
            for (d, &(sc, sr)) in drawn.iter().zip(&scales) {
                let zone = Complex64::new(d.r * sr, d.wl[k] - d.inv_wc[k] / sc);
                y += invert(zone) * d.count;
            }
            *zk = frame.z(k, y);
            // A NaN counts as above target: a sample that cannot be judged does not meet it.
            fails |= zk.is_nan() || *zk > target;
        }
        if fails {
            for (a, &zk) in above.iter_mut().zip(&z) {
                if zk.is_nan() || zk > target {
                    *a += 1;
                }
            }
        } else {
            meeting += 1;
        }
    }
    (meeting, above)
}

/// How a group's count moves the worst |Z|.
#[derive(Debug, Clone, PartialEq)]
pub struct Sensitivity {
    /// Index in the rail's `decaps`.
    pub group: usize,
    /// The part's id.
    pub part: String,
    /// Count fitted.
    pub count: u32,
    /// Change of the worst |Z| on the scan grid with one part more, Ω (negative: better).
    pub more_ohm: f64,
    /// Change with one part fewer, Ω; `None` when the group has none, or when one fewer would leave nothing
    /// between the rail and ground.
    pub fewer_ohm: Option<f64>,
}

/// Each group's sensitivity in the corner, view and tolerance vertex of `analysis`, on its scan grid.
/// On a placed rail, through the planes ([`crate::analysis::placed::placed_sensitivity`]).
pub fn sensitivity(board: &Board, rail: &Rail, analysis: &RailAnalysis) -> Vec<Sensitivity> {
    if rail.placement.is_some() {
        return crate::analysis::placed::placed_sensitivity(board, rail, analysis);
    }
    let freq = &analysis.scan.freq_hz;
    let scales: Vec<Scale> = analysis.vertex.as_ref().map(|v| v.scales()).unwrap_or_default();
    let network = Network::of_rail_scaled(board, rail, analysis.corner, &scales);
    let frame = Frame::build(&network, |_| false, freq, analysis.view == View::Die);
    let worst_with = |extra: &dyn Fn(usize) -> Complex64| {
        (0..freq.len()).map(|k| frame.z(k, frame.y0[k] + extra(k))).fold(0.0, f64::max)
    };
    let base = worst_with(&|_| Complex64::new(0.0, 0.0));
    rail.decaps
        .iter()
        .enumerate()
        .filter_map(|(i, g)| {
            let scale = scales.get(i).copied().unwrap_or(Scale::MIDDLE);
            let one = group_branch(board, rail, i, analysis.corner, scale, Some(1))?;
            let y: Vec<Complex64> = freq.iter().map(|&f| invert(one.impedance(f))).collect();
            let more = worst_with(&|k| y[k]) - base;
            // One fewer of the only thing between the rail and ground leaves no network to judge.
            let others = rail.source.is_some()
                || rail.plane.is_some()
                || g.count > 1
                || rail.decaps.iter().enumerate().any(|(j, h)| j != i && h.count > 0);
            let fewer = (g.count > 0 && others).then(|| worst_with(&|k| -y[k]) - base).filter(|x| x.is_finite());
            Some(Sensitivity { group: i, part: g.part.clone(), count: g.count, more_ohm: more, fewer_ohm: fewer })
        })
        .collect()
}
