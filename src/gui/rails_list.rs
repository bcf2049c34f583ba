//! The board at a glance: every rail with its verdict, margin and worst frequency. Selecting a rail shows it.

use super::app::App;
use super::commands::Command;
use super::history::Edit;
use super::status::Status;
use super::theme;
use crate::units::{Unit, format};
use egui::{RichText, Ui};

impl App {
    pub(super) fn rails_list(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        ui.add_space(4.0);
        ui.label(RichText::new(&self.doc.board.name).heading());
        let total = self.doc.board.rails.len();
        let meeting = (0..total).filter(|&i| self.view.results.get(i).is_some_and(|r| r.check.passes)).count();
        let summary = format!("{meeting} of {total} rails pass");
        ui.label(RichText::new(summary).strong().color(if meeting == total { pal.ok } else { pal.fail }));
        ui.separator();

        egui::ScrollArea::vertical()
            .id_salt("rails-scroll")
            .auto_shrink([false, true])
            .max_height(ui.available_height() - 40.0)
            .show(ui, |ui| {
                for i in 0..total {
                    self.rail_card(ui, i, &pal);
                }
            });

        ui.separator();
        ui.horizontal_wrapped(|ui| {
            if ui.button("Add rail").on_hover_text("Add a new rail with round starting values").clicked() {
                self.add_rail();
            }
            if ui.button("Copy rail").on_hover_text("Add a copy of the selected rail").clicked() {
                self.copy_rail();
            }
            let can_remove = total > 1;
            if ui
                .add_enabled(can_remove, egui::Button::new("Remove rail"))
                .on_hover_text("Remove the selected rail (undo brings it back)")
                .clicked()
            {
                let name = self.doc.board.rails[self.view.selected_rail].name.clone();
                let at = self.view.selected_rail;
                if let Err(p) = self.propose(Edit::RemoveRail { at }, format!("remove rail {name}"), false, None) {
                    self.status = Some(Status::error(super::number_field::refusal_text("rails", &p)));
                }
            }
        });
    }

    fn rail_card(&mut self, ui: &mut Ui, i: usize, pal: &theme::Palette) {
        let rail = &self.doc.board.rails[i];
        let selected = i == self.view.selected_rail;
        let result = self.view.results.get(i).cloned();
        let frame = egui::Frame::group(ui.style())
            .fill(if selected { ui.visuals().selection.bg_fill.gamma_multiply(0.35) } else { ui.visuals().panel_fill })
            .inner_margin(egui::Margin::symmetric(8, 5));
        let name = rail.name.clone();
        let rail_v = rail.voltage_v;
        let volts = format(rail_v, Unit::Volt);
        let card = frame.show(ui, |ui| {
            ui.set_width(ui.available_width());
            let name_response = ui
                .horizontal(|ui| {
                    let name_response = ui.selectable_label(selected, RichText::new(&name).strong());
                    ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| match &result {
                        Some(r) => {
                            let color = if r.check.passes { pal.ok } else { pal.fail };
                            ui.label(RichText::new(r.check.word()).strong().color(color));
                        }
                        None => {
                            ui.label(RichText::new("not analysed").color(pal.note));
                        }
                    });
                    name_response
                })
                .inner;
            if let Some(r) = &result {
                // The card always gives the check's verdict (at the die when the rail has a package, typical
                // corner), whatever view the plot shows.
                let a = r.verdict();
                // The voltage leads the small line: beside a long name on the first it ran into the verdict word.
                let text = format!(
                    "{volts} · margin {:+.1} dB · worst at {} · {}",
                    a.margin_db,
                    format(a.worst_hz, Unit::Hertz),
                    a.corner.name()
                );
                let color = if a.meets_target { ui.visuals().weak_text_color() } else { pal.fail };
                ui.label(RichText::new(text).small().color(color));
                // A part rated below the rail fails it whatever the impedance: say so on the card.
                for c in r.check.failing_cautions() {
                    ui.label(
                        RichText::new(format!("{} rated below {}", c.part, format(rail_v, Unit::Volt)))
                            .small()
                            .strong()
                            .color(pal.fail),
                    );
                }
            }
            if result.is_none() {
                ui.label(RichText::new(&volts).small().weak());
            }
            name_response
        });
        let mut clicked = card.inner.clicked();
        // The whole card selects the rail, not only its name.
        let card_click = ui.interact(card.response.rect, egui::Id::unique(("rail-card", i)), egui::Sense::click());
        clicked |= card_click.clicked();
        if let Some(r) = &result {
            let a = r.verdict();
            card_click.on_hover_text(format!(
                "target {}, worst |Z| {} at {}",
                format(a.target_ohm, Unit::Ohm),
                format(a.worst_ohm, Unit::Ohm),
                format(a.worst_hz, Unit::Hertz)
            ));
        }
        if clicked && self.view.selected_rail != i {
            self.view.selected_rail = i;
            self.view.selected_finding = None;
        }
    }

    fn add_rail(&mut self) {
        let mut n = self.doc.board.rails.len() + 1;
        while self.doc.board.rail(&format!("RAIL{n}")).is_some() {
            n += 1;
        }
        let name = format!("RAIL{n}");
        let at = self.doc.board.rails.len();
        let rail = super::app::new_rail(&name);
        match self.propose(Edit::AddRail { at, value: Box::new(rail) }, format!("add rail {name}"), false, None) {
            // The new rail is selected once it is there.
            Ok(()) => self.ask(Command::SelectRail(at)),
            Err(p) => self.status = Some(Status::error(super::number_field::refusal_text("rails", &p))),
        }
    }

    fn copy_rail(&mut self) {
        let Some(rail) = self.doc.board.rails.get(self.view.selected_rail) else { return };
        let mut copy = rail.clone();
        let mut n = 2;
        copy.name = format!("{}_{n}", rail.name);
        while self.doc.board.rail(&copy.name).is_some() {
            n += 1;
            copy.name = format!("{}_{n}", rail.name);
        }
        let at = self.view.selected_rail + 1;
        let label = format!("copy rail {} as {}", rail.name, copy.name);
        match self.propose(Edit::AddRail { at, value: Box::new(copy) }, label, false, None) {
            // The new rail is selected once it is there.
            Ok(()) => self.ask(Command::SelectRail(at)),
            Err(p) => self.status = Some(Status::error(super::number_field::refusal_text("rails", &p))),
        }
    }
}
