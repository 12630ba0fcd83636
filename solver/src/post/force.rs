//! Forces and torques on a rigid body made of mesh regions.
//!
//! # The band and its weight
//!
//! The body is the set of triangles whose region is one of the body
//! regions. A weight g, linear (P1) on every triangle, is 1 on every node of
//! the body and falls by 1/L per ring of elements outside it, reaching 0
//! after L rings (the *band*, [`DEFAULT_LAYERS`] rings by default). The band
//! grows only through plain air (μr = 1, no current); a node on any other
//! material, or on the outer edge, gets g = 0 unless it is a body node. So
//! the band lies in air wherever the body is surrounded by air, and is
//! thinner where iron or a conductor comes close.
//!
//! # Weighted Maxwell stress tensor
//!
//! With T = ν0 (B⊗B − ½|B|² I) the Maxwell stress tensor in air,
//! div T = 0 in the band, so the surface integral ∮ T·n dS over any surface
//! in the band equals the volume integral
//!
//! F = −∫_band T·∇g dV, τ = −∫_band ((x − c) × (T·∇g)) dV,
//!
//! which averages every surface through the band instead of trusting one
//! (J.L. Coulomb, "A methodology for the determination of global
//! electromechanical quantities from a finite element analysis and its
//! application to the evaluation of magnetic forces, torques and
//! stiffness", IEEE Trans. Magn. 19(6), 1983, 2514–2519; the same volume
//! form is the "weighted stress tensor" of the later literature). Planar
//! results are for the model's depth; axisymmetric ones for the full turn
//! (with 2πr in dV), where only the axial force F_z is meaningful.
//!
//! The stress tensor needs the whole band in air: a body in contact with
//! iron or with another conductor cannot be wrapped in air, and
//! [`stress_tensor_force`] refuses it ([`ForceError::BandNotAir`]); use
//! virtual work there.
//!
//! # Virtual work (Coulomb's local Jacobian derivative)
//!
//! Move every node by g·δ (the body rigidly by δ, the band distorted, the
//! rest fixed) and keep the nodal potentials. The solution makes the energy
//! functional Π(A) = ∫ w(B) dV − ∫ J·A dV stationary, so the force at
//! constant current is F·δ = −∂Π/∂s at fixed A, which only the distorted
//! band elements contribute to:
//!
//! F·δ = −∫_band [H·∂B/∂s + w(B) ∂(dV)/∂s / dV] dV,
//!
//! with ∂B/∂s from ∂(∇A)/∂s = −(∇v)ᵀ∇A for the element's affine
//! displacement field v (Coulomb, 1983, as above). This is the exact
//! derivative of the discrete co-energy, valid for any material in the band
//! as long as it carries no current (nonlinear iron included). In plain air
//! it reduces to the weighted stress tensor (the identity
//! −H·∂B/∂s − w ∂(dV)/∂s/dV = −T:∇v holds pointwise for w = ν0|B|²/2), so
//! with the band in air both methods give the same force up to rounding,
//! planar or axisymmetric; torques differ slightly (the virtual rotation is
//! interpolated linearly on each element here), and only virtual work can
//! take a band through iron, e.g. for a body in contact with iron.
//!
//! # Limits
//!
//! - No band element may carry current ([`ForceError::CurrentInBand`]); a
//!   position-dependent extra source ([`crate::problem::Problem::source`]) is
//!   assumed to vanish in the band.
//! - Where the body touches the outer edge its nodes there keep g = 1: the
//!   result is the force on the part of the body inside the model, which is
//!   what a symmetry cut needs (double it for the whole body's symmetric
//!   component). Periodic edges are not treated specially.
//! - Torques are planar only ([`ForceError::AxisymmetricTorque`]).

use crate::fe::quadrature::{dunavant, TriangleRule};
use crate::fe::Symmetry;
use crate::field::Solution;
use crate::material::{Material, NU0};
use crate::model::ForceMethod;
use crate::problem::RegionProps;
use std::f64::consts::PI;

/// Rings of elements in the band unless told otherwise.
pub const DEFAULT_LAYERS: usize = 2;

/// Degree of the quadrature rule over band elements: T is quadratic for P2
/// elements (degree 2), the torque arm adds one, and 2πr, A/r and nonlinear
/// materials want more; 6 covers them all with 12 points per element.
const BAND_RULE_DEGREE: u32 = 6;

