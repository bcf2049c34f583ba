//! A rail's impedance as CSV for other tools: frequency, real and imaginary parts, magnitude, phase and target,
//! every number at full precision. Written by `hushrail export --csv` and the window's export alike.

use crate::analysis::magnitude_phase;
use crate::units::{full_precision, push_full_precision};
use num_complex::Complex64;

/// The CSV of an export, every number in full precision.
pub fn impedance_csv(freq_hz: &[f64], z: &[Complex64], target_ohm: f64) -> String {
    let mut text = String::with_capacity(128 * freq_hz.len() + 64);
    text.push_str("freq_hz,z_re_ohm,z_im_ohm,z_mag_ohm,z_phase_deg,target_ohm\n");
    let target = full_precision(target_ohm);
    for (f, z) in freq_hz.iter().zip(z) {
        let (mag, phase) = magnitude_phase(*z);
        for x in [*f, z.re, z.im, mag, phase] {
            push_full_precision(&mut text, x);
            text.push(',');
        }
        text.push_str(&target);
        text.push('\n');
    }
    text
}

/// The reference impedance of an exported one-port Touchstone file, Ω (the usual 50 Ω of test equipment).
pub const EXPORT_Z0_OHM: f64 = 50.0;

/// A rail's impedance as a one-port Touchstone file (S referred to [`EXPORT_Z0_OHM`]), with the comment lines that
/// say what it is: the tool, the rail, the board, the view and corner, and where the board came from (`source`).
/// Written by `hushrail export --touchstone` and the window's export alike.
pub fn impedance_s1p(
    board: &crate::model::Board,
    rail: &crate::model::Rail,
    freq_hz: &[f64],
    z: &[Complex64],
    view: crate::analysis::View,
    corner: crate::physics::Corner,
    source: &str,
) -> String {
    let comments = vec![
        format!(
            "hushrail {}: impedance of rail {} of board \"{}\", seen from the {}, {} corner",
            env!("CARGO_PKG_VERSION"),
            rail.name,
            board.name,
            view.name(),
            corner.name()
        ),
        format!("source: {source}"),
        "Z = 50 (1 + S11) / (1 - S11); lumped, idealised model: check against measurement".to_string(),
    ];
    super::s1p_string(freq_hz, z, EXPORT_Z0_OHM, &comments)
}
