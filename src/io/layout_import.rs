//! Placing a rail from the layout's exports: the placement file's positions given to the rail's decoupling
//! groups, loads and regulator, matched by reference designator.
//!
//! - A group's designators come from the BOM (a line whose part column or value names the group's part id, or
//!   whose value is the group's capacitance, told apart by footprint and case when several groups share it), else
//!   from the `ref` fields the group already has. The group's count becomes the number of its designators found
//!   in the placement file, each part at its own spot.
//! - A load is matched when the first word of its name is a designator ("U1" or "U1 core"); the regulator by
//!   the designator given for it.
//! - Positions are moved by the origin (the layout coordinates of the plane pair's lower-left corner), taken as
//!   seen from the top; every one must lie on the plane pair.
//!
//! A lumped rail becomes placed with the plane pair given (its lumped plane capacitance is replaced by it);
//! something left without a position is an error, never a guess.

use super::bom_csv::BomEntry;
use super::centroid::{Centroid, PlacedPart};
use crate::model::{
    Board, GroupPlacement, GroupSpots, LoadPlacement, PartSpot, Placement, PlanePair, SourcePlacement, validate_board,
};
use std::collections::{BTreeSet, HashMap};

/// What the placing takes besides the files.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ImportOptions {
    /// The layout coordinates of the plane pair's lower-left corner, m.
    pub origin_m: [f64; 2],
    /// The regulator's designator.
    pub regulator: Option<String>,
    /// The plane pair, for a rail that has none yet.
    pub plane_pair: Option<PlanePair>,
}

/// How one group was matched.
#[derive(Debug, Clone, PartialEq)]
pub struct GroupMatch {
    /// The group's index on the rail.
    pub group: usize,
    /// Its part id.
    pub part: String,
    /// Its designators found in the placement file.
    pub placed: Vec<String>,
    /// Its count before.
    pub count_before: u32,
    /// Where its designators came from: "the BOM (line 4)", "its ref fields".
    pub from: String,
}

/// What the placing did and what it could not use.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ImportReport {
    /// Each group placed.
    pub groups: Vec<GroupMatch>,
    /// Groups left as they were placed before (no designator of theirs in the files).
    pub kept: Vec<String>,
    /// Each load placed, with its designator.
    pub loads: Vec<(String, String)>,
    /// The regulator's designator, when placed.
    pub regulator: Option<String>,
    /// Designators a group or the BOM names that the placement file does not have.
    pub not_in_layout: Vec<String>,
    /// BOM lines no group of the rail uses (other parts of the board), by line.
    pub unused_bom: Vec<(usize, String)>,
    /// Parts of the placement file nothing on the rail uses.
    pub unused_parts: usize,
}

