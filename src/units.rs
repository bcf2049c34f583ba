//! Engineering notation at the faces of the program.
//!
//! Inside the library every quantity is an `f64` in SI base units. People type and read values with SI prefixes
//! ("4u7", "100n", "10 mΩ", "1.5k"); this module turns such text into numbers and numbers into such text. It is the
//! only place that knows about prefixes.

use std::fmt;

/// A unit a value may be written with. Parsing accepts the symbol (or its ASCII spellings) after the number; the
/// unit is optional when typing, since the field already says what it holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unit {
    /// Farad.
    Farad,
    /// Ohm.
    Ohm,
    /// Henry.
    Henry,
    /// Hertz.
    Hertz,
    /// Volt.
    Volt,
    /// Ampere.
    Ampere,
    /// Second.
    Second,
    /// Metre (geometry).
    Metre,
    /// A plain number with no unit (counts, ratios, percentages).
    None,
}

impl Unit {
    /// The symbol used when formatting.
    pub fn symbol(self) -> &'static str {
        match self {
            Unit::Farad => "F",
            Unit::Ohm => "Ω",
            Unit::Henry => "H",
            Unit::Hertz => "Hz",
            Unit::Volt => "V",
            Unit::Ampere => "A",
            Unit::Second => "s",
            Unit::Metre => "m",
            Unit::None => "",
        }
    }

    /// Spellings accepted after the number, longest first so that "ohm" wins over "h"-like suffixes.
    fn spellings(self) -> &'static [&'static str] {
        match self {
            Unit::Farad => &["F"],
            Unit::Ohm => &["ohms", "ohm", "Ohm", "\u{3a9}", "\u{2126}"],
            Unit::Henry => &["H", "h"],
            Unit::Hertz => &["Hz", "hz", "HZ"],
            Unit::Volt => &["V", "v"],
            Unit::Ampere => &["A", "a"],
            Unit::Second => &["s"],
            // "0.3mm", "300um", "300 µm": the prefix, then the metre's symbol. ("mil" is read apart, below.)
            Unit::Metre => &["m"],
            Unit::None => &["%"],
        }
    }
}

/// Why a piece of text is not a quantity.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ParseError {
    /// The text as typed.
    pub text: String,
    /// What went wrong and what was expected.
    pub reason: String,
}

impl fmt::Display for ParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "\"{}\": {}", self.text, self.reason)
    }
}

impl std::error::Error for ParseError {}

/// SI prefixes we read and write. "meg" is the SPICE spelling of mega and is read, never written.
const PREFIXES: &[(&str, f64)] = &[
    ("meg", 1e6),
    ("Meg", 1e6),
    ("MEG", 1e6),
    ("f", 1e-15),
    ("p", 1e-12),
    ("n", 1e-9),
    ("u", 1e-6),
    ("µ", 1e-6),
    ("μ", 1e-6),
    ("m", 1e-3),
    ("k", 1e3),
    ("K", 1e3),
    ("M", 1e6),
    ("G", 1e9),
    ("T", 1e12),
];

/// One mil (a thousandth of an inch) in metres: exact by the definition of the inch (25.4 mm).
pub const MIL_M: f64 = 25.4e-6;
const MIL_SPELLINGS: &[&str] = &["mil", "mils", "thou"];

const EXPECTED: &str = "expected a number with an optional SI prefix, such as 100n, 4u7, 4.7µ, 10m, 1.5k or 2e-9";