/// Why a force or torque cannot be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ForceError {
    /// No triangle belongs to the body.
    #[error("the body (regions {regions:?}) has no triangles in the mesh")]
    EmptyBody {
        /// The body regions asked for.
        regions: Vec<u32>,
    },
    /// The body has no neighbouring element to integrate over.
    #[error("the body (regions {regions:?}) has no element around it outside the body: it fills the whole model")]
    NoBand {
        /// The body regions asked for.
        regions: Vec<u32>,
    },
    /// The stress tensor needs air around the body, and region `region`
    /// touches it.
    #[error("region {region} touches the body and is not air (μr ≠ 1 or a magnet): the stress tensor needs air around the body; use virtual work")]
    BandNotAir {
        /// The region (a shape index, or `Mesh::OUTER_REGION`).
        region: u32,
    },
    /// A current-carrying region touches the body.
    #[error("region {region} touches the body and carries current: neither force method can put its band there")]
    CurrentInBand {
        /// The region (a shape index, or `Mesh::OUTER_REGION`).
        region: u32,
    },
    /// Torque in an axisymmetric model.
    #[error("a torque is not defined in an axisymmetric model (a body of revolution has no torque about the axis from an axial field)")]
    AxisymmetricTorque,
    /// The band needs at least one ring of elements.
    #[error("the band needs at least 1 layer of elements, got {0}")]
    Layers(usize),
}

/// The weight g and the elements where it varies, around one body.
#[derive(Clone, Debug, PartialEq)]
pub struct Band {
    /// g at every mesh node: 1 on the body, 0 beyond the band.
    pub weight: Vec<f64>,
    /// The triangles outside the body with some node of g > 0.
    pub triangles: Vec<usize>,
}

fn is_plain_air(props: &RegionProps) -> bool {
    matches!(props.material, Material::Linear { mu_r } if (mu_r - 1.0).abs() <= 1e-12)
        && props.current_density_a_per_m2 == 0.0
}

impl Band {
    /// The band of `layers` rings of air elements around the triangles whose
    /// region is in `body_regions`.
    pub fn around(
        solution: &Solution,
        body_regions: &[u32],
        layers: usize,
    ) -> Result<Band, ForceError> {
        if layers == 0 {
            return Err(ForceError::Layers(layers));
        }
        let asm = solution.assembler();
        let mesh = asm.problem().mesh;
        let n_tri = mesh.triangles.len();
        let in_body: Vec<bool> = mesh
            .regions
            .iter()
            .map(|r| body_regions.contains(r))
            .collect();
        if !in_body.iter().any(|&b| b) {
            return Err(ForceError::EmptyBody {
                regions: body_regions.to_vec(),
            });
        }
        let air: Vec<bool> = (0..n_tri)
            .map(|t| is_plain_air(asm.region_props(t)))
            .collect();
        const UNREACHED: usize = usize::MAX;
        let mut level = vec![UNREACHED; mesh.nodes.len()];
        let mut blocked = vec![false; mesh.nodes.len()];
        for (t, tri) in mesh.triangles.iter().enumerate() {
            for &n in tri {
                if in_body[t] {
                    level[n as usize] = 0;
                } else if !air[t] {
                    blocked[n as usize] = true;
                }
            }
        }
        // The outer edge stays fixed: its values are imposed or natural, and
        // the stress-tensor identity needs g = 0 there.
        for e in &mesh.boundary {
            for &n in &e.nodes {
                blocked[n as usize] = true;
            }
        }
        for k in 1..layers {
            for (t, tri) in mesh.triangles.iter().enumerate() {
                if in_body[t] || !air[t] || !tri.iter().any(|&n| level[n as usize] == k - 1) {
                    continue;
                }
                for &n in tri {
                    let n = n as usize;
                    if level[n] == UNREACHED && !blocked[n] {
                        level[n] = k;
                    }
                }
            }
        }
        let weight: Vec<f64> = level
            .iter()
            .map(|&k| {
                if k < layers {
                    1.0 - k as f64 / layers as f64
                } else {
                    0.0
                }
            })
            .collect();
        let triangles: Vec<usize> = (0..n_tri)
            .filter(|&t| !in_body[t] && mesh.triangles[t].iter().any(|&n| weight[n as usize] > 0.0))
            .collect();
        if triangles.is_empty() {
            return Err(ForceError::NoBand {
                regions: body_regions.to_vec(),
            });
        }
        Ok(Band { weight, triangles })
    }

