//! The bill of materials: each fitted part with its count per rail, its total count and its cost, as text for
//! people and CSV for machines. The CLI and the report both show these lines.

use crate::model::{Board, Part};
use crate::units::{Unit, format, push_full_precision};
use std::fmt::Write;

/// One part on the bill of materials.
#[derive(Debug, Clone, PartialEq)]
pub struct BomLine {
    /// The part.
    pub part: Part,
    /// Count fitted on each rail, in the board's rail order (0 where the rail does not use it).
    pub per_rail: Vec<u64>,
    /// Count over the whole board.
    pub total: u64,
    /// total × unit cost, when the part has a cost.
    pub cost: Option<f64>,
}

/// The bill of materials of a board.
#[derive(Debug, Clone, PartialEq)]
pub struct Bom {
    /// Rail names, in the board's order (the columns of `per_rail`).
    pub rails: Vec<String>,
    /// Parts fitted at least once, in the board's part order.
    pub lines: Vec<BomLine>,
    /// Ids of parts the board lists but no rail fits.
    pub unused: Vec<String>,
    /// Sum of the costs of the parts that have one.
    pub known_cost: f64,
    /// Ids of fitted parts without a cost (the total cost leaves them out).
    pub without_cost: Vec<String>,
}

/// Count every part over the board's rails (a part used by two groups of one rail counts both).
pub fn bill_of_materials(board: &Board) -> Bom {
    let mut lines = Vec::new();
    let mut unused = Vec::new();
    for part in &board.parts {
        let per_rail: Vec<u64> = board
            .rails
            .iter()
            .map(|r| r.decaps.iter().filter(|g| g.part == part.id).map(|g| u64::from(g.count)).sum())
            .collect();
        let total: u64 = per_rail.iter().sum();
        if total == 0 {
            unused.push(part.id.clone());
            continue;
        }
        let cost = part.unit_cost.map(|c| c * total as f64);
        lines.push(BomLine { part: part.clone(), per_rail, total, cost });
    }
    let known_cost = lines.iter().filter_map(|l| l.cost).sum();
    let without_cost = lines.iter().filter(|l| l.cost.is_none()).map(|l| l.part.id.clone()).collect();
    Bom { rails: board.rails.iter().map(|r| r.name.clone()).collect(), lines, unused, known_cost, without_cost }
}

/// What a cost cell says: the amount in the board's currency, or "no cost given".
pub fn cost_words(cost: Option<f64>) -> String {
    match cost {
        Some(c) => money(c),
        None => "no cost given".into(),
    }
}

/// An amount for people: at least 2 decimals, and enough for 3 significant digits of a small amount (a part
/// costing 0.003 must not read "0.00"), trailing zeros past the second decimal dropped.
fn money(amount: f64) -> String {
    if !amount.is_finite() || amount == 0.0 {
        return format!("{amount:.2}");
    }
    let exp = amount.abs().log10().floor() as i32;
    let decimals = (2 - exp).clamp(2, 12) as usize;
    let mut text = format!("{amount:.decimals$}");
    while text.ends_with('0') && text.len() - text.find('.').unwrap_or(text.len()) > 3 {
        text.pop();
    }
    text
}

/// A short description of a part for people: "100 nF ceramic 0402 X7R 16.0 V".
pub fn part_words(part: &Part) -> String {
    let mut words = vec![format(part.capacitance_f, Unit::Farad), part.kind.name().to_string()];
    words.extend(part.case.clone());
    words.extend(part.dielectric.clone());
    if let Some(v) = part.rated_voltage_v {
        words.push(format(v, Unit::Volt));
    }
    words.join(" ")
}

/// The total cost line: the sum, and the parts it leaves out.
pub fn total_cost_words(bom: &Bom) -> String {
    if bom.lines.is_empty() {
        return "no parts fitted".into();
    }
    if bom.without_cost.len() == bom.lines.len() {
        return "no cost given for any part".into();
    }
    let mut text = money(bom.known_cost);
    if !bom.without_cost.is_empty() {
        let _ = write!(text, " (without {}: no cost given)", bom.without_cost.join(", "));
    }
    text
}

