//! Findings in plain words, with a hint of what to try. The window and the command line both show these words;
//! they are written once, here.

use super::network::BranchKind;
use super::rail::{AntiResonance, BranchRef, RailAnalysis};
use crate::model::{Band, BandEdge, Board, Rail, Source};
use crate::physics::derating::temperature_class;
use crate::physics::regulator::ParallelRlc;
use crate::units::{Unit, format};

/// How much a finding matters.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Severity {
    /// The rail misses its target here.
    Fail,
    /// Worth a look; the rail still meets target here.
    Note,
}

/// One thing a user must look at, in plain words.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    /// How much it matters.
    pub severity: Severity,
    /// The frequency range it concerns (a single frequency has both ends equal), Hz.
    pub range_hz: [f64; 2],
    /// What is wrong, in one sentence.
    pub text: String,
    /// What to try.
    pub hint: String,
}

/// The findings of one analysed rail, by frequency: each violation band with the peak that drives it, and each
/// anti-resonance that stays under target as a note.
pub fn explain(board: &Board, rail: &Rail, analysis: &RailAnalysis) -> Vec<Finding> {
    let target = analysis.target_ohm;
    let mut out = Vec::new();
    for v in &analysis.violations {
        let peak = analysis.antiresonances.iter().find(|a| a.freq_hz >= v.from_hz && a.freq_hz <= v.to_hz);
        let ratio = v.peak_ohm / target;
        let mut text = format!(
            "|Z| is above target from {} to {}, up to {} ({:.2}× target) at {}.",
            hz(v.from_hz),
            hz(v.to_hz),
            ohm(v.peak_ohm),
            ratio,
            hz(v.peak_hz)
        );
        let hint = match peak {
            Some(a) => {
                text.push(' ');
                text.push_str(&cause(rail, a));
                peak_hint(board, rail, a)
            }
            None => edge_hint(analysis, v.from_hz, v.to_hz),
        };
        out.push(Finding { severity: Severity::Fail, range_hz: [v.from_hz, v.to_hz], text, hint });
    }
    for a in analysis.antiresonances.iter().filter(|a| !a.above_target) {
        out.push(Finding {
            severity: Severity::Note,
            range_hz: [a.freq_hz, a.freq_hz],
            text: format!(
                "Anti-resonance at {}: {} ({:.0} % of target). {}",
                hz(a.freq_hz),
                ohm(a.z_ohm),
                a.z_ohm / target * 100.0,
                cause(rail, a)
            ),
            hint: "Under target; it becomes the first place to fail if counts drop or mounting inductance grows."
                .into(),
        });
    }
    // A placed rail's own findings: plane resonances, parts far from their load, loads served by one value.
    out.extend(analysis.placed_findings.iter().cloned());
    out.sort_by(|a, b| a.range_hz[0].total_cmp(&b.range_hz[0]));
    out.extend(derating_notes(board, rail, analysis));
    out.extend(measured_notes(board, rail, analysis));
    out.extend(source_note(rail, analysis));
    out
}

/// What a measured source was fitted to and how well, in one sentence (the check's note, the report and the
/// window say this); `None` for a source given by its numbers.
pub fn source_fit_words(source: &Source) -> Option<String> {
    let file = source.touchstone.as_ref()?;
    let Some(fit) = source.loop_fit() else {
        return Some(format!("The source is measured ({file}), but its file cannot be used."));
    };
    // Small errors keep their size rather than rounding to a misleading 0.
    let pct = |x: f64| if x >= 1e-4 { format!("{:.2} %", x * 100.0) } else { "under 0.01 %".to_string() };
    let deg = |x: f64| if x >= 0.01 { format!("{x:.2}°") } else { "under 0.01°".to_string() };
    Some(format!(
        "The source is fitted from measured data ({file}, {} points): R {}, L {}, loop crossing over at {} with \
         {:.1}° phase margin; the fit's worst error from {} to {} is {} in |Z| and {} in phase (rms residual {}).",
        fit.points,
        format(fit.r_ohm, Unit::Ohm),
        format(fit.l_h, Unit::Henry),
        hz(fit.crossover_hz),
        fit.phase_margin_deg,
        hz(fit.range_hz[0]),
        hz(fit.range_hz[1]),
        pct(fit.worst_magnitude_error),
        deg(fit.worst_phase_error_deg),
        pct(fit.rms_residual)
    ))
}

