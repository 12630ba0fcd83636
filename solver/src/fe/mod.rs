//! Finite elements: Lagrange triangles, quadrature and element kernels.
//!
//! # Unknown and weak form
//!
//! The unknown is one component of the magnetic vector potential: A_z
//! (planar) or A_φ (axisymmetric, x = r, y = z), in Wb/m. For every shape
//! function N_a we form its *curl vector* c_a, the flux density of a unit
//! nodal value:
//!
//! - planar: c_a = (∂N_a/∂y, −∂N_a/∂x), from B = ∇×(A ẑ);
//! - axisymmetric: c_a = (−∂N_a/∂z, N_a/r + ∂N_a/∂r), from
//!   B = ∇×(A_φ φ̂) = (−∂A_φ/∂z, (1/r)∂(rA_φ)/∂r).
//!
//! so B = Σ u_a c_a in both cases, and the weak form of ∇×H = J is
//!
//! R_a(u) = ∫ H(B)·c_a dV − ∫ J N_a dV = 0, with dV = depth·dA (planar) or
//! 2πr·dA (axisymmetric, full turn),
//!
//! whose Jacobian is the consistent tangent
//! K_ab = ∫ [ν c_a·c_b + 2 (dν/dB²)(B·c_a)(B·c_b)] dV.
//!
//! **Why A_φ and not rA_φ in axisymmetry.** With the flux function ψ = rA_φ
//! the stiffness carries a factor 1/r, whose integral over a triangle with an
//! edge on the axis diverges logarithmically; results then depend on where
//! the quadrature points happen to be. With u = A_φ the only 1/r term is
//! N_a N_b / r, and since A_φ = 0 is imposed on the axis every remaining
//! shape function vanishes there at least linearly in r, so every integrand
//! is bounded and smooth on and near the axis, and matrix entries scale with
//! r (no blow-up, no cancellation). Interior quadrature points (all rules
//! used here) never evaluate at r = 0.

pub mod p1;
pub mod p2;
pub mod quadrature;
pub mod structured;

use crate::material::Material;
use quadrature::TriangleRule;
use std::f64::consts::PI;

/// Polynomial order of the Lagrange elements.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ElementOrder {
    /// Linear triangles, 3 nodes.
    P1,
    /// Quadratic triangles, 6 nodes (vertices, then edge midpoints).
    P2,
}

impl ElementOrder {
    /// Number of nodes (degrees of freedom) per triangle.
    pub fn local_dofs(self) -> usize {
        match self {
            ElementOrder::P1 => p1::NODES,
            ElementOrder::P2 => p2::NODES,
        }
    }

    /// The polynomial degree, 1 or 2.
    pub fn degree(self) -> u32 {
        match self {
            ElementOrder::P1 => 1,
            ElementOrder::P2 => 2,
        }
    }
}

/// The problem's geometry class.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Symmetry {
    /// Plane (x, y) with current along z, extruded over `depth_m` metres.
    Planar {
        /// Out-of-plane length, m.
        depth_m: f64,
    },
    /// Body of revolution about the y axis: x = r ≥ 0, y = z, current along
    /// φ. Totals are for the full turn.
    Axisymmetric,
}

/// Maximum number of local nodes (P2).
pub const MAX_LOCAL: usize = 6;

/// Length of the packed upper triangle of a local matrix.
pub const fn packed_len(n: usize) -> usize {
    n * (n + 1) / 2
}

/// Index of entry (a, b), a ≤ b, in the row-major packed upper triangle of
/// an n × n matrix.
pub const fn packed_index(n: usize, a: usize, b: usize) -> usize {
    a * n - a * a.saturating_sub(1) / 2 + (b - a)
}

/// A straight-sided triangle in metres with its barycentric gradients.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Triangle {
    /// Vertex coordinates, m.
    pub vertices: [[f64; 2]; 3],
    /// Area, m² (positive for counter-clockwise vertices).
    pub area: f64,
    /// ∇λ_k, 1/m.
    pub grad_bary: [[f64; 2]; 3],
}

