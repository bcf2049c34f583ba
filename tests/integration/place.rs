//! `hushrail place`: a rail placed from placement (centroid) and BOM files of an invented layout, in the usual
//! column conventions and units (mm, mil, inch; 1 inch = 25.4 mm exactly, by the 1959 international agreement),
//! and malformed files refused with the file, line and column.

use crate::common::*;
use hushrail::model::{Board, GroupSpots};

fn layout(name: &str) -> std::path::PathBuf {
    root().join("tests/networks/layout").join(name)
}

const PLANE: [&str; 8] = ["--regulator", "U3", "--size", "0.1,0.06", "--dielectric", "100u", "--er", "4.3"];

/// Run `place` on the test board with `centroid` and `extra` flags: (exit code, stdout, stderr).
fn place(centroid: &str, out: &std::path::Path, extra: &[&str]) -> (Option<i32>, String, String) {
    let o = hushrail()
        .args(["place", layout("lumped_board.json").to_str().unwrap(), "--rail", "V1V2"])
        .args(["--centroid", layout(centroid).to_str().unwrap(), "-o", out.to_str().unwrap()])
        .args(extra)
        .output()
        .unwrap();
    (o.status.code(), String::from_utf8_lossy(&o.stdout).into(), String::from_utf8_lossy(&o.stderr).into())
}

fn spots(board: &Board) -> Vec<(String, [f64; 2])> {
    let p = board.rails[0].placement.as_ref().unwrap();
    let mut out: Vec<(String, [f64; 2])> = Vec::new();
    for g in &p.groups {
        if let GroupSpots::Each(s) = &g.spots {
            out.extend(s.iter().map(|s| (s.reference.clone(), s.at_m)));
        }
    }
    out.extend(board.rails[0].loads.iter().zip(&p.loads).map(|(l, lp)| (l.name.clone(), lp.at_m)));
    out.push(("regulator".into(), p.source.unwrap().at_m));
    out
}

#[test]
fn the_same_layout_in_mm_mil_and_inch_places_the_rail_alike() {
    let dir = tempfile::tempdir().unwrap();
    let before = std::fs::read(layout("lumped_board.json")).unwrap();
    let mut placed = Vec::new();
    for (file, units) in [("centroid_mm.csv", None), ("centroid_mil.csv", None), ("centroid_inch.tsv", Some("inch"))] {
        let out = dir.path().join(format!("{file}.json"));
        let mut args: Vec<&str> = PLANE.to_vec();
        let b = root().join("tests/networks/layout/bom.csv");
        args.extend(["--bom", b.to_str().unwrap()]);
        if let Some(u) = units {
            args.extend(["--units", u]);
        }
        let (code, text, err) = place(file, &out, &args);
        assert_eq!(code, Some(0), "{file}: {err}");
        assert!(text.contains("group 1 c100n-0402: C1, C2, C3, C4 from the BOM (line 2)"), "{text}");
        assert!(text.contains("load U1 bridge: U1") && text.contains("regulator: U3"), "{text}");
        let board = hushrail::io::read_board(&out).unwrap();
        assert!(hushrail::model::validate_board(&board).is_empty());
        assert_eq!(board.rails[0].decaps.iter().map(|g| g.count).collect::<Vec<_>>(), [4, 2, 2]);
        assert!(board.rails[0].plane.is_none(), "the plane pair replaces the lumped plane");
        placed.push(spots(&board));
    }
    assert_eq!(placed[0].iter().find(|s| s.0 == "C1").unwrap().1, [0.024, 0.020]);
    // The mil and inch files round to 0.1 mil and 1 mil: within 13 µm of the mm file.
    for other in &placed[1..] {
        for (a, b) in placed[0].iter().zip(other) {
            assert_eq!(a.0, b.0);
            assert!((a.1[0] - b.1[0]).abs() < 13e-6 && (a.1[1] - b.1[1]).abs() < 13e-6, "{a:?} vs {b:?}");
        }
    }
    assert_eq!(std::fs::read(layout("lumped_board.json")).unwrap(), before, "the input is never changed");
    // The placed rail is judged at its loads.
    let board = hushrail::io::read_board(&dir.path().join("centroid_mm.csv.json")).unwrap();
    let check = hushrail::analysis::check_rail(&board, 0, &Default::default()).unwrap();
    assert_eq!(check.loads.len(), 2);
}

