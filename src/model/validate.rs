//! The rules a board must keep before it is analysed. Every rule reports where (a JSON path such as
//! `rails[1].decaps[0].part`) and why, and all problems are reported at once.

use super::ranges::{self, Range};
use super::{Board, DecapGroup, Die, Load, Package, Part, PartKind, Plane, Rail, Source, SourceLoop};
use crate::physics::mounting::geometry_problems;
use crate::units::full_precision as num;
use std::collections::HashSet;
use std::fmt;

/// One thing wrong with a board: where, and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Problem {
    /// JSON path of the offending value, such as `rails[1].decaps[0].part` (empty for the whole document).
    pub path: String,
    /// What is wrong, in plain words.
    pub reason: String,
}

impl Problem {
    /// A problem at `path`.
    pub fn new(path: impl Into<String>, reason: impl Into<String>) -> Problem {
        Problem { path: path.into(), reason: reason.into() }
    }
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.path.is_empty() { write!(f, "{}", self.reason) } else { write!(f, "{}: {}", self.path, self.reason) }
    }
}

/// Collects problems under a path prefix.
struct Checker<'a> {
    problems: &'a mut Vec<Problem>,
}

impl Checker<'_> {
    fn push(&mut self, path: String, reason: impl Into<String>) {
        self.problems.push(Problem::new(path, reason));
    }

    /// A number inside its documented plausible range.
    fn range(&mut self, path: String, value: f64, range: &Range) {
        if let Some(reason) = range.problem(value) {
            self.push(path, reason);
        }
    }

    /// A name: not empty, and no control characters (they would forge lines in messages and exports).
    fn name(&mut self, path: String, name: &str, what: &str) {
        if name.trim().is_empty() {
            self.push(path, format!("{what} must not be empty"));
        } else if name.chars().any(char::is_control) {
            self.push(path, format!("{what} must not contain control characters (line breaks, tabs, escapes)"));
        }
    }
}

/// Check every rule of a board and return all the problems found (empty when the board is sound).
pub fn validate_board(board: &Board) -> Vec<Problem> {
    let mut problems = Vec::new();
    let mut c = Checker { problems: &mut problems };
    c.name("name".to_string(), &board.name, "the board's name");
    if let Some(d) = &board.description
        && d.chars().any(|ch| ch.is_control() && ch != '\n' && ch != '\t')
    {
        c.push("description".to_string(), "must not contain control characters other than line breaks and tabs");
    }
    if let Some([lo, hi]) = board.temperature_c {
        c.range("temperature_c[0]".to_string(), lo, &ranges::TEMPERATURE_C);
        c.range("temperature_c[1]".to_string(), hi, &ranges::TEMPERATURE_C);
        if lo.is_finite() && hi.is_finite() && lo >= hi {
            c.push(
                "temperature_c".to_string(),
                format!("must be [min, max] in °C with min < max, not [{}, {}]", num(lo), num(hi)),
            );
        }
    }
    let mut ids = HashSet::new();
    for (i, part) in board.parts.iter().enumerate() {
        let path = format!("parts[{i}]");
        check_part(&mut c, &path, part);
        if !ids.insert(part.id.as_str()) {
            c.push(format!("{path}.id"), format!("duplicate part id \"{}\"", part.id));
        }
    }
    let mut names = HashSet::new();
    for (i, rail) in board.rails.iter().enumerate() {
        let path = format!("rails[{i}]");
        check_rail(&mut c, &path, rail, &ids);
        if !names.insert(rail.name.as_str()) {
            c.push(format!("{path}.name"), format!("duplicate rail name \"{}\"", rail.name));
        }
    }
    problems
}

/// Check one part on its own (also used by the window before an edit reaches the board).
pub fn validate_part(part: &Part, path: &str) -> Vec<Problem> {
    let mut problems = Vec::new();
    check_part(&mut Checker { problems: &mut problems }, path, part);
    problems
}

/// Check one rail on its own against the board's part ids (also used by the window before an edit lands).
pub fn validate_rail(board: &Board, rail: &Rail, path: &str) -> Vec<Problem> {
    let ids: HashSet<&str> = board.parts.iter().map(|p| p.id.as_str()).collect();
    let mut problems = Vec::new();
    check_rail(&mut Checker { problems: &mut problems }, path, rail, &ids);
    problems
}

