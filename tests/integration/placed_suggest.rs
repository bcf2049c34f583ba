//! Suggest on a placed rail: new parts at one spot of the plane pair, every mix judged at the loads. The search's
//! rank-one form against a direct solve of the whole circuit with the mix placed; the first option against a
//! brute force judged by the engine; the planes named when a spot is too far; the command line's spot flags.

use crate::common::*;
use hushrail::analysis::placed::{PlacedCircuit, Workspace, effective};
use hushrail::analysis::{AnalysisOptions, new_parts_spot};
use hushrail::analysis::{Blocker, Candidate, MixEvaluator, SuggestOptions, analyze_rail, apply_mix, suggest};
use hushrail::model::{Board, GroupSpots, validate_board};
use hushrail::physics::Corner;

/// The far-part network with its band ending at 200 MHz (below the plane's first resonance).
fn far_part() -> Board {
    let mut board = hushrail::io::read_board(&root().join("tests/networks/placed/far_part.json")).unwrap();
    board.rails[0].band_hz = Some([1e4, 2e8]);
    board
}

fn candidates(ids: &[&str]) -> Vec<Candidate> {
    let shelf = hushrail::samples::shelf().unwrap();
    ids.iter().map(|id| Candidate { part: shelf.part(id).unwrap().clone(), mounting_h: 4e-10 }).collect()
}

/// The worst load's effective impedance at `f` by a direct solve of the whole circuit of `board`'s rail 0.
fn direct(board: &Board, f: f64, corner: Corner) -> f64 {
    let rail = &board.rails[0];
    let circuit = PlacedCircuit::of_rail(board, rail, corner, 2e8).unwrap();
    let m = circuit.solve(f, &mut Workspace::default());
    effective(&circuit, &m, rail.combine, rail.total_step_a()).iter().map(|z| z.norm()).fold(0.0, f64::max)
}

/// The search's form (the circuit solved once with the spot open, the mix attached as a rank-one change) gives
/// the worst load's effective impedance that a direct solve of the circuit with the mix placed gives (the port
/// impedance matrix with a shunt at one port: Z' = Z − Z_:P·Z_P:/(Z_PP + 1/Y), a linear-algebra identity).
#[test]
fn the_rank_one_form_is_the_direct_solve_with_the_mix_placed() {
    let board = far_part();
    let c = candidates(&["shelf-c100n-0201", "shelf-c1u-0402", "shelf-c22u-0805"]);
    for keep in [false, true] {
        for spot in [[0.0085, 0.01], [0.03, 0.005]] {
            let eval = MixEvaluator::in_corner(&board, 0, &c, keep, 40, Corner::Typical, Some(spot));
            for m in [[2, 3, 1], [0, 0, 4], [5, 0, 0]] {
                let fitted = apply_mix(&board, 0, &c, &m, keep, Some(spot));
                assert!(validate_board(&fitted).is_empty(), "the fitted board is valid");
                let p = fitted.rails[0].placement.as_ref().unwrap();
                assert_eq!(p.groups.len(), fitted.rails[0].decaps.len(), "one placement per group");
                assert!(
                    p.groups
                        .iter()
                        .rev()
                        .take(m.iter().filter(|n| **n > 0).count())
                        .all(|g| g.spots == GroupSpots::At(spot))
                );
                let grid = eval.judge(&m).0;
                let by_solve = eval.freq_hz.iter().map(|&f| direct(&fitted, f, Corner::Typical)).fold(0.0, f64::max);
                assert!(rel(grid, by_solve) < 1e-9, "keep {keep}, {spot:?}, {m:?}: {grid} vs {by_solve}");
            }
        }
    }
}

/// Every count vector with each count up to `max`.
fn mixes(k: usize, max: u32) -> Vec<Vec<u32>> {
    (0..k).fold(vec![vec![]], |acc, _| {
        acc.into_iter().flat_map(|m: Vec<u32>| (0..=max).map(move |n| [m.clone(), vec![n]].concat())).collect()
    })
}

