//! From a checked [`Model`] and its [`Mesh`] to a solvable [`Problem`], and
//! from the solution to the results of model-format.md.
//!
//! ```no_run
//! use fluxwright_solver::model::{Model, ModelSource};
//! use fluxwright_solver::{nonlinear, study};
//!
//! # let text = "";
//! let model = Model::from_toml_str(text, &ModelSource::new("device.toml")).unwrap();
//! let mm = study::mesh_for(&model).unwrap();
//! let setup = study::problem(&model, &mm.mesh).unwrap();
//! let solution = nonlinear::solve(&setup.problem, &Default::default()).unwrap();
//! let results = study::results(&model, &mm.mesh, &setup, &solution, 0.0);
//! println!("energy {} J", results.energy_j);
//! ```

use crate::fe::{ElementOrder, Symmetry};
use crate::field::Solution;
use crate::kelvin::{Exterior, KelvinError, KelvinMap};
use crate::material::{BhCurve, Material, MaterialError};
use crate::model::{
    EdgeKind, Excitation, Model, OuterCondition, Permeability, Symmetry as ModelSymmetry,
};
use crate::problem::{BoundarySpec, EdgeCondition, Problem, RegionProps};
use fluxwright_mesher::{Mesh, MeshError, Outline, Point, Segment};
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
    #[error(
        "material `{0}`: a magnet needs a linear recoil `relative_permeability`, not a B-H curve"
    )]
    MagnetWithCurve(String),
    /// A current-carrying shape has no area left in the mesh (later shapes
    /// cover all of it).
    #[error("shape `{0}` carries current but later shapes cover all of it, so the current has nowhere to flow")]
    NoConductorArea(String),
    /// The mesher failed.
    #[error(transparent)]
    Mesh(#[from] MeshError),
    /// The open boundary's exterior could not be built.
    #[error(transparent)]
    Kelvin(#[from] KelvinError),
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

/// The mesh of a model: the mesher's mesh of the model, followed, when the
/// outer edge is open, by the Kelvin image of the exterior (its nodes and
/// triangles come after the model's, so `nodes[..model_nodes]` and
/// `triangles[..model_triangles]` are the model alone).
#[derive(Clone, Debug)]
pub struct ModelMesh {
    /// The whole mesh, to solve on.
    pub mesh: Mesh,
    /// Number of the model's own nodes (the first ones).
    pub model_nodes: usize,
    /// Number of the model's own triangles (the first ones).
    pub model_triangles: usize,
    /// The inversion of the exterior, when the outer edge is open.
    pub exterior: Option<KelvinMap>,
}

/// Mesh `model`, with the Kelvin image of the exterior when the outer edge
/// is open.
pub fn mesh_for(model: &Model) -> Result<ModelMesh, StudyError> {
    mesh_for_with_size_hints(model, &[])
}

/// [`mesh_for`] with size hints for the model's part
/// ([`fluxwright_mesher::mesh_with_size_hints`]; the exterior's image grades
/// from its rim as usual).
pub fn mesh_for_with_size_hints(
    model: &Model,
    size_hints: &[(Point, f64)],
) -> Result<ModelMesh, StudyError> {
    let mut mesh = fluxwright_mesher::mesh_with_size_hints(&model.mesh_input(), size_hints)?;
    let (model_nodes, model_triangles) = (mesh.nodes.len(), mesh.triangles.len());
    let mut exterior = None;
    if let Some(plan) = open_exterior(model)? {
        // Sizes grow from the rim's; the far field (the image centre) is
        // smooth, so a few elements per radius do.
        let max_size = model.mesh.max_size.min(plan.map.radius / 4.0);
        plan.attach(
            &mut mesh,
            model.mesh.growth,
            max_size,
            model.mesh.min_angle_deg,
        )?;
        exterior = Some(plan.map);
    }
    Ok(ModelMesh {
        mesh,
        model_nodes,
        model_triangles,
        exterior,
    })
}

/// The exterior plan of an open outer edge, `None` for other conditions.
fn open_exterior(model: &Model) -> Result<Option<Exterior>, KelvinError> {
    if !matches!(model.outer.condition, OuterCondition::Open) {
        return Ok(None);
    }
    let axisymmetric = matches!(model.symmetry, ModelSymmetry::Axisymmetric);
    Exterior::plan(
        &model.outer.outline,
        axisymmetric,
        model.shapes.len() as u32,
    )
    .map(Some)
}

/// Build the finite-element problem for `model` on `mesh` (which must be
/// [`mesh_for`]`(model)?.mesh`, or `fluxwright_mesher::mesh(&model.mesh_input())`,
/// with which an open outer edge falls back to A = 0).
pub fn problem<'m>(model: &Model, mesh: &'m Mesh) -> Result<ProblemSetup<'m>, StudyError> {
    let scale = model.unit_to_m();
    let mut notes = Vec::new();
    // Areas left to each shape after layering, m²: current densities use
    // what is really meshed, so the total current is exact.
    let mut area = vec![0.0; model.shapes.len()];
    for (region, a) in mesh.region_areas() {
        // Region ids past the shapes are the open boundary's exterior.
        if let Some(slot) = area.get_mut(region as usize) {
            *slot = a * scale * scale;
        }
    }
    let mut side_area: BTreeMap<(usize, i8), f64> = BTreeMap::new();
    for (i, s) in model.shapes.iter().enumerate() {
        if let Excitation::Winding { winding, direction } = s.excitation {
            *side_area
                .entry((winding, direction.signum() as i8))
                .or_default() += area[i];
        }
    }
    let mut regions = Vec::with_capacity(model.shapes.len() + 1);
    let mut densities = Vec::with_capacity(model.shapes.len());
    for (i, s) in model.shapes.iter().enumerate() {
        let m = &model.materials[s.material];
        let material_err = |source| StudyError::Material {
            shape: s.name.clone(),
            material: m.name.clone(),
            source,
        };
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
            (Permeability::Curve(_), Some(_)) => {
                return Err(StudyError::MagnetWithCurve(m.name.clone()))
            }
        };
        let material = material
            .laminated(m.stacking_factor)
            .map_err(material_err)?;
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
        regions.push(RegionProps {
            material,
            current_density_a_per_m2: density,
        });
    }
    let exterior = open_exterior(model)?.filter(|e| e.is_attached(mesh));
    if exterior.is_some() {
        regions.push(RegionProps::air());
    }
    regions.push(RegionProps::air());

    let default = match model.outer.condition {
        OuterCondition::ZeroPotential => EdgeCondition::ZeroPotential,
        OuterCondition::FluxNormal => EdgeCondition::FluxNormal,
        OuterCondition::UniformField { field_t } => EdgeCondition::UniformField { b: field_t },
        OuterCondition::Open => {
            notes.push(match (&exterior, model.symmetry) {
                (None, _) => "open boundary: the mesh has no Kelvin image of the exterior (mesh with \
                              study::mesh_for); A = 0 is imposed on the outer edge instead"
                    .into(),
                (Some(_), ModelSymmetry::Planar) => "open boundary: exterior by a Kelvin transformation; A = 0 at \
                     infinity (with a net current A grows like ln r: B is exact, A's constant and the energy \
                     are then set by the mesh at infinity)"
                    .into(),
                (Some(_), ModelSymmetry::Axisymmetric) => {
                    "open boundary: exterior by a Kelvin transformation (A = 0 at infinity)".into()
                }
            });
            // Straight sides of a sector not named by an [[edge]].
            EdgeCondition::ZeroPotential
        }
    };
    let mut boundary = BoundarySpec::uniform(default);
    let segments = outer_segments(&model.outer.outline);
    for (k, e) in model.edges.iter().enumerate() {
        let index = k + 1;
        let on = stretch_segments(&segments, e.from, e.to).map_err(|reason| StudyError::Edge {
            index,
            from: e.from,
            to: e.to,
            reason,
        })?;
        match &e.kind {
            EdgeKind::ZeroPotential => boundary
                .segments
                .extend(on.iter().map(|&s| (s, EdgeCondition::ZeroPotential))),
            EdgeKind::FluxNormal => boundary
                .segments
                .extend(on.iter().map(|&s| (s, EdgeCondition::FluxNormal))),
            EdgeKind::Periodic { partner } | EdgeKind::AntiPeriodic { partner } => {
                let anti = matches!(e.kind, EdgeKind::AntiPeriodic { .. });
                let other =
                    stretch_segments(&segments, partner[0], partner[1]).map_err(|reason| {
                        StudyError::Edge {
                            index,
                            from: e.from,
                            to: e.to,
                            reason: format!("partner stretch: {reason}"),
                        }
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
                    let c = if anti {
                        EdgeCondition::AntiPeriodic { partner: p }
                    } else {
                        EdgeCondition::Periodic { partner: p }
                    };
                    boundary.segments.push((s, c));
                }
            }
        }
    }

    if let Some(e) = &exterior {
        let extra = e.conditions(&boundary);
        boundary.segments.extend(extra);
    }

    let symmetry = match model.symmetry {
        ModelSymmetry::Planar => Symmetry::Planar {
            depth_m: model.depth * scale,
        },
        ModelSymmetry::Axisymmetric => Symmetry::Axisymmetric,
    };
    let order = if model.element_order == 1 {
        ElementOrder::P1
    } else {
        ElementOrder::P2
    };
    let problem = Problem {
        mesh,
        length_scale_m: scale,
        symmetry,
        order,
        regions,
        boundary,
        source: None,
    };
    Ok(ProblemSetup {
        problem,
        current_density_a_per_m2: densities,
        notes,
    })
}

