//! The selected rail's voltage after a load step: the waveform against the allowed band, its minimum, the
//! figures, and on request the worst-case on/off load pattern and the voltage it gives.
//!
//! Everything drawn comes from `analysis::droop` and `analysis::pattern_response` through [`super::results`]; the
//! droop is computed again only when the rail's inputs change, so it follows a count drag one step at a time.

use super::app::App;
use super::results::{DroopResult, droop_options};
use super::theme;
use crate::analysis::{Droop, PatternResponse, View, pattern_response};
use crate::units::{Unit, format, format_sig};
use egui::{RichText, Ui};
use egui_plot::{GridMark, HLine, HoverPosition, Line, LineStyle, MarkerShape, Plot, PlotPoints, Points, Polygon};
use std::ops::RangeInclusive;
use std::sync::Arc;

/// The worst-case pattern's response, kept with the droop it was built from.
#[derive(Debug, Clone)]
pub struct PatternView {
    /// The droop whose pattern it is (compared by identity, so a new droop computes a new response).
    pub of: Arc<DroopResult>,
    /// The response, or why it could not be computed.
    pub response: Result<PatternResponse, String>,
}

/// The figures of a droop in words, as the window shows them, one line each.
pub fn droop_lines(d: &Droop) -> Vec<String> {
    let mut lines = vec![
        format!("droop {}", format(d.droop_v, Unit::Volt)),
        format!("lowest {} at {}", format(d.min_v, Unit::Volt), format(d.t_min_s, Unit::Second)),
        format!("allowed {} (voltage × ripple)", format(d.allowed_v, Unit::Volt)),
    ];
    lines.push(match d.settling_s {
        Some(t) => format!("settles within 10 % after {}", format(t, Unit::Second)),
        None => format!("not settled within the {} shown", format(d.window_s, Unit::Second)),
    });
    lines.push(format!(
        "worst case over on/off patterns {} ({} pulses), {}",
        format(d.worst_case_droop_v, Unit::Volt),
        d.worst_case_pattern.len(),
        if d.worst_case_meets { "within the allowed band" } else { "beyond the allowed band" }
    ));
    lines
}

