//! The board file, format 1: reading with every problem reported at once, and stable, atomic writing.
//!
//! Reading goes JSON text -> `serde_json::Value` (syntax errors carry line:column) -> a hand-written decoder that
//! walks the value, collects every structural problem with its JSON path (unknown fields, wrong types, missing
//! fields) and builds the model; then `model::validate_board` adds the physical rules. A typo in a field name is
//! never ignored.

use super::{BoardError, Place, write_atomically};
use crate::model::Measurement;
use crate::model::{
    Board, Combine, DecapGroup, Die, Fixture, Load, MountingGeometry, Package, Part, PartKind, Plane, Problem, Rail,
    validate_board,
};
use crate::model::{SourceFit, SourceLoop};
use crate::physics::loop_fit::fit_loop;
use crate::physics::measured::ImpedanceTable;
use serde::Serialize;
use serde_json::{Map, Value};
use std::path::Path;
use std::sync::Arc;

mod placement_file;

/// The `format` tag every board file carries.
pub const FORMAT_TAG: &str = "hushrail-board";
/// The newest format version this program reads and the one it writes.
pub const FORMAT_VERSION: u64 = 1;

/// Read and check a board file. `file` names the source in error messages.
///
/// Measured parts' data are loaded too; a measurement that cannot be used is an error here (the command line
/// refuses such a board). The window uses [`read_board_keeping_unusable`] instead.
pub fn read_board(path: &Path) -> Result<Board, BoardError> {
    read_board_bytes(path).and_then(|bytes| board_from_bytes(path, bytes)).and_then(|b| refuse_unusable(path, b))
}

/// Read and check a board file, loading measured parts' data; a measured part whose data cannot be used stays on
/// the board, marked unusable with the reason (its groups are left out of the network).
pub fn read_board_keeping_unusable(path: &Path) -> Result<Board, BoardError> {
    read_board_bytes(path).and_then(|bytes| board_from_bytes(path, bytes))
}

/// The bytes of a board file: a regular file within the size cap.
pub(super) fn read_board_bytes(path: &Path) -> Result<Vec<u8>, BoardError> {
    super::read_limited(path, crate::model::ranges::MAX_BOARD_BYTES)
        .map_err(|why| BoardError::single(path, Place::Whole, why))
}

/// A board from its file's bytes, measured parts' data loaded from beside it.
pub(super) fn board_from_bytes(path: &Path, bytes: Vec<u8>) -> Result<Board, BoardError> {
    let text = super::text_of(bytes).map_err(|(place, why)| BoardError::single(path, place, why))?;
    let mut board = parse_board(&text, &path.display().to_string())?;
    load_measurements(&mut board, path.parent().unwrap_or(Path::new("")));
    Ok(board)
}

/// The board, or an error naming each measured part whose data cannot be used.
pub(super) fn refuse_unusable(path: &Path, board: Board) -> Result<Board, BoardError> {
    let problems: Vec<Problem> = board
        .parts
        .iter()
        .enumerate()
        .filter_map(|(i, p)| p.unusable().map(|why| Problem::new(format!("parts[{i}].touchstone"), why)))
        .chain(board.rails.iter().enumerate().filter_map(|(i, r)| {
            let why = r.source.as_ref()?.unusable()?;
            Some(Problem::new(format!("rails[{i}].source.touchstone"), why))
        }))
        .collect();
    if problems.is_empty() { Ok(board) } else { Err(BoardError::from_problems(&path.display().to_string(), problems)) }
}

