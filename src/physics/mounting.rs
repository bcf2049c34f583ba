//! Mounting inductance from geometry: the loop a capacitor's current takes from its pads through traces and vias
//! to the power/ground plane pair.
//!
//! The loop is split into terms, each from a published formula:
//! - the two pad-to-via traces, each a strip over its reference plane: inductance per length from Hammerstad's
//!   microstrip impedance in air, L' = Z0/c (E. O. Hammerstad, "Equations for microstrip circuit design",
//!   European Microwave Conference, 1975; the wide-strip limit is the parallel-plate μ0·h/w);
//! - the power and ground vias as a pair of parallel round conductors: L = (μ0/π)·h·acosh(s/d) (loop inductance of
//!   a two-wire line; C. R. Paul, "Inductance: Loop and Partial", Wiley, 2010), the vias of a pad in parallel;
//! - for comparison only (not added): the partial inductance of one via, L ≈ 5.08·h·[ln(4h/d) + 1] nH with h and d
//!   in inches (H. Johnson and M. Graham, "High-Speed Digital Design", Prentice Hall, 1993).
//!
//! Mutual inductance between the vias of one pad is neglected, which is optimistic when they sit close together.

use crate::model::{DecapGroup, MountingGeometry};

/// Permeability of free space, H/m (the 2019 SI value, equal to 4π·10⁻⁷ to 10 digits).
pub const MU0: f64 = 1.256_637_062_12e-6;
/// Speed of light in vacuum, m/s (exact).
pub const C0: f64 = 299_792_458.0;
/// Metres per inch (exact).
const M_PER_INCH: f64 = 0.0254;

/// A typical small-case mounting (0.5 mm traces 0.3 mm wide, 0.1 mm over their plane; one 0.25 mm via per pad,
/// 0.8 mm to the planes, 0.7 mm apart): an invented starting point for the user to replace with the board's own
/// dimensions. The command line's `mounting` defaults are the same.
pub const TYPICAL_GEOMETRY: MountingGeometry = MountingGeometry {
    trace_length_m: 0.5e-3,
    trace_width_m: 0.3e-3,
    trace_height_m: 0.1e-3,
    via_drill_m: 0.25e-3,
    via_length_m: 0.8e-3,
    via_pitch_m: 0.7e-3,
    vias_per_pad: 1,
};

/// One term of the breakdown.
#[derive(Debug, Clone, PartialEq)]
pub struct MountingTerm {
    /// What it is.
    pub name: &'static str,
    /// Its inductance, H.
    pub inductance_h: f64,
    /// The formula, in words and symbols.
    pub formula: &'static str,
    /// Where the formula is published.
    pub source: &'static str,
    /// True when the term is part of the total (false for comparison terms).
    pub in_total: bool,
}

/// The loop inductance of a mounting, term by term, with warnings where a formula leaves its range.
#[derive(Debug, Clone, PartialEq)]
pub struct MountingBreakdown {
    /// The terms.
    pub terms: Vec<MountingTerm>,
    /// The sum of the terms in the total, H.
    pub total_h: f64,
    /// Where the geometry leaves a formula's range, in plain words.
    pub warnings: Vec<String>,
}

/// Inductance per metre of a strip of width `w` at height `h` over a plane, from Hammerstad's microstrip
/// impedance in air (ε_r = 1: the dielectric does not change the inductance).
pub fn strip_inductance_per_m(w: f64, h: f64) -> f64 {
    let u = w / h;
    let z0 = if u <= 1.0 {
        60.0 * (8.0 / u + u / 4.0).ln()
    } else {
        120.0 * std::f64::consts::PI / (u + 1.393 + 0.667 * (u + 1.444).ln())
    };
    z0 / C0
}

/// Loop inductance of two parallel round conductors of length `len`, diameter `d`, centres `s` apart:
/// (μ0/π)·len·acosh(s/d).
pub fn wire_pair_inductance(len: f64, d: f64, s: f64) -> f64 {
    MU0 / std::f64::consts::PI * len * (s / d).acosh()
}

/// Partial inductance of one via of length `h` and diameter `d` (metres in, henries out), by Johnson and
/// Graham's rule: 5.08·h·[ln(4h/d) + 1] nH with h, d in inches.
pub fn via_partial_inductance(h: f64, d: f64) -> f64 {
    let (h_in, d_in) = (h / M_PER_INCH, d / M_PER_INCH);
    5.08 * h_in * ((4.0 * h_in / d_in).ln() + 1.0) * 1e-9
}

