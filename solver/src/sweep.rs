//! Sweeps: one parameter of a model over a range, each step a full
//! nonlinear solve with every result of a single solve.
//!
//! Steps are grouped in blocks of [`block_steps`] neighbours. Within a block
//! each step starts Newton from the previous step's potential and keeps its
//! symbolic analysis; blocks are independent and run in parallel (rayon).
//! A step's numbers therefore depend on its block only, not on the number
//! of threads or shards: the blocks of shard K of N ([`Shard`]) merged with
//! the other shards' give an unsharded run's numbers to the last digit.
//!
//! A current sweep solves every step on one mesh. Move and turn sweeps keep
//! the mesh's topology where they can: nodes of the moving shapes move
//! rigidly, nodes in the air between them and the fixed parts move by a
//! harmonic blend (a weight solving Laplace's equation on the air, 1 on the
//! moving parts, 0 on the fixed parts and the outer edge), so results vary
//! smoothly from step to step. When the blend would distort some element too
//! much, the same nodes at their blended places are reconnected: the
//! deforming band (air, and fixed shapes the moving ones are drawn over) is
//! triangulated anew on its nodes with its outline kept
//! ([`fluxwright_mesher::reconnect`]), so the mesh changes only by edge
//! flips in the band where it shears, and later steps blend from that mesh.
//! Only when that too gives poor elements is a step meshed afresh.

use crate::field::Solution;
use crate::linear::{FaerCholesky, SpdSolver};
use crate::model::{EdgeKind, Excitation, Model, Permeability, Sweep};
use crate::nonlinear::{self, NewtonOptions};
use crate::problem::SolveError;
use crate::study::{self, ModelMesh, SolveResults, StudyError};
use fluxwright_mesher::{reconnect, Mesh, Point, Segment};
use rayon::prelude::*;
use std::borrow::Cow;
use std::collections::HashMap;
use std::time::Instant;

/// How many neighbouring steps one block solves one after another (warm
/// starts), for a sweep of `total_steps`: half the sweep, between 4 and 11.
/// Each block starts Newton cold (about 10 steps on a saturating core
/// against 4-5 warm), so long blocks are cheaper; two blocks keep two cores
/// busy, and blocks of at most 11 leave enough of them for shards. It
/// depends on the step count alone, so shards and thread counts never
/// change the numbers. Measured on a 21-step current sweep of a 59k-unknown
/// choke (benches/sweep.rs): blocks of 4 cost 6.6 single solves, of 11 5.2.
pub fn block_steps(total_steps: usize) -> usize {
    total_steps.div_ceil(2).clamp(4, 11)
}

/// A blended element may lose at most this fraction of its smallest angle
/// before the step is meshed afresh (common practice for mesh morphing, no
/// source: the solution error grows with the angle lost).
const BLEND_ANGLE_FRACTION: f64 = 0.6;

/// Harmonic weights below this stay 0 and above 1 − this become 1, with a
/// linear ramp between (common practice for sliding bands, no source:
/// nodes next to a part keep their place relative to it).
const WEIGHT_RAMP: f64 = 0.2;

/// Rounds of leaving out nodes next to poor elements in a reconnection
/// before the step is meshed afresh instead.
const RECONNECT_ROUNDS: usize = 8;

/// One shard of a sweep: every `count`-th block, starting at block `index`
/// (0-based).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Shard {
    /// Which shard, `0..count`.
    pub index: usize,
    /// How many shards in all, ≥ 1.
    pub count: usize,
}

/// How to run a sweep.
#[derive(Clone, Copy, Debug, Default)]
pub struct SweepOptions {
    /// Newton's stopping rules for every step.
    pub newton: NewtonOptions,
    /// Run only this shard's steps (all when `None`).
    pub shard: Option<Shard>,
}

