//! The selected rail's |Z(f)| against its target, on log-log axes.
//!
//! egui_plot has no log axes, so everything is plotted as log10 of Hz and Ω, with grid marks at decades (and at
//! 2..9 within them) and labels written back as engineering numbers ("10 kHz", "5 mΩ"). The drawn curve, the
//! markers and the figures all come from `analysis` through [`super::results`].

use super::app::App;
use super::results::RailResult;
use super::theme;
use crate::analysis::{AntiResonance, Severity, View, kept_words, search_words, summary, vertex_words, yield_words};
use crate::physics::Corner;
use crate::units::{Unit, format, format_sig};
use egui::{RichText, Ui};
use egui_plot::{
    GridInput, GridMark, HoverPosition, Line, LineStyle, MarkerShape, Plot, PlotPoints, Points, Polygon, VLine,
};
use std::ops::RangeInclusive;

/// Where a rail's plot starts and returns to on a double-click (log10 Hz and log10 Ω), and the band it was
/// taken for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HomeView {
    /// The rail's band when the view was taken, Hz.
    pub band: [f64; 2],
    /// Horizontal range, log10 Hz.
    pub x: [f64; 2],
    /// Vertical range, log10 Ω.
    pub y: [f64; 2],
}

/// Series names the hover read-out recognises.
const TOTAL: &str = "|Z|";
const PEAK_ABOVE: &str = "anti-resonance above target";
const PEAK_UNDER: &str = "anti-resonance under target";

/// A rectangle from x0 to x1 reaching far beyond any view vertically (log10 Ω from -30 to 30), used to shade a
/// frequency range without the text label a plot span would draw over it.
fn column(x0: f64, x1: f64) -> PlotPoints<'static> {
    PlotPoints::from(vec![[x0, -30.0], [x1, -30.0], [x1, 30.0], [x0, 30.0]])
}

/// Grid marks for a log10 axis: every decade, and 2..9 within each decade when fewer than eight decades show.
pub fn log_marks(input: GridInput) -> Vec<GridMark> {
    let (lo, hi) = input.bounds;
    if !lo.is_finite() || !hi.is_finite() || hi <= lo {
        return Vec::new();
    }
    let span = hi - lo;
    // A very wide view (after zooming far out) gets a mark every few decades so labels do not pile up.
    let every = (span / 12.0).ceil().max(1.0) as i64;
    let mut marks = Vec::new();
    let (d0, d1) = (lo.floor() as i64, hi.ceil() as i64);
    for d in d0..=d1 {
        if d.rem_euclid(every) == 0 {
            marks.push(GridMark { value: d as f64, step_size: every as f64 });
        }
        if span < 8.0 {
            for k in 2..=9 {
                marks.push(GridMark { value: d as f64 + (k as f64).log10(), step_size: 0.1 });
            }
        }
    }
    marks.retain(|m| m.value >= lo && m.value <= hi);
    marks
}

/// The label of a mark on a log10 axis: decades always, the 2..9 marks only when less than two decades show; on
/// the frequency axis, none at the very ends.
pub fn log_label(mark: GridMark, range: &RangeInclusive<f64>, unit: Unit) -> String {
    let is_decade = (mark.value - mark.value.round()).abs() < 1e-9;
    // A label centred on the very end of the axis would be cut in half by the plot's edge: leave it out.
    let span = range.end() - range.start();
    if unit == Unit::Hertz && (mark.value - range.start() < 0.05 * span || range.end() - mark.value < 0.05 * span) {
        return String::new();
    }
    if is_decade || range.end() - range.start() < 2.0 {
        format_sig(10f64.powf(mark.value), unit, 1)
    } else {
        String::new()
    }
}

/// Random boards the window's yield button draws.
const YIELD_SAMPLES: usize = 10_000;

/// Where a curve is seen from, in words.
fn view_words(view: View) -> &'static str {
    match view {
        View::Die => "at the die",
        View::Board => "at the board node",
    }
}

