//! Plain data: the board, its parts and its rails, and the rules a board must keep.
//!
//! Everything here is in SI base units (F, Ω, H, Hz, V, A, s). Nothing here touches files, the window or the
//! command line; reading and writing board files lives in `io`.

mod placement;
mod rail_file;
pub mod ranges;
mod validate;

pub use placement::{
    DEFAULT_CONDUCTIVITY_S_M, DEFAULT_PART_PORT_M, DEFAULT_PINS_M, DEFAULT_SOURCE_PORT_M, GroupPlacement, GroupSpots,
    LoadPlacement, PartSpot, Placement, PlanePair, SourcePlacement, placement_problems, spot_problem,
    starting_placement,
};
pub use validate::{Problem, validate_board, validate_part, validate_rail};

use crate::physics::measured::ImpedanceTable;
use serde::ser::SerializeStruct;
use serde::{Serialize, Serializer};

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
    /// Operating temperature range of the board, °C: [min, max]. Used for the temperature derating of ceramic
    /// parts in the worst-case corner.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature_c: Option<[f64; 2]>,
    /// Whether class II ceramic parts without a DC-bias curve get the generic (typical, from memory) DC-bias model
    /// in the typical and worst corners. Absent means yes.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub generic_dc_bias: Option<bool>,
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
    /// Known by a measurement (a Touchstone file) rather than by C, ESR and ESL.
    Measured,
}

impl PartKind {
    /// Every kind, in the order shown to people.
    pub const ALL: [PartKind; 7] = [
        PartKind::Ceramic,
        PartKind::Polymer,
        PartKind::Tantalum,
        PartKind::Electrolytic,
        PartKind::Film,
        PartKind::Other,
        PartKind::Measured,
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
            PartKind::Measured => "measured",
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

/// The ESR tolerance taken for a part that gives none, ± percent. Makers usually give ESR as a typical curve
/// without limits; ±30 % is common practice for the spread of a ceramic part's ESR, not a published figure.
pub const DEFAULT_ESR_TOLERANCE_PCT: f64 = 30.0;

/// How a measured part was measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Fixture {
    /// Reflection at one port: the part terminates the port (.s1p).
    OnePort,
    /// Transmission between two ports with the part shunting the line between them (.s2p).
    ShuntThrough,
}

impl Fixture {
    /// The word used in board files: "one-port" or "shunt-through".
    pub fn name(self) -> &'static str {
        match self {
            Fixture::OnePort => "one-port",
            Fixture::ShuntThrough => "shunt-through",
        }
    }

    /// The fixture named by a board file's word, if any.
    pub fn from_name(name: &str) -> Option<Fixture> {
        [Fixture::OnePort, Fixture::ShuntThrough].into_iter().find(|f| f.name() == name)
    }
}

/// A measured part's data as loaded from its file (never written back: the file is the data).
#[derive(Debug, Clone, PartialEq)]
pub enum Measurement {
    /// The impedance table and its fit.
    Loaded(std::sync::Arc<ImpedanceTable>),
    /// The file could not be used: why (file, line and reason).
    Unusable(String),
}

/// One capacitor model: a series R-L-C with its ratings. A measured part (kind `measured`) takes its impedance from
/// its Touchstone file instead; its C, ESR and ESL are then the values fitted to the data (not written to files).
#[derive(Debug, Clone, PartialEq)]
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
    pub rated_voltage_v: Option<f64>,
    /// Case size code, such as "0402".
    pub case: Option<String>,
    /// Dielectric class, such as "X7R".
    pub dielectric: Option<String>,
    /// Cost of one part, in the board's currency.
    pub unit_cost: Option<f64>,
    /// Board area one fitted part takes (footprint with its pads and keep-out), m².
    pub area_m2: Option<f64>,
    /// Capacitance tolerance, ± percent (absent: 0, the value is taken as exact).
    pub tolerance_pct: Option<f64>,
    /// ESR tolerance, ± percent (absent: [`DEFAULT_ESR_TOLERANCE_PCT`]). Used by the worst corner and the yield.
    pub esr_tolerance_pct: Option<f64>,
    /// For a measured part: the DC bias its data were measured at, V. The data hold the part at that bias only,
    /// so the check cautions when the rail's voltage differs.
    pub measured_bias_v: Option<f64>,
    /// Capacitance ratio against applied DC voltage, [[volts, ratio], ...] by volts; linear between points, ratio
    /// 1 at 0 V, the last ratio held beyond the last point.
    pub dc_bias: Option<Vec<[f64; 2]>>,
    /// A measured part's Touchstone file, relative to the board file.
    pub touchstone: Option<String>,
    /// How a measured part was measured.
    pub fixture: Option<Fixture>,
    /// A measured part's loaded data (filled by `io` when the board is read from a file).
    pub measurement: Option<Measurement>,
}