impl Triangle {
    /// The triangle with these vertices.
    pub fn new(v: [[f64; 2]; 3]) -> Triangle {
        let twice =
            (v[1][0] - v[0][0]) * (v[2][1] - v[0][1]) - (v[1][1] - v[0][1]) * (v[2][0] - v[0][0]);
        let inv = 1.0 / twice;
        let mut grad_bary = [[0.0; 2]; 3];
        for (k, g) in grad_bary.iter_mut().enumerate() {
            let (p, q) = (v[(k + 1) % 3], v[(k + 2) % 3]);
            *g = [(p[1] - q[1]) * inv, (q[0] - p[0]) * inv];
        }
        Triangle {
            vertices: v,
            area: 0.5 * twice,
            grad_bary,
        }
    }

    /// The point with barycentric coordinates `l`.
    pub fn point(&self, l: [f64; 3]) -> [f64; 2] {
        let v = &self.vertices;
        [
            l[0] * v[0][0] + l[1] * v[1][0] + l[2] * v[2][0],
            l[0] * v[0][1] + l[1] * v[1][1] + l[2] * v[2][1],
        ]
    }

    /// Barycentric coordinates of point `p` (outside the triangle some are
    /// negative).
    pub fn barycentric(&self, p: [f64; 2]) -> [f64; 3] {
        let v0 = self.vertices[0];
        let d = [p[0] - v0[0], p[1] - v0[1]];
        let g = &self.grad_bary;
        let l1 = g[1][0] * d[0] + g[1][1] * d[1];
        let l2 = g[2][0] * d[0] + g[2][1] * d[1];
        [1.0 - l1 - l2, l1, l2]
    }
}

/// Shape functions and their curl vectors at one point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CurlBasis {
    /// Number of local nodes in use.
    pub n: usize,
    /// The point, m.
    pub x: [f64; 2],
    /// N_a.
    pub value: [f64; MAX_LOCAL],
    /// c_a: the flux density of a unit value of node a, T per Wb/m.
    pub curl: [[f64; 2]; MAX_LOCAL],
    /// Volume factor dV/dA: the depth (planar) or 2πr (axisymmetric), m.
    pub volume_factor: f64,
}

impl CurlBasis {
    /// Evaluate at barycentric point `l` of `tri`.
    pub fn at(tri: &Triangle, order: ElementOrder, symmetry: Symmetry, l: [f64; 3]) -> CurlBasis {
        let mut value = [0.0; MAX_LOCAL];
        let mut dl = [[0.0; 3]; MAX_LOCAL];
        let n = order.local_dofs();
        match order {
            ElementOrder::P1 => {
                value[..3].copy_from_slice(&p1::values(l));
                dl[..3].copy_from_slice(&p1::barycentric_derivatives());
            }
            ElementOrder::P2 => {
                value.copy_from_slice(&p2::values(l));
                dl.copy_from_slice(&p2::barycentric_derivatives(l));
            }
        }
        let x = tri.point(l);
        let g = &tri.grad_bary;
        let mut curl = [[0.0; 2]; MAX_LOCAL];
        let volume_factor = match symmetry {
            Symmetry::Planar { depth_m } => {
                for a in 0..n {
                    let gx = dl[a][0] * g[0][0] + dl[a][1] * g[1][0] + dl[a][2] * g[2][0];
                    let gy = dl[a][0] * g[0][1] + dl[a][1] * g[1][1] + dl[a][2] * g[2][1];
                    curl[a] = [gy, -gx];
                }
                depth_m
            }
            Symmetry::Axisymmetric => {
                let r = x[0];
                for a in 0..n {
                    let gr = dl[a][0] * g[0][0] + dl[a][1] * g[1][0] + dl[a][2] * g[2][0];
                    let gz = dl[a][0] * g[0][1] + dl[a][1] * g[1][1] + dl[a][2] * g[2][1];
                    // On the axis A_φ = 0, so A_φ/r → ∂A_φ/∂r and B_z = 2∂A_φ/∂r
                    // (only probes land there: quadrature points are interior).
                    curl[a] = if r > 0.0 {
                        [-gz, value[a] / r + gr]
                    } else {
                        [-gz, 2.0 * gr]
                    };
                }
                2.0 * PI * r
            }
        };
        CurlBasis {
            n,
            x,
            value,
            curl,
            volume_factor,
        }
    }

