//! How a rail is written to a board file. A lumped rail is written exactly as it always was; a placed rail adds its
//! `plane_pair` after `plane`, and the position fields inside its source, groups and loads.

use super::{DecapGroup, GroupPlacement, GroupSpots, Load, LoadPlacement, Rail, SourcePlacement};
use serde::ser::SerializeMap;
use serde::{Serialize, Serializer};

impl Serialize for Rail {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut m = serializer.serialize_map(None)?;
        m.serialize_entry("name", &self.name)?;
        m.serialize_entry("voltage_v", &self.voltage_v)?;
        m.serialize_entry("ripple_pct", &self.ripple_pct)?;
        if let Some(b) = &self.band_hz {
            m.serialize_entry("band_hz", b)?;
        }
        if !self.combine.is_sum() {
            m.serialize_entry("combine", &self.combine)?;
        }
        let placed = self.placement.as_ref();
        if let Some(s) = &self.source {
            m.serialize_entry("source", &SourceFile { source: s, at: placed.and_then(|p| p.source.as_ref()) })?;
        }
        if let Some(p) = &self.plane {
            m.serialize_entry("plane", p)?;
        }
        if let Some(p) = placed {
            m.serialize_entry("plane_pair", &PlanePairFile(&p.plane_pair))?;
        }
        if let Some(p) = &self.package {
            m.serialize_entry("package", p)?;
        }
        if let Some(d) = &self.die {
            m.serialize_entry("die", d)?;
        }
        let loads: Vec<LoadFile> = self
            .loads
            .iter()
            .enumerate()
            .map(|(i, load)| LoadFile { load, at: placed.and_then(|p| p.loads.get(i)) })
            .collect();
        m.serialize_entry("loads", &loads)?;
        let decaps: Vec<GroupFile> = self
            .decaps
            .iter()
            .enumerate()
            .map(|(i, group)| GroupFile { group, at: placed.and_then(|p| p.groups.get(i)) })
            .collect();
        m.serialize_entry("decaps", &decaps)?;
        m.end()
    }
}

struct SourceFile<'a> {
    source: &'a super::Source,
    at: Option<&'a SourcePlacement>,
}

impl Serialize for SourceFile<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut m = serializer.serialize_map(None)?;
        if let Some(file) = &self.source.touchstone {
            // A measured source's R, L and loop are its file's fit: the file is written, never the fit.
            m.serialize_entry("touchstone", file)?;
        } else {
            m.serialize_entry("r_ohm", &self.source.r_ohm)?;
            m.serialize_entry("l_h", &self.source.l_h)?;
            if let Some(c) = self.source.control {
                m.serialize_entry("loop_crossover_hz", &c.crossover_hz)?;
                m.serialize_entry("loop_phase_margin_deg", &c.phase_margin_deg)?;
            }
        }
        if let Some(at) = self.at {
            m.serialize_entry("at_m", &at.at_m)?;
            if let Some(p) = at.port_m {
                m.serialize_entry("port_m", &p)?;
            }
        }
        m.end()
    }
}

struct PlanePairFile<'a>(&'a super::PlanePair);

impl Serialize for PlanePairFile<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let p = self.0;
        let mut m = serializer.serialize_map(None)?;
        m.serialize_entry("size_m", &p.size_m)?;
        m.serialize_entry("dielectric_m", &p.dielectric_m)?;
        m.serialize_entry("er", &p.er)?;
        for (k, v) in
            [("loss_tangent", p.loss_tangent), ("copper_m", p.copper_m), ("conductivity_s_m", p.conductivity_s_m)]
        {
            if let Some(v) = v {
                m.serialize_entry(k, &v)?;
            }
        }
        m.end()
    }
}

struct LoadFile<'a> {
    load: &'a Load,
    at: Option<&'a LoadPlacement>,
}

impl Serialize for LoadFile<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut m = serializer.serialize_map(None)?;
        m.serialize_entry("name", &self.load.name)?;
        m.serialize_entry("step_a", &self.load.step_a)?;
        if let Some(t) = self.load.rise_time_s {
            m.serialize_entry("rise_time_s", &t)?;
        }
        if let Some(at) = self.at {
            m.serialize_entry("at_m", &at.at_m)?;
            if let Some(p) = &at.pins_m {
                m.serialize_entry("pins_m", p)?;
            }
            if let Some(p) = &at.package {
                m.serialize_entry("package", p)?;
            }
            if let Some(d) = &at.die {
                m.serialize_entry("die", d)?;
            }
        }
        m.end()
    }
}

struct GroupFile<'a> {
    group: &'a DecapGroup,
    at: Option<&'a GroupPlacement>,
}

impl Serialize for GroupFile<'_> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let g = self.group;
        let mut m = serializer.serialize_map(None)?;
        m.serialize_entry("part", &g.part)?;
        m.serialize_entry("count", &g.count)?;
        match &g.mounting {
            Some(geo) => m.serialize_entry("mounting", geo)?,
            None => m.serialize_entry("mounting_h", &g.mounting_h)?,
        }
        if let Some(at) = self.at {
            match &at.spots {
                GroupSpots::At(xy) => m.serialize_entry("at_m", xy)?,
                GroupSpots::Each(spots) => {
                    let list: Vec<serde_json::Value> =
                        spots.iter().map(|s| serde_json::json!({"ref": s.reference, "at_m": s.at_m})).collect();
                    m.serialize_entry("placements", &list)?;
                }
            }
            if let Some(p) = at.port_m {
                m.serialize_entry("port_m", &p)?;
            }
        }
        m.end()
    }
}
