//! Placed rails against ngspice: the netlist `hushrail netlist --mesh` writes (the plane pair as a mesh of cells,
//! every branch at its port), run at two cell sizes and extrapolated, against the cavity-model engine. The mesh
//! converges at second order in the cell size, so (4·Z(h/2) − Z(h))/3 removes the leading error (Richardson
//! extrapolation). |Z| at every load of every network in tests/networks/placed/, and of every placed rail of the
//! sample boards, within 0.5 % below the second plane resonance.

use crate::common::*;
use hushrail::analysis::placed::load_sweep;
use hushrail::io::{AcSweep, mesh_netlist, parse_wrdata, read_board};
use hushrail::physics::Corner;
use num_complex::Complex64 as C;

/// Every board with a placed rail: the placed test networks, and the sample boards (their lumped rails are checked
/// on the lumped netlist in ngspice.rs). A sample's plane pair carries a loss tangent and foil skin loss that SPICE
/// cannot hold (PLANE-MODEL.md: compare with the same losses on both sides), so here it is taken without them: the
/// check is of the plane's reactive model and the ports, with every branch's own loss kept.
fn placed_boards() -> Vec<(std::path::PathBuf, hushrail::model::Board)> {
    let dir = root().join("tests/networks/placed");
    let mut paths: Vec<_> = std::fs::read_dir(&dir).unwrap().map(|e| e.unwrap().path()).collect();
    paths.sort();
    let mut out: Vec<_> = paths
        .into_iter()
        .filter(|p| p.extension().is_some_and(|e| e == "json"))
        .map(|p| {
            let b = read_board(&p).unwrap();
            (p, b)
        })
        .collect();
    for (_, path, mut board) in reference_boards() {
        if !path.starts_with(root().join("sample_boards")) {
            continue;
        }
        let mut placed = false;
        for rail in &mut board.rails {
            if let Some(p) = rail.placement.as_mut() {
                p.plane_pair.loss_tangent = None;
                p.plane_pair.copper_m = None;
                placed = true;
            }
        }
        if placed {
            out.push((path, board));
        }
    }
    assert!(out.len() >= 6, "the placed networks and the three sample boards");
    out
}

fn mesh_answer(board: &hushrail::model::Board, rail: usize, load: usize, sweep: &AcSweep, h: f64) -> Vec<(f64, C)> {
    let text = mesh_netlist(board, &board.rails[rail], sweep, h, (load, None), "out.txt", Corner::AsGiven).unwrap();
    let rows = parse_wrdata(&run_ngspice(&text, "out.txt")).unwrap();
    rows.iter().map(|r| (r[0], C::new(r[1], r[2]))).collect()
}

#[test]
fn placed_networks_match_ngspice_on_a_meshed_plane() {
    if !ngspice_available() {
        return;
    }
    for (path, board) in placed_boards() {
        let path = &path;
        for (ri, rail) in board.rails.iter().enumerate().filter(|(_, r)| r.placement.is_some()) {
            let st = rail.placement.as_ref().unwrap().plane_pair.stackup();
            let mut modes: Vec<f64> = (0..6)
                .flat_map(|m| (0..6).map(move |n| (m, n)))
                .filter(|&mn| mn != (0, 0))
                .map(|(m, n)| st.resonance_hz(m, n))
                .collect();
            modes.sort_by(f64::total_cmp);
            let top = 0.9 * modes[1];
            let sweep = AcSweep { from_hz: 1e6, to_hz: top, points_per_decade: 5 };
            for (k, load) in rail.loads.iter().enumerate() {
                // Cells of 1 mm and 0.5 mm: every port of the networks covers whole cells of both. The parts as
                // typed (the as-given corner) on both sides: the check is of the plane, not of the derating.
                let coarse = mesh_answer(&board, ri, k, &sweep, 1e-3);
                let fine = mesh_answer(&board, ri, k, &sweep, 5e-4);
                let freqs: Vec<f64> = fine.iter().map(|r| r.0).collect();
                let ours = load_sweep(&board, rail, k, None, &freqs, Corner::AsGiven).unwrap();
                let (mut worst, mut widest_step) = (0.0f64, 0.0f64);
                for ((c, fi), z) in coarse.iter().zip(&fine).zip(&ours) {
                    assert!((c.0 / fi.0 - 1.0).abs() < 1e-9);
                    // Every point, the flanks of the sharp resonances too: there the two meshes still differ by up
                    // to 17 % (a part's 0.5 mm port is one cell of the finer mesh, so the ports' spreading
                    // inductance, and with it the resonances, move with the cell size), yet the extrapolation
                    // lands within 0.1 % of ours (edge_camera's vision accelerator at 1.63 GHz: 37.8 and 44.6 mΩ
                    // on the meshes, 46.88 extrapolated, 46.92 ours). With 2 mm and 1 mm cells such points were
                    // 1.5 % off and had to be held to the mesh's own error instead.
                    let extrapolated = (4.0 * fi.1 - c.1) / 3.0;
                    let e = rel(z.norm(), extrapolated.norm());
                    worst = worst.max(e);
                    widest_step = widest_step.max(rel(fi.1.norm(), c.1.norm()));
                    assert!(
                        e < 5e-3,
                        "{} {} at {}: ours {} vs mesh {} (h: {}, h/2: {})",
                        show(path),
                        load.name,
                        fi.0,
                        z.norm(),
                        extrapolated.norm(),
                        c.1.norm(),
                        fi.1.norm()
                    );
                }
                eprintln!(
                    "{} {} {}: worst |Z| difference {worst:.2e} up to {top:.3e} Hz ({} points; the meshes themselves \
                     differ by up to {widest_step:.1e})",
                    show(path),
                    rail.name,
                    load.name,
                    fine.len()
                );
            }
        }
    }
}
