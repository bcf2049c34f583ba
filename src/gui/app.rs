//! The planner window's state and the order of one frame's work: input and shortcuts, analysis, panels, dialogs,
//! title and autosave. Each panel lives in its own file as a method of [`App`].

use super::commands::Command;
use super::files::{self, LeftOver, Prefs, Store};
use super::history::{Edit, History, Refusal};
use super::number_field::Fields;
use super::pins::Pin;
use super::results::Results;
use super::status::{Status, StatusKind};
use super::theme;
use crate::io::{BoardError, read_board_keeping_unusable, read_board_keeping_unusable_traced, write_board};
use crate::model::Board;
use egui::{Key, KeyboardShortcut, Modifiers, RichText, Ui, ViewportCommand};
use std::path::{Path, PathBuf};

/// What the status line says when a file dialog comes back without a file.
pub(super) const NO_FILE_CHOSEN: &str = "No file chosen (if no dialog appeared, this desktop offers no file-dialog service: \
                              type the path in the window's path field, or drop a board file onto the window).";

/// Seconds between autosaves of unsaved work.
const AUTOSAVE_EVERY_S: f64 = 3.0;

/// The board being planned and where it came from.
#[derive(Debug, Clone)]
pub struct Document {
    /// The board.
    pub board: Board,
    /// The file it was read from or last saved to; `None` for the built-in sample or restored new work.
    pub path: Option<PathBuf>,
    /// How the document is named in the title.
    pub label: String,
    /// Its edits, for undo/redo and the unsaved-changes mark.
    pub history: History,
    /// SHA-256 of the bytes the board was read from or last saved as (what a report of the unchanged board
    /// judged, even if the file on disk changes later); `None` when the board came from elsewhere (a test).
    pub sha256: Option<String>,
}

/// Which page the side panel shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SideTab {
    /// The selected rail's inputs.
    Rail,
    /// The board's parts.
    Parts,
    /// Suggested mixes for the selected rail.
    Suggest,
    /// The method in brief and the cautions.
    Help,
}

/// What the middle of the window shows for the selected rail.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CentralTab {
    /// |Z(f)| against the target.
    Impedance,
    /// The voltage after a load step.
    Time,
    /// Where the placed rail's parts sit, beside its |Z(f)|.
    Map,
}

/// Which findings the findings list shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FindingsTab {
    /// The selected rail's.
    Rail,
    /// Every rail's.
    Board,
}

/// Something the user asked for that would discard unsaved changes, waiting for their answer.
#[derive(Debug, Clone, PartialEq)]
pub enum Pending {
    /// Open this file.
    Open(PathBuf),
    /// Ask for a file to open.
    OpenDialog,
    /// Close the window.
    Close,
    /// Start a new board.
    New,
}

/// What the window shows of one document, reset in one place ([`App::replace_document`]) whenever another
/// document takes its place: selections, typed texts, pins, plot views, the cache of the engine's answers.
#[derive(Default)]
pub struct DocView {
    /// The engine's answers for the document's rails (its `Look` is the window's and outlives the document).
    pub(super) results: Results,
    pub(super) selected_rail: usize,
    /// (rail, index into that rail's findings).
    pub(super) selected_finding: Option<(usize, usize)>,
    /// The selection was made on the plot: bring it into view in the findings list.
    pub(super) scroll_to_finding: bool,
    pub(super) pins: Vec<Pin>,
    /// The number of the next pin (pins restored from the store count before it).
    pub(super) next_pin: usize,
    /// The pins last kept in the store and the board file they were kept for: the store is written when the
    /// pins or the file change.
    pub(super) kept_pins: Option<(PathBuf, Vec<Pin>)>,
    /// Each rail's home view on the plot, by rail index.
    pub(super) home_views: std::collections::HashMap<usize, super::plot::HomeView>,
    /// Go back to the selected rail's home view on the next frame (a double-click on the plot asked for it).
    pub(super) reset_plot: bool,
    /// Texts typed into fields and their refusals.
    pub(super) fields: Fields,
    pub(super) selected_part: usize,
    /// The last yield estimated: the rail, the board it was drawn for (shown only while the board is unchanged)
    /// and the answer.
    pub(super) yield_shown: Option<(usize, Board, crate::analysis::YieldEstimate)>,
    /// A yield being estimated: the rail, the board it draws from and the job.
    pub(super) yield_job: Option<(usize, Board, super::jobs::Job<Option<crate::analysis::YieldEstimate>>)>,
    /// The worst-case pattern's response in the time view.
    pub(super) pattern: Option<super::time_view::PatternView>,
    /// A board file that could not be opened, shown until dismissed or until another document comes.
    pub(super) load_error: Option<BoardError>,
    /// The window's own path field, open when a file dialog gave no answer.
    pub(super) path_prompt: Option<super::exports::PathPrompt>,
    /// The board map's view, field, modes and forms.
    pub(super) map: super::board_map::MapState,
}

