//! The project's own fuzzing harness: structure-aware mutation of valid boards and Touchstone files, of odd file
//! types and of command-line values, each run against the `hushrail` binary with a time and memory limit, every
//! outcome classified. Shared by the bounded run in `cargo test` (tests/integration/fuzz.rs) and the long run
//! (`examples/fuzz.rs`, `bash scripts/fuzz.sh`).
//!
//! What counts as a failure: a panic, a signal (an abort on a failed allocation, a stack overflow), a hang past
//! the time limit, an exit code other than 0, 1 or 2, a non-finite number in the output (NaN, inf, or a JSON
//! null where a number belongs), and a refusal (exit 2) whose message names no place (neither the file nor a
//! flag).
#![allow(dead_code)]

use serde_json::{Map, Value, json};
use std::collections::BTreeMap;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// A small, fast, seedable generator (xorshift64*), so a run is repeatable from its seed.
#[derive(Debug, Clone)]
pub struct Rng(u64);

impl Rng {
    /// A generator from a seed (any value; 0 is moved off the fixed point).
    pub fn new(seed: u64) -> Rng {
        Rng(seed ^ 0x9e37_79b9_7f4a_7c15 | 1)
    }

    /// The next 64 random bits.
    pub fn next(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }

    /// A number in 0..n (n > 0).
    pub fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }

    /// One of `items`.
    pub fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }

    /// True with probability 1/n.
    pub fn one_in(&mut self, n: usize) -> bool {
        self.below(n) == 0
    }
}

/// Numbers a mutation writes where a number was (as JSON text, so values JSON cannot hold are tried too).
const EXTREME_NUMBERS: &[&str] = &[
    "0",
    "-0",
    "-1",
    "1e308",
    "-1e308",
    "1.7976931348623157e308",
    "5e-324",
    "1e-300",
    "1e-320",
    "4294967295",
    "4294967296",
    "18446744073709551615",
    "1e19",
    "1e400",
    "-1e400",
    "1e-400",
    "NaN",
    "Infinity",
    "1.0",
    "0.5",
    "3.5",
    "1e-15",
    "1e15",
    "2.5e-12",
    "1e6",
    "1e5",
    "100",
    "1e-3",
    "123456789012345678901234567890",
];

/// Strings a mutation writes where a string was.
const ODD_STRINGS: &[&str] = &[
    "",
    " ",
    "\r",
    "line\nbreak",
    "\u{1b}[31mred",
    "a\rforged: line",
    "\u{feff}",
    "ünïcødé",
    "../../etc/passwd",
    "/dev/zero",
    "/dev/urandom",
    "fifo",
    ".",
    "xxx",
    "mlcc-100n-0402",
    "one-port",
    "shunt-through",
    "measured",
    "ceramic",
    "sum",
    "rss",
];

/// Keys a rename may pick (known fields elsewhere in the format, and garbage).
const KEYS: &[&str] = &[
    "",
    "count",
    "part",
    "mounting_h",
    "mounting",
    "capacitance_f",
    "esr_ohm",
    "esl_h",
    "voltage_v",
    "ripple_pct",
    "band_hz",
    "loads",
    "decaps",
    "source",
    "loop_crossover_hz",
    "loop_phase_margin_deg",
    "plane",
    "package",
    "die",
    "step_a",
    "rise_time_s",
    "touchstone",
    "fixture",
    "kind",
    "id",
    "name",
    "version",
    "format",
    "dc_bias",
    "tolerance_pct",
    "x y",
    "a.b",
    "[0]",
];

/// One input the harness tries: the files to lay out in a fresh folder and the command line to run there.
#[derive(Debug, Clone)]
pub struct Case {
    /// What was done, for the report.
    pub what: String,
    /// Files to write in the run's folder: (name, bytes).
    pub files: Vec<(String, Vec<u8>)>,
    /// Special files to make in the folder: (name, kind) with kind "fifo", "dir", "link-zero", "link-loop".
    pub specials: Vec<(String, &'static str)>,
    /// Arguments after the program name; "{dir}" is replaced by the run's folder.
    pub args: Vec<String>,
}

/// How one run ended.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord)]
pub enum Outcome {
    /// Exit 0, 1 or 2 with everything in order.
    Ok(i32),
    /// A Rust panic message on stderr.
    Panic,
    /// Ended by a signal (abort, segmentation fault, the memory limit).
    Signal(i32),
    /// Still running at the time limit.
    Hang,
    /// An exit code outside 0, 1, 2.
    ExitCode(i32),
    /// NaN, inf or a bare null in the output.
    NonFinite,
    /// Exit 2 with a message that names neither the file nor a flag.
    NoPlace,
}

impl Outcome {
    /// True when the outcome is a failure of the tool.
    pub fn is_failure(&self) -> bool {
        !matches!(self, Outcome::Ok(_))
    }