/// Parse a quantity typed by a person, with an optional unit symbol of `unit` after it.
///
/// Accepts "100n", "4u7" (the prefix as the decimal point), "4.7u", "4.7µF", "10m", "10 mΩ", "1.5k", "2e-9",
/// "1 MHz", "1meg". Whitespace around the parts is ignored. A symbol of another unit is refused, so "10 mH" in a
/// resistance field is an error rather than 10 mΩ.
pub fn parse(text: &str, unit: Unit) -> Result<f64, ParseError> {
    let err = |reason: String| ParseError { text: text.to_string(), reason };
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(err(format!("empty; {EXPECTED}")));
    }
    // The leading number: digits, one dot, an exponent. Parse it by hand so that "4u7" and "1e3" both work and
    // the prefix letters are never mistaken for exponent markers.
    let bytes = trimmed.as_bytes();
    let mut i = 0;
    if i < bytes.len() && (bytes[i] == b'+' || bytes[i] == b'-') {
        i += 1;
    }
    let digits_start = i;
    while i < bytes.len() && (bytes[i].is_ascii_digit() || bytes[i] == b'.') {
        i += 1;
    }
    if i == digits_start {
        return Err(err(format!("does not start with a number; {EXPECTED}")));
    }
    // An exponent only when "e"/"E" is followed by an optionally signed digit.
    if i < bytes.len() && (bytes[i] == b'e' || bytes[i] == b'E') {
        let mut j = i + 1;
        if j < bytes.len() && (bytes[j] == b'+' || bytes[j] == b'-') {
            j += 1;
        }
        if j < bytes.len() && bytes[j].is_ascii_digit() {
            while j < bytes.len() && bytes[j].is_ascii_digit() {
                j += 1;
            }
            i = j;
        }
    }
    let number_text = &trimmed[..i];
    let mut value: f64 =
        number_text.parse().map_err(|_| err(format!("\"{number_text}\" is not a number; {EXPECTED}")))?;
    let mut rest = trimmed[i..].trim_start();

    // Lengths in mils (thousandths of an inch, exactly 25.4 µm), as board designers give them: "20mil", "12 mil".
    if unit == Unit::Metre && MIL_SPELLINGS.contains(&rest.to_ascii_lowercase().as_str()) {
        let metres = value * MIL_M;
        return if metres.is_finite() {
            Ok(metres)
        } else {
            Err(err("is too large to be a number hushrail can use".into()))
        };
    }

    // An optional prefix, possibly followed by digits that continue the number ("4u7" = 4.7u).
    if let Some((prefix, scale)) = PREFIXES.iter().find(|(p, _)| rest.starts_with(p)) {
        let after = &rest[prefix.len()..];
        let frac_len = after.bytes().take_while(|b| b.is_ascii_digit()).count();
        if frac_len > 0 {
            if number_text.contains(['.', 'e', 'E']) {
                return Err(err(format!(
                    "digits after the prefix \"{prefix}\" need a whole number before it (as in 4u7)"
                )));
            }
            let frac: f64 = format!("0.{}", &after[..frac_len]).parse().map_err(|_| err(EXPECTED.into()))?;
            value = if value < 0.0 || number_text.starts_with('-') { value - frac } else { value + frac };
        }
        value *= scale;
        rest = after[frac_len..].trim_start();
    }

    // An optional unit symbol; it must be this field's unit.
    if !rest.is_empty() {
        match unit.spellings().iter().find(|s| rest == **s) {
            Some(_) => {}
            None => {
                let want =
                    if unit == Unit::None { "no unit".to_string() } else { format!("the unit {}", unit.symbol()) };
                return Err(err(format!("unexpected \"{rest}\" (this value takes {want}); {EXPECTED}")));
            }
        }
    }
    if !value.is_finite() {
        return Err(err("is too large to be a number hushrail can use".into()));
    }
    // A value written with non-zero digits that rounds to 0 (as 1e-400 does) is not 0: refuse it rather than
    // silently read it as 0.
    if value == 0.0 && number_text.bytes().take_while(|b| !matches!(b, b'e' | b'E')).any(|b| (b'1'..=b'9').contains(&b))
    {
        return Err(err("is too small to be a number hushrail can use (it rounds to 0)".into()));
    }
    Ok(value)
}

/// A length as designers read it: in mm from 1 mm up, else in µm, to four significant digits with trailing zeros
/// dropped, so that 500.00000000000006 µm reads "500 µm" and 0.0015 m reads "1.5 mm". Reads back through
/// [`parse`] with [`Unit::Metre`].
pub fn format_length(metres: f64) -> String {
    if !metres.is_finite() {
        return format!("{metres}");
    }
    if metres == 0.0 {
        return "0 mm".into();
    }
    let (scale, unit) = if metres.abs() >= 1e-3 { (1e3, "mm") } else { (1e6, "µm") };
    format!("{} {unit}", trim_digits(metres * scale, 4))
}

