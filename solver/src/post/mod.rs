//! Results computed from a solved field.

pub mod force;