    /// A short class name for the tally.
    pub fn class(&self) -> String {
        match self {
            Outcome::Ok(c) => format!("exit {c}"),
            Outcome::Panic => "panic".into(),
            Outcome::Signal(s) => format!("signal {s}"),
            Outcome::Hang => "hang".into(),
            Outcome::ExitCode(c) => format!("exit code {c}"),
            Outcome::NonFinite => "non-finite output".into(),
            Outcome::NoPlace => "refusal without a place".into(),
        }
    }
}

/// Limits of one run.
#[derive(Debug, Clone, Copy)]
pub struct Limits {
    /// Wall-clock time before the run counts as a hang.
    pub time: Duration,
    /// Address-space limit, KiB (ulimit -v).
    pub memory_kib: u64,
}

impl Default for Limits {
    fn default() -> Self {
        Limits { time: Duration::from_secs(20), memory_kib: 4 << 20 }
    }
}

/// The seed corpus: every sample board, test network and measured board, and the Touchstone files.
pub struct Corpus {
    /// (file name, parsed board) of every valid board.
    pub boards: Vec<(String, Value)>,
    /// (file name, bytes) of every Touchstone file.
    pub touchstones: Vec<(String, Vec<u8>)>,
}

impl Corpus {
    /// Load the corpus from the crate's root folder.
    pub fn load(root: &Path) -> Corpus {
        let mut boards = Vec::new();
        for dir in ["sample_boards", "tests/networks"] {
            let mut paths: Vec<PathBuf> = std::fs::read_dir(root.join(dir))
                .map(|d| d.filter_map(|e| e.ok().map(|e| e.path())).collect())
                .unwrap_or_default();
            paths.sort();
            for p in paths.into_iter().filter(|p| p.extension().is_some_and(|e| e == "json")) {
                let text = std::fs::read_to_string(&p).unwrap_or_default();
                if let Ok(v) = serde_json::from_str::<Value>(&text) {
                    boards.push((p.file_name().unwrap().to_string_lossy().into_owned(), v));
                }
            }
        }
        let mut touchstones = Vec::new();
        let mut paths: Vec<PathBuf> = std::fs::read_dir(root.join("tests/touchstone"))
            .map(|d| d.filter_map(|e| e.ok().map(|e| e.path())).collect())
            .unwrap_or_default();
        paths.sort();
        for p in paths {
            let ext = p.extension().map(|e| e.to_string_lossy().to_ascii_lowercase()).unwrap_or_default();
            if ext == "s1p" || ext == "s2p" {
                touchstones.push((p.file_name().unwrap().to_string_lossy().into_owned(), std::fs::read(&p).unwrap()));
            }
        }
        Corpus { boards, touchstones }
    }
}

/// Every path to a value inside `v`, as a list of steps.
#[derive(Debug, Clone)]
enum Step {
    Key(String),
    Index(usize),
}

fn all_paths(v: &Value, here: &mut Vec<Step>, out: &mut Vec<Vec<Step>>) {
    out.push(here.clone());
    match v {
        Value::Object(m) => {
            for (k, x) in m {
                here.push(Step::Key(k.clone()));
                all_paths(x, here, out);
                here.pop();
            }
        }
        Value::Array(a) => {
            for (i, x) in a.iter().enumerate() {
                here.push(Step::Index(i));
                all_paths(x, here, out);
                here.pop();
            }
        }
        _ => {}
    }
}

fn at_mut<'v>(v: &'v mut Value, path: &[Step]) -> Option<&'v mut Value> {
    let mut cur = v;
    for s in path {
        cur = match s {
            Step::Key(k) => cur.get_mut(k.as_str())?,
            Step::Index(i) => cur.get_mut(*i)?,
        };
    }
    Some(cur)
}

/// A value of another type than `v`.
fn swap_type(rng: &mut Rng, v: &Value) -> Value {
    let choices = [json!(null), json!(true), json!("3"), json!([]), json!({}), json!([1, 2]), json!(7), json!(-2.5)];
    loop {
        let c = rng.pick(&choices).clone();
        if std::mem::discriminant(&c) != std::mem::discriminant(v) {
            return c;
        }
    }
}

