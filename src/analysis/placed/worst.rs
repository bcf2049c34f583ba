//! The worst corner of a placed rail, searched on the placed circuit itself: the tolerance vertex (each group's C
//! and ESR at an end of its tolerance) whose worst load has the highest effective impedance over the band's scan
//! grid.
//!
//! A vertex changes only the branch impedances, and a branch's impedance sits on the diagonal of its own port's
//! row of the system each frequency solves (circuit.rs). So the rows are ordered fixed branches and the border
//! first, then the varied groups' ports group by group, then the loads, and the vertices are walked as a tree: the
//! fixed rows are eliminated once per frequency, each group's rows once per choice of the groups before it, and a
//! leaf (a whole vertex) costs only the last group's rows and the loads' block. Groups with the most ports come
//! first, where they are eliminated the fewest times. Up to the exhaustive limit every vertex is tried, exactly on
//! the grid; past it, one group at a time takes its worst choice with the others held until no change helps, and
//! the result is said to be the best found, not proven the worst.

use super::circuit::{BATCH, LaneSetup, PlacedCircuit, PortOwner, Row, eliminate_rows, row_start};
use super::effective;
use super::lanes::Lanes;
use crate::analysis::network::{Branch, Scale, group_branch};
use crate::analysis::worst::{GroupVertex, SearchMethod, SearchOptions, Side, WorstVertex, vertex_choices};
use crate::model::{Board, Rail};
use crate::physics::Corner;
use num_complex::Complex64 as C;

/// The most whole-grid evaluations the search past the exhaustive limit spends (each one solve of the circuit at
/// every grid frequency).
pub const MAX_ASCENT_TRIES: u64 = 48;

/// The most vertices tried one by one whatever the options ask (each leaf of the walk costs the last group's rows
/// and the loads' block at every grid frequency, and keeps one figure).
pub const MAX_PLACED_EXHAUSTIVE: f64 = 4096.0;

/// One group that varies: its choices, the branch each choice gives its parts, and the branches (ports) it owns.
struct Varied {
    index: usize,
    choices: Vec<(Side, Side, Scale)>,
    /// `branch[c]`: the branch of one port of the group at choice c.
    branch: Vec<Branch>,
    /// Its ports, in `circuit.branches` order.
    ports: Vec<usize>,
}

/// The varied groups of `rail` on `circuit`, most ports first.
fn varied_groups(board: &Board, rail: &Rail, circuit: &PlacedCircuit) -> Vec<Varied> {
    let mut varied = Vec::new();
    for (i, g) in rail.decaps.iter().enumerate() {
        let Some(part) = board.part(&g.part) else { continue };
        let choices = vertex_choices(part);
        if choices.len() == 1 {
            continue;
        }
        let ports: Vec<usize> = circuit
            .branches
            .iter()
            .enumerate()
            .filter(|(_, b)| matches!(b.owner, PortOwner::Group { group, .. } if group == i))
            .map(|(k, _)| k)
            .collect();
        let Some(&first) = ports.first() else { continue };
        // A group placed part by part has one part per port; a group at one spot has its whole count there.
        let count = match &circuit.branches[first].owner {
            PortOwner::Group { reference: Some(_), .. } => Some(1),
            _ => None,
        };
        let branch: Option<Vec<Branch>> =
            choices.iter().map(|(_, _, s)| group_branch(board, rail, i, Corner::Worst, *s, count)).collect();
        let Some(branch) = branch else { continue };
        varied.push(Varied { index: i, choices, branch, ports });
    }
    varied.sort_by(|a, b| b.ports.len().cmp(&a.ports.len()).then(b.choices.len().cmp(&a.choices.len())));
    varied
}

/// Put every varied group's ports at `choice` (one index per varied group).
fn set_vertex(circuit: &mut PlacedCircuit, varied: &[Varied], choice: &[usize]) {
    for (v, &c) in varied.iter().zip(choice) {
        for &p in &v.ports {
            let label = std::mem::take(&mut circuit.branches[p].branch.label);
            circuit.branches[p].branch = Branch { label, ..v.branch[c].clone() };
        }
    }
}

