//! The search over counts, on the evaluator's grid: every combination when there are few enough, else a greedy
//! fill followed by improving moves, restarted from several seeds.
//!
//! A mix is feasible when its worst |Z| on the grid is at most `limit`. Its objective is Σ countᵢ·unitᵢ plus each
//! line item it brings in (`line`, zero for parts the board already uses). The kinds limit counts the distinct
//! parts the rail ends up with: a candidate already fitted on a kept group takes no new slot (`slot` 0).

use super::evaluator::MixEvaluator;
use num_complex::Complex64;
use std::collections::HashSet;

/// The fixed terms of one search.
pub(super) struct Problem<'a> {
    /// The grid judge.
    pub eval: &'a MixEvaluator,
    /// Objective per part.
    pub unit: Vec<f64>,
    /// Objective added when a candidate's first part enters the mix (a new line item).
    pub line: Vec<f64>,
    /// Kind slots a candidate takes when it enters the mix (0 when the rail keeps a group of that part).
    pub slot: Vec<u32>,
    /// Area per part, m² (0 where a part gives none), for telling options apart.
    pub area: Vec<f64>,
    /// Most parts added in all.
    pub max_total: u32,
    /// Most parts of one candidate.
    pub max_per_part: u32,
    /// Kind slots available to the mix.
    pub kinds_free: u32,
}

/// A mix's figures on the grid.
#[derive(Debug, Clone)]
pub(super) struct Judged {
    pub counts: Vec<u32>,
    pub objective: f64,
    pub count: u32,
    pub area: f64,
    pub worst: f64,
}

/// A mix under construction, with its admittance at every grid point.
#[derive(Debug, Clone)]
struct Mix {
    counts: Vec<u32>,
    y: Vec<Complex64>,
    worst: f64,
    excess: f64,
    objective: f64,
    total: u32,
    slots: u32,
}

/// Feasible mixes kept at most (a bound on memory; the exhaustive search stays below it).
const FEASIBLE_CAP: usize = 200_000;

/// The state of a search: every feasible mix seen and the closest miss.
pub(super) struct Search<'a> {
    p: &'a Problem<'a>,
    /// Required grid worst |Z|, Ω.
    pub limit: f64,
    seen: HashSet<Vec<u32>>,
    /// Every feasible mix seen.
    pub feasible: Vec<Judged>,
    /// The mix with the lowest worst |Z| seen.
    pub closest: Option<Judged>,
    /// Mixes judged.
    pub evaluations: usize,
}

