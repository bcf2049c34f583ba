//! Droop in time against ngspice .tran (ngspice, a general-purpose circuit simulator, Debian package `ngspice`)
//! on the same network and the same stimulus: the lowest voltage within 1 % of the droop and its time within 1 %.
//! The worst-case pattern, run through ngspice, reaches the computed worst case within 1 %, and random on/off
//! patterns never droop more than it (linear superposition, the basis of the reverse pulse technique, Drabkin et
//! al., EPEP 2002).

use crate::common::*;
use hushrail::analysis::{Droop, DroopError, DroopOptions, Pulse, droop, pattern_response};
use hushrail::io::{Transient, parse_wrdata, rail_tran_netlist};
use hushrail::model::Board;

const DATA: &str = "hushrail_tran.txt";

/// Longest window the ngspice comparisons simulate (keeps ngspice's run short).
const MAX_WINDOW: f64 = 4e-6;

/// Run ngspice on a PWL load and return (t, V) rows.
fn ngspice_tran(board: &Board, rail: usize, load: Vec<(f64, f64)>, d: &Droop) -> Vec<(f64, f64)> {
    let tran = Transient { load, step_s: d.dt_s, stop_s: d.window_s, max_step_s: d.dt_s };
    let text = run_ngspice(&rail_tran_netlist(board, &board.rails[rail], &tran, DATA), DATA);
    parse_wrdata(&text).unwrap().into_iter().map(|r| (r[0], r[1])).collect()
}

fn lowest(rows: &[(f64, f64)]) -> (f64, f64) {
    rows.iter().copied().min_by(|a, b| a.1.total_cmp(&b.1)).unwrap()
}

/// The piecewise-linear corners of a pattern of ramped pulses (exact: the current is linear between them).
fn pattern_corners(pattern: &[Pulse], step: f64, rise: f64) -> Vec<(f64, f64)> {
    let mut times: Vec<f64> = vec![0.0];
    for p in pattern {
        times.extend([p.on_s, p.on_s + rise, p.off_s, p.off_s + rise]);
    }
    times.sort_by(f64::total_cmp);
    times.dedup_by(|a, b| (*a - *b).abs() < 1e-18);
    let ramp = |x: f64| (x / rise).clamp(0.0, 1.0);
    times
        .iter()
        .map(|&t| (t, step * pattern.iter().map(|p| ramp(t - p.on_s) - ramp(t - p.off_s)).sum::<f64>()))
        .collect()
}

fn short_window(board: &Board, rail: usize) -> DroopOptions {
    let full = droop(board, rail, &DroopOptions { points: Some(200), ..Default::default() }).unwrap();
    DroopOptions { window_s: Some(full.window_s.min(MAX_WINDOW)), points: Some(200), ..Default::default() }
}