/// Mutate a board value in place; some mutations can only be written as text, so the result is text.
fn mutate_value(rng: &mut Rng, board: &mut Value) -> (String, Option<String>) {
    let mut paths = Vec::new();
    all_paths(board, &mut Vec::new(), &mut paths);
    let path = rng.pick(&paths).clone();
    let where_ = format!("{path:?}");
    let Some(node) = at_mut(board, &path) else { return ("nothing".into(), None) };
    if let Value::Number(n) = node
        && rng.one_in(2)
    {
        // A plausible change most of the time, so the engine itself is exercised, not only the reader.
        let x = n.as_f64().unwrap_or(1.0);
        let k = rng.below(13) as i32 - 6;
        let y = if n.is_u64() { (x * 2f64.powi(k)).round() } else { x * 10f64.powi(k) };
        *node = json!(y);
        return (format!("scale {x} to {y} at {where_}"), None);
    }
    match rng.below(11) {
        0 => {
            if let Value::Object(m) = node
                && !m.is_empty()
            {
                let k = m.keys().nth(rng.below(m.len())).cloned().unwrap_or_default();
                m.remove(&k);
                return (format!("delete key {k:?} at {where_}"), None);
            }
            ("delete (no key)".into(), None)
        }
        1 => {
            if let Value::Object(m) = node
                && !m.is_empty()
            {
                let k = m.keys().nth(rng.below(m.len())).cloned().unwrap_or_default();
                let v = m.remove(&k).unwrap_or(Value::Null);
                let new = rng.pick(KEYS).to_string();
                m.insert(new.clone(), v);
                return (format!("rename key {k:?} to {new:?} at {where_}"), None);
            }
            ("rename (no key)".into(), None)
        }
        2 => {
            let new = swap_type(rng, node);
            *node = new;
            (format!("type swap at {where_}"), None)
        }
        3..=5 => {
            // Extreme numbers: written as text so that NaN and 1e400 reach the reader as typed.
            let marker = format!("\"@@NUM{}@@\"", rng.next());
            let num = rng.pick(EXTREME_NUMBERS).to_string();
            *node = Value::String(marker[1..marker.len() - 1].to_string());
            let text = serde_json::to_string_pretty(board).unwrap_or_default().replace(&marker, &num);
            (format!("number {num} at {where_}"), Some(text))
        }
        6 => {
            let s = rng.pick(ODD_STRINGS).to_string();
            *node = Value::String(s.clone());
            (format!("string {s:?} at {where_}"), None)
        }
        7 => {
            if let Value::Array(a) = node
                && !a.is_empty()
            {
                let n = *rng.pick(&[2usize, 10, 300, 3000]);
                let item = a[rng.below(a.len())].clone();
                for _ in 0..n {
                    a.push(item.clone());
                }
                return (format!("array grown by {n} at {where_}"), None);
            }
            let n = *rng.pick(&[1000usize, 100_000]);
            *node = Value::Array(vec![json!(1e-9); n]);
            (format!("huge array of {n} at {where_}"), None)
        }
        8 => {
            // A duplicate key: only text can hold one. Insert after the object's opening brace.
            if let Value::Object(m) = node
                && !m.is_empty()
            {
                let k = m.keys().nth(rng.below(m.len())).cloned().unwrap_or_default();
                let marker = format!("@@DUP{}@@", rng.next());
                let dup_value = rng.pick(&["0", "1e308", "\"x\"", "null"]).to_string();
                let mut with_marker = Map::new();
                with_marker.insert(marker.clone(), Value::Null);
                with_marker.extend(m.clone());
                *m = with_marker;
                let text = serde_json::to_string_pretty(board)
                    .unwrap_or_default()
                    .replace(&format!("\"{marker}\": null"), &format!("{}: {dup_value}", Value::String(k.clone())));
                return (format!("duplicate key {k:?} at {where_}"), Some(text));
            }
            ("duplicate (no key)".into(), None)
        }
        9 => {
            let count = *rng.pick(&[0u64, 1, 4294967295, 1_000_000, 100_000_000]);
            *node = json!(count);
            (format!("count {count} at {where_}"), None)
        }
        _ => {
            *node = json!([5e-324, 1e300]);
            (format!("pair [5e-324, 1e300] at {where_}"), None)
        }
    }
}

