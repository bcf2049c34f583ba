//! A placed rail as a SPICE netlist: the plane pair as a mesh of cells, every branch at its port, so the rail can
//! be signed off in any SPICE.
//!
//! The pair is cut into nx × ny cells of side about h (a/nx by b/ny, square when h divides both sides). Each cell is
//! a capacitance ε0·εr·(cell area)/d to the return plane; each shared edge a series R-L of μ0·d and the foil's DC
//! resistance per square, scaled by length over width. A port is the cells whose centres lie under it (the
//! nearest cell when none does): its current is spread evenly over them and its voltage is their average (an
//! ideal coupling of E and F sources), the cavity model's own port. SPICE has no √f skin effect and no
//! conductance proportional to frequency, so the foil is its DC resistance and a loss tangent is left out; the
//! netlist says so in its heading.

use super::netlist::{AcSweep, Transient, control_block, write_load_step, write_tran};
use crate::analysis::placed::PlacedCircuit;
use crate::model::{Board, Rail};
use crate::physics::Corner;
use crate::physics::plane_pair::{Conductor, EPS0, MU0, PortRect};
use crate::units::full_precision as num;
use std::fmt::Write;

/// The most cells a mesh may have (about 100 MB of netlist text; a finer mesh is refused, not attempted).
pub const MAX_MESH_CELLS: usize = 1_000_000;

/// The cell side the window's netlist export meshes a plane of `size_m` with: 0.5 mm (the finer of the two meshes
/// the ngspice check runs, a part's default port; on its own within a few % of the converged mesh below the
/// resonances' flanks, and the 1 mm mesh beside it extrapolates to within 0.5 % of the plane model: `hushrail
/// netlist --mesh 1mm` writes that one), or on a pair too large for that, the side that gives
/// [`EXPORT_MESH_CELLS`]. Its cost in ngspice, measured on the 60 × 40 mm sample pair: 7.7 s and 0.9 GB for 17
/// frequencies, so about 45 s for the export's sweep (the plot's range at 20 points a decade, about 100).
pub fn export_mesh_cell_m(size_m: [f64; 2]) -> f64 {
    let fitting = (size_m[0] * size_m[1] / EXPORT_MESH_CELLS as f64).sqrt();
    if fitting.is_finite() { fitting.max(5e-4) } else { 5e-4 }
}

/// The most cells the window's netlist export gives a mesh (a 100 × 100 mm pair at 0.5 mm cells).
pub const EXPORT_MESH_CELLS: usize = 40_000;

/// The least resistance per square an edge carries, Ω: it keeps SPICE's DC operating point solvable on perfect
/// conductors and is far below any part's ESR (it moves |Z| by parts in 1e5 or less).
pub const MIN_SHEET_OHM: f64 = 1e-6;

/// The node driven with 1 A AC: the load's die (or its pins when it has no package), whose voltage is Z.
pub fn mesh_drive_node(load: usize) -> String {
    format!("load{load}")
}

/// The netlist of a placed rail meshed at about `cell_m`, driving load `at` with 1 A AC; frequency, Re V and Im V
/// of that load's node (and, with `from`, the drive moved to load `from` so V(at) is the transfer impedance) go to
/// `data_file`.
pub fn mesh_netlist(
    board: &Board,
    rail: &Rail,
    sweep: &AcSweep,
    cell_m: f64,
    (at, from): (usize, Option<usize>),
    data_file: &str,
    corner: Corner,
) -> Result<String, String> {
    let drive = from.unwrap_or(at);
    let (mut t, loads) = mesh_text(board, rail, sweep.to_hz, cell_m, corner, &[at, drive])?;
    let _ = writeln!(
        t,
        "* 1 A AC drawn at load {drive} ({}); V({}) is the impedance seen there",
        loads[drive].0,
        mesh_drive_node(at)
    );
    let _ = writeln!(t, "Idrive 0 {} DC 0 AC 1", mesh_drive_node(drive));
    // The network is linear: ngspice may skip the DC operating point, which on a fine mesh of near-ideal
    // conductors is slow to converge and tells nothing here. A low pivot threshold keeps the first frequency's
    // pivot order for the rest (as in the transient, [`TRAN_OPTIONS`]): by default ngspice orders the matrix again
    // at nearly every frequency. Measured on tests/networks/placed/far_part.json at 1 mm cells, 17 frequencies:
    // 18.4 s by default, 0.14 s with it, |Z| alike to 3e-7.
    let _ = writeln!(t, ".options noopac pivrel=1e-12");
    let _ = writeln!(t, ".ac dec {} {} {}", sweep.points_per_decade, num(sweep.from_hz), num(sweep.to_hz));
    t.push_str(&control_block(data_file, &format!("v({})", mesh_drive_node(at))));
    Ok(t)
}

