//! Optimizer benchmarks. Run with `cargo bench --bench suggest`.
//!
//! - The sample VCORE (band 1 kHz to 20 MHz, over four decades) with twelve shelf candidates, at most four kinds of
//!   part, judged in the worst corner: the best option with every engine re-check the command runs (goal < 1 s).
//! - `suggest --candidates-from` a file of 1,000 and of 10,000 invented parts: reading the file, choosing the parts
//!   rated for the rail and the search (goal < 2 s each). The files are written to the system's temporary folder
//!   (hushrail-bench-parts-1000.json, hushrail-bench-parts-10000.json) so the command's memory can be measured on
//!   the same input: `/usr/bin/time -v hushrail suggest sample_boards/edge_camera.json --rail VCORE
//!   --candidates-from /tmp/hushrail-bench-parts-10000.json`.

use criterion::{Criterion, criterion_group, criterion_main};
use hushrail::analysis::{Candidate, SuggestOptions, offered_parts, suggest};
use hushrail::physics::Corner;
use std::hint::black_box;
use std::path::{Path, PathBuf};

fn edge_camera() -> hushrail::model::Board {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/sample_boards/edge_camera.json");
    hushrail::io::read_board(Path::new(path)).expect("sample board")
}

/// Twelve shelf candidates from 10 nF to 1 mF (five decades).
fn twelve(c: &mut Criterion) {
    let board = edge_camera();
    let rail = board.rail_index("VCORE").expect("VCORE");
    let shelf = hushrail::samples::shelf().expect("shelf");
    let ids = [
        "shelf-c10n-0402",
        "shelf-c100n-0402",
        "shelf-c220n-0402",
        "shelf-c1u-0402",
        "shelf-c2u2-0402",
        "shelf-c4u7-0603",
        "shelf-c10u-0603",
        "shelf-c22u-0805",
        "shelf-c47u-1206",
        "shelf-poly-220u-7343",
        "shelf-poly-470u-7343",
        "shelf-alu-1m-d10",
    ];
    let candidates: Vec<Candidate> = ids
        .iter()
        .map(|id| Candidate { part: shelf.part(id).expect("shelf part").clone(), mounting_h: 6e-10 })
        .collect();
    let mut group = c.benchmark_group("optimizer");
    group.sample_size(10);
    group.bench_function("suggest, 12 candidates, VCORE 1 kHz to 20 MHz, 4 kinds, worst corner", |b| {
        let options = SuggestOptions { options: 1, max_kinds: 4, corner: Corner::Worst, ..Default::default() };
        b.iter(|| suggest(black_box(&board), rail, &candidates, &options).expect("search"))
    });
    group.bench_function("suggest, 12 candidates, VCORE, 4 kinds, worst corner, 5 options", |b| {
        let options = SuggestOptions { options: 5, max_kinds: 4, corner: Corner::Worst, ..Default::default() };
        b.iter(|| suggest(black_box(&board), rail, &candidates, &options).expect("search"))
    });
    group.finish();
}

/// A board file of `n` invented parts (values spread over 1 nF to 2.2 mF, ceramic below 100 µF and polymer or
/// electrolytic above, each with an ESR, ESL, cost and area of the usual order; no real product's data).
fn parts_file(n: usize) -> PathBuf {
    let path = std::env::temp_dir().join(format!("hushrail-bench-parts-{n}.json"));
    let mut rng = 0x2545_f491_4f6c_dd1du64;
    let mut next = move || {
        rng ^= rng << 13;
        rng ^= rng >> 7;
        rng ^= rng << 17;
        (rng >> 11) as f64 / (1u64 << 53) as f64
    };
    let cases = [("0201", 5e-7, 2e-10), ("0402", 1e-6, 3.5e-10), ("0603", 2e-6, 4.5e-10), ("0805", 3.5e-6, 5.5e-10)];
    let mut parts = Vec::with_capacity(n);
    for i in 0..n {
        let c = 1e-9 * 10f64.powf(6.34 * next());
        let rated = [4.0, 6.3, 10.0, 16.0, 25.0][(next() * 5.0) as usize % 5];
        let part = if c < 1e-4 {
            let (case, area, esl) = cases[(next() * 4.0) as usize % 4];
            serde_json::json!({
                "id": format!("bench-c{i}"), "kind": "ceramic", "capacitance_f": c,
                "esr_ohm": (0.003 / (c * 1e6).sqrt()).clamp(0.002, 0.5) * (0.7 + 0.6 * next()),
                "esl_h": esl * (0.8 + 0.4 * next()), "rated_voltage_v": rated, "case": case, "dielectric": "X5R",
                "unit_cost": 0.002 + 0.05 * (c * 1e5).sqrt() * (0.5 + next()), "area_m2": area, "tolerance_pct": 10
            })
        } else {
            let polymer = next() < 0.5;
            serde_json::json!({
                "id": format!("bench-b{i}"), "kind": if polymer { "polymer" } else { "electrolytic" },
                "capacitance_f": c, "esr_ohm": if polymer { 0.01 + 0.03 * next() } else { 0.05 + 0.2 * next() },
                "esl_h": 1.5e-9 + 2e-9 * next(), "rated_voltage_v": rated,
                "unit_cost": 0.1 + 0.3 * next(), "area_m2": 3e-5 + 5e-5 * next(), "tolerance_pct": 20
            })
        };
        parts.push(part);
    }
    let board = serde_json::json!({
        "format": "hushrail-board", "version": 1, "name": format!("{n} invented parts for a benchmark"),
        "parts": parts, "rails": []
    });
    std::fs::write(&path, serde_json::to_string_pretty(&board).expect("json")).expect("write the parts file");
    path
}

/// `suggest --candidates-from` a long file, as the command runs it: read, choose, search.
fn many(c: &mut Criterion) {
    let board = edge_camera();
    let rail = board.rail_index("VCORE").expect("VCORE");
    let mut group = c.benchmark_group("optimizer, long candidate lists");
    group.sample_size(10);
    for n in [1_000, 10_000] {
        let file = parts_file(n);
        group.bench_function(format!("suggest --candidates-from {n} parts, VCORE"), |b| {
            b.iter(|| {
                let other = hushrail::io::read_board(&file).expect("parts file");
                let mounting_h = hushrail::analysis::default_mounting_h(&board.rails[rail]);
                let candidates: Vec<Candidate> = offered_parts([&other], board.rails[rail].voltage_v)
                    .into_iter()
                    .map(|part| Candidate { part, mounting_h })
                    .collect();
                suggest(black_box(&board), rail, &candidates, &SuggestOptions::default()).expect("search")
            })
        });
    }
    group.finish();
}

criterion_group!(benches, twelve, many);
criterion_main!(benches);