impl DocView {
    /// A fresh view of a document, looking at rails the way `look` says.
    fn new(look: super::results::Look) -> DocView {
        let mut view = DocView { next_pin: 1, ..DocView::default() };
        view.results.set_look(look);
        view
    }
}

/// The planner window: its state in four groups, so that a change knows where it belongs.
///
/// - `prefs` (with `store`, where they live): kept between sessions (theme, recent files).
/// - `doc`: the document (board, file, history).
/// - `view`: what the window shows of this document; replaced with the document.
/// - the rest: the window's own state for this session (tabs, options, dialogs, the status line, background jobs),
///   which outlives a document.
///
/// Panels do not change the board themselves: they queue [`Command`]s, applied once per frame in
/// [`App::apply_commands`].
pub struct App {
    pub(super) prefs: Prefs,
    pub(super) store: Store,
    pub(super) doc: Document,
    pub(super) view: DocView,
    /// What the panels asked for this frame, applied after they are drawn.
    pub(super) commands: Vec<Command>,
    /// The review report being written on its own thread, if any.
    pub(super) report_job: Option<super::exports::ReportJob>,
    /// The size of an exported plot, pixels.
    pub(super) plot_export_size: [u32; 2],
    pub(super) show_group_curves: bool,
    pub(super) side_tab: SideTab,
    pub(super) central_tab: CentralTab,
    /// The time view also draws the worst-case load pattern.
    pub(super) show_worst_pattern: bool,
    /// The suggest panel's choices (kept across documents) and its search (forgotten with the document).
    pub(super) suggest: super::suggest_panel::SuggestState,
    /// Where the plot (or the time view's plot) was drawn last frame, in points.
    pub(super) plot_rect: Option<egui::Rect>,
    pub(super) coupling: super::coupling_tool::CouplingTool,
    pub(super) findings_tab: FindingsTab,
    /// The last thing that happened, for the status line.
    pub(super) status: Option<Status>,
    pub(super) pending: Option<Pending>,
    pub(super) left_over: Option<LeftOver>,
    allow_close: bool,
    /// A count drag has started and has not made its first step yet.
    pub(super) drag_fresh: bool,
    autosaved_revision: u64,
    last_autosave_s: f64,
    title: String,
    theme_applied: Option<bool>,
}

impl App {
    /// A window on `board`, keeping nothing on disk (no recent files, no autosave): for tests and benchmarks.
    pub fn new_with_board(board: Board, label: impl Into<String>, path: Option<PathBuf>) -> App {
        App {
            prefs: Prefs::default(),
            store: Store::new(None),
            doc: Document { board, path, label: label.into(), history: History::new(), sha256: None },
            view: DocView::new(Default::default()),
            commands: Vec::new(),
            report_job: None,
            plot_export_size: [1200, 700],
            show_group_curves: false,
            side_tab: SideTab::Rail,
            central_tab: CentralTab::Impedance,
            show_worst_pattern: false,
            suggest: Default::default(),
            plot_rect: None,
            coupling: Default::default(),
            findings_tab: FindingsTab::Rail,
            status: None,
            pending: None,
            left_over: None,
            allow_close: false,
            drag_fresh: false,
            autosaved_revision: 0,
            last_autosave_s: 0.0,
            title: String::new(),
            theme_applied: None,
        }
    }

    /// The window as the program opens it: on `path` (or the built-in sample when `None` or when the file is
    /// broken, with its errors shown), with recent files, theme and autosave kept in `store`.
    pub fn open(path: Option<&Path>, store: Store) -> App {
        let sample_label = format!("built-in sample ({})", crate::samples::DEFAULT_SAMPLE_NAME);
        let sample = || {
            let mut app = match crate::samples::default_board() {
                Ok(b) => App::new_with_board(b, sample_label.clone(), None),
                // The built-in sample is checked by the tests; should it ever fail, start from an empty-looking
                // but valid board rather than panic.
                Err(_) => return App::new_with_board(fallback_board(), sample_label.clone(), None),
            };
            app.doc.sha256 = Some(crate::io::sha256_hex(crate::samples::default_board_text().as_bytes()));
            app
        };
        let mut app = match path {
            None => sample(),
            Some(p) => match read_board_keeping_unusable_traced(p) {
                Ok((board, sha256)) => {
                    let mut app = App::new_with_board(board, file_label(p), Some(p.to_path_buf()));
                    app.doc.sha256 = Some(sha256);
                    app
                }
                Err(e) => {
                    let mut app = sample();
                    app.view.load_error = Some(e);
                    app
                }
            },
        };
        app.prefs = store.load_prefs();
        if let Some(p) = path.filter(|_| app.view.load_error.is_none()) {
            app.prefs.add_recent(p);
            let _ = store.save_prefs(&app.prefs);
        }
        app.left_over = store.find_left_over();
        app.store = store;
        app.restore_pins();
        app
    }