/// How a part is written to a board file: a measured part's C, ESR and ESL come from its data and are not written.
#[derive(Serialize)]
struct PartFile<'a> {
    id: &'a str,
    kind: PartKind,
    #[serde(skip_serializing_if = "Option::is_none")]
    capacitance_f: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    esr_ohm: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    esl_h: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    rated_voltage_v: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    case: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    dielectric: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    unit_cost: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    area_m2: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    tolerance_pct: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    esr_tolerance_pct: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    dc_bias: Option<&'a Vec<[f64; 2]>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    touchstone: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    fixture: Option<Fixture>,
    #[serde(skip_serializing_if = "Option::is_none")]
    measured_bias_v: Option<f64>,
}

impl Serialize for Part {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let own = (self.kind != PartKind::Measured).then_some(());
        PartFile {
            id: &self.id,
            kind: self.kind,
            capacitance_f: own.map(|_| self.capacitance_f),
            esr_ohm: own.map(|_| self.esr_ohm),
            esl_h: own.map(|_| self.esl_h),
            rated_voltage_v: self.rated_voltage_v,
            case: self.case.as_deref(),
            dielectric: self.dielectric.as_deref(),
            unit_cost: self.unit_cost,
            area_m2: self.area_m2,
            tolerance_pct: self.tolerance_pct,
            esr_tolerance_pct: self.esr_tolerance_pct,
            dc_bias: self.dc_bias.as_ref(),
            touchstone: self.touchstone.as_deref(),
            fixture: self.fixture,
            measured_bias_v: self.measured_bias_v,
        }
        .serialize(serializer)
    }
}

impl Part {
    /// A part with its electrical values and nothing optional.
    pub fn new(id: impl Into<String>, kind: PartKind, capacitance_f: f64, esr_ohm: f64, esl_h: f64) -> Part {
        Part {
            id: id.into(),
            kind,
            capacitance_f,
            esr_ohm,
            esl_h,
            rated_voltage_v: None,
            case: None,
            dielectric: None,
            unit_cost: None,
            area_m2: None,
            tolerance_pct: None,
            esr_tolerance_pct: None,
            measured_bias_v: None,
            dc_bias: None,
            touchstone: None,
            fixture: None,
            measurement: None,
        }
    }

    /// The measured impedance table, when this part is measured and its data loaded.
    pub fn table(&self) -> Option<&ImpedanceTable> {
        match &self.measurement {
            Some(Measurement::Loaded(t)) => Some(t),
            _ => None,
        }
    }

    /// The capacitance tolerance as a fraction (0.2 for ±20 %); 0 when not given.
    pub fn c_tolerance(&self) -> f64 {
        if self.kind == PartKind::Measured { 0.0 } else { self.tolerance_pct.unwrap_or(0.0) / 100.0 }
    }

    /// The ESR tolerance as a fraction, [`DEFAULT_ESR_TOLERANCE_PCT`] when not given; 0 for a measured part
    /// (taken as measured).
    pub fn esr_tolerance(&self) -> f64 {
        if self.kind == PartKind::Measured {
            0.0
        } else {
            self.esr_tolerance_pct.unwrap_or(DEFAULT_ESR_TOLERANCE_PCT) / 100.0
        }
    }

    /// Why this part cannot be used, when it is measured and its data are missing or broken.
    pub fn unusable(&self) -> Option<String> {
        match (&self.kind, &self.measurement) {
            (PartKind::Measured, Some(Measurement::Unusable(why))) => Some(why.clone()),
            (PartKind::Measured, None) => Some("its measurement has not been loaded".into()),
            _ => None,
        }
    }
}

