//! The graded size field, held on a background constrained triangulation of
//! the input polylines plus a coarse grid of points.
//!
//! Every background vertex starts at the smallest size of the regions
//! around it (and, on the input, at its local-feature cap); then a Dijkstra
//! sweep over the background edges enforces `h(v) ≤ h(u) + (growth − 1)·|uv|`.
//! Queries interpolate linearly inside the background triangle. The
//! background's constraint edges are the input edges with crossings split:
//! they are also the planar straight-line graph the mesh is built from.

use std::cmp::Ordering;
use std::collections::{BinaryHeap, VecDeque};

use spade::handles::{FixedFaceHandle, FixedVertexHandle, InnerTag};
use spade::{
    ConstrainedDelaunayTriangulation, HasPosition, Point2, PositionInTriangulation, Triangulation,
};

use crate::domain::{Domain, OUTSIDE};
use crate::geometry::Point;
use crate::mesh::MeshError;

/// Background grid points per side of the bounding box.
const GRID_POINTS_PER_SIDE: usize = 40;

#[derive(Clone, Copy, Debug)]
pub(crate) struct BgVertex {
    pos: Point2<f64>,
    h: f64,
    /// The start vertex whose cone gives `h`: its position and size.
    src: [f64; 3],
}

impl HasPosition for BgVertex {
    type Scalar = f64;
    fn position(&self) -> Point2<f64> {
        self.pos
    }
}

type Bg = ConstrainedDelaunayTriangulation<BgVertex>;

/// The planar straight-line graph of the input: polyline vertices and
/// crossings, and non-crossing edges between them.
pub(crate) struct Pslg {
    pub points: Vec<Point>,
    pub edges: Vec<[u32; 2]>,
    /// Neighbours of each vertex along edges.
    pub neighbors: Vec<Vec<u32>>,
    /// Background vertex of each PSLG vertex (a hint for queries).
    pub bg: Vec<u32>,
    /// Vertices with an in-domain corner below 90° (split around them on
    /// concentric shells to stop mutual encroachment).
    pub shell: Vec<bool>,
    /// Vertices with an in-domain corner below the target angle, where no
    /// mesh can meet the angle between the two legs.
    pub sharp: Vec<bool>,
    /// In-domain corners below the requested minimum angle.
    pub small_angles: Vec<Point>,
}

pub(crate) struct SizeField {
    bg: Bg,
    face_label: Vec<u32>,
    /// Allowed growth of the size per unit length, `growth − 1`.
    slope: f64,
    /// Whether any background face inside the convex hull lies outside the
    /// outer outline (non-convex domain or holes).
    pub has_outside: bool,
}

