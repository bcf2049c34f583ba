//! Droop in time against outside references:
//! - ngspice .tran (ngspice, a general-purpose circuit simulator, Debian package `ngspice`) on the same network and
//!   the same stimulus (the ramp over rise/0.8, and the band filter built as two buffered R-C sections when the tool
//!   filters): the lowest voltage within 1 % of the droop and its time within 1 %;
//! - the trapezoidal integrator kept in the library as the reference for the exact modal method;
//! - the 10-90 % rise time as IEEE Std 181-2011 defines a transition duration (the 10 % and 90 % reference levels);
//! - the worst pattern against a brute-force search over patterns, and its droop reached in ngspice (linear
//!   superposition, the basis of the reverse pulse technique, Drabkin et al., EPEP 2002);
//! - the sustained-resonance estimate against a single parallel resonance computed by hand (the peak of an L ∥ C
//!   with series losses, |Z| ≈ (L/C)/(R_L + R_C), any circuits textbook; the square wave's fundamental 2/π·ΔI from
//!   its Fourier series).

use crate::common::*;
use hushrail::analysis::{
    Droop, DroopError, DroopOptions, Network, Pulse, WorstCase, droop, pattern_response, rail_modes, step_integrated,
    step_waveform, worst_pattern_over,
};
use hushrail::io::{Transient, mesh_tran_netlist, parse_wrdata, rail_tran_netlist};
use hushrail::model::Board;
use hushrail::physics::Corner;

const DATA: &str = "hushrail_tran.txt";

/// Longest window the ngspice comparisons simulate (keeps ngspice's run short).
const MAX_WINDOW: f64 = 4e-6;

/// Run ngspice on a PWL load (through the droop's band filter when it has one) and return (t, V) rows. ngspice's
/// step control now and then gives up at the load's first corner on these networks ("timestep too small", the data
/// ending there); a smaller largest step then gets it through, so the run is repeated with one, up to four times.
fn ngspice_tran(board: &Board, rail: usize, load: Vec<(f64, f64)>, d: &Droop, stop_s: f64) -> Vec<(f64, f64)> {
    let mut max_step = (d.ramp_s / 50.0).min(stop_s / 4000.0);
    for _ in 0..5 {
        let tran = Transient {
            load: load.clone(),
            step_s: max_step,
            stop_s,
            max_step_s: max_step,
            filter_poles_hz: d.filter.map(|f| f.poles_hz),
        };
        let text = run_ngspice(&rail_tran_netlist(board, &board.rails[rail], &tran, DATA), DATA);
        let rows: Vec<(f64, f64)> = parse_wrdata(&text).unwrap().into_iter().map(|r| (r[0], r[1])).collect();
        if rows.last().is_some_and(|r| r.0 >= stop_s * (1.0 - 1e-9)) {
            return rows;
        }
        max_step /= 2.7;
    }
    panic!("ngspice did not get through {stop_s} s");
}

fn lowest(rows: &[(f64, f64)]) -> (f64, f64) {
    rows.iter().copied().min_by(|a, b| a.1.total_cmp(&b.1)).unwrap()
}

/// The piecewise-linear corners of a pattern of ramped pulses (exact: the current is linear between them).
fn pattern_corners(pattern: &[Pulse], step: f64, ramp: f64) -> Vec<(f64, f64)> {
    let mut times: Vec<f64> = vec![0.0];
    for p in pattern {
        times.extend([p.on_s, p.on_s + ramp, p.off_s, p.off_s + ramp]);
    }
    times.sort_by(f64::total_cmp);
    times.dedup_by(|a, b| (*a - *b).abs() < 1e-18);
    let r = |x: f64| (x / ramp).clamp(0.0, 1.0);
    times.iter().map(|&t| (t, step * pattern.iter().map(|p| r(t - p.on_s) - r(t - p.off_s)).sum::<f64>())).collect()
}

fn short_window(board: &Board, rail: usize, band_limit: bool) -> DroopOptions {
    let full = droop(board, rail, &DroopOptions { points: Some(200), ..Default::default() }).unwrap();
    DroopOptions {
        window_s: Some(full.window_s.min(MAX_WINDOW)),
        points: Some(200),
        band_limit: Some(band_limit),
        ..Default::default()
    }
}

/// Every lumped rail with a source, by (name, board, index). A placed rail's droop is its loads' impedances
/// through the plane pair, fitted (droop/placed.rs); the one-node references here (the integrator and
/// `netlist --droop`) describe the lumped network, so they judge only lumped rails.
fn droop_rails() -> Vec<(String, Board, usize)> {
    let mut out = Vec::new();
    for (stem, _, board) in reference_boards() {
        for (i, rail) in board.rails.iter().enumerate() {
            if rail.source.is_some() && rail.placement.is_none() {
                out.push((format!("{stem}/{}", rail.name), board.clone(), i));
            }
        }
    }
    out
}

