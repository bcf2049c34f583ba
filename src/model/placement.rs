//! Where things sit on a placed rail: the plane pair under it, and the position and port of the regulator, every
//! decoupling part and every load. All lengths in metres, positions from the plane's lower-left corner.
//!
//! A rail is placed when it gives a `plane_pair`; then everything connected to it is placed. The positions live
//! beside the rail's lumped description (its source, groups and loads keep their own types), one entry per group
//! and per load in the same order.

use super::{Die, Package, Problem, Rail};
use crate::physics::plane_pair::{Conductor, PortRect, Stackup};
use crate::units::full_precision as num;

/// The side of the regulator's square port when the file does not give one, m (2 mm).
pub const DEFAULT_SOURCE_PORT_M: f64 = 2e-3;
/// The side of a part's square port when the file does not give one, m (0.5 mm: about a via and its pad).
pub const DEFAULT_PART_PORT_M: f64 = 0.5e-3;
/// The rectangle a load's power pins cover when the file does not give one, m (5 mm × 5 mm).
pub const DEFAULT_PINS_M: [f64; 2] = [5e-3, 5e-3];
/// Copper's conductivity when the file gives a copper thickness but no conductivity, S/m (annealed copper,
/// 5.8e7 S/m, the IACS reference).
pub const DEFAULT_CONDUCTIVITY_S_M: f64 = 5.8e7;

/// The plane pair as the board file gives it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlanePair {
    /// Sides [x, y], m; the lower-left corner is at (0, 0).
    pub size_m: [f64; 2],
    /// Dielectric thickness, m.
    pub dielectric_m: f64,
    /// Relative permittivity.
    pub er: f64,
    /// Loss tangent (absent: 0).
    pub loss_tangent: Option<f64>,
    /// Copper thickness of each plane, m (absent: no conductor loss).
    pub copper_m: Option<f64>,
    /// Conductivity, S/m (absent: [`DEFAULT_CONDUCTIVITY_S_M`]).
    pub conductivity_s_m: Option<f64>,
}

impl PlanePair {
    /// The stack-up the cavity model computes with.
    pub fn stackup(&self) -> Stackup {
        let conductor = match self.copper_m {
            Some(t) => Conductor::Foil {
                thickness_m: t,
                conductivity_s_m: self.conductivity_s_m.unwrap_or(DEFAULT_CONDUCTIVITY_S_M),
            },
            None => Conductor::Perfect,
        };
        Stackup {
            size_m: self.size_m,
            dielectric_m: self.dielectric_m,
            er: self.er,
            loss_tangent: self.loss_tangent.unwrap_or(0.0),
            conductor,
        }
    }
}

/// One part of a group at its own spot.
#[derive(Debug, Clone, PartialEq)]
pub struct PartSpot {
    /// Its reference designator, such as "C12".
    pub reference: String,
    /// Where it sits, m.
    pub at_m: [f64; 2],
}

/// Where a group's parts sit.
#[derive(Debug, Clone, PartialEq)]
pub enum GroupSpots {
    /// Every part of the group at this spot.
    At([f64; 2]),
    /// One spot per part (their number equals the group's count).
    Each(Vec<PartSpot>),
}

/// Where a decoupling group sits.
#[derive(Debug, Clone, PartialEq)]
pub struct GroupPlacement {
    /// Its parts' spots.
    pub spots: GroupSpots,
    /// The side of each part's square port, m (absent: [`DEFAULT_PART_PORT_M`]).
    pub port_m: Option<f64>,
}

impl GroupPlacement {
    /// The side of each part's port, m.
    pub fn port_side_m(&self) -> f64 {
        self.port_m.unwrap_or(DEFAULT_PART_PORT_M)
    }
}

/// Where the regulator connects to the plane pair.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SourcePlacement {
    /// Centre of its port, m.
    pub at_m: [f64; 2],
    /// The side of its square port, m (absent: [`DEFAULT_SOURCE_PORT_M`]).
    pub port_m: Option<f64>,
}

impl SourcePlacement {
    /// Its port on the plane.
    pub fn port(&self) -> PortRect {
        PortRect::square(self.at_m[0], self.at_m[1], self.port_m.unwrap_or(DEFAULT_SOURCE_PORT_M))
    }
}

/// Where a load draws its current, and what sits between its pins and its die.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LoadPlacement {
    /// Centre of its power pins, m.
    pub at_m: [f64; 2],
    /// The rectangle its power pins cover [w, h], m (absent: [`DEFAULT_PINS_M`]).
    pub pins_m: Option<[f64; 2]>,
    /// Its package between the pins and the die.
    pub package: Option<Package>,
    /// Its on-die capacitance (needs a package).
    pub die: Option<Die>,
}

