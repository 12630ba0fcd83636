//! From a checked [`Model`] and its [`Mesh`] to a solvable [`Problem`], and
//! from the solution to the results of model-format.md.
//!
//! ```no_run
//! use fluxwright_solver::model::{Model, ModelSource};
//! use fluxwright_solver::{nonlinear, study};
//!
//! # let text = "";
//! let model = Model::from_toml_str(text, &ModelSource::new("device.toml")).unwrap();
//! let mesh = fluxwright_mesher::mesh(&model.mesh_input()).unwrap();
//! let setup = study::problem(&model, &mesh).unwrap();
//! let solution = nonlinear::solve(&setup.problem, &Default::default()).unwrap();
//! let results = study::results(&model, &mesh, &setup, &solution, 0.0);
//! println!("energy {} J", results.energy_j);
//! ```

use crate::fe::{ElementOrder, Symmetry};
use crate::field::Solution;
use crate::material::{BhCurve, Material, MaterialError};
use crate::model::{EdgeKind, Excitation, Model, OuterCondition, Permeability, Symmetry as ModelSymmetry};
use crate::problem::{BoundarySpec, EdgeCondition, Problem, RegionProps};
use fluxwright_mesher::{Mesh, Outline, Point, Segment};
use serde::Serialize;
use std::collections::BTreeMap;

/// Why a model cannot be turned into a problem. Messages name the shape,
/// material or edge at fault.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum StudyError {
    /// A material cannot be built for a shape.
    #[error("shape `{shape}`, material `{material}`: {source}")]
    Material {
        /// The shape.
        shape: String,
        /// The material.
        material: String,
        /// What is wrong.
        source: MaterialError,
    },
    /// A magnet given a B-H curve instead of a recoil permeability.
    #[error("material `{0}`: a magnet needs a linear recoil `relative_permeability`, not a B-H curve")]
    MagnetWithCurve(String),
    /// A current-carrying shape has no area left in the mesh (later shapes
    /// cover all of it).
    #[error("shape `{0}` carries current but later shapes cover all of it, so the current has nowhere to flow")]
    NoConductorArea(String),
    /// An `[[edge]]` stretch matches no part of the outer edge.
    #[error("[[edge]] #{index} from {from:?} to {to:?}: {reason}")]
    Edge {
        /// 1-based index of the `[[edge]]` table.
        index: usize,
        /// Its start.
        from: Point,
        /// Its end.
        to: Point,
        /// What does not fit.
        reason: String,
    },
}

/// A problem built from a model, with what was assumed along the way.
pub struct ProblemSetup<'m> {
    /// The problem to solve.
    pub problem: Problem<'m>,
    /// Current density of each shape, A/m² (0 where none).
    pub current_density_a_per_m2: Vec<f64>,
    /// Assumptions the user should know of (shown with the results).
    pub notes: Vec<String>,
}