    /// B = Σ u_a c_a.
    pub fn flux_density(&self, u: &[f64]) -> [f64; 2] {
        let mut b = [0.0; 2];
        for (ua, c) in u.iter().zip(&self.curl[..self.n]) {
            b[0] += ua * c[0];
            b[1] += ua * c[1];
        }
        b
    }

    /// Σ u_a N_a.
    pub fn potential(&self, u: &[f64]) -> f64 {
        (0..self.n).map(|a| u[a] * self.value[a]).sum()
    }
}

/// The quadrature rule used for the element matrices and residuals: exact
/// for the linear stiffness and for a uniform current density in each case
/// (planar P1: degree 1, planar P2: 2; axisymmetric, whose integrands carry r
/// and N_aN_b/r: P1 degree 4, P2 degree 5).
pub fn element_rule(order: ElementOrder, symmetry: Symmetry) -> TriangleRule {
    let degree = match (order, symmetry) {
        (ElementOrder::P1, Symmetry::Planar { .. }) => 1,
        (ElementOrder::P2, Symmetry::Planar { .. }) => 2,
        (ElementOrder::P1, Symmetry::Axisymmetric) => 4,
        (ElementOrder::P2, Symmetry::Axisymmetric) => 5,
    };
    quadrature::dunavant(degree)
}

/// A current density given as a function of position (in mesh units),
/// A/m², added to the regions' uniform ones.
pub type SourceFn = dyn Fn([f64; 2]) -> f64 + Send + Sync;

/// What one element needs besides its geometry and its local values.
pub(crate) struct ElementLoad<'a> {
    pub material: &'a Material,
    /// Uniform current density, A/m².
    pub current_density: f64,
    /// A position-dependent current density and the rule to integrate it.
    pub source: Option<(&'a SourceFn, &'a TriangleRule)>,
    /// Metres per mesh unit (to call `source` in mesh units).
    pub length_scale_m: f64,
}

/// Element type and integration rule.
pub(crate) struct ElementKind<'a> {
    pub order: ElementOrder,
    pub symmetry: Symmetry,
    pub rule: &'a TriangleRule,
}

