//! The board map: a top view of the selected rail's plane pair to scale, with every load's pin field, the
//! regulator and every placed part. Parts are dragged to move them (Shift moves the whole group), added by
//! clicking in add mode and taken out from their menu; a click on a load shows its impedance on the plot. Every
//! change is one undo step through the window's one edit path, and the figures follow from the engine as for a
//! count drag. The plane's voltage at a chosen frequency can be laid under it as a colour field. A lumped rail is
//! placed from here on a plane pair the user describes.

mod draw;
mod geometry;
mod import;
mod place_form;

pub use geometry::{Item, Thing, Transform, items, moved, with_part_added, with_part_removed};

use super::app::App;
use super::commands::Command;
use super::history::Edit;
use super::status::Status;
use crate::analysis::placed::{PlaneField, plane_field, worst_load};
use crate::model::Rail;
use crate::units::{Unit, format, parse};
use egui::{RichText, Sense, Ui, Vec2};

/// Cells along the longer side of the plane's voltage field.
const FIELD_CELLS: usize = 72;

/// What a press on the map has hold of.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Grab {
    /// The thing dragged.
    thing: Thing,
    /// From the pointer to the thing's centre when it was picked up, m (the thing does not jump to the pointer).
    offset_m: [f64; 2],
    /// Shift was held: the part's whole group moves.
    whole_group: bool,
    /// No step of this drag has been applied yet (the first is a new undo step; the rest fold into it).
    fresh: bool,
}

/// The plane's voltage as last computed, with what it was computed for.
#[derive(Debug, Clone)]
struct FieldShown {
    /// The board's revision, the rail, the load and the frequency it belongs to.
    key: (u64, usize, usize, u64),
    /// The answer (`None`: the circuit could not be solved there).
    field: Option<PlaneField>,
}

/// The board map's state (per document: reset when another board comes in).
#[derive(Debug, Clone)]
pub struct MapState {
    /// The rail the view's zoom and pan belong to.
    rail: Option<usize>,
    /// Zoom about the map's centre (1: the plane fits).
    zoom: f32,
    /// Pan, points.
    pan: Vec2,
    grab: Option<Grab>,
    /// Lay the plane's voltage under the parts.
    pub field_on: bool,
    /// The field's frequency, Hz (`None`: the shown load's worst frequency).
    pub field_hz: Option<f64>,
    /// The frequency as typed.
    field_text: String,
    field: Option<FieldShown>,
    /// Add mode: a click on the plane adds a part of this group.
    pub add_group: Option<usize>,
    /// The form that places a lumped rail.
    place: place_form::PlaceForm,
    /// The import window (File ▸ Import the placement).
    pub import: import::ImportForm,
    /// The circuit a part's hover figures read, with the board revision, rail and corner it was built for.
    hover_circuit: Option<((u64, usize, crate::physics::Corner), crate::analysis::placed::PlacedCircuit)>,
    /// The transform the map was drawn with last frame (tests find things on screen through it).
    last_transform: Option<Transform>,
}

impl Default for MapState {
    fn default() -> MapState {
        MapState {
            rail: None,
            zoom: 1.0,
            pan: Vec2::ZERO,
            grab: None,
            field_on: false,
            field_hz: None,
            field_text: String::new(),
            field: None,
            add_group: None,
            place: place_form::PlaceForm::default(),
            import: Default::default(),
            hover_circuit: None,
            last_transform: None,
        }
    }
}

impl MapState {
    /// Set the field's frequency (a click on the plot, or typed), and show the field.
    pub fn set_field_hz(&mut self, f_hz: f64) {
        if f_hz.is_finite() && f_hz > 0.0 {
            self.field_hz = Some(f_hz);
            self.field_text = format(f_hz, Unit::Hertz);
            self.field_on = true;
        }
    }
}

impl App {
    /// Where a point of the plane (m) was drawn on the board map in the last frame, in points; `None` when the map
    /// was not drawn.
    pub fn map_point(&self, at_m: [f64; 2]) -> Option<egui::Pos2> {
        self.view.map.last_transform.map(|t| t.to_screen(at_m))
    }

