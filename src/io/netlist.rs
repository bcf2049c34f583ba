//! A SPICE netlist of one rail's network, for ngspice (or any SPICE) to check our numbers against.
//!
//! A 1 A AC current source drives the rail node, so the node voltage equals the rail impedance. Zero-valued
//! resistors and inductors are left out (the nodes are joined instead), since SPICE refuses or warns on them.

use crate::analysis::{BranchKind, Network};
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

/// The rail node's name in the netlist.
pub const RAIL_NODE: &str = "rail";

/// The netlist text: the network, an `.ac` sweep, and a control block that writes frequency, Re V(rail) and
/// Im V(rail) to `data_file` with 15 digits, then quits (for `ngspice -b`).
pub fn rail_netlist(board: &Board, rail: &Rail, sweep: &AcSweep, data_file: &str) -> String {
    let network = Network::of_rail(board, rail);
    let mut t = String::new();
    let _ = writeln!(t, "* hushrail: rail {} of board {}", rail.name, board.name);
    let _ = writeln!(t, "* 1 A AC into the rail node, so V({RAIL_NODE}) = Z of the rail");
    let _ = writeln!(t, "Idrive 0 {RAIL_NODE} DC 0 AC 1");
    for (i, b) in network.branches.iter().enumerate() {
        let tag = match b.kind {
            BranchKind::Source => "src".to_string(),
            BranchKind::Plane => "plane".to_string(),
            BranchKind::Group(g) => format!("g{g}"),
        };
        let _ = writeln!(t, "* branch {i}: {}", b.label);
        let mut node = RAIL_NODE.to_string();
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
        if elements.is_empty() {
            // A branch of zero impedance: a short, written as a tiny resistor SPICE accepts.
            elements.push(('R', 1e-15));
        }
        let last = elements.len() - 1;
        for (k, (letter, value)) in elements.into_iter().enumerate() {
            let next = if k == last { "0".to_string() } else { format!("{tag}_{k}") };
            let _ = writeln!(t, "{letter}{tag}_{k} {node} {next} {}", full_precision(value));
            node = next;
        }
    }
    let _ = writeln!(
        t,
        ".ac dec {} {} {}",
        sweep.points_per_decade,
        full_precision(sweep.from_hz),
        full_precision(sweep.to_hz)
    );
    let _ = writeln!(t, ".control");
    let _ = writeln!(t, "set wr_singlescale");
    let _ = writeln!(t, "set wr_vecnames");
    let _ = writeln!(t, "set numdgt=15");
    let _ = writeln!(t, "run");
    let _ = writeln!(t, "wrdata {data_file} v({RAIL_NODE})");
    let _ = writeln!(t, "quit");
    let _ = writeln!(t, ".endc");
    let _ = writeln!(t, ".end");
    t
}

/// Read what `wrdata` wrote for one complex vector: rows of frequency, real, imaginary after a header line.
/// Returns (f, re, im) triples, or a message naming the line that could not be read.
pub fn parse_wrdata(text: &str) -> Result<Vec<(f64, f64, f64)>, String> {
    let mut rows = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let cols: Vec<&str> = line.split_whitespace().collect();
        if cols.is_empty() || (i == 0 && cols[0] == "frequency") {
            continue;
        }
        let nums: Result<Vec<f64>, _> = cols.iter().map(|c| c.parse::<f64>()).collect();
        match nums {
            Ok(n) if n.len() >= 3 => rows.push((n[0], n[1], n[2])),
            _ => {
                return Err(format!("line {}: expected frequency, real, imaginary: {line:?}", i + 1));
            }
        }
    }
    Ok(rows)
}
