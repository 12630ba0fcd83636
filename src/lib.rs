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

/// The README's code examples, compiled and run as doctests.
#[doc = include_str!("../README.md")]
#[cfg(doctest)]
pub struct ReadmeDoctests;
