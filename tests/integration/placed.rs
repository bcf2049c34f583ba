//! Placed rails: the board file's placement fields, the engine's reduction to the loads, the lumped limit, each
//! load's verdict and the findings a placement adds.

use crate::common::*;
use hushrail::analysis::placed::{
    LoadMatrix, MAX_ASCENT_TRIES, PlacedCircuit, Workspace, analyze_placed, effective, load_sweep, placed_worst_vertex,
};
use hushrail::analysis::{
    AnalysisOptions, SearchMethod, SearchOptions, Side, analyze_rail, explain, log_grid, search_words,
};
use hushrail::io::{board_to_string, parse_board, read_board};
use hushrail::model::{Board, Combine, GroupSpots, Load};
use hushrail::physics::Corner;
use hushrail::physics::plane_pair::single_sum;
use num_complex::Complex64 as C;

fn placed(name: &str) -> Board {
    read_board(&root().join("tests/networks/placed").join(name)).unwrap_or_else(|e| panic!("{e}"))
}

/// Every port of the rail moved to one point with one port size: the lumped limit.
fn all_at_one_point(mut board: Board, side: f64) -> Board {
    let at = [0.02, 0.015];
    let p = board.rails[0].placement.as_mut().unwrap();
    if let Some(s) = &mut p.source {
        s.at_m = at;
        s.port_m = Some(side);
    }
    for g in &mut p.groups {
        g.port_m = Some(side);
        match &mut g.spots {
            GroupSpots::At(xy) => *xy = at,
            GroupSpots::Each(spots) => spots.iter_mut().for_each(|s| s.at_m = at),
        }
    }
    for l in &mut p.loads {
        l.at_m = at;
        l.pins_m = Some([side, side]);
    }
    board
}

#[test]
fn placed_boards_read_write_and_read_back_the_same() {
    // load -> save -> load is exact and the text is stable (save twice gives the same bytes).
    for name in ["one_load.json", "two_loads.json", "far_part.json"] {
        let b = placed(name);
        let text = board_to_string(&b);
        let again = parse_board(&text, name).unwrap();
        assert_eq!(b, again, "{name}");
        assert_eq!(text, board_to_string(&again), "{name}");
        assert!(text.contains("\"plane_pair\"") && text.contains("\"at_m\""));
    }
    // A lumped board writes no placement fields at all (old files keep their text).
    for (_, path, b) in reference_boards() {
        let text = board_to_string(&b);
        let placed = b.rails.iter().any(|r| r.placement.is_some());
        assert!(!text.contains("plane_pair") || placed, "{}", show(&path));
        let mut lumped = b.clone();
        lumped.rails.retain(|r| r.placement.is_none());
        let text = board_to_string(&lumped);
        assert!(!text.contains("plane_pair") && !text.contains("at_m"), "{}", show(&path));
    }
}

#[test]
fn a_broken_placement_reports_every_problem_with_its_path() {
    let text = r#"{"format": "hushrail-board", "version": 1, "name": "bad",
      "parts": [{"id": "c", "kind": "ceramic", "capacitance_f": 1e-7, "esr_ohm": 0.01, "esl_h": 3e-10}],
      "rails": [
        {"name": "A", "voltage_v": 1, "ripple_pct": 5, "band_hz": [1e3, 1e8],
         "plane": {"capacitance_f": 1e-9},
         "package": {"r_ohm": 0.001, "l_h": 1e-11},
         "source": {"r_ohm": 0.001, "l_h": 1e-9, "at_m": [0.0005, 0.01]},
         "plane_pair": {"size_m": [0.05, 0.04], "dielectric_m": 1e-4, "er": 0.5},
         "loads": [{"name": "U1", "step_a": 1}, {"name": "U2", "step_a": 1, "at_m": [0.049, 0.02]}],
         "decaps": [{"part": "c", "count": 3, "mounting_h": 0,
                     "placements": [{"ref": "C1", "at_m": [0.01, 0.01]}, {"ref": "C2", "at_m": [0.06, 0.01]}]},
                    {"part": "c", "count": 1, "mounting_h": 0}]},
        {"name": "B", "voltage_v": 1, "ripple_pct": 5, "band_hz": [1e3, 1e8],
         "loads": [{"name": "U3", "step_a": 1, "at_m": [0.01, 0.01]}],
         "decaps": [{"part": "c", "count": 1, "mounting_h": 0, "port_m": 0.001}]}
      ]}"#;
    let err = parse_board(text, "bad.json").unwrap_err().to_string();
    for place in [
        "rails[0].plane:",
        "rails[0].package:",
        "rails[0].source.at_m:",
        "rails[0].plane_pair.er:",
        "rails[0].loads[0].at_m: missing",
        "rails[0].loads[1].at_m:",
        "rails[0].decaps[0].count:",
        "rails[0].decaps[0].placements[1].at_m:",
        "rails[0].decaps[1].at_m: missing",
        "rails[1].loads[0].at_m:",
        "rails[1].decaps[0].port_m:",
    ] {
        assert!(err.contains(place), "no {place} in:\n{err}");
    }
}

