//! The review report: one self-contained HTML file (inline CSS and SVG, no scripts, nothing fetched) with the
//! board's inputs, each rail's |Z| against target, verdict, margin and findings, the droop when given, the bill
//! of materials, the cautions, the tool's version and the date. Building it is a pure function, so the window
//! can offer the same report; writing it is atomic.

use super::Trace;
use super::bom::{bill_of_materials, cost_words, part_words, total_cost_words};
use super::svg_plot::{PLOT_POINTS, impedance_svg, plot_range_hz};
use crate::analysis::{
    CheckOptions, Droop, DroopError, RailAnalysis, RailCheck, Severity, check_rail, kept_words, search_words,
    sensitivity_words, summary, vertex_words, yield_words,
};
use crate::model::{Board, Combine, Rail};
use crate::physics::Corner;
use crate::units::{Unit, format};
use std::fmt::Write;
use std::path::Path;

/// What the report says about where it comes from: the board's hash, path, the tool's version, the re-run
/// command, the date, and whether the board has unsaved edits.
pub type ReportContext = Trace;

/// The droop figures of each rail, in the board's rail order (an error for a rail where droop cannot be
/// computed, such as one without a source). `None` leaves the droop out of the report.
pub type DroopSection<'a> = Option<&'a [Result<Droop, DroopError>]>;

/// Escape text for HTML element content and attribute values.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

const STYLE: &str = "body{font-family:sans-serif;max-width:62em;margin:1.5em auto;padding:0 1em;color:#222;\
line-height:1.4}table{border-collapse:collapse;margin:.5em 0 1em}th,td{border:1px solid #bbb;padding:.2em .5em;\
text-align:left;vertical-align:top}td.n{text-align:right}.hint{color:#444}.pass{color:#155724;background:#e6f4ea}.fail{color:#7a1010;\
background:#fbe9e9}p.verdict{padding:.4em .6em;font-weight:bold}li{margin-bottom:.5em}.meta{color:#555}\
figure{margin:.5em 0}figcaption{color:#555;font-size:.9em}section.rail{border-top:2px solid #ccc;margin-top:2em}\
div.unsaved{border:3px solid #a00;background:#fbe9e9;color:#7a1010;font-weight:bold;padding:.6em;margin:1em 0}\
table.signoff td{min-width:18em;height:2em}";

