//! One frame's work in the planner window while the user drags a count, on a board of six rails.
//! Run with `cargo bench --bench frame`. The target is under 4 ms per frame (a 60 Hz display allows 16 ms, and
//! the frame must also be laid out and drawn).
//!
//! - "drag step": the edit through the history, then the results brought up to date (the dragged rail analysed
//!   again with its 1000-point band scan, its 600-point curve and per-group curves; the other rails reused).
//! - "all rails": every rail analysed from nothing (after a part shared by every rail changes).
//! - "whole frame": the drag step plus laying out every panel and the plot (egui without a renderer).

use criterion::{Criterion, criterion_group, criterion_main};
use hushrail::gui::App;
use hushrail::gui::history::{Edit, History};
use hushrail::gui::results::Results;
use hushrail::model::Board;
use std::hint::black_box;

/// The sample board with its three rails twice over: six rails, invented like the sample.
fn six_rails() -> Board {
    let mut board = hushrail::samples::default_board().expect("sample board");
    let copies: Vec<_> = board
        .rails
        .iter()
        .map(|r| {
            let mut r = r.clone();
            r.name = format!("{}_B", r.name);
            r
        })
        .collect();
    board.rails.extend(copies);
    assert_eq!(board.rails.len(), 6);
    board
}

fn frame(c: &mut Criterion) {
    let base = six_rails();

    c.bench_function("drag step: edit + analysis + plot data, 6 rails", |b| {
        let mut board = base.clone();
        let mut history = History::new();
        let mut results = Results::default();
        results.refresh(&board);
        let mut count = 24;
        b.iter(|| {
            count = if count >= 40 { 10 } else { count + 1 };
            history.apply(&mut board, Edit::SetCount { rail: 0, group: 2, count }, "drag", true).expect("edit lands");
            black_box(results.refresh(&board))
        })
    });

    c.bench_function("all rails: analysis + plot data, 6 rails", |b| {
        let mut results = Results::default();
        b.iter(|| {
            results.clear();
            black_box(results.refresh(black_box(&base)))
        })
    });

    c.bench_function("whole frame during a drag (layout, no drawing), 6 rails", |b| {
        let mut app = App::new_with_board(base.clone(), "six rails", None);
        let ctx = egui::Context::default();
        let input = || egui::RawInput {
            screen_rect: Some(egui::Rect::from_min_size(egui::Pos2::ZERO, egui::vec2(1280.0, 800.0))),
            ..Default::default()
        };
        // Without a renderer nothing uploads the font texture: say so, or epaint complains when the output is dropped.
        let frame = |app: &mut App| {
            let mut output = ctx.run_ui(input(), |ui| app.show(ui));
            output.textures_delta.clear();
            output
        };
        // Warm up: fonts and the first layout.
        for _ in 0..3 {
            frame(&mut app);
        }
        let mut count = 24;
        b.iter(|| {
            count = if count >= 40 { 10 } else { count + 1 };
            app.edit(Edit::SetCount { rail: 0, group: 2, count }, "drag", true).expect("edit lands");
            black_box(frame(&mut app))
        })
    });
}

criterion_group!(benches, frame);
criterion_main!(benches);
