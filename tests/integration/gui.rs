//! The planner window, driven headless through its accessibility tree the way a user would: click, type, press
//! keys, drop a file. The figures it shows are checked against what the engine computes for the same board.

use egui::accesskit::Role;
use egui::{Key, Modifiers};
use egui_kittest::Harness;
use egui_kittest::kittest::{Queryable, by};
use hushrail::analysis::{AnalysisOptions, RailAnalysis, analyze_rail};
use hushrail::gui::App;
use hushrail::model::Board;
use hushrail::units::{Unit, format};
use std::path::{Path, PathBuf};
use std::sync::Arc;

fn sample() -> Board {
    hushrail::samples::default_board().expect("the built-in sample board reads")
}

fn window(board: Board) -> Harness<'static, App> {
    let app = App::new_with_board(board, "edge_camera.json", None);
    let mut harness =
        Harness::builder().with_size([1280.0, 800.0]).build_ui_state(|ui, app: &mut App| app.show(ui), app);
    harness.run();
    harness
}

pub(crate) fn engine(board: &Board, rail: usize) -> RailAnalysis {
    analyze_rail(board, rail, &AnalysisOptions::default()).expect("rail analyses")
}

/// The verdict and worst |Z| as the window writes them for an analysis.
fn shown_figures(a: &RailAnalysis) -> (String, String) {
    // The sample boards' parts are all within their ratings, so the check passes exactly when |Z| meets target.
    let verdict = if a.meets_target { "passes the check" } else { "fails the check" };
    (
        verdict.to_string(),
        format!("worst |Z| {} at {}", format(a.worst_ohm, Unit::Ohm), format(a.worst_hz, Unit::Hertz)),
    )
}

pub(crate) fn assert_shows(harness: &Harness<'_, App>, a: &RailAnalysis) {
    let (verdict, worst) = shown_figures(a);
    assert!(harness.query_by_label(&verdict).is_some(), "the window should say \"{verdict}\"");
    assert!(harness.query_by_label(&worst).is_some(), "the window should say \"{worst}\"");
}

/// Click a widget by its accessible name, scrolling it into view first as a user would.
pub(crate) fn click(harness: &mut Harness<'_, App>, label: &str) {
    harness.get_by_label(label).scroll_to_me();
    harness.run();
    harness.get_by_label(label).click();
    harness.run();
}

/// Select a rail in the rails list (its name is also the heading of the selected rail).
fn select_rail(harness: &mut Harness<'_, App>, name: &str) {
    harness.get(by().label(name).predicate(|n| n.role() != Role::Label)).click();
    harness.run();
}

pub(crate) fn select_all_and_type(harness: &mut Harness<'_, App>, label: &str, text: &str) {
    harness.get_by_label(label).scroll_to_me();
    harness.run();
    harness.get_by_label(label).focus();
    harness.run();
    harness.key_press_modifiers(Modifiers::COMMAND, Key::A);
    harness.get_by_label(label).type_text(text);
    harness.key_press(Key::Enter);
    harness.run();
}

/// Run the window until it goes idle, giving work on other threads (a droop, a search) time to finish.
fn settle(harness: &mut Harness<'_, App>) {
    for _ in 0..3000 {
        if harness.try_run().is_ok() {
            return;
        }
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    panic!("the window never went idle");
}

/// Step the window (without insisting that it goes idle: a search in progress keeps asking for frames) until a
/// label holding `label` shows, for at most `steps` frames a few milliseconds apart.
fn step_until(harness: &mut Harness<'_, App>, label: &str, steps: usize) {
    for _ in 0..steps {
        if harness.query_by_label_contains(label).is_some() {
            return;
        }
        std::thread::sleep(std::time::Duration::from_millis(20));
        harness.step();
    }
    panic!("\"{label}\" never showed");
}

#[test]
fn selecting_a_rail_and_adding_a_part_moves_verdict_and_worst_impedance_as_the_engine_says() {
    let board = sample();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let group = board.rails[rail].decaps.iter().position(|g| g.part == "mlcc-10u-0603").unwrap();
    let before = engine(&board, rail);
    let mut harness = window(board.clone());

    select_rail(&mut harness, "V3V3_IO");
    assert_shows(&harness, &before);

    click(&mut harness, "one more mlcc-10u-0603");
    let mut changed = board.clone();
    changed.rails[rail].decaps[group].count += 1;
    let after = engine(&changed, rail);
    assert_eq!(harness.state().board(), &changed);
    assert_ne!(shown_figures(&before), shown_figures(&after), "one more part should move the figures");
    assert_shows(&harness, &after);
    assert!(harness.state().is_dirty());
    assert!(harness.state().title().starts_with("* "), "unsaved mark in the title: {}", harness.state().title());

    // Undo with the keyboard brings back the board, the figures and the saved state.
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board);
    assert_shows(&harness, &before);
    assert!(!harness.state().is_dirty());

    // Redo (Ctrl+Y) applies it again; Ctrl+Z and Ctrl+Shift+Z go back and forth once more.
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Y);
    harness.run();
    assert_eq!(harness.state().board(), &changed);
    assert_shows(&harness, &after);
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board);
    harness.key_press_modifiers(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &changed);
}

#[test]
fn a_typed_count_follows_the_engine_too() {
    let board = sample();
    let rail = 0;
    let group = board.rails[rail].decaps.iter().position(|g| g.part == "mlcc-100n-0402").unwrap();
    let mut harness = window(board.clone());
    // A count accepts engineering notation; 4e1 is 40.
    select_all_and_type(&mut harness, "count of mlcc-100n-0402", "4e1");
    let mut changed = board.clone();
    changed.rails[rail].decaps[group].count = 40;
    assert_eq!(harness.state().board(), &changed);
    assert_shows(&harness, &engine(&changed, rail));
}

#[test]
fn a_bad_entry_is_refused_at_the_field_with_its_reason() {
    let board = sample();
    let mut harness = window(board.clone());

    // Not a number: the parser's reason shows at the field; the board is untouched.
    select_all_and_type(&mut harness, "Voltage", "abc");
    assert_eq!(harness.state().board(), &board);
    assert!(harness.query_by_label_contains("does not start with a number").is_some(), "parse reason shown");
    assert!(!harness.state().is_dirty());

    // A number that is not physical: the board's rule says why.
    select_all_and_type(&mut harness, "Voltage", "-1");
    assert_eq!(harness.state().board(), &board);
    assert!(harness.query_by_label_contains("must be from 1 mV to 100 kV").is_some(), "rule reason shown");

    // A good entry lands and the message goes away.
    select_all_and_type(&mut harness, "Voltage", "900m");
    assert_eq!(harness.state().board().rails[0].voltage_v, 0.9);
    assert!(harness.query_by_label_contains("must be greater than 0").is_none());
    let a = engine(harness.state().board(), 0);
    assert_shows(&harness, &a);
}

#[derive(Debug)]
struct Dropped(PathBuf);

impl egui::DroppedFile for Dropped {
    fn path(&self) -> &Path {
        &self.0
    }

    fn bytes(&self) -> Result<Vec<u8>, String> {
        std::fs::read(&self.0).map_err(|e| e.to_string())
    }
}