/// Load every measured part's Touchstone file (paths relative to `dir`), fit it, and fill in the part's fitted C,
/// ESR and ESL; a file that cannot be used marks the part unusable with the file, line and reason. Likewise every
/// measured source's file: its R, L and loop become the fit's (`physics::loop_fit`).
///
/// Each file is read once however many parts name it (twenty parts naming one large file read it once).
pub fn load_measurements(board: &mut Board, dir: &Path) {
    use std::collections::HashMap;
    let mut files: HashMap<std::path::PathBuf, Result<Arc<super::Touchstone>, String>> = HashMap::new();
    for part in board.parts.iter_mut().filter(|p| p.kind == PartKind::Measured) {
        let (Some(file), Some(fixture)) = (&part.touchstone, part.fixture) else { continue };
        let path = dir.join(file);
        let read = files
            .entry(path.clone())
            .or_insert_with(|| super::touchstone::read_touchstone(&path).map(Arc::new).map_err(|e| e.to_string()))
            .clone();
        let loaded = read.and_then(|t| {
            let z = t.impedance(fixture).map_err(|e| format!("{}: {e}", path.display()))?;
            ImpedanceTable::new(t.freq_hz.clone(), z).ok_or_else(|| {
                format!("{}: the data do not describe a capacitor (no positive capacitance fits them)", path.display())
            })
        });
        match loaded {
            Ok(table) => {
                let fit = table.fit;
                part.capacitance_f = fit.c_f.unwrap_or(f64::NAN);
                part.esr_ohm = fit.r_ohm;
                part.esl_h = fit.l_h;
                part.measurement = Some(Measurement::Loaded(Arc::new(table)));
            }
            Err(why) => part.measurement = Some(Measurement::Unusable(why)),
        }
    }
    // A source measured from a file: its one-port output impedance fitted to the R-L and crossover tank, which
    // then stands for the source everywhere (scan, droop, netlists).
    for source in board.rails.iter_mut().filter_map(|r| r.source.as_mut()) {
        let Some(file) = &source.touchstone else { continue };
        let path = dir.join(file);
        let read = files
            .entry(path.clone())
            .or_insert_with(|| super::touchstone::read_touchstone(&path).map(Arc::new).map_err(|e| e.to_string()))
            .clone();
        let fitted = read.and_then(|t| {
            let z = t.impedance(Fixture::OnePort).map_err(|e| format!("{}: {e}", path.display()))?;
            fit_loop(&t.freq_hz, &z).map_err(|e| format!("{}: {e}", path.display()))
        });
        match fitted {
            Ok(fit) => {
                source.r_ohm = fit.r_ohm;
                source.l_h = fit.l_h;
                source.control =
                    Some(SourceLoop { crossover_hz: fit.crossover_hz, phase_margin_deg: fit.phase_margin_deg });
                source.fit = Some(SourceFit::Fitted(fit));
            }
            Err(why) => source.fit = Some(SourceFit::Unusable(why)),
        }
    }
}

/// Parse and check board text. `file` is the name shown in errors.
pub fn parse_board(text: &str, file: &str) -> Result<Board, BoardError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let value = super::strict_json::parse(text).map_err(|(place, why)| BoardError::single(file, place, why))?;
    let mut d = Decoder { problems: Vec::new() };
    let board = d.board(&value);
    let mut problems = d.problems;
    // The decoder put stand-ins (NaN, empty) where a value was missing or malformed; the rules would report those
    // places again, so keep only the rules' problems at places not reported yet.
    let reported: Vec<String> = problems.iter().map(|p| p.path.clone()).collect();
    let covered = |path: &str| {
        reported.iter().any(|r| {
            r.is_empty()
                || path == r
                || path.starts_with(&format!("{r}."))
                || path.starts_with(&format!("{r}["))
                || r.starts_with(&format!("{path}["))
        })
    };
    problems.extend(validate_board(&board).into_iter().filter(|p| !covered(&p.path)));
    if problems.is_empty() { Ok(board) } else { Err(BoardError::from_problems(file, problems)) }
}

/// The board as written to a file: the format tag and version first, then the board's own fields.
#[derive(Serialize)]
struct BoardFile<'a> {
    format: &'static str,
    version: u64,
    #[serde(flatten)]
    board: &'a Board,
}

/// The file text of a board: pretty-printed, fields in a fixed order, a newline at the end.
pub fn board_to_string(board: &Board) -> String {
    let file = BoardFile { format: FORMAT_TAG, version: FORMAT_VERSION, board };
    // Serializing plain data with finite numbers cannot fail; non-finite numbers never pass validation, and
    // serde_json writes them as null, which the reader refuses with a clear message.
    let mut text = serde_json::to_string_pretty(&file).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}

