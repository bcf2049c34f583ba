//! Component-placement (centroid, pick-and-place) CSV files as layout tools export them: one row per part with
//! its reference designator, x, y, side and rotation. Column names vary between tools; the usual spellings are
//! recognised (case, spaces and punctuation ignored) and any can be named instead. Units are millimetres, mils or
//! inches, from the flag, else from the header ("X (mm)") or the values ("12.5mm"); a file that states none is
//! refused rather than guessed.

use super::Place;
use super::csv_table::{Table, normalised, read_table};

/// A length unit of a placement file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LengthUnit {
    /// Millimetres.
    Mm,
    /// Mils (thousandths of an inch).
    Mil,
    /// Inches.
    Inch,
}

impl LengthUnit {
    /// Metres per unit.
    pub fn metres(self) -> f64 {
        match self {
            LengthUnit::Mm => 1e-3,
            LengthUnit::Mil => 25.4e-6,
            LengthUnit::Inch => 25.4e-3,
        }
    }

    /// The unit a name or suffix spells ("mm", "mil", "mils", "thou", "in", "inch", "inches"), if any.
    pub fn from_name(name: &str) -> Option<LengthUnit> {
        match name.trim().to_lowercase().as_str() {
            "mm" | "millimetre" | "millimetres" | "millimeter" | "millimeters" => Some(LengthUnit::Mm),
            "mil" | "mils" | "thou" => Some(LengthUnit::Mil),
            "in" | "inch" | "inches" | "\"" => Some(LengthUnit::Inch),
            _ => None,
        }
    }

    /// Its usual short name.
    pub fn name(self) -> &'static str {
        match self {
            LengthUnit::Mm => "mm",
            LengthUnit::Mil => "mil",
            LengthUnit::Inch => "inch",
        }
    }
}

/// Which side of the board a part sits on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// The top (component) side.
    Top,
    /// The bottom (solder) side.
    Bottom,
}

/// One part placed by the layout.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedPart {
    /// Its reference designator.
    pub reference: String,
    /// Its centre in the layout's coordinates, m (unit converted, origin not yet moved).
    pub at_m: [f64; 2],
    /// Its side, when the file gives one.
    pub side: Option<Side>,
    /// Its rotation, degrees, when the file gives one.
    pub rotation_deg: Option<f64>,
    /// The line it was read from.
    pub line: usize,
}

/// Column names to use instead of the recognised spellings (each as it appears in the header).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Columns {
    /// The reference-designator column.
    pub reference: Option<String>,
    /// The x column.
    pub x: Option<String>,
    /// The y column.
    pub y: Option<String>,
    /// The side column.
    pub side: Option<String>,
    /// The rotation column.
    pub rotation: Option<String>,
}

/// The recognised spellings of each column, normalised (lower case, letters and digits only).
const REFERENCE_NAMES: &[&str] =
    &["designator", "ref", "refdes", "reference", "referencedesignator", "refdesignator", "component", "comp"];
const X_NAMES: &[&str] = &["x", "midx", "posx", "centerx", "centrex", "refx", "locationx", "xpos", "xlocation", "cx"];
const Y_NAMES: &[&str] = &["y", "midy", "posy", "centery", "centrey", "refy", "locationy", "ypos", "ylocation", "cy"];
const SIDE_NAMES: &[&str] = &["side", "layer", "tb", "topbottom"];
const ROTATION_NAMES: &[&str] = &["rotation", "rot", "angle", "orientation"];

/// The index of the column named `given` (compared as written, then normalised), or of the first recognised
/// spelling.
fn find(header: &[String], given: Option<&String>, names: &[&str]) -> Option<usize> {
    match given {
        Some(g) => header
            .iter()
            .position(|h| h == g)
            .or_else(|| header.iter().position(|h| normalised(h).0 == normalised(g).0)),
        None => names.iter().find_map(|n| header.iter().position(|h| normalised(h).0 == *n)),
    }
}