/// One supply net and everything that loads and decouples it. Written to files by `rail_file` (the placement's
/// fields sit inside the source, group and load objects there).
#[derive(Debug, Clone, PartialEq)]
pub struct Rail {
    /// Unique name within the board.
    pub name: String,
    /// Nominal voltage, V.
    pub voltage_v: f64,
    /// Allowed ripple, percent of the voltage.
    pub ripple_pct: f64,
    /// Frequency range where the target applies, Hz: [low, high]. Absent: the band follows from the loads'
    /// rise times (see [`Rail::band`]).
    pub band_hz: Option<[f64; 2]>,
    /// How the loads' steps add up to the rail's ΔI.
    pub combine: Combine,
    /// The regulator's output model.
    pub source: Option<Source>,
    /// The power/ground plane pair.
    pub plane: Option<Plane>,
    /// The package between the board and the die (series R-L).
    pub package: Option<Package>,
    /// The on-die capacitance at the die node.
    pub die: Option<Die>,
    /// Current steps drawn from the rail.
    pub loads: Vec<Load>,
    /// Decoupling capacitor groups.
    pub decaps: Vec<DecapGroup>,
    /// Where everything sits on the rail's plane pair; `None` for a lumped rail (one node, as before).
    pub placement: Option<Placement>,
}

/// The regulator's output: a series R-L from the rail to AC ground, and optionally its control loop (then the
/// crossover tank of `physics::regulator` sits in series: flat at `r_ohm` inside the loop's bandwidth, a peak near
/// crossover set by the phase margin, the R-L beyond). A source may instead name a Touchstone file of its measured
/// output impedance: its R, L and loop are then the ones fitted to the data (`physics::loop_fit`, filled in when the
/// file is loaded and never written back: the file is the data).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Source {
    /// Output resistance, Ω: the flat level inside the loop's bandwidth when a loop is given.
    pub r_ohm: f64,
    /// Output inductance (including the path to the rail), H: with a loop, the inductance past it.
    pub l_h: f64,
    /// The control loop, when given (or fitted).
    pub control: Option<SourceLoop>,
    /// The one-port Touchstone file of the measured output impedance (relative to the board file), when given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub touchstone: Option<String>,
    /// The fit to that file, once it is loaded.
    #[serde(skip)]
    pub fit: Option<SourceFit>,
}

/// A measured source's data as loaded from its file.
#[derive(Debug, Clone, PartialEq)]
pub enum SourceFit {
    /// The fitted R, L and loop with the fit's errors.
    Fitted(crate::physics::loop_fit::LoopFit),
    /// The file could not be used: why (file, line and reason).
    Unusable(String),
}

impl Source {
    /// A plain series R-L source (no loop given).
    pub const fn rl(r_ohm: f64, l_h: f64) -> Source {
        Source { r_ohm, l_h, control: None, touchstone: None, fit: None }
    }

    /// The crossover tank the loop adds in series, when the source gives a loop and a resistance to hold.
    pub fn tank(&self) -> Option<crate::physics::regulator::ParallelRlc> {
        let c = self.control?;
        (self.r_ohm > 0.0)
            .then(|| crate::physics::regulator::crossover_tank(self.r_ohm, c.crossover_hz, c.phase_margin_deg))
    }

    /// The fit of a measured source, when its file was loaded and fitted.
    pub fn loop_fit(&self) -> Option<&crate::physics::loop_fit::LoopFit> {
        match &self.fit {
            Some(SourceFit::Fitted(f)) => Some(f),
            _ => None,
        }
    }

    /// Why a measured source cannot be used (its file unreadable, unfitted or not loaded); `None` for a source
    /// that can.
    pub fn unusable(&self) -> Option<String> {
        let file = self.touchstone.as_ref()?;
        match &self.fit {
            Some(SourceFit::Fitted(_)) => None,
            Some(SourceFit::Unusable(why)) => Some(why.clone()),
            None => Some(format!("{file}: the measured output impedance is not loaded")),
        }
    }
}