/// Where a step's mesh came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum StepMesh {
    /// The sweep's one mesh (a current sweep).
    Shared,
    /// Meshed afresh for this step's geometry (a move or turn sweep's first
    /// step, or one where blending would distort the mesh too much).
    Fresh,
    /// The last fresh or reconnected mesh with its nodes blended to this
    /// step's geometry.
    Blended,
    /// The previous step's mesh, its nodes blended to this step's geometry
    /// and the deforming band between moving and fixed parts triangulated
    /// anew on the same nodes (no node added; a few air nodes dropped where
    /// elements would be too poor).
    Reconnected,
}

/// One solved step.
#[derive(Clone, Debug)]
pub struct SweepStep {
    /// Step number, 0-based, over the whole sweep.
    pub index: usize,
    /// The swept value (A, model length unit, or degrees).
    pub value: f64,
    /// Where the mesh came from.
    pub mesh: StepMesh,
    /// Every result of a single solve at this step.
    pub results: SolveResults,
}

/// Why a sweep stopped.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum SweepError {
    /// The model has no `[sweep]`.
    #[error("the model has no [sweep] table")]
    NoSweep,
    /// A shard outside `1..=count`, or zero shards.
    #[error("shard {index} of {count} does not exist (shards are 1 to {count})")]
    BadShard {
        /// 1-based shard asked for.
        index: usize,
        /// Number of shards.
        count: usize,
    },
    /// A step's model could not be meshed or set up.
    #[error("step {index} ({value}): {source}")]
    Study {
        /// Step number, 0-based.
        index: usize,
        /// Swept value.
        value: f64,
        /// What went wrong.
        source: StudyError,
    },
    /// A step's solve failed.
    #[error("step {index} ({value}): the solve failed: {source}")]
    Solve {
        /// Step number, 0-based.
        index: usize,
        /// Swept value.
        value: f64,
        /// What went wrong.
        source: SolveError,
    },
}

/// The step numbers a shard solves (all steps without one), ascending.
pub fn shard_steps(total_steps: usize, shard: Option<Shard>) -> Vec<usize> {
    let (index, count) = shard.map_or((0, 1), |s| (s.index, s.count.max(1)));
    let block = block_steps(total_steps);
    (0..total_steps)
        .filter(|k| (k / block) % count == index)
        .collect()
}

/// `model` with its sweep parameter set to `value`: a winding's current, or
/// the moving shapes translated by `value` along the direction, or turned
/// by `value` degrees about the centre (magnetisation directions turn with
/// them). Probes, profiles, loops and torque centres stay where they are.
pub fn model_at(model: &Model, value: f64) -> Model {
    let mut m = model.clone();
    match &model.sweep {
        None => {}
        Some(Sweep::Current { winding, .. }) => m.windings[*winding].current_a = value,
        Some(Sweep::Move { shapes, along, .. }) => {
            for &i in shapes {
                let d = [along[0] * value, along[1] * value];
                m.shapes[i].outline = model.shapes[i].outline.translated(d);
            }
        }
        Some(Sweep::Turn { shapes, center, .. }) => {
            for &i in shapes {
                let s = &mut m.shapes[i];
                s.outline = model.shapes[i].outline.rotated(value, *center);
                s.magnetization_angle_deg += value;
            }
        }
    }
    m
}

/// Solve the model's sweep (or one shard of it). `on_step` is called as
/// each step finishes (from worker threads, in no fixed order); the steps
/// are returned in order.
pub fn run(
    model: &Model,
    options: &SweepOptions,
    on_step: &(dyn Fn(&SweepStep) + Sync),
) -> Result<Vec<SweepStep>, SweepError> {
    let sweep = model.sweep.as_ref().ok_or(SweepError::NoSweep)?;
    if let Some(s) = options.shard {
        if s.count == 0 || s.index >= s.count {
            return Err(SweepError::BadShard {
                index: s.index + 1,
                count: s.count,
            });
        }
    }
    let values = sweep.values();
    let plan = Plan::new(model, sweep, &values)?;
    let steps = shard_steps(values.len(), options.shard);
    let block = block_steps(values.len());
    let blocks: Vec<&[usize]> = steps.chunk_by(|a, b| a / block == b / block).collect();
    let solved: Vec<Vec<SweepStep>> = blocks
        .par_iter()
        .map(|block| solve_block(model, &plan, &values, block, &options.newton, on_step))
        .collect::<Result<_, _>>()?;
    Ok(solved.into_iter().flatten().collect())
}