/// Place rail `rail_index` of `board` from a placement file and an optional BOM. Every problem is returned at
/// once, each a sentence.
pub fn place_rail(
    board: &Board,
    rail_index: usize,
    centroid: &Centroid,
    bom: Option<&[BomEntry]>,
    options: &ImportOptions,
) -> Result<(Board, ImportReport), Vec<String>> {
    let mut out = board.clone();
    let mut problems = Vec::new();
    let mut report = ImportReport::default();
    let Some(rail) = out.rails.get_mut(rail_index) else { return Err(vec!["no such rail".into()]) };
    let by_ref: HashMap<&str, &PlacedPart> = centroid.parts.iter().map(|p| (p.reference.as_str(), p)).collect();
    let mut used: BTreeSet<String> = BTreeSet::new();

    if rail.placement.is_none() {
        let Some(plane_pair) = options.plane_pair else {
            return Err(vec![format!(
                "rail {} is not placed yet: give its plane pair (--size, --dielectric, --er)",
                rail.name
            )]);
        };
        for (what, present) in [("package", rail.package.is_some()), ("die", rail.die.is_some())] {
            if present {
                problems.push(format!(
                    "rail {} gives a rail-level {what}; on a placed rail each load carries its own: move it to the \
                     loads first",
                    rail.name
                ));
            }
        }
        rail.plane = None;
        rail.placement = Some(Placement { plane_pair, source: None, groups: Vec::new(), loads: Vec::new() });
    }
    let Some(old) = rail.placement.clone() else { return Err(vec!["the rail has no plane pair".into()]) };
    let size = old.plane_pair.size_m;
    let local = |p: &PlacedPart| [p.at_m[0] - options.origin_m[0], p.at_m[1] - options.origin_m[1]];
    let on_plane = |p: &PlacedPart, problems: &mut Vec<String>| {
        let at = local(p);
        let inside = (0.0..=size[0]).contains(&at[0]) && (0.0..=size[1]).contains(&at[1]);
        if !inside {
            problems.push(format!(
                "{} (line {}) at ({:.2} mm, {:.2} mm) from the plane's corner is off the {:.1} mm × {:.1} mm plane \
                 pair: check --origin and the units",
                p.reference,
                p.line,
                at[0] * 1e3,
                at[1] * 1e3,
                size[0] * 1e3,
                size[1] * 1e3
            ));
        }
        at
    };

    // Designators per group: from the BOM, else from the group's ref fields.
    let mut designators: Vec<Option<(Vec<String>, String)>> = vec![None; rail.decaps.len()];
    if let Some(bom) = bom {
        for entry in bom {
            let matches = matching_groups(board, &rail.decaps, entry);
            match matches.as_slice() {
                [] => report.unused_bom.push((entry.line, entry.designators.join(", "))),
                [g] => {
                    let slot = designators[*g].get_or_insert_with(|| (Vec::new(), String::new()));
                    slot.0.extend(entry.designators.iter().cloned());
                    let line = format!("line {}", entry.line);
                    slot.1 =
                        if slot.1.is_empty() { format!("the BOM ({line})") } else { format!("{}, {line}", slot.1) };
                }
                many => problems.push(format!(
                    "BOM line {} ({}) fits groups {} alike: give the part id in its part column",
                    entry.line,
                    entry.value.as_deref().unwrap_or("no value"),
                    many.iter().map(|g| format!("{} ({})", g + 1, rail.decaps[*g].part)).collect::<Vec<_>>().join(", ")
                )),
            }
        }
    }
    for (g, slot) in designators.iter_mut().enumerate() {
        if slot.is_none()
            && let Some(GroupPlacement { spots: GroupSpots::Each(spots), .. }) = old.groups.get(g)
        {
            *slot = Some((spots.iter().map(|s| s.reference.clone()).collect(), "its ref fields".into()));
        }
    }
    let mut groups = Vec::with_capacity(rail.decaps.len());
    for (g, group) in rail.decaps.iter_mut().enumerate() {
        let found: Vec<&PlacedPart> = designators[g]
            .as_ref()
            .map(|(refs, _)| {
                refs.iter()
                    .filter_map(|r| match by_ref.get(r.as_str()) {
                        Some(p) => Some(*p),
                        None => {
                            report.not_in_layout.push(r.clone());
                            None
                        }
                    })
                    .collect()
            })
            .unwrap_or_default();
        if found.is_empty() {
            match old.groups.get(g) {
                Some(kept) => {
                    report.kept.push(format!("group {} ({})", g + 1, group.part));
                    groups.push(kept.clone());
                }
                None => problems.push(format!(
                    "group {} ({}) has no designator in the placement file: give a BOM (--bom) that lists its \
                     parts, or ref fields",
                    g + 1,
                    group.part
                )),
            }
            continue;
        }
        let spots = found
            .iter()
            .map(|p| {
                used.insert(p.reference.clone());
                PartSpot { reference: p.reference.clone(), at_m: on_plane(p, &mut problems) }
            })
            .collect::<Vec<_>>();
        report.groups.push(GroupMatch {
            group: g,
            part: group.part.clone(),
            placed: spots.iter().map(|s| s.reference.clone()).collect(),
            count_before: group.count,
            from: designators[g].as_ref().map_or_else(String::new, |d| d.1.clone()),
        });
        group.count = spots.len() as u32;
        let port_m = old.groups.get(g).and_then(|p| p.port_m);
        groups.push(GroupPlacement { spots: GroupSpots::Each(spots), port_m });
    }

    let mut loads = Vec::with_capacity(rail.loads.len());
    for (k, load) in rail.loads.iter().enumerate() {
        let designator = load.name.split_whitespace().next().unwrap_or_default();
        let before = old.loads.get(k).copied();
        match by_ref.get(designator) {
            Some(p) => {
                used.insert(p.reference.clone());
                report.loads.push((load.name.clone(), p.reference.clone()));
                let at_m = on_plane(p, &mut problems);
                loads.push(match before {
                    Some(b) => LoadPlacement { at_m, ..b },
                    None => LoadPlacement { at_m, pins_m: None, package: None, die: None },
                });
            }
            None => match before {
                Some(b) => loads.push(b),
                None => problems.push(format!(
                    "load \"{}\" is not in the placement file: name it after its chip's designator (\"U1\" or \"U1 \
                     core\")",
                    load.name
                )),
            },
        }
    }
    let source = match (&rail.source, &options.regulator) {
        (None, _) => None,
        (Some(_), Some(r)) => match by_ref.get(r.as_str()) {
            Some(p) => {
                used.insert(p.reference.clone());
                report.regulator = Some(p.reference.clone());
                let at_m = on_plane(p, &mut problems);
                Some(SourcePlacement { at_m, port_m: old.source.and_then(|s| s.port_m) })
            }
            None => {
                problems.push(format!("the regulator's designator {r} is not in the placement file"));
                None
            }
        },
        (Some(_), None) => old.source.or_else(|| {
            problems.push("the rail's regulator has no position: give its designator (--regulator)".into());
            None
        }),
    };
    report.unused_parts = centroid.parts.iter().filter(|p| !used.contains(&p.reference)).count();
    rail.placement = Some(Placement { plane_pair: old.plane_pair, source, groups, loads });
    if problems.is_empty() {
        problems.extend(validate_board(&out).into_iter().map(|p| format!("{}: {}", p.path, p.reason)));
    }
    if problems.is_empty() { Ok((out, report)) } else { Err(problems) }
}

