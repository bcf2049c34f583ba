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

/// The invented regulator scripts/regen_regulator_fixture.py wrote tests/networks/regulator_measured_out.s1p
/// from (scikit-rf writing the file): R, L, crossover, phase margin.
const REGULATOR: (f64, f64, f64, f64) = (1.5e-3, 0.8e-9, 60e3, 38.0);

/// The regulator's output impedance straight from Erickson and Maksimović's loop (Fundamentals of Power
/// Electronics, 2nd ed., §9.4.2): Z = R + sL + s·L_c·T/(1 + T), T = ω₀/(s(1 + s/ω₂)), ω₀ = ω_c/sin φm,
/// ω₂ = ω_c·tan φm, L_c = R/ω_c (common practice), written here without the engine's tank.
fn regulator_z(f: f64) -> Complex64 {
    let (r, l, fc, pm) = REGULATOR;
    let s = Complex64::new(0.0, TWO_PI * f);
    let (wc, phi) = (TWO_PI * fc, pm.to_radians());
    let t = (wc / phi.sin()) / (s * (1.0 + s / (wc * phi.tan())));
    r + s * l + s * (r / wc) * t / (1.0 + t)
}

#[test]
fn a_measured_source_fits_back_to_the_regulator_it_was_written_from() {
    let board = read_board(&root().join("tests/networks/regulator_measured.json")).unwrap();
    let source = board.rails[0].source.as_ref().unwrap();
    let fit = source.loop_fit().expect("the file is fitted");
    let (r, l, fc, pm) = REGULATOR;
    // The data are exactly a regulator of this form, so the fit must return it: 1e-6 relative on R, L and the
    // crossover, 1e-4 degree on the margin (the solver's tolerance, far inside the file's 16 digits).
    assert!(rel(fit.r_ohm, r) < 1e-6, "R {}", fit.r_ohm);
    assert!(rel(fit.l_h, l) < 1e-6, "L {}", fit.l_h);
    assert!(rel(fit.crossover_hz, fc) < 1e-6, "crossover {}", fit.crossover_hz);
    assert!((fit.phase_margin_deg - pm).abs() < 1e-4, "margin {}", fit.phase_margin_deg);
    assert!(fit.worst_magnitude_error < 1e-6 && fit.worst_phase_error_deg < 1e-4 && fit.rms_residual < 1e-6);
    assert_eq!((fit.points, fit.range_hz), (61, [100.0, 1e8]));
    // The source is the fitted one everywhere: its R, L and loop are the fit's.
    assert_eq!((source.r_ohm, source.l_h), (fit.r_ohm, fit.l_h));
    let c = source.control.unwrap();
    assert_eq!((c.crossover_hz, c.phase_margin_deg), (fit.crossover_hz, fit.phase_margin_deg));
    // The check says so, with the fit's worst error.
    let a = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    let notes = explain(&board, &board.rails[0], &a);
    let note = notes.iter().find(|n| n.text.contains("fitted from measured data")).unwrap();
    assert!(note.text.contains("regulator_measured_out.s1p") && note.text.contains("worst error"), "{}", note.text);
}

#[test]
fn a_board_with_a_measured_source_gives_the_regulators_impedance_within_the_fits_error() {
    use hushrail::physics::Corner;
    let board = read_board(&root().join("tests/networks/regulator_measured.json")).unwrap();
    let rail = &board.rails[0];
    let fit = *rail.source.as_ref().unwrap().loop_fit().unwrap();
    let net = Network::of_rail_in(&board, rail, Corner::AsGiven);
    // The reference: the regulator's own impedance in parallel with the groups' series R-L-C (mounting added,
    // n in parallel), summed as admittances.
    let groups = [(1e-5, 0.004, 4e-10 + 3e-10, 6.0), (1e-7, 0.03, 2.5e-10 + 2e-10, 12.0)];
    for i in 0..=300 {
        let f = 100.0 * 10f64.powf(i as f64 / 50.0);
        let w = TWO_PI * f;
        let mut y = 1.0 / regulator_z(f);
        for (c, r, l, n) in groups {
            y += n / Complex64::new(r, w * l - 1.0 / (w * c));
        }
        let want = (1.0 / y).norm();
        let got = net.impedance(f).norm();
        // Only the source comes from the fit, and its admittance is at most the whole node's share, so the
        // node's |Z| error is bounded by the fit's worst |Z| error (plus rounding).
        assert!(rel(got, want) <= fit.worst_magnitude_error + 1e-9, "at {f} Hz: {got} vs {want}");
    }
}

