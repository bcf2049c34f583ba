//! The review report: valid HTML by a general-purpose HTML parser (the `scraper` crate, built on html5ever, which
//! follows the WHATWG HTML parsing rules and reports every parse error), one self-contained file (no scripts,
//! nothing fetched), every rail with its plot, verdict and findings (the words of `analysis::explain`), the droop,
//! the bill of materials, the cautions, the version and the date.

use crate::common::*;
use hushrail::analysis::{CheckOptions, DroopOptions, check_rail, droop, summary};
use hushrail::io::{ReportContext, bill_of_materials, read_board, report_html};
use hushrail::model::Board;
use scraper::{ElementRef, Html, Selector};

fn sel(s: &str) -> Selector {
    Selector::parse(s).unwrap()
}

fn text_of(e: ElementRef) -> String {
    e.text().collect::<String>()
}

fn context() -> ReportContext {
    ReportContext {
        source: "a board file".into(),
        sha256: "5".repeat(64),
        command: "hushrail check 'a board file'".into(),
        date: "2031-07-04".into(),
        unsaved_edits: false,
    }
}

/// Parse and check what every report must be: valid, self-contained, one section with one plot per rail.
fn check_report(what: &str, board: &Board, html: &str) -> Html {
    let doc = Html::parse_document(html);
    assert!(doc.errors.is_empty(), "{what}: HTML parse errors: {:?}", doc.errors);
    assert!(html.starts_with("<!DOCTYPE html>"), "{what}: a standards-mode document");
    // Self-contained: no scripts, no embedded or linked resources, no URL in any attribute or style.
    for tag in ["script", "link", "img", "iframe", "object", "embed", "base", "image", "use"] {
        assert_eq!(doc.select(&sel(tag)).count(), 0, "{what}: <{tag}> in the report");
    }
    for e in doc.select(&sel("*")) {
        for (name, value) in e.value().attrs() {
            if name == "xmlns" {
                continue; // a namespace name, never fetched
            }
            assert!(!value.contains("://") && !value.starts_with("//"), "{what}: {name}=\"{value}\"");
            assert!(!name.starts_with("on"), "{what}: event handler {name}");
            assert!(!["src", "href", "srcset", "action"].contains(&name), "{what}: {name} attribute");
        }
    }
    for style in doc.select(&sel("style")) {
        let css = text_of(style);
        assert!(!css.contains("url(") && !css.contains("@import"), "{what}: CSS fetches something");
    }
    // Every row of a table with a header row has as many cells as the header.
    for table in doc.select(&sel("table")) {
        let rows: Vec<usize> = table.select(&sel("tr")).map(|tr| tr.select(&sel("th, td")).count()).collect();
        let header = table.select(&sel("tr")).next().map(|tr| tr.select(&sel("td")).count() == 0);
        if header == Some(true) && rows.len() > 1 {
            assert!(rows.iter().all(|&n| n == rows[0]), "{what}: ragged table {rows:?}");
        }
    }
    let sections: Vec<ElementRef> = doc.select(&sel("section.rail")).collect();
    assert_eq!(sections.len(), board.rails.len(), "{what}: one section per rail");
    for (i, (section, rail)) in sections.iter().zip(&board.rails).enumerate() {
        let heading = text_of(section.select(&sel("h2")).next().unwrap());
        assert_eq!(heading, format!("Rail {}", rail.name), "{what}");
        let svgs: Vec<ElementRef> = section.select(&sel("svg")).collect();
        assert_eq!(svgs.len(), 1, "{what}/{}: one plot", rail.name);
        let points = svgs[0]
            .select(&sel("polyline"))
            .map(|p| p.value().attr("points").unwrap_or("").split_whitespace().count())
            .max()
            .unwrap_or(0);
        assert!(points >= 100, "{what}/{}: the |Z| curve is drawn ({points} points)", rail.name);
        // The verdict and everything beside it is the engine's check, as `hushrail check` gives it.
        let c = check_rail(board, i, &CheckOptions::default()).unwrap();
        let verdict = text_of(section.select(&sel("p.verdict")).next().unwrap());
        assert_eq!(verdict, format!("{}.", c.verdict_line()), "{what}/{}", rail.name);
        let body = text_of(*section);
        // Beside the verdict: the board view when the verdict is at the die, and the other corners.
        let others: Vec<String> = section.select(&sel("p.other")).map(text_of).collect();
        let want: Vec<String> = c.other_view.iter().chain(&c.corners).map(|o| format!("{}.", summary(o))).collect();
        assert_eq!(others, want, "{what}/{}", rail.name);
        assert!(others.iter().any(|t| t.contains("worst corner")), "{what}/{}: {others:?}", rail.name);
        for f in &c.findings {
            assert!(body.contains(&f.text), "{what}/{}: finding missing: {}", rail.name, f.text);
            assert!(body.contains(&f.hint), "{what}/{}: hint missing: {}", rail.name, f.hint);
        }
        // Each hint is its own line as the window shows it, the engine's words with nothing put before them.
        let hints: Vec<String> = section.select(&sel("li span.hint")).map(text_of).collect();
        let want: Vec<String> = c.findings.iter().map(|f| f.hint.clone()).collect();
        assert_eq!(hints, want, "{what}/{}", rail.name);
        assert!(!body.contains("Try:"), "{what}/{}: no \"Try:\" before a hint", rail.name);
    }
    let all = text_of(doc.root_element());
    for c in hushrail::notes::all() {
        assert!(all.contains(c), "{what}: caution missing: {c}");
    }
    assert!(all.contains("SHA-256: ") && all.contains("re-run: hushrail check"), "{what}: trace");
    assert!(all.contains(&format!("hushrail {}", env!("CARGO_PKG_VERSION"))), "{what}: version");
    doc
}

