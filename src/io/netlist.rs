//! A SPICE netlist of one rail's network, for ngspice (or any SPICE) to check our numbers against.
//!
//! The network is the same for both analyses: the source's R-L (and its crossover tank when it gives its control
//! loop) ends at an ideal supply at the rail voltage (an AC short), the plane and each group are series R-L-C to
//! ground. An AC sweep drives the rail node with 1 A, so the
//! node voltage equals the rail impedance; a transient draws a piecewise-linear load current from the node.
//! Zero-valued resistors and inductors are left out (the nodes are joined instead), since SPICE refuses or warns
//! on them.

use crate::analysis::{Branch, BranchKind, Network, View};
use crate::model::{Board, Rail};
use crate::units::full_precision;
use std::fmt::Write;

/// The AC sweep a netlist asks for: `points_per_decade` log-spaced points from `from_hz` to `to_hz`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AcSweep {
    /// Start, Hz.
    pub from_hz: f64,
    /// Stop, Hz.
    pub to_hz: f64,
    /// Points per decade.
    pub points_per_decade: usize,
}

/// A transient run: the load current as (t, A) corners, and the time steps.
#[derive(Debug, Clone, PartialEq)]
pub struct Transient {
    /// Corners of the piecewise-linear load current drawn from the rail node, (s, A), by time.
    pub load: Vec<(f64, f64)>,
    /// Print step, s.
    pub step_s: f64,
    /// End time, s.
    pub stop_s: f64,
    /// Largest internal step, s.
    pub max_step_s: f64,
    /// When the droop filters the load's current to the band: the filter's two real poles, Hz. The netlist then
    /// builds the same filter (two buffered R-C sections driving a current source) between the PWL and the node.
    pub filter_poles_hz: Option<[f64; 2]>,
}

impl Transient {
    /// The run `hushrail netlist --droop` writes for droop `d`: the same stimulus as the droop (the ramp over
    /// rise/0.8 to its step, through its band filter when it has one) over its window, printed at 2000 points, with
    /// a largest step that resolves both the ramp (50 steps) and the printed grid.
    pub fn of_step(d: &crate::analysis::Droop) -> Transient {
        Transient {
            load: vec![(0.0, 0.0), (d.ramp_s, d.step_a)],
            step_s: d.window_s / 2000.0,
            stop_s: d.window_s,
            max_step_s: (d.ramp_s / 50.0).min(d.window_s / 2000.0),
            filter_poles_hz: d.filter.map(|f| f.poles_hz),
        }
    }
}

/// The rail node's name in the netlist.
pub const RAIL_NODE: &str = "rail";
/// The die node's name in the netlist (present when the rail gives a package).
pub const DIE_NODE: &str = "die";

/// Why `rail` has no one-node netlist: on a plane pair, one node would leave the planes out, so its netlist is the
/// meshed plane (`netlist --mesh H`, AC). `None` for a lumped rail.
pub fn one_node_refusal(rail: &Rail) -> Option<String> {
    rail.placement.as_ref().map(|_| {
        format!(
            "rail {} sits on a plane pair, and one node would leave the planes out: write it with its plane meshed \
             (hushrail netlist --mesh H, for example --mesh 1mm; with --droop, the load step's transient)",
            rail.name
        )
    })
}

/// The netlist text for an AC sweep seen from `view`: frequency, Re V and Im V of the view's node go to
/// `data_file` with 15 digits.
pub fn rail_netlist(board: &Board, rail: &Rail, sweep: &AcSweep, view: View, data_file: &str) -> String {
    let node = if view == View::Die && rail.package.is_some() { DIE_NODE } else { RAIL_NODE };
    let mut t = network_text(board, rail, &format!("1 A AC into node {node}, so V({node}) = Z seen there"));
    let _ = writeln!(t, "Idrive 0 {node} DC 0 AC 1");
    let _ = writeln!(
        t,
        ".ac dec {} {} {}",
        sweep.points_per_decade,
        full_precision(sweep.from_hz),
        full_precision(sweep.to_hz)
    );
    t.push_str(&control_block(data_file, &format!("v({node})")));
    t
}

/// The netlist text for a transient from the DC operating point. The load draws its current at the die when the
/// rail gives a package (else at the rail node); time and that node's voltage go to `data_file`.
pub fn rail_tran_netlist(board: &Board, rail: &Rail, tran: &Transient, data_file: &str) -> String {
    let node = if rail.package.is_some() { DIE_NODE } else { RAIL_NODE };
    let mut t = network_text(board, rail, &format!("a piecewise-linear load current drawn from node {node}"));
    write_load_step(&mut t, tran, &[(node.to_string(), 1.0)]);
    write_tran(&mut t, tran, "reltol=1e-6 abstol=1e-12 vntol=1e-9");
    t.push_str(&control_block(data_file, &format!("v({node})")));
    t
}

/// The `.options` line and the `.tran` card of `tran`.
pub(super) fn write_tran(t: &mut String, tran: &Transient, options: &str) {
    let _ = writeln!(t, ".options {options}");
    let _ = writeln!(
        t,
        ".tran {} {} 0 {}",
        full_precision(tran.step_s),
        full_precision(tran.stop_s),
        full_precision(tran.max_step_s)
    );
}

