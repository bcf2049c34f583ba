//! Bringing the layout's placement in from the window (File ▸ Import the placement): the placement (centroid)
//! CSV, an optional BOM CSV, the unit, the origin and the regulator's designator, read and matched by the same
//! library functions as `hushrail place`; the result is one undo step, and what matched and what did not stays
//! on show.

use super::super::app::{App, CentralTab};
use super::super::commands::Command;
use super::super::history::Edit;
use super::super::status::Status;
use crate::io::layout_import::report_lines;
use crate::io::{Columns, ImportOptions, LengthUnit, parse_bom, parse_centroid, place_rail, read_text_file};
use egui::{Context, RichText};
use std::path::Path;

/// The import window's texts and its last answer.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ImportForm {
    /// The window is open.
    pub open: bool,
    centroid: String,
    bom: String,
    /// `None`: from the file's header or values (never guessed).
    unit: Option<LengthUnit>,
    /// The layout coordinates of the plane's lower-left corner, "x, y" in the file's unit.
    origin: String,
    regulator: String,
    /// What the last import said: (is an error, lines).
    answer: Option<(bool, Vec<String>)>,
}

/// The origin as typed: "x, y" (or "x y"), two finite numbers.
fn origin_of(text: &str) -> Result<[f64; 2], String> {
    let parts: Vec<&str> = text.split([',', ' ', ';']).map(str::trim).filter(|s| !s.is_empty()).collect();
    if parts.is_empty() {
        return Ok([0.0, 0.0]);
    }
    let number = |t: &str| t.parse::<f64>().ok().filter(|v| v.is_finite());
    match parts.as_slice() {
        [x, y] => match (number(x), number(y)) {
            (Some(x), Some(y)) => Ok([x, y]),
            _ => Err(format!("the origin \"{text}\" is not two numbers")),
        },
        _ => Err(format!("the origin \"{text}\" must be two numbers, x and y")),
    }
}

impl App {
    /// Open the import window for the selected rail.
    pub(in crate::gui) fn open_import(&mut self) {
        self.view.map.import.open = true;
    }

    /// The import window, when open.
    pub(in crate::gui) fn import_window(&mut self, ctx: &Context) {
        if !self.view.map.import.open {
            return;
        }
        let mut open = true;
        let rail_name = self.doc.board.rails.get(self.view.selected_rail).map(|r| r.name.clone()).unwrap_or_default();
        let lumped = self.doc.board.rails.get(self.view.selected_rail).is_some_and(|r| r.placement.is_none());
        let mut run = false;
        egui::Window::new(format!("Import the placement of {rail_name}"))
            .open(&mut open)
            .resizable(true)
            .default_width(520.0)
            .show(ctx, |ui| {
                let form = &mut self.view.map.import;
                ui.label(
                    "Reads the placement (centroid, pick-and-place) CSV the layout tool writes, matches designators \
                     to this rail's groups (from the BOM, or the groups' own designators), loads (by the first word \
                     of their names) and the regulator, and places each part where the layout has it.",
                );
                egui::Grid::new("import-form").num_columns(3).spacing([8.0, 6.0]).show(ui, |ui| {
                    for (name, text, hint) in [
                        ("placement CSV", &mut form.centroid, "path of the centroid file"),
                        ("BOM CSV (optional)", &mut form.bom, "path of the bill of materials"),
                    ] {
                        let l = ui.label(name);
                        ui.add(egui::TextEdit::singleline(text).desired_width(300.0).hint_text(hint)).labelled_by(l.id);
                        if ui.button("Choose…").clicked()
                            && let Some(p) = rfd::FileDialog::new().add_filter("CSV", &["csv", "txt"]).pick_file()
                        {
                            *text = p.display().to_string();
                        }
                        ui.end_row();
                    }
                    ui.label("unit");
                    ui.horizontal(|ui| {
                        ui.radio_value(&mut form.unit, None, "from the file");
                        for u in [LengthUnit::Mm, LengthUnit::Mil, LengthUnit::Inch] {
                            ui.radio_value(&mut form.unit, Some(u), u.name());
                        }
                    });
                    ui.end_row();
                    let l = ui.label("origin (x, y)");
                    ui.add(egui::TextEdit::singleline(&mut form.origin).desired_width(120.0).hint_text("0, 0"))
                        .on_hover_text("The layout coordinates of the plane pair's lower-left corner, in the file's unit")
                        .labelled_by(l.id);
                    ui.end_row();
                    let l = ui.label("regulator's designator");
                    ui.add(egui::TextEdit::singleline(&mut form.regulator).desired_width(120.0).hint_text("e.g. U9"))
                        .labelled_by(l.id);
                    ui.end_row();
                });
                if lumped {
                    ui.label(
                        RichText::new(
                            "This rail is lumped: it is placed on the plane pair given on the board map's form.",
                        )
                        .weak(),
                    );
                }
                ui.label(
                    RichText::new("Positions are taken as seen from the top; rotations are read but not used (ports are squares).")
                        .weak(),
                );
                run = ui.button("Import").clicked();
                if let Some((error, lines)) = &form.answer {
                    ui.separator();
                    egui::ScrollArea::vertical().max_height(220.0).show(ui, |ui| {
                        for line in lines {
                            let text = RichText::new(line);
                            ui.label(if *error { text.color(ui.visuals().error_fg_color) } else { text });
                        }
                    });
                }
            });
        self.view.map.import.open = open;
        if run {
            self.run_import();
        }
    }