/// The groups that meet at a peak, in a few words.
fn peak_groups(a: &AntiResonance) -> String {
    let side =
        |b: &Option<crate::analysis::BranchRef>| b.as_ref().map(|b| b.label.clone()).unwrap_or_else(|| "—".into());
    // Two short lines keep the read-out narrow enough to stay over the plot.
    let share = |b: &Option<crate::analysis::BranchRef>| b.as_ref().map_or(0.0, |b| b.share * 100.0);
    format!(
        "peak between {} ({:.0} % of the inductive current)\nand {} ({:.0} % of the capacitive current)",
        side(&a.inductive_side),
        share(&a.inductive_side),
        side(&a.capacitive_side),
        share(&a.capacitive_side)
    )
}

/// The hover read-out for a point of the plot.
fn read_out(result: &RailResult, pos: &HoverPosition<'_>) -> Option<String> {
    let a = &result.analysis;
    let (name, x, y, index) = match pos {
        HoverPosition::NearDataPoint { plot_name, position, index } => (*plot_name, position.x, position.y, *index),
        HoverPosition::Elsewhere { position } => ("", position.x, position.y, 0),
    };
    let f = 10f64.powf(x);
    let z = 10f64.powf(y);
    let ratio = |z: f64| format!("{:.2}× target", z / a.target_ohm);
    // On the curve, or anywhere else over the plot: the curve's own sample nearest in frequency, so the read-out
    // always gives the rail's |Z| there (the pointer's height is not a value of anything).
    let on_curve = |x: f64| -> Option<String> {
        let p = result.plot.total.iter().min_by(|a, b| (a[0] - x).abs().total_cmp(&(b[0] - x).abs()))?;
        let (f, z) = (10f64.powf(p[0]), 10f64.powf(p[1]));
        let mut text = format!("{}\n|Z| {} ({})", format(f, Unit::Hertz), format(z, Unit::Ohm), ratio(z));
        // Near a peak, say which groups make it.
        if let Some(peak) = a.antiresonances.iter().find(|p| (p.freq_hz / f).log10().abs() < 0.06) {
            text.push_str(&format!("\n{}", peak_groups(peak)));
        }
        Some(text)
    };
    match name {
        TOTAL | "" => on_curve(x).or_else(|| Some(format!("{}\n{}", format(f, Unit::Hertz), format(z, Unit::Ohm)))),
        PEAK_ABOVE | PEAK_UNDER => {
            let above = name == PEAK_ABOVE;
            let p = a.antiresonances.iter().filter(|p| p.above_target == above).nth(index)?;
            Some(format!(
                "anti-resonance at {}\n|Z| {} ({})\n{}",
                format(p.freq_hz, Unit::Hertz),
                format(p.z_ohm, Unit::Ohm),
                ratio(p.z_ohm),
                peak_groups(p)
            ))
        }
        other => Some(format!("{other}\n{}\n|Z| {} ({})", format(f, Unit::Hertz), format(z, Unit::Ohm), ratio(z))),
    }
}