/// A regulator's control loop, as its loop gain's crossover and phase margin.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SourceLoop {
    /// Where the loop gain falls through 1, Hz (`loop_crossover_hz` in a board file).
    pub crossover_hz: f64,
    /// 180° plus the loop gain's phase there, degrees (`loop_phase_margin_deg`).
    pub phase_margin_deg: f64,
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

/// How a rail's load steps combine into its ΔI.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Combine {
    /// Every step at once: ΔI = Σ steps (the worst case).
    #[default]
    Sum,
    /// Uncorrelated steps: ΔI = √(Σ steps²) (common practice for independent loads).
    Rss,
}

impl Combine {
    /// True for the default, so files that do not say keep not saying.
    pub fn is_sum(&self) -> bool {
        *self == Combine::Sum
    }

    /// The word used in board files.
    pub fn name(self) -> &'static str {
        match self {
            Combine::Sum => "sum",
            Combine::Rss => "rss",
        }
    }
}

/// The package path from the board's rail node to the die: a series R-L.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Package {
    /// Series resistance, Ω.
    pub r_ohm: f64,
    /// Series inductance (package planes, bumps, balls), H.
    pub l_h: f64,
}

/// The on-die decoupling at the die node: a capacitance with its series resistance.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Die {
    /// Capacitance, F.
    pub capacitance_f: f64,
    /// Series resistance, Ω.
    pub esr_ohm: f64,
}

/// How each part of a decap group is mounted: the geometry its loop inductance is computed from (all lengths in
/// metres).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MountingGeometry {
    /// Length of the trace from each pad to its via, m (0 for via-in-pad).
    pub trace_length_m: f64,
    /// Width of that trace, m.
    pub trace_width_m: f64,
    /// Height of the trace above its reference plane, m.
    pub trace_height_m: f64,
    /// Via drill diameter, m.
    pub via_drill_m: f64,
    /// Via length from the surface to the power/ground plane pair, m.
    pub via_length_m: f64,
    /// Centre distance between the power via and the ground via, m.
    pub via_pitch_m: f64,
    /// Vias per pad (each pad has this many vias in parallel).
    pub vias_per_pad: u32,
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
    /// The shortest time the load stays on or off, s (its fastest on/off period is twice this). Bounds the worst
    /// on/off pattern; absent: `clock_hz`, else half a period of the band's upper edge.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub min_period_s: Option<f64>,
    /// The clock the load switches with, Hz: it stays on or off for at least one cycle (1/clock_hz).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub clock_hz: Option<f64>,
    /// The most on/off pulses in one burst. Absent: no limit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max_pulses: Option<u32>,
}

impl Load {
    /// A load with a step and an optional rise time, nothing else given.
    pub fn new(name: impl Into<String>, step_a: f64, rise_time_s: Option<f64>) -> Load {
        Load { name: name.into(), step_a, rise_time_s, min_period_s: None, clock_hz: None, max_pulses: None }
    }

    /// The shortest on or off interval this load gives, s: `min_period_s`, else one cycle of `clock_hz`.
    pub fn min_interval_s(&self) -> Option<f64> {
        self.min_period_s.or(self.clock_hz.map(|f| 1.0 / f))
    }
}

/// N identical parts of one kind on a rail, with the inductance of how each is mounted.
#[derive(Debug, Clone, PartialEq)]
pub struct DecapGroup {
    /// The part's id.
    pub part: String,
    /// How many are fitted; 0 means the group is out of the network.
    pub count: u32,
    /// Mounting inductance of one part (pads, traces, vias), H. Used when `mounting` is `None`.
    pub mounting_h: f64,
    /// The mounting geometry; when given, the mounting inductance is computed from it and `mounting_h` is not
    /// used (nor written).
    pub mounting: Option<MountingGeometry>,
}

impl DecapGroup {
    /// A group with a given mounting inductance.
    pub fn new(part: impl Into<String>, count: u32, mounting_h: f64) -> DecapGroup {
        DecapGroup { part: part.into(), count, mounting_h, mounting: None }
    }
}

impl Serialize for DecapGroup {
    /// Writes `mounting` when the geometry is given, else `mounting_h`: a file holds one or the other.
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut s = serializer.serialize_struct("DecapGroup", 3)?;
        s.serialize_field("part", &self.part)?;
        s.serialize_field("count", &self.count)?;
        match &self.mounting {
            Some(g) => s.serialize_field("mounting", g)?,
            None => s.serialize_field("mounting_h", &self.mounting_h)?,
        }
        s.end()
    }
}