/// Byte-level damage to a file's text: truncation, a byte-order mark, CRLF, invalid UTF-8, control characters.
fn damage_bytes(rng: &mut Rng, bytes: &mut Vec<u8>) -> String {
    match rng.below(6) {
        0 => {
            let at = rng.below(bytes.len().max(1));
            bytes.truncate(at);
            format!("truncated at {at}")
        }
        1 => {
            let mut b = vec![0xef, 0xbb, 0xbf];
            b.append(bytes);
            *bytes = b;
            "byte-order mark".into()
        }
        2 => {
            let text = String::from_utf8_lossy(bytes).replace('\n', "\r\n");
            *bytes = text.into_bytes();
            "CRLF".into()
        }
        3 => {
            let at = rng.below(bytes.len().max(1));
            bytes.insert(at.min(bytes.len()), *rng.pick(&[0xff, 0xc3, 0x80, 0xfe]));
            format!("invalid UTF-8 at {at}")
        }
        4 => {
            let at = rng.below(bytes.len().max(1));
            bytes.insert(at.min(bytes.len()), *rng.pick(&[b'\r', 0x1b, 0x00, 0x07]));
            format!("control byte at {at}")
        }
        _ => {
            let at = rng.below(bytes.len().max(1));
            let end = (at + 1 + rng.below(64)).min(bytes.len());
            let chunk = bytes[at..end].to_vec();
            bytes.splice(at..at, chunk);
            format!("repeated bytes at {at}")
        }
    }
}

/// Command lines a board is run with; "{b}" is the board file.
fn command_lines(rng: &mut Rng, board: &Value) -> Vec<String> {
    let rail = board["rails"]
        .as_array()
        .and_then(|r| r.get(rng.below(r.len().max(1))))
        .and_then(|r| r["name"].as_str())
        .unwrap_or("VCORE")
        .to_string();
    let value = |rng: &mut Rng| -> String {
        rng.pick(&[
            "1k",
            "0",
            "-5n",
            "5e-324",
            "1e-400",
            "1e400",
            "abc",
            "1G",
            "1e12",
            "1e13",
            "NaN",
            "inf",
            "4u7",
            "1e-15",
            "4294967296",
            "1",
            "100m",
            "-1",
            "",
        ])
        .to_string()
    };
    let count = |rng: &mut Rng| -> String {
        rng.pick(&["0", "1", "2", "3", "1000", "1000000000", "18446744073709551615", "18446744073709551616", "-1"])
            .to_string()
    };
    let mut args: Vec<String> = match rng.below(12) {
        0..=2 => vec!["check".into(), "{b}".into()],
        3 => vec!["check".into(), "{b}".into(), "--json".into()],
        4 => vec!["sweep".into(), "{b}".into(), "--rail".into(), rail.clone()],
        5 => vec!["export".into(), "{b}".into(), "--rail".into(), rail.clone(), "--csv".into(), "{dir}/out.csv".into()],
        6 => vec!["droop".into(), "{b}".into(), "--rail".into(), rail.clone(), "--points".into(), "200".into()],
        7 => vec!["droop".into(), "{b}".into(), "--rail".into(), rail.clone(), "--json".into()],
        8 => vec!["netlist".into(), "{b}".into(), "--rail".into(), rail.clone()],
        9 => vec!["bom".into(), "{b}".into(), "--csv".into()],
        10 => vec!["report".into(), "{b}".into(), "--no-droop".into(), "-o".into(), "{dir}/r.html".into()],
        _ => vec!["suggest".into(), "{b}".into(), "--rail".into(), rail.clone(), "--options".into(), "2".into()],
    };
    // Sometimes a flag with an odd value too (the = form, so a negative value is not read as a flag).
    if rng.one_in(3) {
        let flag = match args[0].as_str() {
            "sweep" | "export" => rng.pick(&["from", "to", "points"]).to_string(),
            "droop" => rng.pick(&["step", "rise", "window", "points"]).to_string(),
            "netlist" => rng.pick(&["from", "to", "per-decade"]).to_string(),
            "suggest" => rng.pick(&["mounting", "max-total", "max-per-part", "options"]).to_string(),
            _ => String::new(),
        };
        if !flag.is_empty() {
            let v = if matches!(flag.as_str(), "points" | "per-decade" | "max-total" | "max-per-part" | "options") {
                count(rng)
            } else {
                value(rng)
            };
            args.push(format!("--{flag}={v}"));
        }
    }
    args
}

