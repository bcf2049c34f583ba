//! What the window hands out besides the board file: the review report (the same HTML as `hushrail report`), the
//! selected rail's plot as PNG or SVG (drawn by the report's plotting code, with title and verdict, at a chosen
//! size), its impedance as Touchstone or CSV, its SPICE netlist, and the bill of materials, each made by the same
//! library function as the command line's and written through `io::write`. Where no file dialog answers, the
//! window's own path field takes the path.

use super::app::{App, NO_FILE_CHOSEN};
use super::files;
use super::jobs::{Job, Poll};
use super::status::Status;
use crate::analysis::placed::load_sweep;
use crate::analysis::{DroopOptions, droop, plural};
use crate::analysis::{log_grid, sweep_in};
use crate::io::{
    AcSweep, ReportContext, SIZE_LIMITS, bill_of_materials, board_sha256, bom_csv, impedance_csv, impedance_png,
    impedance_s1p, impedance_svg_titled, mesh_netlist, rail_netlist, report_html, utc_date_today, write_outputs,
};
use crate::physics::Corner;
use crate::units::{Unit, format};
use egui::Context;
use std::path::{Path, PathBuf};

/// The review report being written on its own thread: the droops of every rail take longer than a frame.
#[derive(Debug)]
pub struct ReportJob {
    /// Where it goes.
    pub path: PathBuf,
    /// The board's revision it shows: edits made meanwhile are kept in the window and are not in the report.
    pub revision: u64,
    job: Job<Result<(), String>>,
}

impl App {
    /// Start writing the review report of the board as it stands to `path`, on its own thread: the same document
    /// `hushrail report` writes for the same board (with the droop of each rail). The board is copied, so the
    /// user may go on editing; the file is written atomically (whole or not at all). With unsaved edits the
    /// report says so prominently and carries the hash of the board as shown (the file on disk is another
    /// board). Returns false, with the reason on the status line, when a report is already being written.
    pub fn save_report_to(&mut self, path: &Path) -> bool {
        if let Some(running) = &self.report_job {
            self.status = Some(Status::error(format!(
                "The report {} is still being written; ask again when it is done.",
                running.path.display()
            )));
            return false;
        }
        let board = self.doc.board.clone();
        let unsaved_edits = self.is_dirty();
        let (source, command) = match &self.doc.path {
            Some(p) => (
                p.display().to_string(),
                format!("hushrail check '{}'", p.display().to_string().replace('\'', "'\\''")),
            ),
            None => (self.doc.label.clone(), "hushrail check".to_string()),
        };
        // The hash of the bytes the board was read from (or saved as) when it is unchanged, taken then: the file
        // on disk may have changed since, and the report names what it judged. Else of the board as shown.
        let sha256 = match (&self.doc.sha256, unsaved_edits) {
            (Some(read), false) => read.clone(),
            _ => board_sha256(&board),
        };
        let context = ReportContext { source, sha256, command, date: utc_date_today(), unsaved_edits };
        let target = path.to_path_buf();
        // Never over the board's own file; whole or not at all (io::write).
        let input = self.doc.path.clone();
        let job = Job::start("report", move || {
            let droops: Vec<_> = (0..board.rails.len()).map(|i| droop(&board, i, &DroopOptions::default())).collect();
            let html = report_html(&board, &context, Some(&droops));
            let inputs: Vec<&Path> = input.iter().map(PathBuf::as_path).collect();
            write_outputs(&[(&target, html.as_bytes())], &inputs)
        });
        let rails = self.doc.board.rails.len();
        self.status = Some(Status::busy(format!(
            "Writing the report {} (the step response of {})…",
            path.display(),
            plural(rails as u64, "rail", "rails")
        )));
        self.report_job = Some(ReportJob { path: path.to_path_buf(), revision: self.doc.history.revision(), job });
        true
    }

    /// Take the report's outcome when it has come, and say it on the status line.
    pub(super) fn poll_report(&mut self) {
        let Some(running) = &mut self.report_job else { return };
        let outcome = match running.job.poll() {
            Poll::Running => return,
            Poll::Done(outcome) => Some(outcome),
            Poll::Lost => None,
        };
        if let Some(running) = self.report_job.take() {
            self.report_done(&running.path, running.revision, outcome);
        }
    }

    /// Wait until the report being written (if any) is done, and say how it went: for tests and callers that
    /// need the file now. Returns true when a report was written.
    pub fn finish_report(&mut self) -> bool {
        let Some(ReportJob { path, revision, job }) = self.report_job.take() else { return false };
        self.report_done(&path, revision, job.wait())
    }

    /// True while the review report is being written.
    pub fn is_writing_report(&self) -> bool {
        self.report_job.is_some()
    }

    /// Say how the report went (`None`: its thread ended without an answer). Returns true when written.
    fn report_done(&mut self, path: &Path, revision: u64, outcome: Option<Result<(), String>>) -> bool {
        let outcome = outcome.unwrap_or_else(|| {
            Err(format!("{}: the report could not be made (a bug: please report it)", path.display()))
        });
        let written = outcome.is_ok();
        self.status = Some(match outcome {
            Ok(()) if revision != self.doc.history.revision() => Status::info(format!(
                "Wrote the report {}. It shows the board as it was when asked: the edits made since are not in it.",
                path.display()
            )),
            Ok(()) => Status::info(format!("Wrote the report {}.", path.display())),
            Err(e) => Status::error(e),
        });
        written
    }
}

