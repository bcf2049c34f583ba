//! The findings: for the selected rail or for the whole board, in the engine's own words with its hints. Clicking
//! one marks its frequency range on the plot. The board page also lists the cautions about the parts' ratings and
//! polarity, which no impedance curve shows.

use super::app::{App, FindingsTab};
use super::theme::{self, Palette};
use crate::analysis::{Finding, Severity};
use crate::model::Board;
use crate::units::{Unit, format};
use egui::{RichText, Ui};

/// A caution about a part as fitted on a rail: rating or polarity.
#[derive(Debug, Clone, PartialEq)]
pub struct Caution {
    /// Rail index.
    pub rail: usize,
    /// Group index.
    pub group: usize,
    /// True when the part is rated below the rail's voltage (it will fail), false for a reminder.
    pub serious: bool,
    /// The caution in plain words.
    pub text: String,
}

/// The cautions for every group of the board: a rating below the rail voltage, a rating with little headroom
/// (common practice keeps a part well under its rating; ceramic parts also lose capacitance under DC bias), and
/// polarised kinds.
pub fn cautions(board: &Board) -> Vec<Caution> {
    let mut out = Vec::new();
    for (ri, rail) in board.rails.iter().enumerate() {
        for (gi, g) in rail.decaps.iter().enumerate() {
            let Some(part) = board.part(&g.part) else { continue };
            if let Some(rated) = part.rated_voltage_v {
                let v = rail.voltage_v;
                if rated < v {
                    out.push(Caution {
                        rail: ri,
                        group: gi,
                        serious: true,
                        text: format!(
                            "{} is rated {} but sits on {} at {}: it is over its rating.",
                            part.id,
                            format(rated, Unit::Volt),
                            rail.name,
                            format(v, Unit::Volt)
                        ),
                    });
                } else if v > 0.5 * rated {
                    out.push(Caution {
                        rail: ri,
                        group: gi,
                        serious: false,
                        text: format!(
                            "{} is rated {} on {} at {}: little headroom. Derate voltage as the part's data says \
                             (common practice keeps well under the rating); a ceramic part also loses capacitance \
                             under DC bias.",
                            part.id,
                            format(rated, Unit::Volt),
                            rail.name,
                            format(v, Unit::Volt)
                        ),
                    });
                }
            }
            if part.kind.is_polarised() {
                out.push(Caution {
                    rail: ri,
                    group: gi,
                    serious: false,
                    text: format!(
                        "{} is {} and polarised: fit it with the right DC direction; reversed, it can fail \
                         violently.",
                        part.id,
                        part.kind.name()
                    ),
                });
            }
        }
    }
    out
}

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
                ui.label(RichText::new(format!("Try: {}", finding.hint)).weak());
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
        let rail_count = self.results.get(self.selected_rail).map_or(0, |r| r.findings.len());
        let board_count: usize =
            (0..self.doc.board.rails.len()).map(|i| self.results.get(i).map_or(0, |r| r.findings.len())).sum();
        let cautions = cautions(&self.doc.board);
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
                    let Some(result) = self.results.get(self.selected_rail).cloned() else { return };
                    if result.findings.is_empty() {
                        let words = if result.analysis.meets_target {
                            "Nothing to look at: the rail meets its target with no anti-resonance inside the band."
                        } else {
                            "The rail misses its target; see the plot."
                        };
                        ui.label(words);
                    }
                    for (i, f) in result.findings.iter().enumerate() {
                        let selected = self.selected_finding == Some((self.selected_rail, i));
                        if finding_row(
                            ui,
                            egui::Id::unique(("finding", self.selected_rail, i)),
                            self.scroll_to_finding,
                            &pal,
                            f,
                            selected,
                            None,
                        ) {
                            clicked = Some((self.selected_rail, i));
                        }
                    }
                    for c in cautions.iter().filter(|c| c.rail == self.selected_rail) {
                        ui.label(RichText::new(format!("Caution: {}", c.text)).color(if c.serious {
                            pal.fail
                        } else {
                            pal.note
                        }));
                    }
                }
                FindingsTab::Board => {
                    for r in 0..self.doc.board.rails.len() {
                        let Some(result) = self.results.get(r).cloned() else { continue };
                        let name = self.doc.board.rails[r].name.clone();
                        let (fails, notes) = self.finding_counts(r);
                        let (word, color) =
                            if result.check().meets_target { ("meets", pal.ok) } else { ("misses", pal.fail) };
                        ui.label(
                            RichText::new(format!("{name}: {word} target ({fails} above target, {notes} notes)"))
                                .strong()
                                .color(color),
                        );
                        for (i, f) in result.findings.iter().enumerate() {
                            let selected = self.selected_finding == Some((r, i));
                            if finding_row(
                                ui,
                                egui::Id::unique(("board-finding", r, i)),
                                self.scroll_to_finding,
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
                        for c in &cautions {
                            ui.label(RichText::new(format!("Caution: {}", c.text)).color(if c.serious {
                                pal.fail
                            } else {
                                pal.note
                            }));
                        }
                    }
                }
            }
        });
        self.scroll_to_finding = false;
        if let Some((r, i)) = clicked {
            self.toggle_finding(r, i);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ratings_and_polarity_are_cautioned() {
        let mut board = crate::samples::default_board().unwrap();
        let c = cautions(&board);
        // The polymer bulk part is polarised, and 6.3 V parts have headroom on a 0.85 V rail.
        assert!(c.iter().any(|c| c.text.contains("polarised")));
        assert!(!c.iter().any(|c| c.serious));
        let i = board.parts.iter().position(|p| p.id == "mlcc-10u-0603").unwrap();
        board.parts[i].rated_voltage_v = Some(2.5);
        assert!(cautions(&board).iter().any(|c| c.serious && c.text.contains("V3V3_IO")));
    }
}
