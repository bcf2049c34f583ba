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

/// The largest class II capacitance commonly made in each case size (at 6.3 V and up), F: the generic model's
/// measure of how thin a part's layers are. From memory of makers' ranges; typical, not data of any product.
pub const GENERIC_LARGEST_C: &[(&str, f64)] = &[
    ("0201", 2.2e-6),
    ("0402", 10e-6),
    ("0603", 22e-6),
    ("0805", 47e-6),
    ("1206", 100e-6),
    ("1210", 100e-6),
    ("1812", 100e-6),
    ("2220", 100e-6),
];

/// How full a case is with capacitance, when the case is unknown: one half, so an unknown part is never
/// taken as a thick-layer one (the model must not understate the loss).
const GENERIC_FILL_UNKNOWN: f64 = 0.5;

/// Capacitance ratio of the generic class II DC-bias model at `v` volts on a part of `c_f` farads in `case`,
/// rated `rated` volts: 1 / (1 + (x / x0)^1.6) with x = v / rated and x0 = max(0.3, 0.8 − 0.85·fill), where
/// fill = C / (the largest C made in that case), at most 1.
///
/// Why this shape: the loss follows the field in the dielectric, and a part's layers are thinner the more
/// capacitance its case holds, so a full case loses sooner. The curve is a smooth stand-in fitted to what the
/// trade knows of typical makers' curves (from memory, typical, not data of any product): a 22 µF 6.3 V X5R
/// 0805 keeps about 40 % at 3.3 V and about 80 % at 1 V; a 10 µF 6.3 V 0603 about 40 % at 3.3 V; a 1 µF 6.3 V
/// 0402 about 75 % at 1.8 V; a 100 nF 16 V 0402 about 90 % at 3.3 V; at its full rating a thin-layer part keeps
/// about 20 %, a thick-layer one about 40 %. A part's own `dc_bias` curve always replaces this.
pub fn generic_bias_ratio(case: Option<&str>, c_f: f64, rated: f64, v: f64) -> f64 {
    let fill = case
        .and_then(|c| GENERIC_LARGEST_C.iter().find(|(k, _)| k.eq_ignore_ascii_case(c.trim())))
        .map_or(GENERIC_FILL_UNKNOWN, |(_, largest)| (c_f / largest).clamp(0.0, 1.0));
    let x0 = (0.8 - 0.85 * fill).max(0.3);
    let x = (v / rated).clamp(0.0, 2.0);
    1.0 / (1.0 + (x / x0).powf(1.6))
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
    /// Ratio from temperature (1 in the typical and as-given corners).
    pub temperature: f64,
    /// Ratio from tolerance: the end of the tolerance the worst corner chose (1 elsewhere).
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

/// Which set of part values a rail is judged at.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Corner {
    /// The values exactly as typed: no DC bias, no temperature, no tolerance.
    AsGiven,
    /// The real operating point, the default verdict: each part's capacitance at the rail's DC voltage (its own
    /// DC-bias curve, or the generic class II model), at room temperature, with no tolerance.
    #[default]
    Typical,
    /// The true worst case: bias as in the typical corner, the temperature class's limit over the board's range,
    /// and the vertex of every group's capacitance and ESR tolerance that gives the highest |Z| in the band.
    Worst,
}

impl Corner {
    /// Every corner, in the order they are reported.
    pub const ALL: [Corner; 3] = [Corner::Typical, Corner::AsGiven, Corner::Worst];

    /// The word used on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Corner::AsGiven => "as-given",
            Corner::Typical => "typical",
            Corner::Worst => "worst",
        }
    }

    /// What the corner means, in a few words for people.
    pub fn words(self) -> &'static str {
        match self {
            Corner::AsGiven => "values as given",
            Corner::Typical => "typical: each part at the rail's DC bias, room temperature, no tolerance",
            Corner::Worst => "worst: bias, temperature limit and the worst tolerance vertex of every group",
        }
    }
}

/// The derating of `part` on a rail at `rail_v` volts in `corner`: bias and temperature. Tolerance is 1 here; the
/// worst corner's tolerance vertex is chosen by the analysis and recorded in its own derating.
///
/// A measured part is taken as measured: its data already hold what it does at its measurement bias.
pub fn derate(board: &Board, part: &Part, rail_v: f64, corner: Corner) -> Derating {
    let none = Derating { bias: 1.0, bias_source: BiasSource::None, temperature: 1.0, tolerance: 1.0 };
    if part.kind == PartKind::Measured || corner == Corner::AsGiven {
        return none;
    }
    let class = part.dielectric.as_deref().and_then(temperature_class);
    let (bias, bias_source) = match &part.dc_bias {
        Some(curve) => (curve_ratio(curve, rail_v), BiasSource::PartCurve),
        None if part.kind == PartKind::Ceramic
            && class.is_some_and(|c| c.class_ii)
            && board.generic_dc_bias != Some(false) =>
        {
            match part.rated_voltage_v {
                Some(rated) => {
                    (generic_bias_ratio(part.case.as_deref(), part.capacitance_f, rated, rail_v), BiasSource::Generic)
                }
                None => (1.0, BiasSource::None),
            }
        }
        None => (1.0, BiasSource::None),
    };
    if corner == Corner::Typical {
        return Derating { bias, bias_source, ..none };
    }
    let temperature = match (class, board.temperature_c) {
        // Room temperature ± 10 °C: the codes' limits are not reached.
        (Some(c), Some([lo, hi])) if lo < 15.0 || hi > 35.0 => 1.0 + c.worst_change,
        (Some(c), None) => 1.0 + c.worst_change,
        _ => 1.0,
    };
    Derating { bias, bias_source, temperature, tolerance: 1.0 }
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
    fn generic_bias_keeps_what_the_trade_expects() {
        // Typical makers' curves, from memory (typical values, no product's data): each within ±10 points.
        let cases = [
            (Some("0805"), 22e-6, 6.3, 3.3, 0.40),
            (Some("0805"), 22e-6, 6.3, 1.0, 0.80),
            (Some("0603"), 10e-6, 6.3, 3.3, 0.40),
            (Some("0402"), 1e-6, 6.3, 1.8, 0.75),
            (Some("0402"), 100e-9, 16.0, 3.3, 0.90),
        ];
        for (case, c, rated, v, kept) in cases {
            let r = generic_bias_ratio(case, c, rated, v);
            assert!((r - kept).abs() <= 0.10, "{case:?} {c} F {rated} V at {v} V: {r}");
        }
        // No bias, no loss; more bias, more loss; a fuller case loses more at the same bias.
        assert_eq!(generic_bias_ratio(Some("0402"), 1e-6, 6.3, 0.0), 1.0);
        assert!(generic_bias_ratio(Some("0603"), 10e-6, 6.3, 2.0) > generic_bias_ratio(Some("0603"), 10e-6, 6.3, 3.0));
        assert!(generic_bias_ratio(Some("0603"), 22e-6, 6.3, 2.0) < generic_bias_ratio(Some("0603"), 1e-6, 6.3, 2.0));
        // An unknown case is taken as half full, never as a thick-layer part.
        assert!(generic_bias_ratio(None, 1e-9, 6.3, 3.3) < generic_bias_ratio(Some("1210"), 1e-9, 6.3, 3.3));
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