/// The options of the mesh's transient: the lumped transient's tolerances, and two more, each measured on
/// tests/networks/placed/tran_pair.json (100 ns, 2 mm cells; answers alike to 1e-5 V against a 0.12 V droop).
/// `pivrel` low: the matrix spans conductances from the cells' C/Δt to the edges' 1/R (1e6 S at MIN_SHEET_OHM), so
/// ngspice's default pivot threshold (1e-3 of the column) rejects the kept pivot order whenever the time step
/// changes and orders the matrix again, most of its time (20 ns of an undamped variant: 2.9 s by default, 0.18 s
/// with 1e-12, the same waveform). `method=gear`: the mesh has modes of a few cells at tens of gigahertz, far above
/// anything the droop takes, which the trapezoidal rule keeps ringing undamped and its step control then follows
/// (19 628 steps, 4.0 s); the second-order Gear (backward differentiation) formula damps what its step does not
/// resolve (4 921 steps, 0.96 s; at 1 mm cells 9.5 s against 39 s). Where a load draws its step at its pins (no
/// package), the plane itself rings at gigahertz there and both formulas follow it: on a 30 × 20 mm variant at 3 mm
/// cells, 20 ns took 3.8 s with Gear and 1.05 s with the trapezoidal rule, the waveforms 6 mV apart on a 345 mV
/// droop (the ringing's phase).
const TRAN_OPTIONS: &str = "method=gear reltol=1e-6 abstol=1e-12 vntol=1e-9 pivrel=1e-12";

/// The netlist of a placed rail meshed at about `cell_m` for a transient from the DC operating point: every load
/// draws its share ΔI_l/ΣΔI of the piecewise-linear current `tran.load` (through the band filter when `tran` has
/// one) at its die (or pins), all at once, as the droop takes them; time and the voltage at every load, in the
/// rail's order, go to `data_file`.
pub fn mesh_tran_netlist(
    board: &Board,
    rail: &Rail,
    tran: &Transient,
    cell_m: f64,
    data_file: &str,
    corner: Corner,
) -> Result<String, String> {
    let (mut t, loads) = mesh_text(board, rail, rail.band_hz_or_default()[1], cell_m, corner, &[])?;
    let sum: f64 = loads.iter().map(|l| l.1).sum();
    if loads.is_empty() || sum.is_nan() || sum <= 0.0 {
        return Err(format!("rail {} has no load step on its plane pair", rail.name));
    }
    let names: Vec<&str> = loads.iter().map(|l| l.0.as_str()).collect();
    let _ = writeln!(
        t,
        "* the load step drawn at every load at once, each its share of it ({}); their voltages are read",
        names.join(", ")
    );
    let sinks: Vec<(String, f64)> =
        loads.iter().enumerate().map(|(l, (_, step))| (mesh_drive_node(l), step / sum)).collect();
    write_load_step(&mut t, tran, &sinks);
    write_tran(&mut t, tran, TRAN_OPTIONS);
    let vectors: Vec<String> = (0..loads.len()).map(|l| format!("v({})", mesh_drive_node(l))).collect();
    t.push_str(&control_block(data_file, &vectors.join(" ")));
    Ok(t)
}

