//! `hushrail report`: the review report as one self-contained HTML file.

use super::{EXIT_PASS, load_board_traced, shell_word};
use crate::analysis::{DroopOptions, droop};
use crate::io::{ReportContext, report_html, utc_date_today};
use clap::Args;
use std::path::PathBuf;

/// Options of `hushrail report`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// The HTML file to write.
    #[arg(short, long, value_name = "FILE.html")]
    pub output: PathBuf,
    /// Leave out the droop after a load step (it is the slowest part of the report).
    #[arg(long)]
    pub no_droop: bool,
}

/// Write the report. The exit code is 0 whenever the report is written, whatever the verdicts: `check` is the
/// command that judges.
pub fn run(args: &ReportArgs) -> Result<i32, String> {
    let (board, file, sha256) = load_board_traced(args.board.as_ref())?;
    let droops: Option<Vec<_>> =
        (!args.no_droop).then(|| (0..board.rails.len()).map(|i| droop(&board, i, &DroopOptions::default())).collect());
    // The report re-runs as the check of the same board.
    let command = match &args.board {
        Some(p) => format!("hushrail check {}", shell_word(&p.display().to_string())),
        None => "hushrail check".to_string(),
    };
    let context = ReportContext { source: file, sha256, command, date: utc_date_today(), unsaved_edits: false };
    let html = report_html(&board, &context, droops.as_deref());
    super::write_files(&[(&args.output, html.as_bytes())], args.board.as_ref(), &board)?;
    Ok(EXIT_PASS)
}