fn drop_file(harness: &mut Harness<'_, App>, path: PathBuf) {
    harness.input_mut().dropped_files.push(Arc::new(Dropped(path)));
    harness.run();
}

#[test]
fn a_broken_file_leaves_the_board_untouched_and_shows_its_errors() {
    let board = sample();
    let mut harness = window(board.clone());
    let broken = crate::common::root().join("tests/bad_boards/negative_esl.json");
    let expected = hushrail::io::read_board(&broken).expect_err("the file is broken");

    drop_file(&mut harness, broken.clone());
    assert_eq!(harness.state().board(), &board, "the board on screen is kept");
    let heading = format!("Could not open {}", expected.file);
    assert!(harness.query_by_label(&heading).is_some(), "\"{heading}\" is shown");
    for line in expected.lines() {
        assert!(harness.query_by_label(&line).is_some(), "the error line \"{line}\" is shown");
    }

    // Dismissing the errors leaves the board as it was; a good file dropped then opens.
    click(&mut harness, "Dismiss");
    assert!(harness.query_by_label(&heading).is_none());
    let good = crate::common::root().join("sample_boards/motor_drive.json");
    drop_file(&mut harness, good.clone());
    assert_eq!(harness.state().board(), &hushrail::io::read_board(&good).unwrap());
    assert_eq!(harness.state().path(), Some(good.as_path()));
}

#[test]
fn hostile_files_never_freeze_the_window_and_keep_the_board() {
    // A device, a pipe (opening it would block for ever) and a duplicate key: each is refused with the same lines
    // the command line prints, at once, and the board on screen stays.
    let board = sample();
    let mut harness = window(board.clone());
    let dir = tempfile::tempdir().unwrap();
    let pipe = dir.path().join("pipe.json");
    assert!(std::process::Command::new("mkfifo").arg(&pipe).status().unwrap().success());
    let duplicate = crate::common::root().join("tests/bad_boards/duplicate_key.json");
    for path in [std::path::PathBuf::from("/dev/zero"), pipe, duplicate] {
        let expected = hushrail::io::read_board(&path).expect_err("refused");
        drop_file(&mut harness, path.clone());
        assert_eq!(harness.state().board(), &board, "{}: the board on screen is kept", path.display());
        for line in expected.lines() {
            assert!(harness.query_by_label(&line).is_some(), "the error line \"{line}\" is shown");
        }
        click(&mut harness, "Dismiss");
    }
}

#[test]
fn opening_over_unsaved_changes_asks_first() {
    let board = sample();
    let mut harness = window(board.clone());
    click(&mut harness, "one more mlcc-100n-0402");
    let edited = harness.state().board().clone();
    let other = crate::common::root().join("sample_boards/sensor_hub.json");

    drop_file(&mut harness, other.clone());
    assert!(harness.query_by_label("Unsaved changes").is_some(), "the window asks before discarding");
    click(&mut harness, "Cancel");
    assert_eq!(harness.state().board(), &edited, "cancel keeps the edits");

    drop_file(&mut harness, other.clone());
    click(&mut harness, "Discard them");
    assert_eq!(harness.state().board(), &hushrail::io::read_board(&other).unwrap());
    assert!(!harness.state().is_dirty());
}

#[test]
fn save_writes_the_board_and_clears_the_unsaved_mark() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("saved.json");
    let mut harness = window(sample());
    click(&mut harness, "one fewer mlcc-100n-0402");
    assert!(harness.state().is_dirty());
    assert!(harness.state_mut().save_to(&path));
    harness.run();
    assert!(!harness.state().is_dirty());
    assert!(!harness.state().title().starts_with("* "));
    assert_eq!(&hushrail::io::read_board(&path).unwrap(), harness.state().board());
}

#[test]
fn removing_a_part_in_use_is_refused_and_names_the_groups() {
    let board = sample();
    let mut harness = window(board.clone());
    click(&mut harness, "Parts");
    click(&mut harness, "mlcc-100n-0402");
    click(&mut harness, "Remove part");
    assert_eq!(harness.state().board(), &board);
    assert!(harness.query_by_label_contains("still used by VCORE group 3").is_some());

    // The board's name is edited on the same page, through the same history.
    select_all_and_type(&mut harness, "Board name", "Camera rev B");
    assert_eq!(harness.state().board().name, "Camera rev B");
    select_all_and_type(&mut harness, "Board name", "  ");
    assert_eq!(harness.state().board().name, "Camera rev B");
    assert!(harness.query_by_label_contains("must not be empty").is_some());
}

#[test]
fn pins_keep_the_old_curve_and_compare_against_it() {
    let mut harness = window(sample());
    click(&mut harness, "Pin this curve");
    let before = engine(harness.state().board(), 0);
    click(&mut harness, "one more mlcc-100n-0402");
    assert!(harness.state().is_dirty());
    let now = engine(harness.state().board(), 0);
    let compare = format!(
        "against pin “pin 1”: worst |Z| was {}, now {}",
        format(before.worst_ohm, Unit::Ohm),
        format(now.worst_ohm, Unit::Ohm)
    );
    assert!(harness.query_by_label_contains(&compare).is_some(), "{compare}");
    click(&mut harness, "remove pin 1");
    assert!(harness.query_by_label_contains("against pin").is_none());
}

/// A window on the board file at `path`, keeping its session files (prefs, autosave, pins) in `store_dir`.
fn window_on_file(path: &Path, store_dir: &Path) -> Harness<'static, App> {
    let app = App::open(Some(path), hushrail::gui::files::Store::new(Some(store_dir.to_path_buf())));
    let mut harness =
        Harness::builder().with_size([1280.0, 800.0]).build_ui_state(|ui, app: &mut App| app.show(ui), app);
    harness.run();
    harness
}

#[test]
fn pins_come_back_when_the_board_file_is_opened_again() {
    let dir = tempfile::tempdir().unwrap();
    let store = dir.path().join("store");
    let path = dir.path().join("camera.json");
    let other = dir.path().join("other.json");
    std::fs::write(&path, hushrail::io::board_to_string(&sample())).unwrap();
    std::fs::write(&other, hushrail::io::board_to_string(&sample())).unwrap();

    let pinned = engine(&sample(), 0);
    let mut harness = window_on_file(&path, &store);
    click(&mut harness, "Pin this curve");
    click(&mut harness, "one more mlcc-100n-0402");
    harness.key_press_modifiers(Modifiers::COMMAND, Key::S);
    harness.run();
    assert!(!harness.state().is_dirty(), "Ctrl+S saved the board");
    let saved = harness.state().board().clone();
    drop(harness);

    // Opened again in a new window: the pin is there with the curve and figures it had, compared with the
    // board as saved (one more part than when it was pinned).
    let mut harness = window_on_file(&path, &store);
    assert!(harness.query_by_label("show pin 1").is_some(), "the pin came back");
    let now = engine(&saved, 0);
    let compare = format!(
        "against pin “pin 1”: worst |Z| was {}, now {}",
        format(pinned.worst_ohm, Unit::Ohm),
        format(now.worst_ohm, Unit::Ohm)
    );
    assert!(harness.query_by_label_contains(&compare).is_some(), "{compare}");
    // A new pin numbers on after it.
    click(&mut harness, "Pin this curve");
    assert!(harness.query_by_label("show pin 2").is_some());
    click(&mut harness, "remove pin 1");
    click(&mut harness, "remove pin 2");
    drop(harness);

    // Another file has no pins of its own; removed pins stay removed.
    let harness = window_on_file(&other, &store);
    assert!(harness.query_by_label_contains("show pin").is_none());
    drop(harness);
    let harness = window_on_file(&path, &store);
    assert!(harness.query_by_label_contains("show pin").is_none(), "removed pins are not given back");
}

