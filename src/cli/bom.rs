//! `hushrail bom`: the bill of materials, as text or CSV.

use super::{EXIT_PASS, emit, load_board};
use crate::io::{bill_of_materials, bom_csv, bom_text};
use clap::Args;
use std::path::PathBuf;

/// Options of `hushrail bom`.
#[derive(Debug, Args)]
pub struct BomArgs {
    /// Board file (the built-in sample board when left out).
    pub board: Option<PathBuf>,
    /// Print CSV (part,kind,capacitance_f,rated_voltage_v,case,dielectric,count_<rail>...,total_count,unit_cost,
    /// cost) instead of text.
    #[arg(long)]
    pub csv: bool,
}

/// Print the bill of materials.
pub fn run(args: &BomArgs) -> Result<i32, String> {
    let (board, _) = load_board(args.board.as_ref())?;
    let bom = bill_of_materials(&board);
    emit(&if args.csv { bom_csv(&bom) } else { bom_text(&board, &bom) });
    Ok(EXIT_PASS)
}
