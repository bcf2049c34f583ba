//! The mix optimizer: exact on small problems against a brute force judged by the full engine (with the kinds
//! limit, the margin, the line cost and both corners), close to the best known cost on a larger one; every option
//! re-checked by the engine `check` uses and the best by ngspice; failure explained with figures that are checked
//! against textbook formulas and an enumeration.

use crate::common::*;
use hushrail::analysis::{
    AnalysisOptions, Blocker, Candidate, DISTINCT_TOLERANCE, MixEvaluator, Network, Objective, SuggestOptions,
    analyze_rail, apply_mix, droop, magnitude_phase, suggest, sweep_in,
};
use hushrail::io::{AcSweep, parse_wrdata, rail_netlist};
use hushrail::model::{Board, Package};
use hushrail::physics::Corner;
use num_complex::Complex64;

fn shelf_candidates(ids: &[&str], mounting_h: f64) -> Vec<Candidate> {
    let shelf = hushrail::samples::shelf().unwrap();
    ids.iter().map(|id| Candidate { part: shelf.part(id).unwrap().clone(), mounting_h }).collect()
}

fn edge_camera() -> Board {
    hushrail::io::read_board(&root().join("sample_boards/edge_camera.json")).unwrap()
}

/// Every count vector with each count up to `max` and at most `kinds` counts above zero.
fn mixes(k: usize, max: u32, kinds: usize) -> Vec<Vec<u32>> {
    let mut out = vec![vec![]];
    for _ in 0..k {
        out = out
            .into_iter()
            .flat_map(|m: Vec<u32>| {
                let used = m.iter().filter(|n| **n > 0).count();
                let top = if used < kinds { max } else { 0 };
                (0..=top).map(move |n| [m.clone(), vec![n]].concat())
            })
            .collect();
    }
    out
}

/// A mix's cost: parts, plus `line` for each part used that the board does not use yet.
fn cost(board: &Board, c: &[Candidate], counts: &[u32], line: f64) -> f64 {
    c.iter()
        .zip(counts)
        .filter(|(_, n)| **n > 0)
        .map(|(c, &n)| {
            let existing = board.rails.iter().flat_map(|r| &r.decaps).any(|g| g.part == c.part.id && g.count > 0);
            c.part.unit_cost.unwrap() * n as f64 + if existing { 0.0 } else { line }
        })
        .sum()
}

/// The engine's verdict on a fitted mix: worst |Z| at or under target less `margin_db` in `corner`.
fn engine_accepts(board: &Board, rail: usize, c: &[Candidate], m: &[u32], corner: Corner, margin_db: f64) -> bool {
    let a = analyze_rail(
        &apply_mix(board, rail, c, m, false, None),
        rail,
        &AnalysisOptions { corner, ..Default::default() },
    )
    .unwrap();
    a.worst_ohm <= a.target_ohm * 10f64.powf(-margin_db / 20.0) * (1.0 + 1e-12)
}

#[test]
fn exact_on_small_problems_against_a_brute_force_with_kinds_margin_line_cost_and_both_corners() {
    let board = edge_camera();
    let rail = board.rail_index("VDDR").unwrap();
    let c = shelf_candidates(&["shelf-c100n-0402", "shelf-c1u-0402", "shelf-c10u-0603", "shelf-poly-220u-7343"], 6e-10);
    let max = 6;
    for (kinds, margin_db, corner, line) in [
        (4, 0.0, Corner::Typical, 0.0),
        (2, 1.0, Corner::Typical, 0.0),
        (2, 1.0, Corner::Worst, 0.0),
        (3, 3.0, Corner::Worst, 0.05),
    ] {
        let options = SuggestOptions {
            max_per_part: max,
            max_total: 4 * max,
            max_kinds: kinds,
            margin_db,
            corner,
            line_cost: line,
            options: 3,
            ..Default::default()
        };
        let s = suggest(&board, rail, &c, &options).unwrap();
        assert!(s.exhaustive, "small enough to try every combination");
        // Brute force: every mix within the limits in order of cost, judged by the engine alone.
        let mut all: Vec<(f64, Vec<u32>)> =
            mixes(4, max, kinds as usize).into_iter().map(|m| (cost(&board, &c, &m, line), m)).collect();
        all.sort_by(|a, b| a.0.total_cmp(&b.0));
        let best = all.iter().find(|(_, m)| engine_accepts(&board, rail, &c, m, corner, margin_db));
        let (best_cost, best_mix) = best.expect("some mix qualifies");
        let first = &s.options[0];
        assert!(
            (first.objective - best_cost).abs() < 1e-12,
            "{kinds} kinds, {margin_db} dB, {corner:?}, line {line}: optimizer {} ({:?}) vs brute force {best_cost} \
             ({best_mix:?})",
            first.objective,
            first.counts
        );
        assert!(first.judged.margin_db >= margin_db - 1e-9 && first.judged.corner == corner);
        assert!(first.kinds <= kinds);
    }
}

