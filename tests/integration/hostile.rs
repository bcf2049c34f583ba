//! Hostile and absurd input at the command line: odd file types, sizes, encodings, flags out of range, and writes
//! that must not destroy anything. Each case exits 2 with the file (or the flag), the place and the reason.

use crate::common::*;
use std::os::unix::fs::PermissionsExt;
use std::path::Path;

fn run_in(dir: &Path, args: &[&str]) -> (i32, String, String) {
    let out = hushrail().args(args).current_dir(dir).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn sample_text() -> String {
    std::fs::read_to_string(root().join("sample_boards/edge_camera.json")).unwrap()
}

/// A measured board in `dir` whose one part's data is the file `data` (made by the caller).
fn measured_board(dir: &Path, data: &str) {
    let board = serde_json::json!({"format": "hushrail-board", "version": 1, "name": "m",
        "parts": [{"id": "m", "kind": "measured", "touchstone": data, "fixture": "one-port"},
                  {"id": "n", "kind": "measured", "touchstone": data, "fixture": "one-port"}],
        "rails": [{"name": "R1", "voltage_v": 1.0, "ripple_pct": 5, "band_hz": [1e3, 1e8],
                   "source": {"r_ohm": 1e-3, "l_h": 1e-8}, "loads": [{"name": "u1", "step_a": 1.0}],
                   "decaps": [{"part": "m", "count": 4, "mounting_h": 3e-10}]}]});
    std::fs::write(dir.join("board.json"), serde_json::to_string_pretty(&board).unwrap()).unwrap();
}

#[test]
fn files_that_are_not_regular_files_are_refused_at_once() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("pipe");
    assert!(std::process::Command::new("mkfifo").arg(&fifo).status().unwrap().success());
    std::fs::create_dir(dir.path().join("folder")).unwrap();
    // A board that is a device, a pipe (it would block forever) or a folder.
    for (board, words) in
        [("/dev/zero", "not a regular file"), ("pipe", "not a regular file"), ("folder", "it is a folder")]
    {
        let (code, _, stderr) = run_in(dir.path(), &["check", board]);
        assert_eq!(code, 2, "{board}: {stderr}");
        assert!(stderr.contains(board) && stderr.contains(words), "{board}: {stderr}");
    }
    // A measured part whose data is a device or a pipe: the part's place and the reason.
    for data in ["/dev/zero", "/dev/urandom", "pipe"] {
        measured_board(dir.path(), data);
        let (code, _, stderr) = run_in(dir.path(), &["check", "board.json"]);
        assert_eq!(code, 2, "{data}: {stderr}");
        assert!(stderr.contains("parts[0].touchstone") && stderr.contains("not a regular file"), "{data}: {stderr}");
    }
}

#[test]
fn a_file_past_the_size_cap_is_refused_with_the_cap() {
    let dir = tempfile::tempdir().unwrap();
    let big = dir.path().join("big.json");
    let f = std::fs::File::create(&big).unwrap();
    f.set_len((64 << 20) + 1).unwrap();
    let (code, _, stderr) = run_in(dir.path(), &["check", "big.json"]);
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("big.json") && stderr.contains("64 MiB"), "{stderr}");
}

#[test]
fn encodings_are_named_or_tolerated() {
    let dir = tempfile::tempdir().unwrap();
    // A byte-order mark is ignored (RFC 8259 lets a reader do so): the board checks as without it.
    let mut bom = vec![0xef, 0xbb, 0xbf];
    bom.extend(sample_text().bytes());
    std::fs::write(dir.path().join("bom.json"), bom).unwrap();
    std::fs::write(dir.path().join("plain.json"), sample_text()).unwrap();
    let (code_bom, out_bom, _) = run_in(dir.path(), &["check", "bom.json"]);
    let (code_plain, out_plain, _) = run_in(dir.path(), &["check", "plain.json"]);
    assert_eq!(code_bom, code_plain);
    // The same verdict; only the hash of the bytes read differs (the mark is three more bytes).
    let without_hash = |t: &str| t.lines().filter(|l| !l.contains("SHA-256")).collect::<Vec<_>>().join("\n");
    assert_eq!(without_hash(&out_bom.replace("bom.json", "plain.json")), without_hash(&out_plain));
    // An invalid byte: its line, column and offset.
    let mut bad = sample_text().into_bytes();
    let at = sample_text().find("VCORE").unwrap();
    bad.insert(at, 0xff);
    std::fs::write(dir.path().join("bad.json"), &bad).unwrap();
    let (code, _, stderr) = run_in(dir.path(), &["check", "bad.json"]);
    let line = sample_text()[..at].matches('\n').count() + 1;
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains(&format!("bad.json:{line}:")) && stderr.contains(&format!("offset {at}")), "{stderr}");
}