/// Solve consecutive steps, each from its predecessor's potential when both
/// are on the same mesh.
fn solve_block(
    model: &Model,
    plan: &Plan,
    values: &[f64],
    block: &[usize],
    newton: &NewtonOptions,
    on_step: &(dyn Fn(&SweepStep) + Sync),
) -> Result<Vec<SweepStep>, SweepError> {
    let mut out = Vec::with_capacity(block.len());
    let mut solver: Box<dyn SpdSolver> = Box::new(FaerCholesky::default());
    let mut previous: Option<(usize, Vec<f64>)> = None;
    for &k in block {
        let start = Instant::now();
        let value = values[k];
        let (base_index, kind) = plan.steps[k];
        let base = &plan.bases[base_index];
        let mesh: Cow<Mesh> = match kind {
            StepMesh::Blended => {
                let blend = base.blend.as_ref().expect("blended steps have a blend");
                let mut m = base.mm.mesh.clone();
                m.nodes = blend.nodes_at(&base.mm.mesh.nodes, value - base.value);
                Cow::Owned(m)
            }
            _ => Cow::Borrowed(&base.mm.mesh),
        };
        let step_model = model_at(model, value);
        let setup = study::problem(&step_model, &mesh).map_err(|source| SweepError::Study {
            index: k,
            value,
            source,
        })?;
        let warm = previous
            .as_ref()
            .filter(|(b, _)| *b == base_index)
            .map(|(_, u)| u.as_slice());
        let solution =
            nonlinear::solve_from(&setup.problem, newton, solver, warm).map_err(|source| {
                SweepError::Solve {
                    index: k,
                    value,
                    source,
                }
            })?;
        let results = study::results(
            &step_model,
            &mesh,
            &setup,
            &solution,
            start.elapsed().as_secs_f64(),
        );
        solver = take_solver(&solution);
        previous = Some((base_index, solution.potential().to_vec()));
        let step = SweepStep {
            index: k,
            value,
            mesh: kind,
            results,
        };
        on_step(&step);
        out.push(step);
    }
    Ok(out)
}

fn take_solver(solution: &Solution) -> Box<dyn SpdSolver> {
    solution
        .take_solver()
        .unwrap_or_else(|| Box::new(FaerCholesky::default()))
}

/// Which mesh each step uses. Planned in step order for the whole sweep
/// (cheap next to the solves), so every shard plans the same meshes.
struct Plan {
    bases: Vec<Base>,
    /// For each step: its base and how the base is used.
    steps: Vec<(usize, StepMesh)>,
}

/// A mesh made afresh at one swept value.
struct Base {
    value: f64,
    mm: ModelMesh,
    /// How to move its nodes to nearby values (`None`: the layout does not
    /// allow blending, so every step is meshed afresh).
    blend: Option<Blend>,
}

impl Plan {
    fn new(model: &Model, sweep: &Sweep, values: &[f64]) -> Result<Plan, SweepError> {
        let fresh = |k: usize| -> Result<Base, SweepError> {
            let value = values[k];
            let mm =
                study::mesh_for(&model_at(model, value)).map_err(|source| SweepError::Study {
                    index: k,
                    value,
                    source,
                })?;
            let blend = Blend::new(model, sweep, &mm, None);
            Ok(Base { value, mm, blend })
        };
        let mut bases = vec![fresh(0)?];
        if matches!(sweep, Sweep::Current { .. }) {
            return Ok(Plan {
                bases,
                steps: vec![(0, StepMesh::Shared); values.len()],
            });
        }
        let mut steps = vec![(0, StepMesh::Fresh)];
        for (k, &value) in values.iter().enumerate().skip(1) {
            let last = bases.len() - 1;
            let base = &bases[last];
            let fits = base
                .blend
                .as_ref()
                .is_some_and(|b| b.keeps_quality(&base.mm.mesh, value - base.value));
            if fits {
                steps.push((last, StepMesh::Blended));
            } else if let Some(next) = reconnected(model, sweep, base, value) {
                bases.push(next);
                steps.push((bases.len() - 1, StepMesh::Reconnected));
            } else {
                bases.push(fresh(k)?);
                steps.push((bases.len() - 1, StepMesh::Fresh));
            }
        }
        Ok(Plan { bases, steps })
    }
}