/// Build the finite-element problem for `model` on `mesh` (which must be
/// `fluxwright_mesher::mesh(&model.mesh_input())`).
pub fn problem<'m>(model: &Model, mesh: &'m Mesh) -> Result<ProblemSetup<'m>, StudyError> {
    let scale = model.unit_to_m();
    let mut notes = Vec::new();
    // Areas left to each shape after layering, m²: current densities use
    // what is really meshed, so the total current is exact.
    let mut area = vec![0.0; model.shapes.len()];
    for (region, a) in mesh.region_areas() {
        if region != Mesh::OUTER_REGION {
            area[region as usize] = a * scale * scale;
        }
    }
    let mut side_area: BTreeMap<(usize, i8), f64> = BTreeMap::new();
    for (i, s) in model.shapes.iter().enumerate() {
        if let Excitation::Winding { winding, direction } = s.excitation {
            *side_area.entry((winding, direction.signum() as i8)).or_default() += area[i];
        }
    }
    let mut regions = Vec::with_capacity(model.shapes.len() + 1);
    let mut densities = Vec::with_capacity(model.shapes.len());
    for (i, s) in model.shapes.iter().enumerate() {
        let m = &model.materials[s.material];
        let material_err =
            |source| StudyError::Material { shape: s.name.clone(), material: m.name.clone(), source };
        let material = match (&m.permeability, m.remanence_t) {
            (Permeability::Linear { relative }, Some(br)) => Material::Magnet {
                remanence_t: br,
                recoil_mu_r: *relative,
                direction_rad: s.magnetization_angle_deg.to_radians(),
            },
            (Permeability::Linear { relative }, None) => Material::Linear { mu_r: *relative },
            (Permeability::Curve(c), None) => {
                Material::Curve(BhCurve::try_new(&c.h_a_per_m, &c.b_t).map_err(material_err)?)
            }
            (Permeability::Curve(_), Some(_)) => return Err(StudyError::MagnetWithCurve(m.name.clone())),
        };
        let material = material.laminated(m.stacking_factor).map_err(material_err)?;
        let density = match s.excitation {
            Excitation::None => 0.0,
            Excitation::Winding { winding, direction } => {
                let w = &model.windings[winding];
                let total = side_area[&(winding, direction.signum() as i8)];
                if total <= 0.0 {
                    return Err(StudyError::NoConductorArea(s.name.clone()));
                }
                direction * w.turns * w.current_a / total
            }
            Excitation::Current { amps } => {
                if area[i] <= 0.0 {
                    return Err(StudyError::NoConductorArea(s.name.clone()));
                }
                amps / area[i]
            }
        };
        densities.push(density);
        regions.push(RegionProps { material, current_density_a_per_m2: density });
    }
    regions.push(RegionProps::air());

    let default = match model.outer.condition {
        OuterCondition::ZeroPotential => EdgeCondition::ZeroPotential,
        OuterCondition::FluxNormal => EdgeCondition::FluxNormal,
        OuterCondition::UniformField { field_t } => EdgeCondition::UniformField { b: field_t },
        OuterCondition::Open => {
            notes.push(
                "open boundary: the Kelvin-transformed exterior is not built yet; A = 0 is imposed on the \
                 outer edge instead, which is accurate when the outer edge is far (the default circle is \
                 3× the model's extent)"
                    .into(),
            );
            EdgeCondition::ZeroPotential
        }
    };
    let mut boundary = BoundarySpec::uniform(default);
    let segments = outer_segments(&model.outer.outline);
    for (k, e) in model.edges.iter().enumerate() {
        let index = k + 1;
        let on = stretch_segments(&segments, e.from, e.to)
            .map_err(|reason| StudyError::Edge { index, from: e.from, to: e.to, reason })?;
        match &e.kind {
            EdgeKind::ZeroPotential => boundary.segments.extend(on.iter().map(|&s| (s, EdgeCondition::ZeroPotential))),
            EdgeKind::FluxNormal => boundary.segments.extend(on.iter().map(|&s| (s, EdgeCondition::FluxNormal))),
            EdgeKind::Periodic { partner } | EdgeKind::AntiPeriodic { partner } => {
                let anti = matches!(e.kind, EdgeKind::AntiPeriodic { .. });
                let other = stretch_segments(&segments, partner[0], partner[1]).map_err(|reason| {
                    StudyError::Edge { index, from: e.from, to: e.to, reason: format!("partner stretch: {reason}") }
                })?;
                if other.len() != on.len() {
                    return Err(StudyError::Edge {
                        index,
                        from: e.from,
                        to: e.to,
                        reason: format!(
                            "the stretch covers {} outer segments but its partner covers {}",
                            on.len(),
                            other.len()
                        ),
                    });
                }
                for (&s, &p) in on.iter().zip(&other) {
                    let c = if anti { EdgeCondition::AntiPeriodic { partner: p } } else { EdgeCondition::Periodic { partner: p } };
                    boundary.segments.push((s, c));
                }
            }
        }
    }

    let symmetry = match model.symmetry {
        ModelSymmetry::Planar => Symmetry::Planar { depth_m: model.depth * scale },
        ModelSymmetry::Axisymmetric => Symmetry::Axisymmetric,
    };
    let order = if model.element_order == 1 { ElementOrder::P1 } else { ElementOrder::P2 };
    let problem = Problem { mesh, length_scale_m: scale, symmetry, order, regions, boundary, source: None };
    Ok(ProblemSetup { problem, current_density_a_per_m2: densities, notes })
}

