//! The command-line contract: output shapes, exit codes (0 pass, 1 miss, 2 bad input) and error messages.

use crate::common::*;
use hushrail::analysis::{AnalysisOptions, analyze_rail};
use hushrail::io::read_board;

fn run(args: &[&str]) -> (i32, String, String) {
    let out = hushrail().args(args).current_dir(root()).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn check_json_has_the_contract_fields_and_agrees_with_the_library() {
    for (stem, path, board) in reference_boards() {
        let (code, stdout, stderr) = run(&["check", path.to_str().unwrap(), "--json"]);
        let v: serde_json::Value = serde_json::from_str(&stdout).unwrap_or_else(|e| panic!("{stem}: {e}\n{stderr}"));
        let rails = v["rails"].as_array().unwrap();
        assert_eq!(rails.len(), board.rails.len());
        let mut all_meet = true;
        for (i, r) in rails.iter().enumerate() {
            let a = analyze_rail(&board, i, &AnalysisOptions::default()).unwrap();
            assert_eq!(r["name"], a.rail.as_str());
            assert_eq!(r["target_ohm"].as_f64().unwrap(), a.target_ohm, "full precision");
            assert_eq!(r["worst_ohm"].as_f64().unwrap(), a.worst_ohm);
            assert_eq!(r["worst_hz"].as_f64().unwrap(), a.worst_hz);
            assert_eq!(r["meets_target"].as_bool().unwrap(), a.meets_target);
            for v in r["violations"].as_array().unwrap() {
                for k in ["from_hz", "to_hz", "peak_hz", "peak_ohm"] {
                    assert!(v[k].is_f64(), "{k}");
                }
            }
            for ar in r["antiresonances"].as_array().unwrap() {
                assert!(ar["freq_hz"].is_f64() && ar["z_ohm"].is_f64() && ar["above_target"].is_boolean());
            }
            let failing = r["cautions"].as_array().unwrap().iter().any(|c| c["fails"] == true);
            assert_eq!(r["passes"].as_bool().unwrap(), a.meets_target && !failing, "{stem}: passes");
            all_meet &= r["passes"].as_bool().unwrap();
        }
        assert_eq!(code, if all_meet { 0 } else { 1 }, "{stem}: exit code");
    }
}

#[test]
fn sample_boards_show_both_verdicts() {
    // The demo boards must show the tool's point: a rail that meets target and one that misses at an
    // anti-resonance.
    let mut meets = 0;
    let mut misses_at_peak = 0;
    for (_, path, board) in
        reference_boards().into_iter().filter(|(_, p, _)| p.starts_with(root().join("sample_boards")))
    {
        assert!(board.rails.len() >= 2, "{}", show(&path));
        for i in 0..board.rails.len() {
            let a = analyze_rail(&board, i, &AnalysisOptions::default()).unwrap();
            if a.meets_target {
                meets += 1;
            } else if a.antiresonances.iter().any(|r| r.above_target) {
                misses_at_peak += 1;
            }
        }
    }
    assert!(meets >= 1 && misses_at_peak >= 1, "meets {meets}, misses at a peak {misses_at_peak}");
}

#[test]
fn check_text_names_every_rail_and_verdict() {
    let (code, stdout, _) = run(&["check", "sample_boards/edge_camera.json"]);
    let board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    for rail in &board.rails {
        assert!(stdout.contains(&format!("{}:", rail.name)), "{stdout}");
    }
    assert!(stdout.contains("MEETS target") || stdout.contains("MISSES target"));
    assert!(stdout.contains("rails pass."));
    assert!(code == 0 || code == 1);
}

#[test]
fn sweep_csv_has_header_points_and_both_ends() {
    let (code, stdout, stderr) = run(&[
        "sweep",
        "tests/networks/big_small.json",
        "--rail",
        "R1",
        "--from",
        "1k",
        "--to",
        "1G",
        "--points",
        "61",
    ]);
    assert_eq!(code, 0, "{stderr}");
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(lines[0], "freq_hz,z_mag_ohm,z_phase_deg,target_ohm");
    assert_eq!(lines.len(), 62);
    let first: Vec<f64> = lines[1].split(',').map(|x| x.parse().unwrap()).collect();
    let last: Vec<f64> = lines[61].split(',').map(|x| x.parse().unwrap()).collect();
    assert_eq!(first[0], 1e3);
    assert_eq!(last[0], 1e9);
    assert_eq!(first[3], 0.01, "target 1 V × 2 % / 2 A");
    for l in &lines[1..] {
        let cols: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
        assert!(cols[2] > -180.0 && cols[2] <= 180.0);
    }
}

#[test]
fn sweep_defaults_to_the_band_and_1000_points() {
    let (code, stdout, _) = run(&["sweep", "sample_boards/edge_camera.json", "--rail", "VCORE"]);
    assert_eq!(code, 0);
    let board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let band = board.rail("VCORE").unwrap().band_hz.unwrap();
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(lines.len(), 1001);
    assert_eq!(lines[1].split(',').next().unwrap().parse::<f64>().unwrap(), band[0]);
    assert_eq!(lines[1000].split(',').next().unwrap().parse::<f64>().unwrap(), band[1]);
}

#[test]
fn bad_arguments_exit_2_with_a_reason() {
    let cases: &[(&[&str], &str)] = &[
        (&["sweep", "sample_boards/edge_camera.json", "--rail", "NOPE"], "no rail named \"NOPE\""),
        (&["sweep", "sample_boards/edge_camera.json", "--rail", "VCORE", "--from", "abc"], "--from"),
        (&["sweep", "sample_boards/edge_camera.json", "--rail", "VCORE", "--from", "1G", "--to", "1k"], "--to"),
        (&["sweep", "sample_boards/edge_camera.json", "--rail", "VCORE", "--points", "1"], "--points"),
        (&["check", "no/such/board.json"], "no/such/board.json"),
        (&["check", "--frobnicate"], "--frobnicate"),
    ];
    for (args, needle) in cases {
        let (code, stdout, stderr) = run(args);
        assert_eq!(code, 2, "{args:?}: {stdout}{stderr}");
        assert!(stderr.contains(needle), "{args:?}: {stderr}");
    }
}

#[test]
fn every_subcommand_has_help() {
    for sub in ["check", "sweep", "netlist", "droop", "mounting", "coupling"] {
        let (code, stdout, _) = run(&[sub, "--help"]);
        assert_eq!(code, 0);
        assert!(stdout.contains("Usage"), "{sub}: {stdout}");
    }
}

/// The corpus of broken boards: each is refused with exit 2, and the message names the file and the place.
#[test]
fn malformed_boards_exit_2_and_name_the_place() {
    let dir = root().join("tests/bad_boards");
    let manifest = std::fs::read_to_string(dir.join("EXPECTED.tsv")).unwrap();
    let mut n = 0;
    for line in manifest.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty()) {
        let (file, place) = line.split_once('\t').unwrap();
        let path = format!("tests/bad_boards/{file}");
        let (code, stdout, stderr) = run(&["check", &path]);
        assert_eq!(code, 2, "{file}: {stdout}{stderr}");
        assert!(stderr.contains(&path), "{file}: message must name the file: {stderr}");
        assert!(stderr.contains(place), "{file}: message must name {place}: {stderr}");
        assert!(!stderr.contains("panicked"), "{file}: {stderr}");
        n += 1;
    }
    assert!(n >= 25, "the corpus holds {n} files");
    let on_disk = std::fs::read_dir(&dir)
        .unwrap()
        .filter(|e| e.as_ref().unwrap().path().extension().is_some_and(|x| x == "json"))
        .count();
    assert_eq!(on_disk, n, "every corpus file is listed in EXPECTED.tsv");
}