    /// Take back the pins the store keeps for the board's file.
    fn restore_pins(&mut self) {
        self.view.kept_pins = None;
        let Some(path) = self.doc.path.clone() else { return };
        let pins = self.store.load_pins(&path);
        // New pins go on numbering (and colouring) after the restored ones.
        let after = pins.iter().map(|p| p.slot + 2).max().unwrap_or(1);
        self.view.next_pin = self.view.next_pin.max(after);
        self.view.pins = pins.clone();
        self.view.kept_pins = Some((path, pins));
    }

    /// Keep the pins in the store when they or the board's file changed since they were last kept.
    fn keep_pins(&mut self) {
        if !self.store.keeps_files() {
            return;
        }
        let Some(path) = self.doc.path.as_ref() else { return };
        if self.view.kept_pins.as_ref().is_some_and(|(p, pins)| p == path && *pins == self.view.pins) {
            return;
        }
        // A file saved under a new name starts with no pins kept; writing an empty list there is needless.
        if self.view.pins.is_empty() && self.view.kept_pins.as_ref().is_none_or(|(p, _)| p != path) {
            self.view.kept_pins = Some((path.clone(), Vec::new()));
            return;
        }
        match self.store.save_pins(path, &self.view.pins) {
            Ok(()) => self.view.kept_pins = Some((path.clone(), self.view.pins.clone())),
            Err(e) => {
                // Said once: the kept copy is updated so a failing store does not retry every frame.
                self.status = Some(Status::error(format!("Could not keep the pins: {e}")));
                self.view.kept_pins = Some((path.clone(), self.view.pins.clone()));
            }
        }
    }

    /// The board as it stands.
    pub fn board(&self) -> &Board {
        &self.doc.board
    }

    /// Show the impedance view or the time view in the middle of the window.
    pub fn set_central_tab(&mut self, tab: CentralTab) {
        self.central_tab = tab;
    }

    /// Change where rails are seen from and which curves are drawn beside the main one.
    pub fn set_look(&mut self, look: super::results::Look) {
        self.view.results.set_look(look);
    }

    /// True when the board has changes not yet saved.
    pub fn is_dirty(&self) -> bool {
        self.doc.history.is_dirty()
    }

    /// Where the plot (or the time view's plot) was drawn in the last frame, in points.
    pub fn plot_rect(&self) -> Option<egui::Rect> {
        self.plot_rect
    }

    /// What the status line says now, if anything.
    pub fn status(&self) -> Option<&Status> {
        self.status.as_ref()
    }

    /// The selected rail's index.
    pub fn selected_rail(&self) -> usize {
        self.view.selected_rail
    }

    /// The finding marked on the plot: (rail index, index in that rail's findings).
    pub fn selected_finding(&self) -> Option<(usize, usize)> {
        self.view.selected_finding
    }

    /// The file the board is saved to, if any.
    pub fn path(&self) -> Option<&Path> {
        self.doc.path.as_deref()
    }

    /// The window title: unsaved mark, file, board name.
    pub fn title(&self) -> String {
        let mark = if self.is_dirty() { "* " } else { "" };
        format!("{mark}{} — {} — hushrail", self.doc.label, self.doc.board.name)
    }

    /// Apply an edit through the history (the one path every change takes). On refusal the board is untouched.
    pub fn edit(&mut self, edit: Edit, label: impl Into<String>, merge: bool) -> Result<(), Refusal> {
        self.doc.history.apply(&mut self.doc.board, edit, label, merge)?;
        // An edit makes the last message stale; work still under way (a report being written) keeps saying so.
        if self.status.as_ref().is_none_or(|s| s.kind != StatusKind::Busy) {
            self.status = None;
        }
        Ok(())
    }

    /// Undo the last edit.
    pub fn undo(&mut self) {
        let before = self.doc.board.clone();
        match self.doc.history.undo(&mut self.doc.board) {
            Some(label) => {
                let now = now_words(&before, &self.doc.board, "back to");
                self.after_history(format!("Undone: {label}{now}"))
            }
            None => self.status = Some(Status::info("Nothing to undo.")),
        }
    }

