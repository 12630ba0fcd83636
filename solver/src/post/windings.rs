//! Winding flux linkage, secant and incremental inductance.
//!
//! # Flux linkage
//!
//! A winding's turns are spread uniformly over each of its sides (the
//! shapes holding its turns with one direction), as its current density is.
//! A turn at a point links the flux A·depth (planar, with its partner turn
//! on the return side) or 2πr·A_φ (axisymmetric, the flux through the
//! circle it runs around), so averaging over the turn density gives
//!
//! λ = Σ_sides (d·N / S_side) ∫_side A dV, dV = depth·dA or 2πr·dA,
//!
//! with d = ±1 the side's direction, N the turns and S_side the meshed area
//! of the side. This is λ = g·u for a fixed vector g, g_a = Σ (d·N/S) ∫ N_a dV,
//! which is exactly the load vector of the winding at unit current: the
//! assembly applies J = d·N·I/S, so its load is I·g. Consequences used and
//! tested here: for a linear problem the stored energy is W = ½ Σ λ_k I_k
//! (W = ½ u·K u = ½ u·F), and the integrals use the assembly's own
//! quadrature rule, which is exact for them.
//!
//! # Incremental inductance
//!
//! Differentiating R(u(I), I) = 0 with respect to the current of winding w
//! gives K_t du/dI_w = ∂F/∂I_w = g_w (reduced to the free unknowns), with
//! K_t the consistent tangent at the solution; then
//! dλ_v/dI_w = g_v·du/dI_w. One tangent factorisation serves every winding
//! (and is no new factorisation at all after a linear solve, see
//! [`Solution::solve_tangent`]). The matrix is symmetric, because K_t is.

use crate::boundary::DofTarget;
use crate::fe::{element_rule, CurlBasis};
use crate::field::{Solution, TangentWork};
use crate::model::{Excitation, Model};
use crate::problem::SolveError;

/// The shapes of one winding holding turns with one direction.
#[derive(Clone, Debug, PartialEq)]
pub struct WindingSide {
    /// Mesh region ids (shape indices) of the side.
    pub regions: Vec<u32>,
    /// +1 (current along +z or +φ) or −1.
    pub direction: f64,
}

/// A winding as the post-processing needs it.
#[derive(Clone, Debug, PartialEq)]
pub struct WindingSpec {
    /// Name (for results and error messages).
    pub name: String,
    /// Series turns; each side holds all of them.
    pub turns: f64,
    /// Current per turn, A, as solved.
    pub current_a: f64,
    /// The sides.
    pub sides: Vec<WindingSide>,
}

/// One winding's results (the `windings.NAME` keys of model-format.md).
#[derive(Clone, Debug, PartialEq)]
pub struct WindingResult {
    /// Name.
    pub name: String,
    /// Series turns.
    pub turns: f64,
    /// Current per turn, A.
    pub current_a: f64,
    /// Flux linkage λ, Wb (for the depth, or the full turn).
    pub flux_linkage_wb: f64,
    /// Secant inductance λ/I, H; `None` at zero current, where it is
    /// undefined.
    pub inductance_h: Option<f64>,
    /// Incremental self-inductance dλ/dI at the solution, H.
    pub incremental_inductance_h: f64,
}

/// The incremental inductance matrix dλ_v/dI_w.
#[derive(Clone, Debug, PartialEq)]
pub struct InductanceMatrix {
    /// `values[v][w]` = dλ_v/dI_w, H, in the order of the specs.
    pub values: Vec<Vec<f64>>,
    /// What the tangent solve had to assemble or factor.
    pub work: TangentWork,
}

/// Why winding results cannot be computed.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum WindingError {
    /// A side has no meshed area (no triangle carries its regions).
    #[error("winding `{winding}`: the side with direction {direction:+} has no meshed area")]
    NoArea {
        /// The winding.
        winding: String,
        /// The side's direction.
        direction: f64,
    },
    /// The tangent solve failed.
    #[error("winding incremental inductance: {0}")]
    Solve(#[from] SolveError),
}

