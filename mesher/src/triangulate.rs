//! Constrained Delaunay triangulation of layered shapes and quality
//! refinement under a graded size field.
//!
//! The pipeline: every loop of the outer outline and of every shape becomes
//! a closed polyline (arcs cut by chord error and by the loop's own size);
//! a background triangulation of those polylines (crossings split) carries
//! the graded size field ([`crate::sizefield`]); every input edge is cut to
//! the local size; all of them go into one spade constrained Delaunay
//! triangulation, which is refined to the minimum angle and the size field
//! ([`crate::refine`]); finally every triangle takes the region of the last
//! shape covering it, and triangles outside the outer outline are dropped.

use std::time::Instant;

use spade::handles::FixedVertexHandle;
use spade::{Point2, Triangulation};

use crate::domain::{Domain, PolyLoop, SegInfo, OUTER_OWNER, OUTSIDE};
use crate::geometry::{GeometryError, Outline, Point};
use crate::matched::{MatchedLine, MatchedPair, Plan};
use crate::mesh::{BoundaryEdge, Mesh, MeshError, RefinementReport};
use crate::refine::{MeshCdt, MeshVertex, Refiner, NONE};
use crate::sizefield::{label_components, Pslg, SizeField};
use crate::spatial::{point_segment_distance, SegmentGrid};

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
    /// Straight outer segments that must carry identical nodes (periodic
    /// boundaries); empty by default.
    pub matched: Vec<MatchedPair>,
}

impl MeshInput {
    /// An input with no shapes and the default targets: minimum angle 25°,
    /// growth 1.3, chord sagitta 0.2 % of the radius, at most 5 million
    /// triangles.
    pub fn new(outer: Outline, max_size: f64) -> MeshInput {
        MeshInput {
            outer,
            shapes: Vec::new(),
            max_size,
            min_angle_deg: 25.0,
            growth: 1.3,
            chord_fraction: 2e-3,
            max_triangles: 5_000_000,
            matched: Vec::new(),
        }
    }
}

fn parameter(name: &'static str, value: f64, reason: &'static str) -> MeshError {
    MeshError::Parameter {
        name,
        value,
        reason,
    }
}

fn check_size(name: &'static str, v: f64) -> Result<(), MeshError> {
    if v.is_finite() && v > 0.0 {
        Ok(())
    } else {
        Err(parameter(name, v, "must be a positive finite length"))
    }
}

fn check_quality(growth: f64, min_angle_deg: f64) -> Result<(), MeshError> {
    if !(growth.is_finite() && growth > 1.0) {
        return Err(parameter(
            "growth",
            growth,
            "must be a finite ratio above 1",
        ));
    }
    if !(min_angle_deg > 0.0 && min_angle_deg <= 34.0) {
        return Err(parameter(
            "min_angle_deg",
            min_angle_deg,
            "must be in (0, 34] degrees",
        ));
    }
    Ok(())
}

/// Mesh the layered shapes.
///
/// Every triangle's region is the index of the last shape whose outline
/// covers it, or [`Mesh::OUTER_REGION`]. Triangles reach the minimum angle
/// except next to input corners sharper than it (listed in
/// [`RefinementReport::small_input_angles`]); every edge inside a shape is at
/// most its `mesh_size` (and at most `max_size` anywhere), sizes grow by at
/// most `growth − 1` per unit of distance, and thin gaps and shells get about
/// three elements across.
pub fn mesh(input: &MeshInput) -> Result<Mesh, MeshError> {
    mesh_with_size_hints(input, &[])
}

