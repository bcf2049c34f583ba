//! Touchstone files (the open IBIS Open Forum standard, versions 1.1 and 2.0): a reader for 1- and 2-port data,
//! the conversions from measured S-parameters to a part's impedance, and a writer of one-port files.
//!
//! What the reader honours:
//! - the option line `# <freq unit> <parameter> <format> R <z0>` (any order, any case, each field optional with
//!   the standard's defaults GHz, S, MA, R 50); units Hz/kHz/MHz/GHz; parameters S, Z, Y; formats RI, MA, DB;
//! - `!` comments anywhere (to the end of the line);
//! - version 2.0 keywords: [Version], [Number of Ports], [Two-Port Data Order], [Number of Frequencies],
//!   [Reference] (one impedance for every port), [Matrix Format] (Full, Lower, Upper), [Network Data],
//!   [Noise Data] and [Number of Noise Frequencies] (noise data is skipped), [Begin Information] ...
//!   [End Information] (skipped), [End];
//! - version 1.1 two-port rows `f N11 N21 N12 N22`, and the noise block that may follow them (skipped: it starts
//!   where a frequency is not above the last one);
//! - Z and Y data: version 1.1 stores them normalised to the reference impedance (Z/R, Y·R), version 2.0 stores
//!   them as they are; the reader returns them in Ω and S either way.
//!
//! Version 2.1 files that use only these keywords are read too. Each record (one frequency's data) must be on one line, as the standard writes 1- and 2-port data. Anything
//! else (more than 2 ports, mixed-mode data, per-port reference impedances that differ, G/H parameters) is refused
//! with the line and the reason.

use num_complex::Complex64;
use std::fmt;
use std::path::Path;

/// Why a Touchstone file cannot be used: the file, the line (1-based, when one is to blame) and the reason.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TouchstoneError {
    /// The file as the user named it.
    pub file: String,
    /// The line at fault, 1-based; `None` when the file as a whole is at fault (missing, empty, too short).
    pub line: Option<usize>,
    /// What is wrong, in plain words.
    pub reason: String,
}

impl fmt::Display for TouchstoneError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.line {
            Some(line) => write!(f, "{}:{}: {}", self.file, line, self.reason),
            None => write!(f, "{}: {}", self.file, self.reason),
        }
    }
}

impl std::error::Error for TouchstoneError {}

/// Which network parameters a file holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Parameter {
    /// Scattering parameters (no unit).
    S,
    /// Impedance parameters, Ω.
    Z,
    /// Admittance parameters, S.
    Y,
}

/// How each complex number is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DataFormat {
    /// Real and imaginary parts.
    RealImaginary,
    /// Linear magnitude and angle in degrees.
    MagnitudeAngle,
    /// Magnitude in dB (20·log10) and angle in degrees.
    DecibelAngle,
}

/// The standard's version a file follows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Version {
    /// Version 1.0 / 1.1 (no [Version] keyword).
    V1,
    /// Version 2.0 (starts with `[Version] 2.0`).
    V2,
}

/// The contents of a 1- or 2-port Touchstone file, in SI units.
#[derive(Debug, Clone, PartialEq)]
pub struct Touchstone {
    /// The version the file follows.
    pub version: Version,
    /// 1 or 2.
    pub ports: usize,
    /// What the data are.
    pub parameter: Parameter,
    /// The format the numbers were written in (kept for messages; `data` is already complex).
    pub format: DataFormat,
    /// Reference impedance, Ω.
    pub z0_ohm: f64,
    /// Frequencies, Hz, strictly increasing.
    pub freq_hz: Vec<f64>,
    /// One matrix per frequency, row-major: `data[k][i * ports + j]` is N(i+1)(j+1) at `freq_hz[k]`. S has no
    /// unit, Z is in Ω and Y in S (version 1.1 normalisation already undone).
    pub data: Vec<Vec<Complex64>>,
}

impl Touchstone {
    /// N(i+1)(j+1) at frequency index `k` (0-based port indices).
    pub fn get(&self, k: usize, i: usize, j: usize) -> Complex64 {
        self.data[k][i * self.ports + j]
    }

