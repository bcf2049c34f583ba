//! The selected rail's inputs, all editable: name, voltage, ripple, band, source, plane, loads and decap groups.
//! Every change becomes one [`Edit`] through the history; a refused change shows its reason at the field.

use super::app::{App, SideTab};
use super::commands::Draft;
use super::history::Edit;
use super::number_field::{Fields, number_field, optional_number_field, refusal_text, text_field};
use super::theme;
use crate::analysis::sensitivity_words;
use crate::model::{Combine, DecapGroup, Die, Load, MountingGeometry, Package, Plane, Rail, Source, SourceLoop};
use crate::physics::mounting::mounting_breakdown;
use crate::units::{Unit, format};
use egui::{RichText, Ui};
use std::cell::RefCell;

/// The regulator model a rail gets when the user turns its source on (an invented, typical-looking start value
/// for the user to replace with the regulator's own data).
const NEW_SOURCE: Source = Source::rl(1e-3, 10e-9);
/// The control loop a source gets when the user turns it on (invented, typical-looking: 100 kHz, 50°).
const NEW_LOOP: SourceLoop = SourceLoop { crossover_hz: 1e5, phase_margin_deg: 50.0 };
/// The plane a rail gets when the user turns its plane on (invented start value).
const NEW_PLANE: Plane = Plane { capacitance_f: 1e-9, esr_ohm: 2e-3, esl_h: 10e-12 };
/// Mounting inductance of a newly added group (invented start value, of the order of a small part on two vias).
const NEW_MOUNTING_H: f64 = 0.6e-9;
/// The geometry a group gets when the user switches it from a given inductance to geometry.
const NEW_GEOMETRY: MountingGeometry = crate::physics::mounting::TYPICAL_GEOMETRY;
/// The package a rail gets when the user turns it on (invented start values).
const NEW_PACKAGE: Package = Package { r_ohm: 1e-3, l_h: 50e-12 };
/// The die capacitance a rail gets when the user turns it on (invented start values).
const NEW_DIE: Die = Die { capacitance_f: 100e-9, esr_ohm: 1e-3 };
/// Width of a number field.
const FIELD_W: f32 = 96.0;
/// Width a group's count and mounting take on one line (points, measured in the body font).
const COUNT_AND_MOUNTING_W: f32 = 350.0;

/// Ask to replace rail `index` with a changed copy (applied with the frame's commands). The error names what went wrong at `key`.
fn set_rail(
    doc: &mut Draft,
    index: usize,
    key: &str,
    label: String,
    change: impl FnOnce(&mut Rail),
) -> Result<(), String> {
    let Some(mut rail) = doc.board.rails.get(index).cloned() else { return Err("no such rail".into()) };
    change(&mut rail);
    doc.propose(Edit::SetRail { rail: index, value: Box::new(rail) }, label, false, Some(key))
        .map_err(|p| refusal_text(key, &p))
}

/// A labelled number field in a two-column grid row, editing one value of the rail.
#[allow(clippy::too_many_arguments)]
fn rail_number(
    ui: &mut Ui,
    fields: &mut Fields,
    doc: &mut Draft,
    index: usize,
    label: &str,
    field: &str,
    value: f64,
    unit: Unit,
    set: impl FnOnce(&mut Rail, f64),
) {
    let l = ui.label(label);
    let key = format!("rails[{index}].{field}");
    let rail_name = doc.board.rails[index].name.clone();
    number_field(ui, fields, &key, l.id, value, unit, FIELD_W, |v| {
        set_rail(doc, index, &key, format!("{label} of {rail_name}"), |r| set(r, v))
    });
    ui.end_row();
}

