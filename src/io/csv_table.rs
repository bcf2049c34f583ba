//! A table in a CSV file as layout tools and spreadsheets write them: an optional preamble (title lines, `#`
//! comments), one header line, then one row per line. The separator (comma, semicolon or tab) is the one that
//! makes a header with the columns asked for; values may be quoted ("a, b" with "" for a quote). Every problem
//! names its line and column.

use super::Place;

/// One row: its 1-based line and its cells, trimmed.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// The line it starts on, 1-based.
    pub line: usize,
    /// Its cells, unquoted and trimmed.
    pub cells: Vec<String>,
}

/// A table read from a CSV file.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// The separator found.
    pub separator: char,
    /// The header's cells.
    pub header: Vec<String>,
    /// The header's line, 1-based.
    pub header_line: usize,
    /// The rows after the header (blank lines and `#` comments left out).
    pub rows: Vec<Row>,
}

/// The separators tried, in order.
const SEPARATORS: [char; 3] = [',', ';', '\t'];

/// A separator's name in messages.
pub fn separator_name(c: char) -> &'static str {
    match c {
        ',' => "comma",
        ';' => "semicolon",
        '\t' => "tab",
        _ => "other",
    }
}

/// Split one line into cells at `sep`, honouring quotes. Returns the cells, or the 1-based column of an unclosed
/// quote. (A quoted value spanning lines is not supported: layout exports do not write them.)
fn split_line(line: &str, sep: char) -> Result<Vec<String>, usize> {
    let mut cells = Vec::new();
    let mut cell = String::new();
    let mut chars = line.char_indices().peekable();
    let mut quoted = false;
    let mut quote_at = 0;
    while let Some((i, c)) = chars.next() {
        if quoted {
            if c == '"' {
                if chars.peek().map(|&(_, n)| n) == Some('"') {
                    cell.push('"');
                    chars.next();
                } else {
                    quoted = false;
                }
            } else {
                cell.push(c);
            }
        } else if c == '"' && cell.trim().is_empty() {
            cell.clear();
            quoted = true;
            quote_at = line[..i].chars().count() + 1;
        } else if c == sep {
            cells.push(cell.trim().to_string());
            cell.clear();
        } else {
            cell.push(c);
        }
    }
    if quoted {
        return Err(quote_at);
    }
    cells.push(cell.trim().to_string());
    Ok(cells)
}

/// Read a table whose header is the first line that `is_header` accepts (given the cells split at a separator).
/// `what` names the columns looked for, for the message when no header is found.
pub fn read_table(text: &str, is_header: &dyn Fn(&[String]) -> bool, what: &str) -> Result<Table, (Place, String)> {
    let lines: Vec<&str> = text.lines().collect();
    let skip = |l: &str| l.trim().is_empty() || l.trim_start().starts_with('#');
    let mut found = None;
    'search: for (n, l) in lines.iter().enumerate().filter(|(_, l)| !skip(l)) {
        for sep in SEPARATORS {
            if let Ok(cells) = split_line(l, sep)
                && cells.len() > 1
                && is_header(&cells)
            {
                found = Some((n, sep, cells));
                break 'search;
            }
        }
    }
    let Some((header_index, separator, header)) = found else {
        return Err((
            Place::Whole,
            format!(
                "no header line with {what} was found (columns split at a comma, a semicolon or a tab); give the \
                 column names with the flags if the file calls them otherwise"
            ),
        ));
    };
    let mut rows = Vec::new();
    for (n, l) in lines.iter().enumerate().skip(header_index + 1) {
        if skip(l) {
            continue;
        }
        let line = n + 1;
        let cells = split_line(l, separator)
            .map_err(|col| (Place::LineColumn(line, col), "a quoted value is not closed on its line".to_string()))?;
        if cells.len() != header.len() {
            let other = SEPARATORS.iter().find(|&&s| s != separator && l.contains(s));
            let hint = match other {
                Some(&s) if cells.len() < header.len() => format!(
                    "; the line has {}s: is the file separated by {}s in places?",
                    separator_name(s),
                    separator_name(s)
                ),
                _ if cells.len() > header.len() => {
                    format!("; a value holding a {} must be quoted", separator_name(separator))
                }
                _ => String::new(),
            };
            return Err((
                Place::LineColumn(line, 1),
                format!(
                    "{} {}-separated values where the header (line {}) has {}{hint}",
                    cells.len(),
                    separator_name(separator),
                    header_index + 1,
                    header.len()
                ),
            ));
        }
        rows.push(Row { line, cells });
    }
    Ok(Table { separator, header, header_line: header_index + 1, rows })
}

/// A column name reduced for matching: lower case, letters and digits only, a trailing unit in brackets kept
/// apart ("Mid X (mm)" -> ("midx", Some("mm"))).
pub fn normalised(name: &str) -> (String, Option<String>) {
    let (base, unit) = match name.find(['(', '[']) {
        Some(i) => {
            let inner: String =
                name[i + 1..].chars().take_while(|c| *c != ')' && *c != ']').collect::<String>().trim().to_lowercase();
            (&name[..i], (!inner.is_empty()).then_some(inner))
        }
        None => (name, None),
    };
    (base.chars().filter(|c| c.is_alphanumeric()).flat_map(char::to_lowercase).collect(), unit)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn has_ref(cells: &[String]) -> bool {
        cells.iter().any(|c| normalised(c).0 == "ref")
    }

    #[test]
    fn quotes_separators_and_preamble() {
        let text = "Title line\n# a comment\nRef;X;Y\n\"C1\";1,5;2\nC2;\"a \"\"q\"\"\";3\n";
        let t = read_table(text, &has_ref, "Ref").unwrap();
        assert_eq!(t.separator, ';');
        assert_eq!(t.header_line, 3);
        assert_eq!(t.rows[0].cells, ["C1", "1,5", "2"]);
        assert_eq!(t.rows[1].cells[1], "a \"q\"");
    }

    #[test]
    fn wrong_cell_counts_and_open_quotes_are_placed() {
        let e = read_table("Ref,X,Y\nC1;1;2\n", &has_ref, "Ref").unwrap_err();
        assert_eq!(e.0, Place::LineColumn(2, 1));
        assert!(e.1.contains("semicolons"), "{}", e.1);
        let e = read_table("Ref,X,Y\nC1,\"1,2\n", &has_ref, "Ref").unwrap_err();
        assert_eq!(e.0, Place::LineColumn(2, 4));
        let e = read_table("Name,X\n", &has_ref, "a Ref column").unwrap_err();
        assert!(e.1.contains("a Ref column"));
    }

    #[test]
    fn names_are_normalised_with_their_units() {
        assert_eq!(normalised("Mid X (mm)"), ("midx".into(), Some("mm".into())));
        assert_eq!(normalised("PosX[mil]"), ("posx".into(), Some("mil".into())));
        assert_eq!(normalised("Ref-Des"), ("refdes".into(), None));
    }
}
