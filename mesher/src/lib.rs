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
#![deny(missing_docs)]
#![forbid(unsafe_code)]

mod arrangement;
mod domain;
mod geometry;
mod mesh;
mod refine;
mod sizefield;
mod spatial;
mod triangulate;
mod validate;

pub use geometry::{GeometryError, Loop, Outline, Point, Segment};
pub use mesh::{BoundaryEdge, EdgeTopology, Mesh, MeshError, QualityStats, RefinementReport};
pub use triangulate::{mesh, mesh_disc_with_fixed_rim, MeshInput, ShapeInput};