/// The whole report as one HTML document. Every rail's check is `analysis::check_rail`'s, as `hushrail check`
/// gives it; this only renders it.
pub fn report_html(board: &Board, context: &ReportContext, droop: DroopSection) -> String {
    let mut h = String::with_capacity(64 * 1024);
    let name = escape(&board.name);
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>Decoupling review: {name}</title>\n\
         <style>{STYLE}</style>\n</head>\n<body>\n<h1>Decoupling review: {name}</h1>\n"
    );
    trace_section(&mut h, context);
    if let Some(d) = &board.description {
        let _ = writeln!(h, "<p>{}</p>", escape(d));
    }

    let checks: Vec<Option<RailCheck>> = (0..board.rails.len())
        .map(|i| {
            let (from, to) = plot_range_hz(board.rails[i].band_hz_or_default());
            check_rail(board, i, &CheckOptions { curve: Some((from, to, PLOT_POINTS)), ..CheckOptions::default() })
        })
        .collect();

    // Summary: one line per rail.
    h.push_str(
        "<section id=\"summary\">\n<h2>Summary</h2>\n<table>\n<tr><th>rail</th><th>target</th>\
                <th>worst |Z|</th><th>at</th><th>margin</th><th>verdict</th><th>seen from</th><th>corner</th></tr>\n",
    );
    for c in checks.iter().flatten() {
        let a = &c.verdict;
        let class = if c.passes { "pass" } else { "fail" };
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td>\
             <td class=\"n\">{:+.1} dB</td><td class=\"{class}\">{}</td><td>the {}</td><td>{}</td></tr>",
            escape(&a.rail),
            format(a.target_ohm, Unit::Ohm),
            format(a.worst_ohm, Unit::Ohm),
            format(a.worst_hz, Unit::Hertz),
            a.margin_db,
            c.word(),
            a.view.name(),
            a.corner.name()
        );
    }
    let passing = checks.iter().flatten().filter(|c| c.passes).count();
    let _ = writeln!(
        h,
        "</table>\n<p>{passing} of {} rails pass. The verdict is taken in the {} corner ({}).</p>\n</section>",
        board.rails.len(),
        Corner::Typical.name(),
        escape(Corner::Typical.words())
    );

    for (i, (rail, check)) in board.rails.iter().zip(&checks).enumerate() {
        let _ = writeln!(h, "<section class=\"rail\" id=\"rail-{i}\">\n<h2>Rail {}</h2>", escape(&rail.name));
        rail_inputs(&mut h, rail, check.as_ref().map(|c| &c.verdict));
        match check {
            Some(c) => rail_check(&mut h, rail, c),
            None => h.push_str("<p>This rail could not be analysed.</p>\n"),
        }
        if let Some(droops) = droop {
            droop_section(&mut h, droops.get(i));
        }
        h.push_str("</section>\n");
    }

    parts_section(&mut h, board);
    bom_section(&mut h, board);

    h.push_str("<section id=\"cautions\">\n<h2>Cautions</h2>\n<ul>\n");
    for c in crate::notes::all() {
        let _ = writeln!(h, "<li>{}</li>", escape(c));
    }
    let polarised: Vec<&str> = board
        .parts
        .iter()
        .filter(|p| p.kind.is_polarised() && !board.uses_of_part(&p.id).is_empty())
        .map(|p| p.id.as_str())
        .collect();
    if !polarised.is_empty() {
        let _ = writeln!(h, "<li>Polarised parts on this board: {}.</li>", escape(&polarised.join(", ")));
    }
    h.push_str("</ul>\n</section>\n");
    h.push_str(
        "<section id=\"sign-off\">\n<h2>Sign-off</h2>\n<table class=\"signoff\">\n\
         <tr><th>reviewer</th><td></td></tr>\n<tr><th>date</th><td></td></tr>\n\
         <tr><th>decision</th><td>approved / approved with changes / rejected</td></tr>\n\
         <tr><th>notes</th><td></td></tr>\n<tr><th>signature</th><td></td></tr>\n</table>\n</section>\n",
    );
    let _ = writeln!(
        h,
        "<footer class=\"meta\"><p>hushrail {} · {} (UTC) · board SHA-256 {}</p></footer>\n</body>\n</html>",
        context.version(),
        escape(&context.date),
        escape(&context.sha256)
    );
    h
}

/// What the report judged: the trace, with a prominent warning when the board has unsaved edits.
fn trace_section(h: &mut String, trace: &Trace) {
    let mut lines = trace.lines();
    if trace.unsaved_edits {
        let warning = lines.remove(0);
        let _ = writeln!(h, "<div class=\"unsaved\" id=\"unsaved\">{}</div>", escape(&warning));
    }
    h.push_str("<section id=\"trace\">\n<ul class=\"meta\">\n");
    for l in lines {
        let _ = writeln!(h, "<li>{}</li>", escape(&l));
    }
    h.push_str("</ul>\n</section>\n");
}