/// [`mesh`] under a background size field from the caller: each hint
/// `(point, size)` caps the element size at that point (the shapes' sizes
/// and `max_size` still cap it too, so hints only make elements smaller),
/// and sizes grade away from it at `growth` like any other size. Between
/// hints the size is interpolated on the background triangulation, so hints
/// should be about as dense as the sizes they ask for (say one per triangle
/// of a previous mesh). Hints outside the bounding box of the input, or
/// exactly on an input edge, are ignored. Without hints the mesh is exactly
/// that of [`mesh`].
pub fn mesh_with_size_hints(
    input: &MeshInput,
    size_hints: &[(Point, f64)],
) -> Result<Mesh, MeshError> {
    let start = Instant::now();
    for &(p, size) in size_hints {
        check_size("size_hints[].size", size)?;
        if !(p[0].is_finite() && p[1].is_finite()) {
            return Err(GeometryError::NotFinite.into());
        }
    }
    check_size("max_size", input.max_size)?;
    for s in &input.shapes {
        check_size("shapes[].mesh_size", s.mesh_size)?;
    }
    check_quality(input.growth, input.min_angle_deg)?;
    if !(input.chord_fraction > 0.0 && input.chord_fraction <= 0.5) {
        return Err(parameter(
            "chord_fraction",
            input.chord_fraction,
            "must be in (0, 0.5]",
        ));
    }
    if input.max_triangles == 0 {
        return Err(parameter("max_triangles", 0.0, "must be at least 1"));
    }
    input.outer.validate()?;
    for (i, s) in input.shapes.iter().enumerate() {
        s.outline
            .validate()
            .map_err(|source| MeshError::ShapeGeometry { shape: i, source })?;
    }
    // A cheap guard before any allocation that grows with the answer:
    // equilateral triangles of the largest allowed size already need this.
    let limit = input.max_triangles as f64;
    let mut rough = input.outer.area() * 2.31 / (input.max_size * input.max_size);
    let mut boundary_points = perimeter(&input.outer) / input.max_size;
    for s in &input.shapes {
        let size = s.mesh_size.min(input.max_size);
        rough = rough.max(s.outline.area() * 2.31 / (size * size));
        boundary_points += perimeter(&s.outline) / size;
    }
    let rough = rough.max(boundary_points);
    if !(rough <= limit) {
        return Err(MeshError::TooLarge {
            estimated_triangles: rough,
            limit,
        });
    }
    let matched = crate::matched::validate(&input.outer, &input.matched)?;
    let shapes: Vec<(&Outline, f64)> = input
        .shapes
        .iter()
        .map(|s| (&s.outline, s.mesh_size))
        .collect();
    let domain = Domain::from_outlines(
        &input.outer,
        &shapes,
        input.max_size,
        input.growth,
        input.chord_fraction,
    );
    run(
        domain,
        input.min_angle_deg,
        input.max_triangles,
        &matched,
        size_hints,
        start,
    )
}

fn perimeter(o: &Outline) -> f64 {
    o.loops
        .iter()
        .flat_map(|l| &l.segments)
        .map(|s| s.length())
        .sum()
}