/// A measured source: the fit it stands for and its error (a note), or why it is out of the network (a fail).
fn source_note(rail: &Rail, analysis: &RailAnalysis) -> Option<Finding> {
    let source = rail.source.as_ref()?;
    let band = analysis.band_hz;
    if let Some(why) = source.unusable() {
        return Some(Finding {
            severity: Severity::Fail,
            range_hz: band,
            text: format!("The source cannot be used, so it is left out of this rail: {why}."),
            hint: "Fix or replace the Touchstone file the source names, then open the board again.".into(),
        });
    }
    let fit = source.loop_fit()?;
    let [a, b] = fit.range_hz;
    let outside = if band[0] < a || band[1] > b {
        " The band reaches past the data; there the fitted circuit stands in."
    } else {
        ""
    };
    Some(Finding {
        severity: Severity::Note,
        range_hz: band,
        text: format!("{}{outside}", source_fit_words(source)?),
        hint: "Check the fit against the regulator's data; measure over the whole band.".into(),
    })
}

/// Measured parts: one that cannot be used (its groups are out of the network), and one whose data do not cover
/// the band (its fitted R-L-C stands in outside the data).
fn measured_notes(board: &Board, rail: &Rail, analysis: &RailAnalysis) -> Vec<Finding> {
    let [lo, hi] = analysis.band_hz;
    let mut out = Vec::new();
    let mut seen = Vec::new();
    for g in rail.decaps.iter().filter(|g| g.count > 0) {
        let Some(part) = board.part(&g.part) else { continue };
        if seen.contains(&part.id) {
            continue;
        }
        seen.push(part.id.clone());
        if let Some(why) = part.unusable() {
            out.push(Finding {
                severity: Severity::Fail,
                range_hz: [lo, hi],
                text: format!("{} cannot be used, so its groups are left out of this rail: {why}.", part.id),
                hint: "Fix or replace the Touchstone file the part names, then open the board again.".into(),
            });
        } else if let Some(t) = part.table() {
            let [a, b] = t.range_hz();
            if lo < a || hi > b {
                out.push(Finding {
                    severity: Severity::Note,
                    range_hz: [lo, hi],
                    text: format!(
                        "{} is measured from {} to {}; outside that range its fitted R-L-C stands in (C {}, ESR \
                         {}, ESL {}).",
                        part.id,
                        hz(a),
                        hz(b),
                        format(part.capacitance_f, Unit::Farad),
                        format(part.esr_ohm, Unit::Ohm),
                        format(part.esl_h, Unit::Henry)
                    ),
                    hint: "Measure over the whole band, or check the fit against the part's data.".into(),
                });
            }
        }
    }
    out
}

/// Where each edge of a band comes from, in words: [low, high].
pub fn explain_band(band: &Band) -> [String; 2] {
    let word = |edge: &BandEdge, f: f64, which: &str| match edge {
        BandEdge::Given => format!("{which} edge {} as given", hz(f)),
        BandEdge::Default => {
            format!("{which} edge {} by default (the regulator's loop holds the rail below it)", hz(f))
        }
        BandEdge::RiseTime { load, rise_s } => {
            format!("{which} edge {} = 0.35 / the {} rise of {load}", hz(f), format(*rise_s, Unit::Second))
        }
    };
    [word(&band.low, band.hz[0], "lower"), word(&band.high, band.hz[1], "upper")]
}

/// Dielectrics asked to work outside their temperature class. (The capacitance each part keeps is the check's
/// own list, `analysis::kept_words`.)
fn derating_notes(board: &Board, rail: &Rail, analysis: &RailAnalysis) -> Vec<Finding> {
    let mut out = Vec::new();
    let [lo, hi] = analysis.band_hz;
    if let Some([t_lo, t_hi]) = board.temperature_c {
        for g in &rail.decaps {
            let Some(part) = board.part(&g.part) else { continue };
            let Some(class) = part.dielectric.as_deref().and_then(temperature_class) else { continue };
            if t_lo < class.min_c || t_hi > class.max_c {
                out.push(Finding {
                    severity: Severity::Note,
                    range_hz: [lo, hi],
                    text: format!(
                        "{} is {}, rated {} °C to {} °C, but the board works from {t_lo} °C to {t_hi} °C.",
                        part.id, class.code, class.min_c, class.max_c
                    ),
                    hint: "Choose a dielectric class rated for the board's range.".into(),
                });
            }
        }
    }
    out
}

