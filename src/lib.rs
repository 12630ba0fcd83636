//! # fluxwright
//!
//! 2D magnetostatic finite-element analysis of iron-cored devices. This
//! facade re-exports the workspace crates:
//! - [`mesher`]: geometry to a quality triangle mesh (no magnetics);
//! - [`solver`]: model files, nonlinear finite elements, engineering results.
#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub use fluxwright_mesher as mesher;
pub use fluxwright_solver as solver;
