//! `hushrail export` and `hushrail bom`: the exported numbers are the engine's numbers (the engine itself is
//! checked against ngspice in tests/ngspice.rs), in full precision; bad input exits 2 and writes nothing.

use crate::common::*;
use hushrail::analysis::{log_grid, magnitude_phase, sweep, target_impedance};
use hushrail::io::{Fixture, bill_of_materials, read_board, read_touchstone, z_to_one_port_s};

fn run(args: &[&str]) -> (i32, String, String) {
    let out = hushrail().args(args).current_dir(root()).output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    // Worktrees that share one CARGO_TARGET_DIR overwrite each other's binary; say so rather than fail obscurely.
    assert!(
        !stderr.contains("unrecognized subcommand") && !stderr.contains("cannot be used with '[BOARD]'"),
        "{} does not know `{}`: it is another checkout's build (a shared CARGO_TARGET_DIR); rerun the tests",
        env!("CARGO_BIN_EXE_hushrail"),
        args[0]
    );
    (out.status.code().unwrap_or(-1), String::from_utf8_lossy(&out.stdout).into_owned(), stderr)
}

#[test]
fn exported_numbers_are_the_sweep() {
    let dir = tempfile::tempdir().unwrap();
    for (stem, path, board) in reference_boards() {
        for rail in &board.rails {
            let s1p = dir.path().join(format!("{stem}_{}.s1p", rail.name));
            let csv = dir.path().join(format!("{stem}_{}.csv", rail.name));
            let (code, _, stderr) = run(&[
                "export",
                path.to_str().unwrap(),
                "--rail",
                &rail.name,
                "--points",
                "121",
                "--from",
                "1k",
                "--to",
                "1G",
                "--touchstone",
                s1p.to_str().unwrap(),
                "--csv",
                csv.to_str().unwrap(),
            ]);
            assert_eq!(code, 0, "{stem}/{}: {stderr}", rail.name);
            let grid = log_grid(1e3, 1e9, 121);
            let z = sweep(&board, rail, &grid);

            // CSV: every number reads back to exactly the engine's f64.
            let text = std::fs::read_to_string(&csv).unwrap();
            let mut lines = text.lines();
            assert_eq!(lines.next(), Some("freq_hz,z_re_ohm,z_im_ohm,z_mag_ohm,z_phase_deg,target_ohm"));
            let rows: Vec<Vec<f64>> = lines.map(|l| l.split(',').map(|x| x.parse().unwrap()).collect()).collect();
            assert_eq!(rows.len(), 121);
            for ((row, f), z) in rows.iter().zip(&grid).zip(&z) {
                let (mag, phase) = magnitude_phase(*z);
                assert_eq!(row, &vec![*f, z.re, z.im, mag, phase, target_impedance(rail)], "{stem}/{}", rail.name);
            }

            // Touchstone: S = (Z − 50)/(Z + 50) written exactly, and read back to Z within 1e-9.
            let t = read_touchstone(&s1p).unwrap();
            assert_eq!(t.freq_hz, grid);
            assert_eq!(t.z0_ohm, 50.0);
            let back = t.impedance(Fixture::OnePort).unwrap();
            for (k, z) in z.iter().enumerate() {
                assert_eq!(t.get(k, 0, 0), z_to_one_port_s(*z, 50.0), "{stem}/{} at {} Hz", rail.name, grid[k]);
                assert!((back[k] - z).norm() <= 1e-9 * z.norm(), "{stem}/{} at {} Hz", rail.name, grid[k]);
            }
        }
    }
}

#[test]
fn export_defaults_to_the_rails_band() {
    let dir = tempfile::tempdir().unwrap();
    let csv = dir.path().join("x.csv");
    let (code, stdout, _) = run(&[
        "export",
        "tests/networks/big_small.json",
        "--rail",
        "R1",
        "--points",
        "7",
        "--csv",
        csv.to_str().unwrap(),
    ]);
    assert_eq!((code, stdout.as_str()), (0, ""), "files only, nothing on stdout");
    let text = std::fs::read_to_string(&csv).unwrap();
    let f: Vec<f64> = text.lines().skip(1).map(|l| l.split(',').next().unwrap().parse().unwrap()).collect();
    assert_eq!(f, log_grid(1e4, 5e8, 7));
}

#[test]
fn export_refuses_bad_input_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let s1p = dir.path().join("x.s1p");
    let s1p = s1p.to_str().unwrap();
    let board = "sample_boards/edge_camera.json";
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["export", board, "--rail", "NOPE", "--touchstone", s1p], "no rail named \"NOPE\" (rails: VCORE"),
        (vec!["export", board, "--rail", "VCORE"], "--touchstone"),
        (vec!["export", board, "--rail", "VCORE", "--touchstone", "x.s2p"], "must end in .s1p"),
        (vec!["export", board, "--rail", "VCORE", "--points", "1", "--touchstone", s1p], "--points must be at least 2"),
        (vec!["export", board, "--rail", "VCORE", "--from", "1G", "--to", "1k", "--touchstone", s1p], "must be above"),
        (vec!["export", board, "--rail", "VCORE", "--from", "fast", "--touchstone", s1p], "--from"),
        (
            vec!["export", "tests/bad_boards/negative_esr.json", "--rail", "R1", "--touchstone", s1p],
            "negative_esr.json",
        ),
    ];
    for (args, words) in cases {
        let (code, _, stderr) = run(&args);
        assert_eq!(code, 2, "{args:?}: {stderr}");
        assert!(stderr.contains(words), "{args:?}: \"{words}\" not in {stderr}");
    }
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0, "nothing written");
    assert!(!root().join("x.s2p").exists());
}