#[test]
fn step_droop_matches_ngspice_tran_filtered_or_not_as_stated() {
    if !ngspice_available() {
        return;
    }
    let mut checked = 0;
    let mut filtered = 0;
    for (what, board, i) in droop_rails() {
        for band_limit in [true, false] {
            let d = droop(&board, i, &short_window(&board, i, band_limit)).unwrap();
            if band_limit && d.filter.is_none() {
                continue; // the same run as unfiltered
            }
            filtered += usize::from(d.filter.is_some());
            let stop = d.window_s;
            let rows = ngspice_tran(&board, i, vec![(0.0, 0.0), (d.ramp_s, d.step_a)], &d, stop);
            let (t_ref, v_ref) = lowest(&rows);
            let droop_ref = d.nominal_v - v_ref;
            let tag = format!("{what} ({})", if d.filter.is_some() { "filtered" } else { "unfiltered" });
            if d.t_min_s > stop {
                // The lowest voltage is the settled one (V − R_dc·ΔI, approached from above long after the window).
                eprintln!(
                    "{tag}: settles to its lowest {:.5e} V; ngspice {droop_ref:.5e} V by {stop:.3e} s",
                    d.droop_v
                );
                assert!(droop_ref <= d.droop_v * 1.001 && rel(d.droop_v, d.nominal_v - d.final_v) < 1e-4, "{tag}");
                continue;
            }
            eprintln!("{tag}: droop {:.5e} V vs {droop_ref:.5e} V, at {:.5e} s vs {t_ref:.5e} s", d.droop_v, d.t_min_s);
            assert!(
                (d.droop_v - droop_ref).abs() <= 0.01 * droop_ref,
                "{tag}: droop {} vs ngspice {droop_ref}",
                d.droop_v
            );
            assert!((d.t_min_s - t_ref).abs() <= 0.01 * t_ref, "{tag}: t_min {} vs ngspice {t_ref}", d.t_min_s);
            checked += 1;
        }
    }
    assert!(checked >= 9 && filtered >= 2, "{checked} runs, {filtered} filtered");
}

/// The exact modal method against the library's own time-stepping reference, unfiltered, on every rail.
#[test]
fn modal_step_matches_the_integrator() {
    for (what, board, i) in droop_rails() {
        let options = short_window(&board, i, false);
        let d = droop(&board, i, &options).unwrap();
        let r = step_integrated(&board, i, &options).unwrap();
        let (a, b) = (d.droop_v, d.nominal_v - r.min_v);
        if d.t_min_s > r.window_s {
            // Lowest at the settled value, after the window: the integrator only approaches it.
            assert!(b <= a * 1.001 && rel(a, d.nominal_v - d.final_v) < 1e-4, "{what}: {a} vs {b}");
            continue;
        }
        assert!((a - b).abs() <= 2e-3 * b, "{what}: modal {a} vs integrator {b}");
        assert!(
            (d.t_min_s - r.t_min_s).abs() <= 0.01 * r.t_min_s.max(d.ramp_s),
            "{what}: {} vs {}",
            d.t_min_s,
            r.t_min_s
        );
    }
}

/// The poles and residues give back the frequency-domain impedance the verdict uses (at the die where the rail has
/// a package), 1 kHz to 1 GHz.
#[test]
fn modal_impedance_equals_the_network_impedance() {
    for (what, board, i) in droop_rails() {
        let network = Network::of_rail(&board, &board.rails[i]);
        if network.branches.iter().any(|b| b.measured.is_some()) {
            continue; // the time domain uses the fitted R-L-C
        }
        let modes = rail_modes(&network).unwrap();
        for k in 0..=60 {
            let f = 1e3 * 10f64.powf(k as f64 / 10.0);
            let s = num_complex::Complex64::new(0.0, 2.0 * std::f64::consts::PI * f);
            let ours = modes.main.eval(s);
            let theirs = network.impedance_in(f, network.verdict_view());
            assert!((ours - theirs).norm() <= 1e-6 * theirs.norm(), "{what} at {f} Hz: {ours} vs {theirs}");
        }
    }
}

/// IEEE Std 181-2011: the transition duration is the time between the 10 % and 90 % reference levels. On a purely
/// resistive rail the drop follows the load's current, so its 10-90 % time is the rise time asked for.
#[test]
fn the_rise_time_is_the_edges_10_to_90_percent_time() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"r","parts":[],
      "rails":[{"name":"R","voltage_v":1.0,"ripple_pct":5,"band_hz":[1e3,1e9],"source":{"r_ohm":0.01,"l_h":0},
      "loads":[{"name":"l","step_a":2,"rise_time_s":1e-9}],"decaps":[]}]}"#;
    let board = hushrail::io::parse_board(text, "r.json").unwrap();
    let d =
        droop(&board, 0, &DroopOptions { window_s: Some(2e-9), points: Some(20001), ..Default::default() }).unwrap();
    assert!(d.filter.is_none(), "0.35/1 ns is inside the 1 GHz band");
    let full = 0.02;
    let cross = |level: f64| d.waveform.iter().find(|p| d.nominal_v - p[1] >= level * full).unwrap()[0];
    let t10_90 = cross(0.9) - cross(0.1);
    assert!((t10_90 - 1e-9).abs() <= 2e-13, "10-90 % time {t10_90}");
    assert!((d.ramp_s - 1.25e-9).abs() < 1e-20);
}

/// Textbook check: a regulator modelled as a pure resistance R with no capacitors settles at once to V − R·ΔI.
#[test]
fn resistive_source_gives_ohms_law() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"r","parts":[],
      "rails":[{"name":"R","voltage_v":1.0,"ripple_pct":5,"band_hz":[1e3,1e6],"source":{"r_ohm":0.01,"l_h":0},
      "loads":[{"name":"l","step_a":2,"rise_time_s":1e-9}],"decaps":[]}]}"#;
    let board = hushrail::io::parse_board(text, "r.json").unwrap();
    let d = droop(&board, 0, &DroopOptions { window_s: Some(1e-8), band_limit: Some(false), ..Default::default() })
        .unwrap();
    assert!((d.droop_v - 0.02).abs() < 1e-12, "{}", d.droop_v);
    assert!((d.final_v - 0.98).abs() < 1e-12);
    assert!(d.meets, "20 mV within 50 mV");
}

