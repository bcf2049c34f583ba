//! The plausible range of every quantity a board file or a command-line flag can give.
//!
//! The ranges are wide on purpose: a real board can be odd (a 100 kV supply, a 3000 F supercapacitor, a 1 ps
//! edge), but not 1e300 V. What they buy is that any value inside them computes finite results everywhere in the
//! engine (impedances from 1 mHz to 1 THz stay far inside f64, targets and their ratios too), so the engine never
//! has to guess what an infinite or vanishing input meant. The validator and the command line check against these
//! same constants, and README's "Ranges" table lists them.

use crate::units::{Unit, format_sig, full_precision};

/// A closed range of a quantity: `min..=max`, or exactly 0 where `zero_ok` (an ideal part: no ESR, no ESL).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Range {
    /// What the quantity is, in a few words ("a rail voltage").
    pub what: &'static str,
    /// Its unit, for the message.
    pub unit: Unit,
    /// The smallest value accepted (besides 0 where `zero_ok`).
    pub min: f64,
    /// The largest value accepted.
    pub max: f64,
    /// Whether exactly 0 is accepted too.
    pub zero_ok: bool,
}

impl Range {
    const fn new(what: &'static str, unit: Unit, min: f64, max: f64, zero_ok: bool) -> Range {
        Range { what, unit, min, max, zero_ok }
    }

    /// True when `value` is inside the range.
    pub fn contains(&self, value: f64) -> bool {
        value.is_finite() && ((self.zero_ok && value == 0.0) || (self.min..=self.max).contains(&value))
    }

    /// The range in words: "from 1 mV to 100 kV", "0, or from 1 pΩ to 1 MΩ".
    pub fn words(&self) -> String {
        let from = short(self.min, self.unit);
        let to = short(self.max, self.unit);
        if self.zero_ok { format!("0, or from {from} to {to}") } else { format!("from {from} to {to}") }
    }

    /// Why `value` is refused, or `None` when it is inside the range.
    pub fn problem(&self, value: f64) -> Option<String> {
        if self.contains(value) {
            return None;
        }
        let shown = if value.is_finite() { full_precision(value) } else { "not a finite number".to_string() };
        Some(format!("must be {} (the range hushrail accepts for {}), not {shown}", self.words(), self.what))
    }
}

/// A range's end in words: engineering notation without trailing zeros ("1 mV", "100 kV"), plain numbers as
/// they are ("-273.15").
fn short(value: f64, unit: Unit) -> String {
    if unit == Unit::None {
        return full_precision(value).trim_end_matches(".0").to_string();
    }
    let text = format_sig(value, unit, 3);
    match text.split_once(' ') {
        Some((num, rest)) if num.contains('.') => {
            format!("{} {rest}", num.trim_end_matches('0').trim_end_matches('.'))
        }
        _ => text,
    }
}

