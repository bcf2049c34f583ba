//! The board map, driven headless as a user would: a part dragged (the figures at every step are the engine's, the
//! whole drag one undo step), a load clicked to show it, a lumped rail placed from the window; and the plane's
//! voltage the map draws, against the cavity model's single sum and the engine's own load matrix.

use crate::common::root;
use crate::gui::{assert_shows, click, engine, select_all_and_type};
use egui::{Key, Modifiers, vec2};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use hushrail::analysis::placed::{PlacedCircuit, Workspace, plane_field, port_currents};
use hushrail::gui::{App, CentralTab};
use hushrail::model::{Board, GroupSpots};
use hushrail::physics::Corner;
use hushrail::physics::plane_pair::{PortRect, cell_voltages, single_sum};

fn placed(name: &str) -> Board {
    hushrail::io::read_board(&root().join("tests/networks/placed").join(name)).expect("test network reads")
}

fn map_window(board: Board) -> Harness<'static, App> {
    let mut app = App::new_with_board(board, "placed.json", None);
    app.set_central_tab(CentralTab::Map);
    let mut harness =
        Harness::builder().with_size([1280.0, 800.0]).build_ui_state(|ui, app: &mut App| app.show(ui), app);
    harness.run();
    harness
}

/// Where part `reference` of group `group` sits on rail 0.
fn spot_of(board: &Board, group: usize, reference: &str) -> [f64; 2] {
    match &board.rails[0].placement.as_ref().unwrap().groups[group].spots {
        GroupSpots::Each(spots) => spots.iter().find(|s| s.reference == reference).unwrap().at_m,
        GroupSpots::At(xy) => *xy,
    }
}

#[test]
fn dragging_a_part_moves_it_the_figures_follow_at_every_step_and_one_undo_takes_it_back() {
    let board = placed("one_load.json");
    let from = spot_of(&board, 1, "C2");
    let mut harness = map_window(board.clone());
    let start = harness.state().map_point(from).expect("the map is drawn");
    // Points per metre, from the map's own transform.
    let scale = (harness.state().map_point([from[0] + 1e-3, from[1]]).unwrap().x - start.x) as f64 / 1e-3;
    assert!(scale > 1000.0, "the plane is drawn to a usable scale: {scale} points/m");

    harness.hover_at(start);
    harness.run();
    harness.drag_at(start);
    harness.run();
    for step in 1..=5 {
        harness.hover_at(start + vec2(-14.0 * step as f32, 9.0 * step as f32));
        harness.run();
        // At every step the window shows what the engine says for the board as it now is.
        let now = harness.state().board().clone();
        assert_shows(&harness, &engine(&now, 0));
        // Each group's sensitivity (as costly as the check on a placed rail) waits for the drop.
        assert!(harness.query_by_label_contains("worst |Z| per part").is_none(), "no sensitivity mid-drag");
    }
    let end = start + vec2(-70.0, 45.0);
    harness.drop_at(end);
    harness.run();
    let moved = spot_of(harness.state().board(), 1, "C2");
    // The part follows the pointer (y grows upwards on the map), to the 0.01 mm the map rounds to.
    let expected = [from[0] - 70.0 / scale, from[1] - 45.0 / scale];
    for axis in 0..2 {
        assert!((moved[axis] - expected[axis]).abs() < 2e-5, "C2 at {moved:?}, expected about {expected:?}");
    }
    assert_ne!(harness.state().board(), &board);
    assert_shows(&harness, &engine(harness.state().board(), 0));
    // Let go, each group's sensitivity is back, for the board as it now is.
    let result = hushrail::gui::results::compute(harness.state().board(), 0).unwrap();
    assert!(!result.check.sensitivity.is_empty());
    for s in &result.check.sensitivity {
        let line = format!("worst |Z| per part: {}", hushrail::analysis::sensitivity_words(s));
        assert!(harness.query_by_label(&line).is_some(), "shown after the drop: {line}");
    }

    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board, "the whole drag is one undo step");
}

#[test]
fn clicking_a_load_on_the_map_shows_its_impedance() {
    let board = placed("two_loads.json");
    let u1 = board.rails[0].placement.as_ref().unwrap().loads[0].at_m;
    let mut harness = map_window(board.clone());
    let at = harness.state().map_point(u1).unwrap();
    // A click: press and release at one spot.
    harness.hover_at(at);
    harness.run();
    harness.drag_at(at);
    harness.run();
    harness.drop_at(at);
    harness.run();
    // The header gives the shown load's own verdict line, as `check` words it.
    assert!(harness.query_by_label_contains("load U1:").is_some(), "the plot now shows U1");
    assert_eq!(harness.state().board(), &board, "a click on a load changes nothing on the board");
}

#[test]
fn a_lumped_rail_is_placed_from_the_window_in_one_undo_step() {
    let board = hushrail::samples::default_board().unwrap();
    assert!(board.rails[0].placement.is_none());
    let mut harness = map_window(board.clone());
    harness.get_by_label("Place on this plane pair").click();
    harness.run();
    let now = harness.state().board().clone();
    let p = now.rails[0].placement.as_ref().expect("the rail is placed");
    assert_eq!(p.plane_pair.size_m, [0.1, 0.08]);
    assert!(hushrail::model::validate_board(&now).is_empty(), "the placed board keeps every rule");
    let parts: u32 = now.rails[0].decaps.iter().map(|g| g.count).sum();
    let spots: usize = p.groups.iter().map(|g| if let GroupSpots::Each(s) = &g.spots { s.len() } else { 0 }).sum();
    assert_eq!(parts as usize, spots, "every part placed part by part");
    assert_shows(&harness, &engine(&now, 0));
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board);
}