/// Command lines of the commands that take no board: mounting and coupling with odd values.
fn flag_only_case(rng: &mut Rng) -> Case {
    let v = |rng: &mut Rng| {
        rng.pick(&["0", "-1", "5e-324", "1e-300", "1e308", "1e400", "0.1m", "1m", "10m", "1", "x", "1e-9", "20u"])
            .to_string()
    };
    let args = if rng.one_in(2) {
        let flag = rng.pick(&["trace-length", "trace-width", "trace-height", "via-drill", "via-length", "via-pitch"]);
        vec!["mounting".into(), format!("--{flag}={}", v(rng)), "--json".into()]
    } else {
        vec!["coupling".into(), format!("--impedance={}", v(rng)), format!("--lowest={}", v(rng)), "--json".into()]
    };
    Case { what: format!("flags {args:?}"), files: Vec::new(), specials: Vec::new(), args }
}

/// One case from the generator.
pub fn generate(rng: &mut Rng, corpus: &Corpus) -> Case {
    let roll = rng.below(100);
    if roll < 8 {
        return flag_only_case(rng);
    }
    let (name, seed) = rng.pick(&corpus.boards).clone();
    if roll < 14 {
        // Odd file types where a board or a measured part's data should be.
        let kind = *rng.pick(&["fifo", "dir", "link-zero", "link-loop", "missing"]);
        if rng.one_in(2) {
            let args = vec!["check".into(), "{dir}/odd".into()];
            let specials = if kind == "missing" { Vec::new() } else { vec![("odd".to_string(), kind)] };
            return Case { what: format!("board is {kind}"), files: Vec::new(), specials, args };
        }
        let mut board = seed.clone();
        if let Some(p) = board["parts"].as_array_mut() {
            p.push(json!({"id": "odd-measured", "kind": "measured", "touchstone": "odd", "fixture": "one-port"}));
        }
        if let Some(rail) = board["rails"].get_mut(0).and_then(|r| r["decaps"].as_array_mut()) {
            rail.push(json!({"part": "odd-measured", "count": 1, "mounting_h": 3e-10}));
        }
        let files = vec![("board.json".to_string(), serde_json::to_vec_pretty(&board).unwrap())];
        let specials = if kind == "missing" { Vec::new() } else { vec![("odd".to_string(), kind)] };
        let args = vec!["check".into(), "{dir}/board.json".into()];
        return Case { what: format!("measured part's file is {kind}"), files, specials, args };
    }
    if roll < 24 && !corpus.touchstones.is_empty() {
        // A measured part whose Touchstone file is damaged.
        let (ts_name, ts) = rng.pick(&corpus.touchstones).clone();
        let mut bytes = ts;
        let what = damage_bytes(rng, &mut bytes);
        let fixture = if ts_name.ends_with("s2p") { "shunt-through" } else { "one-port" };
        let board = json!({"format": "hushrail-board", "version": 1, "name": "fuzz",
            "parts": [{"id": "m", "kind": "measured", "touchstone": ts_name, "fixture": fixture}],
            "rails": [{"name": "R1", "voltage_v": 1.0, "ripple_pct": 5, "band_hz": [1e3, 1e8],
                       "source": {"r_ohm": 1e-3, "l_h": 1e-8}, "loads": [{"name": "u1", "step_a": 1.0}],
                       "decaps": [{"part": "m", "count": 4, "mounting_h": 3e-10}]}]});
        let args = if rng.one_in(2) {
            vec!["check".into(), "{dir}/board.json".into(), "--json".into()]
        } else {
            vec![
                "droop".into(),
                "{dir}/board.json".into(),
                "--rail".into(),
                "R1".into(),
                "--points".into(),
                "100".into(),
            ]
        };
        return Case {
            what: format!("touchstone {ts_name} {what}"),
            files: vec![(ts_name, bytes), ("board.json".into(), serde_json::to_vec_pretty(&board).unwrap())],
            specials: Vec::new(),
            args,
        };
    }
    let mut board = seed.clone();
    let mut what = Vec::new();
    let mut text = None;
    let mutations = if rng.one_in(3) { 1 + rng.below(3) } else { 1 };
    for _ in 0..mutations {
        let (w, t) = mutate_value(rng, &mut board);
        what.push(w);
        if let Some(t) = t {
            text = Some(t);
            break;
        }
    }
    let mut bytes = text.unwrap_or_else(|| serde_json::to_string_pretty(&board).unwrap_or_default()).into_bytes();
    if rng.one_in(8) {
        what.push(damage_bytes(rng, &mut bytes));
    }
    let args = command_lines(rng, &board).into_iter().map(|a| a.replace("{b}", "{dir}/board.json")).collect();
    // Boards from the measured folder refer to ../touchstone: keep only boards without measured parts there.
    Case {
        what: format!("{name}: {}", what.join("; ")),
        files: vec![("board.json".into(), bytes)],
        specials: Vec::new(),
        args,
    }
}