/// The load's piecewise-linear current `tran.load`, drawn from each node of `sinks` times its share (through the
/// band filter when `tran` has one). One sink is named `Iload` (or `Gload`), several `Iload{i}` (or `Gload{i}`).
pub(super) fn write_load_step(t: &mut String, tran: &Transient, sinks: &[(String, f64)]) {
    let name = |i: usize| if sinks.len() == 1 { String::new() } else { i.to_string() };
    let corners = |share: f64| -> String {
        let c: Vec<String> = tran
            .load
            .iter()
            .map(|(time, i)| format!("{} {}", full_precision(*time), full_precision(*i * share)))
            .collect();
        c.join(" ")
    };
    match tran.filter_poles_hz {
        None => {
            for (i, (node, share)) in sinks.iter().enumerate() {
                let _ = writeln!(t, "Iload{} {node} 0 PWL({})", name(i), corners(*share));
            }
        }
        Some([a, b]) => {
            // The load's current as a voltage (1 V per A), through two R-C low-passes (1 Ω, C = 1/(2π f)) with a
            // unity buffer between them, drawn from each node by a transconductance of its share in A/V.
            let c = |f: f64| full_precision(1.0 / (2.0 * std::f64::consts::PI * f));
            let _ = writeln!(
                t,
                "* the load's current filtered to the band: poles at {} Hz and {} Hz",
                full_precision(a),
                full_precision(b)
            );
            let _ = writeln!(t, "Vpwl lpwl 0 PWL({})", corners(1.0));
            let _ = writeln!(t, "Rf1 lpwl lf1 1\nCf1 lf1 0 {}\nEf1 lf1b 0 lf1 0 1", c(a));
            let _ = writeln!(t, "Rf2 lf1b lf2 1\nCf2 lf2 0 {}", c(b));
            for (i, (node, share)) in sinks.iter().enumerate() {
                let _ = writeln!(t, "Gload{} {node} 0 lf2 0 {}", name(i), full_precision(*share));
            }
        }
    }
}

/// The branches of the rail, the supply, and a heading.
fn network_text(board: &Board, rail: &Rail, drive: &str) -> String {
    let network = Network::of_rail(board, rail);
    let mut t = String::new();
    let _ = writeln!(t, "* hushrail: rail {} of board {}", rail.name, board.name);
    let _ = writeln!(t, "* {drive}");
    let _ = writeln!(t, "Vsupply supply 0 DC {}", full_precision(rail.voltage_v));
    for (i, b) in network.branches.iter().chain(&network.package).chain(&network.die).enumerate() {
        let (tag, start, end) = match b.kind {
            BranchKind::Source => ("src".to_string(), RAIL_NODE, "supply"),
            BranchKind::Plane => ("plane".to_string(), RAIL_NODE, "0"),
            BranchKind::Group(g) => (format!("g{g}"), RAIL_NODE, "0"),
            BranchKind::Package => ("pkg".to_string(), RAIL_NODE, DIE_NODE),
            BranchKind::Die => ("die".to_string(), DIE_NODE, "0"),
        };
        let _ = writeln!(t, "* branch {i}: {}", b.label);
        if b.measured.is_some() {
            let _ = writeln!(t, "* (a measured part: written as the R-L-C fitted to its data)");
        }
        write_branch(&mut t, &tag, start, end, b, 1e-15);
    }
    t
}

/// One branch as SPICE elements from `start` to `end`, named after `tag`: its series R, L and C (those not zero),
/// then the crossover tank as a parallel R, L and C when the source gives its loop. A branch of zero impedance is
/// a short, written as a resistor of `short_ohm` (SPICE refuses a zero one).
pub(crate) fn write_branch(t: &mut String, tag: &str, start: &str, end: &str, b: &Branch, short_ohm: f64) {
    let mut elements: Vec<(char, f64)> = Vec::new();
    if b.rlc.r_ohm > 0.0 {
        elements.push(('R', b.rlc.r_ohm));
    }
    if b.rlc.l_h > 0.0 {
        elements.push(('L', b.rlc.l_h));
    }
    if let Some(c) = b.rlc.c_f {
        elements.push(('C', c));
    }
    if elements.is_empty() && b.tank.is_none() {
        elements.push(('R', short_ohm));
    }
    let mut node = start.to_string();
    let count = elements.len() + usize::from(b.tank.is_some());
    for (k, (letter, value)) in elements.into_iter().enumerate() {
        let next = if k + 1 == count { end.to_string() } else { format!("{tag}_{k}") };
        let _ = writeln!(t, "{letter}{tag}_{k} {node} {next} {}", full_precision(value));
        node = next;
    }
    if let Some(q) = &b.tank {
        let _ = writeln!(t, "* the regulator's loop as its crossover tank (parallel R, L, C)");
        for (letter, value) in [('R', q.r_ohm), ('L', q.l_h), ('C', q.c_f)] {
            let _ = writeln!(t, "{letter}{tag}_q {node} {end} {}", full_precision(value));
        }
    }
}

/// The control block: run, then write the scale and `vectors` (as "v(a) v(b)") to `data_file` with 15 digits.
pub(super) fn control_block(data_file: &str, vectors: &str) -> String {
    format!(
        ".control\nset wr_singlescale\nset wr_vecnames\nset numdgt=15\nrun\nwrdata {data_file} {vectors}\nquit\n.endc\n.end\n"
    )
}

/// Read what `wrdata` wrote: rows of numbers after an optional header line. Returns the rows, or a message naming
/// the line that could not be read.
pub fn parse_wrdata(text: &str) -> Result<Vec<Vec<f64>>, String> {
    let mut rows = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let cols: Vec<&str> = line.split_whitespace().collect();
        if cols.is_empty() || (i == 0 && cols[0].parse::<f64>().is_err()) {
            continue;
        }
        let nums: Result<Vec<f64>, _> = cols.iter().map(|c| c.parse::<f64>()).collect();
        match nums {
            Ok(n) => rows.push(n),
            Err(_) => return Err(format!("line {}: not a row of numbers: {line:?}", i + 1)),
        }
    }
    Ok(rows)
}