/// `value` to `digits` significant digits as plain decimal text, trailing zeros (and a bare point) dropped.
pub fn trim_digits(value: f64, digits: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    let magnitude = value.abs().log10().floor() as i32;
    let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
    let text = format!("{value:.decimals$}");
    let text = if text.contains('.') { text.trim_end_matches('0').trim_end_matches('.').to_string() } else { text };
    if text == "-0" { "0".into() } else { text }
}

/// Format a value with an SI prefix and 3 significant digits, followed by the unit symbol: "4.70 µF", "10.0 mΩ",
/// "1.00 GHz". Zero is "0 F"; values outside the prefix range fall back to scientific notation.
pub fn format(value: f64, unit: Unit) -> String {
    format_sig(value, unit, 3)
}

/// Like [`format`] with a chosen number of significant digits (at least 1).
pub fn format_sig(value: f64, unit: Unit, digits: usize) -> String {
    let sym = unit.symbol();
    let join = |num: String, prefix: &str| {
        let suffix = format!("{prefix}{sym}");
        if suffix.is_empty() { num } else { format!("{num} {suffix}") }
    };
    if !value.is_finite() {
        return join(format!("{value}"), "");
    }
    if value == 0.0 {
        return join("0".into(), "");
    }
    let digits = digits.max(1);
    const WRITE: &[(f64, &str)] = &[
        (1e12, "T"),
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
        (1e-15, "f"),
    ];
    // Round to the significant digits first so that 999.96 becomes "1.00 k", not "1000 ".
    let exp = value.abs().log10().floor() as i32;
    let rounded = round_sig(value, digits, exp);
    let mag = rounded.abs();
    if !(1e-15..1e15).contains(&mag) {
        return join(format!("{:.*e}", digits - 1, rounded), "");
    }
    let (scale, prefix) = WRITE.iter().copied().find(|(s, _)| mag >= *s * (1.0 - 1e-12)).unwrap_or((1e-15, "f"));
    let scaled = rounded / scale;
    let int_digits = (scaled.abs().log10().floor() as i32 + 1).max(1) as usize;
    let decimals = digits.saturating_sub(int_digits);
    join(format!("{scaled:.decimals$}"), prefix)
}

fn round_sig(value: f64, digits: usize, exp: i32) -> f64 {
    let factor = 10f64.powi(digits as i32 - 1 - exp);
    let r = (value * factor).round() / factor;
    if r.is_finite() { r } else { value }
}

/// Write an f64 for machines: the shortest text that reads back to the same f64 ("0.025", "1e-10", "1000.0").
pub fn full_precision(value: f64) -> String {
    let mut out = String::new();
    push_full_precision(&mut out, value);
    out
}

