//! The planner window.