/// One rail's check: verdict, the other view and corners, the worst vertex, capacitance kept, sensitivity,
/// yield, plot, cautions and findings.
fn rail_check(h: &mut String, rail: &Rail, c: &RailCheck) {
    let a = &c.verdict;
    let class = if c.passes { "pass" } else { "fail" };
    let _ = writeln!(h, "<p class=\"verdict {class}\">{}.</p>", escape(&c.verdict_line()));
    // A placed rail's verdict is its worst load's: each load's own line, as `check` prints it.
    if !c.loads.is_empty() {
        h.push_str("<ul class=\"loads\">\n");
        for l in &c.loads {
            let class = if l.meets_target { "pass" } else { "fail" };
            let _ = writeln!(h, "<li class=\"{class}\">{}</li>", escape(&crate::analysis::load_line(l, a.target_ohm)));
        }
        h.push_str("</ul>\n");
    }
    for o in c.other_view.iter().chain(&c.corners) {
        let _ = writeln!(h, "<p class=\"other\">{}.</p>", escape(&summary(o)));
    }
    let mut notes: Vec<String> = Vec::new();
    if let Some(w) = c.corner(Corner::Worst) {
        let dirs = vertex_words(w);
        if !dirs.is_empty() {
            notes.push(format!("Worst vertex: {}.", dirs.join("; ")));
        }
        notes.extend(search_words(w).map(|s| format!("Worst search: {s}.")));
    }
    notes.extend(kept_words(c).into_iter().map(|k| format!("Capacitance: {k}.")));
    if !c.sensitivity.is_empty() {
        let words: Vec<String> = c.sensitivity.iter().map(sensitivity_words).collect();
        notes.push(format!("Worst |Z| per part: {}.", words.join("; ")));
    }
    notes.extend(c.yield_estimate.as_ref().map(|y| format!("Yield: {}.", yield_words(y))));
    if !notes.is_empty() {
        h.push_str("<ul class=\"figures\">\n");
        for n in notes {
            let _ = writeln!(h, "<li>{}</li>", escape(&n));
        }
        h.push_str("</ul>\n");
    }
    h.push_str("<figure>\n");
    match impedance_svg(a) {
        Ok(svg) => h.push_str(&svg),
        Err(e) => {
            let _ = write!(h, "<p>The plot could not be drawn: {}.</p>", escape(&e));
        }
    }
    let _ = writeln!(
        h,
        "\n<figcaption>|Z| of rail {} at the {}, {} corner (blue) against its target {} over {} to {} (red); \
         shaded: above target.</figcaption>\n</figure>",
        escape(&rail.name),
        a.view.name(),
        a.corner.name(),
        format(a.target_ohm, Unit::Ohm),
        format(a.band_hz[0], Unit::Hertz),
        format(a.band_hz[1], Unit::Hertz)
    );
    let reminders: Vec<_> = c.cautions.iter().filter(|k| !k.fails).collect();
    if !reminders.is_empty() {
        h.push_str("<h3>Cautions</h3>\n<ul class=\"cautions\">\n");
        for k in reminders {
            let _ = writeln!(h, "<li class=\"note\">{}</li>", escape(&k.text));
        }
        h.push_str("</ul>\n");
    }
    h.push_str("<h3>Findings</h3>\n");
    if c.findings.is_empty() {
        h.push_str("<p>No findings: no anti-resonance and no range above target inside the band.</p>\n");
    } else {
        h.push_str("<ul>\n");
        for f in &c.findings {
            let (class, word) = match f.severity {
                Severity::Fail => ("fail", "Fails"),
                Severity::Note => ("note", "Note"),
            };
            // The hint is the engine's sentence of its own (an action, or why a note matters), on its own line as the
            // window shows it: no "Try:" before it, which would not fit a note's hint.
            let _ = writeln!(
                h,
                "<li class=\"{class}\"><strong>{word}:</strong> {}<br><span class=\"hint\">{}</span></li>",
                escape(&f.text),
                escape(&f.hint)
            );
        }
        h.push_str("</ul>\n");
    }
}

