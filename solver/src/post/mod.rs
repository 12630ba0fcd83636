//! Results computed from a solved field.

pub mod estimate;
pub mod force;
pub mod loops;
pub mod profiles;
pub mod windings;
