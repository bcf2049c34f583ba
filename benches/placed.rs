//! Placed-rail benchmarks: 60 ports on a 10 cm × 8 cm plane pair (a regulator, 4 loads, 55 parts placed one by
//! one), 1000 frequencies, the impedance at every load; and one part moved, then the same again.
//! Run with `cargo bench --bench placed`.

use criterion::{Criterion, criterion_group, criterion_main};
use hushrail::analysis::placed::{PlacedCircuit, forget_prepared_planes, placed_worst_vertex};
use hushrail::analysis::{SearchOptions, log_grid};
use hushrail::model::{
    Board, DecapGroup, Die, GroupPlacement, GroupSpots, Load, LoadPlacement, Package, Part, PartKind, PartSpot,
    Placement, PlanePair, Rail, Source, SourcePlacement,
};
use hushrail::physics::Corner;
use hushrail::physics::plane_pair::PortRect;
use std::hint::black_box;

/// An invented layout: four chips in a row, their parts in rings around them, bulk parts near the regulator.
fn sixty_ports() -> Board {
    let mut board = Board::named("bench: 60 ports");
    board.parts = vec![
        Part::new("c22u", PartKind::Ceramic, 22e-6, 3e-3, 5e-10),
        Part::new("c1u", PartKind::Ceramic, 1e-6, 1e-2, 3.5e-10),
        Part::new("c100n", PartKind::Ceramic, 1e-7, 2e-2, 2.5e-10),
    ];
    let loads_at = [[0.02, 0.04], [0.04, 0.045], [0.06, 0.04], [0.08, 0.045]];
    let mut groups = Vec::new();
    let mut spots = Vec::new();
    // 5 bulk parts near the regulator, then 50 small ones, 12 or 13 around each chip.
    let bulk: Vec<PartSpot> =
        (0..5).map(|i| PartSpot { reference: format!("C{i}"), at_m: [0.01 + 0.004 * i as f64, 0.01] }).collect();
    groups.push(DecapGroup::new("c22u", 5, 4e-10));
    spots.push(GroupPlacement { spots: GroupSpots::Each(bulk), port_m: None });
    for (gi, part) in ["c1u", "c100n"].iter().enumerate() {
        let mut each = Vec::new();
        for k in 0..25 {
            let chip = loads_at[k % 4];
            let angle = (k as f64) * 0.7 + gi as f64;
            let r = 0.006 + 0.002 * gi as f64;
            each.push(PartSpot {
                reference: format!("C{}", 10 + gi * 25 + k),
                at_m: [chip[0] + r * angle.cos(), chip[1] + r * angle.sin()],
            });
        }
        groups.push(DecapGroup::new(*part, 25, 3e-10));
        spots.push(GroupPlacement { spots: GroupSpots::Each(each), port_m: None });
    }
    let loads: Vec<Load> = (0..4).map(|i| Load::new(format!("U{}", i + 1), 1.0, None)).collect();
    let load_spots = loads_at
        .iter()
        .map(|&at_m| LoadPlacement {
            at_m,
            pins_m: None,
            package: Some(Package { r_ohm: 1e-3, l_h: 5e-11 }),
            die: Some(Die { capacitance_f: 5e-8, esr_ohm: 2e-3 }),
        })
        .collect();
    board.rails.push(Rail {
        name: "VCORE".into(),
        voltage_v: 0.9,
        ripple_pct: 3.0,
        band_hz: Some([1e4, 1e9]),
        combine: Default::default(),
        source: Some(Source::rl(1e-3, 1e-8)),
        plane: None,
        package: None,
        die: None,
        loads,
        decaps: groups,
        placement: Some(Placement {
            plane_pair: PlanePair {
                size_m: [0.10, 0.08],
                dielectric_m: 1e-4,
                er: 4.3,
                loss_tangent: Some(0.02),
                copper_m: Some(35e-6),
                conductivity_s_m: None,
            },
            source: Some(SourcePlacement { at_m: [0.005, 0.005], port_m: None }),
            groups: spots,
            loads: load_spots,
        }),
    });
    board
}

fn placed(c: &mut Criterion) {
    let board = sixty_ports();
    let rail = &board.rails[0];
    let grid = log_grid(1e4, 1e9, 1000);
    let mut group = c.benchmark_group("placed");
    group.sample_size(10);
    group.bench_function("60 ports: prepare the plane, then 1000 frequencies at every load", |b| {
        b.iter(|| {
            forget_prepared_planes();
            let circuit = PlacedCircuit::of_rail(black_box(&board), rail, Corner::Typical, 1e9).unwrap();
            circuit.solve_grid(&grid).iter().map(|m| m.at_dies[0]).sum::<num_complex::Complex64>()
        })
    });
    // A value, a count or a corner changed: no port moved, so the plane is the one kept.
    let mut edited = board.clone();
    group.bench_function("60 ports: change a part's value, then 1000 frequencies at every load (plane kept)", |b| {
        let mut step = 0usize;
        b.iter(|| {
            step += 1;
            edited.parts[0].esr_ohm = 3e-3 * (1.0 + 0.1 * (step % 2) as f64);
            let rail = &edited.rails[0];
            let circuit = PlacedCircuit::of_rail(black_box(&edited), rail, Corner::Typical, 1e9).unwrap();
            circuit.solve_grid(&grid).iter().map(|m| m.at_dies[0]).sum::<num_complex::Complex64>()
        })
    });
    let circuit = PlacedCircuit::of_rail(&board, rail, Corner::Typical, 1e9).unwrap();
    group.bench_function("60 ports: 1000 frequencies at every load (prepared)", |b| {
        b.iter(|| circuit.solve_grid(&grid).iter().map(|m| m.at_dies[0]).sum::<num_complex::Complex64>())
    });
    group.bench_function("60 ports: worst corner, 8 tolerance vertices on the circuit (1000 frequencies)", |b| {
        let worst = PlacedCircuit::of_rail(&board, rail, Corner::Worst, 1e9).unwrap();
        b.iter(|| {
            let mut c = worst.clone();
            placed_worst_vertex(black_box(&board), rail, &mut c, &grid, &SearchOptions::default()).grid_worst_ohm
        })
    });
    group.bench_function("60 ports: prepare the plane", |b| {
        b.iter(|| {
            forget_prepared_planes();
            PlacedCircuit::of_rail(black_box(&board), rail, Corner::Typical, 1e9).unwrap()
        })
    });
    group.bench_function("60 ports: start dragging one part (factor the other ports at 1000 frequencies)", |b| {
        b.iter(|| circuit.clone().drag(20, &grid))
    });
    let mut drag = circuit.clone().drag(20, &grid);
    let mut step = 0usize;
    group.bench_function("60 ports: move the dragged part, then 1000 frequencies at every load", |b| {
        b.iter(|| {
            step += 1;
            let x = 0.03 + 0.0001 * (step % 50) as f64;
            drag.move_to(PortRect::square(x, 0.03, 0.5e-3)).iter().map(|m| m.at_dies[0]).sum::<num_complex::Complex64>()
        })
    });
    group.finish();
}

criterion_group!(benches, placed);
criterion_main!(benches);