/// A rail's inputs: supply, band, source, plane, package, die, loads and decap groups (with the mounting
/// inductance and self-resonance the analysis used, when there is one).
fn rail_inputs(h: &mut String, rail: &Rail, analysis: Option<&RailAnalysis>) {
    let rlc = |c: f64, r: f64, l: Option<f64>| {
        let mut t = format!("C {}, ESR {}", format(c, Unit::Farad), format(r, Unit::Ohm));
        if let Some(l) = l {
            let _ = write!(t, ", ESL {}", format(l, Unit::Henry));
        }
        t
    };
    let rl = |r: f64, l: f64| format!("R {}, L {}", format(r, Unit::Ohm), format(l, Unit::Henry));
    let none = || "none".to_string();
    let step = analysis.map_or_else(|| rail.total_step_a(), |a| a.step_a);
    let combine = if rail.combine == Combine::Rss { " (root-sum-square of the loads)" } else { "" };
    let band = rail.band_hz_or_default();
    let band_from = if rail.band_hz.is_some() { "" } else { " (not given: from the loads' rise times)" };
    let rows = [
        ("voltage", format(rail.voltage_v, Unit::Volt)),
        ("ripple", format!("{} %", rail.ripple_pct)),
        ("ΔI", format!("{}{combine}", format(step, Unit::Ampere))),
        ("target", format(crate::analysis::target_impedance(rail), Unit::Ohm)),
        ("band", format!("{} to {}{band_from}", format(band[0], Unit::Hertz), format(band[1], Unit::Hertz))),
        ("source", rail.source.as_ref().map_or_else(none, |s| rl(s.r_ohm, s.l_h))),
        ("plane", rail.plane.map_or_else(none, |p| rlc(p.capacitance_f, p.esr_ohm, Some(p.esl_h)))),
        ("package", rail.package.map_or_else(none, |p| rl(p.r_ohm, p.l_h))),
        ("die", rail.die.map_or_else(none, |d| rlc(d.capacitance_f, d.esr_ohm, None))),
    ];
    h.push_str("<table>\n");
    for (name, value) in rows {
        let _ = writeln!(h, "<tr><th>{name}</th><td>{}</td></tr>", escape(&value));
    }
    h.push_str("</table>\n<h3>Loads</h3>\n<table>\n<tr><th>load</th><th>ΔI</th><th>rise time</th></tr>\n");
    for l in &rail.loads {
        let rise = l.rise_time_s.map(|t| format(t, Unit::Second)).unwrap_or_else(|| "not given".into());
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td class=\"n\">{}</td><td class=\"n\">{rise}</td></tr>",
            escape(&l.name),
            format(l.step_a, Unit::Ampere)
        );
    }
    h.push_str("</table>\n<h3>Decap groups</h3>\n");
    if rail.decaps.is_empty() {
        h.push_str("<p>None.</p>\n");
        return;
    }
    h.push_str(
        "<table>\n<tr><th>part</th><th>count</th><th>mounting L</th><th>self-resonance (with mounting)</th></tr>\n",
    );
    for (i, g) in rail.decaps.iter().enumerate() {
        let info = analysis.and_then(|a| a.groups.iter().find(|x| x.index == i));
        let mounting = info.map_or(g.mounting_h, |x| x.mounting_h);
        let srf =
            info.and_then(|x| x.self_resonance_hz).map(|f| format(f, Unit::Hertz)).unwrap_or_else(|| "none".into());
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{srf}</td></tr>",
            escape(&g.part),
            g.count,
            format(mounting, Unit::Henry)
        );
    }
    h.push_str("</table>\n");
}

/// One rail's droop figures, or why there are none.
fn droop_section(h: &mut String, droop: Option<&Result<Droop, DroopError>>) {
    h.push_str("<h3>Droop after a load step</h3>\n");
    match droop {
        Some(Ok(d)) => {
            // The engine's own words, one row each; the verdict rows coloured by their outcome.
            h.push_str("<ul class=\"droop\">\n");
            for line in crate::analysis::droop_lines(d) {
                let class = if line == crate::analysis::droop_verdict_line(d) {
                    if d.meets { " class=\"pass\"" } else { " class=\"fail\"" }
                } else if line.starts_with("worst on/off pattern") {
                    if d.worst_case_meets { " class=\"pass\"" } else { " class=\"fail\"" }
                } else {
                    ""
                };
                let _ = writeln!(h, "<li{class}>{}</li>", escape(&line));
            }
            h.push_str("</ul>\n");
        }
        Some(Err(e)) => {
            let _ = writeln!(h, "<p>No droop figures: {}.</p>", escape(&e.to_string()));
        }
        None => h.push_str("<p>No droop figures were computed for this rail.</p>\n"),
    }
}