/// A rail's nominal voltage.
pub const RAIL_VOLTAGE: Range = Range::new("a rail voltage", Unit::Volt, 1e-3, 1e5, false);
/// A rail's allowed ripple, percent (below 100 by definition).
pub const RIPPLE_PCT: Range = Range::new("a ripple in percent", Unit::None, 1e-4, 99.0, false);
/// A load's current step.
pub const LOAD_STEP: Range = Range::new("a load's current step", Unit::Ampere, 1e-9, 1e5, false);
/// A load's 10-90 % rise time.
pub const RISE_TIME: Range = Range::new("a rise time", Unit::Second, 1e-12, 1.0, false);
/// Any frequency: a band edge, a sweep's end.
pub const FREQUENCY: Range = Range::new("a frequency", Unit::Hertz, 1e-3, 1e12, false);
/// A part's capacitance (down to a stray femtofarad, up to a large supercapacitor).
pub const CAPACITANCE: Range = Range::new("a capacitance", Unit::Farad, 1e-15, 1e4, false);
/// A plane's capacitance.
pub const PLANE_CAPACITANCE: Range = Range::new("a plane capacitance", Unit::Farad, 1e-15, 1e-2, false);
/// A die's capacitance.
pub const DIE_CAPACITANCE: Range = Range::new("a die capacitance", Unit::Farad, 1e-15, 1.0, false);
/// A series resistance (ESR, a plane's, a package's, a die's).
pub const RESISTANCE: Range = Range::new("a series resistance", Unit::Ohm, 1e-12, 1e6, true);
/// A series inductance (ESL, mounting, a plane's, a package's).
pub const INDUCTANCE: Range = Range::new("a series inductance", Unit::Henry, 1e-15, 1e-3, true);
/// The regulator's output inductance (it may include a slow path to the rail).
pub const SOURCE_INDUCTANCE: Range = Range::new("a regulator's output inductance", Unit::Henry, 1e-15, 1.0, true);
/// A part's rated voltage.
pub const RATED_VOLTAGE: Range = Range::new("a rated voltage", Unit::Volt, 1e-3, 1e6, false);
/// A voltage on a part's DC-bias curve.
pub const BIAS_VOLTAGE: Range = Range::new("a DC-bias voltage", Unit::Volt, 1e-6, 1e6, false);
/// The cost of one part.
pub const UNIT_COST: Range = Range::new("a unit cost", Unit::None, 1e-9, 1e9, true);
/// The board area one part takes, m².
pub const AREA: Range = Range::new("a part's area in m²", Unit::None, 1e-12, 1.0, false);
/// A tolerance, ± percent.
pub const TOLERANCE_PCT: Range = Range::new("a tolerance in percent", Unit::None, 0.0, 99.0, false);
/// A board temperature, °C (absolute zero up to far past any solder's melting point).
pub const TEMPERATURE_C: Range = Range::new("a temperature in °C", Unit::None, -273.15, 1000.0, false);
/// Parts in one decap group.
pub const COUNT: Range = Range::new("a part count", Unit::None, 0.0, 1e6, false);
/// A trace length from a pad to its via (0 for via-in-pad).
pub const TRACE_LENGTH: Range = Range::new("a trace length", Unit::Metre, 1e-6, 0.1, true);
/// A trace width or its height over the plane.
pub const TRACE_SECTION: Range = Range::new("a trace width or height", Unit::Metre, 1e-6, 0.01, false);
/// A via's drill diameter.
pub const VIA_DRILL: Range = Range::new("a via drill", Unit::Metre, 1e-6, 0.005, false);
/// A via's length down to the plane pair.
pub const VIA_LENGTH: Range = Range::new("a via length", Unit::Metre, 1e-6, 0.02, false);
/// The pitch between a power via and its ground via.
pub const VIA_PITCH: Range = Range::new("a via pitch", Unit::Metre, 1e-6, 0.05, false);
/// Vias on each pad.
pub const VIAS_PER_PAD: Range = Range::new("vias per pad", Unit::None, 1.0, 64.0, false);
/// The most on/off pulses a load's burst may hold.
pub const MAX_PULSES: Range = Range::new("a number of pulses", Unit::None, 1.0, 1e6, false);
/// The time a droop shows (its figures are over the whole response whatever the window).
pub const DROOP_WINDOW: Range = Range::new("a droop window", Unit::Second, 1e-15, 1e6, false);
/// Points of a droop's waveform grid.
pub const WAVEFORM_POINTS: Range = Range::new("the points of a waveform", Unit::None, 2.0, 1e6, false);
/// A regulator control loop's crossover frequency (a slow bench supply to a fast on-package regulator).
pub const LOOP_CROSSOVER: Range = Range::new("a control loop's crossover frequency", Unit::Hertz, 1.0, 1e8, false);
/// A regulator control loop's phase margin, degrees (0 is the edge of oscillation, 90 a loop with no peak).
pub const LOOP_PHASE_MARGIN: Range = Range::new("a phase margin in degrees", Unit::None, 1.0, 89.0, false);
/// Points of a sweep or an export.
pub const SWEEP_POINTS: Range = Range::new("the points of a sweep", Unit::None, 2.0, 1e6, false);
/// Points of the in-band scan.
pub const SCAN_POINTS: Range = Range::new("the points of a scan", Unit::None, 3.0, 1e6, false);
/// A coupling capacitor's load impedance.
pub const COUPLING_IMPEDANCE: Range = Range::new("a load impedance", Unit::Ohm, 1e-3, 1e9, false);
/// How far below the lowest frequency a coupling capacitor's corner sits.
pub const COUPLING_FACTOR: Range = Range::new("a corner factor", Unit::None, 1.0, 1e3, false);

/// The largest board file read, bytes: far beyond any real board (the largest sample is a few kB).
pub const MAX_BOARD_BYTES: u64 = 64 << 20;
/// The largest Touchstone file read, bytes.
pub const MAX_TOUCHSTONE_BYTES: u64 = 64 << 20;

/// Every range, in the order README lists them.
pub const ALL: [&Range; 33] = [
    &RAIL_VOLTAGE,
    &RIPPLE_PCT,
    &LOAD_STEP,
    &RISE_TIME,
    &FREQUENCY,
    &CAPACITANCE,
    &PLANE_CAPACITANCE,
    &DIE_CAPACITANCE,
    &RESISTANCE,
    &INDUCTANCE,
    &SOURCE_INDUCTANCE,
    &RATED_VOLTAGE,
    &BIAS_VOLTAGE,
    &UNIT_COST,
    &AREA,
    &TOLERANCE_PCT,
    &TEMPERATURE_C,
    &COUNT,
    &TRACE_LENGTH,
    &TRACE_SECTION,
    &VIA_DRILL,
    &VIA_LENGTH,
    &VIA_PITCH,
    &VIAS_PER_PAD,
    &SWEEP_POINTS,
    &SCAN_POINTS,
    &COUPLING_IMPEDANCE,
    &COUPLING_FACTOR,
    &MAX_PULSES,
    &DROOP_WINDOW,
    &WAVEFORM_POINTS,
    &LOOP_CROSSOVER,
    &LOOP_PHASE_MARGIN,
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edges_and_zero() {
        assert!(RAIL_VOLTAGE.contains(1e-3) && RAIL_VOLTAGE.contains(1e5));
        assert!(!RAIL_VOLTAGE.contains(0.0) && !RAIL_VOLTAGE.contains(1.797e308) && !RAIL_VOLTAGE.contains(f64::NAN));
        assert!(RESISTANCE.contains(0.0) && !RESISTANCE.contains(5e-324) && !RESISTANCE.contains(-1.0));
        let msg = RAIL_VOLTAGE.problem(1e300).unwrap();
        assert!(msg.contains("from 1 mV to 100 kV") && msg.contains("1e+300"), "{msg}");
    }
}