/// Z_cc − Z_cp·(Z_pp + D_p)⁻¹·Z_pc from the full matrix, by plain Gaussian elimination (an independent route).
fn reduced_directly(circuit: &PlacedCircuit, f: f64) -> Vec<C> {
    let z = circuit.plane.matrix(f);
    let n = circuit.plane.ports.len();
    let np = circuit.branches.len();
    let nc = n - np;
    let mut a: Vec<Vec<C>> = (0..np)
        .map(|i| {
            let mut row: Vec<C> = (0..np).map(|j| z[i * n + j]).collect();
            row[i] += circuit.branches[i].branch.impedance(f);
            row.extend((0..nc).map(|l| z[i * n + np + l]));
            row
        })
        .collect();
    for k in 0..np {
        let p = (k..np).max_by(|&x, &y| a[x][k].norm().total_cmp(&a[y][k].norm())).unwrap();
        a.swap(k, p);
        for i in 0..np {
            if i != k {
                let s = a[i][k] / a[k][k];
                let rk = a[k].clone();
                for (x, y) in a[i].iter_mut().zip(&rk) {
                    *x -= s * y;
                }
            }
        }
    }
    let mut out = vec![C::new(0.0, 0.0); nc * nc];
    for k in 0..nc {
        for l in 0..nc {
            let mut v = z[(np + k) * n + np + l];
            for i in 0..np {
                v -= z[(np + k) * n + i] * a[i][np + l] / a[i][i];
            }
            out[k * nc + l] = v;
        }
    }
    out
}

#[test]
fn the_reduction_to_the_loads_is_the_schur_complement() {
    // The engine solves a bordered system that keeps the plate term apart; the plain Schur complement of the full
    // matrix (the formula in PLANE-MODEL.md) must give the same impedances among the loads.
    let board = placed("two_loads.json");
    let rail = &board.rails[0];
    let circuit = PlacedCircuit::of_rail(&board, rail, Corner::Typical, 1e9).unwrap();
    let mut ws = Workspace::default();
    // From 1 MHz: below it the plain formula's own rounding (of the order of 1e-16 of the plate term, divided by
    // the μΩ-level spreading reactance it is subtracted down to) exceeds any useful tolerance.
    for f in [1e6, 3e7, 4e8, 9e8] {
        let m: LoadMatrix = circuit.solve(f, &mut ws);
        let direct = reduced_directly(&circuit, f);
        // The plain formula subtracts the plate term (kΩ at 10 kHz) from itself to leave mΩ: it carries rounding
        // of about 1e-16 of the plate term, which the engine's form avoids.
        let plate = circuit.plane.common_impedance(f).norm();
        for (x, y) in m.at_pins.iter().zip(&direct) {
            assert!((x - y).norm() <= 1e-9 * y.norm() + 1e-13 * plate, "at {f}: {x} vs {y}");
        }
        // Reciprocity survives the reduction and the packages.
        assert!((m.die(0, 1) - m.die(1, 0)).norm() <= 1e-12 * m.die(0, 1).norm());
    }
}

