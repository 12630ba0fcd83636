//! Error-driven mesh adaptation (`[mesh] adapt` and `target_error`).
//!
//! Mesh and solve the model; then, while the estimated relative energy
//! error η ([`crate::post::estimate`]) is above `target_error` and rounds
//! remain, remesh and solve again. The new sizes follow the adaptive
//! procedure of Zienkiewicz & Zhu (Int. J. Numer. Meth. Eng. 24 (1987)
//! 337–357): the target error is spread evenly over the N model triangles,
//! η_target² = target² · ‖B_h‖² / N, and triangle K asks for the size
//!
//! h_new = h_K · (η_target / η_K)^(1/p),
//!
//! with h_K its longest edge and p the element order; the change is
//! clamped to [1/4, 2] per round. The sizes go to the mesher as hints at
//! the triangle centroids ([`fluxwright_mesher::mesh_with_size_hints`]),
//! where the shapes' own mesh sizes still cap them: elements coarsen back
//! up to those at most.
//!
//! The final solution is handed to a closure instead of being returned: it
//! borrows its problem, which borrows the mesh, so returning the three
//! together would need a self-referential type. With the closure the last
//! mesh is solved once.

use crate::field::Solution;
use crate::linear::FaerCholesky;
use crate::model::Model;
use crate::nonlinear::{self, NewtonOptions};
use crate::post::estimate::{self, ErrorEstimate};
use crate::problem::SolveError;
use crate::progress::{Phase, Progress};
use crate::study::{self, ModelMesh, ProblemSetup, StudyError};
use fluxwright_mesher::{MeshError, Point};
use serde::Serialize;
use std::time::Instant;

/// Smallest and largest change of an element's size in one round.
const SIZE_CHANGE: [f64; 2] = [0.25, 2.0];

/// One solve of the adaptation: `results.adapt[]`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct AdaptRound {
    /// 0 for the first mesh, then 1, 2, ...
    pub round: u32,
    /// The model's triangles (without the Kelvin image of the exterior).
    pub triangles: usize,
    /// Unknowns after constraints.
    pub unknowns: usize,
    /// Estimated relative energy error.
    pub error_estimate: f64,
}

/// Why a model could not be meshed and solved. The first mesh failing is
/// an error; a later remesh failing ends the adaptation instead (see
/// [`Adapted::stopped`]).
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum AdaptError {
    /// Meshing the model (or building its exterior) failed.
    #[error("meshing failed: {0}")]
    Mesh(StudyError),
    /// The mesher's output broke its own invariants (a bug).
    #[error("the mesh failed its own checks: {0}")]
    MeshCheck(MeshError),
    /// The model could not be turned into a problem on the mesh.
    #[error(transparent)]
    Problem(StudyError),
    /// The solve failed.
    #[error("the solve failed: {0}")]
    Solve(SolveError),
}

/// The last round, as handed to the caller's closure.
pub struct Adapted<'a> {
    /// The final mesh.
    pub mesh: &'a ModelMesh,
    /// Seconds spent meshing it.
    pub mesh_seconds: f64,
    /// Its problem.
    pub setup: &'a ProblemSetup<'a>,
    /// Its solution.
    pub solution: &'a Solution<'a>,
    /// The error estimate of that solution.
    pub estimate: &'a ErrorEstimate,
    /// Every round solved, the last being this one.
    pub rounds: Vec<AdaptRound>,
    /// Why the adaptation ended before meeting the target with rounds left
    /// (Newton did not converge, or the next mesh could not be made), for
    /// the results' notes; `None` otherwise.
    pub stopped: Option<String>,
}

