//! What the board map shows and how it moves things, as plain data: the items of a placed rail (regulator, loads,
//! parts) with their rectangles in metres, the map's transform between metres and screen points, which item is
//! under the pointer, and a rail with one item moved, added or taken out.

use crate::model::{GroupSpots, PartSpot, Placement, Rail};
use egui::{Pos2, Rect, Vec2, pos2, vec2};

/// One thing drawn on the map.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Thing {
    /// The regulator's port.
    Source,
    /// A load's pin field (index in the rail's loads).
    Load(usize),
    /// A decoupling part: its group and, for a group placed part by part, its index in the group's spots (`None`
    /// for a group whose parts all sit at one spot).
    Part {
        /// Index in the rail's decaps.
        group: usize,
        /// Index in the group's spots.
        spot: Option<usize>,
    },
}

/// A thing with where it sits.
#[derive(Debug, Clone, PartialEq)]
pub struct Item {
    /// What it is.
    pub thing: Thing,
    /// Centre, m.
    pub at_m: [f64; 2],
    /// Sides [w, h], m.
    pub size_m: [f64; 2],
    /// Its name on the map: the load's name, the part's reference designator, "regulator".
    pub label: String,
}

/// Every item of a placed rail, drawn in this order (loads first, parts last, so a part over a pin field stays
/// reachable).
pub fn items(rail: &Rail) -> Vec<Item> {
    let Some(p) = &rail.placement else { return Vec::new() };
    let mut out = Vec::new();
    for (k, (load, lp)) in rail.loads.iter().zip(&p.loads).enumerate() {
        let port = lp.port();
        out.push(Item { thing: Thing::Load(k), at_m: lp.at_m, size_m: [port.w, port.h], label: load.name.clone() });
    }
    if let Some(s) = &p.source {
        let port = s.port();
        out.push(Item { thing: Thing::Source, at_m: s.at_m, size_m: [port.w, port.h], label: "regulator".into() });
    }
    for (g, (group, gp)) in rail.decaps.iter().zip(&p.groups).enumerate() {
        let side = gp.port_side_m();
        match &gp.spots {
            GroupSpots::At(xy) => out.push(Item {
                thing: Thing::Part { group: g, spot: None },
                at_m: *xy,
                size_m: [side, side],
                label: format!("{} ×{}", group.part, group.count),
            }),
            GroupSpots::Each(spots) => {
                for (i, s) in spots.iter().enumerate() {
                    out.push(Item {
                        thing: Thing::Part { group: g, spot: Some(i) },
                        at_m: s.at_m,
                        size_m: [side, side],
                        label: s.reference.clone(),
                    });
                }
            }
        }
    }
    out
}

/// The map's transform: the plane of sides `size_m` drawn in `rect`, fitted with a margin, then zoomed by `zoom`
/// about the rect's centre and moved by `pan` points. y grows upwards (as a layout's coordinates do).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Transform {
    /// Points per metre.
    pub scale: f64,
    /// Where (0, 0) m is drawn.
    pub origin: Pos2,
}

/// Room left around the fitted plane, points.
const MARGIN: f32 = 28.0;

impl Transform {
    /// The transform that fits `size_m` in `rect`, zoomed and panned.
    pub fn fit(rect: Rect, size_m: [f64; 2], zoom: f32, pan: Vec2) -> Transform {
        let room = (rect.size() - vec2(2.0 * MARGIN, 2.0 * MARGIN)).max(vec2(10.0, 10.0));
        let fit = (room.x as f64 / size_m[0]).min(room.y as f64 / size_m[1]);
        let scale = fit * zoom as f64;
        let centre = rect.center() + pan;
        let origin = pos2(centre.x - (size_m[0] * scale / 2.0) as f32, centre.y + (size_m[1] * scale / 2.0) as f32);
        Transform { scale, origin }
    }

    /// A point in metres on the screen.
    pub fn to_screen(self, m: [f64; 2]) -> Pos2 {
        pos2(self.origin.x + (m[0] * self.scale) as f32, self.origin.y - (m[1] * self.scale) as f32)
    }

