//! Placing a lumped rail from the window: the plane pair's size and stack-up, typed as a designer writes them;
//! the rail's parts then start in an arrangement (`model::starting_placement`) that the user moves on the map.

use super::super::app::App;
use super::super::commands::Command;
use super::super::history::Edit;
use super::super::status::Status;
use crate::model::{PlanePair, Rail, starting_placement};
use crate::units::{Unit, parse};
use egui::{RichText, Ui};

/// The form's texts, as typed.
#[derive(Debug, Clone, PartialEq)]
pub struct PlaceForm {
    width: String,
    height: String,
    dielectric: String,
    er: String,
    loss_tangent: String,
}

impl Default for PlaceForm {
    /// An invented starting stack-up: a 100 mm × 80 mm pair on 100 µm of an FR-4-like dielectric (εr 4.3, loss
    /// tangent 0.02: typical values, common practice).
    fn default() -> PlaceForm {
        PlaceForm {
            width: "100 mm".into(),
            height: "80 mm".into(),
            dielectric: "100 µm".into(),
            er: "4.3".into(),
            loss_tangent: "0.02".into(),
        }
    }
}

impl PlaceForm {
    /// The plane pair the texts describe, or every problem with its field's name.
    pub fn plane_pair(&self) -> Result<PlanePair, Vec<String>> {
        let mut problems = Vec::new();
        let mut read = |name: &str, text: &str, unit: Unit| match parse(text, unit) {
            Ok(v) if v.is_finite() => v,
            Ok(_) => {
                problems.push(format!("{name}: must be a finite number"));
                f64::NAN
            }
            Err(e) => {
                problems.push(format!("{name}: {e}"));
                f64::NAN
            }
        };
        let pair = PlanePair {
            size_m: [read("width", &self.width, Unit::Metre), read("height", &self.height, Unit::Metre)],
            dielectric_m: read("dielectric", &self.dielectric, Unit::Metre),
            er: read("relative permittivity", &self.er, Unit::None),
            loss_tangent: Some(read("loss tangent", &self.loss_tangent, Unit::None)),
            copper_m: None,
            conductivity_s_m: None,
        };
        if problems.is_empty() { Ok(pair) } else { Err(problems) }
    }
}

impl App {
    /// For a lumped rail: what placing it adds, and the form that places it.
    pub(super) fn place_form(&mut self, ui: &mut Ui, index: usize, rail: &Rail) {
        ui.add_space(8.0);
        ui.label(RichText::new(format!("{} is lumped: every part sits on one node.", rail.name)).strong());
        ui.label(
            "Place it on a plane pair to see where parts sit and the impedance each load sees through the planes. \
             Its parts start on rings around the loads, each with its own designator; drag them where the layout \
             has them (or import the layout's placement from the File menu).",
        );
        ui.add_space(6.0);
        let form = &mut self.view.map.place;
        egui::Grid::new("place-form").num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
            for (name, text, hover) in [
                ("width (x)", &mut form.width, "the plane pair's side along x, e.g. 100 mm"),
                ("height (y)", &mut form.height, "the plane pair's side along y, e.g. 80 mm"),
                ("dielectric", &mut form.dielectric, "the thickness between the two planes, e.g. 100 µm or 4 mil"),
                ("relative permittivity", &mut form.er, "εr of the dielectric"),
                ("loss tangent", &mut form.loss_tangent, "tan δ of the dielectric (0 for none)"),
            ] {
                let l = ui.label(name);
                ui.add(egui::TextEdit::singleline(text).desired_width(110.0)).on_hover_text(hover).labelled_by(l.id);
                ui.end_row();
            }
        });
        if rail.loads.len() > 1 && rail.package.is_some() {
            ui.label(
                RichText::new(
                    "The rail's one package and die go to each of its loads; give each load its own afterwards if \
                     they differ.",
                )
                .weak(),
            );
        }
        if ui.button("Place on this plane pair").clicked() {
            let placed =
                self.view.map.place.plane_pair().map_err(|p| p.join("; ")).and_then(|pp| starting_placement(rail, pp));
            match placed {
                Ok(next) => {
                    let label = format!("place {} on a plane pair", rail.name);
                    match self.propose(Edit::SetRail { rail: index, value: Box::new(next) }, label, false, None) {
                        Ok(()) => self.ask(Command::Say(Status::info(format!(
                            "Placed {} on a plane pair: drag its parts where they sit.",
                            rail.name
                        )))),
                        Err(problems) => {
                            let why: Vec<String> =
                                problems.iter().map(|p| format!("{}: {}", p.path, p.reason)).collect();
                            self.status =
                                Some(Status::error(format!("Cannot place {}: {}", rail.name, why.join("; "))));
                        }
                    }
                }
                Err(why) => self.status = Some(Status::error(format!("Cannot place {}: {why}", rail.name))),
            }
        }
    }
}