    /// Redo the last undone edit.
    pub fn redo(&mut self) {
        let before = self.doc.board.clone();
        match self.doc.history.redo(&mut self.doc.board) {
            Some(label) => {
                let now = now_words(&before, &self.doc.board, "now");
                self.after_history(format!("Redone: {label}{now}"))
            }
            None => self.status = Some(Status::info("Nothing to redo.")),
        }
    }

    fn after_history(&mut self, message: String) {
        // Typed texts belonged to the values before; show the board's values again.
        self.view.fields.clear();
        self.status = Some(Status::info(message));
    }

    /// Ask to open a file; asks first when there are unsaved changes.
    pub fn request(&mut self, action: Pending) {
        if self.is_dirty() && action != Pending::Close {
            self.pending = Some(action);
        } else {
            self.perform(action);
        }
    }

    fn perform(&mut self, action: Pending) {
        match action {
            Pending::Open(path) => self.open_now(&path),
            // Without an answer (also what a desktop without a file-dialog service gives), the window's own path
            // field opens.
            Pending::OpenDialog => self.choose_file(super::exports::FileAction::Open),
            Pending::New => self.replace_document(new_board(), None, "new board".into(), History::new_unsaved(), None),
            Pending::Close => {
                self.allow_close = true;
                self.store.remove_autosave();
            }
        }
    }

    /// Open a board file now. A broken file is shown with its errors and the current board stays.
    pub fn open_now(&mut self, path: &Path) {
        match read_board_keeping_unusable_traced(path) {
            Ok((board, sha256)) => {
                self.replace_document(board, Some(path.to_path_buf()), file_label(path), History::new(), Some(sha256));
                self.store.remove_autosave();
                self.autosaved_revision = self.doc.history.revision();
                self.prefs.add_recent(path);
                self.save_prefs();
                self.status = Some(Status::info(format!("Opened {}.", path.display())));
            }
            Err(e) => {
                self.status =
                    Some(Status::error(format!("Could not open {}; the current board is kept.", path.display())));
                self.view.load_error = Some(e);
            }
        }
    }

    /// Put another document in the window (open, sample, restore, new) and reset every per-document view state
    /// with it, in this one place: the whole [`DocView`], and the search the suggest panel ran for the old board.
    pub(super) fn replace_document(
        &mut self,
        board: Board,
        path: Option<PathBuf>,
        label: String,
        history: History,
        sha256: Option<String>,
    ) {
        self.doc = Document { board, path, label, history, sha256 };
        self.view = DocView::new(self.view.results.look());
        self.suggest.forget();
        self.restore_pins();
    }

    /// Save to the board's file, or ask where when it has none. Returns true when saved.
    pub fn save(&mut self) -> bool {
        match self.doc.path.clone() {
            Some(path) => self.save_to(&path),
            None => self.save_as(),
        }
    }

    /// Ask where to save, then save there. Returns true when saved.
    pub fn save_as(&mut self) -> bool {
        match files::pick_save(self.doc.path.as_deref(), &self.doc.board.name) {
            Some(path) => self.save_to(&path),
            None => {
                self.view.path_prompt = Some(super::exports::PathPrompt {
                    action: super::exports::FileAction::SaveBoard,
                    text: self
                        .doc
                        .path
                        .as_ref()
                        .map(|p| p.display().to_string())
                        .unwrap_or_else(|| format!("{}.json", files::slug(&self.doc.board.name))),
                });
                self.status = Some(Status::info(NO_FILE_CHOSEN));
                false
            }
        }
    }

    /// Save to `path` (atomically). Returns true when saved.
    pub fn save_to(&mut self, path: &Path) -> bool {
        match write_board(path, &self.doc.board) {
            Ok(()) => {
                self.doc.sha256 = Some(crate::io::board_sha256(&self.doc.board));
                self.doc.path = Some(path.to_path_buf());
                self.doc.label = file_label(path);
                self.doc.history.mark_saved();
                self.store.remove_autosave();
                self.prefs.add_recent(path);
                self.save_prefs();
                self.status = Some(Status::info(format!("Saved {}.", path.display())));
                true
            }
            Err(e) => {
                self.status = Some(Status::error(e.lines().join("; ")));
                false
            }
        }
    }

    fn save_prefs(&mut self) {
        if let Err(e) = self.store.save_prefs(&self.prefs) {
            self.status = Some(Status::error(format!("Could not keep the preferences: {e}")));
        }
    }

