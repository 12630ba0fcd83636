//! # fluxwright-solver
//!
//! Model files, nonlinear magnetostatic finite elements and engineering
//! results. This crate knows nothing of files or terminals: it takes model
//! text and returns typed results.
#![deny(missing_docs)]
#![forbid(unsafe_code)]
