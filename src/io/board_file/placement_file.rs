//! Reading a placed rail's fields: the plane pair, and the positions inside the source, groups and loads. On a
//! rail without `plane_pair` every position field is refused with the reason; on a rail with one, every position
//! is required. Stand-ins (NaN positions) keep indices aligned where something could not be read; the problem is
//! already recorded at its path.

use super::{Decoder, Fields, join};
use crate::model::{
    Die, GroupPlacement, GroupSpots, LoadPlacement, Package, PartSpot, PlanePair, Source, SourceLoop, SourcePlacement,
};
use serde_json::{Map, Value};

const NAN2: [f64; 2] = [f64::NAN; 2];

impl Decoder {
    /// Refuse the position fields of an object on a rail without a plane pair.
    fn refuse_positions(&mut self, f: &Fields, keys: &[&str]) {
        for k in keys {
            if f.map.contains_key(*k) {
                self.problem(
                    join(&f.path, k),
                    "a position belongs to a placed rail: give the rail a plane_pair, or leave this out",
                );
            }
        }
    }

    /// A required [x, y] position on a placed rail.
    fn position(&mut self, f: &Fields, key: &str, what: &str) -> [f64; 2] {
        match f.map.get(key) {
            Some(v) => self.pair(v, &join(&f.path, key), "[x_m, y_m]"),
            None => {
                self.problem(join(&f.path, key), format!("missing: on a rail with a plane_pair {what} gives at_m"));
                NAN2
            }
        }
    }

    /// The regulator's output and, on a placed rail, its port.
    pub(super) fn source(&mut self, value: &Value, path: &str, placed: bool) -> (Source, Option<SourcePlacement>) {
        let empty = Map::new();
        let f = self.sub_object(
            value,
            path,
            &["r_ohm", "l_h", "loop_crossover_hz", "loop_phase_margin_deg", "touchstone", "at_m", "port_m"],
            &empty,
        );
        if f.known.is_empty() {
            let spot = placed.then_some(SourcePlacement { at_m: NAN2, port_m: None });
            return (Source::rl(f64::NAN, f64::NAN), spot);
        }
        let source = if f.map.contains_key("touchstone") { self.measured_source(&f) } else { self.given_source(&f) };
        if !placed {
            self.refuse_positions(&f, &["at_m", "port_m"]);
            return (source, None);
        }
        let at_m = self.position(&f, "at_m", "the source");
        (source, Some(SourcePlacement { at_m, port_m: self.opt_number(&f, "port_m") }))
    }

    /// A source measured from a file: R, L and the loop come from the fit when the file is loaded, so giving any
    /// of them as well is refused (which of the two should hold would be a guess).
    fn measured_source(&mut self, f: &Fields) -> Source {
        for k in ["r_ohm", "l_h", "loop_crossover_hz", "loop_phase_margin_deg"] {
            if f.map.contains_key(k) {
                self.problem(
                    join(&f.path, k),
                    "a source gives its R, L and loop or a touchstone file of its measured output impedance, not \
                     both: the file's fit sets them",
                );
            }
        }
        let file = self.string(f, "touchstone");
        Source { touchstone: Some(file), ..Source::rl(f64::NAN, f64::NAN) }
    }

    /// A source given by its R, L and optionally its loop.
    fn given_source(&mut self, f: &Fields) -> Source {
        // The loop is given by both its numbers or neither.
        let control = match (f.map.contains_key("loop_crossover_hz"), f.map.contains_key("loop_phase_margin_deg")) {
            (false, false) => None,
            (true, true) => Some(SourceLoop {
                crossover_hz: self.number(f, "loop_crossover_hz"),
                phase_margin_deg: self.number(f, "loop_phase_margin_deg"),
            }),
            (has_crossover, _) => {
                let (given, missing) = if has_crossover {
                    ("loop_crossover_hz", "loop_phase_margin_deg")
                } else {
                    ("loop_phase_margin_deg", "loop_crossover_hz")
                };
                self.problem(
                    join(&f.path, missing),
                    format!("missing: a source's control loop needs both loop_crossover_hz and loop_phase_margin_deg (only {given} is given)"),
                );
                None
            }
        };
        Source { control, ..Source::rl(self.number(f, "r_ohm"), self.number(f, "l_h")) }
    }

    pub(super) fn load_stand_in(&mut self, placed: bool) -> Option<LoadPlacement> {
        placed.then_some(LoadPlacement { at_m: NAN2, pins_m: None, package: None, die: None })
    }

    pub(super) fn group_stand_in(&mut self, placed: bool) -> Option<GroupPlacement> {
        placed.then_some(GroupPlacement { spots: GroupSpots::At(NAN2), port_m: None })
    }