impl App {
    /// The side panel: tabs for the rail's inputs, the board's parts and help.
    pub(super) fn side_panel(&mut self, ui: &mut Ui) {
        ui.add_space(4.0);
        ui.horizontal_wrapped(|ui| {
            ui.selectable_value(&mut self.side_tab, SideTab::Rail, RichText::new("Rail inputs").strong());
            ui.selectable_value(&mut self.side_tab, SideTab::Parts, RichText::new("Parts").strong());
            ui.selectable_value(&mut self.side_tab, SideTab::Suggest, RichText::new("Suggest").strong());
            ui.selectable_value(&mut self.side_tab, SideTab::Help, RichText::new("Help and cautions").strong());
        });
        ui.separator();
        // The column keeps its width: its text and rows wrap to it (a group's count and mounting, a caution), and
        // anything still wider scrolls sideways rather than widening the panel under the pointer.
        let width = ui.available_width() - ui.spacing().scroll.bar_width - ui.spacing().scroll.bar_inner_margin;
        egui::ScrollArea::both().id_salt("side-scroll").auto_shrink([false, false]).show(ui, |ui| {
            ui.set_max_width(width);
            match self.side_tab {
                SideTab::Rail => self.rail_editor(ui),
                SideTab::Parts => self.parts_table(ui),
                SideTab::Suggest => self.suggest_panel(ui),
                SideTab::Help => super::help::help(ui),
            }
        });
    }