/// The outer segments of every periodic / anti-periodic `[[edge]]` with
/// their partners, for the mesher to cut alike. Stretches that do not
/// resolve are left out here (the study reports them).
pub(crate) fn matched_pairs(model: &Model) -> Vec<fluxwright_mesher::MatchedPair> {
    let segments = outer_segments(&model.outer.outline);
    let mut pairs = Vec::new();
    for e in &model.edges {
        let (EdgeKind::Periodic { partner } | EdgeKind::AntiPeriodic { partner }) = &e.kind else {
            continue;
        };
        let (Ok(on), Ok(other)) = (
            stretch_segments(&segments, e.from, e.to),
            stretch_segments(&segments, partner[0], partner[1]),
        ) else {
            continue;
        };
        if on.len() != other.len() {
            continue;
        }
        // `from` corresponds to the partner's `from`: a segment runs
        // "forward" when it goes the way of its stretch.
        let forward = |s: u32, from: Point, to: Point| {
            let (a, b, _) = segments[s as usize];
            (b[0] - a[0]) * (to[0] - from[0]) + (b[1] - a[1]) * (to[1] - from[1]) > 0.0
        };
        for (&s, &p) in on.iter().zip(&other) {
            // A pair given twice (A with B and B with A) is matched once.
            let taken = |x: u32| {
                pairs
                    .iter()
                    .any(|q: &fluxwright_mesher::MatchedPair| q.segment == x || q.partner == x)
            };
            if s == p || taken(s) || taken(p) {
                continue;
            }
            pairs.push(fluxwright_mesher::MatchedPair {
                segment: s,
                partner: p,
                reversed: forward(s, e.from, e.to) != forward(p, partner[0], partner[1]),
            });
        }
    }
    pairs
}