/// Write a board atomically: a temporary file beside the target, flushed and synced, then renamed over it.
pub fn write_board(path: &Path, board: &Board) -> Result<(), BoardError> {
    write_atomically(path, board_to_string(board).as_bytes())
        .map_err(|e| BoardError::single(path, Place::Whole, format!("cannot write the file: {e}")))
}

/// Walks a JSON value and collects problems with their paths.
struct Decoder {
    problems: Vec<Problem>,
}

/// The fields of one JSON object, with the keys already read, so the rest can be reported as unknown.
struct Fields<'v> {
    map: &'v Map<String, Value>,
    path: String,
    known: &'static [&'static str],
}

/// The JSON path of `key` inside `path`: `a.b`, or `a["odd key"]` for a key that is not a plain word (empty, or
/// with spaces, dots, brackets or control characters), so every place can be found again.
fn join(path: &str, key: &str) -> String {
    let plain = !key.is_empty() && key.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    match (plain, path.is_empty()) {
        (true, true) => key.to_string(),
        (true, false) => format!("{path}.{key}"),
        (false, _) => format!("{path}[{}]", serde_json::Value::String(key.to_string())),
    }
}

impl Decoder {
    fn problem(&mut self, path: impl Into<String>, reason: impl Into<String>) {
        self.problems.push(Problem::new(path, reason));
    }

