//! The selected rail's voltage after a load step: the waveform against the allowed band, its minimum, the
//! figures, and on request the worst-case on/off load pattern and the voltage it gives.
//!
//! Everything drawn comes from `analysis::droop` and `analysis::pattern_response` through [`super::results`]; the
//! droop is computed again only when the rail's inputs change, so it follows a count drag one step at a time.

use super::app::App;
use super::jobs::{Job, Poll};
use super::results::{DroopResult, droop_options};
use super::theme;
use crate::analysis::{Droop, LoadDroop, PatternResponse, View, WorstCase, pattern_response};
use crate::units::{Unit, format, format_sig};
use egui::{RichText, Ui};
use egui_plot::{GridMark, HLine, HoverPosition, Line, LineStyle, MarkerShape, Plot, PlotPoints, Points, Polygon};
use std::ops::RangeInclusive;
use std::sync::Arc;

/// The worst-case pattern's response, kept with the droop it was built from. It costs about as much as the droop
/// itself, so it too is computed on its own thread.
#[derive(Debug)]
pub struct PatternView {
    /// The droop whose pattern it is (compared by identity, so a new droop computes a new response).
    pub of: Arc<DroopResult>,
    /// The load it is at, on a placed rail (another load has its own pattern and response).
    pub at: Option<usize>,
    /// The response, or why it could not be computed; `None` while it is computed.
    pub response: Option<Result<PatternResponse, String>>,
    job: Option<Job<Result<PatternResponse, String>>>,
}

impl PatternView {
    /// Start computing the response to the worst-case pattern of the step `shown` (on a placed rail, at its load)
    /// on rail `index` of `board`.
    fn start(board: &crate::model::Board, index: usize, of: Arc<DroopResult>, shown: &Shown) -> PatternView {
        let (board, pattern, at) = (board.clone(), shown.worst_case.pattern().to_vec(), shown.at);
        let job = Job::start("pattern", move || {
            pattern_response(&board, index, at, &pattern, &droop_options()).map_err(|e| e.to_string())
        });
        PatternView { of, at, response: None, job: Some(job) }
    }

    /// Take the answer when it has come.
    fn poll(&mut self) {
        let Some(job) = &mut self.job else { return };
        match job.poll() {
            Poll::Done(answer) => {
                self.response = Some(answer);
                self.job = None;
            }
            Poll::Running => {}
            Poll::Lost => {
                self.response = Some(Err("the pattern's response could not be computed".into()));
                self.job = None;
            }
        }
    }
}

/// The height left for the time view, in points, above which its figures start unfolded (a 1080-line screen has
/// about 900; an 800-line laptop screen about 620).
const ROOMY_HEIGHT: f32 = 760.0;

/// The title of the fold that holds a droop's further figures.
pub fn more_figures_title(lines: usize) -> String {
    if lines == 1 { "1 more figure".into() } else { format!("{lines} more figures") }
}

/// The figures of a droop in words, as the window shows them, one line each: the engine's own words
/// ([`crate::analysis::droop_lines`]) less the stimulus and the verdict, which the window shows above them.
pub fn droop_lines(d: &Droop) -> Vec<String> {
    let all = crate::analysis::droop_lines(d);
    let skip = [crate::analysis::droop_stimulus_line(d), crate::analysis::droop_verdict_line(d)];
    all.into_iter().filter(|l| !skip.contains(l)).collect()
}