impl<'a> Search<'a> {
    pub(super) fn new(p: &'a Problem<'a>, limit: f64) -> Search<'a> {
        Search { p, limit, seen: HashSet::new(), feasible: Vec::new(), closest: None, evaluations: 0 }
    }

    fn objective_of(&self, counts: &[u32]) -> f64 {
        counts
            .iter()
            .enumerate()
            .filter(|(_, n)| **n > 0)
            .map(|(i, &n)| n as f64 * self.p.unit[i] + self.p.line[i])
            .sum()
    }

    fn record(&mut self, counts: &[u32], objective: f64, worst: f64) {
        self.evaluations += 1;
        let judged = || Judged {
            counts: counts.to_vec(),
            objective,
            count: counts.iter().sum(),
            area: counts.iter().zip(&self.p.area).map(|(&n, a)| n as f64 * a).sum(),
            worst,
        };
        if self.closest.as_ref().is_none_or(|c| worst < c.worst) {
            self.closest = Some(judged());
        }
        if worst <= self.limit && self.feasible.len() < FEASIBLE_CAP && self.seen.insert(counts.to_vec()) {
            self.feasible.push(judged());
        }
    }

    fn fresh(&mut self, counts: Vec<u32>) -> Mix {
        let y = self.p.eval.admittance(&counts);
        let (worst, _, excess) = self.p.eval.score(&y, &counts, self.limit);
        let objective = self.objective_of(&counts);
        self.record(&counts, objective, worst);
        let total = counts.iter().sum();
        let slots = counts.iter().zip(&self.p.slot).filter(|(n, _)| **n > 0).map(|(_, s)| s).sum();
        Mix { counts, y, worst, excess, objective, total, slots }
    }

    /// True when one more part of `i` keeps the mix within the limits.
    fn can_add(&self, m: &Mix, i: usize, tabu: Option<usize>) -> bool {
        tabu != Some(i)
            && m.counts[i] < self.p.max_per_part
            && m.total < self.p.max_total
            && (m.counts[i] > 0 || m.slots + self.p.slot[i] <= self.p.kinds_free)
    }

    /// Every combination of counts within the limits, by depth-first search over the candidates with the
    /// admittance summed along the way (one pass over the grid per node).
    pub(super) fn exhaustive(&mut self) {
        let k = self.p.eval.candidates();
        let mut buffers: Vec<Vec<Complex64>> = vec![Vec::new(); k + 1];
        buffers[k] = self.p.eval.fixed().to_vec();
        let mut counts = vec![0u32; k];
        self.dfs(0, k, &mut buffers, &mut counts, 0, 0, 0.0);
    }

    #[allow(clippy::too_many_arguments)]
    fn dfs(
        &mut self,
        i: usize,
        src: usize,
        buffers: &mut [Vec<Complex64>],
        counts: &mut [u32],
        total: u32,
        slots: u32,
        objective: f64,
    ) {
        let k = counts.len();
        if i == k {
            let (worst, _, _) = self.p.eval.score(&buffers[src], counts, self.limit);
            self.record(counts, objective, worst);
            return;
        }
        self.dfs(i + 1, src, buffers, counts, total, slots, objective);
        if slots + self.p.slot[i] > self.p.kinds_free {
            return;
        }
        // buffers[i] holds this candidate's running sum while the deeper levels read it; `src` is never `i`.
        let mut own = std::mem::take(&mut buffers[i]);
        for n in 1..=self.p.max_per_part {
            if total + n > self.p.max_total {
                break;
            }
            own.clear();
            own.extend(buffers[src].iter().zip(self.p.eval.unit(i)).map(|(y, u)| y + u * n as f64));
            buffers[i] = own;
            counts[i] = n;
            let objective = objective + n as f64 * self.p.unit[i] + self.p.line[i];
            self.dfs(i + 1, i, buffers, counts, total + n, slots + self.p.slot[i], objective);
            own = std::mem::take(&mut buffers[i]);
        }
        counts[i] = 0;
        buffers[i] = own;
    }

    /// Add one part of `i` (or take one away, `d` = -1) to a mix, updating its figures.
    fn step(&mut self, m: &mut Mix, i: usize, d: i32) {
        let was = m.counts[i];
        m.counts[i] = (was as i64 + d as i64) as u32;
        for (a, u) in m.y.iter_mut().zip(self.p.eval.unit(i)) {
            *a += u * d as f64;
        }
        m.total = (m.total as i64 + d as i64) as u32;
        if was == 0 && m.counts[i] > 0 {
            m.slots += self.p.slot[i];
        } else if was > 0 && m.counts[i] == 0 {
            m.slots -= self.p.slot[i];
        }
        let (worst, _, excess) = self.p.eval.score(&m.y, &m.counts, self.limit);
        m.worst = worst;
        m.excess = excess;
        m.objective = self.objective_of(&m.counts);
        let counts = m.counts.clone();
        self.record(&counts, m.objective, worst);
    }

    /// Fill greedily until feasible or no part helps: each step adds the part that most reduces the excess over
    /// the limit per unit of the objective (a new line item counted in).
    fn greedy(&mut self, mut m: Mix, tabu: Option<usize>) -> Mix {
        while m.worst > self.limit {
            let mut best: Option<(f64, usize)> = None;
            for i in 0..m.counts.len() {
                if !self.can_add(&m, i, tabu) {
                    continue;
                }
                self.evaluations += 1;
                let (worst, excess) = self.p.eval.score_with(&m.y, &m.counts, i, 1.0, self.limit);
                let gain = (m.excess - excess) + (m.worst - worst) / self.limit;
                let delta = self.p.unit[i] + if m.counts[i] == 0 { self.p.line[i] } else { 0.0 };
                let score = gain / delta.max(1e-12);
                if gain > 0.0 && best.is_none_or(|(s, _)| score > s) {
                    best = Some((score, i));
                }
            }
            match best {
                Some((_, i)) => self.step(&mut m, i, 1),
                None => break,
            }
        }
        m
    }

    /// Improve a feasible mix by small moves (drop one; swap one for one, two for one, one for two) until none
    /// lowers the objective.
    fn improve(&mut self, mut m: Mix, tabu: Option<usize>) -> Mix {
        let k = m.counts.len();
        loop {
            let mut moved = false;
            'moves: for i in 0..k {
                if m.counts[i] == 0 {
                    continue;
                }
                let mut moves: Vec<Vec<(usize, i32)>> = vec![vec![(i, -1)]];
                for j in (0..k).filter(|&j| j != i && tabu != Some(j)) {
                    moves.push(vec![(i, -1), (j, 1)]);
                    moves.push(vec![(i, -2), (j, 1)]);
                    moves.push(vec![(i, -1), (j, 2)]);
                }
                for mv in moves {
                    let mut counts = m.counts.clone();
                    let mut ok = true;
                    for &(x, d) in &mv {
                        let n = counts[x] as i64 + d as i64;
                        ok &= n >= 0 && n <= self.p.max_per_part as i64;
                        counts[x] = n.max(0) as u32;
                    }
                    let total: u32 = counts.iter().sum();
                    let slots: u32 = counts.iter().zip(&self.p.slot).filter(|(n, _)| **n > 0).map(|(_, s)| s).sum();
                    if !ok || total > self.p.max_total || slots > self.p.kinds_free {
                        continue;
                    }
                    let objective = self.objective_of(&counts);
                    if objective >= m.objective - 1e-12 * m.objective.abs().max(1e-12) {
                        continue;
                    }
                    let mut y = m.y.clone();
                    for &(x, d) in &mv {
                        for (a, u) in y.iter_mut().zip(self.p.eval.unit(x)) {
                            *a += u * d as f64;
                        }
                    }
                    let (worst, _, excess) = self.p.eval.score(&y, &counts, self.limit);
                    self.record(&counts, objective, worst);
                    if worst <= self.limit {
                        m = Mix { counts, y, worst, excess, objective, total, slots };
                        moved = true;
                        break 'moves;
                    }
                }
            }
            if !moved {
                return m;
            }
        }
    }

    /// Try taking each kind out of a feasible mix entirely and refilling without it: the move that changes which
    /// parts a mix is made of, which the small moves cannot do when the kinds limit is reached.
    fn change_kinds(&mut self, mut best: Mix) -> Mix {
        loop {
            let mut moved = false;
            for i in 0..best.counts.len() {
                if best.counts[i] == 0 {
                    continue;
                }
                let mut counts = best.counts.clone();
                counts[i] = 0;
                let start = self.fresh(counts);
                let filled = self.greedy(start, Some(i));
                if filled.worst > self.limit {
                    continue;
                }
                let improved = self.improve(filled, Some(i));
                if improved.objective < best.objective - 1e-12 * best.objective.abs().max(1e-12) {
                    best = improved;
                    moved = true;
                    break;
                }
            }
            if !moved {
                return best;
            }
        }
    }

    /// The mix that gets |Z| lowest, whatever it costs: add, one at a time, the part that leaves the lowest worst
    /// |Z| (the excess breaking ties) until the limits are reached, and keep the best seen on the way. For showing
    /// how close a search that finds nothing can get.
    pub(super) fn lowest(&mut self) {
        let k = self.p.eval.candidates();
        let mut m = self.fresh(vec![0; k]);
        loop {
            let mut best: Option<(f64, f64, usize)> = None;
            for i in 0..k {
                if !self.can_add(&m, i, None) {
                    continue;
                }
                let (worst, excess) = self.p.eval.score_with(&m.y, &m.counts, i, 1.0, self.limit);
                if best.is_none_or(|(w, e, _)| (worst, excess) < (w, e)) {
                    best = Some((worst, excess, i));
                }
            }
            match best {
                Some((_, _, i)) => self.step(&mut m, i, 1),
                None => return,
            }
        }
    }

    /// Greedy, improving moves and kind changes from the empty mix and from one part of each candidate, then
    /// restarts from perturbed copies of the best.
    pub(super) fn heuristic(&mut self) {
        let k = self.p.eval.candidates();
        let mut best: Option<Mix> = None;
        let mut seeds: Vec<Vec<u32>> = vec![vec![0; k]];
        for j in 0..k {
            let mut s = vec![0; k];
            s[j] = 1;
            seeds.push(s);
        }
        for seed in seeds {
            let start = self.fresh(seed);
            let filled = self.greedy(start, None);
            if filled.worst > self.limit {
                continue;
            }
            let m = self.improve(filled, None);
            if best.as_ref().is_none_or(|b| m.objective < b.objective) {
                best = Some(self.change_kinds(m));
            }
        }
        let Some(mut best) = best else { return };
        let mut rng = 0x9e37_79b9_7f4a_7c15u64;
        for _ in 0..20 {
            let mut counts = best.counts.clone();
            // Take out a few parts at random, and refill greedily.
            for _ in 0..3 {
                rng = rng.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                let i = (rng >> 33) as usize % k;
                counts[i] = counts[i].saturating_sub(1 + (rng >> 60) as u32 % 3);
            }
            let start = self.fresh(counts);
            let refilled = self.greedy(start, None);
            if refilled.worst <= self.limit {
                let improved = self.improve(refilled, None);
                if improved.objective < best.objective - 1e-12 * best.objective.abs().max(1e-12) {
                    best = self.change_kinds(improved);
                }
            }
        }
    }
}

