//! # fluxwright-mesher
//!
//! Geometry in, quality triangle mesh out. This crate knows nothing of
//! magnetics: it takes layered shapes (each a closed [`Outline`] with a
//! target element size), puts every edge of every shape into one constrained
//! Delaunay triangulation, refines it to a minimum angle under a graded size
//! field, and returns a [`Mesh`] whose every triangle carries the index of the
//! last shape that covers it.
//!
//! The three main types:
//! - [`Outline`]: a region bounded by closed loops of lines and arcs
//!   (rectangle, circle, polygon, sector), with translate and rotate.
//! - [`MeshInput`]: the outer outline, the shapes in drawing order, and the
//!   size and quality targets.
//! - [`Mesh`]: nodes, counter-clockwise triangles, a region on every
//!   triangle, tagged outer edges; [`Mesh::check`] verifies the invariants.
//!
//! ```
//! use fluxwright_mesher::{mesh, MeshInput, Mesh, Outline, ShapeInput};
//!
//! // A 40 × 10 block with a finer-meshed disc drawn over its middle,
//! // in a square box.
//! let outer = Outline::rectangle([-50.0, -50.0], [50.0, 50.0]).unwrap();
//! let mut input = MeshInput::new(outer, 10.0);
//! input.shapes.push(ShapeInput { outline: Outline::rectangle([-20.0, -5.0], [20.0, 5.0]).unwrap(), mesh_size: 2.0 });
//! input.shapes.push(ShapeInput { outline: Outline::circle([0.0, 0.0], 3.0).unwrap(), mesh_size: 0.5 });
//! let m = mesh(&input).unwrap();
//! m.check().unwrap();
//! assert!(m.quality().min_angle_deg >= 25.0);
//! // What is left of the block after the circle covers its middle:
//! let block: f64 = m.region_areas().iter().filter(|(r, _)| *r == 0).map(|(_, a)| a).sum();
//! let exact = 400.0 - std::f64::consts::PI * 9.0;
//! assert!((block - exact).abs() < 0.01 * 9.0, "{block} vs {exact}");
//! assert!(m.regions.iter().any(|&r| r == Mesh::OUTER_REGION));
//! ```
#![deny(missing_docs)]
#![forbid(unsafe_code)]

mod arrangement;
mod domain;
mod geometry;
mod matched;
mod mesh;
mod reconnect;
mod refine;
mod sizefield;
mod spatial;
mod triangulate;
mod validate;

pub use geometry::{GeometryError, Loop, Outline, Point, Segment};
pub use matched::MatchedPair;
pub use mesh::{
    min_angle, BoundaryEdge, EdgeTopology, Mesh, MeshError, QualityStats, RefinementReport,
};
pub use reconnect::{reconnect, ReconnectError, Reconnected};
pub use triangulate::{
    mesh, mesh_disc_with_fixed_rim, mesh_with_size_hints, MeshInput, ShapeInput,
};
