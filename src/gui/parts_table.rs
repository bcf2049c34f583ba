//! The board's parts: a table to pick one, and the picked part's fields below it. Add, duplicate and remove; a
//! part that groups still use is not removed, and the groups are named.

use super::app::App;
use super::commands::{Command, Draft};
use super::history::{Edit, part_users};
use super::number_field::{Fields, number_field, optional_number_field, refusal_text, text_field};
use super::theme;
use crate::model::{Part, PartKind};
use crate::units::{Unit, format};
use egui::{RichText, Ui};

/// A new part's values: an invented generic 100 nF ceramic for the user to replace with their part's data.
fn new_part(id: String) -> Part {
    Part::new(id, PartKind::Ceramic, 100e-9, 0.02, 0.4e-9)
}

/// Ask to replace part `at` with a changed copy (applied with the frame's commands).
fn set_part(
    doc: &mut Draft,
    at: usize,
    key: &str,
    label: String,
    change: impl FnOnce(&mut Part),
) -> Result<(), String> {
    let Some(mut part) = doc.board.parts.get(at).cloned() else { return Err("no such part".into()) };
    change(&mut part);
    doc.propose(Edit::SetPart { at, value: Box::new(part) }, label, false, Some(key)).map_err(|p| refusal_text(key, &p))
}

/// An id not used yet, built from `base`.
fn free_id(board: &crate::model::Board, base: &str) -> String {
    (1..)
        .map(|n| if n == 1 { base.to_string() } else { format!("{base}-{n}") })
        .find(|id| board.part(id).is_none())
        .unwrap_or_default()
}

/// Optional text (case, dielectric): empty means not given.
fn optional_text(text: &str) -> Option<String> {
    let t = text.trim();
    (!t.is_empty()).then(|| t.to_string())
}