/// The parts table: every part the board lists.
fn parts_section(h: &mut String, board: &Board) {
    h.push_str(
        "<section id=\"parts\">\n<h2>Parts</h2>\n<table>\n<tr><th>part</th><th>kind</th><th>C</th><th>ESR</th>\
         <th>ESL</th><th>rated voltage</th><th>case</th><th>dielectric</th><th>unit cost</th></tr>\n",
    );
    for p in &board.parts {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td>\
             <td class=\"n\">{}</td><td>{}</td><td>{}</td><td class=\"n\">{}</td></tr>",
            escape(&p.id),
            p.kind.name(),
            format(p.capacitance_f, Unit::Farad),
            format(p.esr_ohm, Unit::Ohm),
            format(p.esl_h, Unit::Henry),
            p.rated_voltage_v.map(|v| format(v, Unit::Volt)).unwrap_or_else(|| "not given".into()),
            escape(p.case.as_deref().unwrap_or("")),
            escape(p.dielectric.as_deref().unwrap_or("")),
            cost_words(p.unit_cost)
        );
    }
    h.push_str("</table>\n</section>\n");
}

/// The bill of materials, as `hushrail bom` counts it.
fn bom_section(h: &mut String, board: &Board) {
    let bom = bill_of_materials(board);
    h.push_str("<section id=\"bom\">\n<h2>Bill of materials</h2>\n<table>\n<tr><th>part</th><th>description</th>");
    for r in &bom.rails {
        let _ = write!(h, "<th>{}</th>", escape(r));
    }
    h.push_str("<th>total</th><th>unit cost</th><th>cost</th></tr>\n");
    for l in &bom.lines {
        let _ = write!(h, "<tr><td>{}</td><td>{}</td>", escape(&l.part.id), escape(&part_words(&l.part)));
        for c in &l.per_rail {
            let _ = write!(h, "<td class=\"n\">{c}</td>");
        }
        let _ = writeln!(
            h,
            "<td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td></tr>",
            l.total,
            cost_words(l.part.unit_cost),
            cost_words(l.cost)
        );
    }
    let total_count: u64 = bom.lines.iter().map(|l| l.total).sum();
    let _ = writeln!(
        h,
        "</table>\n<p>{total_count} parts of {} kinds; total cost: {}.</p>",
        bom.lines.len(),
        escape(&total_cost_words(&bom))
    );
    if !bom.unused.is_empty() {
        let _ = writeln!(h, "<p>Listed but not fitted: {}.</p>", escape(&bom.unused.join(", ")));
    }
    h.push_str("</section>\n");
}

/// Write a report atomically (a crash leaves the old file or the new one).
pub fn write_report(path: &Path, html: &str) -> std::io::Result<()> {
    super::write_atomically(path, html.as_bytes())
}

/// The civil (proleptic Gregorian) date of a count of days since 1970-01-01: (year, month 1-12, day 1-31).
///
/// The days-to-civil algorithm of H. Hinnant, "chrono-Compatible Low-Level Date Algorithms" (public domain):
/// shift the epoch to 0000-03-01 so leap days fall at the end of a 400-year era's years.
pub fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097); // [0, 146096]
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365; // [0, 399]
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100); // [0, 365]
    let mp = (5 * doy + 2) / 153; // [0, 11], March = 0
    let day = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let month = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let year = yoe + era * 400 + i64::from(month <= 2);
    (year, month, day)
}

/// Today's date in UTC as YYYY-MM-DD, from the system clock.
pub fn utc_date_today() -> String {
    let secs = match std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH) {
        Ok(d) => d.as_secs() as i64,
        Err(e) => -(e.duration().as_secs() as i64),
    };
    let (y, m, d) = civil_from_days(secs.div_euclid(86_400));
    format!("{y:04}-{m:02}-{d:02}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn civil_dates() {
        // Known dates: the epoch, a leap day, the day after, a century that is not a leap year, and 2000.
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(civil_from_days(11_016), (2000, 2, 29));
        assert_eq!(civil_from_days(11_017), (2000, 3, 1));
        assert_eq!(civil_from_days(-25_508), (1900, 3, 1));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
        assert_eq!(civil_from_days(20_454), (2026, 1, 1));
    }

    #[test]
    fn escapes_markup() {
        assert_eq!(escape("<a href=\"x\">&'"), "&lt;a href=&quot;x&quot;&gt;&amp;&#39;");
    }
}