#[test]
fn worst_case_pattern_reaches_its_droop_in_ngspice() {
    if !ngspice_available() {
        return;
    }
    for (board_file, rail_name) in
        [("tests/networks/regulator_plane.json", "CORE"), ("sample_boards/edge_camera.json", "VDDR")]
    {
        let board = hushrail::io::read_board(&root().join(board_file)).unwrap();
        let i = board.rail_index(rail_name).unwrap();
        let d = droop(&board, i, &short_window(&board, i, true)).unwrap();
        let WorstCase::Bounded { droop_v, pattern, t_s, .. } = &d.worst_case else { panic!("bounded") };
        assert!(!pattern.is_empty());
        assert!(*droop_v >= d.droop_v * (1.0 - 1e-9), "the worst case is at least the single step");
        let rows = ngspice_tran(&board, i, pattern_corners(pattern, d.step_a, d.ramp_s), &d, t_s * 1.05 + d.ramp_s);
        let (t_ref, v_ref) = lowest(&rows);
        let reached = d.nominal_v - v_ref;
        eprintln!(
            "{board_file}/{rail_name}: worst {droop_v:.5e} V at {t_s:.5e} s, ngspice {reached:.5e} V at {t_ref:.5e} s"
        );
        assert!(
            (reached - droop_v).abs() <= 0.01 * droop_v,
            "{board_file}/{rail_name}: ngspice reaches {reached} at {t_ref}, computed {droop_v} at {t_s}"
        );
        // Every on and off interval respects the shortest interval.
        for w in pattern.windows(2) {
            assert!(w[1].on_s - w[0].off_s >= d.min_interval_s * (1.0 - 1e-9));
        }
        for p in pattern {
            assert!(p.off_s - p.on_s >= d.min_interval_s * (1.0 - 1e-9));
        }
    }
}

/// A small deterministic generator, so the random patterns are the same on every run.
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// A random on/off pattern over `d`'s window: every on and off interval from `d`'s shortest interval up to 80 ns
/// past it, the first edge within 50 ns.
fn random_pattern(rng: &mut Lcg, d: &Droop) -> Vec<Pulse> {
    let mut pattern = Vec::new();
    let mut t = rng.next() * 50e-9;
    while t < d.window_s {
        let on = rng.next() * 80e-9 + d.min_interval_s;
        let off = rng.next() * 80e-9 + d.min_interval_s;
        pattern.push(Pulse { on_s: t, off_s: t + on });
        t += on + off;
    }
    pattern
}

/// Random patterns that keep the shortest interval never droop more than the worst case; one of them run through
/// ngspice lands where our superposition does.
#[test]
fn random_patterns_never_droop_more_than_the_worst_case() {
    let board = hushrail::io::read_board(&root().join("tests/networks/regulator_plane.json")).unwrap();
    let i = board.rail_index("CORE").unwrap();
    let options = DroopOptions { window_s: Some(1e-6), points: Some(400), ..Default::default() };
    let d = droop(&board, i, &options).unwrap();
    let worst = d.worst_case_droop_v().unwrap();
    let mut rng = Lcg(7);
    let mut pattern = Vec::new();
    for _ in 0..40 {
        pattern = random_pattern(&mut rng, &d);
        let v_min = pattern_response(&board, i, None, &pattern, &options).unwrap().min_v;
        let dr = d.nominal_v - v_min;
        // The worst pattern's ages are chosen on samples of the step response (0.15 rad of its fastest live mode
        // apart, extrema refined by a parabola): a pattern elsewhere can beat it by that resolution only.
        assert!(dr <= worst * (1.0 + 1e-3), "random pattern droops {dr} > worst {worst}");
    }
    // The computed pattern itself reaches the worst case in our own response too.
    let WorstCase::Bounded { t_s, .. } = &d.worst_case else { panic!("bounded") };
    let opts = DroopOptions { window_s: Some(t_s + 1e-8), ..options };
    let v_min = pattern_response(&board, i, None, d.worst_case.pattern(), &opts).unwrap().min_v;
    let reached = d.nominal_v - v_min;
    // Its lowest sample on this grid, against the refined lowest point of the same response.
    assert!((reached - worst).abs() <= 1e-3 * worst, "{reached} vs {worst}");
    if ngspice_available() {
        let ours = pattern_response(&board, i, None, &pattern, &options).unwrap().min_v;
        let rows = ngspice_tran(&board, i, pattern_corners(&pattern, d.step_a, d.ramp_s), &d, d.window_s);
        let (_, theirs) = lowest(&rows);
        let (a, b) = (d.nominal_v - ours, d.nominal_v - theirs);
        assert!((a - b).abs() <= 0.01 * b, "random pattern: ours {a} vs ngspice {b}");
    }
}

/// The dynamic programme against every alternating choice of edge ages on a small grid, with and without the
/// shortest interval and a pulse limit.
#[test]
fn worst_pattern_equals_brute_force_over_patterns() {
    let mut rng = Lcg(11);
    for case in 0..30 {
        let n = 14;
        let tau: Vec<f64> = (0..n).map(|k| k as f64).collect();
        let mut s: Vec<f64> = (0..n).map(|_| rng.next() * 2.0 - 0.5).collect();
        s[0] = 0.0;
        for (gap, limit) in [(0.0, None), (1.0, None), (2.0, None), (3.0, None), (1.0, Some(1)), (2.0, Some(2))] {
            let (best, pulses) = worst_pattern_over(&tau, &s, gap, limit);
            // Brute force: every increasing sequence of ages, alternately off (even positions) and on (odd),
            // may start with an off at any age, must end with an on.
            let mut brute = 0.0f64;
            for mask in 0u32..(1 << n) {
                let ages: Vec<usize> = (0..n).filter(|k| mask >> k & 1 == 1).collect();
                for start_off in [true, false] {
                    let mut chosen = ages.clone();
                    if !start_off {
                        // The load is on at T: an implicit off at age 0.
                        if chosen.first() == Some(&0) {
                            continue;
                        }
                        chosen.insert(0, 0);
                    }
                    if chosen.len() % 2 == 1 {
                        continue;
                    }
                    // Every interval at least the gap, except the last on interval of a load still on at T (the
                    // implicit off at age 0): it continues past T.
                    let skip = usize::from(!start_off);
                    if chosen.windows(2).skip(skip).any(|w| tau[w[1]] - tau[w[0]] < gap) {
                        continue;
                    }
                    if limit.is_some_and(|l| chosen.len() / 2 > l) {
                        continue;
                    }
                    let v: f64 = chosen.chunks(2).map(|c| s[c[1]] - s[c[0]]).sum();
                    brute = brute.max(v);
                }
            }
            assert!((best - brute).abs() < 1e-12, "case {case} gap {gap} limit {limit:?}: {best} vs {brute}");
            let again: f64 = pulses.iter().map(|&(on, off)| s[on] - s[off]).sum();
            assert!((again - best).abs() < 1e-12, "the pattern gives its droop");
        }
    }
}