    /// A screen point in metres.
    pub fn to_metres(self, p: Pos2) -> [f64; 2] {
        [(p.x - self.origin.x) as f64 / self.scale, (self.origin.y - p.y) as f64 / self.scale]
    }

    /// An item's rectangle on the screen, at least `min_side` points a side (small parts stay visible and
    /// reachable).
    pub fn rect_of(&self, at_m: [f64; 2], size_m: [f64; 2], min_side: f32) -> Rect {
        let size =
            vec2(((size_m[0] * self.scale) as f32).max(min_side), ((size_m[1] * self.scale) as f32).max(min_side));
        Rect::from_center_size(self.to_screen(at_m), size)
    }
}

/// The smallest side an item is drawn with, points.
pub const MIN_SIDE: f32 = 9.0;

/// The topmost item under `pointer` (parts before the regulator before loads, the reverse of the drawing order).
pub fn hit(items: &[Item], t: &Transform, pointer: Pos2) -> Option<usize> {
    items
        .iter()
        .enumerate()
        .rev()
        .find(|(_, it)| t.rect_of(it.at_m, it.size_m, MIN_SIDE).contains(pointer))
        .map(|(i, _)| i)
}

/// A length for the scale bar: 1, 2 or 5 × 10^k m, the longest not over `max_m`.
pub fn scale_bar_m(max_m: f64) -> f64 {
    if !(max_m.is_finite() && max_m > 0.0) {
        return 1e-3;
    }
    let decade = 10f64.powf(max_m.log10().floor());
    [5.0, 2.0, 1.0].into_iter().map(|k| k * decade).find(|&l| l <= max_m).unwrap_or(decade)
}

/// `at_m` moved so that a port of sides `size_m` stays inside the plane of sides `plane_m`.
pub fn inside(at_m: [f64; 2], size_m: [f64; 2], plane_m: [f64; 2]) -> [f64; 2] {
    let clamp = |v: f64, half: f64, len: f64| if 2.0 * half >= len { len / 2.0 } else { v.clamp(half, len - half) };
    [clamp(at_m[0], size_m[0] / 2.0, plane_m[0]), clamp(at_m[1], size_m[1] / 2.0, plane_m[1])]
}

/// Position rounded to 0.01 mm (what a layout's grid resolves; it keeps files free of pointer noise).
fn rounded(at_m: [f64; 2]) -> [f64; 2] {
    at_m.map(|v| (v * 1e5).round() / 1e5)
}

/// `rail` with `thing` moved to `to_m` (kept inside the plane, rounded to 0.01 mm); with `whole_group`, every part
/// of a part's group moves by the same offset. `None` when the rail is not placed or the thing is not on it.
pub fn moved(rail: &Rail, thing: Thing, to_m: [f64; 2], whole_group: bool) -> Option<Rail> {
    let mut out = rail.clone();
    let p: &mut Placement = out.placement.as_mut()?;
    let plane = p.plane_pair.size_m;
    match thing {
        Thing::Source => {
            let s = p.source.as_mut()?;
            let side = s.port().w;
            s.at_m = rounded(inside(to_m, [side, side], plane));
        }
        Thing::Load(k) => {
            let lp = p.loads.get_mut(k)?;
            let port = lp.port();
            lp.at_m = rounded(inside(to_m, [port.w, port.h], plane));
        }
        Thing::Part { group, spot } => {
            let gp = p.groups.get_mut(group)?;
            let side = gp.port_side_m();
            match (&mut gp.spots, spot) {
                (GroupSpots::At(xy), _) => *xy = rounded(inside(to_m, [side, side], plane)),
                (GroupSpots::Each(spots), Some(i)) => {
                    let from = spots.get(i)?.at_m;
                    let target = rounded(inside(to_m, [side, side], plane));
                    if whole_group {
                        let d = [target[0] - from[0], target[1] - from[1]];
                        for s in spots.iter_mut() {
                            s.at_m = rounded(inside([s.at_m[0] + d[0], s.at_m[1] + d[1]], [side, side], plane));
                        }
                    } else {
                        spots[i].at_m = target;
                    }
                }
                (GroupSpots::Each(_), None) => return None,
            }
        }
    }
    Some(out)
}

