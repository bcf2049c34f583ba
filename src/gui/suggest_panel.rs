//! "Suggest" for the selected rail: choose candidate parts (the built-in shelf, the board's own parts, another
//! board file), the objective and the limits; the search runs on a thread so the window stays live; the options
//! come back with their figures, can be pinned on the plot to compare, and one can be applied as a single
//! undoable edit.

use super::app::App;
use super::commands::Command;
use super::history::Edit;
use super::jobs::{Job, Poll};
use super::pins::Pin;
use super::results::{Look, compute_with};
use super::status::Status;
use super::theme;
use crate::analysis::{
    Candidate, CornerFigures, MixOption, Objective, SuggestOptions, Suggestion, VERDICT_CORNER, apply_mix, area_words,
    corner_words, cost_words, default_mounting_h, offered_parts, plural, ranges, spot_words, suggest,
};
use crate::io::read_board_keeping_unusable;
use crate::model::Board;
use crate::physics::Corner;
use crate::units::{Unit, format};
use egui::{RichText, Ui};
use std::collections::BTreeSet;
use std::path::PathBuf;

/// What a search was asked on, kept with its answer so that "apply" fits the mix to the board it was found for.
#[derive(Debug, Clone)]
pub struct SearchRun {
    /// Rail index.
    pub rail: usize,
    /// The rail's name, to say which rail the options are for.
    pub rail_name: String,
    /// The board's revision when the search started: a later edit makes the options stale.
    pub revision: u64,
    /// The candidates, in the order of each option's counts.
    pub candidates: Vec<Candidate>,
    /// Whether the rail's existing groups were kept.
    pub keep_existing: bool,
    /// The margin asked, dB.
    pub margin_db: f64,
    /// The corner the options were judged in.
    pub corner: Corner,
}

/// The suggest panel's choices and its last search.
pub struct SuggestState {
    /// Offer the built-in shelf's parts.
    pub from_shelf: bool,
    /// Offer the board's own parts.
    pub from_board: bool,
    /// Another board file whose parts are offered, and what reading it gave.
    pub other: Option<(PathBuf, Result<Board, String>)>,
    /// Part ids the user took out of the offer.
    pub excluded: BTreeSet<String>,
    /// The search's settings as the user set them (the engine's own options type, so every setting the engine
    /// takes is here once).
    pub settings: SuggestOptions,
    /// On a placed rail: the load the new parts go beside (`None`: the one that fares worst).
    pub beside: Option<usize>,
    shelf: Option<Result<Board, String>>,
    running: Option<(SearchRun, Job<Result<Suggestion, String>>)>,
    /// The last search's run and answer.
    pub done: Option<(SearchRun, Result<Suggestion, String>)>,
}

impl Default for SuggestState {
    fn default() -> Self {
        SuggestState {
            from_shelf: true,
            from_board: false,
            other: None,
            excluded: BTreeSet::new(),
            settings: SuggestOptions::default(),
            beside: None,
            shelf: None,
            running: None,
            done: None,
        }
    }
}

impl SuggestState {
    /// Forget the search running and its answer (a new board replaced the one they were for).
    pub fn forget(&mut self) {
        self.running = None;
        self.done = None;
    }

    /// True while a search runs.
    pub fn is_running(&self) -> bool {
        self.running.is_some()
    }

    /// The parts offered for a rail at `rail_v` by the chosen sources, before the user's exclusions.
    fn offered(&mut self, board: &Board, rail_v: f64) -> Vec<crate::model::Part> {
        if self.from_shelf && self.shelf.is_none() {
            self.shelf = Some(crate::samples::shelf().map_err(|e| e.lines().join("; ")));
        }
        let shelf = self.shelf.as_ref().and_then(|s| s.as_ref().ok()).filter(|_| self.from_shelf);
        let own = Some(board).filter(|_| self.from_board);
        let other = self.other.as_ref().and_then(|(_, b)| b.as_ref().ok());
        offered_parts(shelf.into_iter().chain(own).chain(other), rail_v)
    }