/// A single parallel resonance by hand: a source of R_s + L_s against one capacitor of C and ESR R_c, peak
/// |Z| ≈ (L/C)/(R_s + R_c) at f = 1/(2π√(LC)) (high Q); the estimate is ΔI·((2/π)|Z| + R_s/2).
#[test]
fn sustained_resonance_estimate_on_a_single_resonance() {
    let (rs, ls, c, rc, di): (f64, f64, f64, f64, f64) = (2e-3, 10e-9, 10e-6, 2e-3, 1.0);
    let text = format!(
        r#"{{"format":"hushrail-board","version":1,"name":"one","parts":[{{"id":"c","kind":"ceramic",
        "capacitance_f":{c},"esr_ohm":{rc},"esl_h":0}}],
        "rails":[{{"name":"R","voltage_v":1.0,"ripple_pct":5,"band_hz":[1e3,1e8],"source":{{"r_ohm":{rs},"l_h":{ls}}},
        "loads":[{{"name":"l","step_a":{di},"rise_time_s":1e-8}}],"decaps":[{{"part":"c","count":1,"mounting_h":0}}]}}]}}"#
    );
    let board = hushrail::io::parse_board(&text, "one.json").unwrap();
    let d = droop(&board, 0, &DroopOptions::default()).unwrap();
    let s = d.sustained.clone().unwrap();
    let f0 = 1.0 / (2.0 * std::f64::consts::PI * (ls * c).sqrt());
    let z_hand = (ls / c) / (rs + rc);
    assert!(rel(s.peak_hz, f0) < 0.01, "{} vs {f0}", s.peak_hz);
    assert!(rel(s.z_ohm, z_hand) < 0.01, "{} vs {z_hand}", s.z_ohm);
    let hand = di * (2.0 / std::f64::consts::PI * z_hand + rs / 2.0);
    assert!(rel(s.droop_v, hand) < 0.01, "{} vs {hand}", s.droop_v);
    // The worst pattern drives the same resonance: at least the estimate's AC part, and its dominant frequency
    // is the peak's.
    let WorstCase::Bounded { droop_v, dominant_hz, .. } = &d.worst_case else { panic!() };
    assert!(*droop_v >= 0.9 * di * 2.0 / std::f64::consts::PI * z_hand, "{droop_v}");
    assert!(rel(dominant_hz.unwrap(), f0) < 0.05, "{dominant_hz:?} vs {f0}");
}

/// A rail with no damping anywhere: its worst pattern is unbounded and it never settles, however long the window.
#[test]
fn a_lossless_rail_is_unbounded_not_a_large_number() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"lossless","parts":[{"id":"c","kind":"film",
      "capacitance_f":1e-6,"esr_ohm":0,"esl_h":1e-9}],
      "rails":[{"name":"R","voltage_v":1.0,"ripple_pct":5,"band_hz":[1e3,1e8],"source":{"r_ohm":0,"l_h":1e-8},
      "loads":[{"name":"l","step_a":1,"rise_time_s":1e-8}],"decaps":[{"part":"c","count":1,"mounting_h":0}]}]}"#;
    let board = hushrail::io::parse_board(text, "l.json").unwrap();
    let mut droops = Vec::new();
    for window in [1e-5, 1e-4, 1e-3] {
        let d = droop(&board, 0, &DroopOptions { window_s: Some(window), ..Default::default() }).unwrap();
        assert_eq!(d.worst_case, WorstCase::Unbounded, "window {window}");
        assert_eq!(d.settling_s, None);
        droops.push(d.droop_v);
    }
    assert!(droops.iter().all(|x| rel(*x, droops[0]) < 1e-6), "{droops:?}");
}

#[test]
fn a_rail_without_source_is_explained() {
    let board = hushrail::io::read_board(&root().join("tests/networks/big_small.json")).unwrap();
    let e = droop(&board, 0, &DroopOptions::default()).unwrap_err();
    assert!(matches!(e, DroopError::NoDcPath { .. }));
    assert!(e.to_string().contains("no source"));
    let out = hushrail()
        .args(["droop", "tests/networks/big_small.json", "--rail", "R1"])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("falls without end"));
}

/// The one band: VDDR of the sample board meets its impedance target, and its step droop and worst pattern,
/// filtered to that band, agree.
#[test]
fn sample_vddr_agrees_with_its_impedance_verdict() {
    let board = hushrail::samples::default_board().unwrap();
    let i = board.rail_index("VDDR").unwrap();
    let d = droop(&board, i, &DroopOptions::default()).unwrap();
    assert!(d.filter.is_some());
    assert!(d.meets, "{}", d.droop_v);
    assert!(d.worst_case_meets, "{:?}", d.worst_case);
}