    fn run_import(&mut self) {
        let index = self.view.selected_rail;
        let answer = self.import_now(index);
        let error = answer.is_err();
        let lines = answer.unwrap_or_else(|e| e);
        let first = lines.first().cloned().unwrap_or_default();
        if error {
            self.status = Some(Status::error(first));
        } else {
            // After the import's edit has landed (an edit clears the status line).
            self.ask(Command::Say(Status::info(first)));
        }
        self.view.map.import.answer = Some((error, lines));
    }

    /// Read, match and apply; the report's lines, or every problem.
    fn import_now(&mut self, index: usize) -> Result<Vec<String>, Vec<String>> {
        let form = self.view.map.import.clone();
        let Some(rail) = self.doc.board.rails.get(index) else { return Err(vec!["No rail is selected.".into()]) };
        let rail_name = rail.name.clone();
        if form.centroid.trim().is_empty() {
            return Err(vec!["Give the placement CSV's path.".into()]);
        }
        let centroid_path = Path::new(form.centroid.trim());
        let centroid =
            parse_centroid(&read_text_file(centroid_path).map_err(|e| vec![e])?, &Columns::default(), form.unit)
                .map_err(|(place, why)| vec![crate::io::BoardError::single(centroid_path, place, why).to_string()])?;
        let bom = if form.bom.trim().is_empty() {
            None
        } else {
            let p = Path::new(form.bom.trim());
            Some(
                parse_bom(&read_text_file(p).map_err(|e| vec![e])?)
                    .map_err(|(place, why)| vec![crate::io::BoardError::single(p, place, why).to_string()])?,
            )
        };
        let origin = origin_of(&form.origin).map_err(|e| vec![e])?.map(|v| v * centroid.unit.metres());
        let plane_pair = if rail.placement.is_none() {
            Some(self.view.map.place.plane_pair().map_err(|problems| {
                problems.into_iter().map(|p| format!("the board map's plane pair: {p}")).collect::<Vec<_>>()
            })?)
        } else {
            None
        };
        let regulator = Some(form.regulator.trim().to_string()).filter(|r| !r.is_empty());
        let options = ImportOptions { origin_m: origin, regulator, plane_pair };
        let (placed, report) =
            place_rail(&self.doc.board, index, &centroid, bom.as_deref(), &options).map_err(|problems| {
                std::iter::once(format!("Rail {rail_name} cannot be placed from {}:", centroid_path.display()))
                    .chain(problems)
                    .collect::<Vec<_>>()
            })?;
        let label = format!("import the placement of {rail_name}");
        self.propose(Edit::SetBoard { value: Box::new(placed) }, label, false, None)
            .map_err(|problems| problems.iter().map(|p| format!("{}: {}", p.path, p.reason)).collect::<Vec<_>>())?;
        self.central_tab = CentralTab::Map;
        let mut lines = vec![format!(
            "Placed {rail_name} from {} ({} parts, coordinates in {} from {}).",
            centroid_path.display(),
            centroid.parts.len(),
            centroid.unit.name(),
            if form.unit.is_some() { "the unit chosen" } else { centroid.unit_from }
        )];
        lines.extend(report_lines(&report));
        Ok(lines)
    }
}

#[cfg(test)]
mod tests {
    use super::origin_of;

    #[test]
    fn the_origin_reads_two_numbers() {
        assert_eq!(origin_of(""), Ok([0.0, 0.0]));
        assert_eq!(origin_of("12.5, -3"), Ok([12.5, -3.0]));
        assert_eq!(origin_of("12.5 3"), Ok([12.5, 3.0]));
        assert!(origin_of("12.5").is_err());
        assert!(origin_of("a, 3").is_err());
        assert!(origin_of("1, inf").is_err());
    }
}
