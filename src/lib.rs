//! hushrail: plan the decoupling of a board's power rails.
//!
//! The library is layered so that every face asks the same questions:
//! - [`units`]: engineering notation at the faces;
//! - [`model`]: plain data (board, parts, rails) and its rules;
//! - [`physics`]: one branch's impedance;
//! - [`analysis`]: frequency grids, a rail's impedance, its target and findings;
//! - [`io`]: board files (the only module that touches files);
//! - [`cli`] and [`gui`]: the command line and the window, which only call the layers above.

pub mod analysis;
pub mod cli;
pub mod gui;
pub mod io;
pub mod model;
pub mod notes;
pub mod physics;
pub mod samples;
pub mod units;