/// Append [`full_precision`] text to `out` without an allocation of its own (for long CSV output).
pub fn push_full_precision(out: &mut String, value: f64) {
    let mut buffer = zmij::Buffer::new();
    out.push_str(buffer.format(value));
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
    }

    #[test]
    fn parses_what_people_type() {
        let cases: &[(&str, Unit, f64)] = &[
            ("100n", Unit::Farad, 100e-9),
            ("4u7", Unit::Farad, 4.7e-6),
            ("4.7u", Unit::Farad, 4.7e-6),
            ("4.7µF", Unit::Farad, 4.7e-6),
            ("4.7 uF", Unit::Farad, 4.7e-6),
            ("10m", Unit::Ohm, 10e-3),
            ("10 mΩ", Unit::Ohm, 10e-3),
            ("10mohm", Unit::Ohm, 10e-3),
            ("1.5k", Unit::Hertz, 1.5e3),
            ("2e-9", Unit::Second, 2e-9),
            ("1G", Unit::Hertz, 1e9),
            ("1 MHz", Unit::Hertz, 1e6),
            ("1meg", Unit::Hertz, 1e6),
            ("0.85", Unit::Volt, 0.85),
            ("0.85 V", Unit::Volt, 0.85),
            ("3", Unit::None, 3.0),
            ("1E3", Unit::None, 1e3),
            ("2p2", Unit::Farad, 2.2e-12),
            ("10 F", Unit::Farad, 10.0),
            ("1f", Unit::Farad, 1e-15),
            ("-3m", Unit::Volt, -3e-3),
            ("600p", Unit::Henry, 600e-12),
            ("0.6nH", Unit::Henry, 0.6e-9),
        ];
        for (text, unit, want) in cases {
            let got = parse(text, *unit).unwrap_or_else(|e| panic!("{text}: {e}"));
            assert!(close(got, *want), "{text}: got {got}, want {want}");
        }
    }

    #[test]
    fn refuses_garbage_with_a_reason() {
        for text in ["", "abc", "1x", "4.7u7", "1 mH", "--1", "1e", "nan", "1..2", "10 mΩΩ"] {
            let unit = if text == "1 mH" { Unit::Ohm } else { Unit::Farad };
            let e = parse(text, unit).expect_err(text);
            assert!(!e.reason.is_empty());
        }
        assert!(parse("1e999", Unit::None).is_err(), "overflow is refused");
        assert!(parse("1 mH", Unit::Ohm).unwrap_err().reason.contains("Ω"));
    }

    #[test]
    fn formats_with_prefix_and_three_digits() {
        assert_eq!(format(4.7e-6, Unit::Farad), "4.70 µF");
        assert_eq!(format(100e-9, Unit::Farad), "100 nF");
        assert_eq!(format(0.01, Unit::Ohm), "10.0 mΩ");
        assert_eq!(format(1e9, Unit::Hertz), "1.00 GHz");
        assert_eq!(format(999.96, Unit::Hertz), "1.00 kHz");
        assert_eq!(format(0.0, Unit::Ohm), "0 Ω");
        assert_eq!(format(-2.5e-3, Unit::Volt), "-2.50 mV");
        assert_eq!(format(12.5, Unit::None), "12.5");
    }

    #[test]
    fn lengths_as_designers_type_them() {
        // 1 mil = 25.4 µm exactly (the inch is 25.4 mm by definition, international yard and pound agreement 1959).
        let cases: &[(&str, f64)] = &[
            ("0.3mm", 0.3e-3),
            ("0.3 mm", 0.3e-3),
            ("300um", 300e-6),
            ("300 µm", 300e-6),
            ("20mil", 20.0 * 25.4e-6),
            ("12 mil", 12.0 * 25.4e-6),
            ("12 MIL", 12.0 * 25.4e-6),
            ("8 mils", 8.0 * 25.4e-6),
            ("0.3m", 0.3e-3),
            ("1e-4", 1e-4),
        ];
        for (text, want) in cases {
            let got = parse(text, Unit::Metre).unwrap_or_else(|e| panic!("{text}: {e}"));
            assert!(close(got, *want), "{text}: got {got}, want {want}");
        }
        // "mil" is a length only: in a capacitance field it is refused.
        assert!(parse("20mil", Unit::Farad).is_err());
        assert!(parse("20 mm", Unit::Ohm).is_err());
        assert_eq!(format_length(f64::from_bits(5e-4f64.to_bits() + 1)), "500 µm");
        assert_eq!(format_length(0.0015), "1.5 mm");
        assert_eq!(format_length(1e-3), "1 mm");
        assert_eq!(format_length(20.0 * 25.4e-6), "508 µm");
        assert_eq!(format_length(6.666666666e-4), "666.7 µm");
        assert_eq!(format_length(0.1), "100 mm");
        for v in [1e-5, 3.3e-4, 0.0123, 2.54e-5] {
            let back = parse(&format_length(v), Unit::Metre).unwrap();
            assert!((back - v).abs() <= 1e-4 * v, "{v}");
        }
        assert_eq!(trim_digits(2.0, 4), "2");
        assert_eq!(trim_digits(0.000123456, 3), "0.000123");
    }

    #[test]
    fn full_precision_reads_back() {
        for v in [1e-10, 0.1 + 0.2, 123456.789, 1e20, 3.5e-4, 0.0, -7.25e-12] {
            assert_eq!(full_precision(v).parse::<f64>().unwrap(), v);
        }
    }
}
