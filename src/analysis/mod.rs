//! Frequency grids, a rail's impedance, its target and its findings. Pure functions of plain values: no files,
//! no window, no command line.

mod advice;
mod droop;
mod findings;
mod grid;
mod network;
mod optimize;
pub mod placed;
mod rail;

pub use advice::{Finding, Severity, explain, explain_band};
pub use droop::{Droop, DroopError, DroopOptions, NodeDroop, PatternResponse, Pulse, droop, pattern_response};
pub use findings::{Extremum, ViolationBand};
pub use grid::log_grid;
pub use network::{Branch, BranchKind, Network, View, magnitude_phase};
pub use optimize::{
    Candidate, MixEvaluator, MixOption, Objective, SuggestError, SuggestOptions, Suggestion, apply_mix,
    default_mounting_h, offered_parts, suggest,
};
pub use rail::{
    AnalysisOptions, AntiResonance, BranchRef, Curve, GroupInfo, RailAnalysis, analyze_board, analyze_rail, sweep,
    sweep_in, target_impedance,
};