/// The highest effective impedance of any load over `freq_hz`, as the circuit stands.
fn grid_worst(circuit: &PlacedCircuit, freq_hz: &[f64], rail: &Rail) -> f64 {
    let step = rail.total_step_a();
    circuit
        .solve_grid(freq_hz)
        .iter()
        .flat_map(|m| effective(circuit, m, rail.combine, step))
        .map(|z| z.norm())
        // A NaN never counts as worst; an infinite |Z| does.
        .fold(0.0f64, |w, z| if z > w { z } else { w })
}

/// Find the worst tolerance vertex of a placed rail over `freq_hz` and leave `circuit` (built in the worst corner
/// from `rail`) at it.
pub fn placed_worst_vertex(
    board: &Board,
    rail: &Rail,
    circuit: &mut PlacedCircuit,
    freq_hz: &[f64],
    options: &SearchOptions,
) -> WorstVertex {
    let varied = varied_groups(board, rail, circuit);
    let vertices: f64 = varied.iter().map(|v| v.choices.len() as f64).product();
    let (choice, grid_worst_ohm, bound_ohm, evaluated, method) =
        if vertices <= options.exhaustive_limit.min(MAX_PLACED_EXHAUSTIVE) {
            let worst = every_vertex(rail, circuit, &varied, freq_hz);
            // The first of the highest (a NaN never wins).
            let best = (0..worst.len()).fold(0, |b, i| if worst[i] > worst[b] { i } else { b });
            let mut choice = vec![0; varied.len()];
            let mut rest = best;
            for (d, v) in varied.iter().enumerate().rev() {
                choice[d] = rest % v.choices.len();
                rest /= v.choices.len();
            }
            (choice, worst[best], worst[best], worst.len() as u64, SearchMethod::Exhaustive)
        } else {
            let (choice, best, tries) = ascend(rail, circuit, &varied, freq_hz);
            // No bound is proven past the exhaustive limit: the bound is left infinite and the words say so.
            (choice, best, f64::INFINITY, tries, SearchMethod::BestFound)
        };
    set_vertex(circuit, &varied, &choice);
    let mut groups: Vec<GroupVertex> = (0..rail.decaps.len())
        .map(|index| GroupVertex { index, capacitance: Side::Middle, esr: Side::Middle, scale: Scale::MIDDLE })
        .collect();
    for (v, &c) in varied.iter().zip(&choice) {
        let (cs, rs, scale) = v.choices[c];
        groups[v.index] = GroupVertex { index: v.index, capacitance: cs, esr: rs, scale };
    }
    WorstVertex { groups, grid_worst_ohm, bound_ohm, vertices, evaluated, method }
}

/// Past the exhaustive limit: from every group's first choice, one group at a time takes the choice that raises
/// the grid's worst most with the others held, until no change helps or the tries run out.
fn ascend(rail: &Rail, circuit: &mut PlacedCircuit, varied: &[Varied], freq_hz: &[f64]) -> (Vec<usize>, f64, u64) {
    let mut choice = vec![0; varied.len()];
    set_vertex(circuit, varied, &choice);
    let mut best = grid_worst(circuit, freq_hz, rail);
    let mut tries = 1;
    'rounds: loop {
        let mut changed = false;
        for d in 0..varied.len() {
            for c in 0..varied[d].choices.len() {
                if c == choice[d] {
                    continue;
                }
                if tries >= MAX_ASCENT_TRIES {
                    break 'rounds;
                }
                let mut trial = choice.clone();
                trial[d] = c;
                set_vertex(circuit, varied, &trial);
                let z = grid_worst(circuit, freq_hz, rail);
                tries += 1;
                if z > best {
                    best = z;
                    choice = trial;
                    changed = true;
                }
            }
        }
        if !changed {
            break;
        }
    }
    (choice, best, tries)
}