    /// The board map of the selected rail (or, for a lumped rail, the form that places it).
    pub(super) fn board_map(&mut self, ui: &mut Ui) {
        let index = self.view.selected_rail;
        let Some(rail) = self.doc.board.rails.get(index).cloned() else {
            ui.label("No rail to show.");
            return;
        };
        if self.view.map.rail != Some(index) {
            self.view.map.rail = Some(index);
            self.view.map.zoom = 1.0;
            self.view.map.pan = Vec2::ZERO;
            self.view.map.grab = None;
            self.view.map.add_group = None;
        }
        let Some(placement) = rail.placement.clone() else {
            self.place_form(ui, index, &rail);
            return;
        };
        let result = self.view.results.get(index).cloned();
        let shown_load = self
            .view
            .results
            .look()
            .load
            .filter(|&k| k < rail.loads.len())
            .or_else(|| result.as_ref().and_then(|r| worst_load(&r.check.loads)))
            .unwrap_or(0);
        self.map_toolbar(ui, &rail, result.as_deref().map(|r| r.analysis.worst_hz));
        let field =
            if self.view.map.field_on { self.field_for(index, &rail, shown_load, result.as_deref()) } else { None };

        let (response, painter) = ui.allocate_painter(ui.available_size(), Sense::click_and_drag());
        let rect = response.rect;
        // With the field shown, its scale takes a strip on the right.
        let plane_room = if field.is_some() { rect.with_max_x(rect.max.x - 84.0) } else { rect };
        // Zoom with the wheel about the pointer; pan with the secondary or middle button.
        if let Some(pointer) = response.hover_pos() {
            let scroll = ui.input(|i| i.smooth_scroll_delta.y);
            let zoom_by = ui.input(|i| i.zoom_delta()) * (scroll / 400.0).exp();
            if (zoom_by - 1.0).abs() > 1e-4 {
                let new_zoom = (self.view.map.zoom * zoom_by).clamp(0.5, 40.0);
                let k = new_zoom / self.view.map.zoom;
                // Keep the point under the pointer where it is.
                let from_centre = pointer - plane_room.center() - self.view.map.pan;
                self.view.map.pan -= from_centre * (k - 1.0);
                self.view.map.zoom = new_zoom;
            }
        }
        if response.dragged_by(egui::PointerButton::Middle) {
            self.view.map.pan += response.drag_delta();
        }
        let t = Transform::fit(plane_room, placement.plane_pair.size_m, self.view.map.zoom, self.view.map.pan);
        let items = items(&rail);
        let hovered = response.hover_pos().and_then(|p| geometry::hit(&items, &t, p));

        self.map_interact(ui, &response, &t, &items, index, &rail);

        let visuals = ui.visuals().clone();
        self.view.map.last_transform = Some(t);
        let selected = match self.view.map.grab {
            Some(g) => Some(g.thing),
            None => hovered.map(|i| items[i].thing),
        };
        draw::map(
            &painter,
            rect,
            &t,
            &draw::Scene {
                rail: &rail,
                items: &items,
                shown_load,
                highlighted: selected,
                field: field.as_ref(),
                visuals: &visuals,
            },
        );
        if let (Some(i), None) = (hovered, self.view.map.grab) {
            let words = self.hover_words(&rail, &items[i], shown_load, result.as_deref());
            response.clone().on_hover_ui_at_pointer(|ui| {
                ui.label(words);
            });
        }
        if let Some(i) = hovered
            && let Thing::Part { .. } = items[i].thing
        {
            let thing = items[i].thing;
            let label = items[i].label.clone();
            response.context_menu(|ui| {
                if ui.button(format!("Take out {label}")).clicked() {
                    self.take_out(index, &rail, thing, &label);
                    ui.close();
                }
            });
        }
    }

