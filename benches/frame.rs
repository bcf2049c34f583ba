//! One frame's work in the planner window while the user drags a count, on a board of six rails.
//! Run with `cargo bench --bench frame`. The target is under 4 ms per frame (a 60 Hz display allows 16 ms, and
//! the frame must also be laid out and drawn).
//!
//! - "drag step": the edit through the history, then the results brought up to date (the dragged rail analysed
//!   again with its 1000-point band scan, its 600-point curve and per-group curves; the other rails reused).
//! - "all rails": every rail analysed from nothing (after a part shared by every rail changes).
//! - "whole frame": the drag step plus laying out every panel and the plot (egui without a renderer).
//! - "... worst corner and both views": the drag step with the worst derating corner and the other view analysed
//!   too (two more analyses of the dragged rail, without per-group curves).
//! - "... droop": the drag step plus asking for the dragged rail's droop as the time view does at 60 frames a
//!   second: each new droop runs on its own thread as soon as the last one lands, so a frame pays only for
//!   asking.
//! - "droop of one rail": one droop as the window runs it, the work that thread does.
//! - "map drag step": one step of a part dragged on the board map of a placed rail (tests/networks/placed/
//!   two_loads.json: a regulator, six parts, two loads with packages): the rail replaced through the history,
//!   then its check at every load, its curve at the shown load and its findings brought up to date.

use criterion::{Criterion, criterion_group, criterion_main};
use hushrail::gui::App;
use hushrail::gui::CentralTab;
use hushrail::gui::history::{Edit, History};
use hushrail::gui::results::{Look, Results};
use hushrail::model::Board;
use std::hint::black_box;

/// The sample board with its three rails twice over: six rails, invented like the sample.
fn six_rails() -> Board {
    let mut board = hushrail::samples::default_board().expect("sample board");
    // The sample's lumped rails (its placed copy of VCORE is the placed bench's business).
    board.rails.retain(|r| r.placement.is_none());
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

    drag_step(c, &base, "drag step: edit + analysis + plot data, 6 rails", Look::default(), false);
    let both = Look { view: None, both_views: true, worst_corner: true, load: None };
    drag_step(c, &base, "drag step with the worst corner and both views, 6 rails", both, false);
    drag_step(c, &base, "drag step with the time view's droop, 6 rails", Look::default(), true);

    c.bench_function("droop of one rail (VCORE, on the time view's thread)", |b| {
        b.iter(|| black_box(hushrail::analysis::droop(&base, 0, &hushrail::gui::results::droop_options())))
    });

    c.bench_function("all rails: analysis + plot data, 6 rails", |b| {
        let mut results = Results::default();
        b.iter(|| {
            results.clear();
            black_box(results.refresh(black_box(&base)))
        })
    });

    map_drag_step(c);

    for (name, time_view, look) in [
        ("whole frame during a drag (layout, no drawing), 6 rails", false, Look::default()),
        (
            "whole frame during a drag, worst corner shown, 6 rails",
            false,
            Look { worst_corner: true, ..Look::default() },
        ),
        ("whole frame during a drag, time view shown, 6 rails", true, Look::default()),
    ] {
        whole_frame(c, &base, name, time_view, look);
    }
}

/// One step of a count drag without the window: the edit through the history and the results brought up to date
/// as `look` asks, and with `droop` the dragged rail's droop asked for as the time view asks (a frame apart).
fn drag_step(c: &mut Criterion, base: &Board, name: &str, look: Look, droop: bool) {
    c.bench_function(name, |b| {
        let mut board = base.clone();
        let mut history = History::new();
        let mut results = Results::default();
        results.set_look(look);
        results.refresh(&board);
        // Criterion calls this closure once per sample: let the rail's first droop land before measuring, as it
        // has when the user starts a drag with the time view open.
        while droop && !results.droop(&board, 0).current {
            std::thread::sleep(std::time::Duration::from_millis(5));
        }
        let mut count = 24;
        b.iter(|| {
            count = if count >= 40 { 10 } else { count + 1 };
            history.apply(&mut board, Edit::SetCount { rail: 0, group: 2, count }, "drag", true).expect("edit lands");
            let analysed = results.refresh(&board);
            if droop {
                black_box(results.droop(&board, 0));
            }
            black_box(analysed)
        })
    });
}

/// One frame of the window during a count drag: the edit, the analysis and the layout of every panel.
fn whole_frame(c: &mut Criterion, base: &Board, name: &str, time_view: bool, look: Look) {
    c.bench_function(name, |b| {
        let mut app = App::new_with_board(base.clone(), "six rails", None);
        app.set_look(look);
        if time_view {
            app.set_central_tab(CentralTab::Time);
        }
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
        // Warm up: fonts and the first layout; with the time view, long enough for the rail's first droop to land
        // on its thread (criterion calls this closure once per sample).
        for _ in 0..3 {
            frame(&mut app);
        }
        if time_view {
            let start = std::time::Instant::now();
            while start.elapsed() < std::time::Duration::from_millis(600) {
                frame(&mut app);
                std::thread::sleep(std::time::Duration::from_millis(20));
            }
        }
        let mut count = 24;
        b.iter(|| {
            count = if count >= 40 { 10 } else { count + 1 };
            app.edit(Edit::SetCount { rail: 0, group: 2, count }, "drag", true).expect("edit lands");
            black_box(frame(&mut app))
        })
    });
}

/// One step of a part dragged on the board map: the rail with the part moved, through the history, then the
/// results brought up to date (the placed rail checked at every load again).
fn map_drag_step(c: &mut Criterion) {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/networks/placed/two_loads.json");
    let mut board = hushrail::io::read_board(std::path::Path::new(path)).expect("test network reads");
    let mut history = History::new();
    let mut results = Results::default();
    results.refresh(&board);
    let mut step = 0usize;
    c.bench_function("map drag step: a part moved on a placed rail (2 loads, 6 parts)", |b| {
        b.iter(|| {
            step = (step + 1) % 20;
            let mut rail = board.rails[0].clone();
            if let Some(p) = rail.placement.as_mut()
                && let hushrail::model::GroupSpots::Each(spots) = &mut p.groups[2].spots
            {
                spots[0].at_m = [0.010 + 0.0005 * step as f64, 0.017];
            }
            history
                .apply(&mut board, Edit::SetRail { rail: 0, value: Box::new(rail) }, "move", true)
                .expect("edit lands");
            black_box(results.refresh(&board))
        })
    });
}

criterion_group!(benches, frame);
criterion_main!(benches);