/// The search's grid judges a mix as `check` does in every corner: in the worst one the highest |Z| over the
/// tolerance vertices, so never below the engine's own vertex sampled at the grid's points (a middle-of-tolerance
/// judge falls below it), and close to the engine's refined worst (a sharp peak may fall between grid points).
#[test]
fn the_grid_judges_a_mix_as_the_engine_does_in_every_corner() {
    let board = edge_camera();
    let rail = board.rail_index("VDDR").unwrap();
    let c = shelf_candidates(&["shelf-c100n-0402", "shelf-c1u-0402", "shelf-c10u-0603", "shelf-poly-220u-7343"], 6e-10);
    for corner in Corner::ALL {
        let eval = MixEvaluator::in_corner(&board, rail, &c, false, 2000, corner, None);
        for m in [[0, 6, 0, 2], [0, 0, 6, 1], [3, 2, 1, 1], [6, 0, 0, 0], [1, 1, 1, 1]] {
            let grid = eval.judge(&m).0;
            let fitted = apply_mix(&board, rail, &c, &m, false, None);
            let a = analyze_rail(&fitted, rail, &AnalysisOptions { corner, ..Default::default() }).unwrap();
            let sampled = sweep_in(&fitted, &fitted.rails[rail], &eval.freq_hz, a.view, corner)
                .iter()
                .map(|z| z.norm())
                .fold(0.0, f64::max);
            assert!(grid >= sampled * (1.0 - 1e-9), "{corner:?} {m:?}: grid {grid} below the engine's {sampled}");
            assert!(
                grid <= a.worst_ohm * 1.001 && grid >= a.worst_ohm * 0.98,
                "{corner:?} {m:?}: grid {grid} vs engine {}",
                a.worst_ohm
            );
        }
    }
}

#[test]
fn heuristic_is_within_two_percent_of_the_best_known_cost() {
    let board = edge_camera();
    let rail = board.rail_index("VDDR").unwrap();
    let c = shelf_candidates(
        &[
            "shelf-c10n-0402",
            "shelf-c100n-0402",
            "shelf-c1u-0402",
            "shelf-c4u7-0603",
            "shelf-c22u-0805",
            "shelf-poly-220u-7343",
            "shelf-alu-470u-d8",
        ],
        6e-10,
    );
    let (max, kinds, corner, margin_db) = (9, 4, Corner::Worst, 1.0);
    let options = SuggestOptions {
        max_per_part: max,
        max_total: 7 * max,
        max_kinds: kinds,
        corner,
        options: 1,
        ..Default::default()
    };
    let s = suggest(&board, rail, &c, &options).unwrap();
    assert!(!s.exhaustive, "past the exhaustive limit");
    // Best known: every mix with at most four kinds, screened on the grid (the engine's refined worst |Z| over the
    // tolerance vertices is never below a grid sample of the same curves), then the cheapest the engine accepts.
    let eval = MixEvaluator::in_corner(&board, rail, &c, false, 300, corner, None);
    let required = eval.target() * 10f64.powf(-margin_db / 20.0);
    let mut feasible: Vec<(f64, Vec<u32>)> = mixes(c.len(), max, kinds as usize)
        .into_iter()
        .filter(|m| eval.judge(m).0 <= required)
        .map(|m| (cost(&board, &c, &m, 0.0), m))
        .collect();
    feasible.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (known, mix) = feasible
        .into_iter()
        .find(|(_, m)| engine_accepts(&board, rail, &c, m, corner, margin_db))
        .expect("some mix qualifies");
    assert!(s.options[0].accepted);
    assert!(
        s.options[0].objective <= known * 1.02,
        "heuristic {} vs best known {known} ({mix:?}); counts {:?}",
        s.options[0].objective,
        s.options[0].counts
    );
}

