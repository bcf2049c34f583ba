//! The physics beyond the lumped list: mounting geometry, derating corners, the band from rise times, load
//! combination and coupling capacitor sizing, each against its named source.

use crate::common::*;
use hushrail::analysis::{AnalysisOptions, Network, analyze_rail, explain_band, target_impedance};
use hushrail::io::parse_board;
use hushrail::model::{Board, Combine, DecapGroup, Load, MountingGeometry, Part, PartKind, Rail};
use hushrail::physics::coupling::{ESeries, size_coupling};
use hushrail::physics::derating::{BiasSource, generic_bias_ratio, temperature_class};
use hushrail::physics::mounting::{
    MU0, group_mounting_h, mounting_breakdown, strip_inductance_per_m, via_partial_inductance, wire_pair_inductance,
};
use hushrail::physics::{Corner, derate};

const INCH: f64 = 0.0254;

/// Johnson and Graham, High-Speed Digital Design (1993): a via 0.063 in long of 0.016 in diameter has about 1.2 nH
/// (the book's worked example, from memory).
#[test]
fn via_partial_inductance_johnson_graham_example() {
    let l = via_partial_inductance(0.063 * INCH, 0.016 * INCH);
    assert!((l - 1.2e-9).abs() < 0.01e-9, "{l}");
}

/// Two parallel round conductors (Paul, Inductance: Loop and Partial, 2010): l = (μ0/π)·acosh(s/d) per length;
/// for wide spacing it tends to (μ0/π)·ln(2s/d), the thin-wire form found in handbooks.
#[test]
fn wire_pair_loop_inductance_paul() {
    let (d, len) = (0.3e-3, 1e-3);
    for ratio in [1.5f64, 3.0, 10.0, 100.0] {
        let exact = wire_pair_inductance(len, d, ratio * d);
        let by_cosh = MU0 / std::f64::consts::PI * len * ((ratio + (ratio * ratio - 1.0).sqrt()).ln());
        assert!((exact - by_cosh).abs() < 1e-12 * by_cosh);
        if ratio >= 10.0 {
            let thin = MU0 / std::f64::consts::PI * len * (2.0 * ratio).ln();
            assert!((exact - thin).abs() < 0.01 * thin, "s/d {ratio}: {exact} vs {thin}");
        }
    }
}

/// Hammerstad's microstrip formulas (1975) in air: the two branches meet at w/h = 1 (126 Ω, within 0.5 %), and a
/// wide strip tends to the parallel-plate inductance μ0·h/w (textbook).
#[test]
fn microstrip_inductance_hammerstad() {
    let below = strip_inductance_per_m(0.999_999, 1.0) * 299_792_458.0;
    let above = strip_inductance_per_m(1.000_001, 1.0) * 299_792_458.0;
    assert!((below - above).abs() < 0.005 * below, "{below} vs {above}");
    assert!((below - 126.0).abs() < 1.0, "Z0 in air at w/h = 1 is about 126 Ω (from memory): {below}");
    let (w, h) = (1.0, 1e-3);
    assert!((strip_inductance_per_m(w, h) - MU0 * h / w).abs() < 0.01 * MU0 * h / w);
}

fn geometry() -> MountingGeometry {
    MountingGeometry { vias_per_pad: 2, ..hushrail::physics::mounting::TYPICAL_GEOMETRY }
}

#[test]
fn mounting_total_is_the_sum_of_its_terms_and_feeds_the_network() {
    let g = geometry();
    let b = mounting_breakdown(&g);
    let traces = 2.0 * 0.5e-3 * strip_inductance_per_m(0.3e-3, 0.1e-3);
    let vias = wire_pair_inductance(0.8e-3, 0.25e-3, 0.7e-3) / 2.0;
    assert!((b.total_h - (traces + vias)).abs() < 1e-24);
    assert!(b.terms.iter().any(|t| !t.in_total), "the single-via rule is shown for comparison");
    assert!(b.warnings.iter().any(|w| w.contains("mutual")), "two vias per pad: the neglected mutual is said");
    let group = DecapGroup { mounting: Some(g), ..DecapGroup::new("c", 4, 0.0) };
    assert_eq!(group_mounting_h(&group), b.total_h);
}

