//! The physics of one branch: the impedance of a series R-L-C (or R-L) at a frequency.

mod branch;

pub use branch::{SeriesRlc, TWO_PI};