fn json_of(args: &[&str]) -> (Option<i32>, serde_json::Value, String) {
    let out = hushrail().args(args).current_dir(root()).output().unwrap();
    let v = serde_json::from_slice(&out.stdout).unwrap_or(serde_json::Value::Null);
    (out.status.code(), v, String::from_utf8_lossy(&out.stderr).into_owned())
}

fn has_null(v: &serde_json::Value) -> bool {
    match v {
        serde_json::Value::Null => true,
        serde_json::Value::Array(a) => a.iter().any(has_null),
        serde_json::Value::Object(o) => o.values().any(has_null),
        _ => false,
    }
}

#[test]
fn droop_cli_json_has_the_contract_fields_and_no_null() {
    for rail in ["VCORE", "VDDR", "V3V3_IO"] {
        let (code, v, _) = json_of(&["droop", "sample_boards/edge_camera.json", "--rail", rail, "--json"]);
        for k in
            ["rail", "step_a", "rise_s", "ramp_s", "min_v", "t_min_s", "droop_v", "allowed_v", "meets", "worst_case"]
        {
            assert!(!v[k].is_null(), "{rail}: {k} missing");
        }
        assert!(!has_null(&v), "{rail}: a null in {v}");
        let meets = v["meets"].as_bool().unwrap();
        assert_eq!(code, Some(if meets { 0 } else { 1 }));
    }
}

/// The CSV keeps each interval's extremes: its lowest point is the lowest voltage the text prints.
#[test]
fn csv_holds_the_lowest_point() {
    let (_, v, _) = json_of(&["droop", "sample_boards/edge_camera.json", "--rail", "VDDR", "--window", "2u", "--json"]);
    let min_v = v["min_v"].as_f64().unwrap();
    let csv = hushrail()
        .args([
            "droop",
            "sample_boards/edge_camera.json",
            "--rail",
            "VDDR",
            "--window",
            "2u",
            "--points",
            "11",
            "--csv",
        ])
        .current_dir(root())
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&csv.stdout);
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines[0], "t_s,v");
    assert!(lines.len() >= 12, "the 11 grid points at least");
    let rows: Vec<(f64, f64)> = lines[1..]
        .iter()
        .map(|l| {
            let mut it = l.split(',').map(|x| x.parse::<f64>().unwrap());
            (it.next().unwrap(), it.next().unwrap())
        })
        .collect();
    assert!(rows.windows(2).all(|w| w[1].0 >= w[0].0), "in time order");
    assert_eq!(rows.last().unwrap().0, 2e-6);
    let lowest = rows.iter().map(|r| r.1).fold(f64::INFINITY, f64::min);
    assert!((lowest - min_v).abs() <= 1e-12, "CSV lowest {lowest} vs {min_v}");
}

/// `droop --csv` computes only the step (no worst pattern, no sustained estimate): its waveform and verdict are the
/// full analysis's to the bit on every rail, filtered or not, and the CSV prints exactly that waveform.
#[test]
fn the_step_alone_is_the_full_droops_step() {
    for (what, board, i) in droop_rails() {
        for band_limit in [true, false] {
            let options = DroopOptions {
                window_s: Some(4e-6),
                points: Some(301),
                band_limit: Some(band_limit),
                ..Default::default()
            };
            let d = droop(&board, i, &options).unwrap();
            let s = step_waveform(&board, i, &options).unwrap();
            assert_eq!(s.waveform, d.waveform, "{what}, band limit {band_limit}");
            assert_eq!(s.meets, d.meets, "{what}, band limit {band_limit}");
        }
    }
    let board = hushrail::io::read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let i = board.rail_index("VCORE").unwrap();
    let options = DroopOptions { window_s: Some(4e-6), points: Some(2001), ..Default::default() };
    let d = droop(&board, i, &options).unwrap();
    let out = hushrail()
        .args([
            "droop",
            "sample_boards/edge_camera.json",
            "--rail",
            "VCORE",
            "--window",
            "4u",
            "--points",
            "2001",
            "--csv",
        ])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(if d.meets { 0 } else { 1 }));
    assert_eq!(csv_rows(&out.stdout), d.waveform, "the CSV is the full analysis's waveform, full precision");
}

/// The (t, V) rows of `droop --csv`'s output, past its header.
fn csv_rows(stdout: &[u8]) -> Vec<[f64; 2]> {
    String::from_utf8_lossy(stdout)
        .lines()
        .skip(1)
        .map(|l| {
            let mut it = l.split(',').map(|x| x.parse::<f64>().unwrap());
            [it.next().unwrap(), it.next().unwrap()]
        })
        .collect()
}