impl App {
    pub(super) fn parts_table(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let n = self.doc.board.parts.len();
        if self.view.selected_part >= n {
            self.view.selected_part = n.saturating_sub(1);
        }
        ui.horizontal(|ui| {
            let l = ui.label("Board name");
            let (fields, doc) = (&mut self.view.fields, &mut Draft::new(&self.doc.board, &mut self.commands));
            let old = doc.board.name.clone();
            text_field(ui, fields, "name", l.id, &old, 220.0, |t| {
                let name = t.trim().to_string();
                doc.propose(
                    Edit::SetBoardName { name: name.clone() },
                    format!("rename board to {name}"),
                    false,
                    Some("name"),
                )
                .map_err(|p| refusal_text("name", &p))
            });
        });
        self.board_settings(ui, pal.fail);
        ui.add_space(4.0);
        ui.label(RichText::new(format!("{n} parts on this board")).strong());
        egui::Grid::new("parts-table").striped(true).num_columns(5).spacing([10.0, 4.0]).show(ui, |ui| {
            for h in ["id", "kind", "C", "ESR", "ESL"] {
                ui.label(RichText::new(h).weak());
            }
            ui.end_row();
            for (pi, part) in self.doc.board.parts.iter().enumerate() {
                let used = self.doc.board.uses_of_part(&part.id).len();
                let r = ui
                    .selectable_label(pi == self.view.selected_part, &part.id)
                    .on_hover_text(format!("used by {used} {}", if used == 1 { "group" } else { "groups" }));
                if r.clicked() {
                    self.view.selected_part = pi;
                }
                ui.label(part.kind.name());
                if let Some(why) = part.unusable() {
                    ui.label(RichText::new("unusable").color(pal.fail)).on_hover_text(why);
                    ui.label("");
                    ui.label("");
                } else {
                    // A measured part's figures are fitted to its data, not typed: say so in the row.
                    let fitted = if part.kind == PartKind::Measured { " (fitted)" } else { "" };
                    ui.label(format!("{}{fitted}", format(part.capacitance_f, Unit::Farad)));
                    ui.label(format(part.esr_ohm, Unit::Ohm));
                    ui.label(format(part.esl_h, Unit::Henry));
                }
                ui.end_row();
            }
        });
        ui.add_space(4.0);
        ui.horizontal(|ui| {
            if ui.button("Add part").clicked() {
                let id = free_id(&self.doc.board, "new-part");
                let at = n;
                if self
                    .propose(
                        Edit::AddPart { at, value: Box::new(new_part(id.clone())) },
                        format!("add part {id}"),
                        false,
                        None,
                    )
                    .is_ok()
                {
                    self.ask(Command::SelectPart(at));
                }
            }
            if n > 0 && ui.button("Duplicate").clicked() {
                let mut copy = self.doc.board.parts[self.view.selected_part].clone();
                copy.id = free_id(&self.doc.board, &format!("{}-copy", copy.id));
                let at = self.view.selected_part + 1;
                let label = format!("duplicate part as {}", copy.id);
                if self.propose(Edit::AddPart { at, value: Box::new(copy) }, label, false, None).is_ok() {
                    self.ask(Command::SelectPart(at));
                }
            }
            if n > 0 && ui.button("Remove part").clicked() {
                let at = self.view.selected_part;
                let key = format!("parts[{at}]");
                let id = self.doc.board.parts[at].id.clone();
                let result = self
                    .propose(Edit::RemovePart { at }, format!("remove part {id}"), false, Some(&key))
                    .map_err(|p| refusal_text(&key, &p));
                self.report(&key, result);
            }
        });
        let at = self.view.selected_part;
        let key = format!("parts[{at}]");
        if let Some(reason) = self.view.fields.error(&key) {
            ui.label(RichText::new(format!("Refused: {reason}")).color(pal.fail));
        }
        let Some(part) = self.doc.board.parts.get(at).cloned() else { return };
        ui.separator();
        ui.label(RichText::new(format!("Part {}", part.id)).strong());
        let users = part_users(&self.doc.board, &part.id);
        ui.label(if users.is_empty() {
            "Not used by any group.".to_string()
        } else {
            format!("Used by {}.", users.join(", "))
        });
        if part.kind.is_polarised() {
            ui.label(
                RichText::new("Caution: polarised; fit with the right DC direction; reversed, it can fail violently.")
                    .color(pal.note),
            );
        }
        let (fields, doc) = (&mut self.view.fields, &mut Draft::new(&self.doc.board, &mut self.commands));
        egui::Grid::new(("part-fields", at)).num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
            let l = ui.label("Id");
            let k = format!("{key}.id");
            text_field(ui, fields, &k, l.id, &part.id, 160.0, |t| {
                let id = t.trim().to_string();
                set_part(doc, at, &k, format!("rename part {} to {id}", part.id), |p| p.id = id)
            });
            ui.end_row();

            let kind_label = ui.label("Kind");
            let mut kind = part.kind;
            let combo = egui::ComboBox::from_id_salt(("part-kind", at)).selected_text(kind.name()).show_ui(ui, |ui| {
                for k in PartKind::ALL {
                    ui.selectable_value(&mut kind, k, k.name());
                }
            });
            let _ = combo.response.labelled_by(kind_label.id);
            if kind != part.kind {
                let k = format!("{key}.kind");
                if let Err(reason) =
                    set_part(doc, at, &k, format!("kind of {} to {}", part.id, kind.name()), |p| p.kind = kind)
                {
                    fields.set_error(&k, String::new(), reason);
                }
            }
            ui.end_row();

            if part.kind == PartKind::Measured {
                measured_rows(ui, &part, pal.fail);
            } else {
                part_number(
                    ui,
                    fields,
                    doc,
                    at,
                    &part,
                    "C",
                    "capacitance_f",
                    part.capacitance_f,
                    Unit::Farad,
                    |p, v| p.capacitance_f = v,
                );
                part_number(ui, fields, doc, at, &part, "ESR", "esr_ohm", part.esr_ohm, Unit::Ohm, |p, v| {
                    p.esr_ohm = v
                });
                part_number(ui, fields, doc, at, &part, "ESL", "esl_h", part.esl_h, Unit::Henry, |p, v| p.esl_h = v);
            }

            let l = ui.label("Tolerance ±%");
            let k = format!("{key}.tolerance_pct");
            optional_number_field(ui, fields, &k, l.id, part.tolerance_pct, Unit::None, 96.0, |v| {
                set_part(doc, at, &k, format!("tolerance of {}", part.id), |p| p.tolerance_pct = v)
            });
            ui.end_row();

            let l = ui.label("ESR tolerance ±%").on_hover_text(format!(
                "Empty: ±{} % (common practice; parts give ESR as a typical curve)",
                crate::model::DEFAULT_ESR_TOLERANCE_PCT
            ));
            let k = format!("{key}.esr_tolerance_pct");
            optional_number_field(ui, fields, &k, l.id, part.esr_tolerance_pct, Unit::None, 96.0, |v| {
                set_part(doc, at, &k, format!("ESR tolerance of {}", part.id), |p| p.esr_tolerance_pct = v)
            });
            ui.end_row();

            let l = ui.label("Rated voltage");
            let k = format!("{key}.rated_voltage_v");
            optional_number_field(ui, fields, &k, l.id, part.rated_voltage_v, Unit::Volt, 96.0, |v| {
                set_part(doc, at, &k, format!("rating of {}", part.id), |p| p.rated_voltage_v = v)
            });
            ui.end_row();

            let l = ui.label("Case");
            let k = format!("{key}.case");
            text_field(ui, fields, &k, l.id, part.case.as_deref().unwrap_or(""), 96.0, |t| {
                set_part(doc, at, &k, format!("case of {}", part.id), |p| p.case = optional_text(t))
            });
            ui.end_row();

            let l = ui.label("Dielectric");
            let k = format!("{key}.dielectric");
            text_field(ui, fields, &k, l.id, part.dielectric.as_deref().unwrap_or(""), 96.0, |t| {
                set_part(doc, at, &k, format!("dielectric of {}", part.id), |p| p.dielectric = optional_text(t))
            });
            ui.end_row();

            let l = ui.label("Unit cost");
            let k = format!("{key}.unit_cost");
            // Money reads better as a plain number (0.002) than with a prefix (2.00 m); "2m" is still accepted.
            let shown = part.unit_cost.map(crate::units::full_precision).unwrap_or_default();
            text_field(ui, fields, &k, l.id, &shown, 96.0, |t| {
                let cost = if t.trim().is_empty() {
                    None
                } else {
                    Some(crate::units::parse(t, Unit::None).map_err(|e| e.reason)?)
                };
                set_part(doc, at, &k, format!("cost of {}", part.id), |p| p.unit_cost = cost)
            });
            ui.end_row();
        });
        ui.horizontal(|ui| {
            let l = ui.label("DC-bias curve");
            let k = format!("{key}.dc_bias");
            let shown = part.dc_bias.as_deref().map(bias_text).unwrap_or_default();
            text_field(ui, fields, &k, l.id, &shown, 200.0, |t| {
                let curve = parse_bias(t)?;
                set_part(doc, at, &k, format!("DC-bias curve of {}", part.id), |p| p.dc_bias = curve)
            });
        });
        ui.label(
            RichText::new(
                "As \"volts:ratio, volts:ratio\" (capacitance kept at that DC, from the part's data); empty for none. \
                 Used in the typical corner (the verdict) and the worst corner.",
            )
            .small()
            .weak(),
        );
        ui.label(
            RichText::new("Values are the part's own data at the rail's voltage and temperature: take them from its data, not from memory.")
                .small()
                .weak(),
        );
    }
}