impl Board {
    /// An empty board with a name.
    pub fn named(name: impl Into<String>) -> Board {
        Board {
            name: name.into(),
            description: None,
            parts: Vec::new(),
            rails: Vec::new(),
            temperature_c: None,
            generic_dc_bias: None,
        }
    }

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

/// Where an edge of a rail's band comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum BandEdge {
    /// Given in the board file.
    Given,
    /// From the fastest load's rise time: 0.35 / t_r (the bandwidth of a single-pole 10-90 % edge, common
    /// practice).
    RiseTime {
        /// The load it comes from.
        load: String,
        /// Its rise time, s.
        rise_s: f64,
    },
    /// The documented default lower edge, [`DEFAULT_BAND_LOW_HZ`].
    Default,
}

/// How far a load's edge has content: up to EDGE_CONTENT / t_r (the bandwidth of a single-pole 10-90 % edge,
/// common practice). The band follows it when a rail gives none; the check warns, and the droop filters the load's
/// current, when a given band stops short of it.
pub const EDGE_CONTENT: f64 = 0.35;

/// Where an edge of 10-90 % rise time `rise_s` has content up to, Hz: [`EDGE_CONTENT`] / t_r.
pub fn edge_content_hz(rise_s: f64) -> f64 {
    EDGE_CONTENT / rise_s
}

/// True when content up to `edge_hz` reaches past a band whose upper edge is `band_top_hz` (beyond rounding).
pub fn reaches_past(edge_hz: f64, band_top_hz: f64) -> bool {
    edge_hz > band_top_hz * (1.0 + 1e-9)
}

/// The lower band edge used when a rail gives no band: below about 1 kHz the regulator's control loop holds the
/// rail (common practice for switching regulators; set `band_hz` when yours is slower).
pub const DEFAULT_BAND_LOW_HZ: f64 = 1e3;

/// A rail's band and where each edge came from.
#[derive(Debug, Clone, PartialEq)]
pub struct Band {
    /// [low, high], Hz.
    pub hz: [f64; 2],
    /// Where the low edge came from.
    pub low: BandEdge,
    /// Where the high edge came from.
    pub high: BandEdge,
}

impl Rail {
    /// The rail's ΔI from its loads' steps under its combine rule, A.
    pub fn total_step_a(&self) -> f64 {
        match self.combine {
            Combine::Sum => self.loads.iter().map(|l| l.step_a).sum(),
            Combine::Rss => self.loads.iter().map(|l| l.step_a * l.step_a).sum::<f64>().sqrt(),
        }
    }

    /// The band the target applies over: `band_hz` when given; otherwise [`DEFAULT_BAND_LOW_HZ`] up to
    /// 0.35 / (the fastest load's rise time). `None` when neither is available (validation reports it).
    pub fn band(&self) -> Option<Band> {
        if let Some(hz) = self.band_hz {
            return Some(Band { hz, low: BandEdge::Given, high: BandEdge::Given });
        }
        let fastest =
            self.loads.iter().filter_map(|l| l.rise_time_s.map(|t| (l, t))).min_by(|a, b| a.1.total_cmp(&b.1))?;
        let high = edge_content_hz(fastest.1);
        Some(Band {
            hz: [DEFAULT_BAND_LOW_HZ, high],
            low: BandEdge::Default,
            high: BandEdge::RiseTime { load: fastest.0.name.clone(), rise_s: fastest.1 },
        })
    }

    /// The band in Hz, or [1 kHz, 1 GHz] as a harmless stand-in on a rail that cannot say (never on a valid one).
    pub fn band_hz_or_default(&self) -> [f64; 2] {
        self.band().map_or([DEFAULT_BAND_LOW_HZ, 1e9], |b| b.hz)
    }

    /// The fastest load's rise time, if any load gives one.
    pub fn fastest_rise_s(&self) -> Option<f64> {
        self.loads.iter().filter_map(|l| l.rise_time_s).reduce(f64::min)
    }
}