/// A placement file read: its parts and what was taken from where.
#[derive(Debug, Clone, PartialEq)]
pub struct Centroid {
    /// The parts, in file order.
    pub parts: Vec<PlacedPart>,
    /// The unit the coordinates were read in.
    pub unit: LengthUnit,
    /// Where the unit came from: "the --units flag", "the header", "the values".
    pub unit_from: &'static str,
    /// The header's names of the columns used (reference, x, y, and side and rotation when present).
    pub columns: Vec<String>,
}

/// Read a placement file's text. `unit` overrides what the file says.
pub fn parse_centroid(text: &str, columns: &Columns, unit: Option<LengthUnit>) -> Result<Centroid, (Place, String)> {
    let is_header = |h: &[String]| {
        find(h, columns.reference.as_ref(), REFERENCE_NAMES).is_some()
            && find(h, columns.x.as_ref(), X_NAMES).is_some()
            && find(h, columns.y.as_ref(), Y_NAMES).is_some()
    };
    let what = "a reference designator, an x and a y column (such as Designator, Mid X, Mid Y)";
    let Table { header, header_line, rows, .. } = read_table(text, &is_header, what)?;
    let col = |given: Option<&String>, names: &[&str]| find(&header, given, names);
    let (r, x, y) = (
        col(columns.reference.as_ref(), REFERENCE_NAMES).unwrap_or(0),
        col(columns.x.as_ref(), X_NAMES).unwrap_or(0),
        col(columns.y.as_ref(), Y_NAMES).unwrap_or(0),
    );
    let side = col(columns.side.as_ref(), SIDE_NAMES);
    let rotation = col(columns.rotation.as_ref(), ROTATION_NAMES);
    for (flag, given, found) in [("--col-side", &columns.side, side), ("--col-rotation", &columns.rotation, rotation)] {
        if let (Some(g), None) = (given, found) {
            return Err((Place::LineColumn(header_line, 1), format!("{flag}: the header has no column \"{g}\"")));
        }
    }
    // The unit: the flag, else the x and y columns' brackets (which must agree), else the values' suffixes.
    let header_unit = |i: usize| normalised(&header[i]).1.and_then(|u| LengthUnit::from_name(&u));
    let (mut unit, mut unit_from) = (unit, "the --units flag");
    if unit.is_none() {
        match (header_unit(x), header_unit(y)) {
            (Some(a), Some(b)) if a != b => {
                return Err((
                    Place::LineColumn(header_line, x + 1),
                    format!("the x column is in {} but the y column in {}", a.name(), b.name()),
                ));
            }
            (Some(a), _) | (None, Some(a)) => (unit, unit_from) = (Some(a), "the header"),
            (None, None) => {}
        }
    }
    let mut parts = Vec::with_capacity(rows.len());
    let mut value_unit: Option<LengthUnit> = None;
    for row in &rows {
        let coordinate = |i: usize, value_unit: &mut Option<LengthUnit>| -> Result<f64, (Place, String)> {
            let place = Place::LineColumn(row.line, i + 1);
            let (number, suffix) = split_suffix(&row.cells[i]);
            let not_a_number =
                || (place.clone(), format!("\"{}\" in column {} is not a number", row.cells[i], header[i]));
            if suffix.contains(|c: char| c.is_ascii_digit()) {
                return Err(not_a_number());
            }
            let v: f64 = number.parse().map_err(|_| not_a_number())?;
            if !v.is_finite() {
                return Err((place, format!("\"{}\" is not a finite number", row.cells[i])));
            }
            let u = match suffix {
                "" => None,
                s => Some(
                    LengthUnit::from_name(s)
                        .ok_or_else(|| (place.clone(), format!("\"{s}\" is not a length unit (mm, mil or inch)")))?,
                ),
            };
            match (u, unit, *value_unit) {
                (Some(u), Some(declared), _) if u != declared && unit_from != "the --units flag" => {
                    Err((place, format!("the value is in {} but {} says {}", u.name(), unit_from, declared.name())))
                }
                (Some(u), None, Some(seen)) if u != seen => {
                    Err((place, format!("the value is in {} but earlier values are in {}", u.name(), seen.name())))
                }
                (Some(u), None, _) => {
                    *value_unit = Some(u);
                    Ok(v)
                }
                _ => Ok(v),
            }
        };
        let reference = row.cells[r].clone();
        if reference.is_empty() {
            return Err((Place::LineColumn(row.line, r + 1), "the reference designator is empty".into()));
        }
        let xy = [coordinate(x, &mut value_unit)?, coordinate(y, &mut value_unit)?];
        let side = match side.map(|i| (i, row.cells[i].to_lowercase())) {
            None => None,
            Some((_, s)) if s.is_empty() => None,
            Some((i, s)) => Some(parse_side(&s).ok_or_else(|| {
                (Place::LineColumn(row.line, i + 1), format!("\"{}\" is not a side (top or bottom)", row.cells[i]))
            })?),
        };
        let rotation_deg = match rotation.filter(|&i| !row.cells[i].is_empty()) {
            None => None,
            Some(i) => Some(
                row.cells[i].trim_end_matches('°').parse::<f64>().ok().filter(|v| v.is_finite()).ok_or_else(|| {
                    (Place::LineColumn(row.line, i + 1), format!("the rotation \"{}\" is not a number", row.cells[i]))
                })?,
            ),
        };
        parts.push(PlacedPart { reference, at_m: xy, side, rotation_deg, line: row.line });
    }
    if unit.is_none() {
        (unit, unit_from) = (value_unit, "the values");
    }
    let Some(unit) = unit else {
        return Err((
            Place::Whole,
            "the file does not say its unit (neither the header nor the values): give --units mm, mil or inch".into(),
        ));
    };
    for p in &mut parts {
        p.at_m = p.at_m.map(|v| v * unit.metres());
    }
    let mut used = vec![header[r].clone(), header[x].clone(), header[y].clone()];
    used.extend(side.into_iter().chain(rotation).map(|i| header[i].clone()));
    Ok(Centroid { parts, unit, unit_from, columns: used })
}