#[test]
fn every_option_keeps_its_margin_in_its_corner_its_kinds_and_is_distinct() {
    let board = edge_camera();
    let shelf = hushrail::samples::shelf().unwrap();
    for (rail_name, corner, margin_db, kinds) in
        [("V3V3_IO", Corner::Worst, 1.0, 3), ("VCORE", Corner::Typical, 2.0, 4), ("VDDR", Corner::Worst, 0.5, 2)]
    {
        let rail = board.rail_index(rail_name).unwrap();
        let v = board.rails[rail].voltage_v;
        let c: Vec<Candidate> = hushrail::analysis::offered_parts([&shelf], v)
            .into_iter()
            .map(|part| Candidate { part, mounting_h: 7e-10 })
            .collect();
        let options = SuggestOptions { options: 5, corner, margin_db, max_kinds: kinds, ..Default::default() };
        let s = suggest(&board, rail, &c, &options).unwrap();
        assert!(!s.options.is_empty(), "{rail_name}: {:?}", s.blockers);
        for o in &s.options {
            assert!(o.accepted);
            let fitted = apply_mix(&board, rail, &c, &o.counts, false, None);
            let a = analyze_rail(&fitted, rail, &AnalysisOptions { corner, ..Default::default() }).unwrap();
            assert!(a.margin_db >= margin_db - 1e-9, "{rail_name}: {} dB in {corner:?}", a.margin_db);
            assert_eq!(a.worst_ohm, o.judged.worst_ohm, "the figures are the engine's");
            let other = if corner == Corner::Worst { Corner::Typical } else { Corner::Worst };
            let b = analyze_rail(&fitted, rail, &AnalysisOptions { corner: other, ..Default::default() }).unwrap();
            assert_eq!((b.worst_ohm, o.other.corner), (o.other.worst_ohm, other), "the other corner's figures");
            let used = o.counts.iter().filter(|n| **n > 0).count() as u32;
            assert!(used <= kinds && o.kinds == used, "{rail_name}: {used} kinds, limit {kinds}");
        }
        for (i, b) in s.options.iter().enumerate() {
            for a in &s.options[..i] {
                assert!(a.objective <= b.objective, "sorted by the objective");
                let better = |x: f64, y: f64| x < y * (1.0 - DISTINCT_TOLERANCE);
                let differs = better(b.judged.worst_ohm, a.judged.worst_ohm)
                    || better(b.other.worst_ohm, a.other.worst_ohm)
                    || b.count < a.count
                    || matches!((b.area_m2, a.area_m2), (Some(x), Some(y)) if better(x, y));
                assert!(differs, "{rail_name}: {:?} is within the tolerance of the cheaper {:?}", b.counts, a.counts);
            }
        }
        if s.options.len() < 5 {
            assert!(s.shortfall.is_some(), "{rail_name}: fewer options than asked, and it says why");
        }
    }
}