/// `base` blended to `value` with its deforming band reconnected, when every
/// new element of the band keeps the quality floor of the fresh mesh the
/// base descends from; `None` otherwise.
fn reconnected(model: &Model, sweep: &Sweep, base: &Base, value: f64) -> Option<Base> {
    let blend = base.blend.as_ref()?;
    let mm = &base.mm;
    let mesh = &mm.mesh;
    let nt = mm.model_triangles;
    let nodes = blend.nodes_at(&mesh.nodes, value - base.value);
    // Air of every shape is one region for the reconnection (borders
    // between air shapes are no borders for the field), labelled again
    // afterwards from this step's shapes.
    let labels: Vec<u32> = (0..nt)
        .map(|t| {
            let r = mesh.regions[t];
            if blend.air[t] && blend.band[t] {
                Mesh::OUTER_REGION
            } else {
                r
            }
        })
        .collect();
    let keep: Vec<bool> = (0..nt).map(|t| !blend.band[t]).collect();
    // Nodes that may be left out: inside the band's air, off the outer edge.
    let mut droppable = vec![true; mesh.nodes.len()];
    droppable[mm.model_nodes..].fill(false);
    for (t, tri) in mesh.triangles[..nt].iter().enumerate() {
        if !(blend.band[t] && blend.air[t]) {
            tri.iter().for_each(|&v| droppable[v as usize] = false);
        }
    }
    for e in &mesh.boundary {
        e.nodes.iter().for_each(|&v| droppable[v as usize] = false);
    }
    // Reconnect; where a new element is poor, leave out a node of it next
    // to its shortest edge (one node per element, a few rounds).
    let mut drop = vec![false; mesh.nodes.len()];
    let mut new = None;
    for _ in 0..RECONNECT_ROUNDS {
        let r = reconnect(&nodes, &mesh.triangles[..nt], &labels, &keep, &drop).ok()?;
        let mut more = false;
        for (t, tri) in r.triangles.iter().enumerate() {
            let p = tri.map(|v| nodes[v as usize]);
            if !r.band[t] || (area2(p) > 0.0 && min_angle_deg(p) >= blend.floor) {
                continue;
            }
            let len = |k: usize| {
                let (a, b) = (p[k], p[(k + 1) % 3]);
                (b[0] - a[0]).hypot(b[1] - a[1])
            };
            let mut edges = [0, 1, 2];
            edges.sort_by(|&i, &j| len(i).total_cmp(&len(j)));
            let pick = edges
                .iter()
                .flat_map(|&k| [tri[k], tri[(k + 1) % 3]])
                .find(|&v| droppable[v as usize]);
            match pick {
                Some(v) if !drop[v as usize] => {
                    drop[v as usize] = true;
                    more = true;
                }
                Some(_) => {}
                None => return None,
            }
        }
        if !more {
            new = Some(r);
            break;
        }
    }
    let new = new?;
    // Number the nodes left anew.
    let mut renumber = vec![u32::MAX; mesh.nodes.len()];
    let mut nodes_left = Vec::with_capacity(nodes.len());
    for (v, p) in nodes.iter().enumerate() {
        if !drop[v] {
            renumber[v] = nodes_left.len() as u32;
            nodes_left.push(*p);
        }
    }
    let re = |tri: [u32; 3]| tri.map(|v| renumber[v as usize]);
    let step_model = model_at(model, value);
    let mut next = mm.clone();
    let dropped = drop.iter().filter(|&&d| d).count();
    next.model_nodes -= dropped;
    next.model_triangles = new.triangles.len();
    next.mesh.nodes = nodes_left;
    next.mesh.triangles = new
        .triangles
        .iter()
        .chain(&mesh.triangles[nt..])
        .map(|&t| re(t))
        .collect();
    next.mesh.regions = new
        .regions
        .iter()
        .chain(&mesh.regions[nt..])
        .copied()
        .collect();
    for e in &mut next.mesh.boundary {
        e.nodes = e.nodes.map(|v| renumber[v as usize]);
    }
    for t in 0..new.triangles.len() {
        if new.band[t] && new.regions[t] == Mesh::OUTER_REGION {
            let [a, b, c] = next.mesh.triangles[t].map(|v| next.mesh.nodes[v as usize]);
            let centroid = [(a[0] + b[0] + c[0]) / 3.0, (a[1] + b[1] + c[1]) / 3.0];
            next.mesh.regions[t] = step_model
                .shapes
                .iter()
                .enumerate()
                .rev()
                .find(|(i, sh)| is_air(&step_model, *i) && sh.outline.contains(centroid))
                .map_or(Mesh::OUTER_REGION, |(i, _)| i as u32);
        }
    }
    if next.mesh.check().is_err() {
        return None;
    }
    let blend = Blend::new(model, sweep, &next, Some(blend.floor));
    Some(Base {
        value,
        mm: next,
        blend,
    })
}