fn hz(f: f64) -> String {
    format(f, Unit::Hertz)
}

fn ohm(z: f64) -> String {
    format(z, Unit::Ohm)
}

/// The regulator's crossover tank, when the rail's source gives its control loop (and is usable).
fn loop_tank(rail: &Rail) -> Option<ParallelRlc> {
    rail.source.as_ref().filter(|s| s.unusable().is_none()).and_then(|s| s.tank())
}

/// A peak within this factor of the regulator's crossover tank resonance is named as the loop's (its closed-loop
/// peak is there, whatever carries the reactance).
const NEAR_CROSSOVER: f64 = 1.5;

/// The regulator on one side of a peak at `f_hz`: near its loop's crossover, the loop; else its output inductance,
/// or, where its control loop's crossover tank carries more of the source's reactance than the inductance does, the
/// loop (inductive below the tank's resonance, capacitive past it).
fn source_words(rail: &Rail, f_hz: f64, inductive: bool) -> String {
    let Some(tank) = loop_tank(rail) else {
        return if inductive { "the regulator's output inductance" } else { "the regulator" }.to_string();
    };
    if (f_hz / tank.resonance_hz()).ln().abs() < NEAR_CROSSOVER.ln() {
        return format!(
            "the regulator near its loop's crossover (its crossover tank resonates at {})",
            hz(tank.resonance_hz())
        );
    }
    let x_tank = tank.impedance(f_hz).im;
    let x_l = rail.source.as_ref().map_or(0.0, |s| crate::physics::TWO_PI * f_hz * s.l_h);
    if inductive && x_l >= x_tank.abs() {
        return "the regulator's output inductance".to_string();
    }
    let side = if inductive { "inductive below" } else { "capacitive past" };
    format!("the regulator's control loop ({side} its crossover tank's resonance at {})", hz(tank.resonance_hz()))
}

/// The inductive side of a peak, in words.
fn inductive_words(rail: &Rail, f_hz: f64, b: &Option<BranchRef>) -> String {
    match b {
        Some(b) => match b.kind {
            BranchKind::Source => source_words(rail, f_hz, true),
            BranchKind::Plane => "the plane's inductance".to_string(),
            BranchKind::Package => "the package inductance".to_string(),
            BranchKind::Die => "the die".to_string(),
            BranchKind::Group(_) => format!(
                "the inductance of {} ({}, past its self-resonance at {})",
                b.label,
                share_words(b.share, "inductive"),
                hz(b.resonance_hz)
            ),
        },
        None => "no inductive branch".to_string(),
    }
}

/// "68 % of the inductive current there".
fn share_words(share: f64, side: &str) -> String {
    format!("{:.0} % of the {side} current there", share * 100.0)
}

/// The capacitive side of a peak, in words.
fn capacitive_words(rail: &Rail, f_hz: f64, b: &Option<BranchRef>) -> String {
    match b {
        Some(b) => match b.kind {
            BranchKind::Source => source_words(rail, f_hz, false),
            BranchKind::Plane => "the plane capacitance".to_string(),
            BranchKind::Package => "the package".to_string(),
            BranchKind::Die => "the die capacitance".to_string(),
            BranchKind::Group(_) if b.resonance_hz.is_finite() => format!(
                "the capacitance of {} ({}, below its self-resonance at {})",
                b.label,
                share_words(b.share, "capacitive"),
                hz(b.resonance_hz)
            ),
            BranchKind::Group(_) => format!("the capacitance of {} ({})", b.label, share_words(b.share, "capacitive")),
        },
        None => "no capacitive branch".to_string(),
    }
}

