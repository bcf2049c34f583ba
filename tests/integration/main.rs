//! Every integration test in one binary: each extra test binary would link the whole window again.

mod board_map;
mod cli;
mod common;
mod droop;
mod exports;
mod formulas;
mod fuzz;
mod fuzz_harness;
mod gui;
mod hostile;
mod measured;
mod ngspice;
mod physics;
mod place;
mod placed;
mod placed_ngspice;
mod placed_suggest;
mod plane_pair;
mod properties;
mod report;
mod suggest;
mod touchstone;
mod verdict;