/// The outer outline's segments in the mesher's numbering (all loops, in
/// order), as (start, end, is_straight).
fn outer_segments(outline: &Outline) -> Vec<(Point, Point, bool)> {
    outline
        .loops
        .iter()
        .flat_map(|l| l.segments.iter())
        .map(|s| {
            (
                s.start_point(),
                s.end_point(),
                matches!(s, Segment::Line { .. }),
            )
        })
        .collect()
}

/// Indices of the straight outer segments lying on the stretch `from`→`to`,
/// ordered from `from` to `to`.
fn stretch_segments(
    segments: &[(Point, Point, bool)],
    from: Point,
    to: Point,
) -> Result<Vec<u32>, String> {
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
    /// Every winding: flux linkage, secant and incremental inductance.
    pub windings: BTreeMap<String, WindingOut>,
    /// Forces on named shapes.
    pub forces: BTreeMap<String, ForceOut>,
    /// Torques on named shapes.
    pub torques: BTreeMap<String, TorqueOut>,
    /// Ampère's-law checks.
    pub loops: BTreeMap<String, LoopOut>,
    /// Profile name → the CSV file (relative to the output folder) that the
    /// caller writes from [`profile_samples`].
    pub profiles: BTreeMap<String, String>,
    /// Assumptions made (e.g. how the open boundary was modelled).
    pub notes: Vec<String>,
    /// The rounds of error-driven adaptation (`[mesh] adapt`), the last
    /// being the solution reported; left out when the model does not adapt.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub adapt: Vec<crate::adapt::AdaptRound>,
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
    /// Estimated relative energy error of the model's own region
    /// ([`crate::post::estimate::zienkiewicz_zhu`]).
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
    /// The whole solve (less than the sum above: the analysis and the first
    /// assembly overlap).
    pub total: f64,
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

/// `results.windings.NAME`.
#[derive(Clone, Debug, Serialize)]
pub struct WindingOut {
    /// Series turns.
    pub turns: f64,
    /// Current per turn, A.
    pub current_a: f64,
    /// Flux linkage λ, Wb (for the depth, or the full turn).
    pub flux_linkage_wb: f64,
    /// Secant inductance λ/I, H (null at zero current).
    pub inductance_h: Option<f64>,
    /// Incremental inductance dλ/dI at the operating point, H.
    pub incremental_inductance_h: f64,
}

/// `results.forces.NAME`.
#[derive(Clone, Debug, Serialize)]
pub struct ForceOut {
    /// [Fx, Fy], N (axisymmetric: [0, Fz]).
    pub force_n: [f64; 2],
    /// `stress-tensor` or `virtual-work`.
    pub method: &'static str,
}

/// `results.torques.NAME`.
#[derive(Clone, Debug, Serialize)]
pub struct TorqueOut {
    /// Torque about the requested centre, N·m (counter-clockwise positive).
    pub torque_n_m: f64,
}

/// `results.loops.NAME`.
#[derive(Clone, Debug, Serialize)]
pub struct LoopOut {
    /// ∮H·dl around the loop, A.
    pub h_line_integral_a: f64,
    /// Source current enclosed by the loop, A.
    pub enclosed_current_a: f64,
    /// |∮H·dl − I| relative to |I| (or to ∮|H·dl| when I = 0).
    pub relative_mismatch: f64,
}

/// The samples of every `[[profile]]`, for the caller to write as CSV.
pub fn profile_samples(
    model: &Model,
    solution: &Solution,
) -> Vec<(String, Vec<crate::post::profiles::ProfileSample>)> {
    model
        .profiles
        .iter()
        .map(|p| {
            (
                p.name.clone(),
                crate::post::profiles::sample_line(solution, p.from, p.to, p.samples),
            )
        })
        .collect()
}

/// The CSV file name of profile `name` inside the output folder.
pub fn profile_file(name: &str) -> String {
    format!("profiles/{name}.csv")
}

/// Gather the results of a solved model. `seconds` is the wall-clock time
/// to report.
pub fn results(
    model: &Model,
    mesh: &Mesh,
    setup: &ProblemSetup,
    solution: &Solution,
    seconds: f64,
) -> SolveResults {
    let estimate = crate::post::estimate::zienkiewicz_zhu(solution);
    results_estimated(model, mesh, setup, solution, seconds, &estimate)
}

/// [`results`] with the solution's error estimate already computed (the
/// adaptation has it), so that it is not recovered twice.
pub fn results_estimated(
    model: &Model,
    mesh: &Mesh,
    setup: &ProblemSetup,
    solution: &Solution,
    seconds: f64,
    estimate: &crate::post::estimate::ErrorEstimate,
) -> SolveResults {
    let report = &solution.report;
    let mut notes = setup.notes.clone();
    // An open boundary appends the Kelvin image of the exterior (region id
    // `shapes.len()`) after the model's own triangles and nodes; counts and
    // probes are of the model alone.
    let image_region = model.shapes.len() as u32;
    let model_triangles: Vec<usize> = (0..mesh.triangles.len())
        .filter(|&t| mesh.regions[t] != image_region)
        .collect();
    let model_nodes = model_triangles
        .iter()
        .flat_map(|&t| mesh.triangles[t])
        .map(|n| n as usize + 1)
        .max()
        .unwrap_or(0);
    let mut probes = BTreeMap::new();
    for p in &model.probes {
        match solution
            .probe(p.at)
            .filter(|f| mesh.regions[f.triangle] != image_region)
        {
            Some(f) => {
                probes.insert(
                    p.name.clone(),
                    ProbeResult {
                        b_t: f.b,
                        b_magnitude_t: f.b_magnitude(),
                        h_a_per_m: f.h,
                    },
                );
            }
            None => notes.push(format!(
                "probe `{}` at {:?} lies outside the mesh; not reported",
                p.name, p.at
            )),
        }
    }
    let mut windings = BTreeMap::new();
    let specs = crate::post::windings::winding_specs(model);
    if !specs.is_empty() {
        match crate::post::windings::winding_results(solution, &specs) {
            Ok(list) => {
                for w in list {
                    windings.insert(
                        w.name.clone(),
                        WindingOut {
                            turns: w.turns,
                            current_a: w.current_a,
                            flux_linkage_wb: w.flux_linkage_wb,
                            inductance_h: w.inductance_h,
                            incremental_inductance_h: w.incremental_inductance_h,
                        },
                    );
                }
            }
            Err(e) => notes.push(format!("windings not reported: {e}")),
        }
    }
    let regions_of = |shapes: &[usize]| shapes.iter().map(|&i| i as u32).collect::<Vec<u32>>();
    let mut forces = BTreeMap::new();
    for f in &model.forces {
        let label = match f.method {
            crate::model::ForceMethod::StressTensor => "stress-tensor",
            crate::model::ForceMethod::VirtualWork => "virtual-work",
        };
        match crate::post::force::force(solution, &regions_of(&f.shapes), f.method) {
            Ok(force_n) => {
                forces.insert(
                    f.name.clone(),
                    ForceOut {
                        force_n,
                        method: label,
                    },
                );
            }
            Err(e) => notes.push(format!("force `{}` not reported: {e}", f.name)),
        }
    }
    let mut torques = BTreeMap::new();
    for t in &model.torques {
        match crate::post::force::torque(
            solution,
            &regions_of(&t.shapes),
            t.center,
            crate::model::ForceMethod::StressTensor,
        ) {
            Ok(torque_n_m) => {
                torques.insert(t.name.clone(), TorqueOut { torque_n_m });
            }
            Err(e) => notes.push(format!("torque `{}` not reported: {e}", t.name)),
        }
    }
    let mut loops = BTreeMap::new();
    for l in &model.loops {
        match crate::post::loops::ampere_loop(solution, &l.outline) {
            Ok(r) => {
                loops.insert(
                    l.name.clone(),
                    LoopOut {
                        h_line_integral_a: r.h_line_integral_a,
                        enclosed_current_a: r.enclosed_current_a,
                        relative_mismatch: r.relative_mismatch,
                    },
                );
            }
            Err(e) => notes.push(format!("loop `{}` not reported: {e}", l.name)),
        }
    }
    let profiles = model
        .profiles
        .iter()
        .map(|p| (p.name.clone(), profile_file(&p.name)))
        .collect();
    SolveResults {
        format: "fluxwright-results/1",
        model: ModelInfo {
            title: model.title.clone(),
            symmetry: model.symmetry.as_str(),
            depth_m: model.depth_m(),
        },
        mesh: MeshInfo {
            nodes: model_nodes,
            triangles: model_triangles.len(),
            element_order: model.element_order,
            unknowns: report.unknowns,
            min_angle_deg: mesh.quality().min_angle_deg,
        },
        solve: SolveInfo {
            converged: report.converged,
            iterations: report.iterations,
            relative_residual: report.relative_residual,
            seconds,
            error_estimate: Some(estimate.relative()),
            residual_history: report.residual_history.clone(),
            timings_s: TimingsInfo {
                setup: report.timings.setup_s,
                analyze: report.timings.analyze_s,
                assembly: report.timings.assembly_s,
                factor: report.timings.factor_s,
                solve: report.timings.solve_s,
                total: report.timings.total_s,
            },
        },
        energy_j: solution.energy(),
        coenergy_j: solution.coenergy(),
        probes,
        windings,
        forces,
        torques,
        loops,
        profiles,
        notes,
        adapt: Vec::new(),
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