/// The bill of materials as an aligned text table for people.
pub fn bom_text(board: &Board, bom: &Bom) -> String {
    let mut header = vec!["part".to_string(), "description".to_string()];
    header.extend(bom.rails.iter().cloned());
    header.extend(["total".to_string(), "unit cost".to_string(), "cost".to_string()]);
    let mut rows = vec![header];
    for l in &bom.lines {
        let mut row = vec![l.part.id.clone(), part_words(&l.part)];
        row.extend(l.per_rail.iter().map(|c| c.to_string()));
        row.push(l.total.to_string());
        row.push(cost_words(l.part.unit_cost));
        row.push(cost_words(l.cost));
        rows.push(row);
    }
    let columns = rows[0].len();
    let widths: Vec<usize> =
        (0..columns).map(|c| rows.iter().map(|r| r[c].chars().count()).max().unwrap_or(0)).collect();
    let mut t = String::new();
    let _ = writeln!(t, "Bill of materials: {}", board.name);
    for row in &rows {
        let mut line = String::new();
        for (c, cell) in row.iter().enumerate() {
            // Text columns left-aligned, counts and costs right-aligned.
            let pad = widths[c] - cell.chars().count();
            if c < 2 {
                line.push_str(cell);
                line.push_str(&" ".repeat(pad));
            } else {
                line.push_str(&" ".repeat(pad));
                line.push_str(cell);
            }
            line.push_str("  ");
        }
        let _ = writeln!(t, "{}", line.trim_end());
    }
    let total_count: u64 = bom.lines.iter().map(|l| l.total).sum();
    let _ = writeln!(t, "{total_count} parts of {} kinds; total cost: {}", bom.lines.len(), total_cost_words(bom));
    if !bom.unused.is_empty() {
        let _ = writeln!(t, "Listed but not fitted: {}", bom.unused.join(", "));
    }
    t
}

/// Quote a CSV field when it needs it (RFC 4180: commas, quotes, line breaks).
fn csv_field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) { format!("\"{}\"", text.replace('"', "\"\"")) } else { text.to_string() }
}

/// The bill of materials as CSV for machines: `part,kind,capacitance_f,rated_voltage_v,case,dielectric,
/// count_<rail>...,total_count,unit_cost,cost`, numbers in full precision, an empty cell where a value is not
/// given (no cost, no rating).
pub fn bom_csv(bom: &Bom) -> String {
    let mut t = String::from("part,kind,capacitance_f,rated_voltage_v,case,dielectric");
    for r in &bom.rails {
        t.push(',');
        t.push_str(&csv_field(&format!("count_{r}")));
    }
    t.push_str(",total_count,unit_cost,cost\n");
    let number = |t: &mut String, v: Option<f64>| {
        t.push(',');
        if let Some(v) = v {
            push_full_precision(t, v);
        }
    };
    for l in &bom.lines {
        t.push_str(&csv_field(&l.part.id));
        t.push(',');
        t.push_str(l.part.kind.name());
        number(&mut t, Some(l.part.capacitance_f));
        number(&mut t, l.part.rated_voltage_v);
        t.push(',');
        t.push_str(&csv_field(l.part.case.as_deref().unwrap_or("")));
        t.push(',');
        t.push_str(&csv_field(l.part.dielectric.as_deref().unwrap_or("")));
        for c in &l.per_rail {
            let _ = write!(t, ",{c}");
        }
        let _ = write!(t, ",{}", l.total);
        number(&mut t, l.part.unit_cost);
        number(&mut t, l.cost);
        t.push('\n');
    }
    t
}

#[cfg(test)]
mod tests {
    use super::money;

    #[test]
    fn small_amounts_keep_their_digits() {
        assert_eq!(money(0.003), "0.003");
        assert_eq!(money(0.036000000000000004), "0.036");
        assert_eq!(money(1.0499999999999998), "1.05");
        assert_eq!(money(12.0), "12.00");
        assert_eq!(money(0.1234), "0.123");
        assert_eq!(money(0.0), "0.00");
    }
}