/// Residual R_a and (optionally) the packed upper tangent K_ab of one
/// element at local values `u`.
pub(crate) fn element_system(
    tri: &Triangle,
    kind: &ElementKind<'_>,
    load: &ElementLoad<'_>,
    u: &[f64],
    residual: &mut [f64],
    mut tangent: Option<&mut [f64]>,
) {
    let (order, symmetry, rule) = (kind.order, kind.symmetry, kind.rule);
    let n = order.local_dofs();
    residual[..n].fill(0.0);
    if let Some(t) = tangent.as_deref_mut() {
        t[..packed_len(n)].fill(0.0);
    }
    for (l, w) in rule.points.iter().zip(&rule.weights) {
        let basis = CurlBasis::at(tri, order, symmetry, *l);
        let weight = w * tri.area * basis.volume_factor;
        let b = basis.flux_density(u);
        let mp = load.material.at(b);
        let mut b_dot_c = [0.0; MAX_LOCAL];
        for a in 0..n {
            let c = basis.curl[a];
            residual[a] +=
                weight * (mp.h[0] * c[0] + mp.h[1] * c[1] - load.current_density * basis.value[a]);
            b_dot_c[a] = b[0] * c[0] + b[1] * c[1];
        }
        if let Some(t) = tangent.as_deref_mut() {
            let two_dnu = 2.0 * mp.dnu_db2;
            let mut idx = 0;
            for a in 0..n {
                let ca = basis.curl[a];
                for bb in a..n {
                    let cb = basis.curl[bb];
                    t[idx] += weight
                        * (mp.nu * (ca[0] * cb[0] + ca[1] * cb[1])
                            + two_dnu * b_dot_c[a] * b_dot_c[bb]);
                    idx += 1;
                }
            }
        }
    }
    if let Some((source, source_rule)) = load.source {
        for (l, w) in source_rule.points.iter().zip(&source_rule.weights) {
            let basis = CurlBasis::at(tri, order, symmetry, *l);
            let x = basis.x;
            let j = source([x[0] / load.length_scale_m, x[1] / load.length_scale_m]);
            let weight = w * tri.area * basis.volume_factor * j;
            for (r, v) in residual[..n].iter_mut().zip(&basis.value) {
                *r -= weight * v;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TRI: [[f64; 2]; 3] = [[0.3, 0.1], [1.2, 0.4], [0.5, 0.9]];

    #[test]
    fn shape_functions_partition_unity_and_interpolate() {
        let tri = Triangle::new(TRI);
        for order in [ElementOrder::P1, ElementOrder::P2] {
            let b = CurlBasis::at(
                &tri,
                order,
                Symmetry::Planar { depth_m: 1.0 },
                [0.2, 0.5, 0.3],
            );
            let sum: f64 = b.value[..b.n].iter().sum();
            assert!((sum - 1.0).abs() < 1e-14);
            let cs: [f64; 2] = (0..b.n).fold([0.0, 0.0], |s, a| {
                [s[0] + b.curl[a][0], s[1] + b.curl[a][1]]
            });
            assert!(cs[0].abs() < 1e-12 && cs[1].abs() < 1e-12);
            // Nodal values of A = 2x − 3y reproduce B = (∂A/∂y, −∂A/∂x) = (−3, −2).
            let nodes: Vec<[f64; 2]> = match order {
                ElementOrder::P1 => TRI.to_vec(),
                ElementOrder::P2 => {
                    let mut v = TRI.to_vec();
                    for [i, j] in p2::EDGES {
                        v.push([0.5 * (TRI[i][0] + TRI[j][0]), 0.5 * (TRI[i][1] + TRI[j][1])]);
                    }
                    v
                }
            };
            let u: Vec<f64> = nodes.iter().map(|p| 2.0 * p[0] - 3.0 * p[1]).collect();
            let bf = b.flux_density(&u);
            assert!((bf[0] + 3.0).abs() < 1e-12 && (bf[1] + 2.0).abs() < 1e-12);
        }
    }

    #[test]
    fn axisymmetric_curl_of_uniform_axial_field() {
        // A_φ = B0 r / 2 is a uniform axial field B_z = B0 (standard result).
        let tri = Triangle::new([[0.0, 0.0], [1.0, 0.2], [0.4, 1.0]]);
        let b0 = 0.7;
        let mut v = tri.vertices.to_vec();
        for [i, j] in p2::EDGES {
            v.push([0.5 * (v[i][0] + v[j][0]), 0.5 * (v[i][1] + v[j][1])]);
        }
        let u: Vec<f64> = v.iter().map(|p| 0.5 * b0 * p[0]).collect();
        let b = CurlBasis::at(
            &tri,
            ElementOrder::P2,
            Symmetry::Axisymmetric,
            [0.1, 0.6, 0.3],
        );
        let bf = b.flux_density(&u);
        assert!(bf[0].abs() < 1e-12 && (bf[1] - b0).abs() < 1e-12);
    }

    #[test]
    fn p1_planar_stiffness_is_the_cotangent_matrix() {
        // For P1, K_ab = ν/(4A) (q_a·q_b) with q_a the rotated opposite edge
        // (standard result); here checked via its row sums (zero) and the
        // diagonal |e_a|²ν/(4A).
        let tri = Triangle::new(TRI);
        let rule = quadrature::dunavant(1);
        let mat = Material::Linear { mu_r: 1.0 };
        let load = ElementLoad {
            material: &mat,
            current_density: 0.0,
            source: None,
            length_scale_m: 1.0,
        };
        let mut r = [0.0; 6];
        let mut k = [0.0; 21];
        let kind = ElementKind {
            order: ElementOrder::P1,
            symmetry: Symmetry::Planar { depth_m: 1.0 },
            rule: &rule,
        };
        element_system(&tri, &kind, &load, &[0.0; 3], &mut r, Some(&mut k));
        let full = |a: usize, b: usize| k[packed_index(3, a.min(b), a.max(b))];
        for a in 0..3 {
            let row: f64 = (0..3).map(|b| full(a, b)).sum();
            assert!(row.abs() < 1e-6 * full(a, a));
            let (p, q) = (TRI[(a + 1) % 3], TRI[(a + 2) % 3]);
            let e2 = (p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2);
            assert!(
                (full(a, a) - crate::material::NU0 * e2 / (4.0 * tri.area)).abs()
                    < 1e-9 * full(a, a)
            );
        }
    }
}