/// All problems are reported at once, each on its own line.
#[test]
fn every_problem_is_reported_at_once() {
    let text = r#"{"format":"hushrail-board","version":1,"name":"x",
      "parts":[{"id":"a","kind":"ceramic","capacitance_f":-1,"esr_ohm":-1,"esl_h":0,"colour":"red"}],
      "rails":[{"name":"R","voltage_v":0,"ripple_pct":100,"band_hz":[5,1],"loads":[],
                "decaps":[{"part":"b","count":1.5,"mounting_h":0}]}]}"#;
    let e = hushrail::io::parse_board(text, "many.json").unwrap_err();
    let joined = e.to_string();
    for place in [
        "parts[0].colour",
        "parts[0].capacitance_f",
        "parts[0].esr_ohm",
        "rails[0].voltage_v",
        "rails[0].ripple_pct",
        "rails[0].band_hz",
        "rails[0].loads",
        "rails[0].decaps[0].part",
        "rails[0].decaps[0].count",
    ] {
        assert!(joined.contains(&format!("many.json:{place}: ")), "{place} missing from:\n{joined}");
    }
}

#[test]
fn save_is_atomic_and_stable() {
    let board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("b.json");
    std::fs::write(&path, "old contents").unwrap();
    hushrail::io::write_board(&path, &board).unwrap();
    let first = std::fs::read_to_string(&path).unwrap();
    let again = read_board(&path).unwrap();
    assert_eq!(again, board);
    hushrail::io::write_board(&path, &again).unwrap();
    assert_eq!(std::fs::read_to_string(&path).unwrap(), first, "same board, same bytes");
    let leftovers: Vec<_> = std::fs::read_dir(dir.path()).unwrap().map(|e| e.unwrap().file_name()).collect();
    assert_eq!(leftovers.len(), 1, "no temporary file left behind: {leftovers:?}");
    // Writing into a folder that does not exist fails cleanly and names the file.
    let bad = dir.path().join("missing/b.json");
    let e = hushrail::io::write_board(&bad, &board).unwrap_err();
    assert!(e.to_string().contains("missing/b.json"));
}