impl App {
    /// The selected rail's name, verdict and figures (and the change against the newest pin).
    pub(super) fn rail_header(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let Some(rail) = self.doc.board.rails.get(self.selected_rail).cloned() else { return };
        let Some(result) = self.results.get(self.selected_rail).cloned() else {
            ui.label(RichText::new(format!("{}: cannot be analysed", rail.name)).color(pal.fail));
            return;
        };
        let a = &result.analysis;
        let check = &result.check;
        let color = if check.passes { pal.ok } else { pal.fail };
        ui.horizontal(|ui| {
            ui.label(RichText::new(&rail.name).heading().strong());
            ui.label(RichText::new(format!("{} the check", check.word())).heading().color(color));
            ui.label(RichText::new(format!("margin {:+.1} dB", check.verdict.margin_db)).strong().color(color));
            ui.label(RichText::new(format!("{} corner", check.verdict.corner.name())).strong())
                .on_hover_text(check.verdict.corner.words());
            if a.view == View::Die {
                // With a package the verdict is taken at the die, as the check takes it; say so.
                ui.label(RichText::new("seen at the die, through the package").weak());
            } else if rail.package.is_some() {
                ui.label(RichText::new("seen at the board node (the check takes the verdict at the die)").weak());
            }
        });
        // The check's own sentence, and the cautions that fail the rail, where nobody can miss them.
        ui.label(RichText::new(check.verdict_line()).color(color));
        for c in check.failing_cautions() {
            ui.label(RichText::new(format!("Fails: {}", c.text)).strong().color(pal.fail));
        }
        self.look_row(ui, rail.package.is_some());
        ui.horizontal_wrapped(|ui| {
            ui.label(format!(
                "target {} from {} to {}",
                format(a.target_ohm, Unit::Ohm),
                format(a.band_hz[0], Unit::Hertz),
                format(a.band_hz[1], Unit::Hertz)
            ));
            ui.label("·");
            ui.label(format!("worst |Z| {} at {}", format(a.worst_ohm, Unit::Ohm), format(a.worst_hz, Unit::Hertz)));
            ui.label("·");
            ui.label(format!("{:.2}× target", a.worst_ohm / a.target_ohm));
        });
        if let Some(o) = &result.other_view {
            ui.label(RichText::new(format!("the other view: {}", summary(&o.analysis))).color(pal.other_view));
        }
        if let Some(w) = &result.worst {
            ui.label(RichText::new(summary(&w.analysis)).color(if w.analysis.meets_target {
                pal.ok
            } else {
                pal.fail
            }));
            let dirs = vertex_words(&w.analysis);
            if !dirs.is_empty() {
                ui.label(RichText::new(format!("worst vertex: {}", dirs.join("; "))).small());
            }
            if let Some(s) = search_words(&w.analysis) {
                ui.label(RichText::new(s).small().weak());
            }
        }
        let kept = kept_words(check);
        if !kept.is_empty() {
            ui.label(RichText::new(format!("capacitance: {}", kept.join("; "))).small());
        }
        self.yield_row(ui, &pal);
        if let Some(pin) = self.pins.iter().rev().find(|p| p.visible && p.rail == rail.name) {
            let change_db = 20.0 * (pin.worst_ohm / a.worst_ohm).log10();
            let better = if change_db >= 0.0 { "better" } else { "worse" };
            ui.label(
                RichText::new(format!(
                    "against pin “{}”: worst |Z| was {}, now {}; margin was {:+.1} dB, now {:+.1} dB ({:.1} dB {better})",
                    pin.name,
                    format(pin.worst_ohm, Unit::Ohm),
                    format(a.worst_ohm, Unit::Ohm),
                    pin.margin_db,
                    a.margin_db,
                    change_db.abs()
                ))
                .color(pin.color),
            );
        }
    }

    /// The yield of the selected rail: a button that draws random boards within the parts' tolerances, and the
    /// answer while the board stays as it was.
    fn yield_row(&mut self, ui: &mut Ui, pal: &theme::Palette) {
        let index = self.selected_rail;
        let current = self.yield_shown.as_ref().filter(|(i, board, _)| *i == index && *board == self.doc.board);
        match current {
            Some((_, _, y)) => {
                let color = if y.meeting == y.samples { pal.ok } else { pal.note };
                ui.label(RichText::new(format!("yield: {}", yield_words(y))).small().color(color));
            }
            None => {
                if ui
                    .small_button(format!("Estimate the yield ({YIELD_SAMPLES} random boards)"))
                    .on_hover_text(
                        "Draw each group's capacitance and ESR uniformly within their tolerances (one draw per \
                         group: its parts come from one reel) and count the boards that meet target",
                    )
                    .clicked()
                    && let Some(y) = crate::analysis::yield_estimate(
                        &self.doc.board,
                        index,
                        self.results.get(index).map_or(View::Board, |r| r.verdict().view),
                        super::results::BAND_POINTS,
                        YIELD_SAMPLES,
                        crate::analysis::DEFAULT_SEED,
                        2,
                    )
                {
                    self.yield_shown = Some((index, self.doc.board.clone(), y));
                }
            }
        }
    }

    /// Where the rail is seen from and which curves are drawn beside the main one. Changing them analyses every
    /// rail again (once), since the rails list shows the same view.
    fn look_row(&mut self, ui: &mut Ui, has_package: bool) {
        let mut look = self.results.look();
        ui.horizontal_wrapped(|ui| {
            if has_package {
                ui.label("Seen from");
                ui.radio_value(&mut look.view, None, "the die (the verdict's view)");
                ui.radio_value(&mut look.view, Some(View::Board), "the board node");
                ui.checkbox(&mut look.both_views, "draw both");
                ui.separator();
            }
            ui.checkbox(&mut look.worst_corner, "worst corner too").on_hover_text(Corner::Worst.words());
        });
        if look != self.results.look() {
            self.results.set_look(look);
            self.results.refresh(&self.doc.board);
        }
    }

