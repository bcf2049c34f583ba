//! Peaks, dips and violation bands of |Z(f)| over a closed band, found on a log grid and refined.
//!
//! A local maximum of |Z| is found where the grid's samples rise then fall, or where the network turns from
//! inductive to capacitive between two samples (a sign change of Im Z that survives a coarse grid even when a
//! sharp peak falls between samples). Each candidate is refined by golden-section search in ln f to far better
//! than 0.1 %. Local minima (series resonances) are refined the same way so that a narrow dip below target splits
//! a violation band as it should.

use num_complex::Complex64;

/// Relative width (in f) at which a golden-section search stops: far below the promised 0.1 %.
const REFINE_TOL: f64 = 1e-9;

/// A refined extremum of |Z| strictly inside the band.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Extremum {
    /// Frequency, Hz.
    pub freq_hz: f64,
    /// |Z| there, Ω.
    pub z_ohm: f64,
}

/// A contiguous range of the band where |Z| is above target.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ViolationBand {
    /// Lower edge, Hz (the band's lower edge when the violation touches it).
    pub from_hz: f64,
    /// Upper edge, Hz.
    pub to_hz: f64,
    /// Where |Z| is highest inside it, Hz.
    pub peak_hz: f64,
    /// The highest |Z| inside it, Ω.
    pub peak_ohm: f64,
}

/// What the scan of one band finds.
#[derive(Debug, Clone, PartialEq)]
pub struct Scan {
    /// The grid over the band (both edges included).
    pub freq_hz: Vec<f64>,
    /// Z at each grid frequency.
    pub z: Vec<Complex64>,
    /// Local maxima of |Z| inside the band, by frequency.
    pub peaks: Vec<Extremum>,
    /// Local minima of |Z| inside the band, by frequency.
    pub dips: Vec<Extremum>,
    /// The highest |Z| over the closed band and where.
    pub worst: Extremum,
    /// Ranges above target, by frequency.
    pub violations: Vec<ViolationBand>,
}

/// |Z| for the scan: a sample that is not a number (it cannot come from a validated board, but the scan must
/// cope with any) counts as infinitely high, so it can only fail a rail, never pass one or stall the scan.
fn magnitude(z: Complex64) -> f64 {
    let m = z.norm();
    if m.is_nan() { f64::INFINITY } else { m }
}

/// Scan an impedance `z_at(f)` over the closed band [lo, hi] with `points` log-spaced samples (at least 3 and at
/// most [`ranges::SCAN_POINTS`]'s maximum are used). Total: it ends, without a panic, for any samples at all.
///
/// [`ranges::SCAN_POINTS`]: crate::model::ranges::SCAN_POINTS
pub fn scan(z_at: &dyn Fn(f64) -> Complex64, band_hz: [f64; 2], points: usize, target_ohm: f64) -> Scan {
    let [lo, hi] = band_hz;
    let most = crate::model::ranges::SCAN_POINTS.max as usize;
    let freq_hz = super::grid::log_grid(lo, hi, points.clamp(3, most));
    let z: Vec<Complex64> = freq_hz.iter().map(|&f| z_at(f)).collect();
    let mag: Vec<f64> = z.iter().map(|&z| magnitude(z)).collect();
    let mag_at = |f: f64| magnitude(z_at(f));

    let peaks = refine_extrema(&freq_hz, &z, &mag, true, &mag_at);
    let dips = refine_extrema(&freq_hz, &z, &mag, false, &mag_at);

    // All the samples we know, in frequency order: the grid plus every refined extremum.
    let mut samples: Vec<(f64, f64)> = freq_hz.iter().copied().zip(mag.iter().copied()).collect();
    samples.extend(peaks.iter().chain(dips.iter()).map(|e| (e.freq_hz, e.z_ohm)));
    samples.sort_by(|a, b| a.0.total_cmp(&b.0));

    let worst = samples
        .iter()
        .copied()
        .reduce(|best, s| if s.1 > best.1 { s } else { best })
        .map(|(f, m)| Extremum { freq_hz: f, z_ohm: m })
        .unwrap_or(Extremum { freq_hz: lo, z_ohm: f64::NAN });

    let violations = violation_bands(&samples, target_ohm, &mag_at);
    Scan { freq_hz, z, peaks, dips, worst, violations }
}