impl LoadPlacement {
    /// Its port on the plane: the pin field.
    pub fn port(&self) -> PortRect {
        let [w, h] = self.pins_m.unwrap_or(DEFAULT_PINS_M);
        PortRect { x: self.at_m[0], y: self.at_m[1], w, h }
    }
}

/// Everything placed on a rail with a plane pair.
#[derive(Debug, Clone, PartialEq)]
pub struct Placement {
    /// The plane pair under the rail.
    pub plane_pair: PlanePair,
    /// The regulator's port (present exactly when the rail has a source).
    pub source: Option<SourcePlacement>,
    /// One per decap group, in the rail's order.
    pub groups: Vec<GroupPlacement>,
    /// One per load, in the rail's order.
    pub loads: Vec<LoadPlacement>,
}

impl Placement {
    /// A spot for new parts beside load `k`: just outside its pin field (the pin field's half side plus one
    /// part's port from its centre), on the side nearest the plane's middle where a part's port fits inside the
    /// outline; the pin field's centre when no side has room. `None` when there is no such load.
    pub fn beside_load(&self, k: usize) -> Option<[f64; 2]> {
        let pins = self.loads.get(k)?.port();
        let size = self.plane_pair.size_m;
        let (dx, dy) = (pins.w / 2.0 + DEFAULT_PART_PORT_M, pins.h / 2.0 + DEFAULT_PART_PORT_M);
        let mut sides = [[pins.x + dx, pins.y], [pins.x - dx, pins.y], [pins.x, pins.y + dy], [pins.x, pins.y - dy]];
        let middle = [size[0] / 2.0, size[1] / 2.0];
        let distance = |p: &[f64; 2]| (p[0] - middle[0]).hypot(p[1] - middle[1]);
        sides.sort_by(|a, b| distance(a).total_cmp(&distance(b)));
        let fits = |p: &[f64; 2]| spot_problem(*p, size).is_none();
        Some(sides.into_iter().find(fits).unwrap_or([pins.x, pins.y]))
    }
}

/// Why a new part's port (of the default side) cannot sit at `spot_m` on a plane pair of `size`, if it cannot.
pub fn spot_problem(spot_m: [f64; 2], size: [f64; 2]) -> Option<String> {
    port_problem(PortRect::square(spot_m[0], spot_m[1], DEFAULT_PART_PORT_M), size, "the spot for new parts")
}