#[test]
fn bom_counts_every_part_per_rail() {
    for (stem, path, board) in reference_boards() {
        let (code, stdout, stderr) = run(&["bom", path.to_str().unwrap(), "--csv"]);
        assert_eq!(code, 0, "{stem}: {stderr}");
        let mut lines = stdout.lines();
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let rails = board.rails.len();
        assert_eq!(header.len(), 9 + rails, "{stem}: {header:?}");
        let mut fitted = 0;
        for line in lines {
            let cells: Vec<&str> = line.split(',').collect();
            let id = cells[0];
            for (r, rail) in board.rails.iter().enumerate() {
                let want: u64 = rail.decaps.iter().filter(|g| g.part == id).map(|g| u64::from(g.count)).sum();
                assert_eq!(cells[6 + r].parse::<u64>().unwrap(), want, "{stem}: {id} on {}", rail.name);
            }
            let total: u64 = cells[6..6 + rails].iter().map(|c| c.parse::<u64>().unwrap()).sum();
            assert_eq!(cells[6 + rails].parse::<u64>().unwrap(), total);
            let part = board.part(id).unwrap();
            assert_eq!(cells[7 + rails].parse::<f64>().ok(), part.unit_cost, "{stem}: unit cost of {id}");
            assert_eq!(cells[8 + rails].parse::<f64>().ok(), part.unit_cost.map(|c| c * total as f64));
            fitted += 1;
        }
        assert_eq!(fitted, bill_of_materials(&board).lines.len());
        assert!(fitted > 0);
    }
}

#[test]
fn bom_text_says_when_no_cost_is_given() {
    let (code, stdout, _) = run(&["bom", "tests/networks/big_small.json"]);
    assert_eq!(code, 0);
    assert!(stdout.contains("no cost given"), "{stdout}");
    assert!(stdout.contains("total cost: no cost given for any part"), "{stdout}");
    assert!(!stdout.contains(" 0.00"), "a missing cost is not zero: {stdout}");

    let (_, stdout, _) = run(&["bom", "sample_boards/edge_camera.json"]);
    let board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let bom = bill_of_materials(&board);
    let total: u64 = bom.lines.iter().map(|l| l.total).sum();
    assert!(stdout.contains(&format!("{total} parts of {} kinds", bom.lines.len())), "{stdout}");
    for l in &bom.lines {
        assert!(stdout.contains(&l.part.id));
    }
    assert!(!bom.unused.is_empty(), "the sample lists a part it does not fit");
    let unused_line = stdout.lines().find(|l| l.starts_with("Listed but not fitted: ")).unwrap();
    for id in &bom.unused {
        assert!(unused_line.contains(id.as_str()), "{unused_line}");
    }
}

#[test]
fn export_follows_the_view_and_the_corner() {
    use hushrail::analysis::{View, sweep_in};
    use hushrail::physics::Corner;
    let dir = tempfile::tempdir().unwrap();
    let path = root().join("tests/networks/package_die.json");
    let board = read_board(&path).unwrap();
    let rail = &board.rails[0];
    let grid = log_grid(1e3, 1e9, 41);
    for (view, corner, v, c) in [
        ("board", "nominal", View::Board, Corner::Nominal),
        ("die", "nominal", View::Die, Corner::Nominal),
        ("die", "worst", View::Die, Corner::Worst),
    ] {
        let csv = dir.path().join(format!("{view}_{corner}.csv"));
        let (code, _, stderr) = run(&[
            "export",
            path.to_str().unwrap(),
            "--rail",
            &rail.name,
            "--points",
            "41",
            "--from",
            "1k",
            "--to",
            "1G",
            "--view",
            view,
            "--corner",
            corner,
            "--csv",
            csv.to_str().unwrap(),
        ]);
        assert_eq!(code, 0, "{stderr}");
        let z = sweep_in(&board, rail, &grid, v, c);
        let text = std::fs::read_to_string(&csv).unwrap();
        for (line, z) in text.lines().skip(1).zip(&z) {
            let cells: Vec<f64> = line.split(',').map(|x| x.parse().unwrap()).collect();
            assert_eq!((cells[1], cells[2]), (z.re, z.im), "{view}/{corner}");
        }
    }
    // A rail without a package has no die view.
    let s1p = dir.path().join("x.s1p");
    let (code, _, stderr) = run(&[
        "export",
        "tests/networks/big_small.json",
        "--rail",
        "R1",
        "--view",
        "die",
        "--touchstone",
        s1p.to_str().unwrap(),
    ]);
    assert_eq!(code, 2);
    assert!(stderr.contains("no die view"), "{stderr}");
    assert!(!s1p.exists());
}