/// Whether shape `i` is air: no material of its own, no current, no magnet.
fn is_air(model: &Model, i: usize) -> bool {
    let s = &model.shapes[i];
    let m = &model.materials[s.material];
    matches!(s.excitation, Excitation::None)
        && m.remanence_t.is_none()
        && matches!(m.permeability, Permeability::Linear { relative } if relative == 1.0)
}

/// Doubled signed area of a triangle.
fn area2([a, b, c]: [Point; 3]) -> f64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

/// The harmonic blend of one base mesh.
struct Blend {
    motion: Motion,
    /// Weight of each node: 1 moves with the shapes, 0 stays.
    weight: Vec<f64>,
    /// Smallest angle of each triangle of the base mesh, degrees.
    base_angles: Vec<f64>,
    /// Triangles with a node of weight other than 0 (the ones that change).
    changed: Vec<usize>,
    /// For each model triangle: whether it is air (of the outer region or
    /// of a fixed air shape).
    air: Vec<bool>,
    /// For each model triangle: whether it may be reconnected (air or a
    /// deforming fixed shape, with a node of weight other than 0).
    band: Vec<bool>,
    /// Smallest angle a reconnected element may have, degrees: a fraction
    /// [`BLEND_ANGLE_FRACTION`] of the fresh mesh's smallest angle in its
    /// deforming part.
    floor: f64,
}

#[derive(Clone, Copy)]
enum Motion {
    Move { along: Point },
    Turn { center: Point },
}

