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
pub use droop::{Droop, DroopError, DroopOptions, NodeDroop, PatternResponse, Pulse, droop, pattern_response};
pub use findings::{Extremum, Scan, ViolationBand, scan};
pub use grid::log_grid;
pub use network::{Branch, BranchKind, Network, View, magnitude_phase};
pub use optimize::{
    Blocker, Candidate, CornerFigures, DEFAULT_MARGIN_DB, DISTINCT_TOLERANCE, DroopFigures, EXHAUSTIVE_LIMIT,
    MAX_CANDIDATES, MixEvaluator, MixOption, Objective, SHORTLIST_SIZE, Shortfall, SuggestError, SuggestOptions,
    Suggestion, VERDICT_CORNER, apply_mix, area_words, corner_words, cost_words, default_mounting_h, offered_parts,
    other_corner, plural, ranges, suggest,
};
pub use rail::{
    AnalysisOptions, AntiResonance, BranchRef, Curve, GroupInfo, RailAnalysis, analyze_board, analyze_rail, sweep,
    sweep_in, target_impedance,
};