#[test]
fn mounting_warns_outside_the_formulas_range() {
    let short_via = MountingGeometry { via_length_m: 0.2e-3, via_pitch_m: 1e-3, ..geometry() };
    assert!(mounting_breakdown(&short_via).warnings.iter().any(|w| w.contains("shorter than their pitch")));
    let odd_trace = MountingGeometry { trace_width_m: 10e-3, trace_height_m: 0.1e-3, ..geometry() };
    assert!(mounting_breakdown(&odd_trace).warnings.iter().any(|w| w.contains("outside 0.05 to 20")));
}

#[test]
fn mounting_cli_prints_the_breakdown() {
    let out = hushrail()
        .args(["mounting", "--via-length", "1.6m", "--via-pitch", "0.8m", "--vias-per-pad", "1", "--json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let g = MountingGeometry { via_length_m: 1.6e-3, via_pitch_m: 0.8e-3, vias_per_pad: 1, ..geometry() };
    assert_eq!(v["total_h"].as_f64().unwrap(), mounting_breakdown(&g).total_h);
    assert_eq!(v["terms"].as_array().unwrap().len(), 3);
    for t in v["terms"].as_array().unwrap() {
        assert!(!t["source"].as_str().unwrap().is_empty());
    }
    let bad = hushrail().args(["mounting", "--via-pitch", "0.1m"]).output().unwrap();
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("--via-pitch"));
}

fn ceramic(id: &str, c: f64, dielectric: &str, case: &str, rated: f64) -> Part {
    let mut p = Part::new(id, PartKind::Ceramic, c, 0.01, 5e-10);
    p.dielectric = Some(dielectric.into());
    p.case = Some(case.into());
    p.rated_voltage_v = Some(rated);
    p
}

fn one_rail_board(parts: Vec<Part>, decaps: Vec<DecapGroup>, voltage: f64) -> Board {
    Board {
        parts,
        rails: vec![Rail {
            name: "R".into(),
            voltage_v: voltage,
            ripple_pct: 5.0,
            band_hz: Some([1e3, 1e8]),
            combine: Combine::Sum,
            source: None,
            plane: None,
            package: None,
            die: None,
            loads: vec![Load::new("L", 1.0, None)],
            decaps,
            placement: None,
        }],
        ..Board::named("derating")
    }
}

/// The worst corner multiplies the part's own DC-bias ratio (linear between its points), the class limit of its
/// EIA-198 code (X5R: −15 %, from memory) and the end of its tolerance the vertex search chose (here the low end:
/// one part alone on a rail with no other branch is highest where its capacitance is lowest).
#[test]
fn worst_corner_multiplies_bias_temperature_and_tolerance() {
    let mut p = ceramic("c", 10e-6, "X5R", "0603", 6.3);
    p.tolerance_pct = Some(20.0);
    p.dc_bias = Some(vec![[1.0, 0.9], [3.0, 0.5]]);
    let board = one_rail_board(vec![p.clone()], vec![DecapGroup::new("c", 1, 0.0)], 1.8);
    let d = derate(&board, &p, 1.8, Corner::Worst);
    assert_eq!(d.bias_source, BiasSource::PartCurve);
    assert!((d.bias - (0.9 + (0.5 - 0.9) * 0.4)).abs() < 1e-15);
    assert_eq!(d.temperature, 0.85);
    let typical = derate(&board, &p, 1.8, Corner::Typical);
    assert_eq!((typical.bias, typical.temperature, typical.tolerance), (d.bias, 1.0, 1.0), "typical: the bias only");
    let as_given = derate(&board, &p, 1.8, Corner::AsGiven);
    assert_eq!(as_given.ratio(), 1.0, "as given: the values as typed");
    let a = analyze_rail(&board, 0, &AnalysisOptions { corner: Corner::Worst, ..Default::default() }).unwrap();
    assert_eq!(a.groups[0].derating.as_ref().unwrap().tolerance, 0.8);
    assert!((a.groups[0].effective_c_f - 10e-6 * d.ratio() * 0.8).abs() < 1e-18);
}

/// Class II ceramics without a curve get the generic model in the typical and worst corners (typical values
/// from memory: at its full rating a thin-layer part keeps about 20 %, a thick-layer one about 40 %); turning it
/// off on the board removes it; C0G never gets it.
#[test]
fn generic_bias_model_applies_to_class_ii_only_and_can_be_turned_off() {
    let full = generic_bias_ratio(Some("0402"), 10e-6, 6.3, 6.3);
    let thin = generic_bias_ratio(Some("0402"), 100e-9, 16.0, 16.0);
    assert!((0.1..=0.3).contains(&full), "a full 0402 at its rating keeps {full}");
    assert!((0.3..=0.5).contains(&thin), "a thick-layer 0402 at its rating keeps {thin}");
    assert_eq!(generic_bias_ratio(Some("0402"), 1e-6, 10.0, 0.0), 1.0);
    let x7r = ceramic("a", 1e-6, "X7R", "0402", 6.3);
    let c0g = ceramic("b", 1e-9, "C0G", "0402", 50.0);
    let mut board = one_rail_board(vec![x7r.clone(), c0g.clone()], vec![], 3.3);
    assert_eq!(derate(&board, &x7r, 3.3, Corner::Worst).bias_source, BiasSource::Generic);
    assert_eq!(derate(&board, &x7r, 3.3, Corner::Typical).bias_source, BiasSource::Generic);
    assert_eq!(derate(&board, &x7r, 3.3, Corner::AsGiven).bias_source, BiasSource::None);
    assert_eq!(derate(&board, &c0g, 3.3, Corner::Worst).bias_source, BiasSource::None);
    assert!(temperature_class("c0g").is_some_and(|c| !c.class_ii));
    board.generic_dc_bias = Some(false);
    assert_eq!(derate(&board, &x7r, 3.3, Corner::Worst).bias_source, BiasSource::None);
}

/// A board that uses none of the new fields computes exactly as a plain sum of series R-L-C branches.
#[test]
fn old_files_compute_exactly_as_before() {
    let board = hushrail::io::read_board(&root().join("tests/networks/big_small.json")).unwrap();
    let rail = &board.rails[0];
    let net = Network::of_rail(&board, rail);
    for f in hushrail::analysis::log_grid(1e4, 5e8, 50) {
        let mut y = num_complex::Complex64::new(0.0, 0.0);
        for g in &rail.decaps {
            let p = board.part(&g.part).unwrap();
            let w = std::f64::consts::TAU * f;
            let z = num_complex::Complex64::new(p.esr_ohm, w * (p.esl_h + g.mounting_h) - 1.0 / (w * p.capacitance_f));
            y += g.count as f64 / z;
        }
        let z = net.impedance(f);
        assert!((z - 1.0 / y).norm() <= 1e-12 * z.norm());
    }
}

/// Without band_hz the upper edge is 0.35 / the fastest rise time (single-pole 10-90 % edge, common practice)
/// and the lower edge the documented default; the words say where each came from.
#[test]
fn band_follows_the_fastest_rise_time() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"b","parts":[],
      "rails":[{"name":"R","voltage_v":1,"ripple_pct":5,"source":{"r_ohm":0.001,"l_h":1e-8},
      "loads":[{"name":"slow","step_a":1,"rise_time_s":1e-8},{"name":"fast","step_a":1,"rise_time_s":2e-9}],
      "decaps":[]}]}"#;
    let board = parse_board(text, "b.json").unwrap();
    let band = board.rails[0].band().unwrap();
    assert_eq!(band.hz, [hushrail::model::DEFAULT_BAND_LOW_HZ, 0.35 / 2e-9]);
    let words = explain_band(&band);
    assert!(words[1].contains("fast") && words[1].contains("0.35"), "{words:?}");
    assert!(words[0].contains("default"));
    let no_rise = text.replace(r#","rise_time_s":1e-8"#, "").replace(r#","rise_time_s":2e-9"#, "");
    let e = parse_board(&no_rise, "b.json").unwrap_err().to_string();
    assert!(e.contains("rails[0].band_hz") && e.contains("rise_time_s"), "{e}");
}