#[test]
fn a_measured_source_is_refused_with_its_loop_or_a_bad_file() {
    let dir = tempfile::tempdir().unwrap();
    let fixture = std::fs::read_to_string(root().join("tests/networks/regulator_measured_out.s1p")).unwrap();
    std::fs::write(dir.path().join("reg.s1p"), &fixture).unwrap();
    let board = |source: &str| {
        format!(
            r#"{{"format": "hushrail-board", "version": 1, "name": "t",
               "parts": [{{"id": "c", "kind": "ceramic", "capacitance_f": 1e-5, "esr_ohm": 0.004, "esl_h": 4e-10}}],
               "rails": [{{"name": "R", "voltage_v": 1, "ripple_pct": 3, "band_hz": [1e3, 1e7], "source": {source},
                          "loads": [{{"name": "x", "step_a": 1}}], "decaps": [{{"part": "c", "count": 2, "mounting_h": 3e-10}}]}}]}}"#
        )
    };
    let read = |name: &str, source: &str| {
        let p = dir.path().join(name);
        std::fs::write(&p, board(source)).unwrap();
        read_board(&p).map_err(|e| e.to_string())
    };
    // The loop or the file, not both.
    let e = read("both.json", r#"{"touchstone": "reg.s1p", "r_ohm": 0.001, "loop_crossover_hz": 1e5}"#).unwrap_err();
    assert!(e.contains("rails[0].source.r_ohm") && e.contains("rails[0].source.loop_crossover_hz"), "{e}");
    assert!(e.contains("not both"), "{e}");
    // A file that is not there, named with the source's place.
    let e = read("missing.json", r#"{"touchstone": "nowhere.s1p"}"#).unwrap_err();
    assert!(e.contains("rails[0].source.touchstone") && e.contains("nowhere.s1p"), "{e}");
    // A broken line names the file and the line.
    let mut lines: Vec<&str> = fixture.lines().collect();
    lines[6] = "125.8 -0.99 oops";
    std::fs::write(dir.path().join("broken.s1p"), lines.join("\n")).unwrap();
    let e = read("broken.json", r#"{"touchstone": "broken.s1p"}"#).unwrap_err();
    assert!(e.contains("broken.s1p:7"), "{e}");
    // Data no regulator's loop describes (a capacitor) are refused with the reason.
    let f: Vec<f64> = (0..30).map(|i| 1e3 * 10f64.powf(i as f64 / 6.0)).collect();
    let z: Vec<Complex64> = f.iter().map(|&x| Complex64::new(0.0, -1.0 / (TWO_PI * x * 1e-6))).collect();
    std::fs::write(dir.path().join("cap.s1p"), hushrail::io::s1p_string(&f, &z, 50.0, &[])).unwrap();
    let e = read("cap.json", r#"{"touchstone": "cap.s1p"}"#).unwrap_err();
    assert!(e.contains("cap.s1p") && e.contains("regulator's output impedance"), "{e}");
    // A usable one reads, and is written back as its file, never its fit.
    let ok = read("ok.json", r#"{"touchstone": "reg.s1p"}"#).unwrap();
    let text = board_to_string(&ok);
    assert!(text.contains("\"touchstone\": \"reg.s1p\"") && !text.contains("loop_crossover_hz"), "{text}");
    let again = parse_board(&text, "again").unwrap();
    assert_eq!(again.rails[0].source.as_ref().unwrap().touchstone.as_deref(), Some("reg.s1p"));
    // The window keeps a board whose source file is unusable, with the source out of the network.
    let p = dir.path().join("missing.json");
    let kept = read_board_keeping_unusable(&p).unwrap();
    assert!(kept.rails[0].source.as_ref().unwrap().unusable().is_some());
    assert!(Network::of_rail(&kept, &kept.rails[0]).branches.iter().all(|b| b.label != "source"));
}

/// ngspice (a general-purpose circuit simulator) on the netlist of a rail whose only branch is the fitted source
/// gives the regulator's own impedance (Erickson's loop above): |Z| within the fit's worst error plus ngspice's
/// agreement elsewhere (0.1 %), phase within 0.1° plus the fit's.
#[test]
fn ngspice_on_the_fitted_source_gives_the_regulators_impedance() {
    use hushrail::analysis::{View, magnitude_phase};
    use hushrail::io::{AcSweep, parse_wrdata, rail_netlist};
    if !ngspice_available() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(root().join("tests/networks/regulator_measured_out.s1p"), dir.path().join("reg.s1p")).unwrap();
    let p = dir.path().join("only_source.json");
    std::fs::write(
        &p,
        r#"{"format": "hushrail-board", "version": 1, "name": "t", "parts": [],
            "rails": [{"name": "R", "voltage_v": 1, "ripple_pct": 3, "band_hz": [1e3, 1e7],
                       "source": {"touchstone": "reg.s1p"}, "loads": [{"name": "x", "step_a": 1}], "decaps": []}]}"#,
    )
    .unwrap();
    let board = read_board(&p).unwrap();
    let fit = *board.rails[0].source.as_ref().unwrap().loop_fit().unwrap();
    let sweep = AcSweep { from_hz: 100.0, to_hz: 1e8, points_per_decade: 20 };
    let rows =
        parse_wrdata(&run_ngspice(&rail_netlist(&board, &board.rails[0], &sweep, View::Board, "z.txt"), "z.txt"))
            .unwrap();
    assert_eq!(rows.len(), 121);
    for row in rows {
        let (f, spice) = (row[0], Complex64::new(row[1], row[2]));
        let (got_mag, got_phase) = magnitude_phase(spice);
        let (want_mag, want_phase) = magnitude_phase(regulator_z(f));
        assert!(rel(got_mag, want_mag) <= 1e-3 + fit.worst_magnitude_error, "at {f} Hz: {got_mag} vs {want_mag}");
        assert!((got_phase - want_phase).abs() <= 0.1 + fit.worst_phase_error_deg, "at {f} Hz: phase");
    }
}