/// With a package the verdict is taken at the die and the board view is reported beside it; both corners are in
/// the JSON, and `--corner worst` moves the verdict to the worst corner.
#[test]
fn check_reports_both_views_and_both_corners() {
    let (_, stdout, _) = run(&["check", "sample_boards/sensor_hub.json", "--json"]);
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let core = &v["rails"][0];
    assert_eq!(core["view"], "die");
    let views: Vec<&str> = core["views"].as_array().unwrap().iter().map(|x| x["view"].as_str().unwrap()).collect();
    assert_eq!(views, ["die", "board"]);
    let corners: Vec<&str> =
        core["corners"].as_array().unwrap().iter().map(|x| x["corner"].as_str().unwrap()).collect();
    assert_eq!(corners, ["typical", "as-given", "worst"]);
    let (code, stdout, _) = run(&["check", "sample_boards/motor_drive.json", "--json", "--corner", "worst"]);
    let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    assert_eq!(v["rails"][0]["corner"], "worst");
    let meets = v["meets_target"].as_bool().unwrap();
    assert_eq!(code, if meets { 0 } else { 1 });
    let (as_given_code, _, _) = run(&["check", "sample_boards/motor_drive.json", "--corner", "as-given"]);
    assert_eq!(as_given_code, 0, "the motor-drive board meets target with its values as given");
    let (typical_code, _, _) = run(&["check", "sample_boards/motor_drive.json"]);
    assert_eq!(typical_code, 1, "but not at its rails' DC bias: the gate rail's 25 V ceramics at 15 V lose 41 %");
    assert_eq!(code, 1, "and misses in the worst corner");
}

/// `check` warns, in text and JSON alike, when a rail's band stops short of its loads' edge content (0.35 / the
/// fastest 10-90 % rise time, common practice), and only then; the droop filters the load's current exactly there.
#[test]
fn check_warns_when_the_band_misses_the_loads_edges() {
    let mut short = 0;
    for (stem, path, board) in reference_boards() {
        let (_, stdout, _) = run(&["check", path.to_str().unwrap(), "--json"]);
        let v: serde_json::Value = serde_json::from_str(&stdout).unwrap();
        let (_, text, _) = run(&["check", path.to_str().unwrap()]);
        for (i, rail) in board.rails.iter().enumerate() {
            let r = &v["rails"][i];
            let fastest = rail.loads.iter().filter_map(|l| l.rise_time_s).reduce(f64::min);
            let top = rail.band().unwrap().hz[1];
            let covered = fastest.is_none_or(|t| 0.35 / t <= top * (1.0 + 1e-9));
            assert_eq!(r["band_covers_load_edges"].as_bool(), Some(covered), "{stem}/{}", rail.name);
            if let Some(t) = fastest {
                assert_eq!(r["load_edge_hz"].as_f64(), Some(0.35 / t), "{stem}/{}", rail.name);
            }
            let says = |f: &serde_json::Value| f["text"].as_str().unwrap().contains("short of the loads' edges");
            let in_json = r["findings"].as_array().unwrap().iter().filter(|f| says(f)).count();
            assert_eq!(in_json, usize::from(!covered), "{stem}/{}", rail.name);
            if !covered {
                short += 1;
                let finding = r["findings"].as_array().unwrap().iter().find(|f| says(f)).unwrap();
                assert!(text.contains(finding["text"].as_str().unwrap()), "{stem}/{}: the same words", rail.name);
                if rail.source.is_some() {
                    let d = hushrail::analysis::droop(&board, i, &Default::default()).unwrap();
                    assert!(d.filter.is_some(), "{stem}/{}: the droop filters where the check warns", rail.name);
                }
            }
        }
    }
    assert!(short >= 2, "some sample rail has a band short of its edges ({short})");
}