impl App {
    /// The time view of the selected rail.
    pub(super) fn time_view(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let index = self.view.selected_rail;
        let now = self.view.results.droop(&self.doc.board, index);
        if !now.current {
            // Look for the new droop at the next frame, even if the user does nothing: it lands within milliseconds.
            ui.ctx().request_repaint_after(std::time::Duration::from_millis(5));
        }
        let Some(result) = now.result else {
            ui.horizontal(|ui| {
                ui.add(egui::Spinner::new());
                ui.label("Computing the step response…");
            });
            return;
        };
        if !now.current {
            ui.label(
                RichText::new("Updating: the figures below are for the rail before the last change.").color(pal.note),
            );
        }
        let d = match &*result {
            Ok(d) => d,
            Err(reason) => {
                ui.add_space(8.0);
                ui.label(RichText::new("No droop for this rail").heading().color(pal.fail));
                ui.label(reason);
                return;
            }
        };
        // On a placed rail, the load chosen under "at load" (the plot's choice), else the worst: its own
        // waveform, figures and verdict from the engine.
        let chosen = self.view.results.look().load.filter(|&k| k < d.loads.len());
        let shown = Shown::of(d, chosen);
        let (word, color) = if shown.meets {
            ("droop within the allowed band", pal.ok)
        } else {
            ("droop beyond the allowed band", pal.fail)
        };
        ui.horizontal_wrapped(|ui| {
            ui.label(RichText::new(word).strong().color(color));
            ui.label(format!(
                "after a {}{}",
                crate::analysis::droop_stimulus_line(d),
                if shown.node == View::Die { ", seen at the die" } else { "" }
            ));
        });
        match shown.load {
            Some(l) => {
                let which = if chosen.is_some() { "the load chosen under \"at load\"" } else { "the worst load" };
                ui.label(RichText::new(format!("Drawn at load {}, {which}", l.name)).strong());
                ui.label(crate::analysis::droop_load_line(d, l));
            }
            None => {
                ui.label(crate::analysis::droop_verdict_line(d));
            }
        }
        let lines = droop_lines(d);
        if !lines.is_empty() {
            // On a laptop's screen the figures would take half the plot's height: there they start folded (the
            // verdict above says whether the rail passes); a taller window shows them open.
            let roomy = ui.available_height() > ROOMY_HEIGHT;
            egui::CollapsingHeader::new(RichText::new(more_figures_title(lines.len())).small())
                .id_salt("droop figures")
                .default_open(roomy)
                .show(ui, |ui| {
                    for line in lines {
                        ui.label(RichText::new(line).small());
                    }
                });
        }
        let show_pattern = &mut self.show_worst_pattern;
        ui.checkbox(show_pattern, "Show the worst-case on/off load pattern and the voltage it gives");
        let pattern = if self.show_worst_pattern {
            let stale = self.view.pattern.as_ref().is_none_or(|p| !Arc::ptr_eq(&p.of, &result) || p.at != shown.at);
            if stale {
                self.view.pattern = Some(PatternView::start(&self.doc.board, index, result.clone(), &shown));
            }
            let view = self.view.pattern.as_mut().map(|p| {
                p.poll();
                p.response.clone()
            });
            match view.flatten() {
                Some(response) => Some(response),
                None => {
                    ui.horizontal(|ui| {
                        ui.add(egui::Spinner::new());
                        ui.label("Computing the worst-case pattern's response…");
                    });
                    ui.ctx().request_repaint_after(std::time::Duration::from_millis(30));
                    None
                }
            }
        } else {
            None
        };
        if let Some(Err(reason)) = &pattern {
            ui.label(RichText::new(reason).color(pal.fail));
        }
        time_key(ui, &pal, d, pattern.is_some());

        let floor = d.nominal_v - d.allowed_v;
        let t_end = d.window_s;
        // Everything drawn fits the first view: the floor, nominal and every waveform, with a little room.
        let mut drawn: Vec<&[[f64; 2]]> = vec![shown.waveform];
        drawn.extend(d.board_node.as_ref().map(|b| b.waveform.as_slice()));
        // A pattern that swings far wider than the step would flatten the step to a line: then the view keeps to
        // the step and says where the pattern goes.
        let scale = shown.droop_v.abs().max(d.allowed_v);
        let pattern_fits = match &pattern {
            Some(Ok(p)) => d.nominal_v - p.min_v <= 4.0 * scale,
            _ => true,
        };
        if let Some(Ok(p)) = &pattern {
            if pattern_fits {
                drawn.push(&p.waveform);
            } else {
                ui.label(
                    RichText::new(format!(
                        "The worst-case pattern swings far beyond this view (lowest {} at {}): scroll out to see it.",
                        format_sig(p.min_v, Unit::Volt, 4),
                        format(p.t_min_s, Unit::Second)
                    ))
                    .small()
                    .color(pal.note),
                );
            }
        }
        let (v_lo, v_hi) = drawn
            .iter()
            .flat_map(|w| w.iter().map(|p| p[1]))
            .filter(|v| v.is_finite())
            .fold((floor.min(shown.min_v), d.nominal_v), |(lo, hi), v| (lo.min(v), hi.max(v)));
        // The markers too: a dip narrower than the drawn points' spacing is missing from the line, not from the
        // figures (they come from the full-resolution run).
        let marked_lo = match &pattern {
            Some(Ok(p)) if pattern_fits => shown.min_v.min(p.min_v),
            _ => shown.min_v,
        };
        let line_lo = v_lo;
        let (v_lo, v_hi) = (v_lo.min(marked_lo), v_hi);
        let pad = (v_hi - v_lo).max(d.allowed_v) * 0.08;
        if line_lo - marked_lo > 0.05 * (d.nominal_v - marked_lo) {
            ui.label(
                RichText::new(format!(
                    "The lowest point (diamond) is a dip narrower than the drawn points ({} apart): zoom in on it to \
                     see its shape; the figures are from the full-resolution run.",
                    format(d.window_s / (shown.waveform.len().max(2) - 1) as f64, Unit::Second)
                ))
                .small()
                .weak(),
            );
        }
        // egui_plot labels its own grid on plain numbers, and times of nanoseconds to microseconds confuse it:
        // plot time in a unit that puts the window between 1 and 1000 of it.
        let (k, unit) = time_unit(t_end);
        let scaled = |w: &[[f64; 2]]| -> Vec<[f64; 2]> { w.iter().map(|p| [p[0] * k, p[1]]).collect() };
        // The plot keeps its view while the droop follows a drag; showing the pattern starts a fresh view.
        let shown = Plot::new(("droop", index, pattern.is_some()))
            .default_x_bounds(0.0, t_end * k)
            .default_y_bounds(v_lo - pad, v_hi + pad)
            .x_grid_spacer(linear_marks)
            .y_grid_spacer(linear_marks)
            .x_axis_formatter(move |m: GridMark, r: &RangeInclusive<f64>| {
                // A label centred on the very end of the axis would be cut in half: leave it out.
                let span = r.end() - r.start();
                if r.end() - m.value < 0.03 * span { String::new() } else { format!("{} {unit}", trim_number(m.value)) }
            })
            .y_axis_formatter(|m: GridMark, r: &RangeInclusive<f64>| volt_label(m, r))
            // The time axis zooms and pans; the voltage axis keeps the range that holds the nominal, the floor and
            // the minimum, so the wheel cannot carry the curve out of view nor squeeze the ticks together.
            .allow_zoom([true, false])
            .allow_drag([true, false])
            .allow_scroll([true, false])
            .x_axis_label(format!("time after the step starts ({unit})"))
            .y_axis_label("rail voltage")
            .y_axis_min_width(56.0)
            .label_formatter(|pos| {
                let (name, p) = match pos {
                    HoverPosition::NearDataPoint { plot_name, position, .. } => (*plot_name, *position),
                    HoverPosition::Elsewhere { position } => ("", *position),
                };
                Some(format!("{name}\n{}\n{}", format(p.x / k, Unit::Second), format_sig(p.y, Unit::Volt, 4)))
            })
            .show(ui, |pu| {
                if let Some(Ok(_)) = &pattern {
                    for pulse in shown.worst_case.pattern() {
                        pu.polygon(
                            Polygon::new(
                                "load on",
                                PlotPoints::from(vec![
                                    [pulse.on_s * k, -1e3],
                                    [pulse.off_s * k, -1e3],
                                    [pulse.off_s * k, 1e3],
                                    [pulse.on_s * k, 1e3],
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
                    pu.line(
                        Line::new("at the board node", PlotPoints::from(scaled(&b.waveform))).color(pal.other_view),
                    );
                }
                if let Some(Ok(p)) = &pattern {
                    pu.line(
                        Line::new("worst-case pattern", PlotPoints::from(scaled(&p.waveform)))
                            .color(pal.worst)
                            .width(1.5),
                    );
                    pu.points(
                        Points::new("pattern's lowest", vec![[p.t_min_s * k, p.min_v]])
                            .shape(MarkerShape::Diamond)
                            .radius(5.0)
                            .color(pal.worst),
                    );
                }
                pu.line(
                    Line::new("after the step", PlotPoints::from(scaled(shown.waveform))).color(pal.curve).width(2.5),
                );
                pu.points(
                    Points::new("lowest", vec![[shown.t_min_s * k, shown.min_v]])
                        .shape(MarkerShape::Diamond)
                        .radius(6.0)
                        .color(if shown.meets { pal.ok } else { pal.fail }),
                );
            });
        self.plot_rect = Some(shown.response.rect);
    }
}

/// The step the time view draws: the rail's own, or on a placed rail one load's (the chosen one, else the worst).
struct Shown<'a> {
    /// The load drawn, on a placed rail, and its index among the rail's loads.
    load: Option<&'a LoadDroop>,
    at: Option<usize>,
    waveform: &'a [[f64; 2]],
    min_v: f64,
    t_min_s: f64,
    droop_v: f64,
    meets: bool,
    node: View,
    /// The worst on/off pattern at the point drawn.
    worst_case: &'a WorstCase,
}

impl<'a> Shown<'a> {
    /// Load `chosen` of a placed rail's droop, or its worst load; the droop itself on a lumped rail.
    fn of(d: &'a Droop, chosen: Option<usize>) -> Shown<'a> {
        let at = chosen.filter(|&k| k < d.loads.len()).or_else(|| d.worst_load_index());
        match at.map(|k| (k, &d.loads[k])) {
            Some((k, l)) => Shown {
                load: Some(l),
                at: Some(k),
                waveform: &l.waveform,
                min_v: l.min_v,
                t_min_s: l.t_min_s,
                droop_v: l.droop_v,
                meets: l.meets,
                node: l.view,
                worst_case: &l.worst_case,
            },
            None => Shown {
                load: None,
                at: None,
                waveform: &d.waveform,
                min_v: d.min_v,
                t_min_s: d.t_min_s,
                droop_v: d.droop_v,
                meets: d.meets,
                node: d.node,
                worst_case: &d.worst_case,
            },
        }
    }
}

/// The factor and unit name that put a time window of `window_s` between 1 and 1000 of the unit.
fn time_unit(window_s: f64) -> (f64, &'static str) {
    match window_s {
        w if w < 1e-6 => (1e9, "ns"),
        w if w < 1e-3 => (1e6, "µs"),
        w if w < 1.0 => (1e3, "ms"),
        _ => (1.0, "s"),
    }
}

/// Grid marks on a linear axis every 1, 2 or 5 × 10ⁿ, about six to a view, labelled; with unlabelled marks
/// five times as dense between them. (egui_plot's own spacer labels only every tenth mark on a narrow plot.)
pub fn linear_marks(input: egui_plot::GridInput) -> Vec<GridMark> {
    let (lo, hi) = input.bounds;
    if !lo.is_finite() || !hi.is_finite() || hi <= lo {
        return Vec::new();
    }
    let rough = (hi - lo) / 6.0;
    let decade = 10f64.powf(rough.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0].into_iter().map(|m| m * decade).find(|s| *s >= rough).unwrap_or(10.0 * decade);
    let minor = step / 5.0;
    let first = (lo / minor).ceil() as i64;
    let last = (hi / minor).floor() as i64;
    (first..=last)
        .map(|n| {
            let value = n as f64 * minor;
            let major = n.rem_euclid(5) == 0;
            GridMark { value, step_size: if major { step } else { minor } }
        })
        .collect()
}

/// A voltage tick's label: only the labelled (major) marks, with as many decimals as their spacing needs, so
/// neighbouring labels never read the same ("1.071 V" on every tick).
pub fn volt_label(mark: GridMark, range: &RangeInclusive<f64>) -> String {
    let major = linear_marks(egui_plot::GridInput { bounds: (*range.start(), *range.end()), base_step_size: 0.0 })
        .iter()
        .map(|m| m.step_size)
        .fold(0.0, f64::max);
    if major <= 0.0 || (mark.step_size - major).abs() > 1e-9 * major {
        return String::new();
    }
    let decimals = (-major.log10().floor()).max(0.0) as usize;
    let value = if mark.value.abs() < 0.5 * major * 1e-6 { 0.0 } else { mark.value };
    format!("{value:.decimals$} V")
}

/// A grid value as a short plain number ("2.5", "10", "0.25").
fn trim_number(v: f64) -> String {
    let text = format!("{v:.3}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" { "0".into() } else { text.into() }
}

/// The key to the time plot, above it.
fn time_key(ui: &mut Ui, pal: &theme::Palette, d: &Droop, pattern: bool) {
    // Each entry is one label (a coloured dash and its words), so the row wraps between entries, never inside.
    let entry = |ui: &mut Ui, color: egui::Color32, text: &str| {
        let mut job = egui::text::LayoutJob::default();
        let font = egui::TextStyle::Small.resolve(ui.style());
        let words = ui.visuals().text_color();
        job.append("—— ", 0.0, egui::TextFormat { font_id: font.clone(), color, ..Default::default() });
        job.append(text, 0.0, egui::TextFormat { font_id: font, color: words, ..Default::default() });
        ui.label(job);
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn voltage_labels_stay_distinct_at_any_zoom() {
        for (lo, hi) in [(0.80, 0.86), (1.0705, 1.0718), (3.2, 3.4), (0.0, 12.0)] {
            let r = lo..=hi;
            let labels: Vec<String> = linear_marks(egui_plot::GridInput { bounds: (lo, hi), base_step_size: 0.0 })
                .into_iter()
                .map(|m| volt_label(m, &r))
                .filter(|l| !l.is_empty())
                .collect();
            assert!(labels.len() >= 2, "{lo}..{hi}: {labels:?}");
            let mut unique = labels.clone();
            unique.dedup();
            assert_eq!(unique, labels, "{lo}..{hi}: neighbouring labels differ");
        }
        let r = 1.0705..=1.0718;
        assert_eq!(volt_label(GridMark { value: 1.0711, step_size: 0.0001 }, &r), "");
        assert_eq!(volt_label(GridMark { value: 1.0715, step_size: 0.0005 }, &r), "1.0715 V");
    }

    #[test]
    fn linear_marks_are_round_and_labelled_every_fifth() {
        let marks = linear_marks(egui_plot::GridInput { bounds: (0.0, 55.0), base_step_size: 0.1 });
        let major: Vec<f64> = marks.iter().filter(|m| m.step_size == 10.0).map(|m| m.value).collect();
        assert_eq!(major, vec![0.0, 10.0, 20.0, 30.0, 40.0, 50.0]);
        // A wider view steps by 20.
        let wide = linear_marks(egui_plot::GridInput { bounds: (0.0, 61.0), base_step_size: 0.1 });
        let major: Vec<f64> = wide.iter().filter(|m| m.step_size == 20.0).map(|m| m.value).collect();
        assert_eq!(major, vec![0.0, 20.0, 40.0, 60.0]);
        assert!(marks.iter().any(|m| (m.value - 2.0).abs() < 1e-12 && m.step_size == 2.0));
        assert!(linear_marks(egui_plot::GridInput { bounds: (1.0, 1.0), base_step_size: 0.1 }).is_empty());
        assert_eq!(time_unit(60e-6), (1e6, "µs"));
        assert_eq!(trim_number(2.500), "2.5");
        assert_eq!(trim_number(-0.0001), "0");
    }
}
