//! How much capacitance a part really has: DC bias, temperature and tolerance.
//!
//! - DC bias: the part's own curve when given (ratio against volts, linear between points, 1 at 0 V). Class II
//!   ceramic parts without a curve may get a generic model by case size and rating, GENERIC_BIAS below: typical,
//!   recalled values (common practice), to be replaced by the part's own data.
//! - Temperature: the class limits of the EIA-198 ceramic dielectric codes (first letter: low temperature, digit:
//!   high temperature, last letter: largest change over that range), stated from memory of EIA-198 (ANSI/EIA-198).
//!   The worst corner takes the class's largest negative change when the board's range reaches beyond room
//!   temperature (the codes give only the limit over the class range, not the curve).
//! - Tolerance: the part's ± percent, taken at its low end.

use crate::model::{Board, Part, PartKind};

/// The temperature class of a ceramic dielectric code.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TemperatureClass {
    /// The code, such as "X7R".
    pub code: &'static str,
    /// Lowest rated temperature, °C.
    pub min_c: f64,
    /// Highest rated temperature, °C.
    pub max_c: f64,
    /// Largest capacitance change over that range, fraction (negative side), e.g. -0.15.
    pub worst_change: f64,
    /// Class I (stable, no DC-bias loss) or class II (bias and temperature dependent).
    pub class_ii: bool,
}

/// EIA-198 class codes, from memory of the standard's table: X5R −55..85 °C ±15 %, X6S −55..105 °C ±22 %,
/// X7R −55..125 °C ±15 %, X7S −55..125 °C ±22 %, X7T −55..125 °C +22/−33 %, X8R −55..150 °C ±15 %,
/// Y5V −30..85 °C +22/−82 %, Z5U +10..85 °C +22/−56 %; C0G (NP0) 0 ± 30 ppm/°C over −55..125 °C.
pub const CLASSES: &[TemperatureClass] = &[
    TemperatureClass { code: "C0G", min_c: -55.0, max_c: 125.0, worst_change: -0.0054, class_ii: false },
    TemperatureClass { code: "NP0", min_c: -55.0, max_c: 125.0, worst_change: -0.0054, class_ii: false },
    TemperatureClass { code: "X5R", min_c: -55.0, max_c: 85.0, worst_change: -0.15, class_ii: true },
    TemperatureClass { code: "X6S", min_c: -55.0, max_c: 105.0, worst_change: -0.22, class_ii: true },
    TemperatureClass { code: "X7R", min_c: -55.0, max_c: 125.0, worst_change: -0.15, class_ii: true },
    TemperatureClass { code: "X7S", min_c: -55.0, max_c: 125.0, worst_change: -0.22, class_ii: true },
    TemperatureClass { code: "X7T", min_c: -55.0, max_c: 125.0, worst_change: -0.33, class_ii: true },
    TemperatureClass { code: "X8R", min_c: -55.0, max_c: 150.0, worst_change: -0.15, class_ii: true },
    TemperatureClass { code: "Y5V", min_c: -30.0, max_c: 85.0, worst_change: -0.82, class_ii: true },
    TemperatureClass { code: "Z5U", min_c: 10.0, max_c: 85.0, worst_change: -0.56, class_ii: true },
];

/// The class of a dielectric code (case-insensitive), if known.
pub fn temperature_class(code: &str) -> Option<&'static TemperatureClass> {
    CLASSES.iter().find(|c| c.code.eq_ignore_ascii_case(code.trim()))
}

/// Generic DC-bias loss of a class II ceramic at its rated voltage, by case size: typical, recalled values
/// (common practice), to be replaced by the part's own curve. Smaller cases lose more.
pub const GENERIC_BIAS: &[(&str, f64)] =
    &[("0201", 0.70), ("0402", 0.60), ("0603", 0.50), ("0805", 0.40), ("1206", 0.30), ("1210", 0.25), ("1812", 0.20)];

/// The loss at rated voltage for cases not in the table (larger packages), fraction.
const GENERIC_BIAS_OTHER: f64 = 0.25;

/// Capacitance ratio of the generic model at `v` volts on a part rated `rated` volts: 1 − loss·(v/rated)^1.5,
/// never below 0.1 (a smooth stand-in for the usual shape: little loss at low bias, most near the rating).
pub fn generic_bias_ratio(case: Option<&str>, rated: f64, v: f64) -> f64 {
    let loss = case
        .and_then(|c| GENERIC_BIAS.iter().find(|(k, _)| k.eq_ignore_ascii_case(c.trim())).map(|(_, l)| *l))
        .unwrap_or(GENERIC_BIAS_OTHER);
    let x = (v / rated).clamp(0.0, 1.5);
    (1.0 - loss * x.powf(1.5)).max(0.1)
}

