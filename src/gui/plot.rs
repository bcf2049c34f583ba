//! The selected rail's |Z(f)| against its target, on log-log axes.
//!
//! egui_plot has no log axes, so everything is plotted as log10 of Hz and Ω, with grid marks at decades (and at
//! 2..9 within them) and labels written back as engineering numbers ("10 kHz", "5 mΩ"). The drawn curve, the
//! markers and the figures all come from `analysis` through [`super::results`].

use super::app::{App, CentralTab};
use super::jobs::{Job, Poll};
use super::load_choice::load_choice;
use super::results::RailResult;
use super::theme;
use crate::analysis::placed::worst_load;
use crate::analysis::{
    AntiResonance, Severity, View, kept_words, load_line, search_words, summary, vertex_words, yield_words,
};
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

/// Series names the hover read-out recognises (the total's name says where it is seen from).
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

/// A rail's home range of log10 |Z|: the curve's own range widened, when needed, to show the target and the worst
/// peak with room above them for the legend (which sits in the plot's top-left corner).
pub fn home_y_with(curve: [f64; 2], target: f64, worst: f64, peaks: &[AntiResonance]) -> [f64; 2] {
    let [mut y0, mut y1] = if curve[0] < curve[1] { curve } else { [-3.0, 1.0] };
    let mut top = target.max(worst);
    for p in peaks {
        top = top.max(p.z_ohm.log10());
    }
    if top.is_finite() {
        y1 = y1.max(top + 0.3);
    }
    if target.is_finite() {
        y0 = y0.min(target - 0.5);
    }
    // Room for the legend: a fifth of the range above the highest thing that must be seen.
    y1 += 0.2 * (y1 - y0);
    [y0, y1]
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
fn read_out(result: &RailResult, total_name: &str, pos: &HoverPosition<'_>) -> Option<String> {
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
        n if n == total_name || n.is_empty() => {
            on_curve(x).or_else(|| Some(format!("{}\n{}", format(f, Unit::Hertz), format(z, Unit::Ohm))))
        }
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
    /// The selected rail's name, verdict and figures on one line; below it only what must not be missed (a
    /// caution that fails the rail) and the figures of the extra curves the user asked for.
    pub(super) fn rail_header(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let Some(rail) = self.doc.board.rails.get(self.view.selected_rail).cloned() else { return };
        let Some(result) = self.view.results.get(self.view.selected_rail).cloned() else {
            ui.label(RichText::new(format!("{}: cannot be analysed", rail.name)).color(pal.fail));
            return;
        };
        let a = &result.analysis;
        let check = &result.check;
        let color = if check.passes { pal.ok } else { pal.fail };
        ui.horizontal_wrapped(|ui| {
            ui.spacing_mut().item_spacing.x = 6.0;
            // Each piece whole: where the line is too narrow a piece moves down, never splits in two.
            let piece = |ui: &mut Ui, text: RichText| ui.add(egui::Label::new(text).extend());
            piece(ui, RichText::new(&rail.name).heading().strong());
            // The check's own sentence on hover: the header stays one line.
            piece(ui, RichText::new(format!("{} the check", check.word())).heading().color(color))
                .on_hover_text(check.verdict_line());
            piece(ui, RichText::new(format!("margin {:+.1} dB", check.verdict.margin_db)).strong().color(color));
            piece(
                ui,
                RichText::new(format!(
                    "worst |Z| {} at {}",
                    format(a.worst_ohm, Unit::Ohm),
                    format(a.worst_hz, Unit::Hertz)
                )),
            );
            piece(ui, RichText::new(format!("({:.2}× target)", a.worst_ohm / a.target_ohm)));
            piece(ui, RichText::new(format!("{} corner", check.verdict.corner.name())).weak())
                .on_hover_text(check.verdict.corner.words());
            if a.view == View::Die {
                // With a package the verdict is taken at the die, as the check takes it; say so.
                ui.label(RichText::new("seen at the die, through the package").weak());
            } else if rail.package.is_some() {
                // Long: this one may wrap inside itself where the column is narrow.
                ui.label(RichText::new("seen at the board node (the check takes the verdict at the die)").weak());
            }
        });
        // A placed rail: the shown load's own verdict line (the rail's is its worst load's), as `check` words it.
        let shown_load = self.view.results.look().shown_load(&check.loads);
        if let Some(l) = shown_load.and_then(|k| check.loads.get(k)) {
            let color = if l.meets_target { pal.ok } else { pal.fail };
            ui.label(RichText::new(load_line(l, check.verdict.target_ohm)).small().color(color));
        }
        // The cautions that fail the rail, where nobody can miss them.
        for c in check.failing_cautions() {
            ui.label(RichText::new(format!("Fails: {}", c.text)).strong().color(pal.fail));
        }
        // Each extra curve's own verdict, in the colour of that verdict (never the curve's colour: a curve that
        // misses must not read green).
        let verdict_color = |meets: bool| if meets { pal.ok } else { pal.fail };
        if let Some(o) = &result.other_view {
            ui.label(
                RichText::new(format!("the other view: {}", summary(&o.analysis)))
                    .small()
                    .color(verdict_color(o.analysis.meets_target)),
            );
        }
        if let Some(w) = &result.worst {
            ui.label(RichText::new(summary(&w.analysis)).small().color(verdict_color(w.analysis.meets_target)));
            // The worst corner's details in one small paragraph: the parts that lose most, how the search went,
            // the capacitance kept at the typical corner.
            let mut parts = Vec::new();
            let dirs = vertex_words(&w.analysis);
            if !dirs.is_empty() {
                parts.push(format!("worst vertex: {}", dirs.join("; ")));
            }
            if let Some(s) = search_words(&w.analysis) {
                parts.push(s);
            }
            let kept = kept_words(check);
            if !kept.is_empty() {
                parts.push(format!("capacitance: {}", kept.join("; ")));
            }
            if !parts.is_empty() {
                ui.label(RichText::new(parts.join(" · ")).small().weak());
            }
        }
        let index = self.view.selected_rail;
        if let Some((_, _, y)) =
            self.view.yield_shown.as_ref().filter(|(i, board, _)| *i == index && *board == self.doc.board)
        {
            let color = if y.meeting == y.samples { pal.ok } else { pal.note };
            ui.label(RichText::new(format!("yield: {}", yield_words(y))).small().color(color));
        }
        if let Some(pin) = self.view.pins.iter().rev().find(|p| p.visible && p.rail == rail.name) {
            let change_db = 20.0 * (pin.worst_ohm / a.worst_ohm).log10();
            // Shown to one decimal: a change that rounds to 0.0 dB is "no change", not "0.0 dB better".
            let change = if change_db.abs() < 0.05 {
                "no change".to_string()
            } else if change_db > 0.0 {
                format!("{:.1} dB better", change_db)
            } else {
                format!("{:.1} dB worse", -change_db)
            };
            ui.label(
                RichText::new(format!(
                    "against pin “{}”: worst |Z| was {}, now {}; margin was {:+.1} dB, now {:+.1} dB ({change})",
                    pin.name,
                    format(pin.worst_ohm, Unit::Ohm),
                    format(a.worst_ohm, Unit::Ohm),
                    pin.margin_db,
                    a.margin_db,
                ))
                .small()
                .color(ui.visuals().strong_text_color()),
            );
        }
    }

    /// One row of choices above the plot: which view, pin, extra curves, where the rail is seen from, the yield.
    pub(super) fn options_row(&mut self, ui: &mut Ui) {
        let has_package = self.doc.board.rails.get(self.view.selected_rail).is_some_and(|r| r.package.is_some());
        let mut look = self.view.results.look();
        // The tabs, the curve options and the yield on one line (wrapped only in a narrow window); a placed rail's
        // load and a packaged rail's view on a line of their own, so nothing moves when a rail gains one.
        ui.horizontal_wrapped(|ui| {
            ui.selectable_value(&mut self.central_tab, CentralTab::Impedance, RichText::new("Impedance").strong())
                .on_hover_text("|Z(f)| against the target");
            ui.selectable_value(&mut self.central_tab, CentralTab::Time, RichText::new("Load step").strong())
                .on_hover_text("The voltage after a load step, and the worst-case on/off pattern");
            ui.selectable_value(&mut self.central_tab, CentralTab::Map, RichText::new("Map").strong()).on_hover_text(
                "The board map: where a placed rail's parts sit on its plane pair, beside its impedance",
            );
            ui.separator();
            if self.central_tab != CentralTab::Time {
                if ui
                    .button("Pin this curve")
                    .on_hover_text("Keep the current curve on the plot to compare against")
                    .clicked()
                {
                    self.pin_current();
                }
                ui.checkbox(&mut self.show_group_curves, "each group")
                    .on_hover_text("Draw each group's own |Z| in its own colour, named in the legend");
            }
            ui.checkbox(&mut look.worst_corner, "worst corner")
                .on_hover_text(format!("Also draw the worst corner's curve: {}", Corner::Worst.words()));
            ui.separator();
            self.yield_button(ui);
        });
        let placed = self.doc.board.rails.get(self.view.selected_rail).filter(|r| r.placement.is_some());
        if placed.is_some() || has_package {
            ui.horizontal_wrapped(|ui| {
                if let Some(rail) = placed {
                    // A placed rail: which load's effective impedance the plot shows.
                    load_choice(ui, "plot-load", "at load", rail, "the worst (the verdict's)", &mut look.load);
                }
                if has_package {
                    ui.label("seen from");
                    ui.radio_value(&mut look.view, None, "the die (the verdict's view)");
                    ui.radio_value(&mut look.view, Some(View::Board), "the board node");
                    ui.checkbox(&mut look.both_views, "draw both");
                }
            });
        }
        if look != self.view.results.look() {
            self.view.results.set_look(look);
            self.view.results.refresh(&self.doc.board);
        }
        if self.central_tab != CentralTab::Time {
            self.pins_bar(ui);
        }
    }

    /// The button that draws random boards within the parts' tolerances (on a [`Job`]: ten thousand boards take
    /// about half a second); the answer shows under the header while the board stays as it was.
    fn yield_button(&mut self, ui: &mut Ui) {
        let index = self.view.selected_rail;
        let polled = self.view.yield_job.as_mut().map(|(_, _, job)| job.poll());
        match polled {
            Some(Poll::Running) => {
                ui.add(egui::Spinner::new());
                ui.label(format!("drawing {YIELD_SAMPLES} boards…"));
                ui.ctx().request_repaint_after(std::time::Duration::from_millis(50));
                return;
            }
            Some(Poll::Done(answer)) => {
                if let (Some((rail, board, _)), Some(y)) = (self.view.yield_job.take(), answer) {
                    self.view.yield_shown = Some((rail, board, y));
                }
            }
            Some(Poll::Lost) => self.view.yield_job = None,
            None => {}
        }
        if ui
            .small_button("Estimate yield")
            .on_hover_text(format!(
                "Draw {YIELD_SAMPLES} random boards, each group's capacitance and ESR uniformly within their \
                 tolerances (one draw per group: its parts come from one reel), and count the boards that meet target"
            ))
            .clicked()
        {
            let view = self.view.results.get(index).map_or(View::Board, |r| r.verdict().view);
            let board = self.doc.board.clone();
            let drawn = board.clone();
            let job = Job::start("yield", move || {
                let (points, seed) = (super::results::BAND_POINTS, crate::analysis::DEFAULT_SEED);
                crate::analysis::yield_estimate(&drawn, index, view, points, YIELD_SAMPLES, seed, 2)
            });
            self.view.yield_job = Some((index, board, job));
        }
    }

    /// The plot itself.
    pub(super) fn plot(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let index = self.view.selected_rail;
        let Some(result) = self.view.results.get(index).cloned() else { return };
        let Some(rail) = self.doc.board.rails.get(index) else { return };
        let a = &result.analysis;
        let p = &result.plot;
        let t = a.target_ohm.log10();
        let (b0, b1) = (a.band_hz[0].log10(), a.band_hz[1].log10());
        let (v0, v1) = (p.view_hz[0].log10(), p.view_hz[1].log10());
        // Beside the board map with its field shown: the field's frequency on the plot.
        let field_hz = (self.central_tab == CentralTab::Map && self.view.map.field_on)
            .then(|| self.view.map.field_hz.unwrap_or(a.worst_hz));
        // The view to start from and to come back to on a double-click. It is taken once per rail (and again
        // when the band changes or the user double-clicks), not every frame, so that the view stands still
        // while counts are dragged and the curve moves inside it.
        let home = match self.view.home_views.get(&index) {
            Some(h) if h.band == a.band_hz => *h,
            _ => {
                let y = home_y_with(p.home_y, t, a.worst_ohm.log10(), &a.antiresonances);
                let h = HomeView { band: a.band_hz, x: [v0, v1], y };
                self.view.home_views.insert(index, h);
                h
            }
        };
        let selected =
            self.view.selected_finding.filter(|(r, _)| *r == index).and_then(|(_, i)| result.findings.get(i));
        let pins: Vec<_> = self.view.pins.iter().filter(|p| p.visible && p.rail == rail.name).cloned().collect();
        let show_groups = self.show_group_curves;
        let hover_result = result.clone();

        // On a placed rail the curve is a load's effective impedance (its own and the other loads' steps through
        // the planes, over the rail's step).
        let total_name = match (&rail.placement, self.view.results.look().load.and_then(|k| rail.loads.get(k))) {
            (Some(_), Some(load)) => format!("effective |Z| at {}", load.name),
            (Some(_), None) => {
                let worst = worst_load(&result.check.loads).and_then(|k| result.check.loads.get(k));
                format!("effective |Z| at {} (the worst load)", worst.map_or("—", |l| l.name.as_str()))
            }
            (None, _) => format!("|Z| {}", view_words(a.view)),
        };
        let hover_name = total_name.clone();
        let dark = ui.visuals().dark_mode;
        let group_colors = theme::group_colors(dark);
        let reset = std::mem::take(&mut self.view.reset_plot);
        let mut plot = Plot::new(("impedance", index))
            // The double-click is ours: egui_plot's own would fit every item, the shading's tall columns included.
            .allow_double_click_reset(false)
            .legend(
                egui_plot::Legend::default()
                    .position(egui_plot::Corner::LeftTop)
                    .text_style(egui::TextStyle::Small)
                    .background_alpha(0.85)
                    .follow_insertion_order(true),
            )
            .default_x_bounds(home.x[0], home.x[1])
            .default_y_bounds(home.y[0], home.y[1])
            .x_grid_spacer(log_marks)
            .y_grid_spacer(log_marks)
            .x_axis_formatter(|m, r| log_label(m, r, Unit::Hertz))
            .y_axis_formatter(|m, r| log_label(m, r, Unit::Ohm))
            .x_axis_label("frequency")
            .y_axis_label("|Z|")
            .y_axis_min_width(48.0)
            .label_formatter(move |pos| read_out(&hover_result, &hover_name, pos));
        if reset {
            plot = plot.reset();
        }
        let shown = plot.show(ui, |pu| {
            for v in &a.violations {
                pu.polygon(
                    Polygon::new("above target", column(v.from_hz.log10(), v.to_hz.log10()))
                        .fill_color(pal.violation_fill)
                        // A stroke of no width: the legend takes its colour from the stroke.
                        .stroke(egui::Stroke::new(0.0, pal.fail))
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
            if let Some(f) = field_hz {
                pu.vline(
                    VLine::new(format!("plane voltage shown at {}", format(f, Unit::Hertz)), f.log10())
                        .color(pal.note)
                        .width(1.5)
                        .allow_hover(false),
                );
            }
            for edge in [b0, b1] {
                pu.vline(
                    VLine::new("band edges", edge)
                        .color(pal.band_edge)
                        .style(LineStyle::dashed_dense())
                        .allow_hover(false),
                );
            }
            if show_groups {
                // Each group (and the source and plane) in its own colour, named in the legend.
                for (n, b) in p.branches.iter().enumerate() {
                    pu.line(
                        Line::new(b.label.clone(), PlotPoints::from(b.points.clone()))
                            .color(group_colors[n % group_colors.len()])
                            .width(1.2),
                    );
                }
            }
            for pin in &pins {
                pu.line(
                    Line::new(pin.name.clone(), PlotPoints::from(pin.points.clone()))
                        .color(pin.color(dark))
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
            pu.line(Line::new(total_name.clone(), PlotPoints::from(p.total.clone())).color(pal.curve).width(2.5));
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
            pu.points(Points::new(PEAK_UNDER, peaks(false)).shape(MarkerShape::Diamond).radius(5.0).color(pal.note));
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
            self.view.selected_finding = hit.map(|i| (index, i));
            self.view.scroll_to_finding = hit.is_some();
            // Beside the board map, a click also chooses the frequency of the plane's voltage.
            if self.central_tab == CentralTab::Map {
                self.view.map.set_field_hz(f);
            }
        }
        if shown.response.double_clicked() {
            // Take a fresh home view from the curve as it is now and go there on the next frame.
            self.view.home_views.remove(&index);
            self.view.reset_plot = true;
            ui.ctx().request_repaint();
        }
    }

    /// Select a finding (or clear the selection when it is selected already).
    pub(super) fn toggle_finding(&mut self, rail: usize, index: usize) {
        if self.view.selected_finding == Some((rail, index)) {
            self.view.selected_finding = None;
        } else {
            self.view.selected_rail = rail;
            self.view.selected_finding = Some((rail, index));
        }
    }

    /// How many failing and noted findings a rail has.
    pub(super) fn finding_counts(&self, rail: usize) -> (usize, usize) {
        self.view.results.get(rail).map_or((0, 0), |r| {
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

    #[test]
    fn the_home_range_shows_the_target_and_the_worst_peak_with_room_for_the_legend() {
        // A curve range that stops under the target and the worst point (as V1V2_MCU's did).
        let [y0, y1] = home_y_with([-2.5, -1.0], -0.77, -0.6, &[]);
        assert!(y0 <= -2.5 && y1 >= -0.6 + 0.3, "[{y0}, {y1}]");
        // Room for the legend above the highest thing shown: a fifth of the range before it was added.
        assert!(y1 - (-0.3) >= (y1 - y0) / 6.0, "[{y0}, {y1}]");
        // A degenerate curve range falls back to a plain one that still holds the target.
        let [z0, z1] = home_y_with([0.0, 0.0], -2.0, -2.2, &[]);
        assert!(z0 < -2.0 && -2.0 < z1);
    }
}