#[test]
fn findings_are_the_engines_and_can_be_selected() {
    let board = sample();
    let a = engine(&board, 0);
    let findings = hushrail::analysis::explain(&board, &board.rails[0], &a);
    let mut harness = window(board);
    for f in &findings {
        assert!(harness.query_by_label(&f.text).is_some(), "finding shown: {}", f.text);
    }
    assert_eq!(harness.state().selected_finding(), None);
    click(&mut harness, &findings[1].text);
    assert_eq!(harness.state().selected_finding(), Some((0, 1)));
    click(&mut harness, &findings[1].text);
    assert_eq!(harness.state().selected_finding(), None);

    // The whole board's list names each rail's verdict.
    harness.get_by_label_contains("Whole board").click();
    harness.run();
    assert!(harness.query_by_label_contains("VDDR: passes").is_some());
    assert!(harness.query_all(by().role(Role::Label).label_contains(": fails (")).count() >= 2);
}

#[test]
fn work_left_by_a_crashed_session_is_offered_back() {
    let dir = tempfile::tempdir().unwrap();
    let mut board = sample();
    board.rails[0].decaps[0].count = 7;
    // An autosave as a session that no longer runs leaves it (pid 4294967 is above Linux's pid limit).
    let origin = dir.path().join("camera.json");
    std::fs::write(dir.path().join("autosave-4294967.json"), hushrail::io::board_to_string(&board)).unwrap();
    std::fs::write(dir.path().join("autosave-4294967.origin"), origin.display().to_string()).unwrap();

    let store = hushrail::gui::files::Store::new(Some(dir.path().to_path_buf()));
    let app = App::open(None, store);
    let mut harness =
        Harness::builder().with_size([1280.0, 800.0]).build_ui_state(|ui, app: &mut App| app.show(ui), app);
    harness.run();
    assert!(harness.query_by_label("Unsaved work found").is_some());
    click(&mut harness, "Restore");
    assert_eq!(harness.state().board(), &board);
    assert!(harness.state().is_dirty(), "restored work is unsaved until the user saves it");
    assert_eq!(harness.state().path(), Some(origin.as_path()));
    assert!(!dir.path().join("autosave-4294967.json").exists(), "the left-over copy is taken over");
}

#[test]
fn dragging_a_count_moves_the_figures_at_every_step_and_undoes_in_one_step() {
    let board = sample();
    let group = board.rails[0].decaps.iter().position(|g| g.part == "mlcc-100n-0402").unwrap();
    let mut harness = window(board.clone());
    harness.get_by_label("count of mlcc-100n-0402").scroll_to_me();
    harness.run();
    let start = harness.get_by_label("count of mlcc-100n-0402").rect().center();

    harness.hover_at(start);
    harness.run();
    harness.drag_at(start);
    harness.run();
    let mut seen = Vec::new();
    for step in 1..=6 {
        harness.hover_at(start + egui::vec2(step as f32 * 40.0, 0.0));
        harness.run();
        // At every step of the drag the window shows what the engine says for the count it has now.
        let now = harness.state().board().clone();
        assert_shows(&harness, &engine(&now, 0));
        seen.push(now.rails[0].decaps[group].count);
    }
    harness.drop_at(start + egui::vec2(240.0, 0.0));
    harness.run();
    let end = harness.state().board().rails[0].decaps[group].count;
    assert!(end > board.rails[0].decaps[group].count, "dragging right adds parts: {seen:?}");
    assert!(seen.windows(2).any(|w| w[0] != w[1]), "the count changed during the drag: {seen:?}");

    // The whole drag is one step of the history.
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board);
}

#[test]
fn a_broken_file_named_on_the_command_line_opens_the_sample_with_its_errors() {
    let broken = crate::common::root().join("tests/bad_boards/syntax_trailing_comma.json");
    let expected = hushrail::io::read_board(&broken).expect_err("the file is broken");
    let app = App::open(Some(&broken), hushrail::gui::files::Store::new(None));
    let mut harness =
        Harness::builder().with_size([1280.0, 800.0]).build_ui_state(|ui, app: &mut App| app.show(ui), app);
    harness.run();
    assert_eq!(harness.state().board(), &sample());
    for line in expected.lines() {
        assert!(harness.query_by_label(&line).is_some(), "the error line \"{line}\" is shown");
    }
}

#[test]
fn odd_but_valid_boards_do_not_upset_the_window() {
    // No rails at all, and a rail with only a regulator and no parts on the board.
    let texts = [
        r#"{"format": "hushrail-board", "version": 1, "name": "empty", "parts": [], "rails": []}"#,
        r#"{"format": "hushrail-board", "version": 1, "name": "bare", "parts": [], "rails": [
            {"name": "R", "voltage_v": 1, "ripple_pct": 5, "band_hz": [1e3, 1e6],
             "source": {"r_ohm": 0.001, "l_h": 0}, "loads": [{"name": "l", "step_a": 1}], "decaps": []}]}"#,
    ];
    for text in texts {
        let board = hushrail::io::parse_board(text, "odd.json").expect("valid board");
        let mut harness = window(board.clone());
        for tab in ["Parts", "Help and cautions", "Rail inputs"] {
            click(&mut harness, tab);
        }
        harness.get_by_label_contains("Whole board").click();
        harness.run();
        if harness.query_by_label("Pin this curve").is_some() {
            click(&mut harness, "Pin this curve");
        }
        assert_eq!(harness.state().board(), &board);
    }
}

#[test]
fn a_band_from_the_loads_can_be_fixed_and_taken_back_and_the_die_view_is_named() {
    let path = crate::common::root().join("sample_boards/sensor_hub.json");
    let board = hushrail::io::read_board(&path).unwrap();
    let radio = board.rail_index("VRADIO").unwrap();
    assert_eq!(board.rails[radio].band_hz, None, "the sample's radio rail takes its band from its loads");
    let core = board.rail_index("VCCINT").unwrap();
    assert!(board.rails[core].package.is_some());
    let mut harness = window(board.clone());

    // A rail with a package: its verdict is taken at the die, as the check does, and the window says so.
    select_rail(&mut harness, "VCCINT");
    assert_shows(&harness, &engine(&board, core));
    assert!(harness.query_by_label("seen at the die, through the package").is_some());

    // The engine's words for where the band's edges come from.
    select_rail(&mut harness, "VRADIO");
    let band = board.rails[radio].band().unwrap();
    for line in hushrail::analysis::explain_band(&band) {
        assert!(harness.query_by_label(&line).is_some(), "shown: {line}");
    }
    // Typing an edge fixes the band where it is; the button gives it back to the loads.
    select_all_and_type(&mut harness, "Band to", "100M");
    assert_eq!(harness.state().board().rails[radio].band_hz, Some([band.hz[0], 100e6]));
    assert_shows(&harness, &engine(harness.state().board(), radio));
    click(&mut harness, "Take the band from the loads' rise times");
    assert_eq!(harness.state().board(), &board);
}