    fn rail_editor(&mut self, ui: &mut Ui) {
        let i = self.view.selected_rail;
        let Some(rail) = self.doc.board.rails.get(i).cloned() else {
            ui.label("No rail selected.");
            return;
        };
        let pal = theme::palette(ui.visuals().dark_mode);
        let (fields, doc) = (&mut self.view.fields, &mut Draft::new(&self.doc.board, &mut self.commands));

        egui::Grid::new(("rail-basics", i)).num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
            let l = ui.label("Name");
            let key = format!("rails[{i}].name");
            let old = rail.name.clone();
            text_field(ui, fields, &key, l.id, &rail.name, 160.0, |text| {
                let name = text.trim().to_string();
                set_rail(doc, i, &key, format!("rename rail {old} to {name}"), |r| r.name = name)
            });
            ui.end_row();
            rail_number(ui, fields, doc, i, "Voltage", "voltage_v", rail.voltage_v, Unit::Volt, |r, v| r.voltage_v = v);
            rail_number(ui, fields, doc, i, "Ripple %", "ripple_pct", rail.ripple_pct, Unit::None, |r, v| {
                r.ripple_pct = v
            });
            // Typing an edge fixes the band (both edges) where it is shown; a band taken from the loads can be
            // brought back below.
            let band = rail.band_hz_or_default();
            rail_number(ui, fields, doc, i, "Band from", "band_hz[0]", band[0], Unit::Hertz, move |r, v| {
                r.band_hz = Some([v, band[1]])
            });
            rail_number(ui, fields, doc, i, "Band to", "band_hz[1]", band[1], Unit::Hertz, move |r, v| {
                r.band_hz = Some([band[0], v])
            });
            ui.label("Target");
            ui.label(format!(
                "{}  (V × ripple ÷ ΔI of {})",
                format(crate::analysis::target_impedance(&rail), Unit::Ohm),
                format(rail.total_step_a(), Unit::Ampere)
            ));
            ui.end_row();
        });
        match (&rail.band_hz, rail.band()) {
            (None, Some(band)) => {
                // The engine's own words for where each edge came from.
                for line in crate::analysis::explain_band(&band) {
                    ui.label(RichText::new(line).small().weak());
                }
            }
            (Some(_), _) => {
                let key = format!("rails[{i}].band_hz");
                let from_loads = ui
                    .small_button("Take the band from the loads' rise times")
                    .on_hover_text("Upper edge 0.35 / the fastest rise time; lower edge the default");
                if from_loads.clicked() {
                    let result =
                        set_rail(doc, i, &key, format!("band of {} from its loads", rail.name), |r| r.band_hz = None);
                    match result {
                        Ok(()) => fields.forget(&key),
                        Err(reason) => fields.set_error(&key, String::new(), reason),
                    }
                }
                show_error(ui, fields, &key, pal.fail);
            }
            (None, None) => {}
        }
        ui.add_space(6.0);

        // The groups come first: their counts are what the user changes most.
        let groups_title = format!("Decap groups ({})", rail.decaps.len());
        egui::CollapsingHeader::new(RichText::new(groups_title).strong())
            .id_salt(("groups", i))
            .default_open(true)
            .show(ui, |ui| {
                self.groups_editor(ui, i, &rail);
            });

        let (fields, doc) = (&mut self.view.fields, &mut Draft::new(&self.doc.board, &mut self.commands));
        egui::CollapsingHeader::new(RichText::new("Regulator output (source)").strong())
            .id_salt(("source", i))
            .default_open(true)
            .show(ui, |ui| {
                let text = "the rail has a regulator (series R-L to ground)";
                toggle(ui, fields, doc, i, "source", text, rail.source.is_some(), pal.fail, |r, on| {
                    r.source = on.then_some(NEW_SOURCE)
                });
                if let Some(words) = rail.source.as_ref().and_then(crate::analysis::source_fit_words) {
                    // A measured source's R, L and loop are its file's fit: shown, not edited.
                    ui.label(words);
                } else if let Some(s) = rail.source.clone() {
                    egui::Grid::new(("source-grid", i)).num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
                        rail_number(ui, fields, doc, i, "R", "source.r_ohm", s.r_ohm, Unit::Ohm, |r, v| {
                            if let Some(s) = &mut r.source {
                                s.r_ohm = v
                            }
                        });
                        rail_number(ui, fields, doc, i, "L", "source.l_h", s.l_h, Unit::Henry, |r, v| {
                            if let Some(s) = &mut r.source {
                                s.l_h = v
                            }
                        });
                    });
                    let text = "with its control loop (flat inside the loop's bandwidth, a peak near crossover)";
                    toggle(ui, fields, doc, i, "source.loop", text, s.control.is_some(), pal.fail, |r, on| {
                        if let Some(s) = &mut r.source {
                            s.control = on.then_some(NEW_LOOP)
                        }
                    });
                    if let Some(c) = s.control {
                        egui::Grid::new(("loop-grid", i)).num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
                            let (f, pm) = (c.crossover_hz, c.phase_margin_deg);
                            rail_number(
                                ui,
                                fields,
                                doc,
                                i,
                                "crossover",
                                "source.loop_crossover_hz",
                                f,
                                Unit::Hertz,
                                |r, v| {
                                    if let Some(c) = r.source.as_mut().and_then(|s| s.control.as_mut()) {
                                        c.crossover_hz = v
                                    }
                                },
                            );
                            let key = "source.loop_phase_margin_deg";
                            rail_number(ui, fields, doc, i, "phase margin (°)", key, pm, Unit::None, |r, v| {
                                if let Some(c) = r.source.as_mut().and_then(|s| s.control.as_mut()) {
                                    c.phase_margin_deg = v
                                }
                            });
                        });
                    }
                }
            });

        egui::CollapsingHeader::new(RichText::new("Power/ground planes").strong())
            .id_salt(("plane", i))
            .default_open(true)
            .show(ui, |ui| {
                let text = "count the plane pair's capacitance";
                toggle(ui, fields, doc, i, "plane", text, rail.plane.is_some(), pal.fail, |r, on| {
                    r.plane = on.then_some(NEW_PLANE)
                });
                if let Some(p) = rail.plane {
                    egui::Grid::new(("plane-grid", i)).num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
                        rail_number(
                            ui,
                            fields,
                            doc,
                            i,
                            "C",
                            "plane.capacitance_f",
                            p.capacitance_f,
                            Unit::Farad,
                            |r, v| {
                                if let Some(p) = &mut r.plane {
                                    p.capacitance_f = v
                                }
                            },
                        );
                        rail_number(ui, fields, doc, i, "ESR", "plane.esr_ohm", p.esr_ohm, Unit::Ohm, |r, v| {
                            if let Some(p) = &mut r.plane {
                                p.esr_ohm = v
                            }
                        });
                        rail_number(ui, fields, doc, i, "ESL", "plane.esl_h", p.esl_h, Unit::Henry, |r, v| {
                            if let Some(p) = &mut r.plane {
                                p.esl_h = v
                            }
                        });
                    });
                }
            });

        egui::CollapsingHeader::new(RichText::new("Package and die").strong())
            .id_salt(("package", i))
            .default_open(rail.package.is_some())
            .show(ui, |ui| package_editor(ui, fields, doc, i, &rail, pal.fail));

        let loads_title = format!("Loads (ΔI {} in all)", format(rail.total_step_a(), Unit::Ampere));
        egui::CollapsingHeader::new(RichText::new(loads_title).strong()).id_salt(("loads", i)).default_open(true).show(
            ui,
            |ui| {
                loads_editor(ui, fields, doc, i, &rail, pal.fail);
            },
        );
    }

    fn groups_editor(&mut self, ui: &mut Ui, i: usize, rail: &Rail) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let srf: Vec<Option<f64>> = self
            .view
            .results
            .get(i)
            .map(|r| r.analysis.groups.iter().map(|g| g.self_resonance_hz).collect())
            .unwrap_or_default();
        let cautions = self.view.results.get(i).map(|r| r.check.cautions.clone()).unwrap_or_default();
        let sensitivity = self.view.results.get(i).map(|r| r.check.sensitivity.clone()).unwrap_or_default();
        let part_ids: Vec<String> = self.doc.board.parts.iter().map(|p| p.id.clone()).collect();
        let n = rail.decaps.len();
        for (gi, g) in rail.decaps.iter().enumerate() {
            let key = format!("rails[{i}].decaps[{gi}]");
            egui::Frame::group(ui.style()).inner_margin(egui::Margin::symmetric(6, 4)).show(ui, |ui| {
                ui.set_width(ui.available_width());
                ui.horizontal(|ui| {
                    ui.label(RichText::new(format!("{}.", gi + 1)).strong());
                    let mut part = g.part.clone();
                    let combo = egui::ComboBox::from_id_salt(("group-part", i, gi))
                        .width(150.0)
                        .selected_text(&part)
                        .show_ui(ui, |ui| {
                            for id in &part_ids {
                                ui.selectable_value(&mut part, id.clone(), id);
                            }
                        });
                    let combo_label = format!("part of group {}", gi + 1);
                    combo.response.widget_info(|| egui::WidgetInfo::labeled(egui::Role::ComboBox, true, &combo_label));
                    if part != g.part {
                        let label = format!("group {} of {}: {} to {part}", gi + 1, rail.name, g.part);
                        let result =
                            set_rail(&mut self.draft(), i, &format!("{key}.part"), label, |r| r.decaps[gi].part = part);
                        self.report(&format!("{key}.part"), result);
                    }
                    if let Some(Some(f)) = srf.get(gi) {
                        ui.label(RichText::new(format!("resonates at {}", format(*f, Unit::Hertz))).small().weak());
                    }
                });
                show_error(ui, &self.view.fields, &format!("{key}.part"), pal.fail);
                // Count and mounting side by side where the column is wide enough, one under the other where not
                // (decided before drawing, so the row never overflows the column nor jumps between frames).
                if ui.available_width() >= COUNT_AND_MOUNTING_W {
                    ui.horizontal(|ui| {
                        self.count_editor(ui, i, gi, g, &rail.name);
                        ui.add_space(8.0);
                        self.mounting_editor(ui, i, gi, g, &rail.name);
                    });
                } else {
                    ui.horizontal(|ui| self.count_editor(ui, i, gi, g, &rail.name));
                    ui.horizontal(|ui| self.mounting_editor(ui, i, gi, g, &rail.name));
                }
                show_error(ui, &self.view.fields, &format!("{key}.mounting_h"), pal.fail);
                if let Some(geometry) = g.mounting {
                    let (fields, doc) = (&mut self.view.fields, &mut Draft::new(&self.doc.board, &mut self.commands));
                    geometry_editor(ui, fields, doc, i, gi, &geometry, pal.fail);
                }
                show_error(ui, &self.view.fields, &format!("{key}.count"), pal.fail);
                ui.horizontal(|ui| {
                    let mut action = None;
                    if ui.add_enabled(gi > 0, egui::Button::new("Up").small()).on_hover_text("Move up").clicked() {
                        action = Some(("move up", gi - 1));
                    }
                    if ui
                        .add_enabled(gi + 1 < n, egui::Button::new("Down").small())
                        .on_hover_text("Move down")
                        .clicked()
                    {
                        action = Some(("move down", gi + 1));
                    }
                    let remove = ui.small_button("Remove group");
                    let remove_label = format!("remove group {} ({})", gi + 1, g.part);
                    remove.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &remove_label));
                    if remove.clicked() {
                        let label = format!("remove group {} ({}) from {}", gi + 1, g.part, rail.name);
                        let result = set_rail(&mut self.draft(), i, &key, label, |r| {
                            r.decaps.remove(gi);
                        });
                        self.report(&key, result);
                    } else if let Some((word, to)) = action {
                        let label = format!("{word} group {} of {}", gi + 1, rail.name);
                        let result = set_rail(&mut self.draft(), i, &key, label, |r| r.decaps.swap(gi, to));
                        self.report(&key, result);
                    }
                });
                if let Some(s) = sensitivity.iter().find(|s| s.group == gi) {
                    ui.label(RichText::new(format!("worst |Z| per part: {}", sensitivity_words(s))).small().weak())
                        .on_hover_text(
                            "How the rail's worst |Z| in the band moves with one part more or one fewer in this \
                             group: the group the verdict hangs on moves it most",
                        );
                }
                for c in cautions.iter().filter(|c| c.part == g.part) {
                    ui.label(RichText::new(format!("Caution: {}", c.text)).small().color(if c.fails {
                        pal.fail
                    } else {
                        pal.note
                    }));
                }
            });
        }
        show_error(ui, &self.view.fields, &format!("rails[{i}].decaps"), pal.fail);
        let can_add = !part_ids.is_empty();
        let add = ui.add_enabled(can_add, egui::Button::new("Add group"));
        let add = if can_add {
            add.on_hover_text("Add a group of one part")
        } else {
            add.on_disabled_hover_text("Add a part first (Parts page)")
        };
        if add.clicked() {
            // Start with a part the rail does not use yet, so the new group says something new.
            let part =
                part_ids.iter().find(|id| !rail.decaps.iter().any(|g| &g.part == *id)).unwrap_or(&part_ids[0]).clone();
            let label = format!("add group of {part} to {}", rail.name);
            let key = format!("rails[{i}].decaps");
            let result = set_rail(&mut self.draft(), i, &key, label, |r| {
                r.decaps.push(DecapGroup::new(part, 1, NEW_MOUNTING_H))
            });
            self.report(&key, result);
        }
    }

    /// A group's mounting inductance: typed, or computed from its geometry.
    fn mounting_editor(&mut self, ui: &mut Ui, i: usize, gi: usize, g: &DecapGroup, rail_name: &str) {
        let key = format!("rails[{i}].decaps[{gi}]");
        let l = ui.label("mounting");
        let (fields, doc) = (&mut self.view.fields, &mut Draft::new(&self.doc.board, &mut self.commands));
        let mkey = format!("{key}.mounting_h");
        let label = format!("mounting of group {} of {}", gi + 1, rail_name);
        if g.mounting.is_some() {
            // The file gives the mounting as geometry; the engine computes the inductance from it.
            let computed = self
                .view
                .results
                .get(i)
                .and_then(|r| r.analysis.groups.get(gi))
                .map(|g| g.mounting_h)
                .unwrap_or(g.mounting_h);
            ui.label(format!("{} from geometry", format(computed, Unit::Henry)))
                .on_hover_text("Computed from the pad, trace and via geometry in the board file");
            if ui.small_button("use a value").on_hover_text("Replace the geometry by this value").clicked() {
                let result = set_rail(doc, i, &mkey, label, |r| {
                    r.decaps[gi].mounting = None;
                    r.decaps[gi].mounting_h = computed;
                });
                match result {
                    Ok(()) => fields.forget(&mkey),
                    Err(reason) => fields.set_error(&mkey, String::new(), reason),
                }
            }
        } else {
            number_field(ui, fields, &mkey, l.id, g.mounting_h, Unit::Henry, 80.0, |v| {
                set_rail(doc, i, &mkey, label.clone(), |r| r.decaps[gi].mounting_h = v)
            });
            let from_geometry = ui.small_button("from geometry");
            let text = format!("mounting of group {} from geometry", gi + 1);
            from_geometry.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &text));
            if from_geometry.on_hover_text("Compute the inductance from pads, traces and vias").clicked() {
                let result = set_rail(doc, i, &mkey, label, |r| r.decaps[gi].mounting = Some(NEW_GEOMETRY));
                match result {
                    Ok(()) => fields.forget(&mkey),
                    Err(reason) => fields.set_error(&mkey, String::new(), reason),
                }
            }
        }
    }

    /// A group's count: drag it, type it (engineering notation, whole numbers), or step it with − and +. A drag
    /// is one undo step.
    fn count_editor(&mut self, ui: &mut Ui, i: usize, gi: usize, g: &DecapGroup, rail_name: &str) {
        let key = format!("rails[{i}].decaps[{gi}].count");
        let minus = ui.add_enabled(g.count > 0, egui::Button::new("−").small());
        let minus_label = format!("one fewer {}", g.part);
        minus.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, g.count > 0, &minus_label));

        let mut count = g.count;
        let parse_error: RefCell<Option<String>> = RefCell::new(None);
        let drag = egui::DragValue::new(&mut count).range(0..=100_000).speed(0.08).prefix("× ").custom_parser(|text| {
            let text = text.trim().trim_start_matches('×').trim();
            match crate::units::parse(text, Unit::None) {
                Ok(v) if v >= 0.0 && v.fract() == 0.0 && v <= 100_000.0 => Some(v),
                Ok(v) => {
                    *parse_error.borrow_mut() = Some(format!("a count is a whole number from 0 to 100000, not {v}"));
                    None
                }
                Err(e) => {
                    *parse_error.borrow_mut() = Some(e.reason);
                    None
                }
            }
        });
        let response = ui.add(drag).on_hover_text("Drag, or click and type a whole number");
        let count_label = format!("count of {}", g.part);
        response.widget_info(|| {
            let mut info = egui::WidgetInfo::drag_value(true, count as f64);
            info.label = Some(count_label.clone());
            info
        });
        let plus = ui.small_button("+");
        let plus_label = format!("one more {}", g.part);
        plus.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &plus_label));

        if let Some(reason) = parse_error.into_inner() {
            self.view.fields.set_error(&key, String::new(), reason);
        }
        if response.drag_started() {
            self.drag_fresh = true;
        }
        let mut target = None;
        let mut merge = false;
        if response.changed() && count != g.count {
            merge = response.dragged() && !self.drag_fresh;
            self.drag_fresh = false;
            target = Some(count);
        }
        if minus.clicked() && g.count > 0 {
            target = Some(g.count - 1);
        }
        if plus.clicked() {
            target = Some(g.count.saturating_add(1));
        }
        if let Some(c) = target {
            let label = format!("count of {} on {} to {c}", g.part, rail_name);
            let result = self
                .propose(Edit::SetCount { rail: i, group: gi, count: c }, label, merge, Some(&key))
                .map_err(|p| refusal_text(&key, &p));
            self.report(&key, result);
        }
    }

    /// Show an edit's refusal at its field, or clear the field's old message once it lands.
    pub(super) fn report(&mut self, key: &str, result: Result<(), String>) {
        match result {
            Ok(()) => self.view.fields.forget(key),
            Err(reason) => self.view.fields.set_error(key, String::new(), reason),
        }
    }
}

