//! # fluxwright-solver
//!
//! Model files, nonlinear magnetostatic finite elements and engineering
//! results. This crate knows nothing of files or terminals: it takes model
//! text and returns typed results.
#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod model;
pub mod assembly;
pub mod boundary;
pub mod fe;
pub mod kelvin;
pub mod field;
pub mod linear;
pub mod material;
pub mod nonlinear;
pub mod post;
pub mod problem;
pub mod study;