/// The verdict figures as the window writes them in one line for a second view or corner: the engine's own
/// sentence.
fn one_line(a: &RailAnalysis) -> String {
    hushrail::analysis::summary(a)
}

fn sensor_hub() -> Board {
    hushrail::io::read_board(&crate::common::root().join("sample_boards/sensor_hub.json")).unwrap()
}

#[test]
fn switching_the_view_shows_the_engines_figures_for_that_view_and_both_curves_on_request() {
    use hushrail::analysis::View;
    let board = sensor_hub();
    let core = board.rail_index("VCCINT").unwrap();
    let at = |view| analyze_rail(&board, core, &AnalysisOptions { view: Some(view), ..Default::default() }).unwrap();
    let (die, at_board) = (at(View::Die), at(View::Board));
    assert_ne!(die.worst_ohm, at_board.worst_ohm, "the package must make a difference on this rail");
    let mut harness = window(board.clone());
    select_rail(&mut harness, "VCCINT");
    assert_shows(&harness, &die);

    click(&mut harness, "the board node");
    // The figures are the board view's; the verdict in the header stays the check's, taken at the die.
    let (die_verdict, _) = shown_figures(&die);
    let (_, board_worst) = shown_figures(&at_board);
    assert!(harness.query_by_label(&board_worst).is_some(), "the window should say \"{board_worst}\"");
    assert!(harness.query_by_label(&die_verdict).is_some(), "the header keeps \"{die_verdict}\"");
    // The rails list keeps the check's verdict, taken at the die.
    let card = format!(
        "{} · margin {:+.1} dB · worst at {} · typical",
        format(board.rails[core].voltage_v, Unit::Volt),
        die.margin_db,
        format(die.worst_hz, Unit::Hertz)
    );
    assert!(harness.query_by_label(&card).is_some(), "the rail's card still says {card}");
    assert!(harness.query_by_label("seen at the board node (the check takes the verdict at the die)").is_some());

    click(&mut harness, "draw both");
    let other = format!("the other view: {}", one_line(&die));
    assert!(harness.query_by_label(&other).is_some(), "the other view's figures: {other}");

    click(&mut harness, "the die (the verdict's view)");
    assert_shows(&harness, &die);
    assert!(harness.query_by_label(&format!("the other view: {}", one_line(&at_board))).is_some());
}

#[test]
fn the_worst_corner_shows_the_engines_worst_figures_and_the_parts_that_lose_most() {
    use hushrail::physics::Corner;
    let board = sample();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let worst = analyze_rail(&board, rail, &AnalysisOptions { corner: Corner::Worst, ..Default::default() }).unwrap();
    let nominal = engine(&board, rail);
    assert_ne!(worst.worst_ohm, nominal.worst_ohm, "derating must change this rail");
    let mut harness = window(board);
    select_rail(&mut harness, "V3V3_IO");
    let line = one_line(&worst);
    assert!(harness.query_by_label(&line).is_none(), "not shown until asked for");
    click(&mut harness, "worst corner");
    assert!(harness.query_by_label(&line).is_some(), "shown: {line}");
    // The typical verdict stays the main one.
    assert_shows(&harness, &nominal);
    assert!(harness.query_by_label_contains("capacitance: mlcc-10u-0603 ×2 keeps").is_some());
}

#[test]
fn the_time_view_shows_the_engines_droop_and_follows_a_count_change() {
    use hushrail::analysis::droop;
    use hushrail::gui::results::droop_options;
    let board = sample();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let d = droop(&board, rail, &droop_options()).unwrap();
    let mut harness = window(board.clone());
    select_rail(&mut harness, "V3V3_IO");
    // The droop is computed on its own thread: the view says so until it lands.
    harness.get_by_label("Load step").click();
    let lines = hushrail::gui::droop_lines(&d);
    let fold = hushrail::gui::more_figures_title(lines.len());
    step_until(&mut harness, &fold, 3000);
    harness.run();
    // At 1280 x 800 the further figures start folded, so the plot keeps its room; one click shows them.
    assert!(harness.query_by_label(&lines[0]).is_none(), "folded on a laptop's screen");
    harness.get_by_label(&fold).click();
    harness.run();
    for line in lines {
        assert!(harness.query_by_label(&line).is_some(), "shown: {line}");
    }
    harness.get_by_label("Show the worst-case on/off load pattern and the voltage it gives").click();
    for _ in 0..3000 {
        if harness.query_by_label_contains("worst-case pattern (load on where shaded)").is_some() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(20));
        harness.step();
    }
    harness.run();
    assert!(harness.query_by_label_contains("worst-case pattern (load on where shaded)").is_some());

    // A count change moves the droop to what the engine says for the new board.
    let group = board.rails[rail].decaps.iter().position(|g| g.part == "mlcc-10u-0603").unwrap();
    let count = board.rails[rail].decaps[group].count;
    let edit = hushrail::gui::history::Edit::SetCount { rail, group, count: count + 20 };
    harness.state_mut().edit(edit, "more", false).unwrap();
    harness.step();
    let after = droop(harness.state().board(), rail, &droop_options()).unwrap();
    assert_ne!(after.droop_v, d.droop_v);
    step_until(&mut harness, &format!("droop {}", format(after.droop_v, Unit::Volt)), 3000);
    settle(&mut harness);
    assert!(harness.query_by_label("Updating: the figures below are for the rail before the last change.").is_none());
}

#[test]
fn a_rail_without_a_source_has_its_missing_droop_explained() {
    let mut board = sample();
    board.rails[0].source = None;
    let reason = hushrail::analysis::droop(&board, 0, &hushrail::gui::results::droop_options()).unwrap_err();
    let mut harness = window(board);
    harness.get_by_label("Load step").click();
    step_until(&mut harness, "No droop for this rail", 3000);
    harness.run();
    assert!(harness.query_by_label(&reason.to_string()).is_some());
}

#[test]
fn a_suggested_mix_applies_as_one_undo_step_and_the_rail_then_meets_target() {
    let board = sample();
    let rail = board.rail_index("VDDR").unwrap();
    let mut harness = window(board.clone());
    select_rail(&mut harness, "VDDR");
    click(&mut harness, "Suggest");
    harness.get_by_label("Find mixes").click();
    harness.step();
    // 30 candidates take well under a second; allow a slow machine a minute.
    step_until(&mut harness, "Apply option 1", 3000);
    harness.run();
    click(&mut harness, "Pin option 1");
    assert!(harness.query_by_label("option 1").is_some(), "the option is pinned on the plot");
    click(&mut harness, "Apply option 1");
    let applied = harness.state().board().clone();
    assert_ne!(applied, board);
    assert!(engine(&applied, rail).meets_target, "the engine finds the rail meeting target with the applied mix");
    assert_shows(&harness, &engine(&applied, rail));
    // Every added part is on the board, and the rail's groups are the mix.
    for g in &applied.rails[rail].decaps {
        assert!(applied.part(&g.part).is_some(), "{} is on the board", g.part);
        assert!(g.part.starts_with("shelf-"), "the mix replaced the rail's groups: {}", g.part);
    }
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board, "one undo takes the whole mix back");
    assert!(!harness.state().is_dirty());
}