    /// Switch between the dark and light themes.
    pub fn set_dark(&mut self, dark: bool) {
        self.prefs.dark = dark;
        self.save_prefs();
    }

    /// Draw the whole window and handle this frame's input.
    pub fn show(&mut self, ui: &mut Ui) {
        let ctx = ui.ctx().clone();
        if self.theme_applied != Some(self.prefs.dark) {
            theme::apply(&ctx, self.prefs.dark);
            self.theme_applied = Some(self.prefs.dark);
        }
        self.handle_input(&ctx);
        // A report finished on its own thread is said on this frame's status line.
        self.poll_report();
        self.view.results.refresh(&self.doc.board);
        if self.view.selected_rail >= self.doc.board.rails.len() {
            self.view.selected_rail = self.doc.board.rails.len().saturating_sub(1);
        }
        if let Some((r, i)) = self.view.selected_finding
            && self.view.results.get(r).is_none_or(|res| i >= res.findings.len())
        {
            self.view.selected_finding = None;
        }

        egui::Panel::top("menu").show(ui, |ui| self.menu_bar(ui));
        egui::Panel::bottom("status").show(ui, |ui| self.status_bar(ui));
        // The side columns keep their width whatever their content says (a caution that appears must not move
        // the buttons under the pointer): their text wraps inside instead.
        egui::Panel::left("rails")
            .resizable(true)
            .default_size(220.0)
            .size_range(190.0..=380.0)
            .show(ui, |ui| self.rails_list(ui));
        egui::Panel::right("side")
            .resizable(true)
            .default_size(400.0)
            .size_range(330.0..=620.0)
            .show(ui, |ui| self.side_panel(ui));
        egui::CentralPanel::default().show(ui, |ui| {
            if self.view.load_error.is_some() {
                self.load_error_box(ui);
            }
            self.rail_header(ui);
            self.options_row(ui);
            egui::Panel::bottom("findings")
                .resizable(true)
                .default_size(170.0)
                .size_range(80.0..=560.0)
                .show(ui, |ui| self.findings_panel(ui));
            egui::CentralPanel::no_frame().show(ui, |ui| match self.central_tab {
                CentralTab::Impedance => self.plot(ui),
                CentralTab::Time => self.time_view(ui),
                CentralTab::Map => {
                    // The map and the plot side by side: a drag on the map shows on the curve at once.
                    let (left, right) = ui.available_rect_before_wrap().split_left_right_at_fraction(0.6);
                    ui.scope_builder(egui::UiBuilder::new().max_rect(left.shrink2(egui::vec2(4.0, 0.0))), |ui| {
                        self.board_map(ui)
                    });
                    ui.scope_builder(egui::UiBuilder::new().max_rect(right.shrink2(egui::vec2(4.0, 0.0))), |ui| {
                        self.plot(ui)
                    });
                }
            });
        });

        self.coupling_window(&ctx);
        self.path_prompt_window(&ctx);
        self.import_window(&ctx);
        self.dialogs(&ctx);
        // What the panels and menus asked for this frame lands here, once, after everything was drawn from one
        // board; the next frame shows it.
        if self.apply_commands() {
            ctx.request_repaint();
        }
        if self.report_job.is_some() {
            // Look for the report's outcome even if the user does nothing meanwhile.
            ctx.request_repaint_after(std::time::Duration::from_millis(50));
        }
        self.update_title(&ctx);
        self.autosave(&ctx);
        self.keep_pins();
    }

