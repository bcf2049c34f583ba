//! Sizing a series coupling capacitor: the capacitance whose high-pass corner with the load impedance sits a
//! factor below the lowest frequency to pass, rounded up to a preferred value.
//!
//! Corner: C = 1 / (2π·Z·f_corner) with f_corner = f_lowest / factor (the first-order high-pass of C into Z,
//! textbook); the factor of ten is common practice. Preferred values: the E series of IEC 60063.

use super::TWO_PI;

/// An E series of IEC 60063.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ESeries {
    /// 6 values a decade (±20 %).
    E6,
    /// 12 values a decade (±10 %).
    E12,
    /// 24 values a decade (±5 %).
    E24,
    /// 96 values a decade (±1 %).
    E96,
}

/// E24 of IEC 60063, two significant digits. E12 and E6 are every second and every fourth of these.
const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2,
    9.1,
];

/// E96 of IEC 60063, three significant digits.
const E96: [f64; 96] = [
    1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30, 1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54,
    1.58, 1.62, 1.65, 1.69, 1.74, 1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32, 2.37, 2.43,
    2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09, 3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83,
    3.92, 4.02, 4.12, 4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49, 5.62, 5.76, 5.90, 6.04,
    6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32, 7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53,
    9.76,
];

impl ESeries {
    /// The series' values within one decade, from 1 up to (not including) 10.
    pub fn decade(self) -> Vec<f64> {
        match self {
            ESeries::E6 => E24.iter().step_by(4).copied().collect(),
            ESeries::E12 => E24.iter().step_by(2).copied().collect(),
            ESeries::E24 => E24.to_vec(),
            ESeries::E96 => E96.to_vec(),
        }
    }

    /// The series' name.
    pub fn name(self) -> &'static str {
        match self {
            ESeries::E6 => "E6",
            ESeries::E12 => "E12",
            ESeries::E24 => "E24",
            ESeries::E96 => "E96",
        }
    }

    /// The smallest value of the series at or above `x` (> 0).
    pub fn next_up(self, x: f64) -> f64 {
        let exp = x.log10().floor();
        let scale = 10f64.powf(exp);
        let mantissa = x / scale;
        // A value a hair above a preferred one (rounding) still takes that one.
        match self.decade().into_iter().find(|v| *v >= mantissa * (1.0 - 1e-12)) {
            Some(v) => v * scale,
            None => 10.0 * scale,
        }
    }
}

/// The sized coupling capacitor.
#[derive(Debug, Clone, PartialEq)]
pub struct CouplingSize {
    /// The exact capacitance for the corner, F.
    pub exact_f: f64,
    /// The corner aimed for, f_lowest / factor, Hz.
    pub target_corner_hz: f64,
    /// The preferred value chosen (the next one up), F.
    pub preferred_f: f64,
    /// The corner that value gives, Hz.
    pub corner_hz: f64,
    /// The loss at the lowest frequency with that value, dB (positive: attenuation), 10·log10(1 + (fc/f)²).
    pub loss_db: f64,
}

/// Size a coupling capacitor into `impedance_ohm` that passes `lowest_hz` with its corner `factor` below it.
pub fn size_coupling(impedance_ohm: f64, lowest_hz: f64, factor: f64, series: ESeries) -> CouplingSize {
    let target_corner_hz = lowest_hz / factor;
    let exact_f = 1.0 / (TWO_PI * impedance_ohm * target_corner_hz);
    let preferred_f = series.next_up(exact_f);
    let corner_hz = 1.0 / (TWO_PI * impedance_ohm * preferred_f);
    let loss_db = 10.0 * (1.0 + (corner_hz / lowest_hz).powi(2)).log10();
    CouplingSize { exact_f, target_corner_hz, preferred_f, corner_hz, loss_db }
}

/// Cautions that come with a coupling capacitor, in plain words.
pub const COUPLING_NOTES: [&str; 3] = [
    "Polarity: an electrolytic or tantalum part needs a known DC direction across it; with none, or one that can \
     reverse, use a non-polarised part (or two polarised parts back to back).",
    "Dielectric: in a signal path where distortion matters, use C0G or film; class II ceramics (X7R, X5R) change \
     with voltage and add distortion.",
    "Voltage rating: rate the part well above the largest DC difference across it, including start-up and fault \
     conditions, with the margin its maker asks for.",
];
