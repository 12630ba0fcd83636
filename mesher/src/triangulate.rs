//! Constrained Delaunay triangulation of layered shapes and quality
//! refinement under a graded size field.

use crate::geometry::{GeometryError, Outline};
use crate::mesh::{Mesh, MeshError};

/// One layered shape: its outline and the largest element edge inside it.
#[derive(Clone, Debug, PartialEq)]
pub struct ShapeInput {
    /// The region.
    pub outline: Outline,
    /// Largest element edge inside this shape.
    pub mesh_size: f64,
}

/// Everything the mesher needs.
#[derive(Clone, Debug, PartialEq)]
pub struct MeshInput {
    /// The edge of the meshed region; every shape lies inside it.
    pub outer: Outline,
    /// Shapes in drawing order: a later shape covers earlier ones.
    pub shapes: Vec<ShapeInput>,
    /// Largest element edge anywhere (and in the outer region).
    pub max_size: f64,
    /// Smallest triangle angle aimed for, degrees (at most about 33).
    pub min_angle_deg: f64,
    /// How fast sizes may grow away from a small feature, ratio per element
    /// (> 1).
    pub growth: f64,
    /// Largest allowed sagitta of an arc's chord, as a fraction of its radius.
    pub chord_fraction: f64,
    /// Refuse inputs estimated to need more triangles than this.
    pub max_triangles: usize,
}

/// Mesh the layered shapes.
pub fn mesh(input: &MeshInput) -> Result<Mesh, MeshError> {
    let _ = input;
    Err(MeshError::Triangulation("not built yet".into()))
}

pub(crate) fn validate_outline(outline: &Outline) -> Result<(), GeometryError> {
    if outline.loops.is_empty() || outline.area() <= 0.0 {
        return Err(GeometryError::NoArea);
    }
    Ok(())
}
