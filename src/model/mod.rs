//! Plain data: the board, its parts and its rails, and the rules a board must keep.
//!
//! Everything here is in SI base units (F, Ω, H, Hz, V, A, s). Nothing here touches files, the window or the
//! command line; reading and writing board files lives in `io`.

mod validate;

pub use validate::{Problem, validate_board, validate_part, validate_rail};

use serde::Serialize;

/// The document: parts plus rails.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Board {
    /// A human name for the board.
    pub name: String,
    /// Free text: what the board is, where its values come from.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub description: Option<String>,
    /// Capacitor models the rails' decap groups refer to by id.
    pub parts: Vec<Part>,
    /// Supply nets.
    pub rails: Vec<Rail>,
}

/// What a part is made of; decides which cautions and derating apply.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum PartKind {
    /// Multilayer ceramic.
    Ceramic,
    /// Polymer (aluminium or tantalum polymer).
    Polymer,
    /// Tantalum (MnO2).
    Tantalum,
    /// Aluminium electrolytic.
    Electrolytic,
    /// Film.
    Film,
    /// Anything else.
    Other,
}

impl PartKind {
    /// Every kind, in the order shown to people.
    pub const ALL: [PartKind; 6] = [
        PartKind::Ceramic,
        PartKind::Polymer,
        PartKind::Tantalum,
        PartKind::Electrolytic,
        PartKind::Film,
        PartKind::Other,
    ];

    /// The word used in board files and on screen.
    pub fn name(self) -> &'static str {
        match self {
            PartKind::Ceramic => "ceramic",
            PartKind::Polymer => "polymer",
            PartKind::Tantalum => "tantalum",
            PartKind::Electrolytic => "electrolytic",
            PartKind::Film => "film",
            PartKind::Other => "other",
        }
    }

    /// The kind named by a board file's word, if any.
    pub fn from_name(name: &str) -> Option<PartKind> {
        PartKind::ALL.into_iter().find(|k| k.name() == name)
    }

    /// True for kinds that must see a known DC direction (reverse voltage destroys them).
    pub fn is_polarised(self) -> bool {
        matches!(self, PartKind::Polymer | PartKind::Tantalum | PartKind::Electrolytic)
    }
}

/// One capacitor model: a series R-L-C with its ratings.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Part {
    /// Unique id within the board, referred to by decap groups.
    pub id: String,
    /// Construction.
    pub kind: PartKind,
    /// Capacitance, F.
    pub capacitance_f: f64,
    /// Equivalent series resistance, Ω.
    pub esr_ohm: f64,
    /// Equivalent series inductance of the part itself, H (mounting comes on top, per group).
    pub esl_h: f64,
    /// Rated voltage, V.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rated_voltage_v: Option<f64>,
    /// Case size code, such as "0402".
    #[serde(skip_serializing_if = "Option::is_none")]
    pub case: Option<String>,
    /// Dielectric class, such as "X7R".
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dielectric: Option<String>,
    /// Cost of one part, in the board's currency.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unit_cost: Option<f64>,
}

/// One supply net and everything that loads and decouples it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Rail {
    /// Unique name within the board.
    pub name: String,
    /// Nominal voltage, V.
    pub voltage_v: f64,
    /// Allowed ripple, percent of the voltage.
    pub ripple_pct: f64,
    /// Frequency range where the target applies, Hz: [low, high].
    pub band_hz: [f64; 2],
    /// The regulator's output model.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub source: Option<Source>,
    /// The power/ground plane pair.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub plane: Option<Plane>,
    /// Current steps drawn from the rail.
    pub loads: Vec<Load>,
    /// Decoupling capacitor groups.
    pub decaps: Vec<DecapGroup>,
}

/// The regulator's output: a series R-L from the rail to AC ground.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Source {
    /// Output resistance, Ω.
    pub r_ohm: f64,
    /// Output inductance (including the path to the rail), H.
    pub l_h: f64,
}

/// The power/ground plane pair as a series R-L-C.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Plane {
    /// Plane capacitance, F.
    pub capacitance_f: f64,
    /// Series resistance, Ω.
    pub esr_ohm: f64,
    /// Series inductance, H.
    pub esl_h: f64,
}

/// One chip's (or block's) current step.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Load {
    /// A human name, such as "U1 core".
    pub name: String,
    /// Current step ΔI, A.
    pub step_a: f64,
    /// 10-90 % rise time of the step, s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rise_time_s: Option<f64>,
}

/// N identical parts of one kind on a rail, with the inductance of how each is mounted.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DecapGroup {
    /// The part's id.
    pub part: String,
    /// How many are fitted; 0 means the group is out of the network.
    pub count: u32,
    /// Mounting inductance of one part (pads, traces, vias), H.
    pub mounting_h: f64,
}

impl Board {
    /// The part with this id.
    pub fn part(&self, id: &str) -> Option<&Part> {
        self.parts.iter().find(|p| p.id == id)
    }

    /// The rail with this name.
    pub fn rail(&self, name: &str) -> Option<&Rail> {
        self.rails.iter().find(|r| r.name == name)
    }

    /// Index of the rail with this name.
    pub fn rail_index(&self, name: &str) -> Option<usize> {
        self.rails.iter().position(|r| r.name == name)
    }

    /// Where a part is used: (rail index, group index) for every group that names it.
    pub fn uses_of_part(&self, id: &str) -> Vec<(usize, usize)> {
        let mut uses = Vec::new();
        for (ri, rail) in self.rails.iter().enumerate() {
            for (gi, group) in rail.decaps.iter().enumerate() {
                if group.part == id {
                    uses.push((ri, gi));
                }
            }
        }
        uses
    }
}

impl Rail {
    /// Sum of the loads' current steps, A (the worst case: all steps at once).
    pub fn total_step_a(&self) -> f64 {
        self.loads.iter().map(|l| l.step_a).sum()
    }

    /// The fastest load's rise time, if any load gives one.
    pub fn fastest_rise_s(&self) -> Option<f64> {
        self.loads.iter().filter_map(|l| l.rise_time_s).reduce(f64::min)
    }
}
