//! The worst on/off pattern a load can produce, from the step droop by linearity.
//!
//! A pattern of on/off edges of amplitude ΔI is a sum of ±steps, so its droop at an instant T is an alternating
//! sum of the step droop s(τ) at the ages τ of its edges (the idea of the reverse pulse technique, Drabkin et al.,
//! EPEP 2002): with ages 0 ≤ τ_off,1 < τ_on,1 < τ_off,2 < τ_on,2 < … the droop is Σ s(τ_on,k) − s(τ_off,k). A
//! load cannot switch faster than it does: every on and every off interval lasts at least `min_interval_s`
//! (consecutive ages at least that far apart; a load still on at the observed instant may have turned on at any
//! age, since its on interval continues past the instant), and a burst has at most `max_pulses` pulses. Over the sampled
//! ages this is a longest-path problem solved exactly by dynamic programming: O(N) with prefix maxima, or
//! O(N·K) with a pulse limit K.

/// The best pattern over sampled ages: its droop and its edges as (age on, age off), oldest first.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct WorstPattern {
    pub droop: f64,
    /// (τ_on, τ_off) per pulse, τ_on > τ_off; τ_off = 0 for a load still on at the observed instant.
    pub pulses: Vec<(f64, f64)>,
}

/// The largest Σ s(τ_on) − s(τ_off) over alternating ages drawn from `tau` (ascending, tau[0] = 0 with
/// s[0] = 0), consecutive ages at least `min_gap` apart, with at most `max_pulses` pulses when given.
pub(super) fn worst_pattern(tau: &[f64], s: &[f64], min_gap: f64, max_pulses: Option<usize>) -> WorstPattern {
    let n = tau.len().min(s.len());
    if n == 0 {
        return WorstPattern { droop: 0.0, pulses: Vec::new() };
    }
    let layers = max_pulses.unwrap_or(usize::MAX).max(1);
    // Unlimited pulses: one layer where each "high" may follow any earlier "low".
    if layers == usize::MAX || layers >= n {
        return solve(tau, s, n, min_gap, None);
    }
    solve(tau, s, n, min_gap, Some(layers))
}

const NONE: u32 = u32::MAX;

/// high[i]: best sum whose most recent choice (largest age) is an "on" edge at age τᵢ; low[i] the same ending in
/// an "off" edge. low may start afresh (a load switched off τᵢ ago, on before that by an older "on"), so the
/// recursion runs from young to old ages: low[i] = −s[i] + max(0, best high at least min_gap younger) and
/// high[i] = s[i] + best low at least min_gap younger, or the "still on" low at age 0 (low[0] = 0) at any age: a load
/// on at the observed instant stays on past it, so its last on interval is not cut short by looking.
fn solve(tau: &[f64], s: &[f64], n: usize, min_gap: f64, layers: Option<usize>) -> WorstPattern {
    let k_max = layers.unwrap_or(1);
    // Per layer k (pulses so far, counting the one being closed by a high): values and predecessors.
    let mut high = vec![f64::NEG_INFINITY; n * k_max];
    let mut low = vec![f64::NEG_INFINITY; n * (k_max + 1)];
    let mut high_from = vec![NONE; n * k_max];
    let mut low_from = vec![NONE; n * (k_max + 1)];
    // Prefix maxima over the indices already at least min_gap younger than the current one.
    let mut best_low = vec![(f64::NEG_INFINITY, NONE); k_max + 1];
    let mut best_high = vec![(f64::NEG_INFINITY, NONE); k_max];
    let mut ready = 0usize; // indices < ready are at least min_gap younger than the current index
    let lk = |k: usize, i: usize| k * n + i;
    for i in 0..n {
        while ready < i && tau[i] - tau[ready] >= min_gap * (1.0 - 1e-12) {
            for k in 0..=k_max {
                let v = low[lk(k, ready)];
                if v > best_low[k].0 {
                    best_low[k] = (v, ready as u32);
                }
            }
            for k in 0..k_max {
                let v = high[lk(k, ready)];
                if v > best_high[k].0 {
                    best_high[k] = (v, ready as u32);
                }
            }
            ready += 1;
        }
        // A low ending layer k (k pulses already closed, younger): start fresh (k = 0) or after a high of k.
        if i == 0 {
            low[lk(0, 0)] = -s[0];
        } else {
            low[lk(0, i)] = -s[i];
        }
        for k in 1..=k_max {
            let (v, j) = best_high[k - 1];
            if v > f64::NEG_INFINITY {
                low[lk(k, i)] = v - s[i];
                low_from[lk(k, i)] = j;
            }
        }
        for k in 0..k_max {
            let (mut v, mut j) = best_low[k];
            // A load still on at the observed instant (the "low" at age 0) has no interval to keep: its on
            // interval goes on after the instant, so its "on" edge may be any age, however young.
            if k == 0 && i > 0 && low[lk(0, 0)] > v {
                (v, j) = (low[lk(0, 0)], 0);
            }
            if v > f64::NEG_INFINITY {
                high[lk(k, i)] = v + s[i];
                high_from[lk(k, i)] = j;
            }
        }
        if layers.is_none() {
            // One layer: fold layer 1's lows into layer 0 (the count does not matter).
            if low[lk(1, i)] > low[lk(0, i)] {
                low[lk(0, i)] = low[lk(1, i)];
                low_from[lk(0, i)] = low_from[lk(1, i)];
            }
            low[lk(1, i)] = f64::NEG_INFINITY;
        }
    }
    // The answer: the best high (the oldest edge is an "on"), or no pattern at all.
    let (mut best, mut at) = (0.0, None);
    for k in 0..k_max {
        for i in 0..n {
            if high[lk(k, i)] > best {
                best = high[lk(k, i)];
                at = Some((k, i));
            }
        }
    }
    // Walk back: high (k, i) <- low (k, j) <- high (k-1, j') ...
    let mut pulses = Vec::new();
    let mut cursor = at;
    while let Some((k, i)) = cursor {
        let j = high_from[lk(k, i)];
        if j == NONE {
            break;
        }
        let j = j as usize;
        pulses.push((tau[i], tau[j]));
        let layer = if layers.is_none() { 0 } else { k };
        let back = low_from[lk(layer, j)];
        cursor = if back == NONE || (layers.is_some() && k == 0) {
            None
        } else {
            Some((if layers.is_none() { 0 } else { k - 1 }, back as usize))
        };
    }
    WorstPattern { droop: best, pulses }
}
