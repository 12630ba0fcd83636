//! Delaunay refinement (Ruppert's algorithm with Chew's and Shewchuk's
//! practical rules) on a spade constrained triangulation, under a size
//! field: a triangle is split at its circumcentre when its smallest angle is
//! below the target or its longest edge exceeds the local size; a
//! circumcentre that would encroach a constraint edge (lie inside its
//! diametral circle) or that is hidden behind one splits that edge instead.
//! Edges next to input corners below 90° are split on concentric shells
//! (distances from the corner rounded to powers of two) so that the two legs
//! stop encroaching each other; triangles whose shortest edge joins the two
//! legs of a corner below the target angle are left alone (no mesh can do
//! better there; the corner is reported).

use std::collections::VecDeque;

use spade::handles::{
    FixedDirectedEdgeHandle, FixedFaceHandle, FixedUndirectedEdgeHandle, FixedVertexHandle,
    InnerTag,
};
use spade::{
    ConstrainedDelaunayTriangulation, HasPosition, Point2, PositionInTriangulation, Triangulation,
};

use crate::domain::OUTSIDE;
use crate::geometry::Point;
use crate::matched::MatchedLine;
use crate::sizefield::{Pslg, SizeField};

/// "None" in the vertex bookkeeping fields.
pub(crate) const NONE: u32 = u32::MAX;

/// A mesh vertex with what refinement needs to know about it.
#[derive(Clone, Copy, Debug)]
pub(crate) struct MeshVertex {
    pub pos: Point2<f64>,
    /// Target size here.
    pub h: f64,
    /// Background vertex near here (query hint).
    pub bg: u32,
    /// The PSLG vertex this is, or [`NONE`].
    pub pv: u32,
    /// For a vertex inside a PSLG edge: that edge's end vertices.
    pub ends: [u32; 2],
    /// Matched-segment sides this vertex lies on (see
    /// [`crate::matched::Plan::vertex_lock`]).
    pub lock: u64,
}

impl HasPosition for MeshVertex {
    type Scalar = f64;
    fn position(&self) -> Point2<f64> {
        self.pos
    }
}

pub(crate) type MeshCdt = ConstrainedDelaunayTriangulation<MeshVertex>;

/// Outcome counters of a refinement run.
#[derive(Debug, Default)]
pub(crate) struct RefineOutcome {
    /// Every triangle met its targets (apart from skipped small input angles).
    pub met: bool,
    /// Triangles left because of a small input angle.
    pub skipped_small_angle: usize,
    /// The vertex budget ran out.
    pub budget_hit: bool,
    /// A constraint could not be restored after a split.
    pub broken: bool,
}

enum Walk {
    Face(FixedFaceHandle<InnerTag>),
    Blocked(FixedUndirectedEdgeHandle),
    Outside,
}

pub(crate) struct Refiner<'a> {
    cdt: &'a mut MeshCdt,
    field: &'a SizeField,
    pslg: &'a Pslg,
    sin2: f64,
    min_len2: f64,
    fixed_boundary: bool,
    max_vertices: usize,
    faces: VecDeque<FixedFaceHandle<InnerTag>>,
    segments: VecDeque<(FixedUndirectedEdgeHandle, [u32; 2])>,
    outcome: RefineOutcome,
    /// A constraint could not be restored after a split (geometry too
    /// degenerate); the mesh would be wrong.
    broken: bool,
    stack: Vec<FixedDirectedEdgeHandle>,
    encroached: Vec<FixedUndirectedEdgeHandle>,
    /// The matched pairs: a split of a piece on one side is repeated at the
    /// image point on the other.
    lines: Vec<MatchedLine>,
    /// For each lock bit (side of a pair), its vertices sorted by their
    /// parameter along the pair's first segment.
    sides: Vec<Vec<(f64, FixedVertexHandle)>>,
}

fn pt(p: Point2<f64>) -> Point {
    [p.x, p.y]
}

fn dot_at(p: Point2<f64>, a: Point2<f64>, b: Point2<f64>) -> f64 {
    (a.x - p.x) * (b.x - p.x) + (a.y - p.y) * (b.y - p.y)
}

fn incircle(a: Point2<f64>, b: Point2<f64>, c: Point2<f64>, d: Point2<f64>) -> f64 {
    let k = |p: Point2<f64>| robust::Coord { x: p.x, y: p.y };
    robust::incircle(k(a), k(b), k(c), k(d))
}