/// Uncorrelated loads combine root-sum-square (common practice): 3 A and 4 A make 5 A, so 1 V × 5 % gives 10 mΩ.
#[test]
fn rss_combination_sets_the_target() {
    let mut rail = one_rail_board(vec![], vec![], 1.0).rails.remove(0);
    rail.loads = vec![Load::new("a", 3.0, None), Load::new("b", 4.0, None)];
    assert!((target_impedance(&rail) - 0.05 / 7.0).abs() < 1e-15);
    rail.combine = Combine::Rss;
    assert!((target_impedance(&rail) - 0.01).abs() < 1e-15);
}

/// C = 1/(2π·Z·f_corner): 100 Ω with the corner ten times below 20 Hz gives 796 µF (the factor of ten is common
/// practice); the next E12 value up is 820 µF.
#[test]
fn coupling_capacitor_for_20_hz_into_100_ohm() {
    let c = size_coupling(100.0, 20.0, 10.0, ESeries::E12);
    assert!((c.exact_f - 795.77e-6).abs() < 0.01e-6, "{}", c.exact_f);
    assert!((c.preferred_f - 820e-6).abs() < 1e-12);
    assert!(c.corner_hz < 2.0 && c.loss_db < 0.05);
    let out = hushrail().args(["coupling", "--impedance", "100", "--lowest", "20", "--json"]).output().unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!((v["exact_f"].as_f64().unwrap() - 795.77e-6).abs() < 0.01e-6);
    assert_eq!(v["notes"].as_array().unwrap().len(), 3);
}