#[test]
fn batches_of_frequencies_and_a_dragged_part_give_the_plain_solve() {
    // The grid is factored four frequencies at a time, and a dragged part borders a factorization of the other
    // ports: both must give what a fresh one-frequency solve of the same layout gives (the same arithmetic in
    // another order, so to rounding).
    let board = placed("far_part.json");
    let rail = &board.rails[0];
    let circuit = PlacedCircuit::of_rail(&board, rail, Corner::Typical, 1e9).unwrap();
    let grid: Vec<f64> = (0..23).map(|k| 1e4 * 1e5f64.powf(k as f64 / 22.0)).collect();
    let mut ws = Workspace::default();
    let close = |a: &LoadMatrix, b: &LoadMatrix, what: &str| {
        for (x, y) in a.at_dies.iter().zip(&b.at_dies).chain(a.at_pins.iter().zip(&b.at_pins)) {
            assert!((x - y).norm() <= 1e-9 * y.norm(), "{what}: {x} vs {y}");
        }
    };
    for (m, &f) in circuit.solve_grid(&grid).iter().zip(&grid) {
        close(m, &circuit.solve(f, &mut ws), &format!("batch at {f}"));
    }
    let last = circuit.branches.len() - 1;
    let mut drag = circuit.clone().drag(last, &grid);
    for (x, y) in [(0.031, 0.012), (0.012, 0.005), (0.045, 0.015)] {
        let port = hushrail::physics::plane_pair::PortRect::square(x, y, 0.5e-3);
        let dragged = drag.move_to(port);
        let mut fresh = circuit.clone();
        fresh.move_branch(last, port);
        for (m, &f) in dragged.iter().zip(&grid) {
            close(m, &fresh.solve(f, &mut ws), &format!("dragged to ({x}, {y}) at {f}"));
        }
    }
}

#[test]
fn with_every_port_at_one_point_the_placed_engine_is_the_lumped_network() {
    // The lumped limit: every port at one point (one port size), so every entry of the plane's matrix is the
    // port's self-impedance z0, and the load sees all branches and the plane in parallel: 1/(Σ 1/Z_b + 1/z0),
    // with the branches as the lumped engine (Network) builds them.
    let board = all_at_one_point(placed("one_load.json"), 0.002);
    let rail = &board.rails[0];
    let circuit = PlacedCircuit::of_rail(&board, rail, Corner::Typical, 1e9).unwrap();
    let mut lumped_rail = rail.clone();
    lumped_rail.placement = None;
    let network = hushrail::analysis::Network::of_rail(&board, &lumped_rail);
    let port = circuit.plane.ports[0];
    let mut ws = Workspace::default();
    for k in 0..60 {
        let f = 1e4 * 1e5f64.powf(k as f64 / 59.0);
        let z0 = circuit.plane.matrix(f)[0];
        let expected = 1.0 / (1.0 / network.impedance(f) + 1.0 / z0);
        let got = circuit.solve(f, &mut ws).die(0, 0);
        assert!((got - expected).norm() <= 1e-9 * expected.norm(), "at {f}: {got} vs {expected}");
        // and z0 is the cavity model's self-impedance of that port (the prepared form's promise, 1e-4).
        let exact = single_sum(&circuit.plane.stackup, &port, &port, f, 1e-8);
        assert!((z0 - exact).norm() <= 1e-4 * exact.norm(), "at {f}: {z0} vs {exact}");
    }
}

#[test]
fn co_located_loads_share_one_verdict_under_either_combine_rule() {
    // With every port at one point every Z_kl is the same Z, so Σ|Z|ΔI/ΣΔI = |Z| and √Σ(|Z|ΔI)²/√ΣΔI² = |Z|: each
    // load's verdict is the one-node verdict of the rail with the loads' total step (sum, or root-sum-square).
    for combine in [Combine::Sum, Combine::Rss] {
        let mut two = all_at_one_point(placed("one_load.json"), 0.002);
        let rail = &mut two.rails[0];
        rail.combine = combine;
        rail.loads.push(Load::new("U2", 0.5, None));
        let mut second = rail.placement.as_ref().unwrap().loads[0];
        second.pins_m = Some([0.002, 0.002]);
        rail.placement.as_mut().unwrap().loads.push(second);
        let mut one = two.clone();
        let r1 = &mut one.rails[0];
        r1.loads = vec![Load::new("U1", r1.total_step_a(), None)];
        r1.combine = Combine::Sum;
        r1.placement.as_mut().unwrap().loads.truncate(1);
        let options = AnalysisOptions::default();
        let a2 = analyze_placed(&two, 0, &options).unwrap();
        let a1 = analyze_placed(&one, 0, &options).unwrap();
        assert!((a2.rail.target_ohm - a1.rail.target_ohm).abs() <= 1e-12 * a1.rail.target_ohm);
        for l in &a2.loads {
            assert!((l.worst_ohm - a1.loads[0].worst_ohm).abs() <= 1e-9 * l.worst_ohm, "{combine:?}");
            assert_eq!(l.meets_target, a1.loads[0].meets_target);
        }
    }
}