    /// The impedance of the part measured in `fixture`, at each of `freq_hz`.
    ///
    /// One-port: Z = Z0 (1 + S11)/(1 − S11), or Z11, or 1/Y11. Shunt-through (the part across the line between
    /// two ports): Z = (Z0/2)·S21/(1 − S21), or Z21 (every Z entry of a shunt element is its impedance); Y data
    /// cannot describe a shunt element (its Y matrix does not exist) and is refused.
    pub fn impedance(&self, fixture: Fixture) -> Result<Vec<Complex64>, String> {
        match (fixture, self.ports) {
            (Fixture::OnePort, 1) => Ok((0..self.freq_hz.len())
                .map(|k| {
                    let n = self.get(k, 0, 0);
                    match self.parameter {
                        Parameter::S => one_port_s_to_z(n, self.z0_ohm),
                        Parameter::Z => n,
                        Parameter::Y => 1.0 / n,
                    }
                })
                .collect()),
            (Fixture::ShuntThrough, 2) => match self.parameter {
                Parameter::S => Ok((0..self.freq_hz.len())
                    .map(|k| shunt_through_s21_to_z(self.get(k, 1, 0), self.z0_ohm))
                    .collect()),
                Parameter::Z => Ok((0..self.freq_hz.len()).map(|k| self.get(k, 1, 0)).collect()),
                Parameter::Y => Err("a shunt-through measurement cannot be given as Y-parameters (a shunt element \
                                     has no Y matrix); give S- or Z-parameters"
                    .into()),
            },
            (Fixture::OnePort, n) => {
                Err(format!("a one-port fixture needs a 1-port file (.s1p), this one has {n} ports"))
            }
            (Fixture::ShuntThrough, n) => Err(format!(
                "a shunt-through fixture needs a 2-port file (.s2p), this one has {n} {}",
                if n == 1 { "port" } else { "ports" }
            )),
        }
    }
}

pub use crate::model::Fixture;

/// One-port reflection to impedance: Z = Z0 (1 + S11)/(1 − S11).
pub fn one_port_s_to_z(s11: Complex64, z0_ohm: f64) -> Complex64 {
    z0_ohm * (1.0 + s11) / (1.0 - s11)
}

/// Impedance to one-port reflection: S11 = (Z − Z0)/(Z + Z0).
pub fn z_to_one_port_s(z: Complex64, z0_ohm: f64) -> Complex64 {
    (z - z0_ohm) / (z + z0_ohm)
}

/// Shunt-through transmission to the shunt element's impedance: Z = (Z0/2)·S21/(1 − S21) (the two-port
/// shunt-through method; with both ports at Z0, a shunt Z gives S21 = 2Z/(2Z + Z0)).
pub fn shunt_through_s21_to_z(s21: Complex64, z0_ohm: f64) -> Complex64 {
    0.5 * z0_ohm * s21 / (1.0 - s21)
}

/// Read a Touchstone file. The port count comes from the extension (.s1p, .s2p) for version 1.1 and from
/// [Number of Ports] for version 2.0 (whose files may end in .ts).
pub fn read_touchstone(path: &Path) -> Result<Touchstone, TouchstoneError> {
    let file = path.display().to_string();
    let bytes = super::read_limited(path, crate::model::ranges::MAX_TOUCHSTONE_BYTES)
        .map_err(|reason| TouchstoneError { file: file.clone(), line: None, reason })?;
    let text = String::from_utf8(bytes).map_err(|e| TouchstoneError {
        file: file.clone(),
        line: None,
        reason: format!("not text (invalid UTF-8 at byte {})", e.utf8_error().valid_up_to()),
    })?;
    parse_touchstone(&text, &file, ports_from_extension(path))
}

/// The port count an extension `.sNp` (or `.zNp`, `.yNp`) gives, if any.
pub fn ports_from_extension(path: &Path) -> Option<usize> {
    let ext = path.extension()?.to_str()?.to_ascii_lowercase();
    let digits = ext.strip_prefix(['s', 'z', 'y'])?.strip_suffix('p')?;
    digits.parse().ok()
}

/// What the parser has seen so far.
struct Reader<'a> {
    file: &'a str,
    version: Version,
    ports: Option<usize>,
    option_line: Option<usize>,
    unit_hz: f64,
    parameter: Parameter,
    format: DataFormat,
    z0: f64,
    /// Version 2.0: the data order of a 2-port, true for 21_12 (as version 1.1).
    order_21_12: Option<bool>,
    matrix: Matrix,
    expected_frequencies: Option<(usize, usize)>,
    freq_hz: Vec<f64>,
    raw: Vec<Vec<Complex64>>,
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Matrix {
    Full,
    Lower,
    Upper,
}