impl App {
    /// The time view of the selected rail.
    pub(super) fn time_view(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let index = self.selected_rail;
        let Some(result) = self.results.droop(&self.doc.board, index) else { return };
        let d = match &*result {
            Ok(d) => d,
            Err(reason) => {
                ui.add_space(8.0);
                ui.label(RichText::new("No droop for this rail").heading().color(pal.fail));
                ui.label(reason);
                return;
            }
        };
        let (word, color) = if d.meets {
            ("droop within the allowed band", pal.ok)
        } else {
            ("droop beyond the allowed band", pal.fail)
        };
        ui.horizontal_wrapped(|ui| {
            ui.label(RichText::new(word).strong().color(color));
            ui.label(format!(
                "after a step of {} rising in {}{}",
                format(d.step_a, Unit::Ampere),
                format(d.rise_s, Unit::Second),
                if d.node == View::Die { ", seen at the die" } else { "" }
            ));
        });
        ui.horizontal_wrapped(|ui| {
            for (n, line) in droop_lines(d).into_iter().enumerate() {
                if n > 0 {
                    ui.label("·");
                }
                ui.label(line);
            }
        });
        let show_pattern = &mut self.show_worst_pattern;
        ui.checkbox(show_pattern, "Show the worst-case on/off load pattern and the voltage it gives");
        let pattern = if self.show_worst_pattern {
            let stale = self.pattern.as_ref().is_none_or(|p| !Arc::ptr_eq(&p.of, &result));
            if stale {
                let response = pattern_response(&self.doc.board, index, &d.worst_case_pattern, &droop_options())
                    .map_err(|e| e.to_string());
                self.pattern = Some(PatternView { of: result.clone(), response });
            }
            self.pattern.as_ref().map(|p| p.response.clone())
        } else {
            None
        };
        if let Some(Err(reason)) = &pattern {
            ui.label(RichText::new(reason).color(pal.fail));
        }
        time_key(ui, &pal, d, pattern.is_some());

        let floor = d.nominal_v - d.allowed_v;
        let (t_end, v_lo) = (d.window_s, d.min_v.min(floor));
        let lowest_pattern = match &pattern {
            Some(Ok(p)) => p.min_v,
            _ => v_lo,
        };
        let pad = (d.nominal_v - v_lo.min(lowest_pattern)).max(d.allowed_v) * 0.25;
        let shown = Plot::new(("droop", index))
            .default_x_bounds(0.0, t_end)
            .default_y_bounds(v_lo.min(lowest_pattern) - pad, d.nominal_v + pad)
            .x_axis_formatter(|m: GridMark, _r: &RangeInclusive<f64>| format_sig(m.value, Unit::Second, 3))
            .y_axis_formatter(|m: GridMark, _r: &RangeInclusive<f64>| format_sig(m.value, Unit::Volt, 4))
            .x_axis_label("time after the step starts")
            .y_axis_label("rail voltage")
            .y_axis_min_width(56.0)
            .label_formatter(|pos| {
                let (name, p) = match pos {
                    HoverPosition::NearDataPoint { plot_name, position, .. } => (*plot_name, *position),
                    HoverPosition::Elsewhere { position } => ("", *position),
                };
                Some(format!("{name}\n{}\n{}", format(p.x, Unit::Second), format_sig(p.y, Unit::Volt, 4)))
            })
            .show(ui, |pu| {
                if let Some(Ok(_)) = &pattern {
                    for pulse in &d.worst_case_pattern {
                        pu.polygon(
                            Polygon::new(
                                "load on",
                                PlotPoints::from(vec![
                                    [pulse.on_s, -1e3],
                                    [pulse.off_s, -1e3],
                                    [pulse.off_s, 1e3],
                                    [pulse.on_s, 1e3],
                                ]),
                            )
                            .fill_color(pal.highlight)
                            .stroke(egui::Stroke::NONE)
                            .allow_hover(false),
                        );
                    }
                }
                pu.hline(HLine::new("nominal", d.nominal_v).color(pal.band_edge).style(LineStyle::dashed_dense()));
                pu.hline(
                    HLine::new(format!("allowed floor {}", format_sig(floor, Unit::Volt, 4)), floor)
                        .color(pal.target)
                        .width(2.0),
                );
                if let Some(b) = &d.board_node {
                    pu.line(Line::new("at the board node", PlotPoints::from(b.waveform.clone())).color(pal.other_view));
                }
                if let Some(Ok(p)) = &pattern {
                    pu.line(
                        Line::new("worst-case pattern", PlotPoints::from(p.waveform.clone()))
                            .color(pal.worst)
                            .width(1.5),
                    );
                    pu.points(
                        Points::new("pattern's lowest", vec![[p.t_min_s, p.min_v]])
                            .shape(MarkerShape::Diamond)
                            .radius(5.0)
                            .color(pal.worst),
                    );
                }
                pu.line(Line::new("after the step", PlotPoints::from(d.waveform.clone())).color(pal.curve).width(2.5));
                pu.points(
                    Points::new("lowest", vec![[d.t_min_s, d.min_v]])
                        .shape(MarkerShape::Diamond)
                        .radius(6.0)
                        .color(if d.meets { pal.ok } else { pal.fail }),
                );
            });
        self.plot_rect = Some(shown.response.rect);
    }
}

/// The key to the time plot, above it.
fn time_key(ui: &mut Ui, pal: &theme::Palette, d: &Droop, pattern: bool) {
    let entry = |ui: &mut Ui, color: egui::Color32, text: &str| {
        let (rect, _) = ui.allocate_exact_size(egui::vec2(18.0, 12.0), egui::Sense::hover());
        ui.painter().line_segment([rect.left_center(), rect.right_center()], egui::Stroke::new(2.5, color));
        ui.label(RichText::new(text).small());
        ui.add_space(8.0);
    };
    ui.horizontal_wrapped(|ui| {
        ui.spacing_mut().item_spacing.x = 4.0;
        ui.style_mut().wrap_mode = Some(egui::TextWrapMode::Extend);
        entry(ui, pal.curve, if d.node == View::Die { "at the die, after the step" } else { "after the step" });
        entry(ui, pal.target, "allowed floor (nominal - voltage × ripple)");
        entry(ui, pal.band_edge, "nominal");
        if d.board_node.is_some() {
            entry(ui, pal.other_view, "at the board node");
        }
        if pattern {
            entry(ui, pal.worst, "worst-case pattern (load on where shaded)");
        }
    });
}