/// Mesh a disc whose boundary nodes are exactly `rim_points` (on the circle
/// of `center` and `radius`, counter-clockwise, never split), grading
/// inwards from the rim spacing to `max_size`.
///
/// Boundary edge `i` of the result joins `rim_points[i]` and
/// `rim_points[i + 1]` (wrapping) and carries `segment: i`; the region of
/// every triangle is [`Mesh::OUTER_REGION`]. Triangles touching the rim may
/// stay below `min_angle_deg` when the rim spacing is very uneven (then
/// [`RefinementReport::complete`] is false).
pub fn mesh_disc_with_fixed_rim(
    center: Point,
    radius: f64,
    rim_points: &[Point],
    growth: f64,
    max_size: f64,
    min_angle_deg: f64,
) -> Result<Mesh, MeshError> {
    let start = Instant::now();
    check_size("radius", radius)?;
    check_size("max_size", max_size)?;
    check_quality(growth, min_angle_deg)?;
    if !(center[0].is_finite() && center[1].is_finite()) {
        return Err(GeometryError::NotFinite.into());
    }
    let n = rim_points.len();
    if n < 3 {
        return Err(GeometryError::TooFewPoints(n).into());
    }
    for p in rim_points {
        if !(p[0].is_finite() && p[1].is_finite()) {
            return Err(GeometryError::NotFinite.into());
        }
        let r = (p[0] - center[0]).hypot(p[1] - center[1]);
        if (r - radius).abs() > 1e-6 * radius {
            return Err(GeometryError::BadRadius(format!(
                "rim point ({}, {}) is at distance {r} from the centre, not on the radius {radius}",
                p[0], p[1]
            ))
            .into());
        }
    }
    let outline = Outline::polygon(rim_points)?;
    if outline.loops[0].signed_area() <= 0.0 {
        return Err(
            GeometryError::BadRadius("rim points must run counter-clockwise".into()).into(),
        );
    }
    let chord = |i: usize| {
        let (a, b) = (rim_points[i % n], rim_points[(i + 1) % n]);
        (a[0] - b[0]).hypot(a[1] - b[1])
    };
    let caps: Vec<f64> = (0..n)
        .map(|i| 0.5 * (chord(i) + chord(i + n - 1)))
        .collect();
    let segs = (0..n as u32)
        .map(|i| SegInfo {
            local: i,
            prev: (i + n as u32 - 1) % n as u32,
            next: (i + 1) % n as u32,
        })
        .collect();
    let domain = Domain {
        loops: vec![PolyLoop::new(
            rim_points.to_vec(),
            (0..n as u32).collect(),
            vec![0.0; n],
            OUTER_OWNER,
            max_size,
        )],
        segs,
        curves: vec![None; n],
        shape_sizes: Vec::new(),
        max_size,
        growth,
        vertex_caps: Some(vec![caps]),
        fixed_boundary: true,
        shared: Default::default(),
    };
    // Rough guard on the count, as in `mesh`.
    let area = std::f64::consts::PI * radius * radius;
    let smallest = (0..n).map(chord).fold(f64::INFINITY, f64::min);
    let rough = area * 2.31 / (max_size * max_size);
    if !(rough <= 5.0e7) || !(smallest > 0.0) {
        return Err(MeshError::TooLarge {
            estimated_triangles: rough,
            limit: 5.0e7,
        });
    }
    run(domain, min_angle_deg, 50_000_000, &[], &[], start)
}

/// Cut one PSLG edge `a -> b` so that each piece is about the local size.
fn split_points(field: &SizeField, a: Point, b: Point, hint: u32) -> Vec<Point> {
    let len = (b[0] - a[0]).hypot(b[1] - a[1]);
    if !(len > 0.0) {
        return Vec::new();
    }
    let at = |s: f64| {
        [
            a[0] + (b[0] - a[0]) * s / len,
            a[1] + (b[1] - a[1]) * s / len,
        ]
    };
    // March by the local size, then spread a whole number of pieces evenly
    // over the marched step positions.
    let mut marks = vec![0.0f64];
    let mut hint = hint;
    loop {
        let s = *marks.last().unwrap_or(&0.0);
        let (h, next) = field.size_at(at(s.min(len)), hint);
        hint = next;
        let step = h.max(len * 1e-7);
        marks.push(s + step);
        if s + step >= len || marks.len() > 10_000_000 {
            break;
        }
    }
    let m = marks.len() - 1;
    let frac = (len - marks[m - 1]) / (marks[m] - marks[m - 1]);
    let steps = (m - 1) as f64 + frac;
    let pieces = (steps.round() as usize).max(1);
    (1..pieces)
        .map(|k| {
            let u = k as f64 * steps / pieces as f64;
            let j = (u.floor() as usize).min(m - 1);
            let s = marks[j] + (u - j as f64) * (marks[j + 1] - marks[j]);
            at(s.min(len))
        })
        .collect()
}