#[test]
fn the_parser_reports_invalid_html() {
    // The validity check below is only worth something if the parser does report errors.
    assert!(!Html::parse_document("<!DOCTYPE html><p>a</div><table><b>x</table>").errors.is_empty());
    assert!(!Html::parse_document("<p>no doctype</p>").errors.is_empty());
}

#[test]
fn every_board_gives_a_valid_self_contained_report() {
    for (stem, _, board) in reference_boards() {
        let html = report_html(&board, &context(), None);
        let doc = check_report(&stem, &board, &html);
        let all = text_of(doc.root_element());
        assert!(all.contains("2031-07-04"), "{stem}: the date");
        assert!(all.contains(&format!("SHA-256: {}", "5".repeat(64))), "{stem}: the hash of what was judged");
        assert!(all.contains("re-run: hushrail check 'a board file'"), "{stem}: the command that re-runs it");
        assert!(!all.contains("Droop after a load step"), "{stem}: no droop section unless asked for");
        // The bill of materials shows each fitted part with its total count.
        let bom = bill_of_materials(&board);
        let rows: Vec<Vec<String>> =
            doc.select(&sel("#bom tr")).skip(1).map(|tr| tr.select(&sel("td")).map(text_of).collect()).collect();
        assert_eq!(rows.len(), bom.lines.len(), "{stem}: BOM rows");
        for (row, line) in rows.iter().zip(&bom.lines) {
            assert_eq!(row[0], line.part.id);
            assert_eq!(row[2 + board.rails.len()], line.total.to_string(), "{stem}: total of {}", line.part.id);
        }
    }
}

#[test]
fn droop_figures_or_the_reason_there_are_none() {
    for (stem, _, board) in reference_boards() {
        let droops: Vec<_> = (0..board.rails.len()).map(|i| droop(&board, i, &DroopOptions::default())).collect();
        let html = report_html(&board, &context(), Some(&droops));
        let doc = check_report(&stem, &board, &html);
        for (section, d) in doc.select(&sel("section.rail")).zip(&droops) {
            let body = text_of(section);
            assert!(body.contains("Droop after a load step"), "{stem}");
            match d {
                Ok(d) => {
                    let v = hushrail::units::format(d.droop_v, hushrail::units::Unit::Volt);
                    assert!(body.contains(&v), "{stem}: droop {v} missing");
                }
                Err(e) => assert!(body.contains(&e.to_string()), "{stem}: the reason {e}"),
            }
        }
    }
}