/// Inputs that once asked for gigabytes or gave NaN: bounded, finite, or refused naming the flag (exit 2).
#[test]
fn droop_cost_is_bounded_and_bad_flags_are_named() {
    let b = "sample_boards/edge_camera.json";
    for args in [
        vec!["droop", b, "--rail", "VDDR", "--window", "1", "--json"],
        vec!["droop", b, "--rail", "VDDR", "--rise", "1e-12", "--json"],
        vec!["droop", b, "--rail", "VCORE", "--window", "1e6", "--points", "100000", "--json"],
    ] {
        let (code, v, err) = json_of(&args);
        assert!(matches!(code, Some(0 | 1)), "{args:?}: {code:?} {err}");
        assert!(!has_null(&v), "{args:?}");
        assert!(v["droop_v"].as_f64().unwrap().is_finite());
    }
    // `--window 1` gives the same droop as the default window, and a note that the window is long.
    let (_, short, _) = json_of(&["droop", b, "--rail", "VDDR", "--json"]);
    let (_, long, _) = json_of(&["droop", b, "--rail", "VDDR", "--window", "1", "--json"]);
    assert!(rel(long["droop_v"].as_f64().unwrap(), short["droop_v"].as_f64().unwrap()) < 1e-9);
    assert_eq!(long["meets"], short["meets"]);
    for (flag, value) in [("--window", "4294967296"), ("--step", "1e308"), ("--rise", "0"), ("--rise", "1e-400")] {
        let (code, _, err) = json_of(&["droop", b, "--rail", "VDDR", flag, value, "--json"]);
        assert_eq!(code, Some(2), "{flag} {value}");
        assert!(err.contains(flag), "{flag} {value}: {err}");
    }
    // The netlist and the report with droop run in bounded time too.
    let out = hushrail()
        .args(["netlist", b, "--rail", "VDDR", "--droop", "--window", "1"])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let dir = tempfile::tempdir().unwrap();
    let html = dir.path().join("r.html");
    let out = hushrail().args(["report", b, "-o", html.to_str().unwrap()]).current_dir(root()).output().unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
}

/// A source of 0.1 µΩ (a default window of seconds) and a rail with a part fitted from a Touchstone file.
#[test]
fn long_default_windows_and_measured_parts_are_bounded() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"r","parts":[{"id":"c","kind":"ceramic",
      "capacitance_f":1e-5,"esr_ohm":0.003,"esl_h":5e-10}],
      "rails":[{"name":"R","voltage_v":1.0,"ripple_pct":5,"band_hz":[1e3,1e8],"source":{"r_ohm":1e-7,"l_h":2e-8},
      "loads":[{"name":"l","step_a":1,"rise_time_s":1e-9}],"decaps":[{"part":"c","count":4,"mounting_h":3e-10}]}]}"#;
    let board = hushrail::io::parse_board(text, "r.json").unwrap();
    let d = droop(&board, 0, &DroopOptions::default()).unwrap();
    assert!(d.droop_v.is_finite() && d.waveform.iter().all(|p| p[1].is_finite()));
    assert!(d.waveform.len() <= 3 * 2000 + 4);
    for (stem, _, board) in reference_boards() {
        for (i, rail) in board.rails.iter().enumerate() {
            if rail.source.is_none() {
                continue;
            }
            let d = droop(&board, i, &DroopOptions::default()).unwrap();
            assert!(d.droop_v.is_finite(), "{stem}/{}", rail.name);
        }
    }
}

/// A 1 H regulator over 2000 × 10 kF (Q about 2·10⁸, just damped) once gave an infinite worst pattern: the peak's
/// refinement stepped the modes backwards over seconds, growing the band filter's long-dead poles by e^{10⁴·h}. The
/// pattern's droop is now a finite figure (beyond the linear model, and said so), never a non-finite one.
#[test]
fn a_pumped_high_q_rail_gives_a_finite_worst_pattern() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"pumped","parts":[{"id":"p","kind":"ceramic",
        "capacitance_f":1e4,"esr_ohm":1e-12,"esl_h":1e-9}],
        "rails":[{"name":"R","voltage_v":1.0,"ripple_pct":1,"band_hz":[1e-3,1e3],"source":{"r_ohm":1e-12,"l_h":1.0},
        "loads":[{"name":"L","step_a":1}],"decaps":[{"part":"p","count":2000,"mounting_h":1e-9}]}]}"#;
    let board = hushrail::io::parse_board(text, "pumped.json").unwrap();
    let d = droop(&board, 0, &DroopOptions { points: Some(50), ..Default::default() }).unwrap();
    let WorstCase::Bounded { droop_v, pattern, t_s, .. } = &d.worst_case else {
        panic!("a damped rail (Q about 2e8) is bounded: {:?}", d.worst_case)
    };
    assert!(droop_v.is_finite() && t_s.is_finite(), "{droop_v} at {t_s}");
    assert!(*droop_v >= d.droop_v, "the worst pattern is at least the step: {droop_v} vs {}", d.droop_v);
    assert!(!pattern.is_empty());
    // Past the linear limit the words say so rather than print the figure.
    assert!(d.beyond_model(*droop_v));
    assert!(hushrail::analysis::droop_lines(&d).iter().any(|l| l.contains("no longer holds")));
}

/// The regulator's loop named as the cause of the peaks it makes, in the check and in the droop's
/// sustained-resonance line alike (one sentence from one place): below its crossover tank's resonance it is the
/// loop's inductance, not the regulator's output inductance L (Erickson and Maksimović §9.4.2: the closed-loop
/// output impedance is s·L_c·T/(1 + T), inductive below crossover); at its crossover, its own peak.
#[test]
fn the_regulator_loop_is_named_as_the_cause_of_its_peaks() {
    let board = hushrail::io::read_board(&root().join("tests/networks/regulator_loop.json")).unwrap();
    for (rail, words) in [("SLOW", "the regulator near its loop's crossover"), ("BULK", "peaks near its crossover")] {
        let i = board.rail_index(rail).unwrap();
        let d = droop(&board, i, &DroopOptions { points: Some(200), ..Default::default() }).unwrap();
        let s = d.sustained.clone().unwrap();
        assert!(s.cause.contains(words), "{rail}: {}", s.cause);
        assert!(!s.cause.contains("output inductance"), "{rail}: {}", s.cause);
        let a = hushrail::analysis::analyze_rail(&board, i, &Default::default()).unwrap();
        let findings = hushrail::analysis::explain(&board, &board.rails[i], &a);
        assert!(findings.iter().any(|f| f.text.contains(&s.cause)), "{rail}: the check says the same: {findings:?}");
    }
}