/// "12.5mm" -> ("12.5", "mm"); "-3" -> ("-3", "").
fn split_suffix(cell: &str) -> (&str, &str) {
    let end = cell
        .char_indices()
        .find(|&(i, c)| {
            !(c.is_ascii_digit()
                || c == '.'
                || c == '-'
                || c == '+'
                || (i > 0
                    && (c == 'e' || c == 'E')
                    && cell[i + 1..].starts_with(|n: char| n.is_ascii_digit() || n == '-' || n == '+')))
        })
        .map_or(cell.len(), |(i, _)| i);
    (cell[..end].trim(), cell[end..].trim())
}

/// A side as layout tools write it.
fn parse_side(s: &str) -> Option<Side> {
    match s.trim() {
        "top" | "t" | "toplayer" | "top layer" | "front" | "f" | "f.cu" | "component" => Some(Side::Top),
        "bottom" | "b" | "bottomlayer" | "bottom layer" | "bot" | "back" | "b.cu" | "solder" => Some(Side::Bottom),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn suffixes_split_from_numbers() {
        assert_eq!(split_suffix("12.5mm"), ("12.5", "mm"));
        assert_eq!(split_suffix("-3"), ("-3", ""));
        assert_eq!(split_suffix("1e-3in"), ("1e-3", "in"));
        assert_eq!(split_suffix("500 mil"), ("500", "mil"));
    }

    #[test]
    fn a_mil_is_25_4_micrometres() {
        // 1 inch = 25.4 mm exactly (international yard and pound agreement, 1959).
        assert_eq!(LengthUnit::Mil.metres(), 25.4e-6);
        assert_eq!(LengthUnit::Inch.metres(), 0.0254);
    }
}