#[test]
fn text_from_the_board_is_escaped() {
    let mut board = read_board(&root().join("tests/networks/big_small.json")).unwrap();
    board.name = "<script>alert(1)</script> & co".into();
    board.rails[0].name = "R<1>\"'".into();
    board.parts[0].case = Some("</td><img src=x>".into());
    let html = report_html(&board, &context(), None);
    let doc = check_report("escaped", &board, &html);
    let all = text_of(doc.root_element());
    assert!(all.contains("<script>alert(1)</script> & co"), "the name reads as text");
    assert!(all.contains("</td><img src=x>"));
}

#[test]
fn cli_writes_the_report_and_refuses_bad_input_without_writing() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("review.html");
    let run = hushrail()
        .args(["report", "sample_boards/edge_camera.json", "-o", out.to_str().unwrap()])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(0), "{}", String::from_utf8_lossy(&run.stderr));
    let html = std::fs::read_to_string(&out).unwrap();
    let board = read_board(&root().join("sample_boards/edge_camera.json")).unwrap();
    let doc = check_report("cli", &board, &html);
    let meta = text_of(doc.select(&sel("#trace")).next().unwrap());
    // "hushrail X on YYYY-MM-DD (UTC)", and the hash of the bytes the command read.
    let date = meta.split(" on ").nth(1).unwrap().split(' ').next().unwrap();
    let bytes = std::fs::read(root().join("sample_boards/edge_camera.json")).unwrap();
    assert!(meta.contains(&hushrail::io::sha256_hex(&bytes)), "{meta}");
    let parts: Vec<&str> = date.split('-').collect();
    assert!(parts.len() == 3 && parts[0].len() == 4 && parts[1].len() == 2 && parts[2].len() == 2, "{meta}");
    assert!(parts[0].parse::<i32>().unwrap() >= 2025, "{meta}");
    // The CLI's report gives every rail's droop.
    let droops = doc.select(&sel("section.rail h3")).filter(|h| text_of(*h).starts_with("Droop")).count();
    assert_eq!(droops, board.rails.len());

    // A broken board: exit 2, the file named, nothing written.
    let bad = dir.path().join("bad.html");
    let run = hushrail()
        .args(["report", "tests/bad_boards/negative_esr.json", "-o", bad.to_str().unwrap()])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&run.stderr).contains("negative_esr.json"));
    assert!(!bad.exists());
    // A folder that does not exist: exit 2 with the path.
    let nowhere = dir.path().join("no/such/folder/r.html");
    let run = hushrail()
        .args(["report", "sample_boards/edge_camera.json", "-o", nowhere.to_str().unwrap()])
        .current_dir(root())
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&run.stderr).contains("cannot write"));
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1, "only the good report is left");
}

/// A placed rail's report gives each load's verdict line, the same words `check` prints.
#[test]
fn a_placed_rails_report_gives_each_loads_verdict() {
    let board = read_board(&root().join("tests/networks/placed/two_loads.json")).unwrap();
    let html = report_html(&board, &context(), None);
    let doc = check_report("two_loads", &board, &html);
    let items: Vec<String> = doc.select(&sel("ul.loads li")).map(text_of).collect();
    let c = hushrail::analysis::check_rail(&board, 0, &Default::default()).unwrap();
    assert_eq!(c.loads.len(), 2);
    let expected: Vec<String> =
        c.loads.iter().map(|l| hushrail::analysis::load_line(l, c.verdict.target_ohm)).collect();
    assert_eq!(items, expected);
}