#[derive(PartialEq)]
struct HeapItem(f64, u32);
impl Eq for HeapItem {}
impl PartialOrd for HeapItem {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for HeapItem {
    fn cmp(&self, other: &Self) -> Ordering {
        // Min-heap on the size.
        other.0.total_cmp(&self.0).then(other.1.cmp(&self.1))
    }
}

fn p2(p: Point) -> Point2<f64> {
    Point2::new(p[0], p[1])
}

fn tri_err(e: spade::InsertionError) -> MeshError {
    MeshError::Triangulation(format!("{e:?}"))
}

/// Insert a background vertex at `p` with no size yet, walking from the
/// last insertion (`hint`) when there is one: points come in spatial order.
fn insert_unsized(
    bg: &mut Bg,
    p: Point,
    hint: Option<FixedVertexHandle>,
) -> Result<FixedVertexHandle, MeshError> {
    let v = BgVertex {
        pos: p2(p),
        h: f64::INFINITY,
        src: [0.0; 3],
    };
    match hint {
        Some(hint) => bg.insert_with_hint(v, hint),
        None => bg.insert(v),
    }
    .map_err(tri_err)
}

impl SizeField {
    /// Build the background and the PSLG from the domain.
    pub(crate) fn build(
        domain: &Domain,
        caps: &[Vec<f64>],
        min_angle_deg: f64,
        size_hints: &[(Point, f64)],
    ) -> Result<(SizeField, Pslg), MeshError> {
        // Snap the polylines into a planar graph first: spade needs
        // constraints that neither cross nor nearly overlap.
        let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
        for p in domain.loops.iter().flat_map(|l| &l.points) {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
        let tol = 1e-9
            * (hi[0] - lo[0])
                .max(hi[1] - lo[1])
                .max(lo[0].abs())
                .max(lo[1].abs())
                .max(hi[0].abs())
                .max(hi[1].abs());
        let arr = crate::arrangement::build(&domain.loops, tol);
        let mut cap_of = vec![f64::INFINITY; arr.points.len()];
        for ((l, cap), ids) in domain.loops.iter().zip(caps).zip(&arr.loop_ids) {
            for (&c, &id) in cap.iter().zip(ids) {
                cap_of[id as usize] = cap_of[id as usize].min(c.min(l.own_size));
            }
        }
        let mut bg = Bg::new();
        let mut last: Option<FixedVertexHandle> = None;
        let mut handles = Vec::with_capacity(arr.points.len());
        for p in &arr.points {
            let h = insert_unsized(&mut bg, *p, last)?;
            if h.index() != handles.len() {
                return Err(MeshError::Triangulation(format!(
                    "input points ({}, {}) coincide after rounding",
                    p[0], p[1]
                )));
            }
            handles.push(h);
            last = Some(h);
        }
        for &[a, b] in &arr.edges {
            if bg
                .try_add_constraint(handles[a as usize], handles[b as usize])
                .is_empty()
            {
                let p = arr.points[a as usize];
                return Err(MeshError::Triangulation(format!(
                    "input edges near ({:.6}, {:.6}) cross or overlap too closely to be separated",
                    p[0], p[1]
                )));
            }
        }
        let points = arr.points;
        let edges = arr.edges;
        let mut neighbors = vec![Vec::new(); points.len()];
        for &[a, b] in &edges {
            neighbors[a as usize].push(b);
            neighbors[b as usize].push(a);
        }
        // Coarse grid points carry region sizes and the grading ramp into
        // the interior.
        let spacing = (hi[0] - lo[0]).max(hi[1] - lo[1]) / GRID_POINTS_PER_SIDE as f64;
        if spacing > 0.0 {
            let nx = ((hi[0] - lo[0]) / spacing).floor() as usize;
            let ny = ((hi[1] - lo[1]) / spacing).floor() as usize;
            for j in 0..ny {
                for i in 0..nx {
                    let ii = if j % 2 == 0 { i } else { nx - 1 - i };
                    // Offset from the box so grid points avoid axis-aligned input.
                    let p = [
                        lo[0] + (ii as f64 + 0.5 + 0.0137) * spacing,
                        lo[1] + (j as f64 + 0.5 + 0.0291) * spacing,
                    ];
                    let h = insert_unsized(&mut bg, p, last)?;
                    last = Some(h);
                }
            }
        }
        let hinted = insert_size_hints(&mut bg, size_hints, (lo, hi), last)?;
        cap_of.resize(bg.num_vertices(), f64::INFINITY);
        for (i, size) in hinted {
            cap_of[i] = cap_of[i].min(size);
        }

        let face_label = label_components(&bg, |p| domain.classify(p));
        let mut field = SizeField {
            has_outside: false,
            face_label,
            bg,
            slope: domain.growth - 1.0,
        };
        field.has_outside = field
            .bg
            .inner_faces()
            .any(|f| field.face_label[f.fix().index()] == OUTSIDE);

        // Initial sizes: the smallest region size around each vertex.
        let nv = field.bg.num_vertices();
        let mut h = vec![f64::INFINITY; nv];
        for v in field.bg.vertices() {
            let i = v.fix().index();
            let mut m = cap_of[i];
            for e in v.out_edges() {
                if let Some(f) = e.face().as_inner() {
                    m = m.min(domain.region_size(field.face_label[f.fix().index()]));
                }
            }
            h[i] = if m.is_finite() { m } else { domain.max_size };
        }
        // Grading: multi-source Dijkstra over the background edges, each
        // vertex remembering which start vertex its size comes from, so the
        // cone h0(s) + (growth − 1)·|x − s| is measured in a straight line
        // rather than along the edges.
        let slope = domain.growth - 1.0;
        let h0 = h.clone();
        let pos: Vec<Point2<f64>> = field.bg.vertices().map(|v| v.position()).collect();
        let mut src: Vec<u32> = (0..nv as u32).collect();
        let mut heap: BinaryHeap<HeapItem> = (0..nv).map(|i| HeapItem(h[i], i as u32)).collect();
        let mut done = vec![false; nv];
        while let Some(HeapItem(hv, v)) = heap.pop() {
            if done[v as usize] || hv > h[v as usize] {
                continue;
            }
            done[v as usize] = true;
            let s = src[v as usize] as usize;
            let vh = field.bg.vertex(FixedVertexHandle::from_index(v as usize));
            for e in vh.out_edges() {
                let ui = e.to().fix().index();
                if done[ui] {
                    continue;
                }
                let (a, b) = (pos[s], pos[ui]);
                let cand = h0[s] + slope * (a.x - b.x).hypot(a.y - b.y);
                if cand < h[ui] {
                    h[ui] = cand;
                    src[ui] = s as u32;
                    heap.push(HeapItem(cand, ui as u32));
                }
            }
        }
        for (i, &hv) in h.iter().enumerate() {
            let s = src[i] as usize;
            let data = field.bg.vertex_data_mut(FixedVertexHandle::from_index(i));
            data.h = hv;
            data.src = [pos[s].x, pos[s].y, h0[s]];
        }

        // Corner angles at PSLG vertices, in-domain sectors only.
        let mut shell = vec![false; points.len()];
        let mut sharp = vec![false; points.len()];
        let mut small_angles = Vec::new();
        let min_angle = min_angle_deg.to_radians();
        for (i, nb) in neighbors.iter().enumerate() {
            if nb.len() < 2 {
                continue;
            }
            let p = points[i];
            let mut dirs: Vec<(f64, f64)> = nb
                .iter()
                .map(|&j| {
                    let q = points[j as usize];
                    (
                        (q[1] - p[1]).atan2(q[0] - p[0]),
                        (q[0] - p[0]).hypot(q[1] - p[1]),
                    )
                })
                .collect();
            dirs.sort_by(|a, b| a.0.total_cmp(&b.0));
            let mut smallest = f64::INFINITY;
            for k in 0..dirs.len() {
                let (a0, l0) = dirs[k];
                let (a1, l1) = dirs[(k + 1) % dirs.len()];
                let sector = (a1 - a0).rem_euclid(std::f64::consts::TAU);
                let bis = a0 + 0.5 * sector;
                let r = 1e-3 * l0.min(l1) * sector.sin().abs().max(1e-3);
                let probe = [p[0] + r * bis.cos(), p[1] + r * bis.sin()];
                if field.label_at(probe, FixedVertexHandle::from_index(i)).0 != OUTSIDE {
                    smallest = smallest.min(sector);
                }
            }
            shell[i] = smallest < 0.5 * std::f64::consts::PI - 1e-9;
            sharp[i] = smallest < min_angle.min(std::f64::consts::FRAC_PI_3) - 1e-9;
            if smallest < min_angle - 1e-9 {
                small_angles.push(p);
            }
        }
        let bg_hint = (0..points.len() as u32).collect();
        Ok((
            field,
            Pslg {
                points,
                edges,
                neighbors,
                bg: bg_hint,
                shell,
                sharp,
                small_angles,
            },
        ))
    }

    /// The size at `p`, and a vertex hint for the next nearby query.
    pub(crate) fn size_at(&self, p: Point, hint: u32) -> (f64, u32) {
        let hint = FixedVertexHandle::from_index((hint as usize).min(self.bg.num_vertices() - 1));
        match self.bg.locate_with_hint(p2(p), hint) {
            PositionInTriangulation::OnFace(f) => {
                let f = self.bg.face(f);
                let w = f.barycentric_interpolation(p2(p));
                let vs = f.vertices();
                let mut h = 0.0;
                for k in 0..3 {
                    h += w[k] * vs[k].data().h;
                }
                let lo = vs.iter().map(|v| v.data().h).fold(f64::INFINITY, f64::min);
                let hi = vs.iter().map(|v| v.data().h).fold(0.0, f64::max);
                // Linear interpolation can grow faster than the grading
                // allows inside a long thin background triangle; the cones
                // whose apexes give the corners their sizes bound it.
                let mut h = h.clamp(lo, hi);
                for v in vs {
                    let [sx, sy, sh] = v.data().src;
                    h = h.min(sh + self.slope * (sx - p[0]).hypot(sy - p[1]));
                }
                (h, vs[0].fix().index() as u32)
            }
            PositionInTriangulation::OnEdge(e) => {
                let e = self.bg.directed_edge(e);
                let [a, b] = e.vertices();
                let la = (a.position().x - p[0]).hypot(a.position().y - p[1]);
                let lb = (b.position().x - p[0]).hypot(b.position().y - p[1]);
                let t = if la + lb > 0.0 { la / (la + lb) } else { 0.5 };
                (
                    a.data().h * (1.0 - t) + b.data().h * t,
                    a.fix().index() as u32,
                )
            }
            PositionInTriangulation::OnVertex(v) => (self.bg.vertex(v).data().h, v.index() as u32),
            PositionInTriangulation::OutsideOfConvexHull(e) => {
                let e = self.bg.directed_edge(e);
                let [a, b] = e.vertices();
                (a.data().h.min(b.data().h), a.fix().index() as u32)
            }
            PositionInTriangulation::NoTriangulation => (f64::INFINITY, 0),
        }
    }

    /// The region label at `p` (meant for points well inside a triangle of
    /// the input arrangement), and a vertex hint.
    pub(crate) fn label_at(&self, p: Point, hint: FixedVertexHandle) -> (u32, u32) {
        let hint = if hint.index() < self.bg.num_vertices() {
            hint
        } else {
            FixedVertexHandle::from_index(0)
        };
        match self.bg.locate_with_hint(p2(p), hint) {
            PositionInTriangulation::OnFace(f) => (
                self.face_label[f.index()],
                self.bg.face(f).vertices()[0].fix().index() as u32,
            ),
            PositionInTriangulation::OnEdge(e) => {
                let e = self.bg.directed_edge(e);
                let f = e.face().as_inner().or(e.rev().face().as_inner());
                (
                    f.map_or(OUTSIDE, |f| self.face_label[f.fix().index()]),
                    e.from().fix().index() as u32,
                )
            }
            PositionInTriangulation::OnVertex(v) => {
                let vh = self.bg.vertex(v);
                let f = vh.out_edges().find_map(|e| e.face().as_inner());
                (
                    f.map_or(OUTSIDE, |f| self.face_label[f.fix().index()]),
                    v.index() as u32,
                )
            }
            _ => (OUTSIDE, hint.index() as u32),
        }
    }

    /// Whether the PSLG edge between points `a` and `b` has the outside of
    /// the outer outline on both sides (a part of a shape beyond the outer
    /// edge). `false` when the edge is not found.
    pub(crate) fn edge_outside(&self, a: u32, b: u32) -> bool {
        let n = self.bg.num_vertices();
        if a as usize >= n || b as usize >= n {
            return false;
        }
        let (a, b) = (
            FixedVertexHandle::from_index(a as usize),
            FixedVertexHandle::from_index(b as usize),
        );
        let Some(e) = self.bg.get_edge_from_neighbors(a, b) else {
            return false;
        };
        let label = |f: Option<FixedFaceHandle<InnerTag>>| {
            f.map_or(OUTSIDE, |f| self.face_label[f.index()])
        };
        label(e.face().as_inner().map(|f| f.fix())) == OUTSIDE
            && label(e.rev().face().as_inner().map(|f| f.fix())) == OUTSIDE
    }

    /// Estimated number of quality triangles: ∫ density / h² over the domain,
    /// or a partial sum already above `limit` (the integral is slow where h
    /// varies a lot, and only its comparison with the limit matters then).
    pub(crate) fn estimate_triangles(&self, limit: f64) -> f64 {
        // Triangles per h² of area in a Delaunay-refined mesh whose longest
        // edges are at most h (calibrated on this mesher's own output;
        // equilateral triangles of edge h would give 2.31).
        const DENSITY: f64 = 3.6;
        let mut total = 0.0;
        for f in self.bg.inner_faces() {
            if self.face_label[f.fix().index()] == OUTSIDE {
                continue;
            }
            let vs = f.vertices();
            let p = vs.map(|v| [v.position().x, v.position().y]);
            let h = vs.map(|v| v.data().h.max(1e-300));
            total += integrate_inverse_square(p, h);
            if DENSITY * total > limit {
                break;
            }
        }
        DENSITY * total
    }
}

/// Add the caller's size hints inside the box `lo..hi` as background
/// vertices; returns each hinted vertex with its size. A hint on an existing
/// vertex caps that vertex; one on an input edge is left out, so the
/// constraint edges stay those of the PSLG.
fn insert_size_hints(
    bg: &mut Bg,
    size_hints: &[(Point, f64)],
    (lo, hi): (Point, Point),
    mut last: Option<FixedVertexHandle>,
) -> Result<Vec<(usize, f64)>, MeshError> {
    let mut hinted = Vec::with_capacity(size_hints.len());
    for &(p, size) in size_hints {
        if !(p[0] >= lo[0] && p[0] <= hi[0] && p[1] >= lo[1] && p[1] <= hi[1]) {
            continue;
        }
        let at = match last {
            Some(hint) => bg.locate_with_hint(p2(p), hint),
            None => bg.locate(p2(p)),
        };
        let free = match at {
            PositionInTriangulation::OnFace(_) => true,
            PositionInTriangulation::OnEdge(e) => !bg.is_constraint_edge(e.as_undirected()),
            PositionInTriangulation::OnVertex(v) => {
                hinted.push((v.index(), size));
                false
            }
            _ => false,
        };
        if free {
            let h = insert_unsized(bg, p, last)?;
            hinted.push((h.index(), size));
            last = Some(h);
        }
    }
    Ok(hinted)
}

/// ∫ 1/h² over a triangle with linear h, in closed form: by the
/// Hermite-Genocchi formula the mean of g''(h) over a triangle is 2 g[h₀,h₁,h₂]
/// (a second divided difference), and 1/h² = g'' for g = −ln h. (Adaptive
/// subdivision took half a second for one size field with a 10⁵ size ratio.)
fn integrate_inverse_square(p: [Point; 3], h: [f64; 3]) -> f64 {
    let area = 0.5
        * ((p[1][0] - p[0][0]) * (p[2][1] - p[0][1]) - (p[1][1] - p[0][1]) * (p[2][0] - p[0][0]))
            .abs();
    let mut s = h;
    s.sort_by(f64::total_cmp);
    let [a, b, c] = s;
    if c <= 1.5 * a {
        // Nearly uniform: the divided difference would cancel; this is
        // within 1 % of it.
        return area / (a * b * c).powf(2.0 / 3.0);
    }
    // g[x, y] for g = −ln, accurate for y close to x.
    let first = |x: f64, y: f64| {
        if y == x {
            -1.0 / x
        } else {
            -((y - x) / x).ln_1p() / (y - x)
        }
    };
    2.0 * area * (first(a, b) - first(b, c)) / (a - c)
}

/// Label every inner face of a constrained triangulation by flood fill over
/// non-constraint edges; each component is classified once, at the incentre
/// of its fattest face (far from the constraints that bound it).
pub(crate) fn label_components<V, DE, UE, F, L>(
    cdt: &ConstrainedDelaunayTriangulation<V, DE, UE, F, L>,
    classify: impl Fn(Point) -> u32,
) -> Vec<u32>
where
    V: HasPosition<Scalar = f64>,
    DE: Default,
    UE: Default,
    F: Default,
    L: spade::HintGenerator<f64>,
{
    const UNSET: u32 = u32::MAX - 2;
    let mut label = vec![UNSET; cdt.num_all_faces()];
    let mut queue: VecDeque<FixedFaceHandle<InnerTag>> = VecDeque::new();
    let mut members: Vec<FixedFaceHandle<InnerTag>> = Vec::new();
    for start in cdt.fixed_inner_faces() {
        if label[start.index()] != UNSET {
            continue;
        }
        members.clear();
        label[start.index()] = 0;
        queue.push_back(start);
        let mut best = (-1.0f64, [0.0, 0.0]);
        // The domain is closed by constraint edges, so a component that
        // reaches the convex hull through a non-constraint edge is outside
        // it (this also catches hull slivers next to cut edges whose cut
        // points round to just inside the hull).
        let mut touches_hull = false;
        while let Some(f) = queue.pop_front() {
            members.push(f);
            let fh = cdt.face(f);
            if !touches_hull {
                touches_hull = fh
                    .adjacent_edges()
                    .iter()
                    .any(|e| !e.is_constraint_edge() && e.rev().face().is_outer());
            }
            // A few thousand candidates give a face far enough from the
            // component's edges.
            if members.len() > 4096 {
                for e in fh.adjacent_edges() {
                    if !e.is_constraint_edge() {
                        if let Some(g) = e.rev().face().as_inner() {
                            if label[g.fix().index()] == UNSET {
                                label[g.fix().index()] = 0;
                                queue.push_back(g.fix());
                            }
                        }
                    }
                }
                continue;
            }
            let ps = fh.positions();
            let l: [f64; 3] = [0, 1, 2].map(|k| {
                let (a, b) = (ps[k], ps[(k + 1) % 3]);
                ((a.x - b.x).powi(2) + (a.y - b.y).powi(2)).sqrt()
            });
            let per = l[0] + l[1] + l[2];
            let area2 = ((ps[1].x - ps[0].x) * (ps[2].y - ps[0].y)
                - (ps[1].y - ps[0].y) * (ps[2].x - ps[0].x))
                .abs();
            let inradius = if per > 0.0 { area2 / per } else { 0.0 };
            if inradius > best.0 {
                // Incentre: weights are the opposite edge lengths.
                let w = [l[1], l[2], l[0]];
                let c = [
                    (w[0] * ps[0].x + w[1] * ps[1].x + w[2] * ps[2].x) / per,
                    (w[0] * ps[0].y + w[1] * ps[1].y + w[2] * ps[2].y) / per,
                ];
                best = (inradius, c);
            }
            for e in fh.adjacent_edges() {
                if e.is_constraint_edge() {
                    continue;
                }
                if let Some(g) = e.rev().face().as_inner() {
                    if label[g.fix().index()] == UNSET {
                        label[g.fix().index()] = 0;
                        queue.push_back(g.fix());
                    }
                }
            }
        }
        let region = if touches_hull {
            crate::domain::OUTSIDE
        } else {
            classify(best.1)
        };
        for f in &members {
            label[f.index()] = region;
        }
    }
    label
}