/// The groups a BOM line fits: by part id in its part or value column; else by capacitance, then by footprint.
fn matching_groups(board: &Board, groups: &[crate::model::DecapGroup], entry: &BomEntry) -> Vec<usize> {
    let names = [entry.part.as_deref(), entry.value.as_deref()];
    let by_id: Vec<usize> = (0..groups.len())
        .filter(|&g| names.iter().flatten().any(|n| n.eq_ignore_ascii_case(&groups[g].part)))
        .collect();
    if !by_id.is_empty() {
        return by_id;
    }
    let Some(value) = entry.value.as_deref().and_then(capacitance_of) else { return Vec::new() };
    let by_value: Vec<usize> = (0..groups.len())
        .filter(|&g| {
            board.part(&groups[g].part).is_some_and(|p| (p.capacitance_f - value).abs() <= 5e-3 * p.capacitance_f)
        })
        .collect();
    if by_value.len() < 2 {
        return by_value;
    }
    let footprint = entry.footprint.as_deref().unwrap_or_default().to_lowercase();
    let by_case: Vec<usize> = by_value
        .iter()
        .copied()
        .filter(|&g| {
            board
                .part(&groups[g].part)
                .and_then(|p| p.case.as_deref())
                .is_some_and(|c| footprint.contains(&c.to_lowercase()))
        })
        .collect();
    if by_case.is_empty() { by_value } else { by_case }
}

/// A capacitance as BOMs write it: "100n", "100nF", "0.1uF", "4u7", "10 µF".
fn capacitance_of(value: &str) -> Option<f64> {
    let v = value.trim();
    let v = v.strip_suffix('F').or_else(|| v.strip_suffix('f')).unwrap_or(v);
    crate::units::parse(v, crate::units::Unit::Farad).ok().filter(|c| *c > 0.0 && c.is_finite())
}

/// What a placing matched and what it could not use, one line each, in the words every face shows.
pub fn report_lines(report: &ImportReport) -> Vec<String> {
    let mut out = Vec::new();
    for g in &report.groups {
        let count = if g.count_before as usize == g.placed.len() {
            String::new()
        } else {
            format!(" (count {} -> {}, as the layout has them)", g.count_before, g.placed.len())
        };
        out.push(format!("group {} {}: {} from {}{count}", g.group + 1, g.part, g.placed.join(", "), g.from));
    }
    for k in &report.kept {
        out.push(format!("{k}: no designator of its in the files; kept where it was"));
    }
    for (name, r) in &report.loads {
        out.push(format!("load {name}: {r}"));
    }
    if let Some(r) = &report.regulator {
        out.push(format!("regulator: {r}"));
    }
    if !report.not_in_layout.is_empty() {
        out.push(format!("not in the placement file: {}", report.not_in_layout.join(", ")));
    }
    for (line, refs) in &report.unused_bom {
        out.push(format!("BOM line {line} ({refs}) is not a group of this rail"));
    }
    out.push(format!("{} other parts of the placement file are not on this rail", report.unused_parts));
    out
}
