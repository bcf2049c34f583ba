//! A long candidate list cut to the parts that could matter, so the search's cost does not grow with the list.
//!
//! At each of a few log-spaced frequencies over the band, the parts that give the most admittance per unit of the
//! objective (what a cheap mix is made of) and per part (what a mix under the count limits is made of) survive;
//! the rest are never the best choice at any of those frequencies. This is a heuristic, stated as such: with a
//! shortlisted search the options are not proven optimal (the answer says the list was cut).

use super::Candidate;
use super::evaluator::BranchMaker;
use crate::model::{Board, Rail};
use crate::physics::Corner;

/// Candidate lists longer than this are cut to at most this many parts.
pub const SHORTLIST_SIZE: usize = 32;

/// Frequencies over the band at which candidates compete.
const PROBES: usize = 24;

/// The indices of the parts kept, in the candidates' order.
pub(super) fn shortlist(
    board: &Board,
    rail: &Rail,
    candidates: &[Candidate],
    unit: &[f64],
    corner: Corner,
) -> Vec<usize> {
    if candidates.len() <= SHORTLIST_SIZE {
        return (0..candidates.len()).collect();
    }
    let band = rail.band_hz_or_default();
    let probes = crate::analysis::grid::log_grid(band[0], band[1], PROBES);
    // Per probe: the best two by admittance per unit of the objective, and the best one by admittance per part.
    let mut per_cost: Vec<[(f64, usize); 2]> = vec![[(f64::NEG_INFINITY, usize::MAX); 2]; PROBES];
    let mut per_part: Vec<(f64, usize)> = vec![(f64::NEG_INFINITY, usize::MAX); PROBES];
    let mut maker = BranchMaker::new(board, rail, corner);
    for (i, c) in candidates.iter().enumerate() {
        let Some(branch) = maker.branch(c) else { continue };
        for (p, &f) in probes.iter().enumerate() {
            let y = 1.0 / branch.impedance(f).norm();
            if !y.is_finite() {
                continue;
            }
            let value = y / unit[i].max(1e-300);
            let top = &mut per_cost[p];
            if value > top[0].0 {
                top[1] = top[0];
                top[0] = (value, i);
            } else if value > top[1].0 {
                top[1] = (value, i);
            }
            // Ties go to the part that costs less.
            let best = &mut per_part[p];
            if y > best.0 || (y == best.0 && best.1 != usize::MAX && unit[i] < unit[best.1]) {
                *best = (y, i);
            }
        }
    }
    // How often each part wins; the most frequent winners are kept when there are too many.
    let mut wins: Vec<(usize, usize)> = Vec::new();
    let winners = per_cost.iter().flat_map(|t| t.iter().map(|w| w.1)).chain(per_part.iter().map(|w| w.1));
    for i in winners.filter(|i| *i != usize::MAX) {
        match wins.iter_mut().find(|(j, _)| *j == i) {
            Some((_, n)) => *n += 1,
            None => wins.push((i, 1)),
        }
    }
    wins.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
    wins.truncate(SHORTLIST_SIZE);
    let mut kept: Vec<usize> = wins.into_iter().map(|(i, _)| i).collect();
    kept.sort_unstable();
    kept
}
