//! Frequency grids, a rail's impedance, its target and its findings. Pure functions of plain values: no files,
//! no window, no command line.

mod advice;
mod cautions;
mod check;
mod droop;
mod findings;
mod grid;
mod network;
mod optimize;
pub mod placed;
mod rail;
mod spread;
mod worst;

pub use advice::{Finding, Severity, explain, explain_band, source_fit_words};
pub use cautions::{Caution, CautionKind, cautions, derating_limit};
pub use check::{
    CheckOptions, EdgeReach, Kept, RailCheck, bias_words, check_board, check_rail, edge_finding, edge_reach,
    kept_words, load_line, search_words, sensitivity_words, summary, verdict_word, vertex_words, view_words,
    yield_words,
};
pub use droop::{
    BandFilter, Droop, DroopError, DroopOptions, FIT_TOLERANCE, IntegratedStep, LINEAR_LIMIT, LoadDroop, MAX_STEPS,
    Modal, NodeDroop, PatternResponse, Pulse, RailModes, StepWaveform, Sustained, WorstCase, droop, droop_figure,
    droop_lines, droop_load_line, droop_stimulus_line, droop_verdict_line, pattern_response, rail_modes,
    step_integrated, step_waveform, worst_pattern_over,
};
pub use findings::{Extremum, Scan, ViolationBand, scan};
pub use grid::log_grid;
pub use network::{Branch, BranchKind, Network, Scale, View, group_branch, magnitude_phase};
pub use optimize::{
    Blocker, Candidate, CornerFigures, DEFAULT_MARGIN_DB, DISTINCT_TOLERANCE, DroopFigures, EXHAUSTIVE_LIMIT,
    MAX_CANDIDATES, MixEvaluator, MixOption, Objective, SHORTLIST_SIZE, Shortfall, SuggestError, SuggestOptions,
    Suggestion, VERDICT_CORNER, apply_mix, area_words, corner_words, cost_words, default_mounting_h, new_parts_spot,
    offered_parts, other_corner, plural, ranges, spot_words, suggest,
};
pub use rail::{
    AnalysisOptions, AntiResonance, BranchRef, Curve, GroupInfo, RailAnalysis, analyze_board, analyze_rail, curve_of,
    sweep, sweep_in, target_impedance,
};
pub use spread::{DEFAULT_SEED, FailRange, Sensitivity, YieldEstimate, sensitivity, yield_estimate};
pub use worst::{GroupVertex, SearchMethod, SearchOptions, Side, WorstVertex, worst_vertex};