#[test]
fn e_series_names_in_any_case_and_negatives_explained_in_help() {
    for series in ["E12", "e12", "E96"] {
        let (code, stdout, stderr) = run(&["coupling", "--impedance", "100", "--lowest", "20", "--series", series]);
        assert_eq!(code, 0, "{series}: {stderr}");
        assert!(!stdout.is_empty());
    }
    for args in [&["--help"][..], &["sweep", "--help"][..], &["mounting", "--help"][..]] {
        let (code, stdout, _) = run(args);
        assert_eq!(code, 0);
        assert!(stdout.contains("--from=-5n") && stdout.contains("20mil"), "{args:?}: {stdout}");
    }
}

#[test]
fn mounting_lengths_take_mm_and_mil() {
    // The same geometry written three ways gives the same answer (1 mil = 25.4 µm exactly).
    let a = run(&["mounting", "--trace-width", "0.3mm", "--via-drill", "10mil", "--json"]);
    let b = run(&["mounting", "--trace-width", "300um", "--via-drill", "254u", "--json"]);
    let c = run(&["mounting", "--trace-width", "0.3m", "--via-drill", "0.254 mm", "--json"]);
    assert_eq!(a.0, 0, "{}", a.2);
    assert_eq!(a.1, b.1);
    assert_eq!(a.1, c.1);
}

/// A placed rail has no one-node netlist: AC and --droop are refused with the reason and the way to write it
/// (its plane meshed), exit 2; --mesh writes it, with --droop as a transient of every load's share of the step
/// (--at, which picks one load's AC drive, is refused with it; a cell of zero is refused, naming the file).
#[test]
fn a_placed_rails_netlist_is_its_meshed_plane_never_one_node() {
    for extra in [&[][..], &["--droop"][..]] {
        let mut args = vec!["netlist", "sample_boards/edge_camera.json", "--rail", "VCORE_PLACED"];
        args.extend_from_slice(extra);
        let (code, stdout, stderr) = run(&args);
        assert_eq!(code, 2, "{args:?}: {stderr}");
        assert!(stdout.is_empty());
        assert!(stderr.contains("edge_camera.json") && stderr.contains("--mesh"), "{stderr}");
    }
    let (code, stdout, _) =
        run(&["netlist", "sample_boards/edge_camera.json", "--rail", "VCORE_PLACED", "--mesh", "4mm"]);
    assert_eq!(code, 0);
    assert!(stdout.contains("VCORE_PLACED"));
    let tran = ["netlist", "sample_boards/edge_camera.json", "--rail", "VCORE_PLACED", "--droop", "--mesh"];
    let (code, stdout, stderr) = run(&[&tran[..], &["4mm"]].concat());
    assert_eq!(code, 0, "{stderr}");
    // Every load drawing its share (through the band filter, which this rail's droop applies).
    assert!(
        stdout.contains(".tran ") && stdout.contains("PWL(") && stdout.contains("wrdata hushrail_out.txt v(load0)")
    );
    assert!(stdout.contains("Gload0 load0 0 lf2 0 ") && stdout.contains("Gload1 load1 0 lf2 0 "), "{stdout}");
    for bad in [&["4mm", "--at", "U1"][..], &["0m"][..]] {
        let (code, stdout, stderr) = run(&[&tran[..], bad].concat());
        assert_eq!(code, 2, "{bad:?}: {stderr}");
        assert!(stdout.is_empty() && !stderr.is_empty(), "{bad:?}");
    }
    let (_, _, stderr) = run(&[&tran[..], &["0m"]].concat());
    assert!(stderr.contains("edge_camera.json") && stderr.contains("cell"), "{stderr}");
}