/// A rail whose package is too inductive for its band: the panel says what stops it and shows the closest mix
/// to pin, with no way to apply it.
#[test]
fn a_search_that_finds_no_mix_says_why_and_offers_nothing_to_apply() {
    let mut board = sensor_hub();
    board.rails[0].package.as_mut().unwrap().l_h = 3e-10;
    let mut harness = window(board.clone());
    select_rail(&mut harness, &board.rails[0].name);
    click(&mut harness, "Suggest");
    assert!(harness.query_by_label("Most kinds of part").is_some(), "the kinds limit is a setting");
    assert!(harness.query_by_label("Margin under target, dB").is_some());
    harness.get_by_label("Find mixes").click();
    harness.step();
    step_until(&mut harness, "Pin the closest mix", 3000);
    harness.run();
    assert!(harness.query_by_label("It misses, so it is not offered to apply.").is_some());
    assert!(harness.query_by_label("Apply option 1").is_none(), "nothing to apply");
    assert!(harness.query_by_label_contains("The package is the limit").is_some());
}

/// On a placed rail the panel says where new parts go, and an applied option puts its groups there: the rail's
/// placement keeps one entry per group and the engine's verdict at the load is the one shown.
#[test]
fn a_mix_suggested_on_a_placed_rail_goes_beside_its_load() {
    let mut board =
        hushrail::io::read_board(&crate::common::root().join("tests/networks/placed/far_part.json")).unwrap();
    board.rails[0].band_hz = Some([1e4, 2e8]);
    let mut harness = window(board.clone());
    click(&mut harness, "Suggest");
    assert!(harness.query_by_label("New parts go beside").is_some(), "a placed rail asks where new parts go");
    harness.get_by_label("Find mixes").click();
    harness.step();
    step_until(&mut harness, "Apply option 1", 3000);
    harness.run();
    let spot = board.rails[0].placement.as_ref().unwrap().beside_load(0).unwrap();
    let words = format!("New parts go at ({:.1} mm, {:.1} mm), beside U5", spot[0] * 1e3, spot[1] * 1e3);
    assert!(harness.query_by_label_contains(&words).is_some(), "shown: {words}");
    click(&mut harness, "Apply option 1");
    let applied = harness.state().board().clone();
    let placement = applied.rails[0].placement.as_ref().unwrap();
    assert_eq!(placement.groups.len(), applied.rails[0].decaps.len());
    assert!(placement.groups.iter().all(|g| g.spots == hushrail::model::GroupSpots::At(spot)));
    assert!(engine(&applied, 0).meets_target, "the engine finds the rail meeting target at its load");
    assert_shows(&harness, &engine(&applied, 0));
}

/// A copy of the sample board in a fresh folder with two measured parts on its first rail: one whose Touchstone
/// file is good, one whose file has a line with a value missing.
fn board_with_measured_parts(dir: &Path) -> PathBuf {
    let touchstone = crate::common::root().join("tests/touchstone");
    std::fs::copy(touchstone.join("bulk_ri_hz_50.s1p"), dir.join("good.s1p")).unwrap();
    std::fs::copy(touchstone.join("bad/wrong_columns.s1p"), dir.join("broken.s1p")).unwrap();
    let text = std::fs::read_to_string(crate::common::root().join("sample_boards/edge_camera.json")).unwrap();
    let mut b: serde_json::Value = serde_json::from_str(&text).unwrap();
    for (id, file) in [("meas-good", "good.s1p"), ("meas-broken", "broken.s1p")] {
        b["parts"].as_array_mut().unwrap().push(serde_json::json!({
            "id": id, "kind": "measured", "touchstone": file, "fixture": "one-port"
        }));
        b["rails"][0]["decaps"].as_array_mut().unwrap().push(serde_json::json!({
            "part": id, "count": 1, "mounting_h": 0.8e-9
        }));
    }
    let path = dir.join("measured.json");
    std::fs::write(&path, serde_json::to_string_pretty(&b).unwrap()).unwrap();
    path
}

#[test]
fn a_board_with_a_broken_measured_part_opens_with_that_part_marked_unusable_and_the_good_one_fitted() {
    let dir = tempfile::tempdir().unwrap();
    let path = board_with_measured_parts(dir.path());
    assert!(hushrail::io::read_board(&path).is_err(), "the command line's strict reader refuses it");
    let expected = hushrail::io::read_board_keeping_unusable(&path).unwrap();
    let broken = expected.part("meas-broken").unwrap().unusable().expect("marked unusable");
    assert!(broken.contains("broken.s1p"), "{broken}");
    let good = expected.part("meas-good").unwrap();
    assert!(good.unusable().is_none());

    let app = App::open(Some(&path), hushrail::gui::files::Store::new(None));
    // A tall window, so that the part's own rows below the table show without scrolling.
    let mut harness =
        Harness::builder().with_size([1280.0, 1600.0]).build_ui_state(|ui, app: &mut App| app.show(ui), app);
    harness.run();
    assert_eq!(harness.state().path(), Some(path.as_path()), "the board opened");
    assert_shows(&harness, &engine(&expected, 0));
    click(&mut harness, "Parts");
    assert!(harness.query_by_label("unusable").is_some(), "the table marks the broken part");
    click(&mut harness, "meas-good");
    for (value, unit) in [(good.capacitance_f, Unit::Farad), (good.esr_ohm, Unit::Ohm), (good.esl_h, Unit::Henry)] {
        let text = format!("{} fitted (read-only)", format(value, unit));
        assert!(harness.query_by_label(&text).is_some(), "shown: {text}");
    }
    // (The broken part's row is above the good one's: a tooltip over it would cover the good one's.)
    click(&mut harness, "meas-broken");
    assert!(harness.query_by_label(&format!("unusable: {broken}")).is_some(), "the reason with file and line");
}

#[test]
fn the_window_writes_the_same_report_as_the_command_line() {
    let dir = tempfile::tempdir().unwrap();
    let board_path = dir.path().join("edge_camera.json");
    std::fs::copy(crate::common::root().join("sample_boards/edge_camera.json"), &board_path).unwrap();
    let board = hushrail::io::read_board(&board_path).unwrap();
    let mut app = App::open(Some(&board_path), hushrail::gui::files::Store::new(None));
    let out = dir.path().join("report.html");
    assert!(app.save_report_to(&out));
    assert!(app.finish_report(), "the report is written");
    let written = std::fs::read_to_string(&out).unwrap();
    let droops: Vec<_> = (0..board.rails.len())
        .map(|i| hushrail::analysis::droop(&board, i, &hushrail::analysis::DroopOptions::default()))
        .collect();
    let context = hushrail::io::ReportContext {
        source: board_path.display().to_string(),
        sha256: hushrail::io::sha256_hex(&std::fs::read(&board_path).unwrap()),
        command: format!("hushrail check '{}'", board_path.display()),
        date: hushrail::io::utc_date_today(),
        unsaved_edits: false,
    };
    assert_eq!(written, hushrail::io::report_html(&board, &context, Some(&droops)));
    assert!(!written.contains("UNSAVED EDITS"));
    // The file changing on disk after it was opened does not change what the report says it judged: the hash
    // is of the bytes read when the board was opened (checked against the sha256 of those bytes above).
    let read_hash = context.sha256.clone();
    std::fs::write(&board_path, format!("{}\n\n", std::fs::read_to_string(&board_path).unwrap())).unwrap();
    assert!(app.save_report_to(&out));
    assert!(app.finish_report(), "the report is written");
    let again = std::fs::read_to_string(&out).unwrap();
    assert!(again.contains(&read_hash), "the hash of the bytes read at opening");
    assert!(!again.contains(&hushrail::io::sha256_hex(&std::fs::read(&board_path).unwrap())));
    // With an edit not saved, the report says so and carries the hash of the board as shown.
    let count = app.board().rails[0].decaps[0].count + 1;
    app.edit(hushrail::gui::history::Edit::SetCount { rail: 0, group: 0, count }, "one more", false).unwrap();
    assert!(app.save_report_to(&out));
    assert!(app.finish_report(), "the report is written");
    let written = std::fs::read_to_string(&out).unwrap();
    assert!(written.contains("UNSAVED EDITS"), "the warning is there");
    assert!(written.contains(&hushrail::io::board_sha256(app.board())));
    for rail in &board.rails {
        assert!(written.contains(&rail.name));
    }
}