    /// ∇g on triangle `t`, 1/m.
    fn gradient(&self, solution: &Solution, t: usize) -> [f64; 2] {
        let tri = solution.assembler().triangle(t);
        let nodes = solution.assembler().problem().mesh.triangles[t];
        let mut g = [0.0; 2];
        for (k, &n) in nodes.iter().enumerate() {
            let w = self.weight[n as usize];
            g[0] += w * tri.grad_bary[k][0];
            g[1] += w * tri.grad_bary[k][1];
        }
        g
    }

    /// The band elements with the checks of `method`.
    fn checked(&self, solution: &Solution, method: ForceMethod) -> Result<(), ForceError> {
        let asm = solution.assembler();
        let mesh = asm.problem().mesh;
        for &t in &self.triangles {
            let props = asm.region_props(t);
            if props.current_density_a_per_m2 != 0.0 {
                return Err(ForceError::CurrentInBand {
                    region: mesh.regions[t],
                });
            }
            if method == ForceMethod::StressTensor && !is_plain_air(props) {
                return Err(ForceError::BandNotAir {
                    region: mesh.regions[t],
                });
            }
        }
        Ok(())
    }
}

/// One quadrature point of a band element.
struct BandPoint {
    /// Position, m.
    x: [f64; 2],
    /// Quadrature weight × area × volume factor: dV, m³ (planar: area ×
    /// depth; axisymmetric: area × 2πr).
    dv: f64,
    /// Potential, Wb/m.
    potential: f64,
    /// Flux density, T.
    b: [f64; 2],
}

/// Call `visit` at every quadrature point of band element `t`.
fn for_points(
    solution: &Solution,
    rule: &TriangleRule,
    t: usize,
    mut visit: impl FnMut(&BandPoint),
) {
    let asm = solution.assembler();
    let tri = asm.triangle(t);
    let symmetry = asm.problem().symmetry;
    for (l, w) in rule.points.iter().zip(&rule.weights) {
        let f = solution.field_in(t, *l);
        let x = tri.point(*l);
        let factor = match symmetry {
            Symmetry::Planar { depth_m } => depth_m,
            Symmetry::Axisymmetric => 2.0 * PI * x[0],
        };
        visit(&BandPoint {
            x,
            dv: w * tri.area * factor,
            potential: f.potential,
            b: f.b,
        });
    }
}

/// T·∇g with T = ν0 (B⊗B − ½|B|² I).
fn stress_dot(b: [f64; 2], grad: [f64; 2]) -> [f64; 2] {
    let half = 0.5 * (b[0] * b[0] + b[1] * b[1]);
    let bg = b[0] * grad[0] + b[1] * grad[1];
    [
        NU0 * (b[0] * bg - half * grad[0]),
        NU0 * (b[1] * bg - half * grad[1]),
    ]
}

/// Force on the body of `body_regions` by the weighted Maxwell stress
/// tensor over a band of `layers` rings of air elements, N: [Fx, Fy] for the
/// model's depth (planar), or [0, Fz] for the full turn (axisymmetric).
pub fn stress_tensor_force_with(
    solution: &Solution,
    body_regions: &[u32],
    layers: usize,
) -> Result<[f64; 2], ForceError> {
    let band = Band::around(solution, body_regions, layers)?;
    band.checked(solution, ForceMethod::StressTensor)?;
    let rule = dunavant(BAND_RULE_DEGREE);
    let mut force = [0.0; 2];
    for &t in &band.triangles {
        let grad = band.gradient(solution, t);
        for_points(solution, &rule, t, |p| {
            let tg = stress_dot(p.b, grad);
            force[0] -= tg[0] * p.dv;
            force[1] -= tg[1] * p.dv;
        });
    }
    Ok(match solution.assembler().problem().symmetry {
        Symmetry::Planar { .. } => force,
        // The radial components cancel around the turn.
        Symmetry::Axisymmetric => [0.0, force[1]],
    })
}

/// [`stress_tensor_force_with`] over [`DEFAULT_LAYERS`] rings.
pub fn stress_tensor_force(
    solution: &Solution,
    body_regions: &[u32],
) -> Result<[f64; 2], ForceError> {
    stress_tensor_force_with(solution, body_regions, DEFAULT_LAYERS)
}

