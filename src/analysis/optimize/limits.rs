//! Why no mix meets the requirement: what stops it, in plain words and the engine's figures, and what would make
//! it feasible. The count floor is a proof (no mix within the limits does better at that frequency); the package
//! figure is the ideal board's case (a real board's impedance adds to the package's, though its resistance can
//! also damp a package-die resonance, so it is a diagnosis, not a proof); the other reasons say what the search
//! found.

use super::Candidate;
use super::evaluator::{MixEvaluator, inverse};
use crate::model::Rail;
use crate::physics::TWO_PI;
use crate::units::{Unit, format};
use num_complex::Complex64;

/// One thing that stops every mix from meeting the requirement.
///
/// Its machine form (the JSON of `suggest --json`) is its serialisation: `"kind"` (see [`Blocker::kind`]) and
/// each field under its own name, a figure that does not apply (`None`) left out.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Blocker {
    /// The package: even with an ideal board (its rail node held at 0 Ω), |Z| at the die is above what is required.
    /// Reported only when no mix qualifies.
    Package {
        /// Where it is highest above the requirement, Hz.
        at_hz: f64,
        /// |Z| at the die there with a perfect board, Ω.
        floor_ohm: f64,
        /// The worst |Z| allowed (target less the margin), Ω.
        required_ohm: f64,
        /// The package's inductance, H.
        package_l_h: f64,
        /// The package inductance at or below which the floor meets the requirement over the band, H.
        #[serde(skip_serializing_if = "Option::is_none")]
        needed_l_h: Option<f64>,
        /// The highest band edge at which the floor meets the requirement, Hz.
        #[serde(skip_serializing_if = "Option::is_none")]
        band_top_hz: Option<f64>,
    },
    /// The plane pair on a placed rail: even a perfect short where the new parts go leaves a load's effective
    /// impedance above what is required (the planes between that spot and the load, and the load's package, are
    /// in the way). Reported only when no mix qualifies.
    Planes {
        /// Where it is highest above the requirement, Hz.
        at_hz: f64,
        /// The worst load's effective impedance there with the spot shorted, Ω.
        floor_ohm: f64,
        /// The worst |Z| allowed (target less the margin), Ω.
        required_ohm: f64,
        /// The load it is at.
        load: String,
        /// Where the new parts go, m.
        spot_m: [f64; 2],
        /// The highest band edge at which the shorted spot meets the requirement, Hz.
        #[serde(skip_serializing_if = "Option::is_none")]
        band_top_hz: Option<f64>,
    },
    /// The count limits: even the most parts allowed, each the candidate that lowers |Z| most at one frequency,
    /// leave |Z| above what is required there (a bound by the triangle inequality on admittances).
    Count {
        /// Where the bound is highest above the requirement, Hz.
        at_hz: f64,
        /// The lowest |Z| any mix within the limits can reach there, Ω.
        floor_ohm: f64,
        /// The worst |Z| allowed, Ω.
        required_ohm: f64,
        /// The candidate that lowers |Z| most there.
        best_part: String,
        /// True when that part is inductive there (above its self-resonance).
        inductive: bool,
        /// Parts the limits allow at most at that frequency (in all, of each, and kinds together).
        allowed_parts: u32,
        /// Parts of the best candidate that would reach the requirement there.
        #[serde(skip_serializing_if = "Option::is_none")]
        needed_parts: Option<u64>,
        /// The best candidate's mounting inductance, H.
        mounting_h: f64,
        /// The mounting inductance at or below which the allowed parts would reach the requirement there, H.
        #[serde(skip_serializing_if = "Option::is_none")]
        needed_mounting_h: Option<f64>,
        /// The highest band edge below which the bound meets the requirement, Hz (when the floor is inductive).
        #[serde(skip_serializing_if = "Option::is_none")]
        band_top_hz: Option<f64>,
    },
    /// No mix of at most this many kinds was found; one with more was.
    Kinds {
        /// The kinds limit.
        max_kinds: u32,
        /// Kinds of the cheapest mix found without the limit.
        needed_kinds: u32,
    },
    /// The closest mix meets target, but not with the margin asked.
    Margin {
        /// The margin asked, dB.
        margin_db: f64,
        /// The closest mix's margin, dB.
        best_margin_db: f64,
    },
    /// Mixes meet target with the margin, but none keeps the step droop within the allowed band.
    Droop {
        /// Mixes whose droop was computed.
        checked: usize,
        /// The lowest step droop among them, V.
        best_droop_v: f64,
        /// The allowed droop, V.
        allowed_v: f64,
    },
    /// Nothing found within the count limits, though no bound rules a mix out.
    NotFound {
        /// Most parts in all.
        max_total: u32,
        /// Most of one part.
        max_per_part: u32,
    },
}