    /// The row above the map: the field and its frequency, add mode, fit, and how to use the map.
    fn map_toolbar(&mut self, ui: &mut Ui, rail: &Rail, worst_hz: Option<f64>) {
        ui.horizontal_wrapped(|ui| {
            ui.checkbox(&mut self.view.map.field_on, "plane voltage at")
                .on_hover_text("Colour the plane by the voltage across it at this frequency when the shown load draws its step (|Z| × ΔI)");
            let hint = worst_hz.map(|f| format(f, Unit::Hertz)).unwrap_or_default();
            let edit = ui.add(
                egui::TextEdit::singleline(&mut self.view.map.field_text)
                    .desired_width(96.0)
                    .hint_text(format!("{hint} (worst)")),
            );
            if edit.lost_focus() || (edit.changed() && self.view.map.field_text.trim().is_empty()) {
                let text = self.view.map.field_text.trim().to_string();
                if text.is_empty() {
                    self.view.map.field_hz = None;
                } else {
                    match parse(&text, Unit::Hertz) {
                        Ok(f) if f.is_finite() && f > 0.0 => self.view.map.set_field_hz(f),
                        Ok(_) => self.status = Some(Status::error("The field's frequency must be above 0 Hz.")),
                        Err(e) => self.status = Some(Status::error(format!("The field's frequency: {e}"))),
                    }
                }
            }
            ui.label(RichText::new("(or click the plot)").weak());
            ui.separator();
            let mut adding = self.view.map.add_group.is_some();
            if ui.toggle_value(&mut adding, "Add parts").on_hover_text("Each click on the plane adds one part of the chosen group").changed() {
                self.view.map.add_group = adding.then_some(self.view.map.add_group.unwrap_or(0));
            }
            if let Some(g) = self.view.map.add_group.as_mut() {
                let name = |k: usize| rail.decaps.get(k).map_or_else(String::new, |d| d.part.clone());
                egui::ComboBox::from_id_salt("map-add-group").selected_text(name(*g)).show_ui(ui, |ui| {
                    for k in 0..rail.decaps.len() {
                        ui.selectable_value(g, k, name(k));
                    }
                });
            }
            ui.separator();
            if ui.button("Fit").on_hover_text("Show the whole plane").clicked() {
                self.view.map.zoom = 1.0;
                self.view.map.pan = Vec2::ZERO;
            }
            ui.label(RichText::new("how to use").weak().underline()).on_hover_text(
                "Drag a part to move it (Shift: its whole group); right-click it to take it out; click a load to \
                 show its impedance on the plot; hover a part for what the planes add between it and that load; \
                 the wheel zooms, the middle button pans.",
            );
        });
        ui.horizontal_wrapped(|ui| {
            // The legend: each group's colour (and shape past eight groups), then the other things.
            let dark = ui.visuals().dark_mode;
            for (g, d) in rail.decaps.iter().enumerate() {
                // A swatch and its group's name stay on one line.
                ui.horizontal(|ui| {
                    let (r, _) = ui.allocate_exact_size(egui::vec2(11.0, 11.0), Sense::hover());
                    draw::swatch(ui.painter(), r, g, dark);
                    ui.label(format!("{} ×{}", d.part, d.count));
                });
            }
            ui.label(RichText::new("· outlined: load pins (heavier: the load on the plot) · grey: regulator ·").weak());
            ui.label(RichText::new("what a position means").weak().underline()).on_hover_text(crate::notes::POSITIONS);
        });
    }

    /// The field for the shown load at the chosen frequency, computed when the board, the load or the frequency
    /// changes (kept as it was while a part is being dragged: it follows when the part is let go).
    fn field_for(
        &mut self,
        index: usize,
        rail: &Rail,
        load: usize,
        result: Option<&super::results::RailResult>,
    ) -> Option<PlaneField> {
        let f = self.view.map.field_hz.or_else(|| result.map(|r| r.analysis.worst_hz))?;
        let key = (self.doc.history.revision(), index, load, f.to_bits());
        let stale = self.view.map.field.as_ref().is_none_or(|s| s.key != key);
        if stale && self.view.map.grab.is_none() {
            let corner = result.map_or(crate::physics::Corner::Typical, |r| r.analysis.corner);
            let field = plane_field(&self.doc.board, rail, load, f, corner, FIELD_CELLS);
            self.view.map.field = Some(FieldShown { key, field });
        }
        self.view.map.field.as_ref().and_then(|s| s.field.clone())
    }