/// The field's cells against the cavity model's single sum (itself held to the textbook resonances and the double
/// sum in plane_pair.rs): a cell of the grid and a port, 1 A at the port, away from the port.
#[test]
fn the_plane_voltage_field_agrees_with_the_single_sum() {
    let st = hushrail::physics::plane_pair::Stackup {
        size_m: [0.04, 0.03],
        dielectric_m: 1e-4,
        er: 4.3,
        loss_tangent: 0.02,
        conductor: hushrail::physics::plane_pair::Conductor::Perfect,
    };
    let port = PortRect::square(0.011, 0.009, 1e-3);
    let cells = [40, 30];
    for f in [1e7, 1.7e9, 3.1e9] {
        let field = cell_voltages(&st, &[port], &[num_complex::Complex64::new(1.0, 0.0)], f, cells, 6);
        let common = 1.0 / (st.size_m[0] * st.size_m[1] * st.shunt_per_area(f));
        for (ix, iy) in [(30, 20), (5, 25), (20, 4), (14, 12)] {
            let cell = PortRect { x: (ix as f64 + 0.5) * 1e-3, y: (iy as f64 + 0.5) * 1e-3, w: 1e-3, h: 1e-3 };
            let reference = single_sum(&st, &cell, &port, f, 1e-9);
            let got = field[iy * cells[0] + ix] + common;
            let err = (got - reference).norm() / reference.norm();
            assert!(err < 0.01, "cell ({ix}, {iy}) at {f} Hz: {got} against {reference} ({err:.2e})");
        }
    }
}

/// The port currents the field is drawn from give, at a load without a package, the voltage the engine's load
/// matrix gives (two solves of the same circuit by different routes), and the field's own load entry agrees.
#[test]
fn the_fields_port_currents_agree_with_the_engines_load_matrix() {
    let board = placed("one_load.json");
    let rail = &board.rails[0];
    for f in [1e6, 1.5e8, 2.2e9] {
        let circuit = PlacedCircuit::of_rail(&board, rail, Corner::Typical, f).unwrap();
        let m = circuit.solve(f, &mut Workspace::default());
        let step = rail.loads[0].step_a;
        let (currents, u) = port_currents(&circuit, 0, step, f).unwrap();
        let field = plane_field(&board, rail, 0, f, Corner::Typical, 40).unwrap();
        let np = circuit.branches.len();
        let engine_v = -m.pins(0, 0) * step;
        let err = (field.port_v[np] - engine_v).norm() / engine_v.norm();
        assert!(err < 1e-9, "at {f} Hz: {} against {engine_v} ({err:.1e})", field.port_v[np]);
        // Kirchhoff: what the branches and the load put into the plane, the plate takes.
        let total: num_complex::Complex64 = currents.iter().sum();
        let plate = circuit.plane.plate_admittance(f) * u;
        assert!((total - plate).norm() <= 1e-9 * step, "{total} against {plate}");
        assert!(field.max_v.is_finite() && field.max_v > 0.0);
    }
}

/// File ▸ Import the rail's placement gives the board `hushrail place` writes from the same files (one library
/// path), says what matched, and is one undo step.
#[test]
fn importing_the_placement_in_the_window_gives_what_the_command_line_gives() {
    let layout = root().join("tests/networks/layout");
    let board = hushrail::io::read_board(&layout.join("lumped_board.json")).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("placed.json");
    let o = crate::common::hushrail()
        .args(["place", layout.join("lumped_board.json").to_str().unwrap(), "--rail", "V1V2"])
        .args(["--centroid", layout.join("centroid_mm.csv").to_str().unwrap()])
        .args(["--bom", layout.join("bom.csv").to_str().unwrap(), "--regulator", "U3"])
        .args(["--size", "0.1,0.06", "--dielectric", "100u", "--er", "4.3", "--loss-tangent", "0.02"])
        .args(["-o", out.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let expected = hushrail::io::read_board(&out).unwrap();

    let mut harness = map_window(board.clone());
    // The rail is lumped: the map's form gives the plane pair.
    select_all_and_type(&mut harness, "width (x)", "100mm");
    select_all_and_type(&mut harness, "height (y)", "60 mm");
    click(&mut harness, "File");
    click(&mut harness, "Import the rail's placement (centroid and BOM CSV)…");
    select_all_and_type(&mut harness, "placement CSV", layout.join("centroid_mm.csv").to_str().unwrap());
    select_all_and_type(&mut harness, "BOM CSV (optional)", layout.join("bom.csv").to_str().unwrap());
    select_all_and_type(&mut harness, "regulator's designator", "U3");
    click(&mut harness, "Import");
    assert_eq!(harness.state().board(), &expected, "the window places the rail as `hushrail place` does");
    assert!(harness.query_by_label_contains("group 1 c100n-0402: C1, C2, C3, C4 from the BOM (line 2)").is_some());
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board, "the import is one undo step");
}