impl Blend {
    /// `None` when some node belongs both to a moving shape and to a part
    /// that must stay (a fixed shape, or an outer edge it cannot slide on).
    ///
    /// A fixed shape that a moving one is drawn over (they share nodes, as a
    /// magnet seated in rotor iron) has its region cut by the moving shape,
    /// so its mesh must deform with it: its interior blends like air, and
    /// the nodes on its own edges slide along them where the motion keeps
    /// those edges in place (circles about a turn's centre, lines along a
    /// move) and stay put elsewhere. `floor` is the quality floor of the
    /// fresh mesh this one descends from (`None`: this is a fresh mesh).
    fn new(model: &Model, sweep: &Sweep, mm: &ModelMesh, floor: Option<f64>) -> Option<Blend> {
        let (moving, motion): (&[usize], Motion) = match sweep {
            Sweep::Current { .. } => return None,
            Sweep::Move { shapes, along, .. } => (shapes, Motion::Move { along: *along }),
            Sweep::Turn { shapes, center, .. } => (shapes, Motion::Turn { center: *center }),
        };
        let mesh = &mm.mesh;
        let n = mm.model_nodes;
        let nt = mm.model_triangles;
        let triangles = &mesh.triangles[..nt];
        let is_moving = |region: u32| moving.contains(&(region as usize));
        let air: Vec<bool> = mesh.regions[..nt]
            .iter()
            .map(|&r| {
                r == Mesh::OUTER_REGION
                    || (!is_moving(r)
                        && model.shapes.get(r as usize).is_some()
                        && is_air(model, r as usize))
            })
            .collect();
        // Fixed solid shapes sharing a node with a moving shape deform.
        let mut on_moving = vec![false; mesh.nodes.len()];
        for (t, tri) in triangles.iter().enumerate() {
            if is_moving(mesh.regions[t]) {
                tri.iter().for_each(|&v| on_moving[v as usize] = true);
            }
        }
        let mut deforming_shape = vec![false; model.shapes.len()];
        for (t, tri) in triangles.iter().enumerate() {
            let r = mesh.regions[t];
            if !air[t] && !is_moving(r) && tri.iter().any(|&v| on_moving[v as usize]) {
                deforming_shape[r as usize] = true;
            }
        }
        let deforming = |t: usize| air[t] || deforming_shape[mesh.regions[t] as usize];
        // 0: free node, 1: moves, 2: stays.
        let mut role = vec![0u8; mesh.nodes.len()];
        role[n..].fill(2);
        let mut conflict = false;
        let mut mark = |role: &mut [u8], node: u32, r: u8| {
            let slot = &mut role[node as usize];
            if *slot != 0 && *slot != r {
                conflict = true;
            }
            *slot = r;
        };
        for (t, tri) in triangles.iter().enumerate() {
            if is_moving(mesh.regions[t]) {
                tri.iter().for_each(|&v| mark(&mut role, v, 1));
            } else if !deforming(t) {
                tri.iter().for_each(|&v| mark(&mut role, v, 2));
            }
        }
        // Edges of deforming shapes against other fixed regions: their
        // nodes stay unless every such edge there keeps its place under the
        // motion.
        let keeps_place = |a: Point, b: Point| -> bool {
            match motion {
                Motion::Move { along } => {
                    let d = [b[0] - a[0], b[1] - a[1]];
                    (d[0] * along[1] - d[1] * along[0]).abs() <= 1e-9 * d[0].hypot(d[1])
                }
                Motion::Turn { center } => {
                    let ra = (a[0] - center[0]).hypot(a[1] - center[1]);
                    let rb = (b[0] - center[0]).hypot(b[1] - center[1]);
                    // On one circle up to the chords' sag (an arc is cut
                    // into chords, refinement splits them at their middles,
                    // and crossings with other edges land on the chords):
                    // nearly tangent and within 0.1 % of the radius.
                    let l = (b[0] - a[0]).hypot(b[1] - a[1]);
                    let dr = (ra - rb).abs();
                    dr <= 0.25 * l && dr <= 1e-3 * ra.max(rb)
                }
            }
        };
        if deforming_shape.contains(&true) {
            let mut side: HashMap<(u32, u32), u32> = HashMap::with_capacity(3 * nt);
            for (t, tri) in triangles.iter().enumerate() {
                for k in 0..3 {
                    side.insert((tri[k], tri[(k + 1) % 3]), mesh.regions[t]);
                }
            }
            let mut slides = vec![true; mesh.nodes.len()];
            for (t, tri) in triangles.iter().enumerate() {
                let r = mesh.regions[t];
                if air[t] || !deforming_shape[r as usize] {
                    continue;
                }
                for k in 0..3 {
                    let (a, b) = (tri[k], tri[(k + 1) % 3]);
                    match side.get(&(b, a)) {
                        Some(&o) if o == r || is_moving(o) => continue,
                        None => continue, // the outer edge, below
                        _ => {}
                    }
                    if !keeps_place(mesh.nodes[a as usize], mesh.nodes[b as usize]) {
                        slides[a as usize] = false;
                        slides[b as usize] = false;
                    }
                }
            }
            for (v, &s) in slides.iter().enumerate() {
                if !s {
                    mark(&mut role, v as u32, 2);
                }
            }
        }
        let outer = &model.outer.outline;
        let segments: Vec<&Segment> = outer.loops.iter().flat_map(|l| &l.segments).collect();
        let periodic = model.edges.iter().any(|e| {
            matches!(
                e.kind,
                EdgeKind::Periodic { .. } | EdgeKind::AntiPeriodic { .. }
            )
        });
        // A node on the outer edge stays, unless a move slides it along a
        // straight stretch parallel to the motion (a plunger on the axis).
        // (Two such stretches meeting at a node are one line.)
        let mut on_edge = vec![false; mesh.nodes.len()];
        let mut slides = vec![true; mesh.nodes.len()];
        for e in &mesh.boundary {
            let parallel = match (motion, segments.get(e.segment as usize)) {
                (Motion::Move { along }, Some(Segment::Line { from, to })) => {
                    let d = [to[0] - from[0], to[1] - from[1]];
                    let len = d[0].hypot(d[1]);
                    (d[0] * along[1] - d[1] * along[0]).abs() <= 1e-9 * len
                }
                _ => false,
            };
            for &v in &e.nodes {
                slides[v as usize] &= parallel && !periodic;
                on_edge[v as usize] = true;
            }
        }
        for v in 0..n {
            if on_edge[v] && !slides[v] {
                mark(&mut role, v as u32, 2);
            }
        }
        if conflict || !role.contains(&1) {
            return None;
        }
        // Nodes near a fixed part stay and nodes near a moving part move
        // with it; the motion ramps up between (the shear is taken by the
        // middle of a gap, away from fine features at the parts' edges).
        let weight: Vec<f64> = harmonic_weight(mesh, triangles, &role)
            .into_iter()
            .map(|w| ((w - WEIGHT_RAMP) / (1.0 - 2.0 * WEIGHT_RAMP)).clamp(0.0, 1.0))
            .collect();
        let moves = |t: usize| triangles[t].iter().any(|&v| weight[v as usize] != 0.0);
        let changed: Vec<usize> = (0..nt).filter(|&t| moves(t)).collect();
        let band: Vec<bool> = (0..nt).map(|t| deforming(t) && moves(t)).collect();
        let base_angles: Vec<f64> = (0..nt)
            .map(|t| min_angle_deg(triangles[t].map(|v| mesh.nodes[v as usize])))
            .collect();
        let floor = floor.unwrap_or_else(|| {
            let smallest = (0..nt)
                .filter(|&t| deforming(t))
                .map(|t| base_angles[t])
                .fold(model.mesh.min_angle_deg, f64::min);
            BLEND_ANGLE_FRACTION * smallest
        });
        Some(Blend {
            motion,
            weight,
            base_angles,
            changed,
            air,
            band,
            floor,
        })
    }