#[test]
fn control_characters_from_a_file_never_reach_the_terminal() {
    let dir = tempfile::tempdir().unwrap();
    // A forged second line and a terminal escape in a key the reader does not know.
    let text = sample_text().replacen("\"name\"", "\"na\\rme\\u001b[2J\"", 1);
    std::fs::write(dir.path().join("b.json"), text).unwrap();
    let (code, _, stderr) = run_in(dir.path(), &["check", "b.json"]);
    assert_eq!(code, 2, "{stderr}");
    assert!(!stderr.contains('\r') && !stderr.contains('\u{1b}'), "{stderr:?}");
    assert!(stderr.contains("\\r") && stderr.contains("\\u001b"), "{stderr}");
}

#[test]
fn flags_outside_their_ranges_are_refused_naming_the_flag() {
    let board = "sample_boards/edge_camera.json";
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["sweep", board, "--rail", "VCORE", "--from", "5e-324"], "--from: must be from 1 mHz to 1 THz"),
        (vec!["sweep", board, "--rail", "VCORE", "--from=-5n"], "--from: must be from 1 mHz"),
        (vec!["sweep", board, "--rail", "VCORE", "--points", "1000000000"], "--points: must be a whole number"),
        (vec!["sweep", board, "--rail", "VCORE", "--points", "18446744073709551615"], "--points"),
        (vec!["export", board, "--rail", "VCORE", "--csv", "x.csv", "--points", "1000000000"], "--points"),
        (vec!["droop", board, "--rail", "VCORE", "--rise", "0"], "--rise: must be from 1 ps to 1 s"),
        (vec!["droop", board, "--rail", "VCORE", "--rise", "1e-400"], "--rise: \"1e-400\": is too small"),
        (vec!["droop", board, "--rail", "VCORE", "--step", "1e308"], "--step: must be from 1 nA to 100 kA"),
        (vec!["mounting", "--via-pitch", "1e308"], "--via-pitch: must be from 1 µm to 50 mm"),
        (vec!["mounting", "--trace-width", "5e-324", "--json"], "--trace-width"),
        (vec!["coupling", "--impedance", "5e-324", "--lowest", "20"], "--impedance: must be from 1 mΩ"),
        (vec!["coupling", "--impedance", "100", "--lowest", "1e-300", "--json"], "--lowest"),
        (vec!["netlist", board, "--rail", "VCORE", "--from", "0"], "--from"),
    ];
    for (args, words) in cases {
        let (code, stdout, stderr) = run_in(&root(), &args);
        assert_eq!(code, 2, "{args:?}: {stdout}{stderr}");
        assert!(stderr.contains(words), "{args:?}: \"{words}\" not in {stderr}");
        assert!(!stdout.contains("NaN") && !stdout.contains("inf"), "{args:?}: {stdout}");
    }
}

#[test]
fn a_command_never_writes_over_its_own_input() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("b.json"), sample_text()).unwrap();
    let (code, _, stderr) = run_in(dir.path(), &["report", "b.json", "--no-droop", "-o", "b.json"]);
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("is also an input"), "{stderr}");
    assert_eq!(std::fs::read_to_string(dir.path().join("b.json")).unwrap(), sample_text(), "the board is untouched");
    // Through another spelling of the same file too.
    std::fs::create_dir(dir.path().join("x")).unwrap();
    let (code, _, stderr) = run_in(dir.path(), &["netlist", "b.json", "--rail", "VCORE", "-o", "./x/../b.json"]);
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("is also an input"), "{stderr}");
    assert_eq!(std::fs::read_to_string(dir.path().join("b.json")).unwrap(), sample_text());
}