/// The rules of a placed rail, each problem with its JSON path. `path` is the rail's path.
pub fn placement_problems(rail: &Rail, path: &str) -> Vec<Problem> {
    let mut out = Vec::new();
    let Some(p) = &rail.placement else { return out };
    let mut push = |at: String, why: String| out.push(Problem::new(at, why));
    let pp = &p.plane_pair;
    let pair_path = format!("{path}.plane_pair");
    if rail.plane.is_some() {
        push(
            format!("{path}.plane"),
            "a rail gives plane (lumped) or plane_pair (placed), not both: the plane pair replaces the lumped plane"
                .into(),
        );
    }
    for (what, present) in [("package", rail.package.is_some()), ("die", rail.die.is_some())] {
        if present {
            push(
                format!("{path}.{what}"),
                format!("on a rail with a plane_pair each load gives its own {what}: move it into the loads"),
            );
        }
    }
    let positive = |x: f64| x.is_finite() && x > 0.0;
    for (i, side) in pp.size_m.iter().enumerate() {
        if !positive(*side) {
            push(format!("{pair_path}.size_m[{i}]"), format!("must be a length greater than 0, not {}", num(*side)));
        }
    }
    if !positive(pp.dielectric_m) {
        push(format!("{pair_path}.dielectric_m"), format!("must be greater than 0, not {}", num(pp.dielectric_m)));
    } else if pp.size_m.iter().all(|s| positive(*s)) && pp.dielectric_m * 10.0 > pp.size_m[0].min(pp.size_m[1]) {
        push(
            format!("{pair_path}.dielectric_m"),
            "the cavity model needs a dielectric much thinner than the planes are wide (under a tenth of the \
             shorter side)"
                .into(),
        );
    }
    if !(pp.er.is_finite() && pp.er >= 1.0) {
        push(format!("{pair_path}.er"), format!("must be at least 1, not {}", num(pp.er)));
    }
    if let Some(t) = pp.loss_tangent
        && !(t.is_finite() && (0.0..1.0).contains(&t))
    {
        push(format!("{pair_path}.loss_tangent"), format!("must be from 0 to under 1, not {}", num(t)));
    }
    if let Some(t) = pp.copper_m
        && !positive(t)
    {
        push(format!("{pair_path}.copper_m"), format!("must be greater than 0, not {}", num(t)));
    }
    if let Some(s) = pp.conductivity_s_m {
        if !positive(s) {
            push(format!("{pair_path}.conductivity_s_m"), format!("must be greater than 0, not {}", num(s)));
        } else if pp.copper_m.is_none() {
            push(
                format!("{pair_path}.conductivity_s_m"),
                "a conductivity needs copper_m (the foil thickness) to give a conductor loss".into(),
            );
        }
    }
    let size = pp.size_m;
    match (&rail.source, &p.source) {
        (Some(_), Some(s)) => {
            if let Some(side) = s.port_m
                && !positive(side)
            {
                push(format!("{path}.source.port_m"), format!("must be greater than 0, not {}", num(side)));
            } else if let Some(why) = port_problem(s.port(), size, "the source") {
                push(format!("{path}.source.at_m"), why);
            }
        }
        (Some(_), None) => {
            push(format!("{path}.source.at_m"), "missing: on a rail with a plane_pair the source gives at_m".into())
        }
        (None, Some(_)) => push(format!("{path}.source"), "a source position without a source".into()),
        (None, None) => {}
    }
    if p.groups.len() != rail.decaps.len() {
        push(
            format!("{path}.decaps"),
            format!(
                "on a rail with a plane_pair every group is placed: {} groups but {} placements",
                rail.decaps.len(),
                p.groups.len()
            ),
        );
    }
    for (i, (g, gp)) in rail.decaps.iter().zip(&p.groups).enumerate() {
        let at = format!("{path}.decaps[{i}]");
        let side = gp.port_side_m();
        if !positive(side) {
            push(format!("{at}.port_m"), format!("must be greater than 0, not {}", num(side)));
            continue;
        }
        match &gp.spots {
            GroupSpots::At(xy) => {
                if let Some(why) =
                    port_problem(PortRect::square(xy[0], xy[1], side), size, &format!("group {}", g.part))
                {
                    push(format!("{at}.at_m"), why);
                }
            }
            GroupSpots::Each(spots) => {
                if spots.len() != g.count as usize {
                    push(
                        format!("{at}.count"),
                        format!(
                            "must equal the number of placements ({}), not {}: each placed part is one of the group",
                            spots.len(),
                            g.count
                        ),
                    );
                }
                for (k, s) in spots.iter().enumerate() {
                    if s.reference.trim().is_empty() {
                        push(format!("{at}.placements[{k}].ref"), "reference designator must not be empty".into());
                    }
                    let port = PortRect::square(s.at_m[0], s.at_m[1], side);
                    if let Some(why) = port_problem(port, size, &format!("part {}", s.reference)) {
                        push(format!("{at}.placements[{k}].at_m"), why);
                    }
                }
            }
        }
    }
    if p.loads.len() != rail.loads.len() {
        push(
            format!("{path}.loads"),
            format!(
                "on a rail with a plane_pair every load is placed: {} loads but {} placements",
                rail.loads.len(),
                p.loads.len()
            ),
        );
    }
    for (i, (l, lp)) in rail.loads.iter().zip(&p.loads).enumerate() {
        let at = format!("{path}.loads[{i}]");
        if let Some(why) = port_problem(lp.port(), size, &format!("load {}", l.name)) {
            let field = if lp.pins_m.is_some_and(|[w, h]| !(positive(w) && positive(h))) { "pins_m" } else { "at_m" };
            push(format!("{at}.{field}"), why);
        }
        if let Some(pk) = lp.package {
            for (f, v) in [("r_ohm", pk.r_ohm), ("l_h", pk.l_h)] {
                if !(v.is_finite() && v >= 0.0) {
                    push(format!("{at}.package.{f}"), format!("must be a finite number >= 0, not {}", num(v)));
                }
            }
        }
        if let Some(d) = lp.die {
            if !positive(d.capacitance_f) {
                push(
                    format!("{at}.die.capacitance_f"),
                    format!("must be greater than 0, not {}", num(d.capacitance_f)),
                );
            }
            if !(d.esr_ohm.is_finite() && d.esr_ohm >= 0.0) {
                push(format!("{at}.die.esr_ohm"), format!("must be a finite number >= 0, not {}", num(d.esr_ohm)));
            }
            if lp.package.is_none() {
                push(format!("{at}.die"), "a die needs a package to connect it to the board: give package".into());
            }
        }
    }
    out
}

