//! The planner window (eframe/egui): every rail at a glance, the selected rail's |Z(f)| against its target, its
//! inputs, the board's parts, the findings and pins.
//!
//! One file per panel; panels queue [`commands`], and every change to the board goes through [`history`]; every
//! figure comes from `analysis` through [`results`]; work longer than a frame runs as a [`jobs::Job`]. The
//! window's state ([`App`]) is plain data that tests drive without a window.

mod app;
mod board_map;
pub mod commands;
mod coupling_tool;
mod exports;
pub mod files;
mod findings;
mod help;
pub mod history;
pub mod jobs;
mod load_choice;
pub mod number_field;
mod parts_table;
mod pins;
mod plot;
mod rail_editor;
mod rails_list;
pub mod results;
pub mod status;
pub mod suggest_panel;
pub mod theme;
mod time_view;

pub use app::{App, CentralTab, DocView, Document, FindingsTab, Pending, SideTab};
pub use commands::Command;
pub use exports::{FileAction, PathPrompt};
pub use pins::Pin;
pub use plot::{log_label, log_marks};
pub use status::{Status, StatusKind};
pub use time_view::{droop_lines, more_figures_title};

use std::path::PathBuf;

/// The window's initial inner size: it fits a 1280x800 screen and grows with a larger one.
pub const INITIAL_SIZE: [f32; 2] = [1280.0, 800.0];
/// The smallest size the layout is kept usable at.
pub const MIN_SIZE: [f32; 2] = [960.0, 600.0];

/// Open the planner window on `board` (or the built-in sample board) and return the process exit code when it
/// closes: 0, or 2 when the window could not be opened (the reason is on stderr).
pub fn run(board: Option<PathBuf>) -> i32 {
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_title("hushrail")
            .with_app_id("hushrail")
            .with_inner_size(INITIAL_SIZE)
            .with_min_inner_size(MIN_SIZE)
            .with_drag_and_drop(true),
        ..Default::default()
    };
    let store = files::Store::new(files::Store::default_dir());
    let result =
        eframe::run_native("hushrail", options, Box::new(move |_cc| Ok(Box::new(App::open(board.as_deref(), store)))));
    match result {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("hushrail: could not open the window: {e}");
            eprintln!("hushrail: the command line still works without a display; see `hushrail --help`.");
            crate::cli::EXIT_BAD_INPUT
        }
    }
}