/// Where the reader is in a file.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Stage {
    /// Before the data (version 2.0: before [Network Data]).
    Header,
    /// Reading network data.
    Network,
    /// Inside [Begin Information] ... [End Information].
    Information,
    /// Past the network data: noise data or [End]; the rest is skipped.
    Done,
}

impl Reader<'_> {
    fn err(&self, line: usize, reason: impl Into<String>) -> TouchstoneError {
        TouchstoneError { file: self.file.to_string(), line: Some(line), reason: reason.into() }
    }

    fn option(&mut self, n: usize, text: &str) -> Result<(), TouchstoneError> {
        if let Some(first) = self.option_line {
            return Err(self.err(n, format!("a second option line (the first is on line {first})")));
        }
        self.option_line = Some(n);
        let mut words = text.split_whitespace();
        while let Some(word) = words.next() {
            match word.to_ascii_lowercase().as_str() {
                "hz" => self.unit_hz = 1.0,
                "khz" => self.unit_hz = 1e3,
                "mhz" => self.unit_hz = 1e6,
                "ghz" => self.unit_hz = 1e9,
                "s" => self.parameter = Parameter::S,
                "z" => self.parameter = Parameter::Z,
                "y" => self.parameter = Parameter::Y,
                "g" | "h" => {
                    return Err(self.err(n, format!("{word}-parameters are not supported (only S, Z and Y)")));
                }
                "ri" => self.format = DataFormat::RealImaginary,
                "ma" => self.format = DataFormat::MagnitudeAngle,
                "db" => self.format = DataFormat::DecibelAngle,
                "r" => {
                    let value = words.next().ok_or_else(|| {
                        self.err(n, "the option line ends after R: the reference impedance is missing")
                    })?;
                    self.z0 = parse_number(value)
                        .filter(|z| *z > 0.0)
                        .ok_or_else(|| self.err(n, format!("\"{value}\" is not a positive reference impedance")))?;
                }
                _ => {
                    return Err(self.err(
                        n,
                        format!(
                            "unknown option \"{word}\" (expected Hz, kHz, MHz, GHz; S, Z, Y; RI, MA, DB; R and \
                             an impedance)"
                        ),
                    ));
                }
            }
        }
        Ok(())
    }

    /// A version 2.0 keyword line. Returns the stage after it.
    fn keyword(&mut self, n: usize, text: &str, stage: Stage) -> Result<Stage, TouchstoneError> {
        let close = text.find(']').ok_or_else(|| self.err(n, "a keyword without its closing \"]\""))?;
        let name = text[1..close].trim().to_ascii_lowercase();
        let value = text[close + 1..].trim();
        if stage == Stage::Information {
            return Ok(if name == "end information" { Stage::Header } else { Stage::Information });
        }
        if stage == Stage::Done {
            return Ok(Stage::Done);
        }
        if self.version == Version::V1 && name != "version" {
            return Err(
                self.err(n, format!("keyword [{}] in a version 1.1 file (no [Version] 2.0 first)", &text[1..close]))
            );
        }
        let count = |r: &Self| -> Result<usize, TouchstoneError> {
            value
                .parse::<usize>()
                .map_err(|_| r.err(n, format!("[{}] needs a whole number, not \"{value}\"", &text[1..close])))
        };
        match name.as_str() {
            "version" => {
                if self.version == Version::V2 {
                    return Err(self.err(n, "[Version] must come once, first"));
                }
                if value != "2.0" && value != "2.1" {
                    return Err(
                        self.err(n, format!("version \"{value}\" is not supported (1.1 without [Version], or 2.0)"))
                    );
                }
                self.version = Version::V2;
            }
            "number of ports" => {
                let p = count(self)?;
                if p == 0 {
                    return Err(self.err(n, "[Number of Ports] must be at least 1"));
                }
                self.ports = Some(p);
            }
            "two-port data order" => match value {
                "12_21" => self.order_21_12 = Some(false),
                "21_12" => self.order_21_12 = Some(true),
                _ => return Err(self.err(n, format!("[Two-Port Data Order] must be 12_21 or 21_12, not \"{value}\""))),
            },
            "number of frequencies" => {
                let f = count(self)?;
                if f == 0 {
                    return Err(self.err(n, "[Number of Frequencies] must be at least 1"));
                }
                self.expected_frequencies = Some((f, n));
            }
            "number of noise frequencies" => {}
            "reference" => {
                let values: Vec<&str> = value.split_whitespace().collect();
                let mut z = Vec::new();
                for v in &values {
                    z.push(
                        parse_number(v)
                            .filter(|z| *z > 0.0)
                            .ok_or_else(|| self.err(n, format!("\"{v}\" is not a positive reference impedance")))?,
                    );
                }
                let Some(&first) = z.first() else {
                    return Err(self.err(n, "[Reference] needs the reference impedances on the same line"));
                };
                if z.iter().any(|&v| v != first) {
                    return Err(self.err(n, "the ports have different reference impedances; only one is supported"));
                }
                self.z0 = first;
            }
            "matrix format" => {
                self.matrix = match value.to_ascii_lowercase().as_str() {
                    "full" => Matrix::Full,
                    "lower" => Matrix::Lower,
                    "upper" => Matrix::Upper,
                    _ => {
                        return Err(
                            self.err(n, format!("[Matrix Format] must be Full, Lower or Upper, not \"{value}\""))
                        );
                    }
                }
            }
            "mixed-mode order" => return Err(self.err(n, "mixed-mode data is not supported")),
            "begin information" => return Ok(Stage::Information),
            "network data" => {
                if self.option_line.is_none() {
                    return Err(self.err(n, "[Network Data] before the option line (# ...)"));
                }
                let ports = self.ports.ok_or_else(|| self.err(n, "[Network Data] before [Number of Ports]"))?;
                check_ports(self, n)?;
                if ports == 2 && self.order_21_12.is_none() {
                    return Err(self.err(n, "a 2-port file needs [Two-Port Data Order] before [Network Data]"));
                }
                if self.expected_frequencies.is_none() {
                    return Err(self.err(n, "[Network Data] before [Number of Frequencies]"));
                }
                return Ok(Stage::Network);
            }
            "noise data" | "end" => return Ok(Stage::Done),
            _ => return Err(self.err(n, format!("unknown keyword [{}]", &text[1..close]))),
        }
        Ok(stage)
    }

    /// Entries per record for the current port count and matrix format.
    fn entries(&self, ports: usize) -> usize {
        match self.matrix {
            Matrix::Full => ports * ports,
            Matrix::Lower | Matrix::Upper => ports * (ports + 1) / 2,
        }
    }

    /// One data line. Returns false when the line starts the noise block of a version 1.1 two-port.
    fn record(&mut self, n: usize, text: &str) -> Result<bool, TouchstoneError> {
        let ports = self.ports.unwrap_or(1);
        let entries = self.entries(ports);
        let mut values = Vec::with_capacity(1 + 2 * entries);
        for word in text.split_whitespace() {
            values.push(parse_number(word).ok_or_else(|| self.err(n, format!("\"{word}\" is not a number")))?);
        }
        let f = values[0] * self.unit_hz;
        if let Some(&last) = self.freq_hz.last()
            && f <= last
        {
            // Version 1.1: noise parameters of a 2-port follow its network data, starting at a frequency not
            // above the last one, five numbers a line.
            if self.version == Version::V1 && ports == 2 && values.len() == 5 {
                return Ok(false);
            }
            return Err(self.err(
                n,
                format!(
                    "frequency {} is not above the previous one ({}): frequencies must increase",
                    values[0],
                    last / self.unit_hz
                ),
            ));
        }
        let want = 1 + 2 * entries;
        if values.len() != want {
            return Err(self.err(
                n,
                format!(
                    "{} values on this line; a {ports}-port record needs {want} (the frequency and {entries} {}), \
                     on one line",
                    values.len(),
                    if entries == 1 { "pair of values" } else { "pairs of values" }
                ),
            ));
        }
        if !(f > 0.0 || (f == 0.0 && self.freq_hz.is_empty())) || !f.is_finite() {
            return Err(
                self.err(n, format!("frequency {} is not a frequency (it must be positive or a first 0)", values[0]))
            );
        }
        let mut numbers = Vec::with_capacity(entries);
        for pair in values[1..].chunks_exact(2) {
            let (a, b) = (pair[0], pair[1]);
            let c = match self.format {
                DataFormat::RealImaginary => Complex64::new(a, b),
                DataFormat::MagnitudeAngle => Complex64::from_polar(a, b.to_radians()),
                DataFormat::DecibelAngle => Complex64::from_polar(10f64.powf(a / 20.0), b.to_radians()),
            };
            numbers.push(c);
        }
        self.freq_hz.push(f);
        self.raw.push(numbers);
        Ok(true)
    }

    /// The records as full matrices in row-major order, un-normalised.
    fn matrices(&self, ports: usize) -> Vec<Vec<Complex64>> {
        let scale = match (self.version, self.parameter) {
            (Version::V1, Parameter::Z) => self.z0,
            (Version::V1, Parameter::Y) => 1.0 / self.z0,
            _ => 1.0,
        };
        self.raw
            .iter()
            .map(|rec| {
                let mut m = vec![Complex64::new(0.0, 0.0); ports * ports];
                match self.matrix {
                    Matrix::Full => {
                        for (idx, &v) in rec.iter().enumerate() {
                            // Version 1.1 and 21_12 write a 2-port column by column: N11 N21 N12 N22.
                            let (i, j) = if ports == 2 && self.order_21_12.unwrap_or(self.version == Version::V1) {
                                (idx % 2, idx / 2)
                            } else {
                                (idx / ports, idx % ports)
                            };
                            m[i * ports + j] = v * scale;
                        }
                    }
                    Matrix::Lower | Matrix::Upper => {
                        let mut it = rec.iter();
                        for i in 0..ports {
                            let (lo, hi) = if self.matrix == Matrix::Lower { (0, i + 1) } else { (i, ports) };
                            for j in lo..hi {
                                let v = it.next().copied().unwrap_or_default() * scale;
                                m[i * ports + j] = v;
                                m[j * ports + i] = v;
                            }
                        }
                    }
                }
                m
            })
            .collect()
    }
}