/// Check a geometry's values: every length finite and > 0 (a trace length may be 0), at least one via per pad,
/// and the vias not overlapping. Returns (field, reason) pairs.
pub fn geometry_problems(g: &MountingGeometry) -> Vec<(&'static str, String)> {
    use crate::model::ranges;
    let mut out = Vec::new();
    let fields = [
        ("trace_length_m", g.trace_length_m, &ranges::TRACE_LENGTH),
        ("trace_width_m", g.trace_width_m, &ranges::TRACE_SECTION),
        ("trace_height_m", g.trace_height_m, &ranges::TRACE_SECTION),
        ("via_drill_m", g.via_drill_m, &ranges::VIA_DRILL),
        ("via_length_m", g.via_length_m, &ranges::VIA_LENGTH),
        ("via_pitch_m", g.via_pitch_m, &ranges::VIA_PITCH),
        ("vias_per_pad", f64::from(g.vias_per_pad), &ranges::VIAS_PER_PAD),
    ];
    for (name, value, range) in fields {
        if let Some(reason) = range.problem(value) {
            out.push((name, reason));
        }
    }
    if g.via_pitch_m.is_finite() && g.via_drill_m.is_finite() && g.via_pitch_m > 0.0 && g.via_pitch_m <= g.via_drill_m {
        out.push(("via_pitch_m", format!("must exceed the via drill ({} m): the vias would overlap", g.via_drill_m)));
    }
    out
}

/// The mounting's loop inductance, term by term. The geometry must pass [`geometry_problems`].
pub fn mounting_breakdown(g: &MountingGeometry) -> MountingBreakdown {
    let mut warnings = Vec::new();
    let n = g.vias_per_pad.max(1) as f64;
    let per_m = strip_inductance_per_m(g.trace_width_m, g.trace_height_m);
    let trace = 2.0 * g.trace_length_m * per_m;
    let u = g.trace_width_m / g.trace_height_m;
    if g.trace_length_m > 0.0 && !(0.05..=20.0).contains(&u) {
        warnings.push(format!(
            "trace width / height = {u:.3} is outside 0.05 to 20, where Hammerstad's formula is accurate to about 1 %"
        ));
    }
    if g.trace_length_m > 0.0 && g.trace_length_m < 2.0 * g.trace_height_m {
        warnings.push(
            "the trace is shorter than twice its height: end effects the strip formula ignores become large".into(),
        );
    }
    let vias = wire_pair_inductance(g.via_length_m, g.via_drill_m, g.via_pitch_m) / n;
    if g.via_length_m < g.via_pitch_m {
        warnings.push(
            "the vias are shorter than their pitch: the two-wire formula assumes long conductors and overstates \
             the loop here"
                .into(),
        );
    }
    if g.vias_per_pad > 1 {
        warnings.push(format!(
            "{} vias per pad are taken as independent paths (mutual inductance neglected): optimistic when they \
             sit close",
            g.vias_per_pad
        ));
    }
    let one_via = via_partial_inductance(g.via_length_m, g.via_drill_m);
    if g.via_length_m < 2.0 * g.via_drill_m {
        warnings.push("the via is shorter than twice its drill: the single-via rule (h >> d) is rough here".into());
    }
    let terms = vec![
        MountingTerm {
            name: "pad-to-via traces (two, one per pad)",
            inductance_h: trace,
            formula: "2·ℓ·Z0(w/h)/c, Z0 of a microstrip in air",
            source: "Hammerstad, Equations for microstrip circuit design, 1975",
            in_total: true,
        },
        MountingTerm {
            name: "via pair to the planes",
            inductance_h: vias,
            formula: "(μ0/π)·h·acosh(s/d) / vias per pad",
            source: "Paul, Inductance: Loop and Partial, 2010 (two parallel round conductors)",
            in_total: true,
        },
        MountingTerm {
            name: "one via, partial (for comparison, not added)",
            inductance_h: one_via,
            formula: "5.08·h·[ln(4h/d) + 1] nH, h and d in inches",
            source: "Johnson and Graham, High-Speed Digital Design, 1993",
            in_total: false,
        },
    ];
    let total_h = terms.iter().filter(|t| t.in_total).map(|t| t.inductance_h).sum();
    MountingBreakdown { terms, total_h, warnings }
}

/// The mounting inductance of one part of a group: computed from its geometry when given, else its
/// `mounting_h`.
pub fn group_mounting_h(group: &DecapGroup) -> f64 {
    match &group.mounting {
        Some(g) => mounting_breakdown(g).total_h,
        None => group.mounting_h,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wide_strip_tends_to_parallel_plates() {
        // Parallel-plate inductance per length μ0·h/w (textbook) is the wide-strip limit of Hammerstad's formula.
        let (w, h) = (0.1, 0.1e-3);
        let plate = MU0 * h / w;
        assert!((strip_inductance_per_m(w, h) - plate).abs() < 0.02 * plate);
    }
}