    /// A load's pins, package and die on a placed rail.
    pub(super) fn load_spot(&mut self, f: &Fields, placed: bool) -> Option<LoadPlacement> {
        if !placed {
            self.refuse_positions(f, &["at_m", "pins_m"]);
            for k in ["package", "die"] {
                if f.map.contains_key(k) {
                    self.problem(
                        join(&f.path, k),
                        format!("a load gives its own {k} only on a rail with a plane_pair: give it on the rail"),
                    );
                }
            }
            return None;
        }
        let at_m = self.position(f, "at_m", "every load");
        let pins_m = f.map.get("pins_m").map(|v| self.pair(v, &join(&f.path, "pins_m"), "[w_m, h_m]"));
        let package = f.map.get("package").map(|v| {
            let [r_ohm, l_h] = self.record(v, &join(&f.path, "package"), &["r_ohm", "l_h"]);
            Package { r_ohm, l_h }
        });
        let die = f.map.get("die").map(|v| {
            let [capacitance_f, esr_ohm] = self.record(v, &join(&f.path, "die"), &["capacitance_f", "esr_ohm"]);
            Die { capacitance_f, esr_ohm }
        });
        Some(LoadPlacement { at_m, pins_m, package, die })
    }

    /// A group's spot or its parts' spots on a placed rail.
    pub(super) fn group_spot(&mut self, f: &Fields, placed: bool) -> Option<GroupPlacement> {
        if !placed {
            self.refuse_positions(f, &["at_m", "placements", "port_m"]);
            return None;
        }
        let port_m = self.opt_number(f, "port_m");
        let spots = match (f.map.get("at_m"), f.map.get("placements")) {
            (Some(_), Some(_)) => {
                self.problem(
                    join(&f.path, "placements"),
                    "give at_m (every part at one spot) or placements (one per part), not both",
                );
                GroupSpots::At(NAN2)
            }
            (None, None) => {
                self.problem(
                    join(&f.path, "at_m"),
                    "missing: on a rail with a plane_pair every group gives at_m or placements",
                );
                GroupSpots::At(NAN2)
            }
            (Some(v), None) => GroupSpots::At(self.pair(v, &join(&f.path, "at_m"), "[x_m, y_m]")),
            (None, Some(v)) => {
                let path = join(&f.path, "placements");
                match v.as_array() {
                    Some(items) => GroupSpots::Each(
                        items
                            .iter()
                            .enumerate()
                            .map(|(i, item)| self.part_spot(item, &format!("{path}[{i}]")))
                            .collect(),
                    ),
                    None => {
                        self.problem(path, "must be an array of {\"ref\", \"at_m\"} objects");
                        GroupSpots::Each(Vec::new())
                    }
                }
            }
        };
        Some(GroupPlacement { spots, port_m })
    }

    fn part_spot(&mut self, value: &Value, path: &str) -> PartSpot {
        let empty = Map::new();
        let f = self.sub_object(value, path, &["ref", "at_m"], &empty);
        if f.known.is_empty() {
            return PartSpot { reference: String::new(), at_m: NAN2 };
        }
        let reference = self.string(&f, "ref");
        let at_m = match self.required(&f, "at_m") {
            Some(v) => self.pair(v, &join(path, "at_m"), "[x_m, y_m]"),
            None => NAN2,
        };
        PartSpot { reference, at_m }
    }

    /// The plane pair's outline and stack-up.
    pub(super) fn plane_pair(&mut self, value: &Value, path: &str) -> PlanePair {
        let empty = Map::new();
        let f = self.sub_object(
            value,
            path,
            &["size_m", "dielectric_m", "er", "loss_tangent", "copper_m", "conductivity_s_m"],
            &empty,
        );
        if f.known.is_empty() {
            return PlanePair {
                size_m: NAN2,
                dielectric_m: f64::NAN,
                er: f64::NAN,
                loss_tangent: None,
                copper_m: None,
                conductivity_s_m: None,
            };
        }
        let size_m = match self.required(&f, "size_m") {
            Some(v) => self.pair(v, &join(path, "size_m"), "[x_m, y_m]"),
            None => NAN2,
        };
        PlanePair {
            size_m,
            dielectric_m: self.number(&f, "dielectric_m"),
            er: self.number(&f, "er"),
            loss_tangent: self.opt_number(&f, "loss_tangent"),
            copper_m: self.opt_number(&f, "copper_m"),
            conductivity_s_m: self.opt_number(&f, "conductivity_s_m"),
        }
    }
}