    /// Node positions after moving by `delta` (length or degrees) from the
    /// base.
    fn nodes_at(&self, nodes: &[Point], delta: f64) -> Vec<Point> {
        nodes
            .iter()
            .zip(&self.weight)
            .map(|(&p, &w)| {
                if w == 0.0 {
                    return p;
                }
                match self.motion {
                    Motion::Move { along } => {
                        [p[0] + w * delta * along[0], p[1] + w * delta * along[1]]
                    }
                    Motion::Turn { center } => {
                        let (s, c) = (w * delta).to_radians().sin_cos();
                        let (x, y) = (p[0] - center[0], p[1] - center[1]);
                        [center[0] + c * x - s * y, center[1] + s * x + c * y]
                    }
                }
            })
            .collect()
    }

    /// Whether blending by `delta` keeps every changed element right side up
    /// with at least [`BLEND_ANGLE_FRACTION`] of its smallest angle.
    fn keeps_quality(&self, base: &Mesh, delta: f64) -> bool {
        let moved = Mesh {
            nodes: self.nodes_at(&base.nodes, delta),
            triangles: Vec::new(),
            regions: Vec::new(),
            boundary: Vec::new(),
            report: Default::default(),
        };
        self.changed.iter().all(|&t| {
            let p = base.triangles[t].map(|v| moved.nodes[v as usize]);
            area2(p) > 0.0 && min_angle_deg(p) >= BLEND_ANGLE_FRACTION * self.base_angles[t]
        })
    }
}