/// The mesh, the supply and every branch and load, without stimulus or analysis; each load's name and step, A.
/// `loads_used` are the loads the caller drives or reads (refused when the rail has no such load).
fn mesh_text(
    board: &Board,
    rail: &Rail,
    f_max_hz: f64,
    cell_m: f64,
    corner: Corner,
    loads_used: &[usize],
) -> Result<(String, Vec<(String, f64)>), String> {
    let Some(placement) = &rail.placement else {
        return Err(format!("rail {} is not placed (it has no plane_pair), so it has no plane to mesh", rail.name));
    };
    // The cell is checked before the plane is prepared: a refused mesh costs nothing.
    let [a, b] = placement.plane_pair.size_m;
    if !(cell_m.is_finite() && cell_m > 0.0) {
        return Err(format!("the cell size must be a length greater than 0, not {}", num(cell_m)));
    }
    let nx = (a / cell_m).round().max(1.0);
    let ny = (b / cell_m).round().max(1.0);
    if nx * ny > MAX_MESH_CELLS as f64 {
        return Err(format!(
            "a cell of {} m cuts the {} m × {} m pair into {} cells; the limit is {MAX_MESH_CELLS}: choose a larger cell",
            num(cell_m),
            num(a),
            num(b),
            nx * ny
        ));
    }
    let circuit = PlacedCircuit::of_rail(board, rail, corner, f_max_hz)
        .ok_or_else(|| format!("rail {} could not be built", rail.name))?;
    if loads_used.iter().any(|&l| l >= circuit.loads.len()) {
        return Err(format!("rail {} has no such load", rail.name));
    }
    let st = circuit.plane.stackup;
    let (nx, ny) = (nx as usize, ny as usize);
    let (hx, hy) = (a / nx as f64, b / ny as f64);
    let d = st.dielectric_m;
    // A loop of ideal inductors is a loop of 0 V sources at SPICE's DC operating point (a singular matrix), so
    // every edge keeps at least MIN_SHEET_OHM per square.
    let sheet = match st.conductor {
        Conductor::Perfect => 0.0,
        Conductor::Sheet { ohm_per_square } => ohm_per_square,
        Conductor::Foil { thickness_m, conductivity_s_m } => 2.0 / (conductivity_s_m * thickness_m),
    }
    .max(MIN_SHEET_OHM);
    let mut t = String::with_capacity(80 * nx * ny * 3);
    let _ = writeln!(t, "* hushrail: placed rail {} of board {}, plane pair meshed", rail.name, board.name);
    let _ = writeln!(t, "* {nx} x {ny} cells of {} m x {} m", num(hx), num(hy));
    let _ = writeln!(
        t,
        "* SPICE holds no skin effect and no frequency-proportional conductance: the foil is its DC resistance \
         ({} ohm per square) and the loss tangent ({}) is left out",
        num(sheet),
        num(st.loss_tangent)
    );
    let _ = writeln!(t, "Vsupply supply 0 DC {}", num(rail.voltage_v));
    let cell = |i: usize, j: usize| format!("n{i}_{j}");
    let c_cell = EPS0 * st.er * hx * hy / d;
    for j in 0..ny {
        for i in 0..nx {
            let _ = writeln!(t, "C{i}_{j} {} 0 {}", cell(i, j), num(c_cell));
        }
    }
    // Edges: along x between (i, j) and (i+1, j): length hx, width hy; along y the reverse.
    let edge = |t: &mut String, tag: String, n1: String, n2: String, ratio: f64| {
        let l = MU0 * d * ratio;
        let _ = writeln!(t, "R{tag} {n1} {tag}m {}", num(sheet * ratio));
        let _ = writeln!(t, "L{tag} {tag}m {n2} {}", num(l));
    };
    for j in 0..ny {
        for i in 0..nx {
            if i + 1 < nx {
                edge(&mut t, format!("x{i}_{j}"), cell(i, j), cell(i + 1, j), hx / hy);
            }
            if j + 1 < ny {
                edge(&mut t, format!("y{i}_{j}"), cell(i, j), cell(i, j + 1), hy / hx);
            }
        }
    }
    // The cells under a port: centres inside its rectangle, or the nearest cell.
    let cells_under = |p: &PortRect| -> Vec<(usize, usize)> {
        let mut out = Vec::new();
        for j in 0..ny {
            let yc = (j as f64 + 0.5) * hy;
            if (yc - p.y).abs() > p.h / 2.0 + 1e-12 {
                continue;
            }
            for i in 0..nx {
                let xc = (i as f64 + 0.5) * hx;
                if (xc - p.x).abs() <= p.w / 2.0 + 1e-12 {
                    out.push((i, j));
                }
            }
        }
        if out.is_empty() {
            let i = ((p.x / hx).floor() as usize).min(nx - 1);
            let j = ((p.y / hy).floor() as usize).min(ny - 1);
            out.push((i, j));
        }
        out
    };
    let np = circuit.branches.len();
    for (k, port) in circuit.plane.ports.iter().enumerate() {
        let cells = cells_under(port);
        let node = format!("p{k}");
        let _ = writeln!(t, "* port {k}: {} {}", cells.len(), if cells.len() == 1 { "cell" } else { "cells" });
        // Vs carries the net current the port puts into the plane; a chain of E sources holds the port at the
        // cells' mean voltage (linear sources, so SPICE may skip the operating point); each F puts an equal share
        // of that current into its cell.
        let _ = writeln!(t, "Vs{k} {node} {node}e0 0");
        let share = num(1.0 / cells.len() as f64);
        for (e, &(i, j)) in cells.iter().enumerate() {
            let next = if e + 1 == cells.len() { "0".to_string() } else { format!("{node}e{}", e + 1) };
            let _ = writeln!(t, "E{k}_{e} {node}e{e} {next} {} 0 {share}", cell(i, j));
        }
        for &(i, j) in &cells {
            let _ = writeln!(t, "F{k}_{i}_{j} 0 {} Vs{k} {share}", cell(i, j));
        }
        if k < np {
            let bp = &circuit.branches[k];
            let end = if matches!(bp.owner, crate::analysis::placed::PortOwner::Source) { "supply" } else { "0" };
            let _ = writeln!(t, "* branch: {}", bp.branch.label);
            super::netlist::write_branch(&mut t, &format!("b{k}"), &node, end, &bp.branch, 1e-12);
        } else {
            let l = k - np;
            let load = &circuit.loads[l];
            let out = mesh_drive_node(l);
            let _ = writeln!(t, "* load: {}", load.name);
            match &load.package {
                Some(p) => {
                    series(&mut t, &format!("pk{l}"), &node, &out, p.r_ohm, p.l_h, None);
                    if let Some(die) = &load.die {
                        series(&mut t, &format!("die{l}"), &out, "0", die.r_ohm, die.l_h, die.c_f);
                    }
                }
                None => {
                    let _ = writeln!(t, "Rj{l} {node} {out} 1e-12");
                }
            }
        }
    }
    Ok((t, circuit.loads.iter().map(|l| (l.name.clone(), l.step_a)).collect()))
}

/// A series R-L-C between two nodes; zero R and L are left out (SPICE refuses or warns on them).
fn series(t: &mut String, tag: &str, from: &str, to: &str, r: f64, l: f64, c: Option<f64>) {
    let mut elements: Vec<(char, f64)> = Vec::new();
    if r > 0.0 {
        elements.push(('R', r));
    }
    if l > 0.0 {
        elements.push(('L', l));
    }
    if let Some(c) = c {
        elements.push(('C', c));
    }
    if elements.is_empty() {
        elements.push(('R', 1e-12));
    }
    let last = elements.len() - 1;
    let mut node = from.to_string();
    for (k, (letter, value)) in elements.into_iter().enumerate() {
        let next = if k == last { to.to_string() } else { format!("{tag}_{k}") };
        let _ = writeln!(t, "{letter}{tag}_{k} {node} {next} {}", num(value));
        node = next;
    }
}