    fn handle_input(&mut self, ctx: &egui::Context) {
        // A file dropped onto the window opens (asking first if there are unsaved changes).
        let dropped: Vec<PathBuf> = ctx.input(|i| i.raw.dropped_files.iter().map(|f| f.path().to_path_buf()).collect());
        if let Some(path) = dropped.into_iter().next() {
            self.ask(Command::Request(Pending::Open(path)));
        }

        // Shortcuts. While a text field has the keyboard, Ctrl+Z belongs to the field's own text.
        let typing = ctx.egui_wants_keyboard_input();
        let shortcut = |m: Modifiers, k: Key| KeyboardShortcut::new(m, k);
        let (redo, redo_y, undo, open, save_as, save) = ctx.input_mut(|i| {
            // Longer combinations first: Ctrl+Shift+Z must not be taken as Ctrl+Z.
            let redo = !typing && i.consume_shortcut(&shortcut(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z));
            let redo_y = !typing && i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::Y));
            let undo = !typing && i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::Z));
            let open = i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::O));
            let save_as = i.consume_shortcut(&shortcut(Modifiers::COMMAND | Modifiers::SHIFT, Key::S));
            let save = i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::S));
            (redo, redo_y, undo, open, save_as, save)
        });
        if redo || redo_y {
            self.ask(Command::Redo);
        }
        if undo {
            self.ask(Command::Undo);
        }
        if open {
            self.ask(Command::Request(Pending::OpenDialog));
        }
        if save_as {
            self.ask(Command::SaveAs);
        } else if save {
            self.ask(Command::Save);
        }

        // Closing with unsaved changes asks first.
        if ctx.input(|i| i.viewport().close_requested()) && !self.allow_close {
            if self.is_dirty() {
                ctx.send_viewport_cmd(ViewportCommand::CancelClose);
                self.pending = Some(Pending::Close);
            } else {
                self.store.remove_autosave();
            }
        }
    }

    fn menu_bar(&mut self, ui: &mut Ui) {
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                if ui.button("New board").clicked() {
                    ui.close();
                    self.ask(Command::Request(Pending::New));
                }
                if ui.add(egui::Button::new("Open…").shortcut_text("Ctrl+O")).clicked() {
                    self.ask(Command::Request(Pending::OpenDialog));
                    ui.close();
                }
                ui.menu_button("Open recent", |ui| {
                    if self.prefs.recent.is_empty() {
                        ui.weak("No recent files yet.");
                    }
                    for path in self.prefs.recent.clone() {
                        if ui.button(path.display().to_string()).clicked() {
                            self.ask(Command::Request(Pending::Open(path)));
                            ui.close();
                        }
                    }
                });
                if ui.button("Open the built-in sample").clicked() {
                    ui.close();
                    self.ask(Command::OpenSample);
                }
                ui.separator();
                if ui.add(egui::Button::new("Save").shortcut_text("Ctrl+S")).clicked() {
                    ui.close();
                    self.ask(Command::Save);
                }
                if ui.add(egui::Button::new("Save as…").shortcut_text("Ctrl+Shift+S")).clicked() {
                    ui.close();
                    self.ask(Command::SaveAs);
                }
                ui.separator();
                use super::exports::FileAction;
                for (words, action) in [
                    ("Save the review report (HTML)…", FileAction::Report),
                    ("Save the plot as PNG…", FileAction::PlotPng),
                    ("Save the plot as SVG…", FileAction::PlotSvg),
                    ("Export the rail's impedance (Touchstone .s1p)…", FileAction::Touchstone),
                    ("Export the rail's impedance (CSV)…", FileAction::Csv),
                    ("Export the rail as a SPICE netlist…", FileAction::Netlist),
                    ("Export the bill of materials (CSV)…", FileAction::Bom),
                ] {
                    if ui.button(words).clicked() {
                        ui.close();
                        self.ask(Command::ChooseFile(action));
                    }
                }
                ui.separator();
                if ui.button("Import the rail's placement (centroid and BOM CSV)…").clicked() {
                    ui.close();
                    self.open_import();
                }
                ui.separator();
                if ui.button("Quit").clicked() {
                    ui.close();
                    ui.ctx().send_viewport_cmd(ViewportCommand::Close);
                }
            });
            ui.menu_button("Edit", |ui| {
                let undo = self.doc.history.undo_label().map(|l| format!("Undo: {l}"));
                let redo = self.doc.history.redo_label().map(|l| format!("Redo: {l}"));
                let undo_button = egui::Button::new(undo.unwrap_or_else(|| "Undo".into())).shortcut_text("Ctrl+Z");
                if ui.add_enabled(self.doc.history.undo_label().is_some(), undo_button).clicked() {
                    self.ask(Command::Undo);
                    ui.close();
                }
                let redo_button = egui::Button::new(redo.unwrap_or_else(|| "Redo".into())).shortcut_text("Ctrl+Y");
                if ui.add_enabled(self.doc.history.redo_label().is_some(), redo_button).clicked() {
                    self.ask(Command::Redo);
                    ui.close();
                }
            });
            ui.menu_button("View", |ui| {
                ui.checkbox(&mut self.show_group_curves, "Each group's own curve");
                let mut dark = self.prefs.dark;
                if ui.radio_value(&mut dark, true, "Dark theme").clicked()
                    || ui.radio_value(&mut dark, false, "Light theme").clicked()
                {
                    self.ask(Command::SetDark(dark));
                }
            });
            ui.menu_button("Tools", |ui| {
                if ui.button("Size a coupling capacitor…").clicked() {
                    self.coupling.open = true;
                    ui.close();
                }
            });
            if ui.button("Help").clicked() {
                self.side_tab = SideTab::Help;
            }
        });
    }

    pub(super) fn open_sample(&mut self) {
        if self.is_dirty() {
            self.status = Some(Status::error("Save or undo the changes first: the sample would replace this board."));
            return;
        }
        if let Ok(board) = crate::samples::default_board() {
            let label = format!("built-in sample ({})", crate::samples::DEFAULT_SAMPLE_NAME);
            let sha256 = Some(crate::io::sha256_hex(crate::samples::default_board_text().as_bytes()));
            self.replace_document(board, None, label, History::new(), sha256);
        }
    }

    fn status_bar(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        ui.horizontal(|ui| {
            let dirty = if self.is_dirty() { "unsaved changes" } else { "saved" };
            ui.label(format!("{} · {dirty}", self.doc.label));
            ui.separator();
            match &self.status {
                Some(status) => status_line(ui, status, pal.fail),
                None => {
                    ui.label(
                        RichText::new("An idealised model: check against the parts' data and a measurement.").weak(),
                    );
                }
            }
        });
    }

    fn load_error_box(&mut self, ui: &mut Ui) {
        let Some(err) = &self.view.load_error else { return };
        let pal = theme::palette(ui.visuals().dark_mode);
        let mut dismiss = false;
        egui::Frame::group(ui.style()).stroke(egui::Stroke::new(1.5, pal.fail)).show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.label(RichText::new(format!("Could not open {}", err.file)).strong().color(pal.fail));
                ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
                    dismiss = ui.button("Dismiss").clicked();
                });
            });
            ui.label("The board on screen is unchanged. Problems found (file:place: reason):");
            egui::ScrollArea::vertical().max_height(110.0).id_salt("load-errors").show(ui, |ui| {
                for line in err.lines() {
                    ui.label(RichText::new(line).monospace().color(pal.fail));
                }
            });
        });
        if dismiss {
            self.view.load_error = None;
        }
    }

    fn dialogs(&mut self, ctx: &egui::Context) {
        if let Some(pending) = self.pending.clone() {
            let what = match &pending {
                Pending::Open(p) => format!("Open {} instead?", p.display()),
                Pending::OpenDialog => "Open another board instead?".into(),
                Pending::Close => "Close the window?".into(),
                Pending::New => "Start a new board instead?".into(),
            };
            let text = format!("The board \"{}\" has changes that are not saved. {what}", self.doc.board.name);
            let choice =
                ask(ctx, "discard-changes", 420.0, "Unsaved changes", &text, ["Save them", "Discard them", "Cancel"]);
            match choice {
                Some(0) => {
                    self.pending = None;
                    if self.save() {
                        self.finish_pending(ctx, pending);
                    }
                }
                Some(1) => {
                    self.pending = None;
                    self.finish_pending(ctx, pending);
                }
                Some(_) => self.pending = None,
                None => {}
            }
        } else if let Some(left) = self.left_over.clone() {
            let from = match &left.origin {
                Some(p) => format!("opened from {}", p.display()),
                None => "not saved to any file".into(),
            };
            let when = left
                .modified
                .and_then(|t| t.elapsed().ok())
                .map(|d| format!(", autosaved {} ago", human_duration(d.as_secs())))
                .unwrap_or_default();
            let text =
                format!("An earlier session ended without saving its work (the board was {from}{when}). Restore it?");
            let choice =
                ask(ctx, "left-over", 460.0, "Unsaved work found", &text, ["Restore", "Discard it", "Decide later"]);
            match choice {
                Some(0) => {
                    self.left_over = None;
                    self.restore(&left);
                }
                Some(1) => {
                    self.left_over = None;
                    self.store.forget_left_over(&left);
                }
                Some(_) => self.left_over = None,
                None => {}
            }
        }
    }

    fn finish_pending(&mut self, ctx: &egui::Context, pending: Pending) {
        let close = pending == Pending::Close;
        self.perform(pending);
        if close {
            ctx.send_viewport_cmd(ViewportCommand::Close);
        }
    }

    /// Bring back work autosaved by an earlier session, as unsaved changes to the file it came from.
    fn restore(&mut self, left: &LeftOver) {
        match read_board_keeping_unusable(&left.board_file) {
            Ok(board) => {
                let label = match &left.origin {
                    Some(p) => format!("{} (restored)", file_label(p)),
                    None => "restored work".into(),
                };
                self.replace_document(board, left.origin.clone(), label, History::new_unsaved(), None);
                self.store.forget_left_over(left);
                self.status = Some(Status::info("Restored the unsaved work; save it to keep it."));
            }
            Err(e) => self.view.load_error = Some(e),
        }
    }

    fn update_title(&mut self, ctx: &egui::Context) {
        let title = self.title();
        if title != self.title {
            ctx.send_viewport_cmd(ViewportCommand::Title(title.clone()));
            self.title = title;
        }
    }

    fn autosave(&mut self, ctx: &egui::Context) {
        let revision = self.doc.history.revision();
        if !self.store.keeps_files() || !self.is_dirty() || revision == self.autosaved_revision {
            return;
        }
        let now = ctx.input(|i| i.time);
        if now - self.last_autosave_s < AUTOSAVE_EVERY_S {
            // Come back when it is due even if the user does nothing more.
            ctx.request_repaint_after(std::time::Duration::from_secs_f64(AUTOSAVE_EVERY_S));
            return;
        }
        self.last_autosave_s = now;
        self.autosaved_revision = revision;
        if let Err(e) = self.store.write_autosave(&self.doc.board, self.doc.path.as_deref()) {
            self.status = Some(Status::error(format!("Autosave failed: {e}")));
        }
    }
}