    /// Take the answer of a running search when it has come.
    fn poll(&mut self) {
        let Some((_, job)) = &mut self.running else { return };
        let answer = match job.poll() {
            Poll::Done(answer) => answer,
            Poll::Running => return,
            Poll::Lost => Err("the search stopped without an answer".into()),
        };
        if let Some((run, _)) = self.running.take() {
            self.done = Some((run, answer));
        }
    }
}

/// The parts of an option in words: "3 × a + 5 × b".
fn mix_words(candidates: &[Candidate], counts: &[u32]) -> String {
    let parts: Vec<String> =
        candidates.iter().zip(counts).filter(|(_, n)| **n > 0).map(|(c, n)| format!("{n} × {}", c.part.id)).collect();
    if parts.is_empty() { "no parts added".into() } else { parts.join(" + ") }
}

impl App {
    /// Start a search for the selected rail with the panel's choices.
    pub fn start_suggest(&mut self) {
        let index = self.view.selected_rail;
        let Some(rail) = self.doc.board.rails.get(index).cloned() else { return };
        let s = &mut self.suggest;
        let mounting_h = default_mounting_h(&rail);
        let candidates: Vec<Candidate> = s
            .offered(&self.doc.board, rail.voltage_v)
            .into_iter()
            .filter(|p| !s.excluded.contains(&p.id) && p.unusable().is_none())
            .map(|part| Candidate { part, mounting_h })
            .collect();
        let settings = &s.settings;
        // On a placed rail the new parts go beside the chosen load (or, by default, the one that fares worst).
        let spot_m = rail.placement.as_ref().zip(s.beside).and_then(|(p, k)| p.beside_load(k));
        let options = SuggestOptions {
            line_cost: if settings.objective == Objective::Cost { settings.line_cost } else { 0.0 },
            options: settings.options.max(1),
            spot_m,
            ..*settings
        };
        let run = SearchRun {
            rail: index,
            rail_name: rail.name.clone(),
            revision: self.doc.history.revision(),
            candidates: candidates.clone(),
            keep_existing: options.keep_existing,
            margin_db: options.margin_db,
            corner: options.corner,
        };
        let board = self.doc.board.clone();
        // The search takes up to about a second: on its own thread the window keeps drawing meanwhile.
        let job =
            Job::start("suggest", move || suggest(&board, index, &candidates, &options).map_err(|e| e.to_string()));
        s.running = Some((run, job));
        s.done = None;
    }

    /// Pin option `n` of the last search on the plot (or, past the options, the closest mix of a search that
    /// found none), drawn from the board with that mix applied.
    pub fn pin_option(&mut self, n: usize) {
        let Some((run, Ok(s))) = &self.suggest.done else { return };
        let Some(option) = s.options.get(n).or(s.closest.as_ref().filter(|_| n == s.options.len())) else { return };
        let label = if n < s.options.len() { format!("option {}", n + 1) } else { "closest mix".into() };
        if run.rail >= self.doc.board.rails.len() {
            return;
        }
        let board = apply_mix(&self.doc.board, run.rail, &run.candidates, &option.counts, run.keep_existing, s.spot_m);
        let Some(result) =
            compute_with(&board, run.rail, Look { both_views: false, worst_corner: false, ..self.view.results.look() })
        else {
            return;
        };
        let slot = self.view.next_pin - 1;
        self.view.next_pin += 1;
        self.view.pins.push(Pin::of(label, run.rail_name.clone(), slot, &result));
    }