/// A refusal kept for a key that has no text field of its own (a checkbox, a button, a drag).
/// A group's mounting geometry, field by field (lengths in engineering notation, metres), with the engine's
/// breakdown of the loop inductance it gives: each term, its formula and source, the total, and warnings where the
/// geometry leaves a formula's range.
fn geometry_editor(
    ui: &mut Ui,
    fields: &mut Fields,
    doc: &mut Draft,
    i: usize,
    gi: usize,
    g: &MountingGeometry,
    fail: egui::Color32,
) {
    type Set = fn(&mut MountingGeometry, f64);
    let rows: [(&str, &str, f64, Set); 6] = [
        ("pad-to-via trace length", "trace_length_m", g.trace_length_m, |g, v| g.trace_length_m = v),
        ("trace width", "trace_width_m", g.trace_width_m, |g, v| g.trace_width_m = v),
        ("trace height over its plane", "trace_height_m", g.trace_height_m, |g, v| g.trace_height_m = v),
        ("via drill", "via_drill_m", g.via_drill_m, |g, v| g.via_drill_m = v),
        ("via length to the planes", "via_length_m", g.via_length_m, |g, v| g.via_length_m = v),
        ("power-to-ground via distance", "via_pitch_m", g.via_pitch_m, |g, v| g.via_pitch_m = v),
    ];
    let rail_name = doc.board.rails[i].name.clone();
    egui::Grid::new(("geometry", i, gi)).num_columns(2).spacing([10.0, 4.0]).show(ui, |ui| {
        for (label, field, value, set) in rows {
            let l = ui.label(label);
            let key = format!("rails[{i}].decaps[{gi}].mounting.{field}");
            number_field(ui, fields, &key, l.id, value, Unit::Metre, FIELD_W, |v| {
                set_rail(doc, i, &key, format!("{label} of group {} of {rail_name}", gi + 1), |r| {
                    if let Some(m) = &mut r.decaps[gi].mounting {
                        set(m, v)
                    }
                })
            });
            ui.end_row();
        }
        let l = ui.label("vias per pad");
        let key = format!("rails[{i}].decaps[{gi}].mounting.vias_per_pad");
        number_field(ui, fields, &key, l.id, g.vias_per_pad as f64, Unit::None, FIELD_W, |v| {
            if v.fract() != 0.0 || !(1.0..=64.0).contains(&v) {
                return Err(format!("vias per pad is a whole number from 1 to 64, not {v}"));
            }
            set_rail(doc, i, &key, format!("vias per pad of group {} of {rail_name}", gi + 1), |r| {
                if let Some(m) = &mut r.decaps[gi].mounting {
                    m.vias_per_pad = v as u32
                }
            })
        });
        ui.end_row();
    });
    let b = mounting_breakdown(g);
    egui::Frame::group(ui.style()).show(ui, |ui| {
        for t in &b.terms {
            let state = if t.in_total { "" } else { " (shown, not added)" };
            ui.label(format!("{}: {:.3} nH{state}", t.name, t.inductance_h * 1e9)).on_hover_text(t.source);
            ui.label(RichText::new(format!("{} ({})", t.formula, t.source)).small().weak());
        }
        ui.label(RichText::new(format!("mounting total {:.3} nH", b.total_h * 1e9)).strong());
        for w in &b.warnings {
            ui.label(RichText::new(format!("Warning: {w}")).small().color(fail));
        }
    });
}

