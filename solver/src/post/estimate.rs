//! A posteriori error estimate by gradient recovery (Zienkiewicz & Zhu,
//! "A simple error estimator and adaptive procedure for practical
//! engineering analysis", Int. J. Numer. Meth. Eng. 24 (1987) 337–357).
//!
//! The flux density B_h of the finite-element solution jumps between
//! elements. Averaging it over the elements around each node gives a
//! continuous recovered field B*, which is closer to the true field than
//! B_h; the difference B* − B_h measures the error:
//!
//! - **Recovery.** At every node of every element (the 3 vertices for P1;
//!   the 3 vertices and 3 edge midpoints for P2), B* is the area-weighted
//!   mean of B_h at that node over the elements around it **of the same
//!   region**: B jumps at material interfaces, so a node on an interface
//!   has one recovered value per region.
//! - **Interpolation.** B* is interpolated over each element with the
//!   element's own shape functions (linear for P1, quadratic for P2).
//! - **Indicators.** η_K² = ∫_K ν |B* − B_h|² dV, with ν the secant
//!   reluctivity at the solution (ν(|B_h|²) for B-H curves, the recoil
//!   value for magnets) and dV = depth·dA planar or 2πr·dA axisymmetric.
//! - **Norm.** ‖B_h‖² = ∫ ν |B_h|² dV (for a linear material, twice the
//!   stored energy); the relative energy error is
//!   η = sqrt(Σ η_K² / ‖B_h‖²).
//!
//! **The Kelvin image is not counted.** With an open boundary the mesh also
//! holds the inverted exterior ([`crate::kelvin`]); its triangles take no
//! part in the recovery, get indicator 0 and add nothing to either sum, so
//! the estimate is that of the model's own region.

use crate::fe::{p2, quadrature, CurlBasis, ElementOrder, MAX_LOCAL};
use crate::field::Solution;
use rayon::prelude::*;
use std::collections::HashMap;

/// The error estimate of one solution.
#[derive(Clone, Debug, PartialEq)]
pub struct ErrorEstimate {
    /// η_K² = ∫_K ν |B* − B_h|² dV of every triangle of the mesh, J (0 for
    /// triangles of the Kelvin image).
    pub indicators_sq: Vec<f64>,
    /// Σ η_K², J.
    pub error_sq: f64,
    /// ‖B_h‖² = Σ ∫_K ν |B_h|² dV over the counted triangles, J.
    pub norm_sq: f64,
}

impl ErrorEstimate {
    /// The estimated relative energy error sqrt(Σ η_K² / ‖B_h‖²); 0 when
    /// the field is zero everywhere (then the solution is exact).
    pub fn relative(&self) -> f64 {
        if self.norm_sq > 0.0 {
            (self.error_sq / self.norm_sq).sqrt()
        } else {
            0.0
        }
    }
}