    /// Apply option `n` of the last search to the board as one undoable edit: the candidates it uses are added
    /// to the board's parts and the rail's groups are set.
    pub fn apply_option(&mut self, n: usize) {
        let Some((run, Ok(s))) = &self.suggest.done else { return };
        // Only an option that qualifies is ever applied (the closest mix of a failed search is not one).
        let Some(option) = s.options.get(n).filter(|o| o.accepted) else { return };
        if run.revision != self.doc.history.revision() || run.rail >= self.doc.board.rails.len() {
            self.status = Some(Status::error("The board changed since this search: find mixes again."));
            return;
        }
        let board = apply_mix(&self.doc.board, run.rail, &run.candidates, &option.counts, run.keep_existing, s.spot_m);
        let label = format!("apply suggested option {} to {}", n + 1, run.rail_name);
        match self.edit(Edit::SetBoard { value: Box::new(board) }, label.clone(), false) {
            Ok(()) => {
                // The options were found for the board as it was; after the edit they are history.
                self.suggest.done = None;
                self.status = Some(Status::info(format!("Applied: {label}. Undo takes it back in one step.")));
            }
            Err(problems) => {
                let why: Vec<String> = problems.iter().map(|p| format!("{}: {}", p.path, p.reason)).collect();
                self.status = Some(Status::error(format!("Could not apply the option: {}", why.join("; "))));
            }
        }
    }