/// On a placed rail the first option is the cheapest mix the engine accepts at the loads (brute force over every
/// mix of three parts up to six each, each judged by the full placed engine with the mix at the spot).
#[test]
fn the_first_option_on_a_placed_rail_is_the_brute_force_best() {
    let mut board = far_part();
    // A target a few parts beside the load can meet.
    board.rails[0].ripple_pct = 15.0;
    let c = candidates(&["shelf-c100n-0201", "shelf-c1u-0402", "shelf-c22u-0805"]);
    let options = SuggestOptions { max_per_part: 6, max_total: 18, margin_db: 1.0, options: 2, ..Default::default() };
    let s = suggest(&board, 0, &c, &options).unwrap();
    let spot = s.spot_m.expect("a placed rail's search names its spot");
    assert_eq!(Some(spot), board.rails[0].placement.as_ref().unwrap().beside_load(0), "beside the only load");
    assert!(s.exhaustive);
    let unit = |m: &[u32]| c.iter().zip(m).map(|(c, &n)| c.part.unit_cost.unwrap() * n as f64).sum::<f64>();
    let mut all = mixes(3, 6);
    all.sort_by(|a, b| unit(a).total_cmp(&unit(b)));
    let accepts = |m: &[u32]| {
        let a = analyze_rail(&apply_mix(&board, 0, &c, m, false, Some(spot)), 0, &AnalysisOptions::default()).unwrap();
        a.worst_ohm <= a.target_ohm * 10f64.powf(-1.0 / 20.0)
    };
    let best = all.iter().find(|m| accepts(m)).expect("some mix qualifies");
    let first = &s.options[0];
    assert!((first.objective - unit(best)).abs() < 1e-12, "optimizer {:?} vs brute force {best:?}", first.counts);
    assert!(first.judged.meets_target && first.judged.margin_db >= 1.0 - 1e-9);
}

/// A spot at the far end of a long pair cannot serve the load at 200 MHz whatever is put there: the search says
/// the planes are the limit, with the shorted spot's figure (checked against a direct solve with a part of
/// vanishing impedance at the spot), and offers nothing to apply.
#[test]
fn a_spot_too_far_from_the_load_is_blamed_on_the_planes() {
    let board = far_part();
    let c = candidates(&["shelf-c100n-0201", "shelf-c1u-0402", "shelf-c22u-0805"]);
    let spot = [0.057, 0.018];
    let options = SuggestOptions { spot_m: Some(spot), max_per_part: 20, max_total: 40, ..Default::default() };
    let s = suggest(&board, 0, &c, &options).unwrap();
    assert!(s.options.is_empty());
    let Some(Blocker::Planes { at_hz, floor_ohm, load, spot_m, .. }) = s.blockers.first() else {
        panic!("blamed on the planes: {:?}", s.blockers)
    };
    assert_eq!((load.as_str(), *spot_m), ("U5", spot));
    // A short at the spot: a huge number of parts there, by the full engine.
    let mut shorted = apply_mix(&board, 0, &c, &[0, 0, 1], false, Some(spot));
    let g = shorted.rails[0].decaps.len() - 1;
    shorted.rails[0].decaps[g].count = 1_000_000;
    shorted.rails[0].decaps[g].mounting_h = 1e-15;
    let z = direct(&shorted, *at_hz, Corner::Typical);
    assert!(rel(z, *floor_ohm) < 1e-3, "shorted spot {floor_ohm} vs a million parts there {z}");
    assert!(s.blockers[0].words().contains("planes are the limit"));
}

#[test]
fn a_spot_is_refused_on_a_lumped_rail_and_off_the_plane() {
    let lumped = hushrail::samples::default_board().unwrap();
    let o = SuggestOptions { spot_m: Some([0.01, 0.01]), ..Default::default() };
    assert!(new_parts_spot(&lumped, 0, &o).unwrap_err().0.contains("not placed"));
    assert_eq!(new_parts_spot(&lumped, 0, &SuggestOptions::default()).unwrap(), None);
    let o = SuggestOptions { spot_m: Some([0.0601, 0.01]), ..Default::default() };
    assert!(new_parts_spot(&far_part(), 0, &o).unwrap_err().0.contains("crosses the plane pair's edge"));
}

#[test]
fn the_command_line_puts_new_parts_beside_a_load_or_at_a_spot() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("far.json");
    std::fs::write(&file, hushrail::io::board_to_string(&far_part())).unwrap();
    let run = |extra: &[&str]| {
        let out = hushrail()
            .args(["suggest", file.to_str().unwrap(), "--rail", "VIO", "--from-shelf", "--options", "1"])
            .args(extra)
            .output()
            .unwrap();
        (
            out.status.code(),
            String::from_utf8_lossy(&out.stdout).into_owned(),
            String::from_utf8_lossy(&out.stderr).into_owned(),
        )
    };
    let (code, text, _) = run(&["--beside", "U5"]);
    assert_eq!(code, Some(0), "{text}");
    assert!(text.contains("New parts go at (8.5 mm, 10.0 mm), beside U5"), "{text}");
    let (code, json, _) = run(&["--spot", "0.057,0.018", "--json"]);
    assert_eq!(code, Some(1));
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(v["spot_m"], serde_json::json!([0.057, 0.018]));
    assert_eq!(v["blockers"][0]["kind"], "planes");
    let (code, _, err) = run(&["--beside", "U9"]);
    assert_eq!(code, Some(2));
    assert!(err.contains("has no load \"U9\""), "{err}");
    let (code, _, err) = run(&["--spot", "0.1"]);
    assert_eq!(code, Some(2));
    assert!(err.contains("--spot: give two coordinates"), "{err}");
}