/// The package between the board and the die, and the die's own capacitance. With a package the rail's verdict
/// is taken at the die.
fn package_editor(ui: &mut Ui, fields: &mut Fields, doc: &mut Draft, i: usize, rail: &Rail, fail: egui::Color32) {
    let text = "a package between the board and the die (series R-L)";
    toggle(ui, fields, doc, i, "package", text, rail.package.is_some(), fail, |r, on| {
        r.package = on.then_some(NEW_PACKAGE);
        // A die sits behind a package; without one there is nothing to hold it.
        r.die = if on { Some(r.die.unwrap_or(NEW_DIE)) } else { None };
    });
    let Some(p) = rail.package else { return };
    egui::Grid::new(("package-grid", i)).num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
        rail_number(ui, fields, doc, i, "package R", "package.r_ohm", p.r_ohm, Unit::Ohm, |r, v| {
            if let Some(p) = &mut r.package {
                p.r_ohm = v
            }
        });
        rail_number(ui, fields, doc, i, "package L", "package.l_h", p.l_h, Unit::Henry, |r, v| {
            if let Some(p) = &mut r.package {
                p.l_h = v
            }
        });
    });
    toggle(ui, fields, doc, i, "die", "on-die capacitance", rail.die.is_some(), fail, |r, on| {
        r.die = on.then_some(NEW_DIE)
    });
    if let Some(d) = rail.die {
        egui::Grid::new(("die-grid", i)).num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
            rail_number(ui, fields, doc, i, "die C", "die.capacitance_f", d.capacitance_f, Unit::Farad, |r, v| {
                if let Some(d) = &mut r.die {
                    d.capacitance_f = v
                }
            });
            rail_number(ui, fields, doc, i, "die ESR", "die.esr_ohm", d.esr_ohm, Unit::Ohm, |r, v| {
                if let Some(d) = &mut r.die {
                    d.esr_ohm = v
                }
            });
        });
    }
}