    /// The suggest panel.
    pub(super) fn suggest_panel(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        self.suggest.poll();
        let index = self.view.selected_rail;
        let Some(rail) = self.doc.board.rails.get(index).cloned() else { return };
        ui.label(RichText::new(format!("Find capacitor mixes for {}", rail.name)).strong());
        ui.label(
            RichText::new(
                "Mixes of the candidate parts that meet the target over the band, least first by the objective. \
                 Shelf values are generic, typical and recalled: replace them with your parts' data.",
            )
            .small()
            .weak(),
        );
        let s = &mut self.suggest;
        ui.checkbox(&mut s.from_shelf, "parts from the built-in shelf");
        ui.checkbox(&mut s.from_board, "this board's own parts");
        ui.horizontal(|ui| {
            if ui.button("Parts from another board file…").clicked()
                && let Some(path) = super::files::pick_open(None)
            {
                let read = read_board_keeping_unusable(&path).map_err(|e| e.lines().join("; "));
                s.other = Some((path, read));
            }
            if s.other.is_some() && ui.small_button("Leave it out").clicked() {
                s.other = None;
            }
        });
        if let Some((path, read)) = &s.other {
            match read {
                Ok(b) => ui.label(format!("{} ({} parts)", path.display(), b.parts.len())),
                Err(e) => ui.label(RichText::new(e).color(pal.fail)),
            };
        }
        let offered = s.offered(&self.doc.board, rail.voltage_v);
        if let Some(Err(e)) = s.shelf.as_ref().filter(|_| s.from_shelf) {
            ui.label(RichText::new(format!("The built-in shelf could not be read: {e}")).color(pal.fail));
        }
        let chosen = offered.iter().filter(|p| !s.excluded.contains(&p.id)).count();
        egui::CollapsingHeader::new(format!("Candidates: {chosen} of {} offered", offered.len()))
            .id_salt("suggest-candidates")
            .show(ui, |ui| {
                ui.label(
                    RichText::new(format!(
                        "Parts rated below the rail's {} are not offered.",
                        format(rail.voltage_v, Unit::Volt)
                    ))
                    .small()
                    .weak(),
                );
                for p in &offered {
                    let mut on = !s.excluded.contains(&p.id);
                    let text = format!(
                        "{} · {} · {}",
                        p.id,
                        format(p.capacitance_f, Unit::Farad),
                        p.case.clone().unwrap_or_else(|| p.kind.name().to_string())
                    );
                    if ui.checkbox(&mut on, text).changed() {
                        if on {
                            s.excluded.remove(&p.id);
                        } else {
                            s.excluded.insert(p.id.clone());
                        }
                    }
                }
            });
        egui::Grid::new("suggest-limits").num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
            ui.label("Least");
            ui.horizontal(|ui| {
                ui.radio_value(&mut s.settings.objective, Objective::Cost, "cost");
                ui.radio_value(&mut s.settings.objective, Objective::Count, "count");
                ui.radio_value(&mut s.settings.objective, Objective::Area, "area");
            });
            ui.end_row();
            let l = ui.label("Most parts in all");
            ui.add(egui::DragValue::new(&mut s.settings.max_total).range(1..=ranges::MAX_TOTAL)).labelled_by(l.id);
            ui.end_row();
            let l = ui.label("Most of one part");
            ui.add(egui::DragValue::new(&mut s.settings.max_per_part).range(1..=ranges::MAX_PER_PART))
                .labelled_by(l.id);
            ui.end_row();
            let l = ui.label("Most kinds of part");
            ui.add(egui::DragValue::new(&mut s.settings.max_kinds).range(1..=ranges::MAX_KINDS)).labelled_by(l.id);
            ui.end_row();
            let l = ui.label("Cost per new line item");
            ui.add_enabled(
                s.settings.objective == Objective::Cost,
                egui::DragValue::new(&mut s.settings.line_cost).range(0.0..=ranges::LINE_COST).speed(0.01),
            )
            .labelled_by(l.id);
            ui.end_row();
            let l = ui.label("Margin under target, dB");
            ui.add(
                egui::DragValue::new(&mut s.settings.margin_db)
                    .range(0.0..=ranges::MARGIN_DB)
                    .speed(0.1)
                    .fixed_decimals(1),
            )
            .labelled_by(l.id);
            ui.end_row();
            ui.label("Meet target in");
            // One under the other: side by side they are wider than the column.
            ui.vertical(|ui| {
                ui.radio_value(&mut s.settings.corner, VERDICT_CORNER, "the check's corner");
                ui.radio_value(&mut s.settings.corner, Corner::Worst, "the worst corner");
            });
            ui.end_row();
            let l = ui.label("Options to show");
            ui.add(egui::DragValue::new(&mut s.settings.options).range(1..=ranges::OPTIONS)).labelled_by(l.id);
            ui.end_row();
        });
        ui.checkbox(&mut s.settings.droop, "also keep the step droop within the allowed band (slower)");
        ui.checkbox(&mut s.settings.keep_existing, "keep the rail's existing groups (else the mix replaces them)");
        if rail.placement.is_some() {
            ui.horizontal(|ui| {
                let none = "the load that fares worst";
                super::load_choice::load_choice(
                    ui,
                    "suggest-beside",
                    "New parts go beside",
                    &rail,
                    none,
                    &mut s.beside,
                );
            });
        }
        ui.label(
            RichText::new(format!(
                "Each candidate is mounted with {} (the mean of the rail's groups, or 0.5 nH on a rail with none).",
                format(default_mounting_h(&rail), Unit::Henry)
            ))
            .small()
            .weak(),
        );
        let running = s.is_running();
        if ui.add_enabled(!running && chosen > 0, egui::Button::new("Find mixes")).clicked() {
            self.start_suggest();
        }
        if self.suggest.is_running() {
            ui.horizontal(|ui| {
                ui.add(egui::Spinner::new());
                ui.label("Searching…");
            });
            // Look for the answer again shortly, even if the user does nothing.
            ui.ctx().request_repaint_after(std::time::Duration::from_millis(50));
            return;
        }
        self.suggest_options(ui, &pal);
    }

    fn suggest_options(&mut self, ui: &mut Ui, pal: &theme::Palette) {
        let Some((run, answer)) = &self.suggest.done else { return };
        ui.separator();
        let s = match answer {
            Ok(s) => s,
            Err(reason) => {
                ui.label(RichText::new(reason).color(pal.fail));
                return;
            }
        };
        let stale = run.revision != self.doc.history.revision();
        let mut title = if s.options.is_empty() {
            format!("No option for {}", run.rail_name)
        } else {
            format!("{} for {}", plural(s.options.len() as u64, "option", "options"), run.rail_name)
        };
        if s.exhaustive {
            title.push_str(" (every combination tried)");
        }
        ui.label(RichText::new(title).strong());
        ui.label(
            RichText::new(format!(
                "Each option must meet target ({}) with {:.1} dB margin (|Z| at most {}) in the {} corner.",
                format(s.target_ohm, Unit::Ohm),
                run.margin_db,
                format(s.required_ohm, Unit::Ohm),
                run.corner.name()
            ))
            .small(),
        );
        if let Some(rail) = self.doc.board.rails.get(run.rail) {
            let spot = spot_words(rail, s);
            if !spot.is_empty() {
                ui.label(RichText::new(spot).small());
            }
        }
        if let Some(n) = s.shortlisted {
            ui.label(
                RichText::new(format!(
                    "The {} candidates were cut to the {n} that could matter.",
                    run.candidates.len()
                ))
                .small()
                .weak(),
            );
        }
        if stale {
            ui.label(
                RichText::new("The board changed since this search: find mixes again to apply one.").color(pal.note),
            );
        }
        if let Some(f) = &s.shortfall {
            ui.label(RichText::new(f.words()).color(pal.note));
        }
        for b in &s.blockers {
            ui.label(RichText::new(b.words()).color(pal.fail));
        }
        let (mut pin, mut apply) = (None, None);
        let pin_all = s.options.len() > 1 && ui.button("Pin every option to compare on the plot").clicked();
        for (n, o) in s.options.iter().enumerate() {
            egui::Frame::group(ui.style()).show(ui, |ui| {
                ui.label(
                    RichText::new(format!("option {}: {}", n + 1, mix_words(&run.candidates, &o.counts))).strong(),
                );
                option_figures(ui, pal, o);
                ui.horizontal(|ui| {
                    if ui.button(format!("Pin option {}", n + 1)).clicked() {
                        pin = Some(n);
                    }
                    if o.accepted
                        && ui.add_enabled(!stale, egui::Button::new(format!("Apply option {}", n + 1))).clicked()
                    {
                        apply = Some(n);
                    }
                });
            });
        }
        if let Some(c) = &s.closest {
            egui::Frame::group(ui.style()).show(ui, |ui| {
                ui.label(
                    RichText::new(format!("closest mix found: {}", mix_words(&run.candidates, &c.counts))).strong(),
                );
                ui.label(RichText::new("It misses, so it is not offered to apply.").color(pal.fail));
                option_figures(ui, pal, c);
                if ui.button("Pin the closest mix").clicked() {
                    pin = Some(s.options.len());
                }
            });
        }
        if pin_all {
            for n in 0..s.options.len() {
                self.ask(Command::PinOption(n));
            }
        }
        if let Some(n) = pin {
            self.ask(Command::PinOption(n));
        }
        if let Some(n) = apply {
            self.ask(Command::ApplyOption(n));
        }
    }
}

