//! `hushrail`: no arguments or a board path opens the planner window; a subcommand runs the command line.

use clap::Parser;
use hushrail::cli::{Cli, run};

fn main() {
    let cli = Cli::parse();
    let code = match cli.command {
        Some(command) => run(command),
        None => hushrail::gui::run(cli.board),
    };
    std::process::exit(code);
}