#[test]
fn a_placed_rail_moves_its_parts_by_their_ref_fields_without_a_bom() {
    let dir = tempfile::tempdir().unwrap();
    let first = dir.path().join("first.json");
    let b = root().join("tests/networks/layout/bom.csv");
    let mut args: Vec<&str> = PLANE.to_vec();
    args.extend(["--bom", b.to_str().unwrap()]);
    assert_eq!(place("centroid_mm.csv", &first, &args).0, Some(0));
    // The layout moved C1 by 2 mm; the placed board knows its designators from its ref fields.
    let moved = dir.path().join("moved.csv");
    let text = std::fs::read_to_string(layout("centroid_mm.csv")).unwrap().replace("C1,24.0,20.0", "C1,22.0,20.0");
    std::fs::write(&moved, text).unwrap();
    let second = dir.path().join("second.json");
    let o = hushrail()
        .args(["place", first.to_str().unwrap(), "--rail", "V1V2", "--centroid", moved.to_str().unwrap()])
        .args(["--regulator", "U3", "-o", second.to_str().unwrap()])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(text.contains("from its ref fields"), "{text}");
    let board = hushrail::io::read_board(&second).unwrap();
    assert_eq!(spots(&board).iter().find(|s| s.0 == "C1").unwrap().1, [0.022, 0.020]);
    // Never over an input.
    let o = hushrail()
        .args(["place", first.to_str().unwrap(), "--rail", "V1V2", "--centroid", moved.to_str().unwrap()])
        .args(["-o", first.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("is also an input"));
}

#[test]
fn malformed_layout_files_are_refused_with_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out.json");
    let b = root().join("tests/networks/layout/bom.csv");
    let mut args: Vec<&str> = PLANE.to_vec();
    args.extend(["--bom", b.to_str().unwrap()]);
    for (file, expect) in [
        ("bad_separator.csv", "bad_separator.csv:2:1: 1 comma-separated values where the header (line 1) has 3"),
        ("bad_number.csv", "bad_number.csv:3:2: \"2x4.0\" in column Mid X (mm) is not a number"),
        ("no_units.csv", "give --units mm, mil or inch"),
    ] {
        let (code, _, err) = place(file, &out, &args);
        assert_eq!(code, Some(2), "{file}");
        assert!(err.contains(expect), "{file}: {err}");
        assert!(!out.exists(), "nothing written");
    }
    // A wrong origin puts parts off the plane: each named with its line.
    let mut far = args.clone();
    far.extend(["--origin", "50,0"]);
    let (code, _, err) = place("centroid_mm.csv", &out, &far);
    assert_eq!(code, Some(2));
    assert!(err.contains("U3 (line 4) at (-42.00 mm, 8.00 mm)"), "{err}");
    // A BOM whose 100 nF line names no footprint fits both 100 nF groups.
    let ambiguous = dir.path().join("bom.csv");
    std::fs::write(&ambiguous, "Designator,Value\n\"C1,C2,C3,C4\",100n\n").unwrap();
    let mut amb: Vec<&str> = PLANE.to_vec();
    amb.extend(["--bom", ambiguous.to_str().unwrap()]);
    let (code, _, err) = place("centroid_mm.csv", &out, &amb);
    assert_eq!(code, Some(2));
    assert!(err.contains("fits groups 1 (c100n-0402), 2 (c100n-0603) alike"), "{err}");
    // A rail not placed yet needs its plane pair.
    let (code, _, err) = place("centroid_mm.csv", &out, &["--bom", b.to_str().unwrap()]);
    assert_eq!(code, Some(2));
    assert!(err.contains("give its plane pair (--size, --dielectric, --er)"), "{err}");
}