/// An option's figures: the judged corner, the other corner, the droop, count, kinds, cost and area.
fn option_figures(ui: &mut Ui, pal: &theme::Palette, o: &MixOption) {
    let corner = |ui: &mut Ui, c: &CornerFigures| {
        ui.horizontal_wrapped(|ui| {
            let (word, color) = if c.meets_target { ("meets target", pal.ok) } else { ("misses target", pal.fail) };
            ui.label(format!("{} corner:", c.corner.name()));
            ui.label(RichText::new(word).color(color));
            ui.label(corner_words(c));
        });
    };
    corner(ui, &o.judged);
    corner(ui, &o.other);
    if let Some(d) = &o.droop {
        let (word, color) = if d.meets { ("within", pal.ok) } else { ("outside", pal.fail) };
        ui.horizontal_wrapped(|ui| {
            ui.label(format!("step droop {}", format(d.droop_v, Unit::Volt)));
            ui.label(RichText::new(word).color(color));
            ui.label(format!("the {} allowed", format(d.allowed_v, Unit::Volt)));
        });
    }
    ui.label(format!(
        "{} · {} · {} · {}",
        plural(o.count as u64, "part", "parts"),
        plural(o.kinds as u64, "kind", "kinds"),
        cost_words(o),
        area_words(o.area_m2)
    ));
}