    /// The plot itself.
    pub(super) fn plot(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let index = self.selected_rail;
        let Some(result) = self.results.get(index).cloned() else { return };
        let Some(rail) = self.doc.board.rails.get(index) else { return };
        let a = &result.analysis;
        let p = &result.plot;
        let t = a.target_ohm.log10();
        let (b0, b1) = (a.band_hz[0].log10(), a.band_hz[1].log10());
        let (v0, v1) = (p.view_hz[0].log10(), p.view_hz[1].log10());
        // The view to start from and to come back to on a double-click. It is taken once per rail (and again
        // when the band changes or the user double-clicks), not every frame, so that the view stands still
        // while counts are dragged and the curve moves inside it.
        let home = match self.home_views.get(&index) {
            Some(h) if h.band == a.band_hz => *h,
            _ => {
                let y = if p.home_y[0] < p.home_y[1] { p.home_y } else { [-3.0, 1.0] };
                let h = HomeView { band: a.band_hz, x: [v0, v1], y };
                self.home_views.insert(index, h);
                h
            }
        };
        let selected = self.selected_finding.filter(|(r, _)| *r == index).and_then(|(_, i)| result.findings.get(i));
        let pins: Vec<_> = self.pins.iter().filter(|p| p.visible && p.rail == rail.name).cloned().collect();
        let show_groups = self.show_group_curves;
        let hover_result = result.clone();

        self.plot_key(ui, &pal, &result, &pins);
        let shown = Plot::new(("impedance", index))
            .default_x_bounds(home.x[0], home.x[1])
            .default_y_bounds(home.y[0], home.y[1])
            .x_grid_spacer(log_marks)
            .y_grid_spacer(log_marks)
            .x_axis_formatter(|m, r| log_label(m, r, Unit::Hertz))
            .y_axis_formatter(|m, r| log_label(m, r, Unit::Ohm))
            .x_axis_label("frequency")
            .y_axis_label("|Z|")
            .y_axis_min_width(48.0)
            .label_formatter(move |pos| read_out(&hover_result, pos))
            .show(ui, |pu| {
                for v in &a.violations {
                    pu.polygon(
                        Polygon::new("above target", column(v.from_hz.log10(), v.to_hz.log10()))
                            .fill_color(pal.violation_fill)
                            .stroke(egui::Stroke::NONE)
                            .allow_hover(false),
                    );
                }
                if let Some(f) = selected {
                    let (f0, f1) = (f.range_hz[0].log10(), f.range_hz[1].log10());
                    // A single-frequency finding gets a narrow band so it can be seen.
                    let half = if f1 - f0 < 0.01 { 0.01 } else { 0.0 };
                    pu.polygon(
                        Polygon::new("selected finding", column(f0 - half, f1 + half))
                            .fill_color(pal.highlight)
                            .stroke(egui::Stroke::new(1.5, pal.note))
                            .allow_hover(false),
                    );
                }
                for edge in [b0, b1] {
                    pu.vline(
                        VLine::new("band edge", edge)
                            .color(pal.band_edge)
                            .style(LineStyle::dashed_dense())
                            .allow_hover(false),
                    );
                }
                if show_groups {
                    for b in &p.branches {
                        pu.line(
                            Line::new(b.label.clone(), PlotPoints::from(b.points.clone())).color(pal.branch).width(1.0),
                        );
                    }
                }
                for pin in &pins {
                    pu.line(
                        Line::new(format!("pin: {}", pin.name), PlotPoints::from(pin.points.clone()))
                            .color(pin.color)
                            .width(1.5)
                            .style(LineStyle::dashed_loose()),
                    );
                }
                if let Some(o) = &result.other_view {
                    pu.line(
                        Line::new(view_words(o.analysis.view), PlotPoints::from(o.total.clone()))
                            .color(pal.other_view)
                            .width(1.5),
                    );
                }
                if let Some(w) = &result.worst {
                    pu.line(
                        Line::new("worst corner", PlotPoints::from(w.total.clone()))
                            .color(pal.worst)
                            .width(1.5)
                            .style(LineStyle::dashed_dense()),
                    );
                }
                pu.line(Line::new(TOTAL, PlotPoints::from(p.total.clone())).color(pal.curve).width(2.5));
                pu.line(
                    Line::new(
                        format!("target {}", format(a.target_ohm, Unit::Ohm)),
                        PlotPoints::from(vec![[b0, t], [b1, t]]),
                    )
                    .color(pal.target)
                    .width(2.0),
                );
                let peaks = |above: bool| -> Vec<[f64; 2]> {
                    a.antiresonances
                        .iter()
                        .filter(|p| p.above_target == above)
                        .map(|p| [p.freq_hz.log10(), p.z_ohm.log10()])
                        .collect()
                };
                pu.points(Points::new(PEAK_ABOVE, peaks(true)).shape(MarkerShape::Diamond).radius(6.0).color(pal.fail));
                pu.points(
                    Points::new(PEAK_UNDER, peaks(false)).shape(MarkerShape::Diamond).radius(5.0).color(pal.note),
                );
            });
        self.plot_rect = Some(shown.response.rect);
        // A click on the plot selects the finding at that frequency (a shaded range, or a marked peak), the same
        // as clicking it in the list; a click elsewhere clears the selection.
        if shown.response.clicked()
            && let Some(pos) = shown.response.interact_pointer_pos()
        {
            let f = 10f64.powf(shown.transform.value_from_position(pos).x);
            let hit = result.findings.iter().position(|fi| {
                let [lo, hi] = fi.range_hz;
                (f >= lo && f <= hi) || (f / lo).log10().abs() < 0.03 || (f / hi).log10().abs() < 0.03
            });
            self.selected_finding = hit.map(|i| (index, i));
            self.scroll_to_finding = hit.is_some();
        }
        if shown.response.double_clicked() {
            // Egui_plot has just gone back to the old home view; take a fresh one from the curve as it is now.
            self.home_views.remove(&index);
        }
    }