/// Circumcentre of a triangle, computed relative to its first corner.
fn circumcenter(p: [Point2<f64>; 3]) -> Point2<f64> {
    let (bx, by) = (p[1].x - p[0].x, p[1].y - p[0].y);
    let (cx, cy) = (p[2].x - p[0].x, p[2].y - p[0].y);
    let d = 2.0 * (bx * cy - by * cx);
    let b2 = bx * bx + by * by;
    let c2 = cx * cx + cy * cy;
    Point2::new(
        p[0].x + (cy * b2 - by * c2) / d,
        p[0].y + (bx * c2 - cx * b2) / d,
    )
}

impl<'a> Refiner<'a> {
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn new(
        cdt: &'a mut MeshCdt,
        field: &'a SizeField,
        pslg: &'a Pslg,
        min_angle_deg: f64,
        min_len: f64,
        fixed_boundary: bool,
        max_vertices: usize,
        lines: Vec<MatchedLine>,
    ) -> Refiner<'a> {
        let s = min_angle_deg.to_radians().sin();
        let mut refiner = Refiner {
            cdt,
            field,
            pslg,
            sin2: s * s,
            min_len2: min_len * min_len,
            fixed_boundary,
            max_vertices,
            faces: VecDeque::new(),
            segments: VecDeque::new(),
            outcome: RefineOutcome {
                met: true,
                ..Default::default()
            },
            broken: false,
            stack: Vec::new(),
            encroached: Vec::new(),
            sides: vec![Vec::new(); 2 * lines.len()],
            lines,
        };
        if !refiner.sides.is_empty() {
            let locked: Vec<(FixedVertexHandle, u64)> = refiner
                .cdt
                .vertices()
                .filter(|v| v.data().lock != 0)
                .map(|v| (v.fix(), v.data().lock))
                .collect();
            for (v, lock) in locked {
                refiner.index_side_vertex(v, lock);
            }
        }
        refiner
    }

    fn push_face(&mut self, f: FixedFaceHandle<InnerTag>) {
        // Entries are not versioned: a popped face is judged as it is then.
        if self.badness(f).is_some() {
            self.faces.push_back(f);
        }
    }

    fn push_segment(&mut self, e: FixedUndirectedEdgeHandle) {
        let [a, b] = self
            .cdt
            .undirected_edge(e)
            .vertices()
            .map(|v| v.fix().index() as u32);
        self.segments.push_back((e, [a, b]));
    }

    /// `Some(size_bad)` when the face needs refining.
    fn badness(&self, f: FixedFaceHandle<InnerTag>) -> Option<bool> {
        let fh = self.cdt.face(f);
        let vs = fh.vertices();
        let p = vs.map(|v| v.position());
        let l2 = [0, 1, 2].map(|k| {
            let (a, b) = (p[(k + 1) % 3], p[(k + 2) % 3]);
            (a.x - b.x).powi(2) + (a.y - b.y).powi(2)
        });
        let (mut lo, mut mid, mut hi) = (l2[0], l2[1], l2[2]);
        if lo > mid {
            std::mem::swap(&mut lo, &mut mid);
        }
        if mid > hi {
            std::mem::swap(&mut mid, &mut hi);
        }
        if lo > mid {
            std::mem::swap(&mut lo, &mut mid);
        }
        let h = (vs[0].data().h + vs[1].data().h + vs[2].data().h) / 3.0;
        let size_bad = hi > h * h;
        let cross = (p[1].x - p[0].x) * (p[2].y - p[0].y) - (p[1].y - p[0].y) * (p[2].x - p[0].x);
        // sin(smallest angle) = 2·area / (middle edge · longest edge).
        let angle_bad = cross * cross < self.sin2 * mid * hi;
        if size_bad || angle_bad {
            Some(size_bad)
        } else {
            None
        }
    }

    /// Queue every face and every constraint edge.
    pub(crate) fn seed(&mut self) {
        let faces: Vec<_> = self.cdt.fixed_inner_faces().collect();
        for f in faces {
            self.push_face(f);
        }
        let segs: Vec<_> = self
            .cdt
            .undirected_edges()
            .filter(|e| e.is_constraint_edge())
            .map(|e| e.fix())
            .collect();
        for e in segs {
            self.push_segment(e);
        }
    }

    pub(crate) fn run(mut self) -> RefineOutcome {
        // Sweep until a full pass over the faces finds nothing to do (a
        // split that re-adds a constraint may change faces away from the
        // new vertex, which the queues would not see).
        for _ in 0..8 {
            self.drain();
            if self.outcome.budget_hit {
                break;
            }
            let n_before = self.cdt.num_vertices();
            self.seed();
            self.drain();
            if self.cdt.num_vertices() == n_before {
                break;
            }
        }
        self.outcome.broken = self.broken;
        self.outcome
    }

    fn drain(&mut self) {
        loop {
            if self.cdt.num_vertices() >= self.max_vertices {
                self.outcome.budget_hit = true;
                self.outcome.met = false;
                break;
            }
            if let Some((e, key)) = self.segments.pop_front() {
                if e.index() >= self.cdt.num_undirected_edges() {
                    continue;
                }
                let eh = self.cdt.undirected_edge(e);
                if !eh.is_constraint_edge() || eh.vertices().map(|v| v.fix().index() as u32) != key
                {
                    continue;
                }
                if self.is_encroached(e) {
                    self.split_segment(e);
                }
                continue;
            }
            if let Some(f) = self.faces.pop_back() {
                self.refine_face(f);
                continue;
            }
            break;
        }
    }

    fn is_encroached(&self, e: FixedUndirectedEdgeHandle) -> bool {
        let d = self.cdt.directed_edge(e.as_directed());
        let [a, b] = d.positions();
        for side in [d, d.rev()] {
            if side.face().is_outer() {
                continue;
            }
            if let Some(p) = side.opposite_position() {
                if dot_at(p, a, b) < 0.0 {
                    return true;
                }
            }
        }
        false
    }

    /// Whether the shortest edge of the face joins the two legs of a corner
    /// below 60°.
    fn between_sharp_legs(&self, f: FixedFaceHandle<InnerTag>) -> bool {
        let fh = self.cdt.face(f);
        let vs = fh.vertices();
        let mut best = (f64::INFINITY, 0);
        for k in 0..3 {
            let (a, b) = (vs[k].position(), vs[(k + 1) % 3].position());
            let l = (a.x - b.x).powi(2) + (a.y - b.y).powi(2);
            if l < best.0 {
                best = (l, k);
            }
        }
        let u = *vs[best.1].data();
        let w = *vs[(best.1 + 1) % 3].data();
        // The legs a vertex lies on, as the far ends seen from a corner.
        let legs = |v: &MeshVertex| -> [u32; 2] {
            if v.pv == NONE {
                v.ends
            } else {
                [v.pv, NONE]
            }
        };
        let (lu, lw) = (legs(&u), legs(&w));
        let on_leg_of = |v: &MeshVertex, x: u32| -> Option<u32> {
            // Returns the leg's far end when v lies on a PSLG edge from x.
            if v.pv == NONE {
                if v.ends[0] == x {
                    Some(v.ends[1])
                } else if v.ends[1] == x {
                    Some(v.ends[0])
                } else {
                    None
                }
            } else if v.pv != x && self.pslg.neighbors[x as usize].contains(&v.pv) {
                Some(v.pv)
            } else {
                None
            }
        };
        let mut candidates: Vec<u32> = Vec::with_capacity(4);
        for l in [lu, lw] {
            for &x in &l {
                if x != NONE {
                    candidates.push(x);
                }
            }
        }
        if u.pv != NONE {
            candidates.extend(self.pslg.neighbors[u.pv as usize].iter().copied());
        }
        for x in candidates {
            if x == NONE || !self.pslg.sharp[x as usize] {
                continue;
            }
            if let (Some(a), Some(b)) = (on_leg_of(&u, x), on_leg_of(&w, x)) {
                if a != b {
                    return true;
                }
            }
        }
        false
    }

    fn refine_face(&mut self, f: FixedFaceHandle<InnerTag>) {
        let Some(size_bad) = self.badness(f) else {
            return;
        };
        let fh = self.cdt.face(f);
        let locks = fh.vertices().map(|v| v.data().lock);
        if locks[0] & locks[1] & locks[2] != 0 {
            // Three corners on one straight matched segment: a flat sliver
            // outside the domain left by rounding, not a mesh triangle.
            return;
        }
        let p = fh.positions();
        let hint = fh.vertices()[0].fix();
        let bg_hint = fh.vertices()[0].data().bg;
        if self.field.has_outside {
            let c = [
                (p[0].x + p[1].x + p[2].x) / 3.0,
                (p[0].y + p[1].y + p[2].y) / 3.0,
            ];
            if self
                .field
                .label_at(c, FixedVertexHandle::from_index(bg_hint as usize))
                .0
                == OUTSIDE
            {
                return;
            }
        }
        let shortest = (0..3)
            .map(|k| (p[k].x - p[(k + 1) % 3].x).powi(2) + (p[k].y - p[(k + 1) % 3].y).powi(2))
            .fold(f64::INFINITY, f64::min);
        if !size_bad && self.between_sharp_legs(f) {
            self.outcome.skipped_small_angle += 1;
            return;
        }
        if shortest < self.min_len2 {
            self.outcome.met = false;
            return;
        }
        let c = circumcenter(p);
        if !(c.x.is_finite() && c.y.is_finite()) {
            self.outcome.met = false;
            return;
        }
        match self.walk(f, c) {
            // Only faces outside the domain see past the hull.
            Walk::Outside => {}
            Walk::Blocked(e) => {
                if self.split_segment(e) {
                    self.requeue(f);
                } else {
                    self.outcome.met = false;
                }
            }
            Walk::Face(g) => {
                self.find_encroached(g, c);
                if !self.encroached.is_empty() {
                    let list = std::mem::take(&mut self.encroached);
                    let mut any = false;
                    for &e in &list {
                        // An earlier split in this list may have removed it.
                        if e.index() < self.cdt.num_undirected_edges()
                            && self.cdt.is_constraint_edge(e)
                        {
                            any |= self.split_segment(e);
                        }
                    }
                    self.encroached = list;
                    if any {
                        self.requeue(f);
                    } else {
                        self.outcome.met = false;
                    }
                    return;
                }
                let (h, bg) = self.field.size_at(pt(c), bg_hint);
                let n0 = self.cdt.num_vertices();
                let v = MeshVertex {
                    pos: c,
                    h,
                    bg,
                    pv: NONE,
                    ends: [NONE, NONE],
                    lock: 0,
                };
                match self.cdt.insert_with_hint(v, hint) {
                    Ok(v) if self.cdt.num_vertices() > n0 => self.after_insert(v),
                    _ => self.outcome.met = false,
                }
            }
        }
    }

    fn requeue(&mut self, f: FixedFaceHandle<InnerTag>) {
        self.faces.push_back(f);
    }

    fn after_insert(&mut self, v: FixedVertexHandle) {
        let mut faces = [None; 16];
        let mut extra = Vec::new();
        for (k, e) in self.cdt.vertex(v).out_edges().enumerate() {
            if let Some(f) = e.face().as_inner() {
                if k < 16 {
                    faces[k] = Some(f.fix());
                } else {
                    extra.push(f.fix());
                }
            }
        }
        for f in faces.into_iter().flatten().chain(extra) {
            self.push_face(f);
        }
    }

    /// Walk from face `f` towards `target` without crossing constraints.
    fn walk(&self, f: FixedFaceHandle<InnerTag>, target: Point2<f64>) -> Walk {
        let mut face = f;
        for step in 0..100_000usize {
            let edges = self.cdt.face(face).adjacent_edges();
            let mut blocked = None;
            let mut next = None;
            for k in 0..3 {
                let e = edges[(k + step) % 3];
                if e.side_query(target).is_on_right_side() {
                    if e.is_constraint_edge() {
                        blocked.get_or_insert(e);
                    } else {
                        next = Some(e);
                        break;
                    }
                }
            }
            match (next, blocked) {
                (Some(e), _) => match e.rev().face().as_inner() {
                    Some(g) => face = g.fix(),
                    None => return Walk::Outside,
                },
                (None, Some(e)) => return Walk::Blocked(e.fix().as_undirected()),
                (None, None) => return Walk::Face(face),
            }
        }
        Walk::Outside
    }

    /// Constraint edges on the boundary of the insertion cavity of `c`
    /// (found by simulating the flips) whose diametral circle holds `c`.
    fn find_encroached(&mut self, g: FixedFaceHandle<InnerTag>, c: Point2<f64>) {
        self.encroached.clear();
        self.stack.clear();
        self.stack
            .extend(self.cdt.face(g).adjacent_edges().map(|e| e.fix()));
        let mut guard = 0;
        while let Some(e) = self.stack.pop() {
            guard += 1;
            if guard > 10_000 {
                break;
            }
            let eh = self.cdt.directed_edge(e);
            if eh.is_constraint_edge() {
                let [a, b] = eh.positions();
                if dot_at(c, a, b) < 0.0 && !self.encroached.contains(&e.as_undirected()) {
                    self.encroached.push(e.as_undirected());
                }
                continue;
            }
            let opp = eh.rev();
            if opp.face().is_outer() {
                continue;
            }
            let q = opp.face().as_inner().map(|f| f.positions());
            if let Some(q) = q {
                if incircle(q[0], q[1], q[2], c) > 0.0 {
                    self.stack.push(opp.next().fix());
                    self.stack.push(opp.prev().fix());
                }
            }
        }
    }

    /// Split a constraint edge; false when it may not or cannot be split.
    fn split_segment(&mut self, e: FixedUndirectedEdgeHandle) -> bool {
        if self.fixed_boundary {
            return false;
        }
        let d = self.cdt.directed_edge(e.as_directed());
        let [va, vb] = d.vertices();
        let (da, db) = (*va.data(), *vb.data());
        let (pa, pb) = (da.pos, db.pos);
        let len2 = (pa.x - pb.x).powi(2) + (pa.y - pb.y).powi(2);
        if len2 < 4.0 * self.min_len2 {
            return false;
        }
        let len = len2.sqrt();
        let shell_a = da.pv != NONE && self.pslg.shell[da.pv as usize];
        let shell_b = db.pv != NONE && self.pslg.shell[db.pv as usize];
        // Concentric shells: the split distance from a sharp corner is a
        // power of two, so both legs get vertices at equal distances.
        let t = if shell_a != shell_b {
            let dist = (0.5 * len).log2().round().exp2();
            if shell_a {
                dist / len
            } else {
                1.0 - dist / len
            }
        } else {
            0.5
        };
        let m = Point2::new(pa.x + t * (pb.x - pa.x), pa.y + t * (pb.y - pa.y));
        let shared = da.lock & db.lock;
        if shared == 0 {
            return self.insert_on_constraint(e, m, 0);
        }
        // A piece of a matched segment: split its image on the partner at
        // the image point too, so both sides keep the same nodes.
        let bit = shared.trailing_zeros() as usize;
        let tol = 1e-6 * len;
        let other = bit ^ 1;
        let (Some(qa), Some(qb)) = (
            self.side_vertex(other, self.side_param(bit, pa), tol),
            self.side_vertex(other, self.side_param(bit, pb), tol),
        ) else {
            self.outcome.met = false;
            return false;
        };
        let Some(partner) = self
            .cdt
            .get_edge_from_neighbors(qa, qb)
            .filter(|p| p.is_constraint_edge())
            .map(|p| p.fix().as_undirected())
        else {
            self.outcome.met = false;
            return false;
        };
        if !self.insert_on_constraint(e, m, 1u64 << bit) {
            return false;
        }
        // The split may have re-added constraints: find the image again.
        let partner = match self.cdt.get_edge_from_neighbors(qa, qb) {
            Some(p) if p.is_constraint_edge() => p.fix().as_undirected(),
            _ => partner,
        };
        // The image point, interpolated between the partner's own ends so
        // that it stays on the partner's line to rounding.
        let (ra, rb) = (
            self.cdt.vertex(qa).position(),
            self.cdt.vertex(qb).position(),
        );
        let image_m = Point2::new(ra.x + t * (rb.x - ra.x), ra.y + t * (rb.y - ra.y));
        if !self.insert_on_constraint(partner, image_m, 1u64 << (bit ^ 1)) {
            // One side split and not the other: the final check reports it.
            self.outcome.met = false;
        }
        true
    }

    /// Parameter of `p` along the first segment of the pair of lock bit
    /// `bit` (a partner point is carried back first).
    fn side_param(&self, bit: usize, p: Point2<f64>) -> f64 {
        let m = &self.lines[bit / 2];
        let q = if bit % 2 == 0 {
            pt(p)
        } else {
            m.motion.inverse().apply(pt(p))
        };
        let d = [m.a[1][0] - m.a[0][0], m.a[1][1] - m.a[0][1]];
        let len = d[0].hypot(d[1]);
        ((q[0] - m.a[0][0]) * d[0] + (q[1] - m.a[0][1]) * d[1]) / len
    }

    /// Record a vertex on the sides given by `lock`.
    fn index_side_vertex(&mut self, v: FixedVertexHandle, lock: u64) {
        let p = self.cdt.vertex(v).position();
        for bit in 0..self.sides.len() {
            if lock & (1u64 << bit) != 0 {
                let t = self.side_param(bit, p);
                let list = &mut self.sides[bit];
                let at = list.partition_point(|x| x.0 < t);
                list.insert(at, (t, v));
            }
        }
    }

    /// The vertex on side `bit` at parameter `t` (within `tol`).
    fn side_vertex(&self, bit: usize, t: f64, tol: f64) -> Option<FixedVertexHandle> {
        let list = &self.sides[bit];
        let at = list.partition_point(|x| x.0 < t);
        [at.wrapping_sub(1), at]
            .into_iter()
            .filter_map(|k| list.get(k))
            .filter(|x| (x.0 - t).abs() <= tol)
            .min_by(|x, y| (x.0 - t).abs().total_cmp(&(y.0 - t).abs()))
            .map(|x| x.1)
    }

    /// Insert `m` on constraint edge `e` (splitting it in two) with the
    /// given lock bits, and queue what changed.
    fn insert_on_constraint(
        &mut self,
        e: FixedUndirectedEdgeHandle,
        m: Point2<f64>,
        lock: u64,
    ) -> bool {
        let d = self.cdt.directed_edge(e.as_directed());
        let [va, vb] = d.vertices();
        let (a, b) = (va.fix(), vb.fix());
        let (da, db) = (*va.data(), *vb.data());
        let ends = if da.pv == NONE {
            da.ends
        } else if db.pv == NONE {
            db.ends
        } else {
            [da.pv, db.pv]
        };
        let (h, bg) = self.field.size_at(pt(m), da.bg);
        let vertex = MeshVertex {
            pos: m,
            h,
            bg,
            pv: NONE,
            ends,
            lock,
        };
        let n0 = self.cdt.num_vertices();
        let on_edge = matches!(
            self.cdt.locate_with_hint(m, a),
            PositionInTriangulation::OnEdge(x) if x.as_undirected() == e
        );
        let v = if on_edge {
            match self.cdt.insert_with_hint(vertex, a) {
                Ok(v) => v,
                Err(_) => return false,
            }
        } else {
            // The split point is not exactly on the edge in floating point:
            // take the constraint out, insert, and put the two halves back.
            if matches!(
                self.cdt.locate_with_hint(m, a),
                PositionInTriangulation::OnVertex(_)
            ) {
                return false;
            }
            self.cdt.remove_constraint_edge(e);
            let v = match self.cdt.insert_with_hint(vertex, a) {
                Ok(v) => v,
                Err(_) => {
                    self.cdt.add_constraint(a, b);
                    return false;
                }
            };
            for (from, to) in [(a, v), (v, b)] {
                if self.cdt.try_add_constraint(from, to).is_empty() {
                    self.broken = true;
                    return false;
                }
            }
            v
        };
        if self.cdt.num_vertices() == n0 {
            return false;
        }
        if lock != 0 {
            self.index_side_vertex(v, lock);
        }
        // New faces, the two halves and the constraints facing the new vertex.
        let mut segs = Vec::new();
        let mut faces = Vec::new();
        for out in self.cdt.vertex(v).out_edges() {
            if out.is_constraint_edge() {
                segs.push(out.fix().as_undirected());
            }
            if let Some(f) = out.face().as_inner() {
                faces.push(f.fix());
                let opposite = out.next();
                if opposite.is_constraint_edge() {
                    segs.push(opposite.fix().as_undirected());
                }
            }
        }
        for f in faces {
            self.push_face(f);
        }
        for s in segs {
            self.push_segment(s);
        }
        true
    }
}