fn run(
    mut domain: Domain,
    min_angle_deg: f64,
    max_triangles: usize,
    matched: &[MatchedLine],
    size_hints: &[(Point, f64)],
    start: Instant,
) -> Result<Mesh, MeshError> {
    // Any triangulation of n points has at least n − 2 triangles: refuse
    // before the planar graph and size field of too many boundary points.
    let limit = max_triangles as f64;
    let too_many = |points: usize| MeshError::TooLarge {
        estimated_triangles: points as f64 - 2.0,
        limit,
    };
    let caps = domain
        .refine_for_features(max_triangles.saturating_add(2))
        .map_err(too_many)?;
    let domain = &domain;
    let boundary_points = domain.loops.iter().map(|l| l.points.len()).sum::<usize>();
    if boundary_points > max_triangles.saturating_add(2) {
        return Err(too_many(boundary_points));
    }
    let (field, pslg) = SizeField::build(domain, &caps, min_angle_deg, size_hints)?;
    let estimate = field.estimate_triangles(limit);
    if !(estimate <= limit) {
        return Err(MeshError::TooLarge {
            estimated_triangles: estimate,
            limit,
        });
    }
    let plan = crate::matched::plan(matched, &pslg, &field, split_points)?;
    let (mut cdt, scale) = build_cdt(domain, &field, &pslg, &plan)?;

    let max_vertices = cdt.num_vertices() + max_triangles.max(16);
    let mut refiner = Refiner::new(
        &mut cdt,
        &field,
        &pslg,
        min_angle_deg,
        1e-10 * scale,
        domain.fixed_boundary,
        max_vertices,
        matched.to_vec(),
    );
    refiner.seed();
    let outcome = refiner.run();
    if outcome.broken {
        return Err(MeshError::Triangulation(
            "a constraint edge could not be restored after splitting (near-degenerate input)"
                .into(),
        ));
    }
    let mut mesh = extract(domain, &cdt)?;
    crate::matched::check(&mesh, matched)?;

    mesh.report = RefinementReport {
        complete: outcome.met && pslg.small_angles.is_empty() && outcome.skipped_small_angle == 0,
        small_input_angles: pslg.small_angles.clone(),
        seconds: start.elapsed().as_secs_f64(),
    };
    Ok(mesh)
}