/// The outer outline's segments in the mesher's numbering (all loops, in
/// order), as (start, end, is_straight).
fn outer_segments(outline: &Outline) -> Vec<(Point, Point, bool)> {
    outline
        .loops
        .iter()
        .flat_map(|l| l.segments.iter())
        .map(|s| (s.start_point(), s.end_point(), matches!(s, Segment::Line { .. })))
        .collect()
}

/// Indices of the straight outer segments lying on the stretch `from`→`to`,
/// ordered from `from` to `to`.
fn stretch_segments(segments: &[(Point, Point, bool)], from: Point, to: Point) -> Result<Vec<u32>, String> {
    let d = [to[0] - from[0], to[1] - from[1]];
    let len = d[0].hypot(d[1]);
    if !(len > 0.0) {
        return Err("`from` and `to` are the same point".into());
    }
    let tol = 1e-6 * len;
    let param = |p: Point| {
        let v = [p[0] - from[0], p[1] - from[1]];
        let along = (v[0] * d[0] + v[1] * d[1]) / len;
        let off = (v[0] * d[1] - v[1] * d[0]).abs() / len;
        (along, off)
    };
    let mut hits: Vec<(f64, u32)> = Vec::new();
    for (i, &(a, b, straight)) in segments.iter().enumerate() {
        let (ta, oa) = param(a);
        let (tb, ob) = param(b);
        let on = |t: f64, o: f64| o <= tol && t >= -tol && t <= len + tol;
        if straight && on(ta, oa) && on(tb, ob) {
            hits.push((0.5 * (ta + tb), i as u32));
        }
    }
    if hits.is_empty() {
        return Err("no straight part of the outer edge lies on this stretch".into());
    }
    hits.sort_by(|x, y| x.0.total_cmp(&y.0));
    Ok(hits.into_iter().map(|(_, i)| i).collect())
}

/// `results.json` of model-format.md (the keys built so far).
#[derive(Clone, Debug, Serialize)]
pub struct SolveResults {
    /// Always `fluxwright-results/1`.
    pub format: &'static str,
    /// What was solved.
    pub model: ModelInfo,
    /// The mesh.
    pub mesh: MeshInfo,
    /// How the solve went.
    pub solve: SolveInfo,
    /// Stored energy ∫∫H·dB dV, J (for the depth, or the full turn).
    pub energy_j: f64,
    /// Co-energy ∫∫B·dH dV, J.
    pub coenergy_j: f64,
    /// Point probes by name.
    pub probes: BTreeMap<String, ProbeResult>,
    /// Assumptions made (e.g. how the open boundary was modelled).
    pub notes: Vec<String>,
}

/// `results.model`.
#[derive(Clone, Debug, Serialize)]
pub struct ModelInfo {
    /// Title.
    pub title: String,
    /// `planar` or `axisymmetric`.
    pub symmetry: &'static str,
    /// Planar depth, m (absent when axisymmetric).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub depth_m: Option<f64>,
}

/// `results.mesh`.
#[derive(Clone, Debug, Serialize)]
pub struct MeshInfo {
    /// Mesh nodes.
    pub nodes: usize,
    /// Triangles.
    pub triangles: usize,
    /// 1 or 2.
    pub element_order: u8,
    /// Unknowns after constraints.
    pub unknowns: usize,
    /// Smallest triangle angle, degrees.
    pub min_angle_deg: f64,
}