/// A file the window reads or writes, chosen by a dialog or, where the desktop has no file-dialog service, typed
/// into the window's own path field.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FileAction {
    /// Open a board file.
    Open,
    /// Save the board.
    SaveBoard,
    /// The review report (HTML).
    Report,
    /// The selected rail's plot as PNG.
    PlotPng,
    /// The selected rail's plot as SVG.
    PlotSvg,
    /// The selected rail's impedance as a one-port Touchstone file.
    Touchstone,
    /// The selected rail's impedance as CSV.
    Csv,
    /// The selected rail as a SPICE netlist with an AC sweep.
    Netlist,
    /// The bill of materials (CSV).
    Bom,
}

impl FileAction {
    /// The filter name and file extension.
    fn kind(self) -> (&'static str, &'static str) {
        match self {
            FileAction::Open | FileAction::SaveBoard => ("Board file", "json"),
            FileAction::Report => ("HTML report", "html"),
            FileAction::PlotPng => ("PNG image", "png"),
            FileAction::PlotSvg => ("SVG image", "svg"),
            FileAction::Touchstone => ("Touchstone file", "s1p"),
            FileAction::Csv => ("CSV file", "csv"),
            FileAction::Netlist => ("SPICE netlist", "cir"),
            FileAction::Bom => ("bill of materials", "csv"),
        }
    }

    /// What the path field's button says.
    fn verb(self) -> &'static str {
        if self == FileAction::Open { "Open" } else { "Save" }
    }
}

/// The window's own path field, shown when no file dialog answered.
#[derive(Debug, Clone)]
pub struct PathPrompt {
    /// What the path is for.
    pub action: FileAction,
    /// The path as typed.
    pub text: String,
}

/// Points a decade of the impedance sweep the window's Touchstone, CSV and netlist exports write (as the reference
/// data).
const EXPORT_PER_DECADE: usize = 20;

impl App {
    /// Ask for a file for `action` with the desktop's dialog; with no answer, open the window's path field so the
    /// action can still be done.
    pub fn choose_file(&mut self, action: FileAction) {
        let (what, ext) = action.kind();
        let board_path = self.doc.path.clone();
        let picked = match action {
            FileAction::Open => files::pick_open(board_path.as_deref()),
            FileAction::SaveBoard => files::pick_save(board_path.as_deref(), &self.doc.board.name),
            _ => {
                files::pick_export(what, ext, board_path.as_deref(), &self.doc.board.name, &self.export_suffix(action))
            }
        };
        match picked {
            Some(path) => {
                self.file_action(action, &path);
            }
            None => {
                let suggested = self.suggested_path(action);
                self.view.path_prompt = Some(PathPrompt { action, text: suggested.display().to_string() });
                self.status = Some(Status::info(NO_FILE_CHOSEN));
            }
        }
    }

    fn export_suffix(&self, action: FileAction) -> String {
        let rail = self.doc.board.rails.get(self.view.selected_rail).map_or("rail", |r| r.name.as_str()).to_string();
        match action {
            FileAction::Report => "-report".into(),
            FileAction::Bom => "-bom".into(),
            FileAction::Open | FileAction::SaveBoard => String::new(),
            _ => format!("-{rail}"),
        }
    }

    /// Where a file would go by default: beside the board, or in the working folder.
    fn suggested_path(&self, action: FileAction) -> PathBuf {
        if let (FileAction::Open | FileAction::SaveBoard, Some(p)) = (action, &self.doc.path) {
            return p.clone();
        }
        let dir = self.doc.path.as_ref().and_then(|p| p.parent().map(Path::to_path_buf)).unwrap_or_default();
        let name = format!("{}{}.{}", files::slug(&self.doc.board.name), self.export_suffix(action), action.kind().1);
        dir.join(name)
    }

    /// Do `action` on `path` now. Returns true when done; the status line says what happened either way.
    pub fn file_action(&mut self, action: FileAction, path: &Path) -> bool {
        match action {
            FileAction::Open => {
                self.request(super::app::Pending::Open(path.to_path_buf()));
                true
            }
            FileAction::SaveBoard => self.save_to(path),
            FileAction::Report => self.save_report_to(path),
            _ => match self.export_bytes(action) {
                Ok(bytes) => {
                    let inputs: Vec<&Path> = self.doc.path.iter().map(PathBuf::as_path).collect();
                    match write_outputs(&[(path, &bytes)], &inputs) {
                        Ok(()) => {
                            self.status = Some(Status::info(format!("Wrote {}.", path.display())));
                            true
                        }
                        Err(e) => {
                            self.status = Some(Status::error(e));
                            false
                        }
                    }
                }
                Err(e) => {
                    self.status = Some(Status::error(format!("{}: {e}", path.display())));
                    false
                }
            },
        }
    }