/// Insert the cut input edges into one constrained triangulation.
fn build_cdt(
    domain: &Domain,
    field: &SizeField,
    pslg: &Pslg,
    plan: &Plan,
) -> Result<(MeshCdt, f64), MeshError> {
    let mut cdt = MeshCdt::new();
    let mut handle_of: Vec<Option<FixedVertexHandle>> = vec![None; pslg.points.len()];
    let mut last: Option<FixedVertexHandle> = None;
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in &pslg.points {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    let scale = (hi[0] - lo[0]).hypot(hi[1] - lo[1]);
    let mut insert = |cdt: &mut MeshCdt, v: MeshVertex| -> Result<FixedVertexHandle, MeshError> {
        let r = match last {
            Some(h) => cdt.insert_with_hint(v, h),
            None => cdt.insert(v),
        }
        .map_err(|e| MeshError::Triangulation(format!("{e:?}")))?;
        last = Some(r);
        Ok(r)
    };
    let mut chains: Vec<Vec<FixedVertexHandle>> = Vec::with_capacity(pslg.edges.len());
    for (edge, &[a, b]) in pslg.edges.iter().enumerate() {
        let mut chain = Vec::new();
        for (i, end) in [a, b].into_iter().enumerate() {
            let e = end as usize;
            let h = match handle_of[e] {
                Some(h) => h,
                None => {
                    let (size, bg) = field.size_at(pslg.points[e], pslg.bg[e]);
                    let v = MeshVertex {
                        pos: Point2::new(pslg.points[e][0], pslg.points[e][1]),
                        h: size,
                        bg,
                        pv: end,
                        ends: [NONE; 2],
                        lock: plan.vertex_lock[e],
                    };
                    let h = insert(&mut cdt, v)?;
                    handle_of[e] = Some(h);
                    h
                }
            };
            if i == 0 {
                chain.push(h);
                let (pa, pb) = (pslg.points[a as usize], pslg.points[b as usize]);
                let cut = match &plan.edge_points[edge] {
                    Some(points) => points.clone(),
                    // A piece of a shape beyond the outer edge bounds only
                    // dropped triangles: left uncut (cutting it to the
                    // feature size of a thin sliver can take 10⁵ points).
                    None if !domain.fixed_boundary && !field.edge_outside(a, b) => {
                        split_points(field, pa, pb, pslg.bg[a as usize])
                    }
                    None => Vec::new(),
                };
                {
                    for p in cut {
                        let (size, bg) = field.size_at(p, pslg.bg[a as usize]);
                        let v = MeshVertex {
                            pos: Point2::new(p[0], p[1]),
                            h: size,
                            bg,
                            pv: NONE,
                            ends: [a, b],
                            lock: plan.edge_lock[edge],
                        };
                        chain.push(insert(&mut cdt, v)?);
                    }
                }
            } else {
                chain.push(h);
            }
        }
        chains.push(chain);
    }
    for chain in &chains {
        for w in chain.windows(2) {
            if w[0] == w[1] {
                continue;
            }
            if cdt.try_add_constraint(w[0], w[1]).is_empty() {
                let p = cdt.vertex(w[0]).position();
                return Err(MeshError::Triangulation(format!(
                    "input edges near ({:.6}, {:.6}) cross or overlap too closely to be separated",
                    p.x, p.y
                )));
            }
        }
    }
    Ok((cdt, scale))
}

/// Regions, dropped outside triangles, compact numbering and tagged outer
/// edges.
fn extract(domain: &Domain, cdt: &MeshCdt) -> Result<Mesh, MeshError> {
    let labels = label_components(cdt, |p| domain.classify(p));
    let mut node_of = vec![u32::MAX; cdt.num_vertices()];
    let mut mesh = Mesh::default();
    let kept = cdt.num_inner_faces();
    mesh.triangles.reserve(kept);
    mesh.regions.reserve(kept);
    mesh.nodes.reserve(cdt.num_vertices());
    // Outer-outline edges for tagging the boundary.
    let mut outer_edges = Vec::new();
    let mut outer_seg = Vec::new();
    for l in domain.loops.iter().filter(|l| l.owner == OUTER_OWNER) {
        let n = l.points.len();
        for i in 0..n {
            outer_edges.push([l.points[i], l.points[(i + 1) % n]]);
            outer_seg.push(domain.segs[l.seg[i] as usize].local);
        }
    }
    let grid = SegmentGrid::new(&outer_edges);
    for f in cdt.inner_faces() {
        let label = labels[f.fix().index()];
        if label == OUTSIDE {
            continue;
        }
        let vs = f.vertices();
        let mut tri = [0u32; 3];
        for k in 0..3 {
            let i = vs[k].fix().index();
            if node_of[i] == u32::MAX {
                node_of[i] = mesh.nodes.len() as u32;
                let p = vs[k].position();
                mesh.nodes.push([p.x, p.y]);
            }
            tri[k] = node_of[i];
        }
        mesh.triangles.push(tri);
        mesh.regions.push(label);
        for e in f.adjacent_edges() {
            let outside = match e.rev().face().as_inner() {
                None => true,
                Some(g) => labels[g.fix().index()] == OUTSIDE,
            };
            if !outside {
                continue;
            }
            let [a, b] = e.positions();
            let mid = [0.5 * (a.x + b.x), 0.5 * (a.y + b.y)];
            let mut best = (f64::INFINITY, u32::MAX);
            let pad = 1e-9 * (a.x - b.x).hypot(a.y - b.y);
            grid.query(
                [mid[0] - pad, mid[1] - pad],
                [mid[0] + pad, mid[1] + pad],
                |j| {
                    let d = point_segment_distance(mid, outer_edges[j][0], outer_edges[j][1]).0;
                    if d < best.0 {
                        best = (d, outer_seg[j]);
                    }
                },
            );
            if best.1 == u32::MAX {
                return Err(MeshError::Invariant(format!(
                    "mesh edge at ({:.6}, {:.6}) bounds the domain but lies on no outer segment",
                    mid[0], mid[1]
                )));
            }
            let ia = node_of[e.from().fix().index()];
            let ib = e.to().fix().index();
            // `to` may not be numbered yet only if it is not in this face,
            // which cannot happen: both ends are corners of `f`.
            mesh.boundary.push(BoundaryEdge {
                nodes: [ia, node_of[ib]],
                segment: best.1,
            });
        }
    }
    Ok(mesh)
}

pub(crate) fn validate_outline(outline: &Outline) -> Result<(), GeometryError> {
    crate::validate::validate_outline(outline)
}