/// A checkbox that fits or takes out one optional input of the rail (`field`: source, plane, package, die)
/// through the history, with a refusal shown under it.
#[allow(clippy::too_many_arguments)]
fn toggle(
    ui: &mut Ui,
    fields: &mut Fields,
    doc: &mut Draft,
    i: usize,
    field: &str,
    text: &str,
    on: bool,
    fail: egui::Color32,
    change: impl FnOnce(&mut Rail, bool),
) {
    let key = format!("rails[{i}].{field}");
    let mut fitted = on;
    if ui.checkbox(&mut fitted, text).changed() {
        let words = if fitted { "add" } else { "remove" };
        let rail_name = doc.board.rails.get(i).map(|r| r.name.clone()).unwrap_or_default();
        if let Err(reason) = set_rail(doc, i, &key, format!("{words} {field} of {rail_name}"), |r| change(r, fitted)) {
            fields.set_error(&key, String::new(), reason);
        }
    }
    show_error(ui, fields, &key, fail);
}

fn show_error(ui: &mut Ui, fields: &Fields, key: &str, color: egui::Color32) {
    if let Some(reason) = fields.error(key) {
        ui.label(RichText::new(format!("Refused: {reason}")).small().color(color));
    }
}

fn loads_editor(ui: &mut Ui, fields: &mut Fields, doc: &mut Draft, i: usize, rail: &Rail, fail: egui::Color32) {
    ui.horizontal(|ui| {
        let l = ui.label("steps add up as");
        let mut combine = rail.combine;
        let combo = egui::ComboBox::from_id_salt(("combine", i))
            .selected_text(match combine {
                Combine::Sum => "sum (all at once)",
                Combine::Rss => "rss (uncorrelated)",
            })
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut combine, Combine::Sum, "sum (all at once, the worst case)");
                ui.selectable_value(&mut combine, Combine::Rss, "rss (uncorrelated loads, common practice)");
            });
        let _ = combo.response.labelled_by(l.id);
        if combine != rail.combine {
            let key = format!("rails[{i}].combine");
            let label = format!("steps of {} add up as {}", rail.name, combine.name());
            if let Err(reason) = set_rail(doc, i, &key, label, |r| r.combine = combine) {
                fields.set_error(&key, String::new(), reason);
            }
        }
    });
    let mut remove = None;
    egui::Grid::new(("loads-grid", i)).num_columns(4).spacing([6.0, 4.0]).show(ui, |ui| {
        let name_h = ui.weak("name");
        let step_h = ui.weak("ΔI");
        let rise_h = ui.weak("rise time");
        ui.label("");
        ui.end_row();
        for (li, load) in rail.loads.iter().enumerate() {
            let key = format!("rails[{i}].loads[{li}]");
            let nkey = format!("{key}.name");
            text_field(ui, fields, &nkey, name_h.id, &load.name, 130.0, |text| {
                let name = text.trim().to_string();
                set_rail(doc, i, &nkey, format!("rename load {} of {}", load.name, rail.name), |r| {
                    r.loads[li].name = name
                })
            });
            let skey = format!("{key}.step_a");
            number_field(ui, fields, &skey, step_h.id, load.step_a, Unit::Ampere, 70.0, |v| {
                set_rail(doc, i, &skey, format!("ΔI of {} on {}", load.name, rail.name), |r| r.loads[li].step_a = v)
            });
            let tkey = format!("{key}.rise_time_s");
            optional_number_field(ui, fields, &tkey, rise_h.id, load.rise_time_s, Unit::Second, 70.0, |v| {
                set_rail(doc, i, &tkey, format!("rise time of {} on {}", load.name, rail.name), |r| {
                    r.loads[li].rise_time_s = v
                })
            })
            .on_hover_text("10-90 % rise time; leave empty when not known");
            let b = ui.small_button("×").on_hover_text("Remove this load");
            let label = format!("remove load {}", load.name);
            b.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, rail.loads.len() > 1, &label));
            if b.clicked() {
                remove = Some(li);
            }
            ui.end_row();
        }
    });
    let key = format!("rails[{i}].loads");
    if let Some(li) = remove {
        let name = rail.loads[li].name.clone();
        let result = set_rail(doc, i, &key, format!("remove load {name} from {}", rail.name), |r| {
            r.loads.remove(li);
        });
        match result {
            Ok(()) => fields.forget(&key),
            Err(reason) => fields.set_error(&key, String::new(), reason),
        }
    }
    show_error(ui, fields, &key, fail);
    if ui.button("Add load").clicked() {
        let name =
            (1..).map(|n| format!("load {n}")).find(|n| !rail.loads.iter().any(|l| &l.name == n)).unwrap_or_default();
        let result = set_rail(doc, i, &key, format!("add {name} to {}", rail.name), |r| {
            r.loads.push(Load::new(name, 0.1, None))
        });
        match result {
            Ok(()) => fields.forget(&key),
            Err(reason) => fields.set_error(&key, String::new(), reason),
        }
    }
}