/// `droop --csv` on a placed rail is its worst load's waveform (the largest step droop), never the lumped
/// network's, with every load's verdict as its exit code; each load carries its own waveform, whose lowest point
/// is that load's figure.
#[test]
fn placed_csv_is_the_worst_loads_waveform() {
    let board = hushrail::io::read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let i = board.rail_index("VCORE_PLACED").unwrap();
    let options = DroopOptions { window_s: Some(2e-6), points: Some(401), ..Default::default() };
    let d = droop(&board, i, &options).unwrap();
    assert!(d.loads.len() >= 2, "the sample's placed rail has several loads");
    let worst = d.loads.iter().max_by(|a, b| a.droop_v.total_cmp(&b.droop_v)).unwrap();
    assert_eq!(worst.waveform, d.waveform);
    for l in &d.loads {
        let lowest = l.waveform.iter().map(|r| r[1]).fold(f64::INFINITY, f64::min);
        assert!((lowest - l.min_v).abs() <= 1e-12 * l.min_v.abs(), "{}: {lowest} vs {}", l.name, l.min_v);
    }
    let s = step_waveform(&board, i, &options).unwrap();
    assert_eq!(s.waveform, d.waveform);
    assert_eq!(s.meets, d.meets);
    let out = hushrail()
        .args([
            "droop",
            "sample_boards/edge_camera.json",
            "--rail",
            "VCORE_PLACED",
            "--window",
            "2u",
            "--points",
            "401",
            "--csv",
        ])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(if d.meets { 0 } else { 1 }));
    assert_eq!(csv_rows(&out.stdout), d.waveform);
}

/// On a placed rail the worst pattern and its response are each load's own: a single step through
/// `pattern_response` at load k lands on that load's step droop (never the lumped network's), the load's worst
/// pattern reaches the load's worst-case droop, and random patterns that keep the shortest interval stay above it.
/// A placed rail's response needs a load named, and a lumped rail's refuses one.
#[test]
fn placed_patterns_are_each_loads_own() {
    let board = hushrail::io::read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let i = board.rail_index("VCORE_PLACED").unwrap();
    let options = DroopOptions { window_s: Some(1e-6), points: Some(400), ..Default::default() };
    let d = droop(&board, i, &options).unwrap();
    assert!(d.loads.len() >= 2);
    let step = [Pulse { on_s: 0.0, off_s: f64::INFINITY }];
    for (k, l) in d.loads.iter().enumerate() {
        let single = pattern_response(&board, i, Some(k), &step, &options).unwrap();
        assert!(
            (single.min_v - l.min_v).abs() <= 1e-3 * l.droop_v,
            "{}: a single step gives {} V, the load's droop {} V",
            l.name,
            single.min_v,
            l.min_v
        );
        let WorstCase::Bounded { droop_v: worst, pattern, t_s, .. } = &l.worst_case else {
            panic!("{}: bounded", l.name)
        };
        assert!(*worst >= l.droop_v * (1.0 - 1e-9), "{}: the worst case is at least the single step", l.name);
        let opts = DroopOptions { window_s: Some(t_s + 1e-8), ..options };
        let reached = d.nominal_v - pattern_response(&board, i, Some(k), pattern, &opts).unwrap().min_v;
        assert!((reached - worst).abs() <= 1e-3 * worst, "{}: the pattern reaches {reached}, worst {worst}", l.name);
        let mut rng = Lcg(5 + k as u64);
        for _ in 0..10 {
            let random = random_pattern(&mut rng, &d);
            let dr = d.nominal_v - pattern_response(&board, i, Some(k), &random, &options).unwrap().min_v;
            assert!(dr <= worst * (1.0 + 1e-3), "{}: a random pattern droops {dr} > worst {worst}", l.name);
        }
    }
    // The rail's worst pattern is the worst of its loads', and its verdict that one's.
    let most = d.loads.iter().map(|l| l.worst_case_droop_v().unwrap_or(f64::INFINITY)).fold(0.0, f64::max);
    assert_eq!(d.worst_case_droop_v().unwrap_or(f64::INFINITY), most);
    assert_eq!(d.worst_case_meets, most <= d.allowed_v);
    assert!(pattern_response(&board, i, None, &step, &options).is_err(), "a placed rail needs its load named");
    assert!(pattern_response(&board, i, Some(d.loads.len()), &step, &options).is_err());
    let lumped = board.rail_index("VCORE").unwrap();
    assert!(pattern_response(&board, lumped, Some(0), &step, &options).is_err(), "a lumped rail has no load index");
}

/// Linear interpolation of time-sorted (t, V) rows at `t`.
fn value_at(rows: &[(f64, f64)], t: f64) -> f64 {
    let i = rows.partition_point(|r| r.0 < t).clamp(1, rows.len() - 1);
    let ((t0, v0), (t1, v1)) = (rows[i - 1], rows[i]);
    if t1 > t0 { v0 + (v1 - v0) * (t - t0) / (t1 - t0) } else { v1 }
}

