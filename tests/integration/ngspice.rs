//! The engine against ngspice, a general-purpose circuit simulator (Debian package `ngspice`), on the same
//! networks: every lumped rail of the sample boards and the test networks in tests/networks. |Z| must agree within 0.1 % and the
//! phase within 0.1 degree from 1 kHz to 1 GHz.
//!
//! Two checks: against ngspice's output committed in tests/reference (written by scripts/regen_reference.sh), and
//! against ngspice run live on a netlist written now (required under CI).

use crate::common::*;
use hushrail::analysis::{Network, View, magnitude_phase};
use hushrail::io::{AcSweep, parse_wrdata, rail_netlist};

const SWEEP: AcSweep = AcSweep { from_hz: 1e3, to_hz: 1e9, points_per_decade: 20 };
const DATA: &str = "hushrail_ac.txt";

/// Compare our impedance with SPICE's rows (f, Re V, Im V) for one rail; return the worst |Z| and phase errors.
fn compare(
    board: &hushrail::model::Board,
    rail: &hushrail::model::Rail,
    rows: &[Vec<f64>],
    view: View,
    what: &str,
) -> (f64, f64) {
    assert_eq!(rows.len(), 121, "{what}: 6 decades at 20 per decade, both ends");
    let network = Network::of_rail(board, rail);
    let (mut worst_mag, mut worst_phase) = (0.0f64, 0.0f64);
    for row in rows {
        let (f, re, im) = (row[0], row[1], row[2]);
        let (ours_mag, ours_phase) = magnitude_phase(network.impedance_in(f, view));
        let (ref_mag, ref_phase) = magnitude_phase(num_complex::Complex64::new(re, im));
        let dm = rel(ours_mag, ref_mag);
        let mut dp = (ours_phase - ref_phase).abs();
        if dp > 180.0 {
            dp = 360.0 - dp;
        }
        assert!(dm <= 1e-3, "{what} at {f} Hz: |Z| {ours_mag} vs ngspice {ref_mag} ({:.3e} relative)", dm);
        assert!(dp <= 0.1, "{what} at {f} Hz: phase {ours_phase} vs ngspice {ref_phase} degrees");
        worst_mag = worst_mag.max(dm);
        worst_phase = worst_phase.max(dp);
    }
    (worst_mag, worst_phase)
}

/// Every (board, rail, view) the checks cover: the board view of every rail, and the die view of rails with a
/// package.
fn cases() -> Vec<(String, hushrail::model::Board, usize, View)> {
    let mut out = Vec::new();
    for (stem, _, board) in reference_boards() {
        // A placed rail is checked on its mesh netlist (placed_ngspice.rs), not on the one-node netlist.
        for (i, rail) in board.rails.iter().enumerate().filter(|(_, r)| r.placement.is_none()) {
            out.push((stem.clone(), board.clone(), i, View::Board));
            if rail.package.is_some() {
                out.push((stem.clone(), board.clone(), i, View::Die));
            }
        }
    }
    out
}

#[test]
fn matches_committed_ngspice_output() {
    let mut checked = 0;
    for (stem, board, i, view) in cases() {
        let rail = &board.rails[i];
        let file = reference_file(&stem, &rail.name, view);
        let text = std::fs::read_to_string(&file)
            .unwrap_or_else(|_| panic!("{} is missing: run scripts/regen_reference.sh", show(&file)));
        let rows = parse_wrdata(&text).unwrap();
        let what = format!("{stem}/{} ({} view)", rail.name, view.name());
        let (m, p) = compare(&board, rail, &rows, view, &what);
        eprintln!("{what}: worst |Z| error {m:.2e}, phase {p:.2e} deg");
        checked += 1;
    }
    assert!(checked >= 12, "every sample rail and test network is checked ({checked})");
}

#[test]
fn matches_live_ngspice() {
    if !ngspice_available() {
        return;
    }
    for (stem, board, i, view) in cases() {
        let rail = &board.rails[i];
        let data = run_ngspice(&rail_netlist(&board, rail, &SWEEP, view, DATA), DATA);
        let rows = parse_wrdata(&data).unwrap();
        compare(&board, rail, &rows, view, &format!("{stem}/{} ({} view, live)", rail.name, view.name()));
    }
}