impl Blocker {
    /// A short name for machines: "package", "planes", "count", "kinds", "margin", "droop", "not-found" (the JSON's
    /// `"kind"`, the variant's name in kebab case).
    pub fn kind(&self) -> &'static str {
        match self {
            Blocker::Package { .. } => "package",
            Blocker::Planes { .. } => "planes",
            Blocker::Count { .. } => "count",
            Blocker::Kinds { .. } => "kinds",
            Blocker::Margin { .. } => "margin",
            Blocker::Droop { .. } => "droop",
            Blocker::NotFound { .. } => "not-found",
        }
    }

    /// What stops it and what would make it feasible, in plain words with engineering notation.
    pub fn words(&self) -> String {
        let ohm = |x: f64| format(x, Unit::Ohm);
        let hz = |x: f64| format(x, Unit::Hertz);
        let henry = |x: f64| format(x, Unit::Henry);
        match self {
            Blocker::Package { at_hz, floor_ohm, required_ohm, package_l_h, needed_l_h, band_top_hz } => {
                let mut fixes = Vec::new();
                if let Some(l) = needed_l_h {
                    fixes.push(format!("a package inductance of {} or less (now {})", henry(*l), henry(*package_l_h)));
                }
                if let Some(f) = band_top_hz {
                    fixes.push(format!("a band ending at {} or lower", hz(*f)));
                }
                format!(
                    "The package is the limit: even an ideal board (0 Ω at its rail node) leaves |Z| at the die at {} \
                     at {}, above the {} required. With {}, an ideal board would meet it.",
                    ohm(*floor_ohm),
                    hz(*at_hz),
                    ohm(*required_ohm),
                    if fixes.is_empty() { "a lower package resistance".to_string() } else { either(&fixes) }
                )
            }
            Blocker::Planes { at_hz, floor_ohm, required_ohm, load, spot_m, band_top_hz } => {
                let mut fixes = vec!["new parts placed closer to the load".to_string(), "a thinner dielectric".into()];
                if let Some(f) = band_top_hz {
                    fixes.push(format!("a band ending at {} or lower", hz(*f)));
                }
                format!(
                    "The planes are the limit: even a perfect short where the new parts go ({:.1} mm, {:.1} mm) \
                     leaves the effective impedance at {load} at {} at {}, above the {} required; the plane pair \
                     between that spot and the load (and its package, if it has one) is in the way. With {}, it may \
                     become feasible.",
                    spot_m[0] * 1e3,
                    spot_m[1] * 1e3,
                    ohm(*floor_ohm),
                    hz(*at_hz),
                    ohm(*required_ohm),
                    either(&fixes)
                )
            }
            Blocker::Count {
                at_hz,
                floor_ohm,
                required_ohm,
                best_part,
                inductive,
                allowed_parts,
                needed_parts,
                mounting_h,
                needed_mounting_h,
                band_top_hz,
            } => {
                let mut fixes = Vec::new();
                if let Some(n) = needed_parts {
                    fixes.push(format!("at least {n} parts of {best_part} allowed"));
                }
                if let Some(l) = needed_mounting_h {
                    fixes.push(format!("a mounting inductance of {} or less (now {})", henry(*l), henry(*mounting_h)));
                }
                if let Some(f) = band_top_hz {
                    fixes.push(format!("a band ending at {} or lower", hz(*f)));
                }
                if !inductive {
                    fixes.push("candidates with more capacitance".into());
                }
                let why = if *inductive {
                    "There the parts are inductive: their ESL plus mounting inductance, divided by their number, sets \
                     the floor."
                } else {
                    "There the parts are still capacitive: the floor is too little capacitance."
                };
                format!(
                    "The count limits set a floor: even {} (as many as the limits allow), each {best_part}, the \
                     candidate that lowers |Z| most at {}, leave |Z| at {} or more there, above the {} required. \
                     {why}{}",
                    plural(*allowed_parts as u64, "part", "parts"),
                    hz(*at_hz),
                    ohm(*floor_ohm),
                    ohm(*required_ohm),
                    feasible_with(&fixes)
                )
            }
            Blocker::Kinds { max_kinds, needed_kinds } => format!(
                "No mix of at most {} meets it; the search found one with {}. It becomes feasible with more kinds \
                 allowed (--max-kinds {needed_kinds}).",
                plural(*max_kinds as u64, "kind of part", "kinds of part"),
                plural(*needed_kinds as u64, "kind", "kinds"),
            ),
            Blocker::Margin { margin_db, best_margin_db } => format!(
                "The closest mix meets target by only {best_margin_db:+.1} dB, short of the {margin_db:.1} dB margin \
                 asked. It becomes feasible with a smaller margin (--margin-db), or more parts or kinds allowed."
            ),
            Blocker::Droop { checked, best_droop_v, allowed_v } => format!(
                "{} meet the impedance target, but none keeps the step droop within the allowed {} (the lowest: \
                 {}). It may become feasible with more parts or kinds allowed, or without --droop.",
                plural(*checked as u64, "mix checked", "mixes checked"),
                format(*allowed_v, Unit::Volt),
                format(*best_droop_v, Unit::Volt),
            ),
            Blocker::NotFound { max_total, max_per_part } => format!(
                "No mix within the count limits ({} in all, {} of each) was found, though no bound rules one out. It \
                 may become feasible with more parts or kinds allowed, or more candidates.",
                plural(*max_total as u64, "part", "parts"),
                max_per_part
            ),
        }
    }
}