/// A number as Touchstone writes it (a plain decimal with optional exponent); `None` for anything else,
/// including NaN and infinities.
fn parse_number(word: &str) -> Option<f64> {
    let ok = word.bytes().all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'e' | b'E' | b'+' | b'-'));
    word.parse::<f64>().ok().filter(|v| ok && v.is_finite())
}

/// Parse Touchstone text. `file` names the file in errors; `ports` is the port count the file name gives
/// (version 1.1 files have no other way to say it; version 2.0 files say it with [Number of Ports], which must
/// agree when both are known).
pub fn parse_touchstone(text: &str, file: &str, ports: Option<usize>) -> Result<Touchstone, TouchstoneError> {
    let mut r = Reader {
        file,
        version: Version::V1,
        ports: None,
        option_line: None,
        unit_hz: 1e9,
        parameter: Parameter::S,
        format: DataFormat::MagnitudeAngle,
        z0: 50.0,
        order_21_12: None,
        matrix: Matrix::Full,
        expected_frequencies: None,
        freq_hz: Vec::new(),
        raw: Vec::new(),
    };
    let mut stage = Stage::Header;
    let mut seen_content = false;
    for (index, raw_line) in text.lines().enumerate() {
        let n = index + 1;
        let line = raw_line.split('!').next().unwrap_or("").trim();
        if line.is_empty() {
            continue;
        }
        if !seen_content {
            seen_content = true;
            if line.starts_with('[') {
                stage = r.keyword(n, line, stage)?;
                if r.version != Version::V2 {
                    return Err(r.err(n, "a version 2.0 file must start with [Version] 2.0"));
                }
                continue;
            }
            // Version 1.1: the port count comes from the file name.
            r.ports = match ports {
                Some(p) => Some(p),
                None => {
                    return Err(r.err(
                        n,
                        "no port count: name the file .s1p or .s2p, or use version 2.0 with \
                                            [Number of Ports]",
                    ));
                }
            };
        }
        if stage == Stage::Done {
            continue;
        }
        if line.starts_with('[') {
            stage = r.keyword(n, line, stage)?;
            continue;
        }
        if stage == Stage::Information {
            continue;
        }
        if let Some(options) = line.strip_prefix('#') {
            r.option(n, options)?;
            if r.version == Version::V1 {
                check_ports(&r, n)?;
                stage = Stage::Network;
            }
            continue;
        }
        match stage {
            Stage::Network => {}
            _ if r.option_line.is_none() => {
                return Err(r.err(n, "data before the option line (# <unit> <parameter> <format> R <impedance>)"));
            }
            _ => return Err(r.err(n, "data before [Network Data]")),
        }
        if !r.record(n, line)? {
            stage = Stage::Done;
        }
    }
    if !seen_content {
        return Err(TouchstoneError {
            file: file.into(),
            line: None,
            reason: "empty: no option line and no data".into(),
        });
    }
    if r.option_line.is_none() {
        return Err(TouchstoneError {
            file: file.into(),
            line: None,
            reason: "no option line (# <unit> <parameter> <format> R <impedance>)".into(),
        });
    }
    if let (Version::V2, Some(from_name), Some(declared)) = (r.version, ports, r.ports)
        && from_name != declared
    {
        return Err(TouchstoneError {
            file: file.into(),
            line: None,
            reason: format!(
                "the file name says {from_name} {} but [Number of Ports] says {declared}",
                if from_name == 1 { "port" } else { "ports" }
            ),
        });
    }
    if r.freq_hz.is_empty() {
        return Err(TouchstoneError { file: file.into(), line: None, reason: "no network data".into() });
    }
    if let Some((want, line)) = r.expected_frequencies
        && want != r.freq_hz.len()
    {
        return Err(
            r.err(line, format!("[Number of Frequencies] says {want} but the network data has {}", r.freq_hz.len()))
        );
    }
    let ports = r.ports.unwrap_or(1);
    let data = r.matrices(ports);
    Ok(Touchstone {
        version: r.version,
        ports,
        parameter: r.parameter,
        format: r.format,
        z0_ohm: r.z0,
        freq_hz: r.freq_hz,
        data,
    })
}