/// The ratio of a measured DC-bias curve at `v` volts: linear between points, 1 at 0 V, the last point held.
pub fn curve_ratio(curve: &[[f64; 2]], v: f64) -> f64 {
    let mut prev = [0.0, 1.0];
    for &[x, r] in curve {
        if v <= x {
            let span = x - prev[0];
            return if span > 0.0 { prev[1] + (r - prev[1]) * (v - prev[0]) / span } else { r };
        }
        prev = [x, r];
    }
    prev[1]
}

/// Why a part's capacitance is lower in a corner, factor by factor.
#[derive(Debug, Clone, PartialEq)]
pub struct Derating {
    /// Capacitance ratio from DC bias at the rail voltage.
    pub bias: f64,
    /// Where the bias ratio came from.
    pub bias_source: BiasSource,
    /// Ratio from temperature (1 in the nominal corner).
    pub temperature: f64,
    /// Ratio from tolerance (1 in the nominal corner).
    pub tolerance: f64,
}

impl Derating {
    /// The product of the factors.
    pub fn ratio(&self) -> f64 {
        self.bias * self.temperature * self.tolerance
    }
}

/// Where a DC-bias ratio comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BiasSource {
    /// No bias loss applies (class I, non-ceramic, or the generic model turned off).
    None,
    /// The part's own curve.
    PartCurve,
    /// The generic model (typical, recalled).
    Generic,
}

/// Which corner to compute.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Corner {
    /// The part values as given, with the part's own DC-bias curve at the rail voltage when it has one.
    #[default]
    Nominal,
    /// The lowest effective capacitance: bias (own curve, or the generic model for class II ceramics), the
    /// temperature class limit over the board's range, and the low end of the tolerance.
    Worst,
}

impl Corner {
    /// The word used on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Corner::Nominal => "nominal",
            Corner::Worst => "worst",
        }
    }
}

/// The derating of `part` on a rail at `rail_v` volts in `corner`.
pub fn derate(board: &Board, part: &Part, rail_v: f64, corner: Corner) -> Derating {
    let class = part.dielectric.as_deref().and_then(temperature_class);
    let (bias, bias_source) = match (&part.dc_bias, corner) {
        (Some(curve), _) => (curve_ratio(curve, rail_v), BiasSource::PartCurve),
        (None, Corner::Worst)
            if part.kind == PartKind::Ceramic
                && class.is_some_and(|c| c.class_ii)
                && board.generic_dc_bias != Some(false)
                && part.rated_voltage_v.is_some() =>
        {
            let rated = part.rated_voltage_v.unwrap_or(f64::INFINITY);
            (generic_bias_ratio(part.case.as_deref(), rated, rail_v), BiasSource::Generic)
        }
        _ => (1.0, BiasSource::None),
    };
    if corner == Corner::Nominal {
        return Derating { bias, bias_source, temperature: 1.0, tolerance: 1.0 };
    }
    let temperature = match (class, board.temperature_c) {
        // Room temperature ± 10 °C: the codes' limits are not reached.
        (Some(c), Some([lo, hi])) if lo < 15.0 || hi > 35.0 => 1.0 + c.worst_change,
        (Some(c), None) => 1.0 + c.worst_change,
        _ => 1.0,
    };
    let tolerance = 1.0 - part.tolerance_pct.unwrap_or(0.0) / 100.0;
    Derating { bias, bias_source, temperature, tolerance }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn curve_is_linear_between_points_and_one_at_zero() {
        let curve = [[2.0, 0.8], [4.0, 0.5]];
        assert_eq!(curve_ratio(&curve, 0.0), 1.0);
        assert!((curve_ratio(&curve, 1.0) - 0.9).abs() < 1e-15);
        assert!((curve_ratio(&curve, 3.0) - 0.65).abs() < 1e-15);
        assert_eq!(curve_ratio(&curve, 10.0), 0.5);
    }

    #[test]
    fn class_codes_follow_the_letter_digit_letter_scheme() {
        // EIA-198 (from memory): X = −55 °C, Y = −30 °C, Z = +10 °C; 5 = 85 °C, 6 = 105 °C, 7 = 125 °C,
        // 8 = 150 °C; R = ±15 %, S = ±22 %, T = +22/−33 %, U = +22/−56 %, V = +22/−82 %.
        for c in CLASSES.iter().filter(|c| c.class_ii) {
            let b = c.code.as_bytes();
            let low = match b[0] {
                b'X' => -55.0,
                b'Y' => -30.0,
                b'Z' => 10.0,
                _ => unreachable!(),
            };
            let high = match b[1] {
                b'5' => 85.0,
                b'6' => 105.0,
                b'7' => 125.0,
                b'8' => 150.0,
                _ => unreachable!(),
            };
            let change = match b[2] {
                b'R' => -0.15,
                b'S' => -0.22,
                b'T' => -0.33,
                b'U' => -0.56,
                b'V' => -0.82,
                _ => unreachable!(),
            };
            assert_eq!((c.min_c, c.max_c, c.worst_change), (low, high, change), "{}", c.code);
        }
    }
}