    /// Presses, drags and clicks on the map.
    fn map_interact(
        &mut self,
        ui: &Ui,
        response: &egui::Response,
        t: &Transform,
        items: &[Item],
        index: usize,
        rail: &Rail,
    ) {
        let pointer = response.interact_pointer_pos();
        if response.drag_started_by(egui::PointerButton::Primary)
            && let Some(p) = pointer
        {
            // The press is where the drag started, not where the pointer is now.
            let press = ui.input(|i| i.pointer.press_origin()).unwrap_or(p);
            if let Some(i) = geometry::hit(items, t, press) {
                let at = t.to_metres(press);
                let item = &items[i];
                self.view.map.grab = Some(Grab {
                    thing: item.thing,
                    offset_m: [item.at_m[0] - at[0], item.at_m[1] - at[1]],
                    whole_group: ui.input(|i| i.modifiers.shift),
                    fresh: true,
                });
            }
        }
        if let (Some(mut grab), Some(p)) = (self.view.map.grab, pointer)
            && response.dragged_by(egui::PointerButton::Primary)
        {
            let at = t.to_metres(p);
            let to = [at[0] + grab.offset_m[0], at[1] + grab.offset_m[1]];
            if let Some(next) = moved(rail, grab.thing, to, grab.whole_group)
                && next != *rail
            {
                let what = thing_words(rail, grab.thing, grab.whole_group);
                let label = format!("move {what}");
                match self.propose(Edit::SetRail { rail: index, value: Box::new(next) }, label, !grab.fresh, None) {
                    Ok(()) => grab.fresh = false,
                    Err(problems) => {
                        let why = problems.first().map_or_else(String::new, |p| p.reason.clone());
                        self.status = Some(Status::error(format!("Cannot move {what} there: {why}")));
                    }
                }
                self.view.map.grab = Some(grab);
            }
        }
        if response.drag_stopped()
            && let Some(grab) = self.view.map.grab.take()
            && !grab.fresh
            && let Some(now) = self.doc.board.rails.get(index)
        {
            let what = thing_words(now, grab.thing, grab.whole_group);
            let at = items_after(now, grab.thing).map(|m| format!(" to {}", at_words(m))).unwrap_or_default();
            self.status = Some(Status::info(format!("Moved {what}{at}.")));
        }
        if response.clicked()
            && let Some(p) = pointer
        {
            match (geometry::hit(items, t, p).map(|i| items[i].thing), self.view.map.add_group) {
                (_, Some(group)) => self.add_part(index, rail, group, t.to_metres(p)),
                (Some(Thing::Load(k)), None) => {
                    let mut look = self.view.results.look();
                    look.load = Some(k);
                    self.view.results.set_look(look);
                    self.status = Some(Status::info(format!("The plot shows {}.", rail.loads[k].name)));
                }
                _ => {}
            }
        }
    }

    fn add_part(&mut self, index: usize, rail: &Rail, group: usize, at_m: [f64; 2]) {
        let Some((next, reference)) = with_part_added(rail, group, at_m) else { return };
        let part = &rail.decaps[group].part;
        let label = format!("add {reference} ({part})");
        match self.propose(Edit::SetRail { rail: index, value: Box::new(next) }, label, false, None) {
            Ok(()) => {
                self.ask(Command::Say(Status::info(format!("Added {reference} ({part}) at {}.", at_words(at_m)))))
            }
            Err(problems) => {
                let why = problems.first().map_or_else(String::new, |p| p.reason.clone());
                self.status = Some(Status::error(format!("Cannot add a part there: {why}")));
            }
        }
    }

    fn take_out(&mut self, index: usize, rail: &Rail, thing: Thing, label: &str) {
        let Some(next) = with_part_removed(rail, thing) else {
            self.status = Some(Status::error(format!("{label} has no part left to take out.")));
            return;
        };
        match self.propose(
            Edit::SetRail { rail: index, value: Box::new(next) },
            format!("take out {label}"),
            false,
            None,
        ) {
            Ok(()) => self.ask(Command::Say(Status::info(format!("Took out {label}.")))),
            Err(problems) => {
                let why = problems.first().map_or_else(String::new, |p| p.reason.clone());
                self.status = Some(Status::error(format!("Cannot take out {label}: {why}")));
            }
        }
    }