    /// The bytes of an export of the selected rail (or the board, for the bill of materials), made by the same
    /// library functions as the command line's.
    pub fn export_bytes(&self, action: FileAction) -> Result<Vec<u8>, String> {
        let board = &self.doc.board;
        if action == FileAction::Bom {
            return Ok(bom_csv(&bill_of_materials(board)).into_bytes());
        }
        let index = self.view.selected_rail;
        let rail = board.rails.get(index).ok_or("there is no rail to export")?;
        let result = self.view.results.get(index).ok_or("this rail cannot be analysed")?;
        let a = &result.analysis;
        let (from, to) = crate::io::plot_range_hz(a.band_hz);
        let points = ((to / from).log10() * EXPORT_PER_DECADE as f64).round() as usize + 1;
        // On a placed rail every export is at the load the plot shows (the one chosen, else the worst).
        let shown =
            rail.placement.as_ref().map(|_| self.view.results.look().shown_load(&result.check.loads).unwrap_or(0));
        match action {
            FileAction::PlotPng | FileAction::PlotSvg => {
                let title = format!("{}: {}, {}", board.name, rail.name, format(rail.voltage_v, Unit::Volt));
                let verdict = result.check.verdict_line();
                let size = (self.plot_export_size[0], self.plot_export_size[1]);
                let options = crate::analysis::AnalysisOptions {
                    view: Some(a.view),
                    curve: Some((from, to, crate::io::PLOT_POINTS)),
                    load: shown,
                    ..Default::default()
                };
                let full =
                    crate::analysis::analyze_rail(board, index, &options).ok_or("this rail cannot be analysed")?;
                if action == FileAction::PlotSvg {
                    impedance_svg_titled(&full, size, Some((&title, &verdict))).map(String::into_bytes)
                } else {
                    impedance_png(&full, size, Some((&title, &verdict)))
                }
            }
            FileAction::Touchstone | FileAction::Csv => {
                let grid = log_grid(from, to, points);
                let z = match shown {
                    // The self-impedance at the shown load's port (its die with a package), as `sweep --at` gives.
                    Some(k) => load_sweep(board, rail, k, None, &grid, a.corner).ok_or("this rail cannot be swept")?,
                    None => sweep_in(board, rail, &grid, a.view, a.corner),
                };
                if action == FileAction::Csv {
                    Ok(impedance_csv(&grid, &z, a.target_ohm).into_bytes())
                } else {
                    Ok(impedance_s1p(board, rail, &grid, &z, a.view, a.corner, &self.doc.label).into_bytes())
                }
            }
            FileAction::Netlist => {
                let sweep = AcSweep { from_hz: from, to_hz: to, points_per_decade: EXPORT_PER_DECADE };
                match &rail.placement {
                    // A placed rail's netlist is its plane meshed (one node would leave the planes out), read at
                    // the load the plot shows, as `hushrail netlist --mesh H --at LOAD` writes it.
                    Some(placement) => {
                        let at = shown.unwrap_or(0);
                        let cell = crate::io::export_mesh_cell_m(placement.plane_pair.size_m);
                        mesh_netlist(board, rail, &sweep, cell, (at, None), "hushrail_ac.txt", Corner::Typical)
                            .map(String::into_bytes)
                    }
                    None => Ok(rail_netlist(board, rail, &sweep, a.view, "hushrail_ac.txt").into_bytes()),
                }
            }
            _ => Err("not an export".into()),
        }
    }

    /// The window's own path field, when a file dialog gave no answer.
    pub(super) fn path_prompt_window(&mut self, ctx: &Context) {
        let Some(prompt) = self.view.path_prompt.as_mut() else { return };
        let (what, _) = prompt.action.kind();
        let mut go = false;
        let mut cancel = false;
        let plot = matches!(prompt.action, FileAction::PlotPng | FileAction::PlotSvg);
        let size = &mut self.plot_export_size;
        egui::Window::new(format!("{} the {what}", prompt.action.verb())).collapsible(false).resizable(false).show(
            ctx,
            |ui| {
                ui.label("No file dialog answered (this desktop may have no file-dialog service). Type the path:");
                let l = ui.label("Path");
                let edit = ui.add(egui::TextEdit::singleline(&mut prompt.text).desired_width(420.0)).labelled_by(l.id);
                if edit.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter)) {
                    go = true;
                }
                if plot {
                    ui.horizontal(|ui| {
                        let (lo, hi) = SIZE_LIMITS;
                        let w = ui.label("width, px");
                        ui.add(egui::DragValue::new(&mut size[0]).range(lo..=hi)).labelled_by(w.id);
                        let h = ui.label("height, px");
                        ui.add(egui::DragValue::new(&mut size[1]).range(lo..=hi)).labelled_by(h.id);
                    });
                }
                ui.horizontal(|ui| {
                    go |= ui.button(prompt.action.verb()).clicked();
                    cancel = ui.button("Cancel").clicked();
                });
            },
        );
        if cancel {
            self.view.path_prompt = None;
        } else if go {
            let action = prompt.action;
            let path = PathBuf::from(prompt.text.trim());
            if self.file_action(action, &path) {
                self.view.path_prompt = None;
            }
        }
    }
}