fn check_part(c: &mut Checker, path: &str, part: &Part) {
    if let Some(t) = part.tolerance_pct {
        c.range(format!("{path}.tolerance_pct"), t, &ranges::TOLERANCE_PCT);
    }
    if let Some(t) = part.esr_tolerance_pct {
        c.range(format!("{path}.esr_tolerance_pct"), t, &ranges::TOLERANCE_PCT);
    }
    if let Some(v) = part.measured_bias_v {
        if part.kind != PartKind::Measured {
            c.push(
                format!("{path}.measured_bias_v"),
                "only a part of kind \"measured\" gives the bias it was measured at",
            );
        } else if v != 0.0 {
            // 0 V (measured with no bias) or a bias voltage in its range.
            c.range(format!("{path}.measured_bias_v"), v, &ranges::BIAS_VOLTAGE);
        }
    }
    if let Some(curve) = &part.dc_bias {
        let mut last_v = 0.0;
        for (i, [v, r]) in curve.iter().enumerate() {
            let pp = format!("{path}.dc_bias[{i}]");
            if !ranges::BIAS_VOLTAGE.contains(*v) {
                c.range(format!("{pp}[0]"), *v, &ranges::BIAS_VOLTAGE);
            } else if *v <= last_v {
                c.push(format!("{pp}[0]"), format!("volts must increase along the curve, not {}", num(*v)));
            } else {
                last_v = *v;
            }
            if !r.is_finite() || *r <= 0.0 || *r > 1.0 {
                c.push(format!("{pp}[1]"), format!("the ratio must be above 0 and at most 1, not {}", num(*r)));
            }
        }
    }
    c.name(format!("{path}.id"), &part.id, "part id");
    if part.kind == PartKind::Measured {
        // Its values come from the measurement; what it needs is a file and a fixture.
        if part.touchstone.as_deref().is_none_or(|t| t.trim().is_empty()) {
            c.push(
                format!("{path}.touchstone"),
                "a measured part needs its Touchstone file (path relative to the board)",
            );
        }
        if part.fixture.is_none() {
            c.push(format!("{path}.fixture"), "a measured part needs its fixture: \"one-port\" or \"shunt-through\"");
        }
    } else {
        c.range(format!("{path}.capacitance_f"), part.capacitance_f, &ranges::CAPACITANCE);
        c.range(format!("{path}.esr_ohm"), part.esr_ohm, &ranges::RESISTANCE);
        c.range(format!("{path}.esl_h"), part.esl_h, &ranges::INDUCTANCE);
    }
    if let Some(v) = part.rated_voltage_v {
        c.range(format!("{path}.rated_voltage_v"), v, &ranges::RATED_VOLTAGE);
    }
    if let Some(v) = part.unit_cost {
        c.range(format!("{path}.unit_cost"), v, &ranges::UNIT_COST);
    }
    if let Some(v) = part.area_m2 {
        c.range(format!("{path}.area_m2"), v, &ranges::AREA);
    }
    if let Some(t) = &part.touchstone
        && t.chars().any(char::is_control)
    {
        c.push(format!("{path}.touchstone"), "must not contain control characters");
    }
}

