//! Helpers shared by the integration tests.
#![allow(dead_code)]

use hushrail::io::read_board;
use hushrail::model::Board;
use std::path::{Path, PathBuf};

/// The crate's root folder.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Every board the outside-reference checks run on: the sample boards and the test networks, by file stem.
pub fn reference_boards() -> Vec<(String, PathBuf, Board)> {
    let mut out = Vec::new();
    for dir in ["sample_boards", "tests/networks"] {
        let mut paths: Vec<PathBuf> = std::fs::read_dir(root().join(dir))
            .unwrap()
            .map(|e| e.unwrap().path())
            .filter(|p| p.extension().is_some_and(|e| e == "json"))
            .collect();
        paths.sort();
        for p in paths {
            let board = read_board(&p).unwrap_or_else(|e| panic!("{e}"));
            out.push((p.file_stem().unwrap().to_string_lossy().into_owned(), p, board));
        }
    }
    out
}

/// The committed ngspice output for one rail seen from `view` (the die view carries a `__die` suffix).
pub fn reference_file(stem: &str, rail: &str, view: hushrail::analysis::View) -> PathBuf {
    let suffix = match view {
        hushrail::analysis::View::Board => "",
        hushrail::analysis::View::Die => "__die",
    };
    root().join("tests/reference").join(format!("{stem}__{rail}{suffix}.txt"))
}

/// True when ngspice can be run. Under CI (CI=true) a missing ngspice is a failure, not a skip.
pub fn ngspice_available() -> bool {
    let found = std::process::Command::new("ngspice").arg("--version").output().is_ok_and(|o| o.status.success());
    if !found && std::env::var("CI").is_ok_and(|v| v == "true") {
        panic!("ngspice is not installed, and under CI the outside reference must run (apt-get install ngspice)");
    }
    if !found {
        eprintln!("ngspice not found: the live comparison is skipped here (it is required under CI)");
    }
    found
}

/// Run ngspice in batch mode on a netlist in a fresh folder and return what its wrdata wrote.
pub fn run_ngspice(netlist: &str, data_file: &str) -> String {
    let dir = tempfile::tempdir().unwrap();
    let cir = dir.path().join("net.cir");
    std::fs::write(&cir, netlist).unwrap();
    let out = std::process::Command::new("ngspice").arg("-b").arg(&cir).current_dir(dir.path()).output().unwrap();
    assert!(out.status.success(), "ngspice failed: {}", String::from_utf8_lossy(&out.stderr));
    std::fs::read_to_string(dir.path().join(data_file))
        .unwrap_or_else(|e| panic!("ngspice wrote no data ({e}): {}", String::from_utf8_lossy(&out.stdout)))
}

/// The built binary.
pub fn hushrail() -> std::process::Command {
    std::process::Command::new(env!("CARGO_BIN_EXE_hushrail"))
}

/// Relative difference.
pub fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Path helper for messages.
pub fn show(p: &Path) -> String {
    p.strip_prefix(root()).unwrap_or(p).display().to_string()
}