/// A measured part's data file and its fitted values, read-only (they come from the measurement), or why the
/// measurement cannot be used.
fn measured_rows(ui: &mut Ui, part: &Part, fail: egui::Color32) {
    ui.label("Measurement");
    ui.label(format!(
        "{} ({})",
        part.touchstone.as_deref().unwrap_or("no file named"),
        part.fixture.map(|f| f.name()).unwrap_or("no fixture named")
    ));
    ui.end_row();
    if let Some(why) = part.unusable() {
        ui.label(RichText::new("Unusable").color(fail));
        ui.label(RichText::new(format!("unusable: {why}")).color(fail))
            .on_hover_text("Its groups are left out of the rail until the data are fixed.");
        ui.end_row();
        return;
    }
    for (name, value, unit) in
        [("C", part.capacitance_f, Unit::Farad), ("ESR", part.esr_ohm, Unit::Ohm), ("ESL", part.esl_h, Unit::Henry)]
    {
        ui.label(name);
        ui.label(format!("{} fitted (read-only)", format(value, unit)))
            .on_hover_text("Fitted to the measured data; used outside the data's frequency range.");
        ui.end_row();
    }
}

/// A DC-bias curve as the user edits it: "0:1, 3.3:0.62".
fn bias_text(curve: &[[f64; 2]]) -> String {
    let point = |p: &[f64; 2]| format!("{}:{}", crate::units::full_precision(p[0]), crate::units::full_precision(p[1]));
    curve.iter().map(point).collect::<Vec<_>>().join(", ")
}