/// Why a port does not fit the plane pair of sides `size`, if it does not: a port must lie inside the outline (the
/// cavity model has no current crossing the edge).
fn port_problem(port: PortRect, size: [f64; 2], what: &str) -> Option<String> {
    if !(port.w.is_finite() && port.w > 0.0 && port.h.is_finite() && port.h > 0.0) {
        return Some(format!("{what}: its port sides must be greater than 0"));
    }
    if !(port.x.is_finite() && port.y.is_finite()) {
        return Some(format!("{what}: the position must be two finite numbers"));
    }
    if !size.iter().all(|s| s.is_finite() && *s > 0.0) {
        // The outline itself is wrong; that problem is reported at the plane pair.
        return None;
    }
    let fits = port.x - port.w / 2.0 >= 0.0
        && port.x + port.w / 2.0 <= size[0]
        && port.y - port.h / 2.0 >= 0.0
        && port.y + port.h / 2.0 <= size[1];
    (!fits).then(|| {
        format!(
            "{what} at ({} m, {} m) with a port of {} m × {} m crosses the plane pair's edge (0..{} m, 0..{} m)",
            num(port.x),
            num(port.y),
            num(port.w),
            num(port.h),
            num(size[0]),
            num(size[1])
        )
    })
}

/// Gap between a load's pin field and the first ring of parts around it, and between rings, m (1.5 mm: room for
/// a 0402 part and its pads, common practice).
const RING_GAP_M: f64 = 1.5e-3;

/// A lumped rail placed on `plane_pair` in a starting arrangement the user then moves: the loads spread along the
/// plane's middle line, the regulator at its left edge, every part of every group placed part by part (reference
/// designators C1, C2, … in the rail's order) on rings around the loads, taken in turn, each part inside the
/// outline. The lumped plane goes (the plane pair replaces it); the rail's package and die go to every load (on a
/// rail with one load exactly what it was; with several, each load is given the one package the rail described).
/// A placed rail is returned as it is. Err when the result breaks a rule of placed rails (a plane too small for
/// the loads' pin fields).
pub fn starting_placement(rail: &Rail, plane_pair: PlanePair) -> Result<Rail, String> {
    if rail.placement.is_some() {
        return Ok(rail.clone());
    }
    let [a, b] = plane_pair.size_m;
    let mut out = rail.clone();
    out.plane = None;
    let (package, die) = (out.package.take(), out.die.take());
    let n = rail.loads.len().max(1) as f64;
    let loads: Vec<LoadPlacement> = (0..rail.loads.len())
        .map(|k| LoadPlacement { at_m: [a * (k as f64 + 1.0) / (n + 1.0), b / 2.0], pins_m: None, package, die })
        .collect();
    let source = rail
        .source
        .as_ref()
        .map(|_| SourcePlacement { at_m: [(DEFAULT_SOURCE_PORT_M / 2.0 + 1e-3).min(a / 2.0), b / 2.0], port_m: None });
    // Every part's spot: rings around the loads in turn; a ring holds as many parts as fit on its perimeter.
    let centres: Vec<[f64; 2]> =
        if loads.is_empty() { vec![[a / 2.0, b / 2.0]] } else { loads.iter().map(|l| l.at_m).collect() };
    let mut taken = vec![0usize; centres.len()];
    let mut next_spot = |which: usize| -> [f64; 2] {
        let c = centres[which];
        let mut index = taken[which];
        taken[which] += 1;
        let mut radius = DEFAULT_PINS_M[0].max(DEFAULT_PINS_M[1]) / 2.0 + RING_GAP_M;
        loop {
            let fits = ((std::f64::consts::TAU * radius) / (2.0 * DEFAULT_PART_PORT_M + RING_GAP_M)).floor().max(4.0);
            let fits = fits as usize;
            if index < fits {
                let angle = std::f64::consts::TAU * index as f64 / fits as f64;
                let half = DEFAULT_PART_PORT_M / 2.0;
                let x = (c[0] + radius * angle.cos()).clamp(half, a - half);
                let y = (c[1] + radius * angle.sin()).clamp(half, b - half);
                return [x, y];
            }
            index -= fits;
            radius += RING_GAP_M + DEFAULT_PART_PORT_M;
        }
    };
    let mut number = 0usize;
    let mut turn = 0usize;
    let groups = rail
        .decaps
        .iter()
        .map(|g| {
            let spots: Vec<PartSpot> = (0..g.count)
                .map(|_| {
                    number += 1;
                    let which = turn % centres.len();
                    turn += 1;
                    PartSpot { reference: format!("C{number}"), at_m: next_spot(which) }
                })
                .collect();
            let spots = if spots.is_empty() { GroupSpots::At(next_spot(0)) } else { GroupSpots::Each(spots) };
            GroupPlacement { spots, port_m: None }
        })
        .collect();
    out.placement = Some(Placement { plane_pair, source, groups, loads });
    match placement_problems(&out, "rail").into_iter().next() {
        Some(p) => Err(format!("{}: {}", p.path, p.reason)),
        None => Ok(out),
    }
}
