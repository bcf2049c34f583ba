//! Verdicts a reviewer can sign: the worst corner against a brute-force enumeration, the yield against an exact
//! integral, the susceptance shares against a direct computation, rating cautions failing the rail, the typical
//! corner as the default, and the traces that make a check re-runnable.

use crate::common::*;
use hushrail::analysis::{
    AnalysisOptions, BranchKind, CheckOptions, Network, Scale, SearchMethod, SearchOptions, View, analyze_rail,
    check_rail, log_grid, worst_vertex, yield_estimate,
};
use hushrail::io::read_board;
use hushrail::model::{Board, DecapGroup, Part, PartKind};
use hushrail::physics::Corner;

fn run(args: &[&str]) -> (i32, String, String) {
    let out = hushrail().args(args).current_dir(root()).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Every vertex of every varied group, built through the plain network code one by one: the highest |Z| on the
/// grid. The outside reference for the search (a brute force that shares nothing with it but the network).
fn brute_force(board: &Board, rail_index: usize, view: View, grid: &[f64]) -> f64 {
    let rail = &board.rails[rail_index];
    let sides: Vec<Vec<Scale>> = rail
        .decaps
        .iter()
        .map(|g| {
            let p = board.part(&g.part).unwrap();
            let (tc, tr) = (p.c_tolerance(), p.esr_tolerance());
            let mut v = Vec::new();
            for c in if tc > 0.0 { vec![1.0 - tc, 1.0 + tc] } else { vec![1.0] } {
                for r in if tr > 0.0 { vec![1.0 - tr, 1.0 + tr] } else { vec![1.0] } {
                    v.push(Scale { c, esr: r });
                }
            }
            v
        })
        .collect();
    let total: usize = sides.iter().map(Vec::len).product();
    let mut worst: f64 = 0.0;
    for mut n in 0..total {
        let scales: Vec<Scale> = sides
            .iter()
            .map(|s| {
                let x = s[n % s.len()];
                n /= s.len();
                x
            })
            .collect();
        let net = Network::of_rail_scaled(board, rail, Corner::Worst, &scales);
        for &f in grid {
            worst = worst.max(net.impedance_in(f, view).norm());
        }
    }
    worst
}

/// Give every part of a board a capacitance tolerance (the ESR keeps the documented default).
fn with_tolerances(mut board: Board, pct: &[f64]) -> Board {
    for (i, p) in board.parts.iter_mut().enumerate() {
        if p.kind != PartKind::Measured {
            p.tolerance_pct = Some(pct[i % pct.len()]);
        }
    }
    board
}

#[test]
fn worst_vertex_equals_brute_force_enumeration() {
    // Small rails: two groups, the die view through a package, and six groups of the ten-group network (4 096
    // vertices). The search must find the brute force's highest |Z| on the same grid, both when it enumerates
    // and when branch and bound is forced.
    let ten = read_board(&root().join("tests/networks/ten_groups.json")).unwrap();
    let mut six = ten.clone();
    six.rails[0].decaps.truncate(6);
    let cases = [
        (
            with_tolerances(read_board(&root().join("tests/networks/big_small.json")).unwrap(), &[20.0, 10.0]),
            View::Board,
        ),
        (
            with_tolerances(read_board(&root().join("tests/networks/package_die.json")).unwrap(), &[20.0, 10.0]),
            View::Die,
        ),
        (with_tolerances(six, &[20.0, 10.0, 5.0]), View::Board),
    ];
    for (board, view) in cases {
        let rail = &board.rails[0];
        let band = rail.band().unwrap().hz;
        let grid = log_grid(band[0], band[1], 200);
        let reference = brute_force(&board, 0, view, &grid);
        for options in [SearchOptions::default(), SearchOptions { exhaustive_limit: 0.0, node_budget: u64::MAX }] {
            let v = worst_vertex(&board, rail, view, &grid, &options);
            assert!(v.method != SearchMethod::Bounded, "{}: the search finished", board.name);
            assert!(
                rel(v.grid_worst_ohm, reference) < 1e-9,
                "{} ({:?}): search {} vs brute force {}",
                board.name,
                v.method,
                v.grid_worst_ohm,
                reference
            );
            // The vertex it names gives that value when built through the network.
            let net = Network::of_rail_scaled(&board, rail, Corner::Worst, &v.scales());
            let at_vertex = grid.iter().map(|&f| net.impedance_in(f, view).norm()).fold(0.0, f64::max);
            assert!(rel(at_vertex, reference) < 1e-9);
        }
    }
}

#[test]
fn a_stopped_search_still_bounds_every_vertex() {
    // With a budget of a few nodes the search stops early; its bound must still be at or above the true worst
    // (the brute force) and its vertex at or below it.
    let mut board = read_board(&root().join("tests/networks/ten_groups.json")).unwrap();
    board.rails[0].decaps.truncate(5);
    let board = with_tolerances(board, &[20.0]);
    let rail = &board.rails[0];
    let band = rail.band().unwrap().hz;
    let grid = log_grid(band[0], band[1], 120);
    let reference = brute_force(&board, 0, View::Board, &grid);
    let v = worst_vertex(&board, rail, View::Board, &grid, &SearchOptions { exhaustive_limit: 0.0, node_budget: 3 });
    assert!(v.grid_worst_ohm <= reference * (1.0 + 1e-12));
    assert!(v.bound_ohm >= reference * (1.0 - 1e-12), "bound {} below the true worst {reference}", v.bound_ohm);
}

#[test]
fn esr_tolerance_is_searched() {
    // ESR alone moves an anti-resonance peak (a damped parallel resonance's height goes with the resistance in
    // it): with no capacitance tolerance, the worst corner must still rise above the typical one.
    let mut board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    for p in &mut board.parts {
        p.tolerance_pct = None;
    }
    let i = board.rail_index("VCORE").unwrap();
    let typical = analyze_rail(&board, i, &AnalysisOptions::default()).unwrap();
    let worst = analyze_rail(&board, i, &AnalysisOptions { corner: Corner::Worst, ..Default::default() }).unwrap();
    assert!(worst.worst_ohm > typical.worst_ohm * 1.05, "{} vs {}", worst.worst_ohm, typical.worst_ohm);
    let v = worst.vertex.unwrap();
    assert!(v.groups.iter().any(|g| g.esr == hushrail::analysis::Side::Low));
}

#[test]
fn yield_matches_the_exact_fraction_of_a_one_part_rail() {
    // One 100 µF part (ESR 10 mΩ ±30 %, ESL 1 nH, C ±20 %) on a rail whose band ends far below its
    // self-resonance: |Z| falls across the band, so the worst is at the band's low edge f0 and a board meets
    // target T exactly when sqrt(R² + (1/(ωC) − ωL)²) ≤ T, i.e. C ≥ 1/(ω(ωL + sqrt(T² − R²))). With C and R
    // uniform the fraction is the mean over R of the share of C above that threshold: integrated here by
    // Simpson's rule (a hand computation), against the tool's random draws.
    let mut part = Part::new("c100u", PartKind::Ceramic, 100e-6, 0.01, 1e-9);
    part.tolerance_pct = Some(20.0);
    part.esr_tolerance_pct = Some(30.0);
    let mut board = read_board(&root().join("tests/networks/single_cap.json")).unwrap();
    board.parts = vec![part];
    let rail = &mut board.rails[0];
    rail.decaps = vec![DecapGroup::new("c100u", 1, 0.0)];
    rail.band_hz = Some([1e3, 1e4]);
    rail.voltage_v = 1.0;
    rail.ripple_pct = 15.0;
    rail.loads[0].step_a = 0.1;
    let target = 1.5;
    let w = 2.0 * std::f64::consts::PI * 1e3;
    let n = 2000;
    let mut sum = 0.0;
    for k in 0..=n {
        let v = 0.7 + 0.6 * k as f64 / n as f64;
        let r = 0.01 * v;
        let c_min = 1.0 / (w * (w * 1e-9 + (target * target - r * r).sqrt()));
        let share = ((1.2 - c_min / 100e-6) / 0.4).clamp(0.0, 1.0);
        let weight = if k == 0 || k == n {
            1.0
        } else if k % 2 == 1 {
            4.0
        } else {
            2.0
        };
        sum += weight * share;
    }
    let exact = sum / (3.0 * n as f64);
    let samples = 100_000;
    let y = yield_estimate(&board, 0, View::Board, 50, samples, 7, 2).unwrap();
    let sigma = (exact * (1.0 - exact) / samples as f64).sqrt();
    assert!((y.fraction - exact).abs() < 4.0 * sigma, "yield {} vs exact {exact} (σ {sigma})", y.fraction);
    assert!(exact > 0.2 && exact < 0.5, "the threshold falls inside the tolerance: {exact}");
    // Failing boards fail at the band's low edge, where the capacitance matters.
    assert_eq!(y.failing[0].from_hz, 1e3);
    // The same seed gives the same boards whatever the threads.
    assert_eq!(
        yield_estimate(&board, 0, View::Board, 50, 1000, 7, 1),
        yield_estimate(&board, 0, View::Board, 50, 1000, 7, 2)
    );
}

#[test]
fn peak_causes_follow_the_susceptance_shares() {
    // VCORE with one 4.7 µF part added: the shares of the inductive and capacitive susceptance at each peak are
    // computed here directly, Im(1/(R + j(ωL − 1/(ωC)))) per branch from the parts' values (each part at its
    // rail's DC bias), and the engine must name the branch with the largest share and give it.
    let mut board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let mut p = Part::new("mlcc-4u7-0603", PartKind::Ceramic, 4.7e-6, 0.006, 0.45e-9);
    p.rated_voltage_v = Some(10.0);
    board.parts.push(p);
    let i = board.rail_index("VCORE").unwrap();
    let mounting = board.rails[i].decaps[1].mounting_h;
    board.rails[i].decaps.push(DecapGroup::new("mlcc-4u7-0603", 1, mounting));
    let a = analyze_rail(&board, i, &AnalysisOptions::default()).unwrap();
    let rail = &board.rails[i];
    assert!(!a.antiresonances.is_empty());
    for peak in &a.antiresonances {
        let w = 2.0 * std::f64::consts::PI * peak.freq_hz;
        let mut b: Vec<(String, f64)> = Vec::new();
        if let Some(s) = &rail.source {
            b.push((
                "source".into(),
                -1.0 / (w * s.l_h) * (w * s.l_h).powi(2) / (s.r_ohm.powi(2) + (w * s.l_h).powi(2)),
            ));
        }
        if let Some(pl) = rail.plane {
            let x = w * pl.esl_h - 1.0 / (w * pl.capacitance_f);
            b.push(("plane".into(), -x / (pl.esr_ohm.powi(2) + x * x)));
        }
        for g in &rail.decaps {
            let part = board.part(&g.part).unwrap();
            // The typical corner's capacitance: the part at the rail's DC bias (its own curve or the generic
            // model, whose values the physics tests hold).
            let bias = hushrail::physics::derate(&board, part, rail.voltage_v, Corner::Typical).ratio();
            let (r, l, c) = (part.esr_ohm, part.esl_h + g.mounting_h, part.capacitance_f * bias);
            let x = w * l - 1.0 / (w * c);
            let n = f64::from(g.count);
            b.push((format!("{} ×{}", part.id, g.count), -x / (r * r + x * x) * n));
        }
        let side = |inductive: bool| {
            let of = |x: f64| if inductive { x < 0.0 } else { x > 0.0 };
            let total: f64 = b.iter().filter(|(_, x)| of(*x)).map(|(_, x)| x.abs()).sum();
            let best = b.iter().filter(|(_, x)| of(*x)).max_by(|p, q| p.1.abs().total_cmp(&q.1.abs())).unwrap();
            (best.0.clone(), best.1.abs() / total)
        };
        let (ind, ind_share) = side(true);
        let (cap, cap_share) = side(false);
        let e_ind = peak.inductive_side.as_ref().unwrap();
        let e_cap = peak.capacitive_side.as_ref().unwrap();
        assert_eq!(e_ind.label, ind, "inductive side at {} Hz", peak.freq_hz);
        assert_eq!(e_cap.label, cap, "capacitive side at {} Hz", peak.freq_hz);
        assert!((e_ind.share - ind_share).abs() < 1e-9 && (e_cap.share - cap_share).abs() < 1e-9);
    }
    // The peak near 6.7 MHz is carried by the 4 × 10 µF group on its inductive side, not by the single part
    // whose self-resonance is nearest.
    let peak = a.antiresonances.iter().find(|p| p.freq_hz > 3e6 && p.freq_hz < 12e6).unwrap();
    let side = peak.inductive_side.as_ref().unwrap();
    assert_eq!(side.label, "mlcc-10u-0603 ×4");
    assert!(matches!(side.kind, BranchKind::Group(1)) && side.share > 0.5, "{side:?}");
}

#[test]
fn a_part_rated_below_its_rail_fails_the_rail_everywhere() {
    // The analog rail (3.3 V) meets target with a wide margin; a 2.5 V rating on its 4.7 µF parts must fail it
    // all the same, in the check's exit code, its JSON, its text and the report.
    let dir = tempfile::tempdir().unwrap();
    let mut board = read_board(&root().join("sample_boards/motor_drive.json")).unwrap();
    let i = board.parts.iter().position(|p| p.id == "mlcc-4u7-0805").unwrap();
    board.parts[i].rated_voltage_v = Some(2.5);
    let path = dir.path().join("over.json");
    hushrail::io::write_board(&path, &board).unwrap();
    let (code, stdout, stderr) = run(&["check", path.to_str().unwrap(), "--json"]);
    assert_eq!(code, 1, "{stderr}");
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let analog = v["rails"].as_array().unwrap().iter().find(|r| r["name"] == "V3V3_ANALOG").unwrap();
    assert_eq!(analog["passes"], false);
    assert_eq!(analog["meets_target"], true, "the impedance alone meets target");
    let c = analog["cautions"].as_array().unwrap().iter().find(|c| c["kind"] == "over_rating").unwrap();
    assert_eq!(c["part"], "mlcc-4u7-0805");
    assert!(c["text"].as_str().unwrap().contains("rated 2.50 V"), "{c}");
    assert!(
        analog["findings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|f| f["severity"] == "fail" && f["text"].as_str().unwrap().contains("mlcc-4u7-0805"))
    );
    // The MCU rail (1.2 V) uses the same part within its rating and is not failed by it.
    let mcu = v["rails"].as_array().unwrap().iter().find(|r| r["name"] == "V1V2_MCU").unwrap();
    assert!(!mcu["cautions"].as_array().unwrap().iter().any(|c| c["fails"] == true));
    let (_, text, _) = run(&["check", path.to_str().unwrap()]);
    assert!(text.contains("FAILS: mlcc-4u7-0805 rated below the rail's voltage"), "{text}");
    let index = board.rail_index("V3V3_ANALOG").unwrap();
    let check = check_rail(&board, index, &CheckOptions::default()).unwrap();
    assert!(!check.passes && check.verdict.meets_target);
    let html = hushrail::io::report_html(
        &board,
        &hushrail::io::ReportContext {
            source: "over.json".into(),
            sha256: "0".repeat(64),
            command: "hushrail check over.json".into(),
            date: "2031-07-04".into(),
            unsaved_edits: false,
        },
        None,
    );
    assert!(html.contains("<td>V3V3_ANALOG</td>"));
    assert!(html.contains("FAILS: mlcc-4u7-0805"));
    // A 15 V rail on a 25 V ceramic part is within its rating but above the usual derating (common practice:
    // half the rating for ceramics): a caution, not a failure.
    let (_, stdout, _) = run(&["check", "sample_boards/motor_drive.json", "--json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let gate = v["rails"].as_array().unwrap().iter().find(|r| r["name"] == "V15_GATE").unwrap();
    assert!(gate["cautions"].as_array().unwrap().iter().any(|c| c["kind"] == "low_margin" && c["fails"] == false));
}

#[test]
fn the_typical_corner_is_the_default_and_takes_the_dc_bias() {
    // A 22 µF 6.3 V X5R 0805 on 3.3 V keeps about 40 % of its capacitance (typical makers' curves, from
    // memory); the default verdict must take that, and "as given" must still be there with the full value.
    let mut board = read_board(&root().join("sample_boards/sensor_hub.json")).unwrap();
    let i = board.rail_index("VRADIO").unwrap();
    board.rails[i].voltage_v = 3.3;
    let check = check_rail(&board, i, &CheckOptions::default()).unwrap();
    assert_eq!(check.verdict.corner, Corner::Typical);
    let g = check.verdict.groups.iter().find(|g| g.part == "mlcc-22u-0805").unwrap();
    let kept = g.effective_c_f / 22e-6;
    assert!((kept - 0.40).abs() < 0.1, "keeps {kept}");
    let as_given = check.corner(Corner::AsGiven).unwrap();
    assert_eq!(as_given.groups.iter().find(|g| g.part == "mlcc-22u-0805").unwrap().effective_c_f, 22e-6);
    // The check's text says which corner the verdict uses.
    let (_, text, _) = run(&["check", "sample_boards/sensor_hub.json"]);
    assert!(text.contains("typical corner"), "{text}");
    // A part's own curve overrides the generic model.
    let j = board.parts.iter().position(|p| p.id == "mlcc-22u-0805").unwrap();
    board.parts[j].dc_bias = Some(vec![[3.3, 0.9]]);
    let check = check_rail(&board, i, &CheckOptions::default()).unwrap();
    let g = check.verdict.groups.iter().find(|g| g.part == "mlcc-22u-0805").unwrap();
    assert!((g.effective_c_f / 22e-6 - 0.9).abs() < 1e-12);
}

#[test]
fn sensitivity_is_the_change_of_a_re_analysis() {
    // Each group's "one more" and "one fewer" against the engine run again with the count changed (worst on the
    // same scan grid).
    let board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let i = board.rail_index("VCORE").unwrap();
    let check = check_rail(&board, i, &CheckOptions::default()).unwrap();
    let grid_worst = |b: &Board| {
        let a = analyze_rail(b, i, &AnalysisOptions::default()).unwrap();
        a.scan.z.iter().map(|z| z.norm()).fold(0.0, f64::max)
    };
    let base = grid_worst(&board);
    for s in &check.sensitivity {
        let mut more = board.clone();
        more.rails[i].decaps[s.group].count += 1;
        assert!(rel(s.more_ohm + base, grid_worst(&more)) < 1e-9, "{}", s.part);
        let mut fewer = board.clone();
        fewer.rails[i].decaps[s.group].count -= 1;
        assert!(rel(s.fewer_ohm.unwrap() + base, grid_worst(&fewer)) < 1e-9, "{}", s.part);
    }
    assert_eq!(check.sensitivity.len(), board.rails[i].decaps.len());
}

#[test]
fn check_and_report_say_what_they_judged() {
    // The hash is of the bytes read: against coreutils' sha256sum where it is installed.
    let (code, stdout, _) = run(&["check", "sample_boards/sensor_hub.json", "--json"]);
    assert!(code == 0 || code == 1);
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let bytes = std::fs::read(root().join("sample_boards/sensor_hub.json")).unwrap();
    let ours = hushrail::io::sha256_hex(&bytes);
    assert_eq!(v["trace"]["sha256"], ours.as_str());
    if let Ok(out) =
        std::process::Command::new("sha256sum").arg("sample_boards/sensor_hub.json").current_dir(root()).output()
    {
        let theirs = String::from_utf8_lossy(&out.stdout);
        assert_eq!(theirs.split_whitespace().next(), Some(ours.as_str()), "sha256sum agrees");
    }
    assert_eq!(v["trace"]["command"], "hushrail check sample_boards/sensor_hub.json --json");
    assert_eq!(v["trace"]["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(v["trace"]["source"], "sample_boards/sensor_hub.json");
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("r.html");
    let (code, _, err) = run(&["report", "sample_boards/sensor_hub.json", "-o", out.to_str().unwrap(), "--no-droop"]);
    assert_eq!(code, 0, "{err}");
    let html = std::fs::read_to_string(&out).unwrap();
    assert!(html.contains(&ours) && html.contains("hushrail check sample_boards/sensor_hub.json"));
    assert!(html.contains("id=\"sign-off\"") && html.contains("reviewer") && html.contains("decision"));
    assert!(!html.contains("UNSAVED EDITS"));
}

#[test]
fn readme_help_and_report_carry_the_same_cautions() {
    // One text: README repeats crate::notes word for word (line breaks aside); the report lists every one.
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let flat = |s: &str| s.split_whitespace().collect::<Vec<_>>().join(" ");
    let readme = flat(&readme);
    let board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let html = hushrail::io::report_html(
        &board,
        &hushrail::io::ReportContext {
            source: "x".into(),
            sha256: "0".repeat(64),
            command: "hushrail check x".into(),
            date: "2031-07-04".into(),
            unsaved_edits: false,
        },
        None,
    );
    for note in hushrail::notes::all() {
        assert!(readme.contains(&flat(note)), "README lacks: {note}");
        assert!(html.contains(&hushrail::io::escape(note)), "report lacks: {note}");
    }
}