/// Run one case in a fresh folder under `work` and classify it. Returns the outcome and the captured output.
pub fn run_case(binary: &Path, case: &Case, work: &Path, limits: Limits) -> (Outcome, String, String) {
    let dir = work.join("run");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    for (name, bytes) in &case.files {
        std::fs::write(dir.join(name), bytes).unwrap();
    }
    for (name, kind) in &case.specials {
        let p = dir.join(name);
        match *kind {
            "fifo" => {
                let _ = Command::new("mkfifo").arg(&p).status();
            }
            "dir" => std::fs::create_dir_all(&p).unwrap(),
            "link-zero" => std::os::unix::fs::symlink("/dev/zero", &p).unwrap(),
            _ => std::os::unix::fs::symlink(&p, &p).unwrap(),
        }
    }
    let args: Vec<String> = case.args.iter().map(|a| a.replace("{dir}", &dir.display().to_string())).collect();
    let mut child = Command::new("sh")
        .arg("-c")
        .arg(format!("ulimit -v {}; exec \"$0\" \"$@\"", limits.memory_kib))
        .arg(binary)
        .args(&args)
        .current_dir(&dir)
        .env("RUST_BACKTRACE", "0")
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("spawn the binary");
    let (mut out, mut err) = (child.stdout.take().unwrap(), child.stderr.take().unwrap());
    // Read both pipes on threads so a chatty child never blocks on a full pipe; keep at most 4 MiB of each.
    let t_out = std::thread::spawn(move || {
        let mut b = Vec::new();
        let _ = (&mut out).take(4 << 20).read_to_end(&mut b);
        b
    });
    let t_err = std::thread::spawn(move || {
        let mut b = Vec::new();
        let _ = (&mut err).take(4 << 20).read_to_end(&mut b);
        b
    });
    let start = Instant::now();
    let status = loop {
        match child.try_wait() {
            Ok(Some(s)) => break Some(s),
            _ if start.elapsed() > limits.time => {
                let _ = child.kill();
                let _ = child.wait();
                break None;
            }
            _ => std::thread::sleep(Duration::from_millis(2)),
        }
    };
    let stdout = String::from_utf8_lossy(&t_out.join().unwrap_or_default()).into_owned();
    let stderr = String::from_utf8_lossy(&t_err.join().unwrap_or_default()).into_owned();
    let _ = std::fs::remove_dir_all(&dir);
    let outcome = match status {
        None => Outcome::Hang,
        Some(s) => classify(s, &stdout, &stderr, &args),
    };
    (outcome, stdout, stderr)
}

fn classify(status: std::process::ExitStatus, stdout: &str, stderr: &str, args: &[String]) -> Outcome {
    use std::os::unix::process::ExitStatusExt;
    if stderr.contains("panicked at") {
        return Outcome::Panic;
    }
    if let Some(sig) = status.signal() {
        return Outcome::Signal(sig);
    }
    let code = status.code().unwrap_or(-1);
    if !(0..=2).contains(&code) {
        return Outcome::ExitCode(code);
    }
    if has_non_finite(stdout) {
        return Outcome::NonFinite;
    }
    if code == 2 {
        let names_file = args.iter().any(|a| a.contains('/') && stderr.contains(a.as_str()))
            || stderr.contains("board.json")
            || stderr.contains("built-in sample");
        let names_flag = stderr.contains("--") || stderr.contains("Usage:") || stderr.contains("error: ");
        if !names_file && !names_flag {
            return Outcome::NoPlace;
        }
    }
    Outcome::Ok(code)
}