#[test]
fn each_load_gets_a_verdict_and_the_rail_takes_the_worst() {
    let board = placed("two_loads.json");
    let a = analyze_placed(&board, 0, &AnalysisOptions::default()).unwrap();
    assert_eq!(a.loads.len(), 2);
    let worst = a.loads.iter().map(|l| l.worst_ohm).fold(0.0, f64::max);
    assert_eq!(a.rail.worst_ohm, worst);
    assert_eq!(a.rail.meets_target, a.loads.iter().all(|l| l.meets_target));
    // analyze_rail (what every face reads) gives the same rail figures.
    let r = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    assert_eq!(r.worst_ohm, a.rail.worst_ohm);
    for l in &a.loads {
        assert!(l.worst_ohm.is_finite() && l.margin_db.is_finite());
    }
}

#[test]
fn a_far_part_is_named_with_the_inductance_the_planes_add() {
    let mut board = placed("far_part.json");
    // A band reaching past the pair's first resonance (mode (1, 0) at 1.18 GHz on this 60 mm pair).
    board.rails[0].band_hz = Some([1e4, 2e9]);
    let a = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    let findings = explain(&board, &board.rails[0], &a);
    let far: Vec<_> = findings.iter().filter(|f| f.text.contains("from U5: the planes add")).collect();
    assert!(!far.is_empty(), "{findings:#?}");
    assert!(findings.iter().any(|f| f.text.contains("resonates in mode (1, 0)")), "{findings:#?}");
    // Moving the small parts next to the load lowers its impedance at 300 MHz.
    let mut near = board.clone();
    let p = near.rails[0].placement.as_mut().unwrap();
    p.groups[1].spots = GroupSpots::At([0.011, 0.01]);
    let f = [3e8];
    let z_far = load_sweep(&board, &board.rails[0], 0, None, &f, Corner::Typical).unwrap()[0].norm();
    let z_near = load_sweep(&near, &near.rails[0], 0, None, &f, Corner::Typical).unwrap()[0].norm();
    assert!(z_near < 0.8 * z_far, "{z_near} vs {z_far}");
}

/// The grid's highest effective impedance (any load) of `board`'s placed rail in the worst corner with every part
/// taken as typed: solved on its own circuit, one frequency at a time (the plain solve, not the search's tree).
fn brute_grid_worst(board: &Board, grid: &[f64]) -> f64 {
    let rail = &board.rails[0];
    let circuit = PlacedCircuit::of_rail(board, rail, Corner::Worst, grid[grid.len() - 1]).unwrap();
    let mut ws = Workspace::default();
    let step = rail.total_step_a();
    grid.iter()
        .flat_map(|&f| effective(&circuit, &circuit.solve(f, &mut ws), rail.combine, step))
        .map(|z| z.norm())
        .fold(0.0, f64::max)
}

/// `board` with each group's part at the tolerance ends `ends[g]` = (C high?, ESR high?), its tolerances removed,
/// so the worst corner has exactly one vertex: these values.
fn at_vertex(board: &Board, ends: &[(bool, bool)]) -> Board {
    let mut b = board.clone();
    let rail = b.rails[0].clone();
    for (g, group) in rail.decaps.iter().enumerate() {
        let mut part = board.part(&group.part).unwrap().clone();
        let (tc, tr) = (part.c_tolerance(), part.esr_tolerance());
        part.capacitance_f *= if ends[g].0 { 1.0 + tc } else { 1.0 - tc };
        part.esr_ohm *= if ends[g].1 { 1.0 + tr } else { 1.0 - tr };
        part.tolerance_pct = None;
        part.esr_tolerance_pct = Some(0.0);
        part.id = format!("{}-vertex{g}", part.id);
        b.rails[0].decaps[g].part = part.id.clone();
        b.parts.push(part);
    }
    b
}

