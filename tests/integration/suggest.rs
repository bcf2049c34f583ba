//! The mix optimizer: exact on small problems (against a brute force judged by the full engine), close to the
//! best known cost on larger ones, every reported option re-checked by the engine `check` uses and by ngspice.

use crate::common::*;
use hushrail::analysis::{
    AnalysisOptions, Candidate, MixEvaluator, Network, Objective, SuggestOptions, analyze_rail, apply_mix,
    magnitude_phase, suggest,
};
use hushrail::io::{AcSweep, parse_wrdata, rail_netlist};
use hushrail::model::Board;

fn shelf_candidates(ids: &[&str], mounting_h: f64) -> Vec<Candidate> {
    let shelf = hushrail::samples::shelf().unwrap();
    ids.iter().map(|id| Candidate { part: shelf.part(id).unwrap().clone(), mounting_h }).collect()
}

fn edge_camera() -> Board {
    hushrail::io::read_board(&root().join("sample_boards/edge_camera.json")).unwrap()
}

/// All count vectors with each count up to `max`.
fn all_mixes(k: usize, max: u32) -> Vec<Vec<u32>> {
    let mut out = vec![vec![]];
    for _ in 0..k {
        out = out.into_iter().flat_map(|m| (0..=max).map(move |n| [m.clone(), vec![n]].concat())).collect();
    }
    out
}

fn cost(c: &[Candidate], counts: &[u32]) -> f64 {
    c.iter().zip(counts).map(|(c, &n)| c.part.unit_cost.unwrap() * n as f64).sum()
}

/// The cheapest mix the full engine passes, searched among the grid-feasible ones in order of cost (the engine's
/// refined worst |Z| is never below the grid's, so no engine-feasible mix is skipped).
fn best_known(board: &Board, rail: usize, c: &[Candidate], max: u32) -> Option<(f64, Vec<u32>)> {
    let eval = MixEvaluator::new(board, rail, c, false, 300);
    let mut feasible: Vec<(f64, Vec<u32>)> = all_mixes(c.len(), max)
        .into_iter()
        .filter(|m| eval.judge(m).0 <= eval.target())
        .map(|m| (cost(c, &m), m))
        .collect();
    feasible.sort_by(|a, b| a.0.total_cmp(&b.0));
    feasible.into_iter().find(|(_, m)| {
        analyze_rail(&apply_mix(board, rail, c, m, false), rail, &AnalysisOptions::default()).unwrap().meets_target
    })
}

#[test]
fn exhaustive_on_small_problems_finds_the_true_optimum() {
    let board = edge_camera();
    let rail = board.rail_index("VDDR").unwrap();
    let c = shelf_candidates(&["shelf-c100n-0402", "shelf-c1u-0402", "shelf-c10u-0603", "shelf-poly-220u-7343"], 6e-10);
    let options = SuggestOptions { max_per_part: 8, max_total: 32, options: 3, ..Default::default() };
    let s = suggest(&board, rail, &c, &options).unwrap();
    assert!(s.exhaustive, "9^4 combinations are searched exhaustively");
    // Brute force with the full engine over every combination (max total 32 holds them all).
    let mut best: Option<(f64, Vec<u32>)> = None;
    for m in all_mixes(4, 8) {
        let cost = cost(&c, &m);
        if best.as_ref().is_some_and(|(b, _)| *b <= cost) {
            continue;
        }
        let fitted = apply_mix(&board, rail, &c, &m, false);
        if analyze_rail(&fitted, rail, &AnalysisOptions::default()).unwrap().meets_target {
            best = Some((cost, m));
        }
    }
    let (best_cost, _) = best.expect("some mix meets VDDR's target");
    assert!(
        (s.options[0].cost - best_cost).abs() < 1e-12,
        "optimizer {} vs brute force {best_cost}",
        s.options[0].cost
    );
}

