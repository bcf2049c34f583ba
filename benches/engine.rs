//! Engine benchmarks: one rail of ten groups (tests/networks/ten_groups.json, with regulator and plane).
//! Run with `cargo bench --bench engine`.

use criterion::{Criterion, criterion_group, criterion_main};
use hushrail::analysis::{
    AnalysisOptions, CheckOptions, DEFAULT_SEED, View, analyze_rail, check_rail, log_grid, sweep, yield_estimate,
};
use std::hint::black_box;

fn ten_groups() -> hushrail::model::Board {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/networks/ten_groups.json");
    hushrail::io::read_board(std::path::Path::new(path)).expect("bench board")
}

fn engine(c: &mut Criterion) {
    let board = ten_groups();
    let rail = &board.rails[0];
    c.bench_function("analyze 10 groups, 1000 points, all findings", |b| {
        let options = AnalysisOptions { band_points: 1000, ..Default::default() };
        b.iter(|| analyze_rail(black_box(&board), 0, &options))
    });
    c.bench_function("analyze 10 groups, 10000 points, all findings", |b| {
        let options = AnalysisOptions { band_points: 10_000, ..Default::default() };
        b.iter(|| analyze_rail(black_box(&board), 0, &options))
    });
    // Everything switched on: package and die (verdict at the die), mounting from geometry, the worst corner.
    let mut full = board.clone();
    full.rails[0].package = Some(hushrail::model::Package { r_ohm: 1e-3, l_h: 4e-11 });
    full.rails[0].die = Some(hushrail::model::Die { capacitance_f: 1.5e-7, esr_ohm: 2e-3 });
    for group in &mut full.rails[0].decaps {
        group.mounting = Some(hushrail::model::MountingGeometry {
            vias_per_pad: 2,
            ..hushrail::physics::mounting::TYPICAL_GEOMETRY
        });
    }
    for part in &mut full.parts {
        part.dielectric = Some("X7R".into());
        part.rated_voltage_v = Some(6.3);
        part.tolerance_pct = Some(10.0);
    }
    c.bench_function("analyze 10 groups, 1000 points, die view, geometry, worst corner", |b| {
        let options =
            AnalysisOptions { band_points: 1000, corner: hushrail::physics::Corner::Worst, ..Default::default() };
        b.iter(|| analyze_rail(black_box(&full), 0, &options))
    });
    let grid = log_grid(1e3, 1e9, 10_000);
    c.bench_function("sweep 10 groups, 10000 points", |b| b.iter(|| sweep(black_box(&board), rail, &grid)));
}

/// The spread of a verdict: the yield over random boards and the whole check (every corner with the worst
/// corner's vertex search, and each group's sensitivity), on the ten-group rail with every part at ±10 % (and
/// the default ±30 % ESR).
fn spread(c: &mut Criterion) {
    let mut board = ten_groups();
    for part in &mut board.parts {
        part.tolerance_pct = Some(10.0);
    }
    let mut group = c.benchmark_group("spread");
    group.sample_size(10);
    group.bench_function("yield, 10000 boards, 10 groups, 1000 points, 2 threads", |b| {
        b.iter(|| yield_estimate(black_box(&board), 0, View::Board, 1000, 10_000, DEFAULT_SEED, 2))
    });
    group.bench_function("check, 10 groups with C and ESR tolerances, 1000 points, every corner", |b| {
        b.iter(|| check_rail(black_box(&board), 0, &CheckOptions::default()))
    });
    group.finish();
}

/// The time domain: step droop plus the worst on/off pattern (one `droop` call) for every rail of the sample boards
/// and the regulator-loop test network, as the window and `hushrail droop` run it (default window, 2000 points).
/// Goal: under 10 ms a rail. The same rail with a window a million times longer shows the cost (and the memory:
/// the walk keeps at most a fixed number of samples) does not grow with the window.
fn droop(c: &mut Criterion) {
    use hushrail::analysis::{DroopOptions, droop};
    let mut group = c.benchmark_group("droop");
    group.sample_size(20);
    for file in [
        "sample_boards/edge_camera.json",
        "sample_boards/motor_drive.json",
        "sample_boards/sensor_hub.json",
        "tests/networks/regulator_loop.json",
    ] {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(file);
        let board = hushrail::io::read_board(&path).expect("bench board");
        for (i, rail) in board.rails.iter().enumerate().filter(|(_, r)| r.source.is_some()) {
            let stem = path.file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_default();
            group.bench_function(format!("step and worst pattern, {stem}/{}", rail.name), |b| {
                b.iter(|| droop(black_box(&board), i, &DroopOptions::default()))
            });
        }
    }
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("sample_boards/edge_camera.json");
    let board = hushrail::io::read_board(&path).expect("bench board");
    for window in [1e-6, 1.0] {
        group.bench_function(format!("step and worst pattern, edge_camera/VCORE, window {window:e} s"), |b| {
            let options = DroopOptions { window_s: Some(window), ..Default::default() };
            b.iter(|| droop(black_box(&board), 0, &options))
        });
    }
    group.finish();
}

criterion_group!(benches, engine, spread, droop);
criterion_main!(benches);