/// "1 part", "2 parts".
pub fn plural(n: u64, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// "a, b or c".
fn either(fixes: &[String]) -> String {
    match fixes {
        [] => String::new(),
        [one] => one.clone(),
        [rest @ .., last] => format!("{}, or {last}", rest.join(", ")),
    }
}

/// " It becomes feasible with a, b or c." (or nothing).
fn feasible_with(fixes: &[String]) -> String {
    match fixes {
        [] => String::new(),
        _ => format!(" It becomes feasible with {}.", either(fixes)),
    }
}

/// The package with an ideal board: |Z| at the die with the board's rail node shorted, against `required`.
pub(super) fn package_floor(rail: &Rail, eval: &MixEvaluator, required: f64) -> Option<Blocker> {
    let pkg = rail.package?;
    if !eval.at_die() {
        return None;
    }
    let floor = |p: usize, scale: f64| -> f64 {
        let f = eval.freq_hz[p];
        let zp = Complex64::new(pkg.r_ohm, TWO_PI * f * pkg.l_h * scale);
        let die = eval.package_and_die(p).and_then(|(_, d)| d);
        inverse(inverse(zp) + die.map_or(Complex64::default(), inverse)).norm()
    };
    let n = eval.freq_hz.len();
    let (at, worst) = (0..n).map(|p| (p, floor(p, 1.0))).max_by(|a, b| a.1.total_cmp(&b.1))?;
    if worst <= required {
        return None;
    }
    let meets = |scale: f64| (0..n).all(|p| floor(p, scale) <= required);
    // The largest fraction of the package inductance that meets the requirement, by bisection.
    let needed_l_h = meets(0.0).then(|| {
        let (mut lo, mut hi) = (0.0, 1.0);
        for _ in 0..50 {
            let mid = 0.5 * (lo + hi);
            if meets(mid) { lo = mid } else { hi = mid }
        }
        lo * pkg.l_h
    });
    let first_bad = (0..n).find(|&p| floor(p, 1.0) > required);
    let band_top_hz = first_bad.filter(|&p| p > 0).map(|p| eval.freq_hz[p - 1]);
    Some(Blocker::Package {
        at_hz: eval.freq_hz[at],
        floor_ohm: worst,
        required_ohm: required,
        package_l_h: pkg.l_h,
        needed_l_h,
        band_top_hz,
    })
}

/// The plane pair on a placed rail: each load's effective impedance with a perfect short where the new parts go,
/// against `required`. Like the package's figure this is the ideal case (a diagnosis, not a proof: a finite
/// admittance at the spot could in principle tune a resonance lower than a short does).
pub(super) fn planes_floor(
    rail: &Rail,
    eval: &MixEvaluator,
    required: f64,
    spot_m: Option<[f64; 2]>,
) -> Option<Blocker> {
    let spot_m = spot_m?;
    let n = eval.freq_hz.len();
    let floors: Vec<(f64, usize)> = (0..n).map(|p| eval.shorted_at_spot(p)).collect::<Option<_>>()?;
    let (at, &(worst, load)) = floors.iter().enumerate().max_by(|a, b| a.1.0.total_cmp(&b.1.0))?;
    if worst <= required {
        return None;
    }
    let first_bad = floors.iter().position(|(z, _)| *z > required);
    Some(Blocker::Planes {
        at_hz: eval.freq_hz[at],
        floor_ohm: worst,
        required_ohm: required,
        load: rail.loads.get(load).map_or_else(String::new, |l| l.name.clone()),
        spot_m,
        band_top_hz: first_bad.filter(|&p| p > 0).map(|p| eval.freq_hz[p - 1]),
    })
}

/// The count bound at the board node: at each grid point, the most admittance any mix within the limits can add
/// is the largest |yᵢ| filled first (at most `max_per_part` of each, `max_total` in all, within the kinds slots),
/// so |Z| ≥ 1 / (|Y_fixed| + that). In the worst corner each |yᵢ| is its least over the part's tolerance vertices
/// and |Y_fixed| its most over the kept groups' (the mix at those vertices is one the engine's search weighs).
/// Only claimed at the board view, where it is a proof.
#[allow(clippy::too_many_arguments)]
pub(super) fn count_floor(
    eval: &MixEvaluator,
    candidates: &[&Candidate],
    slot: &[u32],
    max_total: u32,
    max_per_part: u32,
    kinds_free: u32,
    required: f64,
) -> Option<Blocker> {
    // At the die or at a placed rail's loads |Z| is not a decreasing function of the node's |admittance|, so
    // the bound would not be a proof there.
    if eval.at_die() || eval.is_placed() || candidates.is_empty() {
        return None;
    }
    let k = candidates.len();
    let mut order: Vec<usize> = (0..k).collect();
    let mut worst: Option<(f64, usize, usize, u32)> = None;
    let mut first_bad = None;
    for p in 0..eval.freq_hz.len() {
        order.sort_by(|&a, &b| eval.unit_least(b, p).total_cmp(&eval.unit_least(a, p)));
        let (mut left, mut slots, mut added, mut placed) = (max_total, kinds_free, 0.0, 0u32);
        for &i in &order {
            if left == 0 {
                break;
            }
            if slot[i] > slots {
                continue;
            }
            let n = max_per_part.min(left);
            left -= n;
            slots -= slot[i];
            placed += n;
            added += n as f64 * eval.unit_least(i, p);
        }
        let bound = 1.0 / (eval.fixed_most(p) + added);
        if bound > required {
            first_bad.get_or_insert(p);
            if worst.is_none_or(|w| bound / required > w.0 / required) {
                worst = Some((bound, p, order[0], placed));
            }
        }
    }
    let (floor_ohm, p, best, placed) = worst?;
    let f = eval.freq_hz[p];
    let part = &candidates[best].part;
    let inductive = eval.unit(best)[p].im < 0.0;
    let y_best = eval.unit_least(best, p);
    let wanted = 1.0 / required - eval.fixed_most(p);
    let needed_parts = (wanted > 0.0 && y_best > 0.0).then(|| (wanted / y_best).ceil() as u64);
    // With the allowed parts, each must have |z| ≤ placed / wanted; above resonance z ≈ R + jωL.
    let needed_mounting_h = (inductive && placed > 0 && wanted > 0.0).then_some(()).and_then(|_| {
        let z_each = placed as f64 / wanted;
        let x = (z_each * z_each - part.esr_ohm * part.esr_ohm).max(0.0).sqrt();
        let l = x / (TWO_PI * f) - part.esl_h;
        (l > 0.0).then_some(l)
    });
    let band_top_hz = first_bad.filter(|&q| q > 0 && inductive).map(|q: usize| eval.freq_hz[q - 1]);
    Some(Blocker::Count {
        at_hz: f,
        floor_ohm,
        required_ohm: required,
        best_part: part.id.clone(),
        inductive,
        allowed_parts: placed,
        needed_parts,
        mounting_h: candidates[best].mounting_h,
        needed_mounting_h,
        band_top_hz,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_json_kind_is_the_short_name_and_absent_figures_are_left_out() {
        let all = [
            Blocker::Package {
                at_hz: 1e8,
                floor_ohm: 0.02,
                required_ohm: 0.01,
                package_l_h: 1e-10,
                needed_l_h: None,
                band_top_hz: Some(5e7),
            },
            Blocker::Kinds { max_kinds: 2, needed_kinds: 3 },
            Blocker::Margin { margin_db: 1.0, best_margin_db: 0.5 },
            Blocker::Droop { checked: 4, best_droop_v: 0.06, allowed_v: 0.05 },
            Blocker::NotFound { max_total: 10, max_per_part: 5 },
        ];
        for b in &all {
            let v = serde_json::to_value(b).unwrap();
            assert_eq!(v["kind"], b.kind());
        }
        let v = serde_json::to_value(&all[0]).unwrap();
        assert!(v.get("needed_l_h").is_none() && v["band_top_hz"] == 5e7);
    }
}