/// Find and refine the local maxima (`maxima`) or minima of |Z| strictly inside the grid.
fn refine_extrema(
    freq: &[f64],
    z: &[Complex64],
    mag: &[f64],
    maxima: bool,
    mag_at: &dyn Fn(f64) -> f64,
) -> Vec<Extremum> {
    let n = freq.len();
    // Sign of the objective so that both cases are a maximisation.
    let s = if maxima { 1.0 } else { -1.0 };
    let mut brackets: Vec<(usize, usize)> = Vec::new();
    for i in 1..n - 1 {
        if s * mag[i] >= s * mag[i - 1] && s * mag[i] > s * mag[i + 1] {
            brackets.push((i - 1, i + 1));
        }
    }
    // Inductive -> capacitive (a peak) or capacitive -> inductive (a dip) between two samples, with no grid
    // extremum next to it: a sharp resonance the grid stepped over.
    for i in 0..n - 1 {
        let turns = if maxima { z[i].im > 0.0 && z[i + 1].im < 0.0 } else { z[i].im < 0.0 && z[i + 1].im > 0.0 };
        if turns && !brackets.iter().any(|&(a, b)| a <= i + 1 && i <= b) {
            brackets.push((i.saturating_sub(1), (i + 2).min(n - 1)));
        }
    }
    let mut found: Vec<Extremum> = Vec::new();
    for (a, b) in brackets {
        let (fa, fb) = (freq[a], freq[b]);
        let f = golden_section(fa.ln(), fb.ln(), |x| s * mag_at(x.exp())).exp();
        let m = mag_at(f);
        // Keep it only if it is a true interior extremum, not a slope that ran into the bracket's end.
        let interior = f > fa * (1.0 + 1e-6) && f < fb * (1.0 - 1e-6);
        let beats_ends = s * m >= s * mag[a] && s * m >= s * mag[b];
        if interior && beats_ends && !found.iter().any(|e| (e.freq_hz - f).abs() <= 1e-6 * f) {
            found.push(Extremum { freq_hz: f, z_ohm: m });
        }
    }
    found.sort_by(|a, b| a.freq_hz.total_cmp(&b.freq_hz));
    found
}

/// Golden-section search for the maximum of `g` on [a, b] (in ln f), to a relative width of `REFINE_TOL`.
fn golden_section(a: f64, b: f64, g: impl Fn(f64) -> f64) -> f64 {
    // ln-domain width REFINE_TOL is a relative width of REFINE_TOL in f.
    golden_section_max(a, b, REFINE_TOL, g).0
}

/// Golden-section search for the maximum of a unimodal `g` on [a, b] until the bracket is at most `width` wide
/// (200 steps at most): the middle of the last bracket, and the best value seen at its inner points.
pub(crate) fn golden_section_max(mut a: f64, mut b: f64, width: f64, g: impl Fn(f64) -> f64) -> (f64, f64) {
    let inv_phi = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - inv_phi * (b - a);
    let mut d = a + inv_phi * (b - a);
    let (mut gc, mut gd) = (g(c), g(d));
    for _ in 0..200 {
        if (b - a).abs() <= width {
            break;
        }
        if gc > gd {
            b = d;
            d = c;
            gd = gc;
            c = b - inv_phi * (b - a);
            gc = g(c);
        } else {
            a = c;
            c = d;
            gc = gd;
            d = a + inv_phi * (b - a);
            gd = g(d);
        }
    }
    ((a + b) / 2.0, gc.max(gd))
}

/// Bisect in ln f for where |Z| crosses the target between a sample below it and one above it.
fn crossing(f_below: f64, f_above: f64, target: f64, mag_at: &dyn Fn(f64) -> f64) -> f64 {
    let (mut below, mut above) = (f_below.ln(), f_above.ln());
    for _ in 0..200 {
        if (above - below).abs() <= REFINE_TOL {
            break;
        }
        let mid = (below + above) / 2.0;
        if is_above(mag_at(mid.exp()), target) {
            above = mid;
        } else {
            below = mid;
        }
    }
    ((below + above) / 2.0).exp()
}

/// Whether |Z| is above target; a value that is not a number counts as above (it can only fail a rail).
fn is_above(m: f64, target: f64) -> bool {
    m.partial_cmp(&target) != Some(std::cmp::Ordering::Less) && m != target
}

/// Runs of samples above target, with their edges refined between the last sample below and the first above.
/// A sample that is not at or below target (NaN included) counts as above, so every pass of the loop moves on.
fn violation_bands(samples: &[(f64, f64)], target: f64, mag_at: &dyn Fn(f64) -> f64) -> Vec<ViolationBand> {
    let above = |m: f64| is_above(m, target);
    let mut bands = Vec::new();
    let mut i = 0;
    while i < samples.len() {
        if !above(samples[i].1) {
            i += 1;
            continue;
        }
        let start = i;
        while i < samples.len() && above(samples[i].1) {
            i += 1;
        }
        let end = i - 1; // last sample above target
        let from_hz =
            if start == 0 { samples[0].0 } else { crossing(samples[start - 1].0, samples[start].0, target, mag_at) };
        let to_hz = if end + 1 == samples.len() {
            samples[end].0
        } else {
            crossing(samples[end + 1].0, samples[end].0, target, mag_at)
        };
        let (peak_hz, peak_ohm) = samples[start..=end]
            .iter()
            .copied()
            .reduce(|best, s| if s.1 > best.1 { s } else { best })
            .unwrap_or_default();
        bands.push(ViolationBand { from_hz, to_hz, peak_hz, peak_ohm });
    }
    bands
}