/// Torque about `center` (mesh units) on the body of `body_regions` by the
/// weighted Maxwell stress tensor over `layers` rings, N·m for the model's
/// depth, counter-clockwise positive. Planar models only.
pub fn stress_tensor_torque_with(
    solution: &Solution,
    body_regions: &[u32],
    center: [f64; 2],
    layers: usize,
) -> Result<f64, ForceError> {
    let problem = solution.assembler().problem();
    if problem.symmetry == Symmetry::Axisymmetric {
        return Err(ForceError::AxisymmetricTorque);
    }
    let band = Band::around(solution, body_regions, layers)?;
    band.checked(solution, ForceMethod::StressTensor)?;
    let c = center.map(|v| v * problem.length_scale_m);
    let rule = dunavant(BAND_RULE_DEGREE);
    let mut torque = 0.0;
    for &t in &band.triangles {
        let grad = band.gradient(solution, t);
        for_points(solution, &rule, t, |p| {
            let tg = stress_dot(p.b, grad);
            let arm = [p.x[0] - c[0], p.x[1] - c[1]];
            torque -= (arm[0] * tg[1] - arm[1] * tg[0]) * p.dv;
        });
    }
    Ok(torque)
}

/// [`stress_tensor_torque_with`] over [`DEFAULT_LAYERS`] rings.
pub fn stress_tensor_torque(
    solution: &Solution,
    body_regions: &[u32],
    center: [f64; 2],
) -> Result<f64, ForceError> {
    stress_tensor_torque_with(solution, body_regions, center, DEFAULT_LAYERS)
}

/// −∂Π/∂s on band element `t` at fixed potentials, for the affine
/// displacement field v(x) = v0 + M (x − x0) of the element (per unit s).
fn element_virtual_work(
    solution: &Solution,
    rule: &TriangleRule,
    t: usize,
    displacement: impl Fn([f64; 2]) -> [f64; 2],
    m: [[f64; 2]; 2],
) -> f64 {
    let asm = solution.assembler();
    let material = &asm.region_props(t).material;
    let symmetry = asm.problem().symmetry;
    let trace = m[0][0] + m[1][1];
    let mut sum = 0.0;
    for_points(solution, rule, t, |p| {
        let b = p.b;
        // ∇A from B, and the volume change rate of dV.
        let (grad_a, a_over_r, volume_rate) = match symmetry {
            Symmetry::Planar { .. } => ([-b[1], b[0]], 0.0, trace),
            Symmetry::Axisymmetric => {
                let r = p.x[0];
                let a_r = p.potential / r;
                let vr = displacement(p.x)[0];
                ([b[1] - a_r, -b[0]], a_r, trace + vr / r)
            }
        };
        // ∂(∇A)/∂s = −Mᵀ ∇A.
        let dgrad = [
            -(m[0][0] * grad_a[0] + m[1][0] * grad_a[1]),
            -(m[0][1] * grad_a[0] + m[1][1] * grad_a[1]),
        ];
        let db = match symmetry {
            Symmetry::Planar { .. } => [dgrad[1], -dgrad[0]],
            Symmetry::Axisymmetric => {
                // A_φ/r changes because r does: ∂(A/r)/∂s = −(A/r)·v_r/r.
                let vr = displacement(p.x)[0];
                [-dgrad[1], dgrad[0] - a_over_r * vr / p.x[0]]
            }
        };
        let state = material.at(b);
        let w = material.energy_density(b);
        sum -= (state.h[0] * db[0] + state.h[1] * db[1] + w * volume_rate) * p.dv;
    });
    sum
}

/// Force on the body of `body_regions` by Coulomb's virtual work (the
/// derivative of co-energy at constant current under a rigid virtual move,
/// see the module notes) over `layers` rings, N: [Fx, Fy] for the model's
/// depth (planar), or [0, Fz] for the full turn (axisymmetric).
pub fn virtual_work_force_with(
    solution: &Solution,
    body_regions: &[u32],
    layers: usize,
) -> Result<[f64; 2], ForceError> {
    let band = Band::around(solution, body_regions, layers)?;
    band.checked(solution, ForceMethod::VirtualWork)?;
    let symmetry = solution.assembler().problem().symmetry;
    let rule = dunavant(BAND_RULE_DEGREE);
    let directions: &[usize] = match symmetry {
        Symmetry::Planar { .. } => &[0, 1],
        Symmetry::Axisymmetric => &[1],
    };
    let mut force = [0.0; 2];
    for &t in &band.triangles {
        let grad = band.gradient(solution, t);
        let tri = solution.assembler().triangle(t);
        for &k in directions {
            // v = g·e_k: ∇v = e_k ⊗ ∇g.
            let mut m = [[0.0; 2]; 2];
            m[k] = grad;
            let nodes = solution.assembler().problem().mesh.triangles[t];
            let g = nodes.map(|n| band.weight[n as usize]);
            let displacement = |x: [f64; 2]| {
                let l = tri.barycentric(x);
                let mut v = [0.0; 2];
                v[k] = l[0] * g[0] + l[1] * g[1] + l[2] * g[2];
                v
            };
            force[k] += element_virtual_work(solution, &rule, t, displacement, m);
        }
    }
    Ok(force)
}