/// The first `n` reference designators "C<n>" no part of `rail` uses.
fn free_references(rail: &Rail, n: usize) -> Vec<String> {
    let used: std::collections::HashSet<&str> = rail
        .placement
        .iter()
        .flat_map(|p| &p.groups)
        .filter_map(|g| match &g.spots {
            GroupSpots::Each(spots) => Some(spots.iter().map(|s| s.reference.as_str())),
            GroupSpots::At(_) => None,
        })
        .flatten()
        .collect();
    (1..).map(|k| format!("C{k}")).filter(|r| !used.contains(r.as_str())).take(n).collect()
}

/// `rail` with one more part of `group` at `at_m` (kept inside the plane), and its reference designator. A group
/// whose parts all sat at one spot is placed part by part from then on (its parts keep that spot, each with its
/// own designator). `None` when the rail is not placed or has no such group.
pub fn with_part_added(rail: &Rail, group: usize, at_m: [f64; 2]) -> Option<(Rail, String)> {
    let mut out = rail.clone();
    let count = out.decaps.get(group)?.count as usize;
    let p = out.placement.as_mut()?;
    let plane = p.plane_pair.size_m;
    let gp = p.groups.get_mut(group)?;
    let side = gp.port_side_m();
    let one_spot = match gp.spots {
        GroupSpots::At(xy) => Some(xy),
        GroupSpots::Each(_) => None,
    };
    let mut names = free_references(rail, if one_spot.is_some() { count + 1 } else { 1 });
    let reference = names.pop()?;
    if let Some(xy) = one_spot {
        gp.spots = GroupSpots::Each(names.into_iter().map(|r| PartSpot { reference: r, at_m: xy }).collect());
    }
    if let GroupSpots::Each(spots) = &mut gp.spots {
        spots.push(PartSpot { reference: reference.clone(), at_m: rounded(inside(at_m, [side, side], plane)) });
    }
    out.decaps[group].count = count as u32 + 1;
    Some((out, reference))
}