#[test]
fn heuristic_is_within_two_percent_of_the_best_known_cost() {
    let board = edge_camera();
    let rail = board.rail_index("VCORE").unwrap();
    let c = shelf_candidates(
        &[
            "shelf-c100n-0402",
            "shelf-c1u-0402",
            "shelf-c4u7-0603",
            "shelf-c22u-0805",
            "shelf-poly-220u-7343",
            "shelf-alu-470u-d8",
        ],
        6e-10,
    );
    let max = 7;
    let options = SuggestOptions { max_per_part: max, max_total: 6 * max, options: 3, ..Default::default() };
    let s = suggest(&board, rail, &c, &options).unwrap();
    assert!(!s.exhaustive, "8^6 combinations are past the exhaustive limit");
    let (known, mix) = best_known(&board, rail, &c, max).expect("some mix meets VCORE's target");
    assert!(s.options[0].meets_target);
    assert!(
        s.options[0].cost <= known * 1.02,
        "heuristic {} vs best known {known} ({mix:?}); counts {:?}",
        s.options[0].cost,
        s.options[0].counts
    );
}

#[test]
fn every_option_meets_target_in_the_engine_and_none_dominates_another() {
    let board = edge_camera();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let shelf = hushrail::samples::shelf().unwrap();
    let c: Vec<Candidate> =
        shelf.parts.iter().take(12).map(|p| Candidate { part: p.clone(), mounting_h: 7e-10 }).collect();
    let s = suggest(&board, rail, &c, &SuggestOptions { options: 5, ..Default::default() }).unwrap();
    assert!(!s.options.is_empty());
    for o in &s.options {
        assert!(o.meets_target);
        let fitted = apply_mix(&board, rail, &c, &o.counts, false);
        let a = analyze_rail(&fitted, rail, &AnalysisOptions::default()).unwrap();
        assert!(a.meets_target && a.worst_ohm == o.worst_ohm, "re-checked by the engine check uses");
    }
    for a in &s.options {
        for b in &s.options {
            let dominates = b.cost < a.cost && b.count < a.count && b.area_m2 < a.area_m2 && b.worst_ohm < a.worst_ohm;
            assert!(!dominates, "{:?} is worse in every respect than {:?}", a.counts, b.counts);
        }
    }
    for w in s.options.windows(2) {
        assert!(w[0].cost <= w[1].cost, "sorted by the objective");
    }
}

/// The best option, fitted and run through ngspice (a general-purpose circuit simulator), gives the same |Z|.
#[test]
fn best_option_agrees_with_ngspice() {
    if !ngspice_available() {
        return;
    }
    let board = edge_camera();
    let rail = board.rail_index("VDDR").unwrap();
    let c = shelf_candidates(&["shelf-c100n-0402", "shelf-c1u-0402", "shelf-c10u-0603", "shelf-poly-220u-7343"], 6e-10);
    let s = suggest(&board, rail, &c, &SuggestOptions { max_per_part: 8, options: 1, ..Default::default() }).unwrap();
    let fitted = apply_mix(&board, rail, &c, &s.options[0].counts, false);
    let r = &fitted.rails[rail];
    let sweep = AcSweep { from_hz: 1e3, to_hz: 1e9, points_per_decade: 10 };
    let rows = parse_wrdata(&run_ngspice(&rail_netlist(&fitted, r, &sweep, Default::default(), "out.txt"), "out.txt"))
        .unwrap();
    let net = Network::of_rail(&fitted, r);
    for row in rows {
        let (ours, _) = magnitude_phase(net.impedance(row[0]));
        let (theirs, _) = magnitude_phase(num_complex::Complex64::new(row[1], row[2]));
        assert!(rel(ours, theirs) < 1e-3, "at {} Hz: {ours} vs {theirs}", row[0]);
    }
}

#[test]
fn suggest_cli_explains_when_nothing_fits() {
    let out = hushrail()
        .args([
            "suggest",
            "sample_boards/edge_camera.json",
            "--rail",
            "VCORE",
            "--from-shelf",
            "--candidates",
            "shelf-c100n-0402,shelf-c1u-0402",
            "--max-total",
            "6",
            "--json",
        ])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1), "{}", String::from_utf8_lossy(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["limit"].as_str().unwrap().contains("parts"));
    let ok = hushrail()
        .args([
            "suggest",
            "sample_boards/edge_camera.json",
            "--rail",
            "V3V3_IO",
            "--from-shelf",
            "--objective",
            "count",
            "--json",
        ])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(ok.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&ok.stdout).unwrap();
    assert_eq!(v["objective"], "count");
    assert!(v["options"][0]["meets_target"].as_bool().unwrap());
    let bad = hushrail()
        .args(["suggest", "sample_boards/edge_camera.json", "--rail", "VCORE", "--candidates", "nope"])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("nope"));
    let _ = Objective::Area;
}