#[test]
fn all_outputs_or_none() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("b.json"), sample_text()).unwrap();
    // The second output cannot be written (its folder does not exist): the first is not left behind.
    let (code, _, stderr) = run_in(
        dir.path(),
        &["export", "b.json", "--rail", "VCORE", "--touchstone", "first.s1p", "--csv", "no/such/folder/second.csv"],
    );
    assert_eq!(code, 2, "{stderr}");
    assert!(stderr.contains("second.csv"), "{stderr}");
    assert!(!dir.path().join("first.s1p").exists(), "the first output must not be written alone");
    let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
    assert_eq!(left.len(), 1, "no temporary file left: {left:?}");
    // Both outputs naming one file.
    let (code, _, stderr) =
        run_in(dir.path(), &["export", "b.json", "--rail", "VCORE", "--touchstone", "z.s1p", "--csv", "z.s1p"]);
    assert_eq!(code, 2, "{stderr}");
}

#[test]
fn writes_go_through_links_keep_modes_and_refuse_what_they_must_not_replace() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("b.json"), sample_text()).unwrap();
    // A link is written through: the link stays a link, the file it names gets the report.
    std::fs::write(d.join("real.html"), "old").unwrap();
    std::os::unix::fs::symlink("real.html", d.join("link.html")).unwrap();
    std::fs::set_permissions(d.join("real.html"), std::fs::Permissions::from_mode(0o640)).unwrap();
    let (code, _, stderr) = run_in(d, &["report", "b.json", "--no-droop", "-o", "link.html"]);
    assert_eq!(code, 0, "{stderr}");
    assert!(std::fs::symlink_metadata(d.join("link.html")).unwrap().file_type().is_symlink());
    assert!(std::fs::read_to_string(d.join("real.html")).unwrap().contains("<html"));
    let mode = std::fs::metadata(d.join("real.html")).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode, 0o640, "the file keeps its mode");
    // A read-only file, a pipe and a device are refused and left as they are.
    std::fs::write(d.join("ro.html"), "keep").unwrap();
    std::fs::set_permissions(d.join("ro.html"), std::fs::Permissions::from_mode(0o444)).unwrap();
    assert!(std::process::Command::new("mkfifo").arg(d.join("pipe.html")).status().unwrap().success());
    for (out, words) in
        [("ro.html", "read-only"), ("pipe.html", "not a regular file"), ("/dev/null", "not a regular file")]
    {
        let (code, _, stderr) = run_in(d, &["report", "b.json", "--no-droop", "-o", out]);
        assert_eq!(code, 2, "{out}: {stderr}");
        assert!(stderr.contains(out) && stderr.contains(words), "{out}: {stderr}");
    }
    assert_eq!(std::fs::read_to_string(d.join("ro.html")).unwrap(), "keep");
    assert!(std::fs::symlink_metadata(d.join("pipe.html")).unwrap().file_type().is_fifo());
}

#[test]
fn one_touchstone_file_named_by_many_parts_is_read_once_and_works() {
    // Both parts name one file; the board reads and checks as with one part (the read is shared).
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(root().join("tests/touchstone/bulk_ri_hz_50.s1p"), dir.path().join("data.s1p")).unwrap();
    measured_board(dir.path(), "data.s1p");
    let board = hushrail::io::read_board(&dir.path().join("board.json")).unwrap();
    let (a, b) = (board.parts[0].table().unwrap(), board.parts[1].table().unwrap());
    assert_eq!(a, b);
    let (code, _, stderr) = run_in(dir.path(), &["check", "board.json"]);
    assert!(code == 0 || code == 1, "{stderr}");
}

use std::os::unix::fs::FileTypeExt;