/// `rail` with one part of `thing`'s group taken out: the part itself for a group placed part by part, else one
/// of the parts at the group's spot. `None` when the group has no part left to take.
pub fn with_part_removed(rail: &Rail, thing: Thing) -> Option<Rail> {
    let Thing::Part { group, spot } = thing else { return None };
    let mut out = rail.clone();
    let count = out.decaps.get(group)?.count;
    if count == 0 {
        return None;
    }
    let gp = out.placement.as_mut()?.groups.get_mut(group)?;
    match (&mut gp.spots, spot) {
        (GroupSpots::Each(spots), Some(i)) if i < spots.len() => {
            spots.remove(i);
        }
        (GroupSpots::At(_), _) => {}
        _ => return None,
    }
    out.decaps[group].count = count - 1;
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Board, GroupPlacement};

    fn placed_rail() -> Rail {
        let text = include_str!("../../../tests/networks/placed/one_load.json");
        let board: Board = crate::io::parse_board(text, "one_load.json").expect("test network reads");
        board.rails[0].clone()
    }

    #[test]
    fn the_transform_round_trips_and_fits_the_plane() {
        let rect = Rect::from_min_size(pos2(10.0, 20.0), vec2(600.0, 400.0));
        let t = Transform::fit(rect, [0.04, 0.03], 1.0, Vec2::ZERO);
        for m in [[0.0, 0.0], [0.04, 0.03], [0.013, 0.021]] {
            let back = t.to_metres(t.to_screen(m));
            assert!((back[0] - m[0]).abs() < 1e-6 && (back[1] - m[1]).abs() < 1e-6);
        }
        // y grows upwards: the plane's top edge is drawn above its bottom edge, and the plane fits inside.
        assert!(t.to_screen([0.0, 0.03]).y < t.to_screen([0.0, 0.0]).y);
        assert!(rect.contains(t.to_screen([0.0, 0.0])) && rect.contains(t.to_screen([0.04, 0.03])));
    }

    #[test]
    fn scale_bar_lengths_are_round() {
        assert_eq!(scale_bar_m(0.013), 0.01);
        assert_eq!(scale_bar_m(0.0049), 0.002);
        assert_eq!(scale_bar_m(0.06), 0.05);
        assert_eq!(scale_bar_m(f64::NAN), 1e-3);
    }

    #[test]
    fn a_moved_part_stays_inside_the_plane_and_a_group_moves_together() {
        let rail = placed_rail();
        let part = Thing::Part { group: 1, spot: Some(0) };
        let out = moved(&rail, part, [1.0, -1.0], false).unwrap();
        let GroupSpots::Each(spots) = &out.placement.as_ref().unwrap().groups[1].spots else { panic!() };
        // A 2 mm port on a 40 mm × 30 mm plane: its centre at least 1 mm from every edge.
        assert_eq!(spots[0].at_m, [0.039, 0.001]);
        let whole = moved(&rail, part, [0.022, 0.016], true).unwrap();
        let GroupSpots::Each(after) = &whole.placement.as_ref().unwrap().groups[1].spots else { panic!() };
        let GroupSpots::Each(before) = &rail.placement.as_ref().unwrap().groups[1].spots else { panic!() };
        for (a, b) in after.iter().zip(before) {
            assert!((a.at_m[0] - b.at_m[0] - 0.001).abs() < 1e-9 && (a.at_m[1] - b.at_m[1] - 0.001).abs() < 1e-9);
        }
        assert!(crate::model::placement_problems(&whole, "rail").is_empty());
    }

    #[test]
    fn adding_and_taking_out_parts_keeps_counts_and_designators_right() {
        let rail = placed_rail();
        // Group 0 sits at one spot: adding a part places it part by part, every part with its own designator.
        let (added, reference) = with_part_added(&rail, 0, [0.03, 0.01]).unwrap();
        assert_eq!(added.decaps[0].count, rail.decaps[0].count + 1);
        let GroupSpots::Each(spots) = &added.placement.as_ref().unwrap().groups[0].spots else { panic!() };
        assert_eq!(spots.len() as u32, added.decaps[0].count);
        let names: std::collections::HashSet<&str> = spots.iter().map(|s| s.reference.as_str()).collect();
        assert_eq!(names.len(), spots.len(), "designators are distinct");
        assert!(!names.contains("C1") && !names.contains("C2"), "C1 and C2 are group 1's: {names:?}");
        assert_eq!(spots.last().unwrap().reference, reference);
        assert!(crate::model::placement_problems(&added, "rail").is_empty());

        let out = with_part_removed(&rail, Thing::Part { group: 1, spot: Some(0) }).unwrap();
        let GroupSpots::Each(left) = &out.placement.as_ref().unwrap().groups[1].spots else { panic!() };
        assert_eq!((out.decaps[1].count, left.len(), left[0].reference.as_str()), (1, 1, "C2"));
        let at_one = with_part_removed(&rail, Thing::Part { group: 0, spot: None }).unwrap();
        assert_eq!(at_one.decaps[0].count, rail.decaps[0].count - 1);
        assert!(matches!(
            at_one.placement.as_ref().unwrap().groups[0],
            GroupPlacement { spots: GroupSpots::At(_), .. }
        ));
    }

    #[test]
    fn the_topmost_item_is_hit() {
        let rail = placed_rail();
        let list = items(&rail);
        let t = Transform::fit(Rect::from_min_size(pos2(0.0, 0.0), vec2(800.0, 600.0)), [0.04, 0.03], 1.0, Vec2::ZERO);
        let c2 = list.iter().position(|it| it.label == "C2").unwrap();
        assert_eq!(hit(&list, &t, t.to_screen(list[c2].at_m)), Some(c2));
        assert_eq!(hit(&list, &t, t.to_screen([0.039, 0.001])), None);
    }
}