/// The worst corner of a placed rail is searched on the placed circuit: against a brute force over every vertex
/// (each one its own board, its own circuit, solved one frequency at a time), the search finds the highest grid
/// figure and the vertex that gives it; past the exhaustive limit it says it found the best it could, no bound.
#[test]
fn the_placed_worst_corner_is_the_worst_vertex_by_brute_force() {
    let mut board = placed("two_loads.json");
    // Tolerances on two of the three groups (the third varies its ESR by the default ±30 %): 4 × 4 × 2 vertices.
    for (id, pct) in [("c1u", 10.0), ("c22u", 20.0)] {
        board.parts.iter_mut().find(|p| p.id == id).unwrap().tolerance_pct = Some(pct);
    }
    let rail = board.rails[0].clone();
    let band = rail.band().unwrap().hz;
    let grid = log_grid(band[0], band[1], 120);
    let mut brute = Vec::new();
    for v in 0..64u32 {
        let ends: Vec<(bool, bool)> = (0..3).map(|g| (v >> (2 * g) & 1 == 1, v >> (2 * g + 1) & 1 == 1)).collect();
        // The third group gives no C tolerance: its C end is one vertex, not two.
        if ends[2].0 {
            continue;
        }
        brute.push((brute_grid_worst(&at_vertex(&board, &ends), &grid), ends));
    }
    assert_eq!(brute.len(), 32);
    let (top, top_ends) = brute.iter().cloned().max_by(|a, b| a.0.total_cmp(&b.0)).unwrap();
    let typical = brute_grid_worst(&at_vertex(&board, &[(true, true); 3]), &grid);
    let low = brute.iter().map(|b| b.0).fold(f64::INFINITY, f64::min);
    assert!(top > low * 1.01, "the vertices differ, so choosing matters ({low} .. {top}, one vertex {typical})");

    let mut circuit = PlacedCircuit::of_rail(&board, &rail, Corner::Worst, band[1]).unwrap();
    let found = placed_worst_vertex(&board, &rail, &mut circuit, &grid, &SearchOptions::default());
    assert_eq!(found.method, SearchMethod::Exhaustive);
    assert_eq!((found.vertices, found.evaluated), (32.0, 32));
    assert!(rel(found.grid_worst_ohm, top) < 1e-9, "search {} vs brute force {top}", found.grid_worst_ohm);
    let ends: Vec<(bool, bool)> =
        found.groups.iter().map(|g| (g.capacitance == Side::High, g.esr == Side::High)).collect();
    let c_ok = |g: usize| found.groups[g].capacitance != Side::Middle || g == 2;
    assert!((0..3).all(c_ok) && found.groups[2].capacitance == Side::Middle);
    assert!(rel(brute_grid_worst(&at_vertex(&board, &ends), &grid), top) < 1e-9, "{ends:?} vs {top_ends:?}");
    // The circuit is left at the vertex.
    let step = rail.total_step_a();
    let mut ws = Workspace::default();
    let left = grid
        .iter()
        .flat_map(|&f| effective(&circuit, &circuit.solve(f, &mut ws), rail.combine, step))
        .map(|z| z.norm())
        .fold(0.0, f64::max);
    assert!(rel(left, top) < 1e-9);

    // The rail's worst corner takes this vertex: the analysis reports it and its figure is at least the grid's.
    let a = analyze_rail(
        &board,
        0,
        &AnalysisOptions { corner: Corner::Worst, band_points: 120, ..AnalysisOptions::default() },
    )
    .unwrap();
    assert_eq!(a.vertex.as_ref().unwrap().groups, found.groups);
    assert!(a.worst_ohm >= top * (1.0 - 1e-9));
    assert!(search_words(&a).unwrap().contains("every one of 32 tolerance vertices tried"));

    // Past the exhaustive limit: a vertex found by ascent, its figure that vertex's own, no bound claimed.
    let mut circuit = PlacedCircuit::of_rail(&board, &rail, Corner::Worst, band[1]).unwrap();
    let options = SearchOptions { exhaustive_limit: 4.0, ..SearchOptions::default() };
    let ascent = placed_worst_vertex(&board, &rail, &mut circuit, &grid, &options);
    assert_eq!(ascent.method, SearchMethod::BestFound);
    assert!(ascent.bound_ohm.is_infinite() && ascent.evaluated <= MAX_ASCENT_TRIES);
    let ends: Vec<(bool, bool)> =
        ascent.groups.iter().map(|g| (g.capacitance == Side::High, g.esr == Side::High)).collect();
    assert!(rel(brute_grid_worst(&at_vertex(&board, &ends), &grid), ascent.grid_worst_ohm) < 1e-9);
    assert!(ascent.grid_worst_ohm <= top * (1.0 + 1e-9));
    let mut worst_options = AnalysisOptions { corner: Corner::Worst, band_points: 120, ..AnalysisOptions::default() };
    worst_options.search = options;
    let a = analyze_rail(&board, 0, &worst_options).unwrap();
    assert!(search_words(&a).unwrap().contains("not proven the worst"));
}