    /// The key to the plot, drawn above it rather than over it so that it never hides the curve.
    fn plot_key(&self, ui: &mut Ui, pal: &theme::Palette, result: &RailResult, pins: &[super::pins::Pin]) {
        let (target_ohm, peaks) = (result.analysis.target_ohm, !result.analysis.antiresonances.is_empty());
        let swatch = |ui: &mut Ui, color: egui::Color32, kind: u8| {
            let (rect, _) = ui.allocate_exact_size(egui::vec2(18.0, 12.0), egui::Sense::hover());
            let p = ui.painter();
            match kind {
                0 => {
                    p.line_segment([rect.left_center(), rect.right_center()], egui::Stroke::new(2.5, color));
                }
                1 => {
                    let c = rect.center();
                    let r = 5.0;
                    let pts = vec![
                        c + egui::vec2(0.0, -r),
                        c + egui::vec2(r, 0.0),
                        c + egui::vec2(0.0, r),
                        c + egui::vec2(-r, 0.0),
                    ];
                    p.add(egui::Shape::convex_polygon(pts, color, egui::Stroke::NONE));
                }
                _ => {
                    p.rect_filled(rect, 2.0, color);
                }
            }
        };
        // Each entry: its swatches (0 line, 1 diamond, 2 fill) and its words.
        let mut entries: Vec<(Vec<(egui::Color32, u8)>, String)> =
            vec![(vec![(pal.curve, 0)], format!("|Z| {}", view_words(result.analysis.view)))];
        if let Some(o) = &result.other_view {
            entries.push((vec![(pal.other_view, 0)], format!("|Z| {}", view_words(o.analysis.view))));
        }
        if result.worst.is_some() {
            entries.push((vec![(pal.worst, 0)], "worst corner (dashed)".into()));
        }
        entries.push((vec![(pal.target, 0)], format!("target {}, band edges dashed", format(target_ohm, Unit::Ohm))));
        entries.push((vec![(pal.violation_fill.gamma_multiply(3.0), 2)], "above target".into()));
        if peaks {
            entries.push((vec![(pal.fail, 1), (pal.note, 1)], "anti-resonance above / under target".into()));
        }
        if self.selected_finding.is_some() {
            entries.push((vec![(pal.highlight.gamma_multiply(2.0), 2)], "selected finding".into()));
        }
        for pin in pins {
            entries.push((vec![(pin.color, 0)], pin.name.clone()));
        }
        if self.show_group_curves {
            entries.push((vec![(pal.branch.gamma_multiply(2.5), 0)], "each group alone".into()));
        }
        ui.horizontal_wrapped(|ui| {
            ui.spacing_mut().item_spacing.x = 4.0;
            ui.style_mut().wrap_mode = Some(egui::TextWrapMode::Extend);
            let font = egui::TextStyle::Small.resolve(ui.style());
            for (n, (swatches, text)) in entries.iter().enumerate() {
                // An entry stays whole on one line: measure it, and start a new row when it would not fit, so a
                // swatch is never left at the end of a row without its words.
                let words = ui.painter().layout_no_wrap(text.clone(), font.clone(), egui::Color32::WHITE).size().x;
                let width = swatches.len() as f32 * 22.0 + words + 12.0;
                if n > 0 && ui.available_size_before_wrap().x < width {
                    ui.end_row();
                } else if n > 0 {
                    ui.add_space(8.0);
                }
                for &(color, kind) in swatches {
                    swatch(ui, color, kind);
                }
                ui.label(RichText::new(text).small());
            }
        });
        ui.label(
            RichText::new("Hover for a read-out; scroll or drag to zoom and pan; double-click for the whole band.")
                .small()
                .weak(),
        );
    }