/// The windings of `model` with their sides (grouped by the sign of the
/// shapes' directions, as the current densities are) and currents.
/// `specs[k]` is `model.windings[k]`.
pub fn winding_specs(model: &Model) -> Vec<WindingSpec> {
    model
        .windings
        .iter()
        .enumerate()
        .map(|(k, w)| {
            let mut sides: Vec<WindingSide> = Vec::new();
            for (i, s) in model.shapes.iter().enumerate() {
                if let Excitation::Winding { winding, direction } = s.excitation {
                    if winding != k {
                        continue;
                    }
                    let d = direction.signum();
                    match sides.iter_mut().find(|side| side.direction == d) {
                        Some(side) => side.regions.push(i as u32),
                        None => sides.push(WindingSide {
                            regions: vec![i as u32],
                            direction: d,
                        }),
                    }
                }
            }
            WindingSpec {
                name: w.name.clone(),
                turns: w.turns,
                current_a: w.current_a,
                sides,
            }
        })
        .collect()
}

/// The linkage vector g over all dofs: λ = g·u.
fn linkage_vector(solution: &Solution, spec: &WindingSpec) -> Result<Vec<f64>, WindingError> {
    let asm = solution.assembler();
    let problem = asm.problem();
    let mesh = problem.mesh;
    let rule = element_rule(problem.order, problem.symmetry);
    let mut g = vec![0.0; solution.dofs().n_dofs];
    for side in &spec.sides {
        let triangles: Vec<usize> = (0..mesh.triangles.len())
            .filter(|&t| side.regions.contains(&mesh.regions[t]))
            .collect();
        let area: f64 = triangles.iter().map(|&t| asm.triangle(t).area).sum();
        if !(area > 0.0) {
            return Err(WindingError::NoArea {
                winding: spec.name.clone(),
                direction: side.direction,
            });
        }
        let density = side.direction * spec.turns / area;
        for &t in &triangles {
            let tri = asm.triangle(t);
            let dofs = solution.dofs().element(t);
            for (l, w) in rule.points.iter().zip(&rule.weights) {
                let basis = CurlBasis::at(&tri, problem.order, problem.symmetry, *l);
                let weight = density * w * tri.area * basis.volume_factor;
                for (&d, n) in dofs.iter().zip(&basis.value) {
                    g[d as usize] += weight * n;
                }
            }
        }
    }
    Ok(g)
}

/// Flux linkage λ of each winding, Wb (for the depth, or the full turn).
pub fn flux_linkages(solution: &Solution, specs: &[WindingSpec]) -> Result<Vec<f64>, WindingError> {
    specs
        .iter()
        .map(|spec| {
            let g = linkage_vector(solution, spec)?;
            Ok(g.iter().zip(solution.potential()).map(|(g, u)| g * u).sum())
        })
        .collect()
}

/// The incremental inductance matrix dλ_v/dI_w at the solution: one
/// tangent factorisation (or none after a linear solve), one triangular
/// solve per winding.
pub fn incremental_inductance_matrix(
    solution: &Solution,
    specs: &[WindingSpec],
) -> Result<InductanceMatrix, WindingError> {
    let constraints = &solution.assembler().constraints;
    let n = constraints.n_free;
    let mut reduced = Vec::with_capacity(specs.len());
    for spec in specs {
        let g = linkage_vector(solution, spec)?;
        let mut r = vec![0.0; n];
        for (target, gd) in constraints.target.iter().zip(&g) {
            if let DofTarget::Free { index, sign } = *target {
                r[index as usize] += sign * gd;
            }
        }
        reduced.push(r);
    }
    let mut du = reduced.clone();
    let work = solution.solve_tangent(&mut du)?;
    let values = reduced
        .iter()
        .map(|gv| {
            du.iter()
                .map(|x| gv.iter().zip(x).map(|(a, b)| a * b).sum())
                .collect()
        })
        .collect();
    Ok(InductanceMatrix { values, work })
}

/// Flux linkage, secant and incremental self-inductance of each winding.
pub fn winding_results(
    solution: &Solution,
    specs: &[WindingSpec],
) -> Result<Vec<WindingResult>, WindingError> {
    let linkages = flux_linkages(solution, specs)?;
    let matrix = incremental_inductance_matrix(solution, specs)?;
    Ok(specs
        .iter()
        .zip(linkages)
        .enumerate()
        .map(|(k, (spec, lambda))| WindingResult {
            name: spec.name.clone(),
            turns: spec.turns,
            current_a: spec.current_a,
            flux_linkage_wb: lambda,
            inductance_h: (spec.current_a != 0.0).then(|| lambda / spec.current_a),
            incremental_inductance_h: matrix.values[k][k],
        })
        .collect())
}