impl eframe::App for App {
    fn ui(&mut self, ui: &mut Ui, _frame: &mut eframe::Frame) {
        self.show(ui);
    }
}

/// What an undo or redo left a changed count at, in words ("; the count of X on R is back to 4"), so the message
/// does not read as if the edit's own value ("… to 10") were the board's now. Empty when no count changed.
fn now_words(before: &Board, after: &Board, how: &str) -> String {
    for (rb, ra) in before.rails.iter().zip(&after.rails) {
        for (gb, ga) in rb.decaps.iter().zip(&ra.decaps) {
            if gb.part == ga.part && gb.count != ga.count {
                return format!("; the count of {} on {} is {how} {}", ga.part, ra.name, ga.count);
            }
        }
    }
    String::new()
}

/// How a file is named in the title and the status line.
fn file_label(path: &Path) -> String {
    path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_else(|| path.display().to_string())
}

fn human_duration(secs: u64) -> String {
    match secs {
        0..=119 => format!("{secs} s"),
        120..=7199 => format!("{} min", secs / 60),
        7200..=172_799 => format!("{} h", secs / 3600),
        _ => format!("{} days", secs / 86_400),
    }
}

/// A minimal valid board, used only if the built-in sample could not be read (which the tests rule out).
fn fallback_board() -> Board {
    new_board()
}