    /// Select a finding (or clear the selection when it is selected already).
    pub(super) fn toggle_finding(&mut self, rail: usize, index: usize) {
        if self.selected_finding == Some((rail, index)) {
            self.selected_finding = None;
        } else {
            self.selected_rail = rail;
            self.selected_finding = Some((rail, index));
        }
    }

    /// How many failing and noted findings a rail has.
    pub(super) fn finding_counts(&self, rail: usize) -> (usize, usize) {
        self.results.get(rail).map_or((0, 0), |r| {
            let fails = r.findings.iter().filter(|f| f.severity == Severity::Fail).count();
            (fails, r.findings.len() - fails)
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decade_marks_and_labels() {
        let marks = log_marks(GridInput { bounds: (2.5, 5.2), base_step_size: 0.01 });
        let decades: Vec<f64> = marks.iter().filter(|m| m.step_size == 1.0).map(|m| m.value).collect();
        assert_eq!(decades, vec![3.0, 4.0, 5.0]);
        assert!(marks.iter().any(|m| (m.value - (3.0 + 2f64.log10())).abs() < 1e-12));
        let range = 2.5..=5.2;
        // A decade right at the end of the frequency axis is left unlabelled (it would be cut in half).
        assert_eq!(log_label(GridMark { value: 5.0, step_size: 1.0 }, &(2.0..=5.02), Unit::Hertz), "");
        assert_eq!(log_label(GridMark { value: 5.0, step_size: 1.0 }, &(2.0..=5.5), Unit::Hertz), "100 kHz");
        assert_eq!(log_label(GridMark { value: 3.0, step_size: 1.0 }, &range, Unit::Hertz), "1 kHz");
        assert_eq!(log_label(GridMark { value: -2.0, step_size: 1.0 }, &range, Unit::Ohm), "10 mΩ");
        assert_eq!(log_label(GridMark { value: -4.0, step_size: 1.0 }, &range, Unit::Ohm), "100 µΩ");
        assert_eq!(log_label(GridMark { value: 3.0 + 2f64.log10(), step_size: 0.1 }, &range, Unit::Hertz), "");
        let narrow = 3.0..=4.5;
        assert_eq!(log_label(GridMark { value: 3.0 + 2f64.log10(), step_size: 0.1 }, &narrow, Unit::Hertz), "2 kHz");
        assert!(log_marks(GridInput { bounds: (f64::NAN, 1.0), base_step_size: 0.1 }).is_empty());
        let wide = log_marks(GridInput { bounds: (-30.0, 30.0), base_step_size: 0.1 });
        assert!(wide.len() < 40);
    }
}
