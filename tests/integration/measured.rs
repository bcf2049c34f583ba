//! Measured parts: Touchstone files written by scikit-rf (a general-purpose RF library, PyPI scikit-rf) from
//! invented R-L-C values, read into the engine; interpolation at the data, the fitted R-L-C outside it, and a
//! broken file named with its line.

use crate::common::*;
use hushrail::analysis::{AnalysisOptions, Network, Severity, analyze_rail, explain};
use hushrail::io::{board_to_string, parse_board, read_board, read_board_keeping_unusable};
use hushrail::physics::TWO_PI;
use num_complex::Complex64;

/// The invented parts scikit-rf wrote the files from (tests/touchstone/expected.json).
const BULK: (f64, f64, f64) = (4.7e-6, 0.008, 5.5e-10);
const SMALL: (f64, f64, f64) = (1e-7, 0.02, 4e-10);

fn rlc(p: (f64, f64, f64), f: f64) -> Complex64 {
    let w = TWO_PI * f;
    Complex64::new(p.1, w * p.2 - 1.0 / (w * p.0))
}

#[test]
fn measured_parts_load_and_fit_the_rlc_they_were_written_from() {
    let board = read_board(&root().join("tests/measured/board.json")).unwrap();
    for (id, p) in [("bulk-measured", BULK), ("small-measured", SMALL)] {
        let part = board.part(id).unwrap();
        assert!(part.unusable().is_none());
        assert!(rel(part.capacitance_f, p.0) < 1e-6, "{id}: C {}", part.capacitance_f);
        assert!(rel(part.esl_h, p.2) < 1e-4, "{id}: ESL {}", part.esl_h);
        assert!(rel(part.esr_ohm, p.1) < 1e-6, "{id}: ESR {}", part.esr_ohm);
    }
}

#[test]
fn the_network_uses_the_data_at_measured_points_and_the_fit_outside() {
    let board = read_board(&root().join("tests/measured/board.json")).unwrap();
    let net = Network::of_rail(&board, &board.rails[0]);
    let bulk = net.branches.iter().find(|b| b.label.starts_with("bulk")).unwrap();
    let table = board.part("bulk-measured").unwrap().table().unwrap();
    // At a measured frequency: the part's data plus the mounting, over the count.
    for &f in &table.freq_hz {
        let want = (rlc(BULK, f) + Complex64::new(0.0, TWO_PI * f * 5e-10)) / 4.0;
        assert!((bulk.impedance(f) - want).norm() <= 1e-6 * want.norm(), "at {f} Hz");
    }
    // Above the data (1 GHz): the fitted R-L-C, which is the invented one.
    let f = 3e9;
    let want = (rlc(BULK, f) + Complex64::new(0.0, TWO_PI * f * 5e-10)) / 4.0;
    assert!((bulk.impedance(f) - want).norm() <= 1e-4 * want.norm());
    // The band reaches past the data: a note says the fit stands in there.
    let a = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    let notes = explain(&board, &board.rails[0], &a);
    assert!(notes.iter().any(|n| n.severity == Severity::Note && n.text.contains("fitted R-L-C stands in")));
}

#[test]
fn a_broken_measurement_is_named_with_file_and_line() {
    let path = root().join("tests/measured/broken.json");
    let e = read_board(&path).unwrap_err().to_string();
    assert!(e.contains("parts[1].touchstone") && e.contains("wrong_columns.s2p:4"), "{e}");
    // The window's reading keeps the board, with the part marked unusable and left out of the network.
    let board = read_board_keeping_unusable(&path).unwrap();
    let why = board.part("small-measured").unwrap().unusable().unwrap();
    assert!(why.contains("wrong_columns.s2p:4"), "{why}");
    let net = Network::of_rail(&board, &board.rails[0]);
    assert!(!net.branches.iter().any(|b| b.label.starts_with("small")));
    let a = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    assert!(
        explain(&board, &board.rails[0], &a)
            .iter()
            .any(|f| f.severity == Severity::Fail && f.text.contains("cannot be used"))
    );
    let out = hushrail().args(["check", "tests/measured/broken.json"]).current_dir(root()).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("wrong_columns.s2p:4"));
}

#[test]
fn a_measured_part_is_saved_by_its_file_not_its_fit() {
    let board = read_board(&root().join("tests/measured/board.json")).unwrap();
    let text = board_to_string(&board);
    assert!(text.contains("\"touchstone\": \"../touchstone/bulk_ri_hz_50.s1p\""));
    assert!(text.contains("\"fixture\": \"shunt-through\""));
    let part_text = &text[text.find("bulk-measured").unwrap()..text.find("small-measured").unwrap()];
    assert!(!part_text.contains("capacitance_f"), "the fit is not written: {part_text}");
    // Values given for a measured part are refused, and so is a measurement on another kind.
    let bad = text.replacen("\"kind\": \"measured\",", "\"kind\": \"measured\", \"capacitance_f\": 1e-6,", 1);
    assert!(parse_board(&bad, "b.json").unwrap_err().to_string().contains("parts[0].capacitance_f"));
}