fn check_ports(r: &Reader, n: usize) -> Result<(), TouchstoneError> {
    match r.ports {
        Some(1) | Some(2) => Ok(()),
        Some(p) => Err(r.err(n, format!("{p}-port data is not supported (only .s1p and .s2p)"))),
        None => Err(r.err(n, "no port count")),
    }
}

/// The text of a one-port Touchstone 1.1 file holding the impedance `z` at `freq_hz` as S-parameters in
/// real/imaginary form against `z0_ohm`: option line `# Hz S RI R <z0>`, one line per frequency, every number in
/// full precision (the shortest text that reads back to the same f64). `comments` become `!` lines at the top.
///
/// S rather than Z: it is what every reader of the standard accepts without the version 1.1 normalisation rules
/// of Z data, and the impedances of a rail (mΩ against 50 Ω) convert back without loss that matters (the relative
/// error of Z = Z0 (1 + S)/(1 − S) stays near 1e-11 for 1 µΩ).
pub fn s1p_string(freq_hz: &[f64], z: &[Complex64], z0_ohm: f64, comments: &[String]) -> String {
    use crate::units::push_full_precision;
    let mut out = String::with_capacity(64 * freq_hz.len() + 256);
    for c in comments {
        for line in c.lines() {
            out.push_str("! ");
            out.push_str(line);
            out.push('\n');
        }
    }
    out.push_str("# Hz S RI R ");
    push_full_precision(&mut out, z0_ohm);
    out.push('\n');
    for (f, z) in freq_hz.iter().zip(z) {
        let s = z_to_one_port_s(*z, z0_ohm);
        push_full_precision(&mut out, *f);
        out.push(' ');
        push_full_precision(&mut out, s.re);
        out.push(' ');
        push_full_precision(&mut out, s.im);
        out.push('\n');
    }
    out
}