#[test]
fn a_groups_mounting_geometry_is_edited_with_the_engines_breakdown_and_moves_the_rail() {
    use hushrail::physics::mounting::mounting_breakdown;
    let board = sample();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let mut harness = window(board.clone());
    select_rail(&mut harness, "V3V3_IO");
    click(&mut harness, "mounting of group 1 from geometry");
    let g = harness.state().board().rails[rail].decaps[0].mounting.expect("the group now gives geometry");
    let total = |g| format!("mounting total {:.3} nH", mounting_breakdown(g).total_h * 1e9);
    assert!(harness.query_by_label(&total(&g)).is_some(), "shown: {}", total(&g));
    for t in &mounting_breakdown(&g).terms {
        assert!(harness.query_by_label_contains(t.formula).is_some(), "the formula of {} is shown", t.name);
    }
    assert_shows(&harness, &engine(harness.state().board(), rail));

    select_all_and_type(&mut harness, "via length to the planes", "1.6m");
    let after = harness.state().board().clone();
    let g2 = after.rails[rail].decaps[0].mounting.unwrap();
    assert_eq!(g2.via_length_m, 1.6e-3);
    assert!(harness.query_by_label(&total(&g2)).is_some(), "shown: {}", total(&g2));
    assert_ne!(engine(&after, rail).worst_ohm, engine(&board, rail).worst_ohm, "the longer via moves the rail");
    assert_shows(&harness, &engine(&after, rail));

    // Each change is its own undo step: the via length, then the switch to geometry.
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board().rails[rail].decaps[0].mounting, Some(g));
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    assert_eq!(harness.state().board(), &board);
}

#[test]
fn the_coupling_tool_sizes_796_microfarads_for_100_ohms_at_20_hertz() {
    let mut harness = window(sample());
    click(&mut harness, "Tools");
    click(&mut harness, "Size a coupling capacitor…");
    // The defaults are the example: 100 Ω, 20 Hz, a factor of ten.
    assert!(harness.query_by_label("C = 796 µF").is_some());
    assert!(harness.query_by_label("preferred value 820 µF (E12)").is_some());
    for note in hushrail::physics::coupling::COUPLING_NOTES {
        assert!(harness.query_by_label(note).is_some());
    }
    select_all_and_type(&mut harness, "Impedance it drives (Ω)", "10k");
    assert!(harness.query_by_label("C = 7.96 µF").is_some());
    select_all_and_type(&mut harness, "Corner this far below it (×)", "0");
    assert!(harness.query_by_label("the factor must be above zero, not 0").is_some());
}

#[test]
fn a_package_and_die_added_on_the_rail_move_the_verdict_to_the_die() {
    let board = sample();
    let rail = board.rail_index("VDDR").unwrap();
    assert!(board.rails[rail].package.is_none());
    let mut harness = window(board);
    select_rail(&mut harness, "VDDR");
    click(&mut harness, "Package and die");
    click(&mut harness, "a package between the board and the die (series R-L)");
    let b = harness.state().board().clone();
    assert!(b.rails[rail].package.is_some() && b.rails[rail].die.is_some());
    assert!(harness.query_by_label("seen at the die, through the package").is_some());
    select_all_and_type(&mut harness, "package L", "200p");
    let b = harness.state().board().clone();
    assert_eq!(b.rails[rail].package.unwrap().l_h, 200e-12);
    assert_shows(&harness, &engine(&b, rail));
}

#[test]
fn turning_the_generic_bias_model_off_changes_the_worst_corner_as_the_engine_says() {
    use hushrail::physics::Corner;
    let board = sample();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let worst =
        |b: &Board| analyze_rail(b, rail, &AnalysisOptions { corner: Corner::Worst, ..Default::default() }).unwrap();
    let mut harness = window(board.clone());
    select_rail(&mut harness, "V3V3_IO");
    click(&mut harness, "worst corner");
    click(&mut harness, "Parts");
    click(&mut harness, "Board temperature and derating");
    click(&mut harness, "generic DC-bias model for class II ceramics without their own curve (typical, recalled)");
    let off = harness.state().board().clone();
    assert_eq!(off.generic_dc_bias, Some(false));
    assert_ne!(worst(&off).worst_ohm, worst(&board).worst_ohm);
    let line = one_line(&worst(&off));
    assert!(harness.query_by_label(&line).is_some(), "shown: {line}");
}

#[test]
fn at_1280_by_800_the_plot_is_the_largest_thing_and_the_side_panel_keeps_its_width() {
    let mut harness = window(sample());
    click(&mut harness, "Pin this curve");
    click(&mut harness, "worst corner");
    let plot = harness.state().plot_rect().expect("the plot is drawn");
    // The plot takes most of the middle: at least 540 × 330 points of a 1280 × 800 window (about a fifth of the
    // window; before, with a pin and the worst corner on, it was about 150 points high).
    assert!(plot.width() >= 540.0 && plot.height() >= 330.0, "plot {plot:?}");
    // The side panel does not move when a caution appears (the first group of VCORE is polarised; a second
    // rail with a different caution set is selected): its tab stays where it was.
    let before = harness.get_by_label("Rail inputs").rect();
    select_rail(&mut harness, "V3V3_IO");
    select_rail(&mut harness, "VCORE");
    harness.run();
    let after = harness.get_by_label("Rail inputs").rect();
    assert_eq!(before.left(), after.left(), "the side panel kept its width");
    // The plot grows with the window.
    harness.set_size(egui::vec2(1920.0, 1080.0));
    harness.run();
    harness.run();
    let big = harness.state().plot_rect().unwrap();
    assert!(big.width() > plot.width() + 400.0 && big.height() > plot.height() + 200.0, "{big:?} vs {plot:?}");
}

#[test]
fn the_legend_names_each_groups_curve() {
    let board = sample();
    let mut harness = window(board.clone());
    click(&mut harness, "each group");
    let result = hushrail::gui::results::compute_with(&board, 0, Default::default()).unwrap();
    assert!(!result.plot.branches.is_empty());
    for b in &result.plot.branches {
        assert!(harness.query_by_label(&b.label).is_some(), "legend entry for {}", b.label);
    }
}

