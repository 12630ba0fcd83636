//! A magnetostatic problem on a mesh, independent of any model file.

use crate::fe::SourceFn;
pub use crate::fe::{ElementOrder, Symmetry};
use crate::material::{Material, MaterialError};
use fluxwright_mesher::Mesh;
use std::sync::Arc;

/// Material and current of one region.
#[derive(Clone, Debug, PartialEq)]
pub struct RegionProps {
    /// The material.
    pub material: Material,
    /// Uniform current density, A/m², along +z (planar) or +φ
    /// (axisymmetric).
    pub current_density_a_per_m2: f64,
}

impl RegionProps {
    /// Air without current.
    pub fn air() -> RegionProps {
        RegionProps {
            material: Material::AIR,
            current_density_a_per_m2: 0.0,
        }
    }

    /// A material without current.
    pub fn of(material: Material) -> RegionProps {
        RegionProps {
            material,
            current_density_a_per_m2: 0.0,
        }
    }
}

/// A condition on one segment of the outer outline.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum EdgeCondition {
    /// A = 0: the edge is a flux line.
    ZeroPotential,
    /// Natural condition (nothing imposed): flux crosses the edge at right
    /// angles (H tangential = 0).
    FluxNormal,
    /// A equals the potential of a uniform field `b` = [bx, by], T:
    /// planar A = bx·y − by·x; axisymmetric (only an axial field, bx = 0)
    /// A_φ = by·r/2.
    UniformField {
        /// The applied field, T.
        b: [f64; 2],
    },
    /// A on this segment equals A on segment `partner`, nodes matched by the
    /// rotation or translation carrying one segment onto the other.
    Periodic {
        /// The partner segment's index.
        partner: u32,
    },
    /// A on this segment equals −A on segment `partner`.
    AntiPeriodic {
        /// The partner segment's index.
        partner: u32,
    },
    /// This segment is the rim of the Kelvin image of the exterior of the
    /// outer circle (see [`crate::kelvin`]): every dof on it equals the dof
    /// of the outer circle at its position − `offset`, and the triangles of
    /// region `region` are the image (air, no current).
    KelvinRim(crate::kelvin::KelvinMap),
}

/// Conditions on the outer outline's segments.
#[derive(Clone, Debug, PartialEq)]
pub struct BoundarySpec {
    /// The condition of every segment not listed in `segments`.
    pub default: EdgeCondition,
    /// `(segment index, condition)` overrides; a later entry wins. Where two
    /// fixed-value conditions meet at a corner node, the later one holds.
    /// The partner of a periodic segment is left to the pair (the default
    /// does not apply to it) unless it is listed here itself.
    pub segments: Vec<(u32, EdgeCondition)>,
}

impl BoundarySpec {
    /// The same condition on every segment.
    pub fn uniform(condition: EdgeCondition) -> BoundarySpec {
        BoundarySpec {
            default: condition,
            segments: Vec::new(),
        }
    }

    /// The condition of segment `s`.
    pub fn condition(&self, s: u32) -> EdgeCondition {
        self.segments
            .iter()
            .rev()
            .find(|(k, _)| *k == s)
            .map(|(_, c)| *c)
            .unwrap_or(self.default)
    }
}

/// Everything the finite-element solver needs, with no reference to a model
/// file.
#[derive(Clone)]
pub struct Problem<'a> {
    /// The mesh (coordinates in mesh units).
    pub mesh: &'a Mesh,
    /// Metres per mesh unit.
    pub length_scale_m: f64,
    /// Planar (with depth) or axisymmetric.
    pub symmetry: Symmetry,
    /// P1 or P2.
    pub order: ElementOrder,
    /// Properties indexed by region id, followed by one more entry (always
    /// the last) for [`Mesh::OUTER_REGION`]: a mesh with region ids
    /// `0..k` needs `k + 1` entries.
    pub regions: Vec<RegionProps>,
    /// Conditions on the outer outline.
    pub boundary: BoundarySpec,
    /// An extra current density as a function of position (mesh units),
    /// A/m², added to the regions' uniform ones (manufactured solutions,
    /// imported current maps). Integrated with a degree-6 rule.
    pub source: Option<Arc<SourceFn>>,
}

impl std::fmt::Debug for Problem<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Problem")
            .field("nodes", &self.mesh.nodes.len())
            .field("triangles", &self.mesh.triangles.len())
            .field("length_scale_m", &self.length_scale_m)
            .field("symmetry", &self.symmetry)
            .field("order", &self.order)
            .field("regions", &self.regions)
            .field("boundary", &self.boundary)
            .field("source", &self.source.is_some())
            .finish()
    }
}

