//! Frequency grids, a rail's impedance, its target and its findings. Pure functions of plain values: no files,
//! no window, no command line.

mod advice;
mod droop;
mod findings;
mod grid;
mod network;
mod optimize;
mod rail;

pub use advice::{Finding, Severity, explain, explain_band};
pub use droop::{
    BandFilter, Droop, DroopError, DroopOptions, IntegratedStep, LINEAR_LIMIT, MAX_STEPS, Modal, NodeDroop,
    PatternResponse, Pulse, RISE_RANGE_S, RailModes, STEP_RANGE_A, Sustained, WINDOW_RANGE_S, WorstCase, droop,
    droop_figure, droop_lines, droop_stimulus_line, droop_verdict_line, pattern_response, rail_modes, step_integrated,
    worst_pattern_over,
};
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