/// With the droop asked for, every option's step droop (by the droop engine) is within the allowed band.
#[test]
fn with_droop_every_option_keeps_the_step_droop_within_the_band() {
    let board = edge_camera();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let c = shelf_candidates(&["shelf-c100n-0402", "shelf-c4u7-0603", "shelf-c10u-0603", "shelf-c22u-0805"], 8e-10);
    let options = SuggestOptions { droop: true, options: 2, max_per_part: 8, ..Default::default() };
    let s = suggest(&board, rail, &c, &options).unwrap();
    assert!(!s.options.is_empty(), "{:?}", s.blockers);
    for o in &s.options {
        let d = droop(&apply_mix(&board, rail, &c, &o.counts, false, None), rail, &Default::default()).unwrap();
        assert!(d.meets && o.droop.unwrap().meets, "{} V against {} V", d.droop_v, d.allowed_v);
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
    let fitted = apply_mix(&board, rail, &c, &s.options[0].counts, false, None);
    let r = &fitted.rails[rail];
    let sweep = AcSweep { from_hz: 1e3, to_hz: 1e9, points_per_decade: 10 };
    let rows = parse_wrdata(&run_ngspice(&rail_netlist(&fitted, r, &sweep, Default::default(), "out.txt"), "out.txt"))
        .unwrap();
    let net = Network::of_rail(&fitted, r);
    for row in rows {
        let (ours, _) = magnitude_phase(net.impedance(row[0]));
        let (theirs, _) = magnitude_phase(Complex64::new(row[1], row[2]));
        assert!(rel(ours, theirs) < 1e-3, "at {} Hz: {ours} vs {theirs}", row[0]);
    }
}

/// A package too inductive for the band: no mix qualifies, the blame is the package with figures that match the
/// impedance of the package (and die) behind an ideal board (textbook circuit theory), nothing is offered to
/// apply, and the package inductance it names is enough for an ideal board.
#[test]
fn a_package_above_target_alone_is_named_with_its_figures_and_no_option_is_offered() {
    let mut board = edge_camera();
    let rail = board.rail_index("VCORE").unwrap();
    board.rails[rail].package = Some(Package { r_ohm: 2e-4, l_h: 2e-10 });
    let c = shelf_candidates(&["shelf-c100n-0402", "shelf-c10u-0603", "shelf-poly-220u-7343"], 6e-10);
    let s = suggest(&board, rail, &c, &SuggestOptions::default()).unwrap();
    assert!(s.options.is_empty());
    let closest = s.closest.as_ref().expect("the closest mix is shown");
    assert!(!closest.accepted, "and not offered to apply");
    let Some(Blocker::Package { at_hz, floor_ohm, required_ohm, needed_l_h, .. }) = s.blockers.first() else {
        panic!("blamed on the package: {:?}", s.blockers)
    };
    let pkg = |l: f64, f: f64| Complex64::new(2e-4, 2.0 * std::f64::consts::PI * f * l);
    let floor = |l: f64, f: f64| -> f64 {
        match board.rails[rail].die {
            Some(d) => {
                let zd = Complex64::new(d.esr_ohm, -1.0 / (2.0 * std::f64::consts::PI * f * d.capacitance_f));
                (1.0 / (1.0 / pkg(l, f) + 1.0 / zd)).norm()
            }
            None => pkg(l, f).norm(),
        }
    };
    assert!(rel(*floor_ohm, floor(2e-10, *at_hz)) < 1e-9, "{floor_ohm} at {at_hz}");
    assert!(*floor_ohm > *required_ohm);
    let l = needed_l_h.expect("a package inductance that would do");
    let band = board.rails[rail].band_hz_or_default();
    for f in hushrail::analysis::log_grid(band[0], band[1], 2000) {
        assert!(floor(l * 0.999, f) <= *required_ohm * 1.001, "at {f} Hz with {l} H");
    }
    let words = s.blockers[0].words();
    assert!(words.contains("package") && words.contains("Ω") && !words.contains("e-"), "{words}");
}

/// Count limits too tight: the floor named is a true bound (no mix within the limits, tried one by one with the
/// engine, meets target, and none goes below the floor at its frequency).
#[test]
fn a_count_floor_is_a_true_bound() {
    let board = edge_camera();
    let rail = board.rail_index("VCORE").unwrap();
    let c = shelf_candidates(&["shelf-c100n-0402", "shelf-c1u-0402"], 6e-10);
    let options = SuggestOptions { max_total: 6, max_per_part: 6, margin_db: 0.0, ..Default::default() };
    let s = suggest(&board, rail, &c, &options).unwrap();
    assert!(s.options.is_empty());
    let Some(Blocker::Count { at_hz, floor_ohm, .. }) = s.blockers.iter().find(|b| matches!(b, Blocker::Count { .. }))
    else {
        panic!("a count floor: {:?}", s.blockers)
    };
    for m in mixes(2, 6, 2).into_iter().filter(|m| m.iter().sum::<u32>() <= 6) {
        let fitted = apply_mix(&board, rail, &c, &m, false, None);
        let z = Network::of_rail(&fitted, &fitted.rails[rail]).impedance(*at_hz).norm();
        assert!(z >= floor_ohm * (1.0 - 1e-9), "{m:?}: {z} below the floor {floor_ohm}");
        assert!(!engine_accepts(&board, rail, &c, &m, Corner::Typical, 0.0), "{m:?} meets target");
    }
}

#[test]
fn a_kinds_limit_that_binds_is_said() {
    let board = edge_camera();
    let rail = board.rail_index("VCORE").unwrap();
    let shelf = hushrail::samples::shelf().unwrap();
    let c: Vec<Candidate> = shelf.parts.iter().map(|p| Candidate { part: p.clone(), mounting_h: 6e-10 }).collect();
    let s = suggest(&board, rail, &c, &SuggestOptions { max_kinds: 1, ..Default::default() }).unwrap();
    if s.options.is_empty() {
        assert!(
            s.blockers.iter().any(|b| matches!(b, Blocker::Kinds { max_kinds: 1, needed_kinds } if *needed_kinds > 1)),
            "{:?}",
            s.blockers
        );
    } else {
        assert!(s.options.iter().all(|o| o.kinds == 1));
    }
}

/// A long list of invented parts is cut to a shortlist and still gives options the engine accepts.
#[test]
fn a_long_candidate_list_is_shortlisted_and_still_answers() {
    let board = edge_camera();
    let rail = board.rail_index("VCORE").unwrap();
    let shelf = hushrail::samples::shelf().unwrap();
    // 300 variants of the shelf: each part at ten prices.
    let mut c = Vec::new();
    for k in 0..10 {
        for p in &shelf.parts {
            let mut part = p.clone();
            part.id = format!("{}-v{k}", p.id);
            part.unit_cost = p.unit_cost.map(|x| x * (1.0 + 0.1 * k as f64));
            c.push(Candidate { part, mounting_h: 6e-10 });
        }
    }
    let s = suggest(&board, rail, &c, &SuggestOptions::default()).unwrap();
    assert!(s.shortlisted.is_some_and(|n| n <= hushrail::analysis::SHORTLIST_SIZE));
    assert!(!s.options.is_empty());
    for o in &s.options {
        assert_eq!(o.counts.len(), c.len());
        assert!(engine_accepts(&board, rail, &c, &o.counts, Corner::Typical, 1.0));
        // The shortlist keeps the cheapest price of each part it uses.
        for (cand, _) in c.iter().zip(&o.counts).filter(|(_, n)| **n > 0) {
            assert!(cand.part.id.ends_with("-v0"), "{}", cand.part.id);
        }
    }
}

fn run(args: &[&str]) -> std::process::Output {
    hushrail().args(args).current_dir(root()).output().unwrap()
}

#[test]
fn suggest_cli_explains_when_nothing_fits_and_refuses_absurd_settings() {
    let out = run(&[
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
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", String::from_utf8_lossy(&out.stderr));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(!text.contains("null"), "no bare null in the JSON");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["options"].as_array().unwrap().len(), 0);
    assert_eq!(v["blockers"][0]["kind"], "count");
    assert!(v["blockers"][0]["text"].as_str().unwrap().contains("parts"));
    assert_eq!(v["closest"]["accepted"], false);

    let ok = run(&[
        "suggest",
        "sample_boards/edge_camera.json",
        "--rail",
        "V3V3_IO",
        "--from-shelf",
        "--objective",
        "count",
        "--corner",
        "worst",
        "--options",
        "1",
        "--json",
    ]);
    assert_eq!(ok.status.code(), Some(0), "{}", String::from_utf8_lossy(&ok.stderr));
    let v: serde_json::Value = serde_json::from_slice(&ok.stdout).unwrap();
    assert_eq!(v["objective"], "count");
    assert_eq!(v["corner"], "worst");
    let o = &v["options"][0];
    assert!(o["accepted"].as_bool().unwrap());
    assert_eq!(o["corners"].as_array().unwrap().len(), 2, "the other corner beside");
    assert!(o["corners"][0]["margin_db"].as_f64().unwrap() >= 1.0 - 1e-9, "the default margin is 1 dB");

    // Words: a board part list without areas says so, and one option is "1 option".
    let text =
        run(&["suggest", "sample_boards/edge_camera.json", "--rail", "VDDR", "--objective", "count", "--options", "1"]);
    let t = String::from_utf8_lossy(&text.stdout);
    assert!(t.contains("no area given"), "{t}");
    assert!(!t.contains("area 0.0") && !t.contains(" 1 parts") && !t.contains("1 options"), "{t}");
    assert_eq!(t.matches("mounted with").count(), 1, "the mounting stated once: {t}");

    for (flag, value, named) in [
        ("--mounting", "1e308", "--mounting"),
        ("--max-kinds", "0", "--max-kinds"),
        ("--margin-db", "NaN", "--margin-db"),
        ("--margin-db", "-1", "--margin-db"),
        ("--max-total", "4294967295", "--max-total"),
        ("--options", "100000", "--options"),
    ] {
        let arg = format!("{flag}={value}");
        let bad = run(&["suggest", "sample_boards/edge_camera.json", "--rail", "VCORE", "--from-shelf", &arg]);
        assert_eq!(bad.status.code(), Some(2), "{flag} {value}");
        let err = String::from_utf8_lossy(&bad.stderr);
        assert!(err.contains(named) && err.contains(" to "), "{flag} {value}: {err}");
    }
    let bad = run(&["suggest", "sample_boards/edge_camera.json", "--rail", "VCORE", "--candidates", "nope"]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("nope"));
    let _ = Objective::Area;
}