fn check_rail(c: &mut Checker, path: &str, rail: &Rail, part_ids: &HashSet<&str>) {
    c.name(format!("{path}.name"), &rail.name, "rail name");
    c.range(format!("{path}.voltage_v"), rail.voltage_v, &ranges::RAIL_VOLTAGE);
    c.range(format!("{path}.ripple_pct"), rail.ripple_pct, &ranges::RIPPLE_PCT);
    match rail.band_hz {
        Some([lo, hi]) => {
            c.range(format!("{path}.band_hz[0]"), lo, &ranges::FREQUENCY);
            c.range(format!("{path}.band_hz[1]"), hi, &ranges::FREQUENCY);
            if lo.is_finite() && hi.is_finite() && hi <= lo {
                c.push(
                    format!("{path}.band_hz"),
                    format!("must be [low, high] with 0 < low < high, not [{}, {}]", num(lo), num(hi)),
                );
            }
        }
        None => {
            if !rail.loads.is_empty() && rail.fastest_rise_s().is_none() {
                c.push(
                    format!("{path}.band_hz"),
                    "missing: give band_hz, or a rise_time_s on a load so the band can follow from it",
                );
            } else if let Some(b) = rail.band()
                && b.hz[1] <= b.hz[0]
            {
                c.push(
                    format!("{path}.band_hz"),
                    format!(
                        "missing, and the fastest rise time gives an upper edge ({} Hz) below the default lower edge \
                         ({} Hz): give band_hz",
                        num(b.hz[1]),
                        num(b.hz[0])
                    ),
                );
            }
        }
    }
    if let Some(Source { touchstone: Some(file), .. }) = &rail.source {
        // R, L and the loop come from the file's fit when it is loaded; what the source needs is the file.
        if file.trim().is_empty() {
            c.push(format!("{path}.source.touchstone"), "must name a one-port Touchstone file (.s1p), not be empty");
        }
    } else if let Some(Source { r_ohm, l_h, control, .. }) = rail.source {
        c.range(format!("{path}.source.r_ohm"), r_ohm, &ranges::RESISTANCE);
        c.range(format!("{path}.source.l_h"), l_h, &ranges::SOURCE_INDUCTANCE);
        if let Some(SourceLoop { crossover_hz, phase_margin_deg }) = control {
            c.range(format!("{path}.source.loop_crossover_hz"), crossover_hz, &ranges::LOOP_CROSSOVER);
            c.range(format!("{path}.source.loop_phase_margin_deg"), phase_margin_deg, &ranges::LOOP_PHASE_MARGIN);
            if r_ohm == 0.0 {
                c.push(
                    format!("{path}.source.r_ohm"),
                    "a source with a control loop needs the output resistance the loop holds inside its bandwidth \
                     (above 0): the loop's rise past crossover is measured from it",
                );
            }
        }
        if r_ohm == 0.0 && l_h == 0.0 {
            c.push(
                format!("{path}.source"),
                "a source with neither resistance nor inductance holds the rail perfectly at every frequency, so \
                 nothing else would matter: give its output resistance or inductance",
            );
        }
    }
    if let Some(Package { r_ohm, l_h }) = rail.package {
        c.range(format!("{path}.package.r_ohm"), r_ohm, &ranges::RESISTANCE);
        c.range(format!("{path}.package.l_h"), l_h, &ranges::INDUCTANCE);
    }
    if let Some(Die { capacitance_f, esr_ohm }) = rail.die {
        c.range(format!("{path}.die.capacitance_f"), capacitance_f, &ranges::DIE_CAPACITANCE);
        c.range(format!("{path}.die.esr_ohm"), esr_ohm, &ranges::RESISTANCE);
        if rail.package.is_none() {
            c.push(format!("{path}.die"), "a die needs a package to connect it to the board: give package");
        }
    }
    if let Some(Plane { capacitance_f, esr_ohm, esl_h }) = rail.plane {
        c.range(format!("{path}.plane.capacitance_f"), capacitance_f, &ranges::PLANE_CAPACITANCE);
        c.range(format!("{path}.plane.esr_ohm"), esr_ohm, &ranges::RESISTANCE);
        c.range(format!("{path}.plane.esl_h"), esl_h, &ranges::INDUCTANCE);
    }
    if rail.loads.is_empty() {
        c.push(format!("{path}.loads"), "a rail needs at least one load (its current step sets the target)");
    }
    for (i, Load { name, step_a, rise_time_s, min_period_s, clock_hz, max_pulses }) in rail.loads.iter().enumerate() {
        let lp = format!("{path}.loads[{i}]");
        c.name(format!("{lp}.name"), name, "load name");
        c.range(format!("{lp}.step_a"), *step_a, &ranges::LOAD_STEP);
        if let Some(t) = rise_time_s {
            c.range(format!("{lp}.rise_time_s"), *t, &ranges::RISE_TIME);
        }
        if let Some(t) = min_period_s {
            c.range(format!("{lp}.min_period_s"), *t, &ranges::RISE_TIME);
        }
        if let Some(f) = clock_hz {
            c.range(format!("{lp}.clock_hz"), *f, &ranges::FREQUENCY);
        }
        if min_period_s.is_some() && clock_hz.is_some() {
            c.push(format!("{lp}.clock_hz"), "give min_period_s or clock_hz, not both (one sets the other)");
        }
        if *max_pulses == Some(0) {
            c.push(format!("{lp}.max_pulses"), "must be at least 1 (leave it out for no limit)");
        }
    }
    for (i, DecapGroup { part, count, mounting_h, mounting }) in rail.decaps.iter().enumerate() {
        let gp = format!("{path}.decaps[{i}]");
        c.range(format!("{gp}.count"), f64::from(*count), &ranges::COUNT);
        if !part_ids.contains(part.as_str()) {
            c.push(format!("{gp}.part"), format!("no part has the id \"{part}\""));
        }
        match mounting {
            None => c.range(format!("{gp}.mounting_h"), *mounting_h, &ranges::INDUCTANCE),
            Some(g) => {
                for (field, reason) in geometry_problems(g) {
                    c.push(format!("{gp}.mounting.{field}"), reason);
                }
            }
        }
    }
    // A placed rail's own rules (its plane pair and every position), each with its path.
    c.problems.extend(super::placement_problems(rail, path));
    let has_branch = rail.source.is_some()
        || rail.plane.is_some()
        || rail.placement.is_some()
        || rail.decaps.iter().any(|g| g.count > 0);
    if !has_branch {
        c.push(
            path.to_string(),
            "the rail has nothing between it and ground: give a source, a plane or a decap group with count > 0",
        );
    }
}
