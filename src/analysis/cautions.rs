//! Cautions about the parts as fitted on a rail: what no impedance curve shows. A part rated below the rail's
//! voltage fails the rail; one rated with less than the trade's usual derating margin, a polarised part, and a
//! measured part used away from its measurement bias are cautioned. Written once, here; every face shows these.

use crate::model::{Board, PartKind, Rail};
use crate::units::{Unit, format};

/// What a caution is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CautionKind {
    /// Rated below the rail's voltage: the rail fails.
    OverRating,
    /// Rated with less margin than the usual derating for its kind.
    LowMargin,
    /// No rated voltage given.
    NoRating,
    /// A polarised kind: it needs a known DC direction.
    Polarised,
    /// A measured part used at another bias than its data were measured at.
    MeasurementBias,
}

impl CautionKind {
    /// The word used in JSON.
    pub fn name(self) -> &'static str {
        match self {
            CautionKind::OverRating => "over_rating",
            CautionKind::LowMargin => "low_margin",
            CautionKind::NoRating => "no_rating",
            CautionKind::Polarised => "polarised",
            CautionKind::MeasurementBias => "measurement_bias",
        }
    }
}

/// One caution about a part on a rail.
#[derive(Debug, Clone, PartialEq)]
pub struct Caution {
    /// The part's id.
    pub part: String,
    /// The group's index in the rail's `decaps` (the first group that uses the part).
    pub group: usize,
    /// What it is about.
    pub kind: CautionKind,
    /// True when it fails the rail.
    pub fails: bool,
    /// The caution in plain words.
    pub text: String,
}

/// The highest share of its rated voltage a part should work at, by kind: common practice, not a standard.
/// Class II ceramics at half their rating (they lose much capacitance nearer it, and ageing and reliability
/// suffer); MnO2 tantalum at half (its usual derating against surge failure); polymer and aluminium electrolytic
/// at 80 %; film at 70 %; anything else at 80 %.
pub fn derating_limit(kind: PartKind) -> f64 {
    match kind {
        PartKind::Ceramic | PartKind::Tantalum => 0.5,
        PartKind::Film => 0.7,
        PartKind::Polymer | PartKind::Electrolytic | PartKind::Other | PartKind::Measured => 0.8,
    }
}

/// Measurement bias differing from the rail's voltage by more than this is cautioned, V.
const BIAS_SLACK_V: f64 = 0.05;

/// The cautions for every fitted part of `rail` (groups with count 0 are not fitted), one per part and kind.
pub fn cautions(board: &Board, rail: &Rail) -> Vec<Caution> {
    let mut out: Vec<Caution> = Vec::new();
    let v = rail.voltage_v;
    for (gi, g) in rail.decaps.iter().enumerate() {
        if g.count == 0 {
            continue;
        }
        let Some(part) = board.part(&g.part) else { continue };
        if out.iter().any(|c| c.part == part.id) {
            continue;
        }
        let mut push = |kind: CautionKind, fails: bool, text: String| {
            out.push(Caution { part: part.id.clone(), group: gi, kind, fails, text });
        };
        let volts = |x: f64| format(x, Unit::Volt);
        match part.rated_voltage_v {
            Some(rated) if rated < v => push(
                CautionKind::OverRating,
                true,
                format!(
                    "{} is rated {} but sits on {} at {}: it works above its rating and will fail. The rail \
                     fails until it is replaced by a part rated for the rail.",
                    part.id,
                    volts(rated),
                    rail.name,
                    volts(v)
                ),
            ),
            Some(rated) if v > derating_limit(part.kind) * rated => push(
                CautionKind::LowMargin,
                false,
                format!(
                    "{} is rated {} on {} at {}: it works at {:.0} % of its rating, above the {:.0} % usual for a \
                     {} part (common practice). Derate as the part's data say.",
                    part.id,
                    volts(rated),
                    rail.name,
                    volts(v),
                    v / rated * 100.0,
                    derating_limit(part.kind) * 100.0,
                    part.kind.name()
                ),
            ),
            Some(_) => {}
            None => push(
                CautionKind::NoRating,
                false,
                format!("{} gives no rated voltage: check it against {} on {}.", part.id, volts(v), rail.name),
            ),
        }
        if part.kind.is_polarised() {
            push(
                CautionKind::Polarised,
                false,
                format!(
                    "{} is {} and polarised: fit it with the right DC direction; reversed, it can fail violently.",
                    part.id,
                    part.kind.name()
                ),
            );
        }
        if part.kind == PartKind::Measured {
            let text = match part.measured_bias_v {
                Some(b) if (b - v).abs() > BIAS_SLACK_V => Some(format!(
                    "{} was measured at {} DC bias but sits on {} at {}: its data do not hold its capacitance at \
                     the rail's voltage. Measure it at the rail's bias.",
                    part.id,
                    volts(b),
                    rail.name,
                    volts(v)
                )),
                Some(_) => None,
                None => Some(format!(
                    "{} is used as measured, at whatever DC bias its data were taken (not given): give \
                     measured_bias_v so the check can compare it with {} on {}.",
                    part.id,
                    volts(v),
                    rail.name
                )),
            };
            if let Some(text) = text {
                push(CautionKind::MeasurementBias, false, text);
            }
        }
    }
    out
}