    /// Open an object and report its unknown keys against `known`.
    fn object<'v>(&mut self, value: &'v Value, path: &str, known: &'static [&'static str]) -> Option<Fields<'v>> {
        let Some(map) = value.as_object() else {
            self.problem(path, format!("must be an object, not {}", kind_of(value)));
            return None;
        };
        for key in map.keys() {
            if !known.contains(&key.as_str()) {
                self.problem(join(path, key), format!("unknown field (known fields here: {})", known.join(", ")));
            }
        }
        Some(Fields { map, path: path.to_string(), known })
    }

    fn number_at(&mut self, value: &Value, path: &str) -> Option<f64> {
        match value {
            Value::Number(n) => match n.as_f64() {
                Some(x) if x.is_finite() => Some(x),
                _ => {
                    self.problem(path, "must be a finite number");
                    None
                }
            },
            Value::Null => {
                self.problem(path, "must be a finite number, not null (NaN and infinity cannot be written in JSON)");
                None
            }
            other => {
                self.problem(path, format!("must be a number, not {}", kind_of(other)));
                None
            }
        }
    }

    fn required<'v>(&mut self, f: &Fields<'v>, key: &str) -> Option<&'v Value> {
        debug_assert!(f.known.contains(&key));
        let v = f.map.get(key);
        if v.is_none() {
            self.problem(join(&f.path, key), "missing required field");
        }
        v
    }

    /// A required number; NaN stands in for a missing or bad one (the problem is already recorded).
    fn number(&mut self, f: &Fields, key: &str) -> f64 {
        self.required(f, key).and_then(|v| self.number_at(v, &join(&f.path, key))).unwrap_or(f64::NAN)
    }

    /// An optional number; a bad one is recorded and read as absent.
    fn opt_number(&mut self, f: &Fields, key: &str) -> Option<f64> {
        f.map.get(key).and_then(|v| self.number_at(v, &join(&f.path, key)))
    }

    fn string_at(&mut self, value: &Value, path: &str) -> Option<String> {
        match value {
            Value::String(s) => Some(s.clone()),
            other => {
                self.problem(path, format!("must be a string, not {}", kind_of(other)));
                None
            }
        }
    }

    /// A required string; empty stands in for a missing or bad one.
    fn string(&mut self, f: &Fields, key: &str) -> String {
        self.required(f, key).and_then(|v| self.string_at(v, &join(&f.path, key))).unwrap_or_default()
    }

    fn opt_string(&mut self, f: &Fields, key: &str) -> Option<String> {
        f.map.get(key).and_then(|v| self.string_at(v, &join(&f.path, key)))
    }

    /// A required array, each element decoded by `item` with its indexed path. Elements that are not even
    /// objects are kept as stand-ins so that later paths keep their indices.
    fn array<T>(&mut self, f: &Fields, key: &str, mut item: impl FnMut(&mut Self, &Value, &str) -> T) -> Vec<T> {
        let path = join(&f.path, key);
        let Some(v) = self.required(f, key) else {
            return Vec::new();
        };
        let Some(items) = v.as_array() else {
            self.problem(path, format!("must be an array, not {}", kind_of(v)));
            return Vec::new();
        };
        items.iter().enumerate().map(|(i, x)| item(self, x, &format!("{path}[{i}]"))).collect()
    }

    fn board(&mut self, value: &Value) -> Board {
        let empty = Map::new();
        let f = self
            .object(
                value,
                "",
                &["format", "version", "name", "description", "temperature_c", "generic_dc_bias", "parts", "rails"],
            )
            .unwrap_or(Fields { map: &empty, path: String::new(), known: &[] });
        if !value.is_object() {
            return Board::named("");
        }
        match f.map.get("format") {
            Some(Value::String(s)) if s == FORMAT_TAG => {}
            Some(other) => self.problem("format", format!("must be \"{FORMAT_TAG}\", not {other}")),
            None => self.problem("format", format!("missing: a board file starts with \"format\": \"{FORMAT_TAG}\"")),
        }
        match f.map.get("version") {
            Some(Value::Number(n)) => match n.as_u64() {
                Some(v) if (1..=FORMAT_VERSION).contains(&v) => {}
                Some(v) if v > FORMAT_VERSION => self.problem(
                    "version",
                    format!("version {v} is newer than this program reads (up to {FORMAT_VERSION}): update hushrail"),
                ),
                _ if FORMAT_VERSION == 1 => self.problem(
                    "version",
                    format!("must be 1 written as a whole number (the only format version there is), not {n}"),
                ),
                _ => self.problem("version", format!("must be a whole number from 1 to {FORMAT_VERSION}, not {n}")),
            },
            Some(other) => self.problem("version", format!("must be a whole number, not {}", kind_of(other))),
            None => self.problem("version", "missing required field"),
        }
        let generic_dc_bias = match f.map.get("generic_dc_bias") {
            None => None,
            Some(Value::Bool(b)) => Some(*b),
            Some(other) => {
                self.problem("generic_dc_bias", format!("must be true or false, not {}", kind_of(other)));
                None
            }
        };
        Board {
            name: self.string(&f, "name"),
            description: self.opt_string(&f, "description"),
            temperature_c: f.map.get("temperature_c").map(|v| self.pair(v, "temperature_c", "[min_c, max_c]")),
            generic_dc_bias,
            parts: self.array(&f, "parts", |d, v, p| d.part(v, p)),
            rails: self.array(&f, "rails", |d, v, p| d.rail(v, p)),
        }
    }

    fn part(&mut self, value: &Value, path: &str) -> Part {
        let empty = Map::new();
        let f = self.sub_object(
            value,
            path,
            &[
                "id",
                "kind",
                "capacitance_f",
                "esr_ohm",
                "esl_h",
                "rated_voltage_v",
                "case",
                "dielectric",
                "unit_cost",
                "area_m2",
                "tolerance_pct",
                "esr_tolerance_pct",
                "dc_bias",
                "touchstone",
                "fixture",
                "measured_bias_v",
            ],
            &empty,
        );
        if f.known.is_empty() {
            return Part::new("", PartKind::Other, f64::NAN, f64::NAN, f64::NAN);
        }
        let kind = match f.map.get("kind") {
            None => {
                self.problem(join(path, "kind"), "missing required field");
                PartKind::Other
            }
            Some(v) => match self.string_at(v, &join(path, "kind")) {
                None => PartKind::Other,
                Some(k) => PartKind::from_name(&k).unwrap_or_else(|| {
                    let names: Vec<_> = PartKind::ALL.iter().map(|k| k.name()).collect();
                    self.problem(join(path, "kind"), format!("unknown kind \"{k}\" (one of: {})", names.join(", ")));
                    PartKind::Other
                }),
            },
        };
        let dc_bias = f.map.get("dc_bias").map(|v| {
            let bias_path = join(path, "dc_bias");
            match v.as_array() {
                Some(points) => points
                    .iter()
                    .enumerate()
                    .map(|(i, p)| self.pair(p, &format!("{bias_path}[{i}]"), "[volts, ratio]"))
                    .collect(),
                None => {
                    self.problem(bias_path, "must be an array of [volts, ratio] pairs");
                    Vec::new()
                }
            }
        });
        // A measured part takes C, ESR and ESL from its data (filled in when the data are loaded); others give
        // them and name no measurement.
        let measured = kind == PartKind::Measured;
        let [capacitance_f, esr_ohm, esl_h] = ["capacitance_f", "esr_ohm", "esl_h"].map(|k| {
            if !measured {
                return self.number(&f, k);
            }
            if f.map.contains_key(k) {
                self.problem(join(path, k), "a measured part takes its values from its measurement: leave this out");
            }
            f64::NAN
        });
        let (touchstone, fixture) = if measured {
            let file = self.string(&f, "touchstone");
            let fixture = self.string(&f, "fixture");
            let fixture = match Fixture::from_name(&fixture) {
                Some(x) => Some(x),
                None if f.map.contains_key("fixture") => {
                    self.problem(
                        join(path, "fixture"),
                        format!("must be \"one-port\" or \"shunt-through\", not \"{fixture}\""),
                    );
                    None
                }
                None => None,
            };
            (Some(file), fixture)
        } else {
            for k in ["touchstone", "fixture"] {
                if f.map.contains_key(k) {
                    self.problem(join(path, k), "only a part of kind \"measured\" names a measurement");
                }
            }
            (None, None)
        };
        Part {
            id: self.string(&f, "id"),
            kind,
            capacitance_f,
            esr_ohm,
            esl_h,
            rated_voltage_v: self.opt_number(&f, "rated_voltage_v"),
            case: self.opt_string(&f, "case"),
            dielectric: self.opt_string(&f, "dielectric"),
            unit_cost: self.opt_number(&f, "unit_cost"),
            area_m2: self.opt_number(&f, "area_m2"),
            tolerance_pct: self.opt_number(&f, "tolerance_pct"),
            esr_tolerance_pct: self.opt_number(&f, "esr_tolerance_pct"),
            measured_bias_v: self.opt_number(&f, "measured_bias_v"),
            dc_bias,
            touchstone,
            fixture,
            measurement: None,
        }
    }

    fn rail(&mut self, value: &Value, path: &str) -> Rail {
        let empty = Map::new();
        let f = self.sub_object(
            value,
            path,
            &[
                "name",
                "voltage_v",
                "ripple_pct",
                "band_hz",
                "combine",
                "source",
                "plane",
                "plane_pair",
                "package",
                "die",
                "loads",
                "decaps",
            ],
            &empty,
        );
        if f.known.is_empty() {
            return Rail {
                name: String::new(),
                voltage_v: f64::NAN,
                ripple_pct: f64::NAN,
                band_hz: Some([f64::NAN; 2]),
                combine: Combine::Sum,
                source: None,
                plane: None,
                package: None,
                die: None,
                loads: Vec::new(),
                decaps: Vec::new(),
                placement: None,
            };
        }
        // On a rail with a plane pair everything is placed; elsewhere a position is refused.
        let placed = f.map.contains_key("plane_pair");
        let combine = match f.map.get("combine") {
            None => Combine::Sum,
            Some(v) => match self.string_at(v, &join(path, "combine")).as_deref() {
                Some("sum") | None => Combine::Sum,
                Some("rss") => Combine::Rss,
                Some(other) => {
                    self.problem(join(path, "combine"), format!("must be \"sum\" or \"rss\", not \"{other}\""));
                    Combine::Sum
                }
            },
        };
        let (source, source_spot) = match f.map.get("source") {
            Some(v) => {
                let (s, spot) = self.source(v, &join(path, "source"), placed);
                (Some(s), spot)
            }
            None => (None, None),
        };
        let (loads, load_spots): (Vec<Load>, Vec<_>) =
            self.array(&f, "loads", |d, v, p| d.load(v, p, placed)).into_iter().unzip();
        let (decaps, group_spots): (Vec<DecapGroup>, Vec<_>) =
            self.array(&f, "decaps", |d, v, p| d.decap(v, p, placed)).into_iter().unzip();
        let placement = f.map.get("plane_pair").map(|v| crate::model::Placement {
            plane_pair: self.plane_pair(v, &join(path, "plane_pair")),
            source: source_spot,
            groups: group_spots.into_iter().flatten().collect(),
            loads: load_spots.into_iter().flatten().collect(),
        });
        Rail {
            name: self.string(&f, "name"),
            voltage_v: self.number(&f, "voltage_v"),
            ripple_pct: self.number(&f, "ripple_pct"),
            band_hz: f.map.get("band_hz").map(|v| self.pair(v, &join(path, "band_hz"), "[low_hz, high_hz]")),
            combine,
            source,
            plane: f.map.get("plane").map(|v| self.plane(v, &join(path, "plane"))),
            package: f.map.get("package").map(|v| {
                let [r_ohm, l_h] = self.record(v, &join(path, "package"), &["r_ohm", "l_h"]);
                Package { r_ohm, l_h }
            }),
            die: f.map.get("die").map(|v| {
                let [capacitance_f, esr_ohm] = self.record(v, &join(path, "die"), &["capacitance_f", "esr_ohm"]);
                Die { capacitance_f, esr_ohm }
            }),
            loads,
            decaps,
            placement,
        }
    }

    /// A pair of numbers written as a two-element array; NaN stands in for what could not be read.
    fn pair(&mut self, v: &Value, path: &str, shape: &str) -> [f64; 2] {
        match v.as_array() {
            Some(items) if items.len() == 2 => {
                let a = self.number_at(&items[0], &format!("{path}[0]"));
                let b = self.number_at(&items[1], &format!("{path}[1]"));
                [a.unwrap_or(f64::NAN), b.unwrap_or(f64::NAN)]
            }
            _ => {
                self.problem(path, format!("must be {shape}: an array of two numbers"));
                [f64::NAN; 2]
            }
        }
    }

    /// Open a sub-object; a non-object gives a stand-in with no fields (its problem is recorded).
    fn sub_object<'v>(
        &mut self,
        value: &'v Value,
        path: &str,
        known: &'static [&'static str],
        empty: &'v Map<String, Value>,
    ) -> Fields<'v> {
        self.object(value, path, known).unwrap_or(Fields { map: empty, path: path.to_string(), known: &[] })
    }

    /// An object of exactly these required numbers (and nothing else); a stand-in reads as NaN.
    fn record<const N: usize>(&mut self, value: &Value, path: &str, keys: &'static [&'static str; N]) -> [f64; N] {
        let empty = Map::new();
        let f = self.sub_object(value, path, keys, &empty);
        keys.map(|k| if f.known.is_empty() { f64::NAN } else { self.number(&f, k) })
    }

    fn plane(&mut self, value: &Value, path: &str) -> Plane {
        let empty = Map::new();
        let f = self.sub_object(value, path, &["capacitance_f", "esr_ohm", "esl_h"], &empty);
        if f.known.is_empty() {
            return Plane { capacitance_f: f64::NAN, esr_ohm: 0.0, esl_h: 0.0 };
        }
        Plane {
            capacitance_f: self.number(&f, "capacitance_f"),
            esr_ohm: self.opt_number(&f, "esr_ohm").unwrap_or(0.0),
            esl_h: self.opt_number(&f, "esl_h").unwrap_or(0.0),
        }
    }

    fn load(&mut self, value: &Value, path: &str, placed: bool) -> (Load, Option<crate::model::LoadPlacement>) {
        let empty = Map::new();
        const KEYS: [&str; 10] = [
            "name",
            "step_a",
            "rise_time_s",
            "min_period_s",
            "clock_hz",
            "max_pulses",
            "at_m",
            "pins_m",
            "package",
            "die",
        ];
        let f = self.sub_object(value, path, &KEYS, &empty);
        if f.known.is_empty() {
            return (Load::new(String::new(), f64::NAN, None), self.load_stand_in(placed));
        }
        let spot = self.load_spot(&f, placed);
        let load = Load {
            name: self.string(&f, "name"),
            step_a: self.number(&f, "step_a"),
            rise_time_s: self.opt_number(&f, "rise_time_s"),
            min_period_s: self.opt_number(&f, "min_period_s"),
            clock_hz: self.opt_number(&f, "clock_hz"),
            max_pulses: f
                .map
                .get("max_pulses")
                .and_then(|v| self.count(v, &join(path, "max_pulses"), &crate::model::ranges::MAX_PULSES)),
        };
        (load, spot)
    }

    fn decap(&mut self, value: &Value, path: &str, placed: bool) -> (DecapGroup, Option<crate::model::GroupPlacement>) {
        let empty = Map::new();
        let f = self.sub_object(
            value,
            path,
            &["part", "count", "mounting_h", "mounting", "at_m", "placements", "port_m"],
            &empty,
        );
        // A stand-in count of 1 keeps the rail's "nothing to ground" rule from firing on a count already reported.
        if f.known.is_empty() {
            return (DecapGroup::new("", 1, 0.0), self.group_stand_in(placed));
        }
        let spot = self.group_spot(&f, placed);
        (self.decap_fields(&f, path), spot)
    }

    fn decap_fields(&mut self, f: &Fields, path: &str) -> DecapGroup {
        let count = self
            .required(f, "count")
            .and_then(|v| self.count(v, &join(path, "count"), &crate::model::ranges::COUNT))
            .unwrap_or(1);
        let part = self.string(f, "part");
        match (f.map.get("mounting_h"), f.map.get("mounting")) {
            (Some(_), Some(_)) => {
                self.problem(join(path, "mounting"), "give mounting_h or mounting (the geometry), not both");
                DecapGroup::new(part, count, 0.0)
            }
            (None, None) => {
                self.problem(
                    join(path, "mounting_h"),
                    "missing: give mounting_h (the mounting inductance) or mounting (its geometry)",
                );
                DecapGroup::new(part, count, 0.0)
            }
            (Some(_), None) => DecapGroup::new(part, count, self.number(f, "mounting_h")),
            (None, Some(g)) => {
                let mounting = self.geometry(g, &join(path, "mounting"));
                DecapGroup { part, count, mounting_h: 0.0, mounting }
            }
        }
    }

    /// A mounting geometry; `None` (with the problem recorded) when it is not an object of the right fields.
    fn geometry(&mut self, value: &Value, path: &str) -> Option<MountingGeometry> {
        const LENGTHS: [&str; 6] =
            ["trace_length_m", "trace_width_m", "trace_height_m", "via_drill_m", "via_length_m", "via_pitch_m"];
        let before = self.problems.len();
        let empty = Map::new();
        let f = self.sub_object(
            value,
            path,
            &[
                "trace_length_m",
                "trace_width_m",
                "trace_height_m",
                "via_drill_m",
                "via_length_m",
                "via_pitch_m",
                "vias_per_pad",
            ],
            &empty,
        );
        if f.known.is_empty() {
            return None;
        }
        let [trace_length_m, trace_width_m, trace_height_m, via_drill_m, via_length_m, via_pitch_m] =
            LENGTHS.map(|k| self.number(&f, k));
        // One via per pad unless the file says more.
        let vias_per_pad = match f.map.get("vias_per_pad") {
            None => 1,
            Some(v) => self.count(v, &join(path, "vias_per_pad"), &crate::model::ranges::VIAS_PER_PAD).unwrap_or(1),
        };
        (self.problems.len() == before).then_some(MountingGeometry {
            trace_length_m,
            trace_width_m,
            trace_height_m,
            via_drill_m,
            via_length_m,
            via_pitch_m,
            vias_per_pad,
        })
    }

    /// A count: a whole number (written as 3 or 3.0) inside `range`.
    fn count(&mut self, value: &Value, path: &str, range: &crate::model::ranges::Range) -> Option<u32> {
        let x = self.number_at(value, path)?;
        if x.fract() != 0.0 || !range.contains(x) {
            let shown = match value {
                Value::Number(n) => n.to_string(),
                _ => crate::units::full_precision(x),
            };
            self.problem(path, format!("must be a whole number {} ({}), not {shown}", range.words(), range.what));
            return None;
        }
        Some(x as u32)
    }
}

fn kind_of(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "true/false",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "an array",
        Value::Object(_) => "an object",
    }
}
