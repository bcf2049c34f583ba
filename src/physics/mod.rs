//! The physics of the parts: one branch's impedance, the inductance of how a part is mounted, and how much
//! capacitance a part really has under bias, temperature and tolerance.

mod branch;
pub mod coupling;
pub mod derating;
mod jet;
pub mod loop_fit;
pub mod measured;
pub mod mounting;
pub mod plane_pair;
pub mod regulator;

pub use branch::{SeriesRlc, TWO_PI};
pub use derating::{Corner, Derating, derate};
pub use mounting::{MountingBreakdown, mounting_breakdown};
