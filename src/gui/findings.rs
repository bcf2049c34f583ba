//! The findings: for the selected rail or for the whole board, in the engine's own words with its hints. Clicking
//! one marks its frequency range on the plot. Beside them, the check's cautions about the parts (rating,
//! polarity, measurement bias), which no impedance curve shows; a part rated below its rail fails the rail.

use super::app::{App, FindingsTab};
use super::theme::{self, Palette};
use crate::analysis::{Caution, Finding, Severity};
use egui::{RichText, Ui};

fn finding_row(
    ui: &mut Ui,
    id: egui::Id,
    scroll_into_view: bool,
    pal: &Palette,
    finding: &Finding,
    selected: bool,
    prefix: Option<&str>,
) -> bool {
    let (mark, color) = match finding.severity {
        Severity::Fail => ("×", pal.fail),
        Severity::Note => ("•", pal.note),
    };
    let fill = if selected { ui.visuals().selection.bg_fill.gamma_multiply(0.4) } else { egui::Color32::TRANSPARENT };
    let frame = egui::Frame::new().fill(fill).corner_radius(4.0).inner_margin(egui::Margin::symmetric(6, 3));
    let shown = frame.show(ui, |ui| {
        ui.set_width(ui.available_width());
        ui.horizontal_top(|ui| {
            ui.label(RichText::new(mark).strong().color(color));
            ui.vertical(|ui| {
                let text = match prefix {
                    Some(p) => format!("{p}: {}", finding.text),
                    None => finding.text.clone(),
                };
                ui.label(RichText::new(text).color(if finding.severity == Severity::Fail {
                    ui.visuals().strong_text_color()
                } else {
                    ui.visuals().text_color()
                }));
                // The engine's hint is a sentence of its own (an action, or why a note matters): shown as written,
                // never behind a "Try:" that would not fit a note's hint.
                ui.label(RichText::new(&finding.hint).weak());
            });
        });
    });
    let response = ui.interact(shown.response.rect, id, egui::Sense::click());
    if selected && scroll_into_view {
        response.scroll_to_me(Some(egui::Align::Center));
    }
    response.on_hover_text("Click to mark this on the plot; click again to clear").clicked()
}

impl App {
    pub(super) fn findings_panel(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let rail_count = self.view.results.get(self.view.selected_rail).map_or(0, |r| r.findings.len());
        let board_count: usize =
            (0..self.doc.board.rails.len()).map(|i| self.view.results.get(i).map_or(0, |r| r.findings.len())).sum();
        // Every rail's cautions, from its check: (rail, caution).
        let cautions: Vec<(usize, Caution)> = (0..self.doc.board.rails.len())
            .flat_map(|r| {
                self.view
                    .results
                    .get(r)
                    .map(|res| res.check.cautions.clone())
                    .unwrap_or_default()
                    .into_iter()
                    .map(move |c| (r, c))
            })
            .collect();
        ui.horizontal(|ui| {
            ui.selectable_value(
                &mut self.findings_tab,
                FindingsTab::Rail,
                format!("Findings for this rail ({rail_count})"),
            );
            ui.selectable_value(
                &mut self.findings_tab,
                FindingsTab::Board,
                format!("Whole board ({board_count}, {} cautions)", cautions.len()),
            );
        });
        ui.separator();
        let mut clicked = None;
        egui::ScrollArea::vertical().id_salt("findings-scroll").auto_shrink([false, false]).show(ui, |ui| {
            match self.findings_tab {
                FindingsTab::Rail => {
                    let Some(result) = self.view.results.get(self.view.selected_rail).cloned() else { return };
                    if result.findings.is_empty() {
                        let words = if result.check.passes {
                            "Nothing to look at: the rail meets its target with no anti-resonance inside the band."
                        } else {
                            "The rail misses its target; see the plot."
                        };
                        ui.label(words);
                    }
                    for (i, f) in result.findings.iter().enumerate() {
                        let selected = self.view.selected_finding == Some((self.view.selected_rail, i));
                        if finding_row(
                            ui,
                            egui::Id::unique(("finding", self.view.selected_rail, i)),
                            self.view.scroll_to_finding,
                            &pal,
                            f,
                            selected,
                            None,
                        ) {
                            clicked = Some((self.view.selected_rail, i));
                        }
                    }
                    // Failing cautions are among the findings above; the others are reminders.
                    for (_, c) in cautions.iter().filter(|(r, c)| *r == self.view.selected_rail && !c.fails) {
                        ui.label(RichText::new(format!("Caution: {}", c.text)).color(pal.note));
                    }
                }
                FindingsTab::Board => {
                    for r in 0..self.doc.board.rails.len() {
                        let Some(result) = self.view.results.get(r).cloned() else { continue };
                        let name = self.doc.board.rails[r].name.clone();
                        let (fails, notes) = self.finding_counts(r);
                        let color = if result.check.passes { pal.ok } else { pal.fail };
                        ui.label(
                            RichText::new(format!("{name}: {} ({fails} failing, {notes} notes)", result.check.word()))
                                .strong()
                                .color(color),
                        );
                        for (i, f) in result.findings.iter().enumerate() {
                            let selected = self.view.selected_finding == Some((r, i));
                            if finding_row(
                                ui,
                                egui::Id::unique(("board-finding", r, i)),
                                self.view.scroll_to_finding,
                                &pal,
                                f,
                                selected,
                                Some(&name),
                            ) {
                                clicked = Some((r, i));
                            }
                        }
                    }
                    if !cautions.is_empty() {
                        ui.add_space(6.0);
                        ui.label(RichText::new("Cautions").strong());
                        for (_, c) in &cautions {
                            ui.label(RichText::new(format!("Caution: {}", c.text)).color(if c.fails {
                                pal.fail
                            } else {
                                pal.note
                            }));
                        }
                    }
                }
            }
        });
        self.view.scroll_to_finding = false;
        if let Some((r, i)) = clicked {
            self.toggle_finding(r, i);
        }
    }
}