/// IEC 60063: E96 values are 10^(i/96) rounded to three digits; E24 values are 10^(i/24) rounded to two digits
/// except the historical 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2 (from memory); E12 and E6 take every second
/// and fourth E24 value.
#[test]
fn e_series_follow_iec_60063() {
    let e96 = ESeries::E96.decade();
    assert_eq!(e96.len(), 96);
    for (i, v) in e96.iter().enumerate() {
        let formula = (10f64.powf(i as f64 / 96.0) * 100.0).round() / 100.0;
        assert!((v - formula).abs() < 1e-9, "E96[{i}] = {v}, formula {formula}");
    }
    let e24 = ESeries::E24.decade();
    let exceptions = [10, 11, 12, 13, 14, 15, 16, 22];
    for (i, v) in e24.iter().enumerate() {
        let formula = (10f64.powf(i as f64 / 24.0) * 10.0).round() / 10.0;
        if exceptions.contains(&i) {
            assert!((v - formula).abs() > 0.05 && (v - formula).abs() < 0.15, "E24[{i}] = {v}");
        } else {
            assert!((v - formula).abs() < 1e-9, "E24[{i}] = {v}, formula {formula}");
        }
    }
    assert_eq!(ESeries::E12.decade(), e24.iter().step_by(2).copied().collect::<Vec<_>>());
    assert_eq!(ESeries::E6.decade(), vec![1.0, 1.5, 2.2, 3.3, 4.7, 6.8]);
    assert!((ESeries::E24.next_up(4.75e-6) - 5.1e-6).abs() < 1e-18);
    assert!((ESeries::E12.next_up(8.3) - 10.0).abs() < 1e-12);
    assert!((ESeries::E12.next_up(4.7e-9) - 4.7e-9).abs() < 1e-21, "a preferred value is its own next value up");
}

/// At the die, the package (plus the board's inductance behind it) against the die capacitance makes a parallel
/// resonance at f ≈ 1/(2π√((L_package + L_board)·C_die)) (textbook parallel LC tank); the finding names the die
/// as its capacitive side.
#[test]
fn die_view_peak_is_the_package_path_against_the_die() {
    let board = hushrail::io::read_board(&root().join("tests/networks/package_die.json")).unwrap();
    let rail = &board.rails[0];
    let a = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    assert_eq!(a.view, hushrail::analysis::View::Die);
    let (pkg, die) = (rail.package.unwrap(), rail.die.unwrap());
    let peak = a
        .antiresonances
        .iter()
        .find(|p| p.capacitive_side.as_ref().is_some_and(|b| b.kind == hushrail::analysis::BranchKind::Die))
        .expect("a peak against the die capacitance");
    let board_only = Network::of_rail(&board, &hushrail::model::Rail { package: None, die: None, ..rail.clone() });
    let w = std::f64::consts::TAU * peak.freq_hz;
    let l_board = board_only.impedance(peak.freq_hz).im / w;
    let f_tank = 1.0 / (std::f64::consts::TAU * ((pkg.l_h + l_board) * die.capacitance_f).sqrt());
    assert!((peak.freq_hz - f_tank).abs() < 0.1 * f_tank, "peak {} vs tank {f_tank}", peak.freq_hz);
}