/// Read a DC-bias curve typed as "volts:ratio, volts:ratio" (engineering notation allowed); empty is no curve.
/// The board's rules (increasing volts, ratios in (0, 1]) are checked by the edit.
fn parse_bias(text: &str) -> Result<Option<Vec<[f64; 2]>>, String> {
    if text.trim().is_empty() {
        return Ok(None);
    }
    let mut curve = Vec::new();
    for item in text.split(',') {
        let (v, r) =
            item.split_once(':').ok_or_else(|| format!("\"{}\" is not volts:ratio (such as 3.3:0.6)", item.trim()))?;
        let v = crate::units::parse(v.trim(), Unit::Volt).map_err(|e| e.reason)?;
        let r = crate::units::parse(r.trim(), Unit::None).map_err(|e| e.reason)?;
        curve.push([v, r]);
    }
    Ok(Some(curve))
}

impl App {
    /// The board-wide settings the derating reads: the temperature range and the generic DC-bias model.
    fn board_settings(&mut self, ui: &mut Ui, fail: egui::Color32) {
        let board = self.doc.board.clone();
        egui::CollapsingHeader::new(RichText::new("Board temperature and derating").strong())
            .id_salt("board-settings")
            .show(ui, |ui| {
                let (fields, doc) = (&mut self.view.fields, &mut Draft::new(&self.doc.board, &mut self.commands));
                let range = board.temperature_c;
                egui::Grid::new("board-temperature").num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
                    for (n, label) in ["Lowest °C", "Highest °C"].into_iter().enumerate() {
                        let l = ui.label(label);
                        let key = format!("temperature_c[{n}]");
                        optional_number_field(ui, fields, &key, l.id, range.map(|r| r[n]), Unit::None, 96.0, |v| {
                            let mut next = doc.board.clone();
                            next.temperature_c = match (v, range) {
                                (None, _) => None,
                                (Some(v), Some(mut r)) => {
                                    r[n] = v;
                                    Some(r)
                                }
                                // A first edge typed: the other starts at room temperature (25 °C).
                                (Some(v), None) => Some(if n == 0 { [v, 25.0] } else { [25.0, v] }),
                            };
                            doc.propose(Edit::SetBoard { value: Box::new(next) }, "board temperature".into(), false, Some(&key))
                                .map_err(|p| refusal_text(&key, &p))
                        });
                        ui.end_row();
                    }
                });
                ui.label(
                    RichText::new("Empty: the temperature class is not applied. The worst corner takes the class limit over this range.")
                        .small()
                        .weak(),
                );
                let mut generic = board.generic_dc_bias.unwrap_or(true);
                let r = ui.checkbox(
                    &mut generic,
                    "generic DC-bias model for class II ceramics without their own curve (typical, recalled)",
                );
                if r.changed() {
                    let mut next = board.clone();
                    next.generic_dc_bias = Some(generic);
                    let words = if generic { "use" } else { "turn off" };
                    let result = self
                        .propose(
                            Edit::SetBoard { value: Box::new(next) },
                            format!("{words} the generic DC-bias model"),
                            false,
                            Some("generic_dc_bias"),
                        )
                        .map_err(|p| refusal_text("generic_dc_bias", &p));
                    self.report("generic_dc_bias", result);
                }
                if let Some(reason) = self.view.fields.error("generic_dc_bias") {
                    ui.label(RichText::new(reason).color(fail));
                }
                ui.label(
                    RichText::new("The generic model is a typical curve by case and rating, from memory: replace it with each part's own curve.")
                        .small()
                        .weak(),
                );
            });
    }
}

#[allow(clippy::too_many_arguments)]
fn part_number(
    ui: &mut Ui,
    fields: &mut Fields,
    doc: &mut Draft,
    at: usize,
    part: &Part,
    label: &str,
    field: &str,
    value: f64,
    unit: Unit,
    set: impl FnOnce(&mut Part, f64),
) {
    let l = ui.label(label);
    let key = format!("parts[{at}].{field}");
    number_field(ui, fields, &key, l.id, value, unit, 96.0, |v| {
        set_part(doc, at, &key, format!("{label} of {}", part.id), |p| set(p, v))
    });
    ui.end_row();
}
