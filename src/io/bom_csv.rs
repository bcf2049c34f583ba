//! A bill of materials read from CSV as layout tools export it: one line per part value, with the designators
//! that use it ("C1, C2, C5-C8"), and its value, footprint and part name where given. Used to tell which placed
//! designators belong to which decoupling group.

use super::Place;
use super::csv_table::{normalised, read_table};

/// One BOM line.
#[derive(Debug, Clone, PartialEq)]
pub struct BomEntry {
    /// The designators it lists, ranges expanded.
    pub designators: Vec<String>,
    /// Its value ("100n", "4.7uF"), if a column gives one.
    pub value: Option<String>,
    /// Its footprint or package, if a column gives one.
    pub footprint: Option<String>,
    /// Its part name or id, if a column gives one.
    pub part: Option<String>,
    /// The line it was read from.
    pub line: usize,
}

const DESIGNATOR_NAMES: &[&str] =
    &["designator", "designators", "reference", "references", "refdes", "ref", "refs", "referencedesignators"];
const VALUE_NAMES: &[&str] = &["value", "val", "comment", "capacitance"];
const FOOTPRINT_NAMES: &[&str] = &["footprint", "package", "case", "pattern", "size"];
const PART_NAMES: &[&str] = &["part", "partid", "id", "partname", "partnumber"];

fn find(header: &[String], names: &[&str]) -> Option<usize> {
    names.iter().find_map(|n| header.iter().position(|h| normalised(h).0 == *n))
}

/// Read a BOM's text.
pub fn parse_bom(text: &str) -> Result<Vec<BomEntry>, (Place, String)> {
    let is_header = |h: &[String]| {
        find(h, DESIGNATOR_NAMES).is_some() && (find(h, VALUE_NAMES).is_some() || find(h, PART_NAMES).is_some())
    };
    let table = read_table(text, &is_header, "a designator column and a value or part column")?;
    let h = &table.header;
    let d = find(h, DESIGNATOR_NAMES).unwrap_or(0);
    let (v, f, p) = (find(h, VALUE_NAMES), find(h, FOOTPRINT_NAMES), find(h, PART_NAMES));
    let cell =
        |row: &super::csv_table::Row, i: Option<usize>| i.map(|i| row.cells[i].clone()).filter(|c| !c.is_empty());
    table
        .rows
        .iter()
        .map(|row| {
            let designators = expand(&row.cells[d])
                .map_err(|why| (Place::LineColumn(row.line, d + 1), format!("\"{}\": {why}", row.cells[d])))?;
            Ok(BomEntry {
                designators,
                value: cell(row, v),
                footprint: cell(row, f),
                part: cell(row, p),
                line: row.line,
            })
        })
        .collect()
}

/// The designators a cell lists: separated by commas, semicolons or spaces, with ranges such as "C5-C8".
fn expand(cell: &str) -> Result<Vec<String>, String> {
    let mut out = Vec::new();
    for item in cell.split([',', ';', ' ']).map(str::trim).filter(|s| !s.is_empty()) {
        match item.split_once('-') {
            Some((a, b)) => {
                let (pa, na) = split_number(a).ok_or_else(|| format!("\"{item}\" is not a range like C5-C8"))?;
                let (pb, nb) = split_number(b).ok_or_else(|| format!("\"{item}\" is not a range like C5-C8"))?;
                let pb = if pb.is_empty() { pa } else { pb };
                if pa != pb || nb < na || nb - na > 10_000 {
                    return Err(format!("\"{item}\" is not a range like C5-C8"));
                }
                out.extend((na..=nb).map(|n| format!("{pa}{n}")));
            }
            None => out.push(item.to_string()),
        }
    }
    Ok(out)
}

/// "C12" -> ("C", 12).
fn split_number(s: &str) -> Option<(&str, u64)> {
    let i = s.find(|c: char| c.is_ascii_digit())?;
    Some((&s[..i], s[i..].parse().ok()?))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn designator_lists_and_ranges() {
        assert_eq!(expand("C1, C2 C5-C7").unwrap(), ["C1", "C2", "C5", "C6", "C7"]);
        assert_eq!(expand("C5-7").unwrap(), ["C5", "C6", "C7"]);
        assert!(expand("C7-C5").is_err());
        assert!(expand("C1-R3").is_err());
    }
}