/// Errors from setting up or solving a problem.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum SolveError {
    /// The mesh breaks an invariant.
    #[error(transparent)]
    Mesh(#[from] fluxwright_mesher::MeshError),
    /// A region's material is invalid.
    #[error("region {region}: {source}")]
    Material {
        /// The region id ([`Mesh::OUTER_REGION`] for the outer region).
        region: u32,
        /// What is wrong.
        source: MaterialError,
    },
    /// A triangle's region has no entry in [`Problem::regions`].
    #[error(
        "triangle {triangle} has region {region} but only {available} region entries are given"
    )]
    MissingRegion {
        /// The triangle.
        triangle: usize,
        /// Its region id.
        region: u32,
        /// `regions.len()`.
        available: usize,
    },
    /// A parameter is out of range.
    #[error("`{name}` = {value} is out of range: {reason}")]
    Parameter {
        /// The parameter.
        name: &'static str,
        /// Its value.
        value: f64,
        /// What it must be.
        reason: &'static str,
    },
    /// An axisymmetric mesh reaches r < 0.
    #[error(
        "axisymmetric problem: node {node} lies at r = {r} < 0 (x is the radius and must be ≥ 0)"
    )]
    NegativeRadius {
        /// The node.
        node: usize,
        /// Its x coordinate, mesh units.
        r: f64,
    },
    /// A boundary condition refers to a segment not on the outline.
    #[error("boundary condition on segment {segment}: no outer edge carries that segment index")]
    UnknownSegment {
        /// The segment.
        segment: u32,
    },
    /// A uniform radial field was asked for in an axisymmetric problem.
    #[error("uniform-field condition: an axisymmetric problem admits only an axial field (bx = 0), got bx = {bx} T")]
    RadialUniformField {
        /// The radial component given, T.
        bx: f64,
    },
    /// Periodic partners whose nodes do not match.
    #[error("periodic condition between segments {segment} and {partner}: {reason}")]
    PeriodicMismatch {
        /// The constrained segment.
        segment: u32,
        /// Its partner.
        partner: u32,
        /// What does not match.
        reason: String,
    },
    /// The Kelvin image of an open boundary does not fit the mesh or the
    /// regions.
    #[error("open boundary (Kelvin image of region {region}): {reason}")]
    KelvinImage {
        /// The image's region id.
        region: u32,
        /// What is wrong.
        reason: String,
    },
    /// The linear solver failed.
    #[error(transparent)]
    Linear(#[from] crate::linear::LinearError),
}

impl Problem<'_> {
    /// The properties of region `region` (a mesh region id or
    /// [`Mesh::OUTER_REGION`]).
    pub fn region(&self, region: u32) -> Option<&RegionProps> {
        if region == Mesh::OUTER_REGION {
            self.regions.last()
        } else if (region as usize) + 1 < self.regions.len() {
            self.regions.get(region as usize)
        } else {
            None
        }
    }

    /// Check the problem before solving: the mesh invariants, a region entry
    /// for every triangle, valid materials, the length scale and depth, and
    /// r ≥ 0 in axisymmetry.
    pub fn validate(&self) -> Result<(), SolveError> {
        self.mesh.check()?;
        if !(self.length_scale_m.is_finite() && self.length_scale_m > 0.0) {
            return Err(SolveError::Parameter {
                name: "length_scale_m",
                value: self.length_scale_m,
                reason: "must be finite and > 0",
            });
        }
        match self.symmetry {
            Symmetry::Planar { depth_m } => {
                if !(depth_m.is_finite() && depth_m > 0.0) {
                    return Err(SolveError::Parameter {
                        name: "depth_m",
                        value: depth_m,
                        reason: "must be finite and > 0",
                    });
                }
            }
            Symmetry::Axisymmetric => {
                let tol = 1e-9 * self.extent();
                if let Some((node, p)) = self
                    .mesh
                    .nodes
                    .iter()
                    .enumerate()
                    .find(|(_, p)| p[0] < -tol)
                {
                    return Err(SolveError::NegativeRadius { node, r: p[0] });
                }
            }
        }
        for (t, &region) in self.mesh.regions.iter().enumerate() {
            if self.region(region).is_none() {
                return Err(SolveError::MissingRegion {
                    triangle: t,
                    region,
                    available: self.regions.len(),
                });
            }
        }
        let last = self.regions.len().saturating_sub(1);
        for (k, props) in self.regions.iter().enumerate() {
            let region = if k == last {
                Mesh::OUTER_REGION
            } else {
                k as u32
            };
            props
                .material
                .validate()
                .map_err(|source| SolveError::Material { region, source })?;
            if !props.current_density_a_per_m2.is_finite() {
                return Err(SolveError::Parameter {
                    name: "current_density_a_per_m2",
                    value: props.current_density_a_per_m2,
                    reason: "must be finite",
                });
            }
        }
        Ok(())
    }

    /// Whether any region has a nonlinear material.
    pub fn is_nonlinear(&self) -> bool {
        self.regions.iter().any(|r| r.material.is_nonlinear())
    }

    /// Largest coordinate magnitude of the mesh, mesh units (for tolerances).
    pub(crate) fn extent(&self) -> f64 {
        self.mesh
            .nodes
            .iter()
            .fold(0.0f64, |m, p| m.max(p[0].abs()).max(p[1].abs()))
            .max(f64::MIN_POSITIVE)
    }
}