/// `results.solve`.
#[derive(Clone, Debug, Serialize)]
pub struct SolveInfo {
    /// Whether Newton met its tolerance.
    pub converged: bool,
    /// Newton steps (1 for a linear model).
    pub iterations: usize,
    /// Final ‖R‖/‖R₀‖.
    pub relative_residual: f64,
    /// Wall-clock seconds of mesh and solve.
    pub seconds: f64,
    /// Estimated relative energy error (not computed yet: null).
    pub error_estimate: Option<f64>,
    /// ‖R‖/‖R₀‖ before the first step and after each step.
    pub residual_history: Vec<f64>,
    /// Seconds spent in each phase of the solve.
    pub timings_s: TimingsInfo,
}

/// `results.solve.timings_s`.
#[derive(Clone, Debug, Serialize)]
pub struct TimingsInfo {
    /// Dofs, constraints, sparsity pattern.
    pub setup: f64,
    /// Symbolic analysis (ordering) of the linear solver, once.
    pub analyze: f64,
    /// All assemblies.
    pub assembly: f64,
    /// All numeric factorisations.
    pub factor: f64,
    /// All triangular solves.
    pub solve: f64,
}

/// `results.probes.NAME`.
#[derive(Clone, Debug, Serialize)]
pub struct ProbeResult {
    /// Flux density, T.
    pub b_t: [f64; 2],
    /// |B|, T.
    pub b_magnitude_t: f64,
    /// Field strength, A/m.
    pub h_a_per_m: [f64; 2],
}

/// Gather the results of a solved model. `seconds` is the wall-clock time
/// to report.
pub fn results(model: &Model, mesh: &Mesh, setup: &ProblemSetup, solution: &Solution, seconds: f64) -> SolveResults {
    let report = &solution.report;
    let mut notes = setup.notes.clone();
    let mut probes = BTreeMap::new();
    for p in &model.probes {
        match solution.probe(p.at) {
            Some(f) => {
                probes.insert(
                    p.name.clone(),
                    ProbeResult { b_t: f.b, b_magnitude_t: f.b_magnitude(), h_a_per_m: f.h },
                );
            }
            None => notes.push(format!("probe `{}` at {:?} lies outside the mesh; not reported", p.name, p.at)),
        }
    }
    SolveResults {
        format: "fluxwright-results/1",
        model: ModelInfo { title: model.title.clone(), symmetry: model.symmetry.as_str(), depth_m: model.depth_m() },
        mesh: MeshInfo {
            nodes: mesh.nodes.len(),
            triangles: mesh.triangles.len(),
            element_order: model.element_order,
            unknowns: report.unknowns,
            min_angle_deg: mesh.quality().min_angle_deg,
        },
        solve: SolveInfo {
            converged: report.converged,
            iterations: report.iterations,
            relative_residual: report.relative_residual,
            seconds,
            error_estimate: None,
            residual_history: report.residual_history.clone(),
            timings_s: TimingsInfo {
                setup: report.timings.setup_s,
                analyze: report.timings.analyze_s,
                assembly: report.timings.assembly_s,
                factor: report.timings.factor_s,
                solve: report.timings.solve_s,
            },
        },
        energy_j: solution.energy(),
        coenergy_j: solution.coenergy(),
        probes,
        notes,
    }
}

/// The flux function at every dof, whose contours are flux lines at equal
/// flux steps: A_z (Wb/m) for planar models, 2π r A_φ (Wb, the flux through
/// the circle of radius r) for axisymmetric ones.
pub fn flux_function(solution: &Solution) -> Vec<f64> {
    let a = solution.potential();
    match solution.assembler().problem().symmetry {
        Symmetry::Planar { .. } => a.to_vec(),
        Symmetry::Axisymmetric => solution
            .dofs()
            .coords
            .iter()
            .zip(a)
            .map(|(p, a)| std::f64::consts::TAU * p[0] * a)
            .collect(),
    }
}