/// The rows of the search's system: fixed branches, the border, each varied group's ports in `varied` order,
/// the loads; and where each varied group's rows start.
fn search_rows(circuit: &PlacedCircuit, varied: &[Varied]) -> (Vec<Row>, Vec<usize>) {
    let is_varied = |b: usize| varied.iter().any(|v| v.ports.contains(&b));
    let mut rows: Vec<Row> = (0..circuit.branches.len()).filter(|&b| !is_varied(b)).map(Row::Branch).collect();
    rows.push(Row::Border);
    let mut starts = Vec::with_capacity(varied.len() + 1);
    for v in varied {
        starts.push(rows.len());
        rows.extend(v.ports.iter().map(|&p| Row::Branch(p)));
    }
    starts.push(rows.len());
    rows.extend((0..circuit.loads.len()).map(Row::Load));
    (rows, starts)
}

/// Every vertex's highest effective impedance (any load) over `freq_hz`, indexed in mixed radix (the first
/// varied group most significant).
fn every_vertex(rail: &Rail, circuit: &PlacedCircuit, varied: &[Varied], freq_hz: &[f64]) -> Vec<f64> {
    let leaves: usize = varied.iter().map(|v| v.choices.len()).product();
    let mut worst = vec![0.0f64; leaves];
    let (rows, starts) = search_rows(circuit, varied);
    let size = rows.len();
    let first_varied = starts[0];
    let mut tree = Tree {
        rail,
        circuit,
        varied,
        starts: &starts,
        size,
        levels: vec![Vec::new(); varied.len() + 1],
        col: Vec::new(),
        z: Vec::new(),
        freq: [0.0; BATCH],
        lanes_used: 0,
        worst: &mut worst,
    };
    for chunk in freq_hz.chunks(BATCH) {
        let f: [f64; BATCH] = std::array::from_fn(|l| chunk[l.min(chunk.len() - 1)]);
        let mut lanes: [LaneSetup<'_>; BATCH] = std::array::from_fn(|l| LaneSetup::new(circuit, f[l]));
        // The varied ports' branches enter at each choice; the fixed ones now.
        for lane in &mut lanes {
            for v in varied {
                for &p in &v.ports {
                    lane.branch[p] = C::new(0.0, 0.0);
                }
            }
        }
        circuit.fill(&rows, &lanes, &mut tree.levels[0]);
        eliminate_rows(&mut tree.levels[0], &mut tree.col, size, 0..first_varied);
        tree.z =
            varied.iter().map(|v| v.branch.iter().map(|b| Lanes::from_fn(|l| b.impedance(f[l]))).collect()).collect();
        tree.freq = f;
        tree.lanes_used = chunk.len();
        tree.walk(0, 0);
    }
    worst
}

/// The walk over the vertices at one batch of frequencies.
struct Tree<'a> {
    rail: &'a Rail,
    circuit: &'a PlacedCircuit,
    varied: &'a [Varied],
    starts: &'a [usize],
    size: usize,
    /// levels[d]: the system with the fixed rows and groups 0..d eliminated (at the choices being walked).
    levels: Vec<Vec<Lanes<BATCH>>>,
    col: Vec<Lanes<BATCH>>,
    /// z[d][c]: varied group d's branch impedance at choice c, per lane.
    z: Vec<Vec<Lanes<BATCH>>>,
    freq: [f64; BATCH],
    lanes_used: usize,
    worst: &'a mut [f64],
}

impl Tree<'_> {
    fn walk(&mut self, d: usize, index: usize) {
        if d == self.varied.len() {
            let pivots = self.size - self.circuit.loads.len();
            let step = self.rail.total_step_a();
            for l in 0..self.lanes_used {
                let m = self.circuit.load_matrix(self.freq[l], &self.levels[d], pivots, l);
                for z in effective(self.circuit, &m, self.rail.combine, step) {
                    let z = z.norm();
                    if z > self.worst[index] {
                        self.worst[index] = z;
                    }
                }
            }
            return;
        }
        let (from, to) = (self.starts[d], self.starts[d + 1]);
        for c in 0..self.varied[d].choices.len() {
            let (head, tail) = self.levels.split_at_mut(d + 1);
            let next = &mut tail[0];
            next.clone_from(&head[d]);
            for r in from..to {
                let k = row_start(r) + r;
                next[k] = next[k] + self.z[d][c];
            }
            eliminate_rows(next, &mut self.col, self.size, from..to);
            self.walk(d + 1, index * self.varied[d].choices.len() + c);
        }
    }
}
