//! Every integration test in one binary: each extra test binary would link the whole window again.

mod cli;
mod common;
mod droop;
mod exports;
mod formulas;
mod gui;
mod measured;
mod ngspice;
mod physics;
mod properties;
mod report;
mod suggest;
mod touchstone;
mod verdict;