#[test]
fn lengths_are_typed_in_mm_um_and_mil_and_shown_without_noise() {
    let board = sample();
    let rail = board.rail_index("V3V3_IO").unwrap();
    let mut harness = window(board);
    select_rail(&mut harness, "V3V3_IO");
    click(&mut harness, "mounting of group 1 from geometry");
    select_all_and_type(&mut harness, "trace width", "0.3mm");
    select_all_and_type(&mut harness, "pad-to-via trace length", "300um");
    select_all_and_type(&mut harness, "via drill", "12 mil");
    select_all_and_type(&mut harness, "power-to-ground via distance", "20mil");
    let g = harness.state().board().rails[rail].decaps[0].mounting.unwrap();
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b;
    assert!(close(g.trace_width_m, 0.3e-3), "{}", g.trace_width_m);
    assert!(close(g.trace_length_m, 300e-6), "{}", g.trace_length_m);
    // 1 mil = 25.4 µm exactly (the inch is 25.4 mm by definition).
    assert!(close(g.via_drill_m, 12.0 * 25.4e-6), "{}", g.via_drill_m);
    assert!(close(g.via_pitch_m, 20.0 * 25.4e-6), "{}", g.via_pitch_m);
    let shown = |h: &Harness<'_, App>, label: &str| h.get_by_label(label).value().unwrap_or_default();
    assert_eq!(shown(&harness, "trace width"), "300 µm");
    assert_eq!(shown(&harness, "via drill"), "304.8 µm");
    assert_eq!(shown(&harness, "power-to-ground via distance"), "508 µm");
    // A whole-number field shows a whole number; no field shows floating-point noise.
    assert_eq!(shown(&harness, "vias per pad"), g.vias_per_pad.to_string());
    for label in ["pad-to-via trace length", "trace height over its plane", "via length to the planes"] {
        let text = shown(&harness, label);
        assert!(text.len() <= 10 && (text.ends_with(" µm") || text.ends_with(" mm")), "{label}: {text}");
    }
}

#[test]
fn a_negative_entry_gives_one_message_in_the_words_typed() {
    let mut harness = window(sample());
    select_all_and_type(&mut harness, "Voltage", "-5n");
    assert_eq!(harness.query_all_by_label_contains("Refused:").count(), 1, "one message");
    assert!(harness.query_by_label_contains("not -5n").is_some(), "in the words typed");
    assert!(harness.query_by_label_contains("e-9").is_none(), "never the raw SI value");
}

#[test]
fn undo_says_what_it_undid_and_what_the_count_is_now() {
    let board = sample();
    let group = board.rails[0].decaps.iter().position(|g| g.part == "mlcc-100n-0402").unwrap();
    let was = board.rails[0].decaps[group].count;
    let mut harness = window(board);
    select_all_and_type(&mut harness, "count of mlcc-100n-0402", "40");
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    harness.run();
    let line = format!(
        "Undone: count of mlcc-100n-0402 on VCORE to 40; the count of mlcc-100n-0402 on VCORE is back to {was}"
    );
    assert!(harness.query_by_label(&line).is_some(), "{line}");
    harness.key_press_modifiers(Modifiers::COMMAND, Key::Y);
    harness.run();
    assert!(harness.query_by_label_contains("is now 40").is_some());
}

#[test]
fn new_board_and_add_rail_from_the_window() {
    let mut harness = window(sample());
    click(&mut harness, "File");
    click(&mut harness, "New board");
    assert_eq!(harness.state().board().name, "New board");
    assert_eq!(harness.state().board().rails.len(), 1);
    click(&mut harness, "Add rail");
    assert_eq!(harness.state().board().rails.len(), 2);
    assert_eq!(harness.state().selected_rail(), 1);
    // The new rail is analysed like any other (no capacitors yet: the engine's verdict is shown).
    let a = engine(harness.state().board(), 1);
    assert_shows(&harness, &a);
}

#[test]
fn every_export_from_the_window_is_the_libraries_and_the_path_field_works_without_a_dialog() {
    use hushrail::gui::FileAction;
    let dir = tempfile::tempdir().unwrap();
    let board = sample();
    let mut harness = window(board.clone());
    // The plot, drawn by the report's plotting code with title and verdict, at the chosen size.
    let svg = String::from_utf8(harness.state().export_bytes(FileAction::PlotSvg).unwrap()).unwrap();
    let check = hushrail::analysis::check_rail(&board, 0, &Default::default()).unwrap();
    assert!(svg.contains("width=\"1200\"") && svg.contains("height=\"700\""), "size");
    assert!(svg.contains("VCORE") && svg.contains(&hushrail::io::escape(&check.verdict_line())), "title and verdict");
    assert!(svg.contains("frequency") && svg.contains("target"), "axes and legend");
    let png = harness.state().export_bytes(FileAction::PlotPng).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    assert_eq!(u32::from_be_bytes(png[16..20].try_into().unwrap()), 1200, "PNG width");
    // The bill of materials is the CLI's.
    let bom = harness.state().export_bytes(FileAction::Bom).unwrap();
    assert_eq!(String::from_utf8(bom).unwrap(), hushrail::io::bom_csv(&hushrail::io::bill_of_materials(&board)));
    let s1p = String::from_utf8(harness.state().export_bytes(FileAction::Touchstone).unwrap()).unwrap();
    assert!(s1p.contains("# Hz S RI R 50"));
    let csv = String::from_utf8(harness.state().export_bytes(FileAction::Csv).unwrap()).unwrap();
    assert!(csv.starts_with("freq_hz,z_re_ohm"));
    let cir = String::from_utf8(harness.state().export_bytes(FileAction::Netlist).unwrap()).unwrap();
    assert!(cir.to_ascii_lowercase().contains(".ac"));

    // No file-dialog service here: the menu item opens the window's own path field.
    let target = dir.path().join("bom.csv");
    click(&mut harness, "File");
    click(&mut harness, "Export the bill of materials (CSV)…");
    select_all_and_type(&mut harness, "Path", target.to_str().unwrap());
    assert!(target.exists(), "written through the path field");
}