#[test]
fn step_droop_matches_ngspice_tran() {
    if !ngspice_available() {
        return;
    }
    let mut checked = 0;
    for (stem, _, board) in reference_boards() {
        for (i, rail) in board.rails.iter().enumerate() {
            if rail.source.is_none() {
                continue;
            }
            let d = droop(&board, i, &short_window(&board, i)).unwrap();
            let load = vec![(0.0, 0.0), (d.rise_s, d.step_a)];
            let rows = ngspice_tran(&board, i, load, &d);
            let (t_ref, v_ref) = lowest(&rows);
            let droop_ref = d.nominal_v - v_ref;
            let what = format!("{stem}/{}", rail.name);
            assert!(
                (d.droop_v - droop_ref).abs() <= 0.01 * droop_ref,
                "{what}: droop {} vs ngspice {droop_ref}",
                d.droop_v
            );
            assert!((d.t_min_s - t_ref).abs() <= 0.01 * t_ref, "{what}: t_min {} vs ngspice {t_ref}", d.t_min_s);
            eprintln!(
                "{what}: droop {:.4e} V vs {:.4e} V, at {:.4e} s vs {:.4e} s",
                d.droop_v, droop_ref, d.t_min_s, t_ref
            );
            checked += 1;
        }
    }
    assert!(checked >= 9, "{checked} rails checked");
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
        let d = droop(&board, i, &short_window(&board, i)).unwrap();
        assert!(!d.worst_case_pattern.is_empty());
        assert!(d.worst_case_droop_v >= d.droop_v, "the worst case is at least the single step");
        let rows = ngspice_tran(&board, i, pattern_corners(&d.worst_case_pattern, d.step_a, d.rise_s), &d);
        let (t_ref, v_ref) = lowest(&rows);
        let reached = d.nominal_v - v_ref;
        assert!(
            (reached - d.worst_case_droop_v).abs() <= 0.01 * d.worst_case_droop_v,
            "{board_file}/{rail_name}: ngspice reaches {reached} at {t_ref}, computed {} at {}",
            d.worst_case_droop_v,
            d.worst_case_t_s
        );
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

#[test]
fn random_patterns_never_droop_more_than_the_worst_case() {
    let board = hushrail::io::read_board(&root().join("tests/networks/regulator_plane.json")).unwrap();
    let i = board.rail_index("CORE").unwrap();
    let options = DroopOptions { window_s: Some(1e-6), points: Some(100), ..Default::default() };
    let d = droop(&board, i, &options).unwrap();
    let mut rng = Lcg(7);
    let mut pattern = Vec::new();
    for _ in 0..40 {
        pattern.clear();
        let mut t = rng.next() * 50e-9;
        while t < d.window_s {
            let on = rng.next() * 80e-9 + 1e-9;
            let off = rng.next() * 80e-9 + 1e-9;
            pattern.push(Pulse { on_s: t, off_s: t + on });
            t += on + off;
        }
        let v_min = pattern_response(&board, i, &pattern, &options).unwrap().min_v;
        let dr = d.nominal_v - v_min;
        assert!(
            dr <= d.worst_case_droop_v * (1.0 + 1e-12),
            "random pattern droops {dr} > worst {}",
            d.worst_case_droop_v
        );
    }
    // The computed pattern itself reaches the worst case in our own integration too.
    let v_min = pattern_response(&board, i, &d.worst_case_pattern, &options).unwrap().min_v;
    let reached = d.nominal_v - v_min;
    assert!(
        (reached - d.worst_case_droop_v).abs() <= 1e-9 * d.worst_case_droop_v,
        "{reached} vs {}",
        d.worst_case_droop_v
    );
    // The last random pattern, run through ngspice as an outside check of the superposition, lands where ours does.
    if ngspice_available() {
        let ours = pattern_response(&board, i, &pattern, &options).unwrap().min_v;
        let rows = ngspice_tran(&board, i, pattern_corners(&pattern, d.step_a, d.rise_s), &d);
        let (_, theirs) = lowest(&rows);
        let (a, b) = (d.nominal_v - ours, d.nominal_v - theirs);
        assert!((a - b).abs() <= 0.01 * b, "random pattern: ours {a} vs ngspice {b}");
    }
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

/// Textbook check: a regulator modelled as a pure resistance R with no capacitors settles at once to V − R·ΔI.
#[test]
fn resistive_source_gives_ohms_law() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"r","parts":[],
      "rails":[{"name":"R","voltage_v":1.0,"ripple_pct":5,"band_hz":[1e3,1e6],"source":{"r_ohm":0.01,"l_h":0},
      "loads":[{"name":"l","step_a":2,"rise_time_s":1e-9}],"decaps":[]}]}"#;
    let board = hushrail::io::parse_board(text, "r.json").unwrap();
    let d = droop(&board, 0, &DroopOptions { window_s: Some(1e-8), ..Default::default() }).unwrap();
    assert!((d.droop_v - 0.02).abs() < 1e-12, "{}", d.droop_v);
    assert!((d.final_v - 0.98).abs() < 1e-12);
    assert!(d.meets, "20 mV within 50 mV");
}

#[test]
fn droop_cli_json_has_the_contract_fields() {
    let out = hushrail()
        .args(["droop", "sample_boards/edge_camera.json", "--rail", "VDDR", "--window", "2u", "--json"])
        .current_dir(root())
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    for k in ["rail", "step_a", "rise_s", "min_v", "t_min_s", "droop_v", "allowed_v", "meets", "worst_case_droop_v"] {
        assert!(!v[k].is_null(), "{k} missing");
    }
    let meets = v["meets"].as_bool().unwrap();
    assert_eq!(out.status.code(), Some(if meets { 0 } else { 1 }));
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
    assert_eq!(lines.len(), 12);
    assert_eq!(lines[11].split(',').next().unwrap().parse::<f64>().unwrap(), 2e-6);
}