/// Write [`s1p_string`] to `path` atomically (a crash leaves the old file or the new one).
pub fn write_s1p(
    path: &Path,
    freq_hz: &[f64],
    z: &[Complex64],
    z0_ohm: f64,
    comments: &[String],
) -> std::io::Result<()> {
    super::write_atomically(path, s1p_string(freq_hz, z, z0_ohm, comments).as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: Complex64, b: Complex64) -> bool {
        (a - b).norm() <= 1e-12 * b.norm().max(1e-300)
    }

    #[test]
    fn reads_every_format_and_unit() {
        // The same value, S11 = 0.6 + 0.8j (|S| = 1, angle 53.130102354...°), written three ways.
        let angle = 0.8f64.atan2(0.6).to_degrees();
        for (option, row) in [
            ("# MHz S RI R 50", "1 0.6 0.8".to_string()),
            ("# mhz s ma r 50", format!("1 1 {angle}")),
            ("#MHz DB S", format!("1 0 {angle}")),
        ] {
            let t = parse_touchstone(&format!("! c\n{option}\n{row} ! trailing\n"), "t.s1p", Some(1)).unwrap();
            assert_eq!(t.freq_hz, vec![1e6]);
            assert!(close(t.get(0, 0, 0), Complex64::new(0.6, 0.8)), "{option}: {:?}", t.get(0, 0, 0));
        }
    }

    #[test]
    fn defaults_are_ghz_s_ma_50() {
        let t = parse_touchstone("#\n2 0.5 0\n", "d.s1p", Some(1)).unwrap();
        assert_eq!(
            (t.freq_hz[0], t.parameter, t.format, t.z0_ohm),
            (2e9, Parameter::S, DataFormat::MagnitudeAngle, 50.0)
        );
    }

    #[test]
    fn two_port_orders() {
        // Version 1.1: N11 N21 N12 N22.
        let t = parse_touchstone("# Hz S RI\n1 11 0 21 0 12 0 22 0\n", "a.s2p", Some(2)).unwrap();
        assert_eq!(
            (t.get(0, 0, 0).re, t.get(0, 1, 0).re, t.get(0, 0, 1).re, t.get(0, 1, 1).re),
            (11.0, 21.0, 12.0, 22.0)
        );
        // Version 2.0 with 12_21: N11 N12 N21 N22.
        let v2 = "[Version] 2.0\n# Hz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n\
                  [Number of Frequencies] 1\n[Network Data]\n1 11 0 12 0 21 0 22 0\n[End]\n";
        let t = parse_touchstone(v2, "a.ts", None).unwrap();
        assert_eq!((t.get(0, 1, 0).re, t.get(0, 0, 1).re), (21.0, 12.0));
    }

    #[test]
    fn version_1_z_is_normalised_version_2_is_not() {
        let t = parse_touchstone("# Hz Z RI R 25\n1 2 0\n", "z.s1p", Some(1)).unwrap();
        assert_eq!(t.get(0, 0, 0), Complex64::new(50.0, 0.0));
        let v2 =
            "[Version] 2.0\n# Hz Z RI R 25\n[Number of Ports] 1\n[Number of Frequencies] 1\n[Network Data]\n1 2 0\n";
        assert_eq!(parse_touchstone(v2, "z.ts", None).unwrap().get(0, 0, 0), Complex64::new(2.0, 0.0));
    }

    #[test]
    fn conversions_invert() {
        let z = Complex64::new(0.003, -0.4);
        assert!(close(one_port_s_to_z(z_to_one_port_s(z, 50.0), 50.0), z));
        // A shunt Z between two Z0 ports: S21 = 2Z/(2Z + Z0).
        let s21 = 2.0 * z / (2.0 * z + 50.0);
        assert!(close(shunt_through_s21_to_z(s21, 50.0), z));
    }

    #[test]
    fn writer_round_trips_exactly_in_s() {
        let f = [1e3, 1.5e6, 2e9];
        let z = [Complex64::new(0.01, -3.0), Complex64::new(0.002, 0.0001), Complex64::new(0.1, 12.0)];
        let text = s1p_string(&f, &z, 50.0, &["made by a test".into()]);
        let t = parse_touchstone(&text, "w.s1p", Some(1)).unwrap();
        assert_eq!(t.freq_hz, f);
        for (k, z) in z.iter().enumerate() {
            assert_eq!(t.get(k, 0, 0), z_to_one_port_s(*z, 50.0), "S values are written in full precision");
            assert!((t.impedance(Fixture::OnePort).unwrap()[k] - z).norm() <= 1e-9 * z.norm());
        }
    }
}