/// The smallest interior angle of a triangle, degrees.
fn min_angle_deg(p: [Point; 3]) -> f64 {
    fluxwright_mesher::min_angle(p).to_degrees()
}

/// The weight w with w = 1 on nodes of role 1, 0 on role 2, and P1-harmonic
/// over the air triangles elsewhere (cotangent stiffness, Jacobi-
/// preconditioned conjugate gradients; sequential, so the same bits every
/// run).
fn harmonic_weight(mesh: &Mesh, triangles: &[[u32; 3]], role: &[u8]) -> Vec<f64> {
    let n = mesh.nodes.len();
    let mut w: Vec<f64> = role
        .iter()
        .map(|&r| if r == 1 { 1.0 } else { 0.0 })
        .collect();
    // Air triangles with a free node: their stiffness couples w.
    let active: Vec<([u32; 3], [f64; 3])> = triangles
        .iter()
        .filter(|tri| tri.iter().any(|&v| role[v as usize] == 0))
        .map(|tri| {
            let p = tri.map(|v| mesh.nodes[v as usize]);
            // Edge k joins vertices k and k+1; its weight is half the cotangent
            // of the angle opposite (at vertex k+2).
            let mut c = [0.0; 3];
            for (k, ck) in c.iter_mut().enumerate() {
                let (a, b, o) = (p[k], p[(k + 1) % 3], p[(k + 2) % 3]);
                let u = [a[0] - o[0], a[1] - o[1]];
                let v = [b[0] - o[0], b[1] - o[1]];
                let cross = (u[0] * v[1] - u[1] * v[0]).abs().max(f64::MIN_POSITIVE);
                *ck = 0.5 * (u[0] * v[0] + u[1] * v[1]) / cross;
            }
            (*tri, c)
        })
        .collect();
    let free = |v: usize| role[v] == 0;
    // y = (K x) on free rows (x zero on fixed nodes).
    let apply = |x: &[f64], y: &mut [f64]| {
        y.iter_mut().for_each(|v| *v = 0.0);
        for (tri, c) in &active {
            for k in 0..3 {
                let (a, b) = (tri[k] as usize, tri[(k + 1) % 3] as usize);
                let f = c[k] * (x[a] - x[b]);
                y[a] += f;
                y[b] -= f;
            }
        }
        for (v, yi) in y.iter_mut().enumerate() {
            if !free(v) {
                *yi = 0.0;
            }
        }
    };
    let mut diag = vec![0.0; n];
    for (tri, c) in &active {
        for k in 0..3 {
            diag[tri[k] as usize] += c[k];
            diag[tri[(k + 1) % 3] as usize] += c[k];
        }
    }
    // r = −K w on free rows (w holds the fixed values).
    let mut r = vec![0.0; n];
    apply(&w, &mut r);
    r.iter_mut().for_each(|v| *v = -*v);
    let precondition = |r: &[f64], z: &mut [f64]| {
        for v in 0..n {
            z[v] = if free(v) && diag[v] > 0.0 {
                r[v] / diag[v]
            } else {
                0.0
            };
        }
    };
    let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
    let mut z = vec![0.0; n];
    precondition(&r, &mut z);
    let mut p = z.clone();
    let mut rz = dot(&r, &z);
    let r0 = dot(&r, &r).sqrt();
    let mut q = vec![0.0; n];
    for _ in 0..20 * n.max(1).isqrt() + 200 {
        if dot(&r, &r).sqrt() <= 1e-10 * r0 || rz == 0.0 {
            break;
        }
        apply(&p, &mut q);
        let pq = dot(&p, &q);
        if pq <= 0.0 {
            break;
        }
        let alpha = rz / pq;
        for v in 0..n {
            w[v] += alpha * p[v];
            r[v] -= alpha * q[v];
        }
        precondition(&r, &mut z);
        let rz_new = dot(&r, &z);
        let beta = rz_new / rz;
        rz = rz_new;
        for v in 0..n {
            p[v] = z[v] + beta * p[v];
        }
    }
    // Round-off may leave weights a hair outside [0, 1].
    w.iter_mut().for_each(|x| *x = x.clamp(0.0, 1.0));
    w
}