/// Which branches meet at a peak, as "Cause: ...". A peak within [`NEAR_CROSSOVER`] of the regulator's crossover
/// tank resonance that no branch answers on the capacitive side is the loop's own closed-loop peak (its gain falling
/// through one with too little phase margin), and is named so.
pub fn cause(rail: &Rail, a: &AntiResonance) -> String {
    let f = a.freq_hz;
    if let Some(tank) = loop_tank(rail)
        .filter(|t| a.capacitive_side.is_none() && (f / t.resonance_hz()).ln().abs() < NEAR_CROSSOVER.ln())
    {
        return format!(
            "Cause: the regulator's control loop peaks near its crossover (its crossover tank resonates at {}), and \
             {} gives no capacitance to bypass it there.",
            hz(tank.resonance_hz()),
            inductive_words(rail, f, &a.inductive_side)
        );
    }
    format!(
        "Cause: {} resonates with {}.",
        inductive_words(rail, f, &a.inductive_side),
        capacitive_words(rail, f, &a.capacitive_side)
    )
}

/// Capacitance of the part behind a branch, if it is a group.
fn group_capacitance(board: &Board, rail: &Rail, b: &Option<BranchRef>) -> Option<f64> {
    match b.as_ref()?.kind {
        BranchKind::Group(i) => board.part(&rail.decaps.get(i)?.part).map(|p| p.capacitance_f),
        _ => None,
    }
}

fn peak_hint(board: &Board, rail: &Rail, a: &AntiResonance) -> String {
    let low_c = group_capacitance(board, rail, &a.capacitive_side);
    let high_c = group_capacitance(board, rail, &a.inductive_side);
    let mut tips = Vec::new();
    match (high_c, low_c) {
        (Some(big), Some(small)) if big > small => tips.push(format!(
            "add a value between the two (around {}) so that a resonance falls near {}",
            format((big * small).sqrt(), Unit::Farad),
            hz(a.freq_hz)
        )),
        _ => {}
    }
    match a.capacitive_side.as_ref().map(|b| b.kind) {
        Some(BranchKind::Group(_)) => {
            let name = a.capacitive_side.as_ref().map(|b| b.label.split(" ×").next().unwrap_or("").to_string());
            tips.push(format!("fit more of {}", name.unwrap_or_default()))
        }
        Some(BranchKind::Plane) => tips.push("add small parts that stay capacitive past this frequency".into()),
        Some(BranchKind::Die) => {
            tips.push(
                "lower the inductance the die sees through the package: more small parts with low mounting \
                 inductance, self-resonant near or above this frequency"
                    .into(),
            );
            if matches!(a.inductive_side.as_ref().map(|b| b.kind), Some(BranchKind::Package)) {
                tips.push(
                    "the package's own inductance sets this peak: more die capacitance or a package with \
                           less inductance moves it"
                        .into(),
                );
            }
        }
        _ => {}
    }
    if matches!(a.inductive_side.as_ref().map(|b| b.kind), Some(BranchKind::Source)) {
        tips.push(match loop_tank(rail) {
            Some(_) => "add bulk capacitance so the regulator's loop is bypassed sooner, or give the loop more phase \
                        margin"
                .into(),
            None => "add bulk capacitance so the regulator's inductance is bypassed sooner".into(),
        });
    }
    tips.push("use a part with more ESR to damp the peak".into());
    tips.push("cut the mounting inductance (shorter traces, more or closer vias)".into());
    let mut hint = tips.join("; ");
    if let Some(c) = hint.get(..1) {
        hint = c.to_uppercase() + &hint[1..];
    }
    hint + "."
}

fn edge_hint(analysis: &RailAnalysis, from: f64, to: f64) -> String {
    let [lo, hi] = analysis.band_hz;
    if to >= hi * (1.0 - 1e-9) {
        "The impedance rises toward the top of the band: the parts' inductance dominates there. Fit more small parts \
         with low mounting inductance, or rely on the package and die capacitance above this frequency."
            .into()
    } else if from <= lo * (1.0 + 1e-9) {
        "The impedance is too high at the bottom of the band: add bulk capacitance or lower the regulator's output \
         impedance."
            .into()
    } else {
        "Lower the impedance across this range: more parts whose self-resonance falls inside it.".into()
    }
}