/// On a placed rail the plot shows the load chosen: its own verdict line (the words `check` prints) and its
/// worst effective |Z| in the header, while the rail's verdict stays its worst load's.
#[test]
fn a_placed_rail_plots_the_load_chosen() {
    let board = hushrail::io::read_board(&crate::common::root().join("tests/networks/placed/two_loads.json")).unwrap();
    let check = hushrail::analysis::check_rail(&board, 0, &Default::default()).unwrap();
    let mut harness = window(board.clone());
    assert!(harness.query_by_label("at load").is_some(), "a placed rail offers the choice of load");
    let verdict = if check.passes { "passes the check" } else { "fails the check" };
    for k in 0..check.loads.len() {
        harness.state_mut().set_look(hushrail::gui::results::Look { load: Some(k), ..Default::default() });
        harness.run();
        let l = &check.loads[k];
        let line = hushrail::analysis::load_line(l, check.verdict.target_ohm);
        assert!(harness.query_by_label(&line).is_some(), "shown: {line}");
        let worst = format!("worst |Z| {} at {}", format(l.worst_ohm, Unit::Ohm), format(l.worst_hz, Unit::Hertz));
        assert!(harness.query_by_label(&worst).is_some(), "the header gives load {k}'s figures: {worst}");
        assert!(harness.query_by_label(verdict).is_some(), "the rail's verdict stays its worst load's");
        let shown = analyze_rail(&board, 0, &AnalysisOptions { load: Some(k), ..Default::default() }).unwrap();
        assert_eq!(shown.worst_ohm, l.worst_ohm, "the engine's figures for that load");
        // The netlist export is the plane meshed (never one node), read at the load shown: the library's own
        // mesh writer at the export's cell size.
        let cir = String::from_utf8(harness.state().export_bytes(hushrail::gui::FileAction::Netlist).unwrap()).unwrap();
        let (from, to) = hushrail::io::plot_range_hz(shown.band_hz);
        let sweep = hushrail::io::AcSweep { from_hz: from, to_hz: to, points_per_decade: 20 };
        let cell = hushrail::io::export_mesh_cell_m(board.rails[0].placement.as_ref().unwrap().plane_pair.size_m);
        let expected = hushrail::io::mesh_netlist(
            &board,
            &board.rails[0],
            &sweep,
            cell,
            (k, None),
            "hushrail_ac.txt",
            hushrail::physics::Corner::Typical,
        )
        .unwrap();
        assert_eq!(cir, expected, "load {k}'s meshed netlist");
        // The CSV is the self-impedance at the same load, as `sweep --at` gives it.
        let csv = String::from_utf8(harness.state().export_bytes(hushrail::gui::FileAction::Csv).unwrap()).unwrap();
        let points = ((to / from).log10() * 20.0).round() as usize + 1;
        let grid = hushrail::analysis::log_grid(from, to, points);
        let z = hushrail::analysis::placed::load_sweep(&board, &board.rails[0], k, None, &grid, shown.corner).unwrap();
        assert_eq!(csv, hushrail::io::impedance_csv(&grid, &z, shown.target_ohm), "load {k}'s impedance");
        assert!(cir.contains(&format!("at load {k} ({})", l.name)), "it says which load it reads");
    }
}

/// Run the window until the report it writes is done (its thread shares the machine with other tests).
fn until_report_written(harness: &mut Harness<'_, App>) {
    for _ in 0..3000 {
        if !harness.state().is_writing_report() {
            return;
        }
        harness.step();
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    panic!("the report was never written");
}

#[test]
fn the_report_is_written_beside_the_window_and_an_edit_made_meanwhile_is_kept() {
    use hushrail::gui::StatusKind;
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("report.html");
    let board = sample();
    let part = board.rails[0].decaps[0].part.clone();
    let count = board.rails[0].decaps[0].count;
    let mut harness = window(board.clone());
    assert!(harness.state_mut().save_report_to(&out));
    // Asked, not yet done: the status line says it is working, and asking again while it works is refused.
    let busy = harness.state().status().cloned().expect("a status");
    assert_eq!(busy.kind, StatusKind::Busy);
    assert!(busy.text.starts_with("Writing the report"), "{}", busy.text);
    assert!(!harness.state_mut().save_report_to(&out), "one report at a time");
    assert_eq!(harness.state().status().unwrap().kind, StatusKind::Error);
    // The user goes on editing while the report is written (the edit lands before the report's outcome is
    // looked for, however fast the report is).
    harness
        .state_mut()
        .edit(
            hushrail::gui::history::Edit::SetCount { rail: 0, group: 0, count: count + 1 },
            format!("one more {part}"),
            false,
        )
        .unwrap();
    // The window is not blocked: frames draw while the report is written.
    harness.run();
    until_report_written(&mut harness);
    assert_eq!(harness.state().board().rails[0].decaps[0].count, count + 1, "the edit made meanwhile is kept");
    let done = harness.state().status().cloned().unwrap();
    assert_eq!(done.kind, StatusKind::Info);
    assert!(done.text.contains("the edits made since are not in it"), "{}", done.text);
    assert!(harness.query_by_label(&done.text).is_some(), "the status line shows it");
    // The report is of the board as it was when asked: its hash, not the edited board's.
    let written = std::fs::read_to_string(&out).unwrap();
    assert!(written.contains(&hushrail::io::board_sha256(&board)));
    assert!(!written.contains(&hushrail::io::board_sha256(harness.state().board())));
    assert!(written.trim_end().ends_with("</html>"), "a whole document");
}

#[test]
fn a_report_that_cannot_be_written_says_why_and_leaves_no_part_file() {
    use hushrail::gui::StatusKind;
    let dir = tempfile::tempdir().unwrap();
    // A folder where the file should go: the write is refused, and nothing is left beside it.
    let out = dir.path().join("taken");
    std::fs::create_dir(&out).unwrap();
    let mut harness = window(sample());
    assert!(harness.state_mut().save_report_to(&out));
    until_report_written(&mut harness);
    let status = harness.state().status().cloned().unwrap();
    assert_eq!(status.kind, StatusKind::Error);
    assert!(status.text.contains(&out.display().to_string()), "{}", status.text);
    assert!(harness.query_by_label(&status.text).is_some(), "the status line shows it");
    let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
    assert_eq!(left, vec![std::ffi::OsString::from("taken")], "no temporary file left behind");
    // An edit clears an old message; undo with nothing left to undo says so as information.
    harness.state_mut().ask(hushrail::gui::Command::Redo);
    harness.run();
    let status = harness.state().status().cloned().unwrap();
    assert_eq!((status.kind, status.text.as_str()), (StatusKind::Info, "Nothing to redo."));
}

/// On a placed rail the time view draws the load chosen under "at load" (the plot's choice), says which, and gives
/// that load's figures and verdict in the engine's words; with no choice, the worst load's.
#[test]
fn the_time_view_on_a_placed_rail_shows_the_load_chosen() {
    use hushrail::analysis::{droop, droop_load_line};
    use hushrail::gui::results::droop_options;
    let board = sample();
    let rail = board.rail_index("VCORE_PLACED").unwrap();
    let d = droop(&board, rail, &droop_options()).unwrap();
    assert!(d.loads.len() >= 2);
    let mut harness = window(board.clone());
    select_rail(&mut harness, "VCORE_PLACED");
    harness.get_by_label("Load step").click();
    let worst = d.loads.iter().max_by(|a, b| a.droop_v.total_cmp(&b.droop_v)).unwrap();
    step_until(&mut harness, &format!("Drawn at load {}, the worst load", worst.name), 3000);
    harness.run();
    assert!(harness.query_by_label(&droop_load_line(&d, worst)).is_some());
    for (k, l) in d.loads.iter().enumerate() {
        harness.state_mut().set_look(hushrail::gui::results::Look { load: Some(k), ..Default::default() });
        harness.run();
        let which = format!("Drawn at load {}, the load chosen under \"at load\"", l.name);
        assert!(harness.query_by_label(&which).is_some(), "says which load: {which}");
        let line = droop_load_line(&d, l);
        assert!(harness.query_by_label(&line).is_some(), "the engine's figures for load {}: {line}", l.name);
        for other in d.loads.iter().filter(|o| o.name != l.name) {
            assert!(harness.query_by_label(&droop_load_line(&d, other)).is_none(), "only the chosen load's verdict");
        }
    }
}