/// Mesh and solve `model`, adapting the mesh for up to `model.mesh.adapt`
/// rounds (none when 0: one mesh, one solve), calling `on_round` with each
/// round and its solution and `finish` with the last one; phases and
/// Newton steps go to `progress`.
pub fn mesh_and_solve_adaptive<R>(
    model: &Model,
    options: &NewtonOptions,
    progress: &dyn Progress,
    mut on_round: impl FnMut(&AdaptRound, &Solution<'_>),
    finish: impl FnOnce(Adapted<'_>) -> R,
) -> Result<R, AdaptError> {
    let start = Instant::now();
    progress.phase(Phase::Meshing { round: 0 });
    let mut mm = study::mesh_for(model).map_err(AdaptError::Mesh)?;
    mm.mesh.check().map_err(AdaptError::MeshCheck)?;
    let mut mesh_seconds = start.elapsed().as_secs_f64();
    let mut rounds = Vec::new();
    loop {
        let setup = study::problem(model, &mm.mesh).map_err(AdaptError::Problem)?;
        progress.phase(Phase::Solving {
            round: rounds.len() as u32,
            triangles: mm.model_triangles,
        });
        let solution = nonlinear::solve_observed(
            &setup.problem,
            options,
            Box::new(FaerCholesky::default()),
            None,
            progress,
        )
        .map_err(AdaptError::Solve)?;
        let estimate = estimate::zienkiewicz_zhu(&solution);
        let round = AdaptRound {
            round: rounds.len() as u32,
            triangles: mm.model_triangles,
            unknowns: solution.report.unknowns,
            error_estimate: estimate.relative(),
        };
        on_round(&round, &solution);
        rounds.push(round);
        let more = round.round < model.mesh.adapt && round.error_estimate > model.mesh.target_error;
        let mut stopped = None;
        let mut next = None;
        if more && !solution.report.converged {
            stopped = Some(format!(
                "adaptation stopped after round {}: Newton did not converge",
                round.round
            ));
        } else if more {
            let hints = size_hints(
                &solution,
                &estimate,
                mm.model_triangles,
                model.mesh.target_error,
            );
            let remesh_start = Instant::now();
            progress.phase(Phase::Meshing {
                round: round.round + 1,
            });
            match study::mesh_for_with_size_hints(model, &hints)
                .map_err(AdaptError::Mesh)
                .and_then(|m| m.mesh.check().map(|_| m).map_err(AdaptError::MeshCheck))
            {
                Ok(m) => next = Some((m, remesh_start.elapsed().as_secs_f64())),
                Err(e) => {
                    stopped = Some(format!(
                        "adaptation stopped after round {}: {e}",
                        round.round
                    ))
                }
            }
        }
        let Some((next_mesh, seconds)) = next else {
            return Ok(finish(Adapted {
                mesh: &mm,
                mesh_seconds,
                setup: &setup,
                solution: &solution,
                estimate: &estimate,
                rounds,
                stopped,
            }));
        };
        drop(solution);
        drop(setup);
        mm = next_mesh;
        mesh_seconds = seconds;
    }
}

/// The size each of the first `model_triangles` triangles asks for, at its
/// centroid, in mesh units (see the module docs).
pub fn size_hints(
    solution: &Solution,
    estimate: &ErrorEstimate,
    model_triangles: usize,
    target_error: f64,
) -> Vec<(Point, f64)> {
    let mesh = solution.assembler().problem().mesh;
    let p = f64::from(solution.assembler().problem().order.degree());
    let n = model_triangles.min(mesh.triangles.len()).max(1);
    let allowed_sq = target_error * target_error * estimate.norm_sq / n as f64;
    (0..n)
        .map(|t| {
            let v = mesh.triangles[t].map(|i| mesh.nodes[i as usize]);
            let centroid = [
                (v[0][0] + v[1][0] + v[2][0]) / 3.0,
                (v[0][1] + v[1][1] + v[2][1]) / 3.0,
            ];
            let longest = (0..3)
                .map(|k| {
                    let (a, b) = (v[k], v[(k + 1) % 3]);
                    (a[0] - b[0]).hypot(a[1] - b[1])
                })
                .fold(0.0, f64::max);
            let eta_sq = estimate.indicators_sq[t];
            let change = if eta_sq > 0.0 {
                (allowed_sq / eta_sq).powf(0.5 / p)
            } else {
                SIZE_CHANGE[1]
            };
            let change = if change.is_nan() {
                1.0
            } else {
                change.clamp(SIZE_CHANGE[0], SIZE_CHANGE[1])
            };
            (centroid, longest * change)
        })
        .collect()
}
