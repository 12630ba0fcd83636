//! # fluxwright-solver
//!
//! Model files, nonlinear magnetostatic finite elements and engineering
//! results. This crate knows nothing of files or terminals: it takes model
//! text (and a loader for the files a model names) and returns typed results.
//!
//! The pipeline, one module a step:
//! - [`model`]: parse and validate a model file into a [`model::Model`];
//! - [`study::mesh_for`]: mesh it (with the Kelvin image of the exterior for
//!   an open boundary), then [`study::problem`] builds a [`problem::Problem`];
//! - [`nonlinear::solve`]: Newton-Raphson on the magnetic vector potential
//!   (P1 or P2, planar or axisymmetric) with faer's sparse Cholesky;
//! - [`field`] and [`post`]: B and H, energy, flux linkage and inductance,
//!   forces and torques, Ampère loops, profiles; [`study::results`] gathers
//!   them under the result keys of the model format.
//!
//! ```
//! use fluxwright_solver::model::{Model, ModelSource};
//! use fluxwright_solver::{nonlinear, study};
//!
//! // Two long parallel wires 20 mm apart, 1 kA each in the same direction.
//! let text = r#"
//!     [[shape]]
//!     name = "a"
//!     circle = { center = [-10, 0], radius = 2 }
//!     current = 1000
//!     [[shape]]
//!     name = "b"
//!     circle = { center = [10, 0], radius = 2 }
//!     current = 1000
//!     [[force]]
//!     name = "on_b"
//!     shapes = ["b"]
//! "#;
//! let model = Model::from_toml_str(text, &ModelSource::new("wires.toml")).unwrap();
//! let mm = study::mesh_for(&model).unwrap();
//! let setup = study::problem(&model, &mm.mesh).unwrap();
//! let solution = nonlinear::solve(&setup.problem, &Default::default()).unwrap();
//! let results = study::results(&model, &mm.mesh, &setup, &solution, 0.0);
//! // Force per metre μ0 I² / 2πd = 10 N/m, attracting (towards −x).
//! let fx = results.forces["on_b"].force_n[0];
//! assert!((fx + 10.0).abs() < 0.1, "{fx}");
//! ```
#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod adapt;
pub mod assembly;
pub mod boundary;
pub mod fe;
pub mod field;
pub mod kelvin;
pub mod linear;
pub mod material;
pub mod model;
pub mod nonlinear;
pub mod ordering;
pub mod post;
pub mod problem;
pub mod progress;
pub mod study;
pub mod sweep;