    /// What the tooltip says about an item: what it is, where, and for a part what the planes add between it and
    /// the shown load.
    fn hover_words(
        &mut self,
        rail: &Rail,
        item: &Item,
        shown_load: usize,
        result: Option<&super::results::RailResult>,
    ) -> String {
        let at = at_words(item.at_m);
        match item.thing {
            Thing::Source => format!("The regulator, at {at}"),
            Thing::Load(k) => {
                let load = &rail.loads[k];
                let verdict = result
                    .and_then(|r| r.check.loads.get(k))
                    .map(|v| {
                        format!(
                            "\nworst effective |Z| {} at {} ({})",
                            format(v.worst_ohm, Unit::Ohm),
                            format(v.worst_hz, Unit::Hertz),
                            if v.meets_target { "meets target" } else { "misses target" }
                        )
                    })
                    .unwrap_or_default();
                format!(
                    "{}: step {}, pins {} × {} at {at}{verdict}\nClick to show its impedance on the plot.",
                    load.name,
                    format(load.step_a, Unit::Ampere),
                    crate::units::format_length(item.size_m[0]),
                    crate::units::format_length(item.size_m[1]),
                )
            }
            Thing::Part { group, .. } => {
                let g = &rail.decaps[group];
                let mut words = format!("{} ({} ×{} in its group) at {at}", item.label, g.part, g.count);
                if let Some(path) = self.part_path_to(rail, item, shown_load, result) {
                    words.push_str(&format!(
                        "\nto {}: the planes add {} (its mounting: {}); it keeps the path under target below {}",
                        rail.loads.get(shown_load).map_or("", |l| l.name.as_str()),
                        format(path.plane_h, Unit::Henry),
                        format(path.mounting_h, Unit::Henry),
                        format(path.helps_below_hz, Unit::Hertz),
                    ));
                }
                words
            }
        }
    }

    /// The engine's path from a part to a load (the same figures as the far-part finding).
    fn part_path_to(
        &mut self,
        rail: &Rail,
        item: &Item,
        load: usize,
        result: Option<&super::results::RailResult>,
    ) -> Option<crate::analysis::placed::PartPath> {
        let Thing::Part { group, spot } = item.thing else { return None };
        let r = result?;
        // Preparing the plane costs more than a frame: the circuit is kept while the board stays as it is.
        let key = (self.doc.history.revision(), self.view.selected_rail, r.analysis.corner);
        if self.view.map.hover_circuit.as_ref().is_none_or(|(k, _)| *k != key) {
            let circuit = crate::analysis::placed::PlacedCircuit::of_rail(
                &self.doc.board,
                rail,
                r.analysis.corner,
                r.analysis.band_hz[1],
            )?;
            self.view.map.hover_circuit = Some((key, circuit));
        }
        let circuit = &self.view.map.hover_circuit.as_ref()?.1;
        let reference = spot.map(|_| item.label.clone());
        let i = circuit.branches.iter().position(|b| {
            b.owner == crate::analysis::placed::PortOwner::Group { group, reference: reference.clone() }
        })?;
        crate::analysis::placed::part_path(&self.doc.board, rail, circuit, i, load, r.analysis.target_ohm)
    }
}

/// A thing in words: "C12", "the c100n group", "U1", "the regulator".
fn thing_words(rail: &Rail, thing: Thing, whole_group: bool) -> String {
    match thing {
        Thing::Source => "the regulator".into(),
        Thing::Load(k) => rail.loads.get(k).map_or_else(|| "a load".into(), |l| l.name.clone()),
        Thing::Part { group, spot } => {
            let part = rail.decaps.get(group).map_or("", |g| g.part.as_str());
            match (spot, whole_group) {
                (Some(i), false) => items(rail)
                    .into_iter()
                    .find(|it| it.thing == Thing::Part { group, spot: Some(i) })
                    .map_or_else(|| format!("a part of {part}"), |it| it.label),
                _ => format!("the {part} group"),
            }
        }
    }
}

/// Where a thing sits on `rail` now, m.
fn items_after(rail: &Rail, thing: Thing) -> Option<[f64; 2]> {
    items(rail).into_iter().find(|it| it.thing == thing).map(|it| it.at_m)
}

/// A position in words, "(12.0 mm, 8.50 mm)".
fn at_words(at_m: [f64; 2]) -> String {
    format!("({}, {})", crate::units::format_length(at_m[0]), crate::units::format_length(at_m[1]))
}