/// A new board: one rail to start from (1 V, 5 % ripple, 1 A step, a regulator, no capacitors yet) and no parts.
pub(super) fn new_board() -> Board {
    let mut board = Board::named("New board");
    board.rails.push(new_rail("RAIL"));
    board
}

/// A new rail named `name`: 1 V, 5 % ripple, a 1 A load step, a band of 1 kHz to 100 MHz and a regulator of
/// 1 mΩ and 10 nH (round starting values of our own, to be replaced by the design's).
pub(super) fn new_rail(name: &str) -> crate::model::Rail {
    use crate::model::{Combine, Load, Rail, Source};
    Rail {
        name: name.into(),
        voltage_v: 1.0,
        ripple_pct: 5.0,
        band_hz: Some([1e3, 1e8]),
        combine: Combine::Sum,
        source: Some(Source::rl(1e-3, 1e-8)),
        plane: None,
        package: None,
        die: None,
        loads: vec![Load::new("load", 1.0, None)],
        decaps: Vec::new(),
        placement: None,
    }
}

/// The status line's message, drawn as its kind says: an error in the fail colour, work under way with a spinner.
fn status_line(ui: &mut Ui, status: &Status, fail: egui::Color32) {
    match status.kind {
        StatusKind::Error => ui.label(RichText::new(&status.text).color(fail)),
        StatusKind::Info => ui.label(&status.text),
        StatusKind::Busy => {
            ui.add(egui::Spinner::new());
            ui.label(&status.text)
        }
    };
}

/// A modal question with three answers; the index of the one clicked this frame, if any.
fn ask(ctx: &egui::Context, id: &str, width: f32, heading: &str, text: &str, answers: [&str; 3]) -> Option<usize> {
    let mut choice = None;
    egui::Modal::new(egui::Id::unique(id)).show(ctx, |ui| {
        ui.set_max_width(width);
        ui.heading(heading);
        ui.label(text);
        ui.add_space(8.0);
        ui.horizontal(|ui| {
            for (i, answer) in answers.iter().enumerate() {
                if ui.button(*answer).clicked() {
                    choice = Some(i);
                }
            }
        });
    });
    choice
}