/// How many count vectors the exhaustive search visits (an upper bound: the total limit cuts some), saturating.
pub(super) fn combinations(slot: &[u32], max_per_part: u32, kinds_free: u32) -> u64 {
    let m = max_per_part as u128;
    let free = slot.iter().filter(|s| **s == 0).count() as u32;
    let taking = slot.len() as u128 - free as u128;
    // Σ_{j ≤ K} C(taking, j)·m^j for the candidates that take a slot, times (m+1)^free for those that do not.
    let mut sum: u128 = 1;
    let (mut choose, mut power) = (1u128, 1u128);
    for j in 1..=(kinds_free as u128).min(taking) {
        choose = choose.saturating_mul(taking - j + 1) / j;
        power = power.saturating_mul(m);
        sum = sum.saturating_add(choose.saturating_mul(power));
    }
    let rest = (m + 1).checked_pow(free).unwrap_or(u128::MAX);
    u64::try_from(sum.saturating_mul(rest)).unwrap_or(u64::MAX)
}

/// The mixes not worse in every respect than another: (objective, count, area, worst |Z|), by objective.
pub(super) fn pareto(mut mixes: Vec<Judged>) -> Vec<Judged> {
    mixes.sort_by(|a, b| a.objective.total_cmp(&b.objective).then(a.worst.total_cmp(&b.worst)));
    let mut front: Vec<Judged> = Vec::new();
    for m in mixes {
        let dominated = front
            .iter()
            .any(|f| f.objective <= m.objective && f.count <= m.count && f.area <= m.area && f.worst <= m.worst);
        if !dominated {
            front.push(m);
        }
    }
    front
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The count of combinations against a plain enumeration.
    #[test]
    fn combinations_count_matches_enumeration() {
        for (slot, m, kinds) in [(vec![1, 1, 1, 1], 3u32, 2u32), (vec![1, 0, 1, 1, 1], 2, 1), (vec![1, 1, 1], 4, 3)] {
            let k = slot.len();
            let mut n = 0u64;
            let mut counts = vec![0u32; k];
            loop {
                let used: u32 = counts.iter().zip(&slot).filter(|(c, _)| **c > 0).map(|(_, s)| s).sum();
                if used <= kinds {
                    n += 1;
                }
                let mut i = 0;
                while i < k {
                    if counts[i] < m {
                        counts[i] += 1;
                        break;
                    }
                    counts[i] = 0;
                    i += 1;
                }
                if i == k {
                    break;
                }
            }
            assert_eq!(combinations(&slot, m, kinds), n, "{slot:?} m={m} kinds={kinds}");
        }
    }
}