/// Whether output holds a non-finite number: NaN or inf as a token, or a JSON null where a number belongs.
pub fn has_non_finite(text: &str) -> bool {
    let token = |t: &str| {
        let t = t.trim_matches(|c: char| !c.is_ascii_alphanumeric() && c != '-');
        matches!(t, "NaN" | "nan" | "inf" | "-inf" | "Infinity" | "-Infinity" | "+inf")
    };
    if text.split(|c: char| c.is_whitespace() || c == ',' || c == ';' || c == '(' || c == ')').any(token) {
        return true;
    }
    // JSON: a null at a key that names a quantity (the documented nulls are listed in README).
    if let Ok(v) = serde_json::from_str::<Value>(text) {
        return has_bad_null(&v, "");
    }
    false
}

/// JSON keys whose null is documented in README (a value that does not exist, not a failed computation).
const DOCUMENTED_NULLS: &[&str] = &[
    "self_resonance_hz",
    "rise_time_s",
    "rated_voltage_v",
    "unit_cost",
    "area_m2",
    "one_fewer_ohm",
    "inductive_side",
    "capacitive_side",
];

fn has_bad_null(v: &Value, key: &str) -> bool {
    match v {
        Value::Null => !DOCUMENTED_NULLS.contains(&key),
        Value::Object(m) => m.iter().any(|(k, x)| has_bad_null(x, k)),
        Value::Array(a) => a.iter().any(|x| has_bad_null(x, key)),
        _ => false,
    }
}

/// The tally of a run of many cases: outcomes by class, and the first few failing cases of each class.
#[derive(Debug, Default)]
pub struct Tally {
    /// Count of each class.
    pub counts: BTreeMap<String, usize>,
    /// Up to five examples of each failing class: what, the command line, the first lines of stderr.
    pub examples: BTreeMap<String, Vec<String>>,
    /// Cases run.
    pub runs: usize,
}

impl Tally {
    /// Record one outcome.
    pub fn add(&mut self, case: &Case, outcome: &Outcome, stderr: &str) {
        self.runs += 1;
        *self.counts.entry(outcome.class()).or_default() += 1;
        // Every failing class, and a few refusals to show what the reader says.
        if outcome.is_failure() || *outcome == Outcome::Ok(2) {
            let ex = self.examples.entry(outcome.class()).or_default();
            if ex.len() < if outcome.is_failure() { 5 } else { 12 } {
                let first: String = stderr.lines().take(3).collect::<Vec<_>>().join(" | ");
                ex.push(format!("{} :: {:?} :: {first}", case.what, case.args));
            }
        }
    }

    /// Failures of every class.
    pub fn failures(&self) -> usize {
        self.counts.iter().filter(|(k, _)| !k.starts_with("exit ")).map(|(_, n)| n).sum()
    }

    /// A report for people.
    pub fn report(&self) -> String {
        let mut s = format!("{} runs\n", self.runs);
        for (k, n) in &self.counts {
            s.push_str(&format!("  {k}: {n}\n"));
        }
        for (k, ex) in &self.examples {
            s.push_str(&format!("examples of {k}:\n"));
            for e in ex {
                s.push_str(&format!("  {e}\n"));
            }
        }
        s
    }
}

/// Run `runs` cases from `seed` on `workers` threads, or until `budget` runs out.
pub fn run_many(
    binary: &Path,
    root: &Path,
    seed: u64,
    runs: usize,
    workers: usize,
    budget: Duration,
    limits: Limits,
) -> Tally {
    let corpus = std::sync::Arc::new(Corpus::load(root));
    let work = std::env::temp_dir().join(format!("hushrail-fuzz-{}-{seed}", std::process::id()));
    let start = Instant::now();
    let tally = std::sync::Mutex::new(Tally::default());
    std::thread::scope(|s| {
        for w in 0..workers.max(1) {
            let corpus = corpus.clone();
            let tally = &tally;
            let work = work.join(format!("w{w}"));
            s.spawn(move || {
                let mut i = w;
                while i < runs && start.elapsed() < budget {
                    // Each case from its own seed, so any case can be replayed alone.
                    let mut rng = Rng::new(seed.wrapping_add(i as u64).wrapping_mul(0x9e37_79b9));
                    let case = generate(&mut rng, &corpus);
                    let (outcome, _, stderr) = run_case(binary, &case, &work, limits);
                    tally.lock().unwrap().add(&case, &outcome, &stderr);
                    i += workers.max(1);
                }
            });
        }
    });
    let _ = std::fs::remove_dir_all(&work);
    tally.into_inner().unwrap()
}