/// A placed rail's droop at each of its loads against ngspice .tran on its plane pair meshed
/// (`io::mesh_tran_netlist`, what `hushrail netlist --droop --mesh H` writes: the mesh of the AC check in
/// placed_ngspice.rs, each cell a capacitance and each shared edge an R-L, PLANE-MODEL.md's outside check, with
/// every load drawing its share ΔI_l/ΣΔI of the same ramp at once, as the droop takes them). The network is
/// tests/networks/placed/tran_pair.json (30 × 20 mm, two loads with packages and dies, 100 ns: the lowest
/// voltages come at 3-5 ns, during and just after the ramp, and the waveform rings down over the window, so it is
/// checked at six times as well), once unfiltered (the loads' 2 ns rise) and once through the band filter (1 ns).
///
/// The mesh converges at second order in the cell size, so it runs at 2 mm and 1 mm (every port covers whole cells
/// of both) and each figure is extrapolated, (4·X(h/2) − X(h))/3 (Richardson extrapolation). Tolerance of each
/// voltage: the fit's own stated error times the droop, plus 1 % of the droop (what the lumped comparison above
/// holds the modal stepping and ngspice's step control to), plus the mesh's remaining error taken as its last
/// correction |X_extrapolated − X(h/2)| (common practice for a second-order sequence); of the lowest voltage's
/// time, 1 % plus its own last correction. Measured (debug build, 2-core machine with another build running),
/// unfiltered: ngspice about 1 s at 2 mm and 9.5 s at 1 mm; the lowest voltage at U1's die 0.882599 V at 4.269 ns
/// (engine) against 0.882541 V at 4.272 ns (extrapolated from 0.880530 V at 2 mm and 0.882038 V at 1 mm), at U2's
/// die 0.877413 V at 3.343 ns against 0.877393 V at 3.346 ns; the waveform within 0.11 mV of the extrapolated mesh
/// at every time checked (droops of 117 and 123 mV). Filtered: ngspice 0.5 s and 6 s; U1 0.884006 V at 4.636 ns
/// against 0.883954 V at 4.624 ns, U2 0.880730 V at 3.652 ns against 0.880699 V at 3.640 ns, the waveform within
/// 0.11 mV. The test takes about 16 s.
#[test]
fn placed_droop_matches_ngspice_on_a_meshed_plane_at_each_load() {
    if !ngspice_available() {
        return;
    }
    let board = hushrail::io::read_board(&root().join("tests/networks/placed/tran_pair.json")).unwrap();
    // The loads' own 2 ns rise, whose edges stay inside the band (no filter), and a 1 ns rise, which the droop
    // filters to the band (the netlist builds the same filter and draws each load's share through it).
    for (rise_s, filtered) in [(None, false), (Some(1e-9), true)] {
        let options = DroopOptions { rise_s, window_s: Some(100e-9), points: Some(2001), ..Default::default() };
        let d = droop(&board, 0, &options).unwrap();
        assert_eq!(d.loads.len(), 2);
        assert_eq!(d.filter.is_some(), filtered);
        eprintln!("rise {:.1e} s, {}:", d.rise_s, if filtered { "filtered" } else { "unfiltered" });
        placed_droop_against_the_mesh(&board, &d);
    }
}

/// One placed droop against the Richardson-extrapolated mesh, as described above.
fn placed_droop_against_the_mesh(board: &Board, d: &Droop) {
    // The stimulus and grid `hushrail netlist --droop` writes.
    let tran = Transient::of_step(d);
    let mesh = |h: f64| -> Vec<Vec<f64>> {
        let text = mesh_tran_netlist(board, &board.rails[0], &tran, h, DATA, Corner::Typical).unwrap();
        let rows = parse_wrdata(&run_ngspice(&text, DATA)).unwrap();
        assert!(rows.last().is_some_and(|r| r[0] >= d.window_s * (1.0 - 1e-9)), "ngspice stopped early at {h} m");
        rows
    };
    let (coarse, fine) = (mesh(2e-3), mesh(1e-3));
    let extrapolate = |c: f64, f: f64| ((4.0 * f - c) / 3.0, ((4.0 * f - c) / 3.0 - f).abs());
    for (k, l) in d.loads.iter().enumerate() {
        let column = |rows: &[Vec<f64>]| -> Vec<(f64, f64)> { rows.iter().map(|r| (r[0], r[1 + k])).collect() };
        let (c, f) = (column(&coarse), column(&fine));
        let ((tc, vc), (tf, vf)) = (lowest(&c), lowest(&f));
        let (v_ext, v_mesh) = extrapolate(vc, vf);
        let (t_ext, t_mesh) = extrapolate(tc, tf);
        let stepping = (l.fit_error + 0.01) * l.droop_v;
        eprintln!(
            "{}: engine lowest {:.6} V at {:.4e} s (fit error {:.1e}); mesh {vc:.6} V at {tc:.4e} s (2 mm), {vf:.6} V \
             at {tf:.4e} s (1 mm), extrapolated {v_ext:.6} V at {t_ext:.4e} s",
            l.name, l.min_v, l.t_min_s, l.fit_error
        );
        assert!(
            (l.min_v - v_ext).abs() <= stepping + v_mesh,
            "{}: lowest {} V against the mesh's {v_ext} V (tolerance {} V)",
            l.name,
            l.min_v,
            stepping + v_mesh
        );
        assert!(
            (l.t_min_s - t_ext).abs() <= 0.01 * t_ext + t_mesh,
            "{}: lowest at {} s against the mesh's {t_ext} s",
            l.name,
            l.t_min_s
        );
        let mut ours: Vec<(f64, f64)> = l.waveform.iter().map(|p| (p[0], p[1])).collect();
        ours.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut worst = 0.0f64;
        for t in [2e-9, 5e-9, 1e-8, 2e-8, 5e-8, 1e-7] {
            let (v_ext, v_mesh) = extrapolate(value_at(&c, t), value_at(&f, t));
            let v = value_at(&ours, t);
            worst = worst.max((v - v_ext).abs());
            assert!(
                (v - v_ext).abs() <= stepping + v_mesh,
                "{} at {t} s: {v} V against the mesh's {v_ext} V (tolerance {} V)",
                l.name,
                stepping + v_mesh
            );
        }
        eprintln!("{}: waveform within {worst:.2e} V of the extrapolated mesh at the times checked", l.name);
    }
}