/// Barycentric coordinates of the local nodes (vertices, then P2 edge
/// midpoints in the order of [`p2::EDGES`]).
fn node_points(order: ElementOrder) -> Vec<[f64; 3]> {
    let mut points = vec![[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
    if order == ElementOrder::P2 {
        for [i, j] in p2::EDGES {
            let mut l = [0.0; 3];
            l[i] = 0.5;
            l[j] = 0.5;
            points.push(l);
        }
    }
    points
}

/// The local values of triangle `t`.
fn local_values(solution: &Solution, t: usize) -> [f64; MAX_LOCAL] {
    let mut ul = [0.0; MAX_LOCAL];
    for (a, &d) in solution.dofs().element(t).iter().enumerate() {
        ul[a] = solution.potential()[d as usize];
    }
    ul
}

/// The Zienkiewicz-Zhu estimate of `solution` (see the module docs).
pub fn zienkiewicz_zhu(solution: &Solution) -> ErrorEstimate {
    let asm = solution.assembler();
    let problem = asm.problem();
    let (order, symmetry) = (problem.order, problem.symmetry);
    let mesh = problem.mesh;
    let n_tri = mesh.triangles.len();
    let n_loc = order.local_dofs();
    let nodes = node_points(order);
    let counted: Vec<bool> = (0..n_tri).map(|t| asm.kelvin_image(t).is_none()).collect();

    // B_h at each local node of each counted element.
    let nodal: Vec<[[f64; 2]; MAX_LOCAL]> = (0..n_tri)
        .into_par_iter()
        .map(|t| {
            let mut b = [[0.0; 2]; MAX_LOCAL];
            if counted[t] {
                let (ul, tri) = (local_values(solution, t), asm.triangle(t));
                for (a, l) in nodes.iter().enumerate() {
                    b[a] = CurlBasis::at(&tri, order, symmetry, *l).flux_density(&ul);
                }
            }
            b
        })
        .collect();

    // Area-weighted sums per (dof, region): one slot each, in order of
    // first appearance (deterministic). Most dofs lie in one region: their
    // slot is found directly; only interface dofs need the map.
    let mut first: Vec<(u32, u32)> = vec![(0, u32::MAX); solution.dofs().n_dofs];
    let mut others: HashMap<(u32, u32), u32> = HashMap::new();
    let mut sums: Vec<[f64; 3]> = Vec::new();
    let mut slot = vec![u32::MAX; n_tri * n_loc];
    for t in (0..n_tri).filter(|&t| counted[t]) {
        let w = asm.triangle(t).area;
        let region = mesh.regions[t];
        for (a, &d) in solution.dofs().element(t).iter().enumerate() {
            let mut fresh = || {
                sums.push([0.0; 3]);
                (sums.len() - 1) as u32
            };
            let s = match first[d as usize] {
                (_, u32::MAX) => {
                    let s = fresh();
                    first[d as usize] = (region, s);
                    s
                }
                (r, s) if r == region => s,
                _ => *others.entry((d, region)).or_insert_with(fresh),
            };
            let acc = &mut sums[s as usize];
            acc[0] += w * nodal[t][a][0];
            acc[1] += w * nodal[t][a][1];
            acc[2] += w;
            slot[t * n_loc + a] = s;
        }
    }
    let recovered: Vec<[f64; 2]> = sums
        .iter()
        .map(|s| {
            if s[2] > 0.0 {
                [s[0] / s[2], s[1] / s[2]]
            } else {
                [0.0; 2]
            }
        })
        .collect();

    // |B* − B_h|² is of degree 2p on a planar element; two more for the
    // radius of axisymmetric ones and some margin for the curved A/r term.
    let rule = quadrature::dunavant(2 * order.degree() + 2);
    let per_element = energy_weighted(solution, &rule, |t, basis| {
        let mut star = [0.0; 2];
        for a in 0..n_loc {
            let r = recovered[slot[t * n_loc + a] as usize];
            star[0] += basis.value[a] * r[0];
            star[1] += basis.value[a] * r[1];
        }
        star
    });
    // Summed in element order: the same bits whatever the threads.
    ErrorEstimate {
        error_sq: per_element.iter().map(|e| e.difference).sum(),
        norm_sq: per_element.iter().map(|e| e.solution).sum(),
        indicators_sq: per_element.into_iter().map(|e| e.difference).collect(),
    }
}

/// The true relative energy error sqrt(∫ ν |B − B_h|² dV / ∫ ν |B|² dV)
/// against a known field `exact(triangle, point in mesh units)` (T), over
/// the triangles the estimate counts (a verification aid; ν as in
/// [`zienkiewicz_zhu`], integrated with a degree-8 rule).
pub fn relative_energy_error(
    solution: &Solution,
    exact: impl Fn(usize, [f64; 2]) -> [f64; 2] + Sync,
) -> f64 {
    let s = solution.assembler().problem().length_scale_m;
    let per_element = energy_weighted(solution, &quadrature::dunavant(8), |t, basis| {
        exact(t, [basis.x[0] / s, basis.x[1] / s])
    });
    let err: f64 = per_element.iter().map(|e| e.difference).sum();
    let norm: f64 = per_element.iter().map(|e| e.other).sum();
    if norm > 0.0 {
        (err / norm).sqrt()
    } else {
        0.0
    }
}

/// Energy-weighted integrals over one triangle, J: ∫ ν |C − B_h|² dV,
/// ∫ ν |B_h|² dV and ∫ ν |C|² dV for a field C compared with B_h.
#[derive(Clone, Copy, Default)]
struct Weighted {
    difference: f64,
    solution: f64,
    other: f64,
}

/// [`Weighted`] for every triangle of the mesh (zero on the Kelvin image),
/// with C = `other(triangle, basis at the quadrature point)` and ν the
/// secant reluctivity at B_h, by `rule`.
fn energy_weighted(
    solution: &Solution,
    rule: &quadrature::TriangleRule,
    other: impl Fn(usize, &CurlBasis) -> [f64; 2] + Sync,
) -> Vec<Weighted> {
    let asm = solution.assembler();
    let problem = asm.problem();
    let (order, symmetry) = (problem.order, problem.symmetry);
    (0..problem.mesh.triangles.len())
        .into_par_iter()
        .map(|t| {
            let mut sums = Weighted::default();
            if asm.kelvin_image(t).is_some() {
                return sums;
            }
            let ul = local_values(solution, t);
            let tri = asm.triangle(t);
            let material = &asm.region_props(t).material;
            for (l, w) in rule.points.iter().zip(&rule.weights) {
                let basis = CurlBasis::at(&tri, order, symmetry, *l);
                let b = basis.flux_density(&ul);
                let c = other(t, &basis);
                let weight = w * tri.area * basis.volume_factor * material.at(b).nu;
                sums.difference += weight * ((c[0] - b[0]).powi(2) + (c[1] - b[1]).powi(2));
                sums.solution += weight * (b[0] * b[0] + b[1] * b[1]);
                sums.other += weight * (c[0] * c[0] + c[1] * c[1]);
            }
            sums
        })
        .collect()
}