/// [`virtual_work_force_with`] over [`DEFAULT_LAYERS`] rings.
pub fn virtual_work_force(
    solution: &Solution,
    body_regions: &[u32],
) -> Result<[f64; 2], ForceError> {
    virtual_work_force_with(solution, body_regions, DEFAULT_LAYERS)
}

/// Torque about `center` (mesh units) on the body of `body_regions` by
/// Coulomb's virtual work under a virtual rotation (each node turned by g
/// times the angle, the displacement linear on each element), N·m for the
/// model's depth, counter-clockwise positive. Planar models only.
pub fn virtual_work_torque_with(
    solution: &Solution,
    body_regions: &[u32],
    center: [f64; 2],
    layers: usize,
) -> Result<f64, ForceError> {
    let problem = solution.assembler().problem();
    if problem.symmetry == Symmetry::Axisymmetric {
        return Err(ForceError::AxisymmetricTorque);
    }
    let band = Band::around(solution, body_regions, layers)?;
    band.checked(solution, ForceMethod::VirtualWork)?;
    let c = center.map(|v| v * problem.length_scale_m);
    let rule = dunavant(BAND_RULE_DEGREE);
    let mut torque = 0.0;
    for &t in &band.triangles {
        let tri = solution.assembler().triangle(t);
        let nodes = problem.mesh.triangles[t];
        // Nodal displacement per unit angle: g · ẑ × (x − c).
        let v: [[f64; 2]; 3] = std::array::from_fn(|k| {
            let g = band.weight[nodes[k] as usize];
            let x = tri.vertices[k];
            [-g * (x[1] - c[1]), g * (x[0] - c[0])]
        });
        let mut m = [[0.0; 2]; 2];
        for (vk, gl) in v.iter().zip(&tri.grad_bary) {
            for i in 0..2 {
                for j in 0..2 {
                    m[i][j] += vk[i] * gl[j];
                }
            }
        }
        let displacement = |x: [f64; 2]| {
            let l = tri.barycentric(x);
            [
                l[0] * v[0][0] + l[1] * v[1][0] + l[2] * v[2][0],
                l[0] * v[0][1] + l[1] * v[1][1] + l[2] * v[2][1],
            ]
        };
        torque += element_virtual_work(solution, &rule, t, displacement, m);
    }
    Ok(torque)
}

/// [`virtual_work_torque_with`] over [`DEFAULT_LAYERS`] rings.
pub fn virtual_work_torque(
    solution: &Solution,
    body_regions: &[u32],
    center: [f64; 2],
) -> Result<f64, ForceError> {
    virtual_work_torque_with(solution, body_regions, center, DEFAULT_LAYERS)
}

/// Force on the body by `method` over [`DEFAULT_LAYERS`] rings.
pub fn force(
    solution: &Solution,
    body_regions: &[u32],
    method: ForceMethod,
) -> Result<[f64; 2], ForceError> {
    match method {
        ForceMethod::StressTensor => stress_tensor_force(solution, body_regions),
        ForceMethod::VirtualWork => virtual_work_force(solution, body_regions),
    }
}

/// Torque about `center` (mesh units) on the body by `method` over
/// [`DEFAULT_LAYERS`] rings.
pub fn torque(
    solution: &Solution,
    body_regions: &[u32],
    center: [f64; 2],
    method: ForceMethod,
) -> Result<f64, ForceError> {
    match method {
        ForceMethod::StressTensor => stress_tensor_torque(solution, body_regions, center),
        ForceMethod::VirtualWork => virtual_work_torque(solution, body_regions, center),
    }
}
