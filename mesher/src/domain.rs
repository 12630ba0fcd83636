//! The input geometry as closed polylines: arcs cut by chord error and by
//! each loop's own size, region classification of points, and the local
//! feature size at every polyline vertex.

use crate::geometry::{arc_pieces, polar, Outline, Point, Segment};
use crate::mesh::Mesh;
use crate::spatial::{point_segment_distance, segments_touch, SegmentGrid};

/// Label of a point outside the outer outline.
pub(crate) const OUTSIDE: u32 = u32::MAX - 1;

/// Owner value of a loop of the outer outline.
pub(crate) const OUTER_OWNER: u32 = u32::MAX;

/// Elements across the narrowest gap or shell: the size at a vertex is at
/// most its local feature size divided by this (common practice, no source:
/// two to four elements across a thin feature).
pub(crate) const ELEMENTS_ACROSS_FEATURE: f64 = 3.0;

/// One closed polyline: `points[i] -> points[i + 1]` (wrapping) is edge `i`,
/// lying on input segment `seg[i]`.
#[derive(Clone, Debug)]
pub(crate) struct PolyLoop {
    pub points: Vec<Point>,
    pub seg: Vec<u32>,
    /// Parameter of each point along its segment (0 at the segment's start).
    pub param: Vec<f64>,
    /// Shape index, or [`OUTER_OWNER`].
    pub owner: u32,
    /// The largest element edge of the owner.
    pub own_size: f64,
    bbox: (Point, Point),
}

/// The point at parameter `t` of a segment.
pub(crate) fn point_at(s: &Segment, t: f64) -> Point {
    match *s {
        Segment::Line { from, to } => [
            from[0] + t * (to[0] - from[0]),
            from[1] + t * (to[1] - from[1]),
        ],
        Segment::Arc {
            center,
            radius,
            start,
            sweep,
        } => polar(center, radius, start + t * sweep),
    }
}

/// The number of pieces an arc of its own asks for, by chord error and by
/// its owner's size.
fn arc_piece_count(s: &Segment, chord_fraction: f64, own_size: f64) -> usize {
    match *s {
        Segment::Line { .. } => (s.length() / own_size).ceil().max(1.0) as usize,
        Segment::Arc { sweep, .. } => {
            arc_pieces(sweep, chord_fraction).max((s.length() / own_size).ceil() as usize)
        }
    }
}

/// Circles that carry arcs of more than one outline (a magnet sitting on a
/// rotor, a coil former on a core): split independently, two coincident
/// arcs give chords that cross by their sagitta and leave slivers between
/// them. On such a circle every arc end cuts the circle into elementary
/// intervals; each interval is split evenly into the pieces the finest arc
/// covering it asks for, and every arc covering it takes those same points.
#[derive(Default)]
pub(crate) struct SharedCircles {
    circles: Vec<SharedCircle>,
}

struct SharedCircle {
    center: Point,
    radius: f64,
    /// Arc ends, angles in [0, 2π), sorted and distinct.
    ends: Vec<f64>,
    /// Per elementary interval `ends[i] → ends[i + 1]` (the last one wraps
    /// round): its number of pieces.
    pieces: Vec<usize>,
}

/// Angles closer than this (radians) are one arc end.
const SAME_ANGLE: f64 = 1e-9;

impl SharedCircles {
    fn find(owned: &[(&Outline, u32, f64)], chord_fraction: f64) -> SharedCircles {
        use std::f64::consts::TAU;
        // (center, radius, owners, arcs as (start, length, piece angle)).
        type Arcs = Vec<(f64, f64, f64)>;
        let mut found: Vec<(Point, f64, Vec<u32>, Arcs)> = Vec::new();
        for &(outline, owner, size) in owned {
            for s in outline.loops.iter().flat_map(|l| &l.segments) {
                let Segment::Arc {
                    center,
                    radius,
                    start,
                    sweep,
                } = *s
                else {
                    continue;
                };
                let piece = sweep.abs() / arc_piece_count(s, chord_fraction, size) as f64;
                // Kept counter-clockwise: from the lower end.
                let from = if sweep >= 0.0 { start } else { start + sweep };
                let arc = (from.rem_euclid(TAU), sweep.abs().min(TAU), piece);
                match found
                    .iter_mut()
                    .find(|c| same_circle((c.0, c.1), (center, radius)))
                {
                    Some(c) => {
                        if !c.2.contains(&owner) {
                            c.2.push(owner);
                        }
                        c.3.push(arc);
                    }
                    None => found.push((center, radius, vec![owner], vec![arc])),
                }
            }
        }
        let circles = found
            .into_iter()
            .filter(|c| c.2.len() > 1)
            .map(|(center, radius, _, arcs)| {
                let mut ends: Vec<f64> = arcs
                    .iter()
                    .flat_map(|a| [a.0, (a.0 + a.1).rem_euclid(TAU)])
                    .collect();
                ends.sort_by(f64::total_cmp);
                ends.dedup_by(|b, a| *b - *a < SAME_ANGLE);
                if ends.len() > 1 && ends[0] + TAU - ends[ends.len() - 1] < SAME_ANGLE {
                    ends.pop();
                }
                let pieces = (0..ends.len())
                    .map(|i| {
                        let (a, len) = interval(&ends, i);
                        let mid = a + 0.5 * len;
                        let finest = arcs
                            .iter()
                            .filter(|arc| (mid - arc.0).rem_euclid(TAU) < arc.1)
                            .map(|arc| arc.2)
                            .fold(f64::INFINITY, f64::min);
                        (len / finest).ceil().max(1.0) as usize
                    })
                    .collect();
                SharedCircle {
                    center,
                    radius,
                    ends,
                    pieces,
                }
            })
            .collect();
        SharedCircles { circles }
    }

    /// The shared circle arc `s` lies on, if any.
    fn circle_of(&self, s: &Segment) -> Option<usize> {
        let Segment::Arc { center, radius, .. } = *s else {
            return None;
        };
        self.circles
            .iter()
            .position(|c| same_circle((c.center, c.radius), (center, radius)))
    }

    /// A key for the piece of shared circle `circle` between points `a`
    /// and `b` (either order): coincident pieces of different outlines get
    /// the same key.
    fn piece_key(&self, circle: usize, a: Point, b: Point) -> (usize, i64, i64) {
        let c = &self.circles[circle];
        let angle = |p: Point| {
            let t = (p[1] - c.center[1]).atan2(p[0] - c.center[0]);
            (t.rem_euclid(std::f64::consts::TAU) / 1e-8).round() as i64
        };
        let (x, y) = (angle(a), angle(b));
        (circle, x.min(y), x.max(y))
    }

    /// The parameters (0 first, 1 excluded) at which arc `s` is split, when
    /// it lies on a shared circle.
    fn params(&self, s: &Segment) -> Option<Vec<f64>> {
        use std::f64::consts::TAU;
        let Segment::Arc { start, sweep, .. } = *s else {
            return None;
        };
        let c = &self.circles[self.circle_of(s)?];
        let n = c.ends.len();
        let near = |x: f64| {
            (0..n).find(|&i| {
                let d = (x - c.ends[i]).rem_euclid(TAU);
                d < SAME_ANGLE || TAU - d < SAME_ANGLE
            })
        };
        let mut first = near(start.rem_euclid(TAU))?;
        let length = sweep.abs().min(TAU);
        // Angles along the arc, from its start, as distances in its direction.
        let mut distances = Vec::new();
        let mut covered = 0.0;
        // An arc spans at most all n intervals (its ends are among `ends`).
        for _ in 0..n {
            if covered >= length - SAME_ANGLE {
                break;
            }
            // The interval next to `first` in the arc's direction.
            let i = if sweep >= 0.0 {
                first
            } else {
                (first + n - 1) % n
            };
            let (_, len) = interval(&c.ends, i);
            let p = c.pieces[i];
            for k in 0..p {
                distances.push(covered + len * k as f64 / p as f64);
            }
            covered += len;
            first = if sweep >= 0.0 { (first + 1) % n } else { i };
        }
        Some(distances.into_iter().map(|d| d / length).collect())
    }
}

/// Whether two circles (center, radius) are one, to rounding.
fn same_circle(a: (Point, f64), b: (Point, f64)) -> bool {
    let tol = 1e-9 * (b.1 + b.0[0].abs() + b.0[1].abs());
    (a.0[0] - b.0[0]).abs() <= tol && (a.0[1] - b.0[1]).abs() <= tol && (a.1 - b.1).abs() <= tol
}

/// Start angle and length of elementary interval `i` of sorted `ends`.
fn interval(ends: &[f64], i: usize) -> (f64, f64) {
    let a = ends[i];
    let b = if i + 1 < ends.len() {
        ends[i + 1]
    } else {
        ends[0] + std::f64::consts::TAU
    };
    (a, b - a)
}

/// One input segment (line or arc) of some outline.
#[derive(Clone, Copy, Debug)]
pub(crate) struct SegInfo {
    /// Index within its outline, counting the segments of all its loops.
    pub local: u32,
    /// The previous and next segment of the same loop (global ids).
    pub prev: u32,
    pub next: u32,
}

/// The whole input as polylines.
pub(crate) struct Domain {
    pub loops: Vec<PolyLoop>,
    pub segs: Vec<SegInfo>,
    /// The exact curve of each segment (none for a fixed rim's chords).
    pub curves: Vec<Option<Segment>>,
    /// Effective size of each shape (its mesh size, capped by `max_size`).
    pub shape_sizes: Vec<f64>,
    pub max_size: f64,
    pub growth: f64,
    /// Optional size cap at each vertex of each loop (used for fixed rims).
    pub vertex_caps: Option<Vec<Vec<f64>>>,
    /// Input edges may not be split (fixed rim).
    pub fixed_boundary: bool,
    /// Circles carrying arcs of more than one outline.
    pub shared: SharedCircles,
}

impl PolyLoop {
    pub(crate) fn new(
        points: Vec<Point>,
        seg: Vec<u32>,
        param: Vec<f64>,
        owner: u32,
        own_size: f64,
    ) -> PolyLoop {
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for p in &points {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
        PolyLoop {
            points,
            seg,
            param,
            owner,
            own_size,
            bbox: (lo, hi),
        }
    }

    /// Ray-cast crossing parity of `p` (half-open rule on y).
    fn crossings(&self, p: Point) -> bool {
        if p[1] < self.bbox.0[1] || p[1] > self.bbox.1[1] || p[0] > self.bbox.1[0] {
            return false;
        }
        let n = self.points.len();
        let mut inside = false;
        for i in 0..n {
            let a = self.points[i];
            let b = self.points[(i + 1) % n];
            if (a[1] > p[1]) != (b[1] > p[1]) {
                let x = a[0] + (p[1] - a[1]) * (b[0] - a[0]) / (b[1] - a[1]);
                if x > p[0] {
                    inside = !inside;
                }
            }
        }
        inside
    }
}

impl Domain {
    /// Discretise the outer outline and the shapes.
    pub(crate) fn from_outlines(
        outer: &Outline,
        shapes: &[(&Outline, f64)],
        max_size: f64,
        growth: f64,
        chord_fraction: f64,
    ) -> Domain {
        let mut domain = Domain {
            loops: Vec::new(),
            segs: Vec::new(),
            curves: Vec::new(),
            shape_sizes: shapes.iter().map(|s| s.1.min(max_size)).collect(),
            max_size,
            growth,
            vertex_caps: None,
            fixed_boundary: false,
            shared: SharedCircles::default(),
        };
        let owned: Vec<(&Outline, u32, f64)> = std::iter::once((outer, OUTER_OWNER, max_size))
            .chain(
                shapes
                    .iter()
                    .enumerate()
                    .map(|(i, (o, size))| (*o, i as u32, size.min(max_size))),
            )
            .collect();
        let shared = SharedCircles::find(&owned, chord_fraction);
        for (outline, owner, size) in owned {
            domain.add_outline(outline, owner, size, chord_fraction, &shared);
        }
        domain.shared = shared;
        domain
    }

    fn add_outline(
        &mut self,
        outline: &Outline,
        owner: u32,
        own_size: f64,
        chord_fraction: f64,
        shared: &SharedCircles,
    ) {
        let mut local = 0u32;
        for l in &outline.loops {
            let first = self.segs.len() as u32;
            let n = l.segments.len() as u32;
            let mut points = Vec::new();
            let mut seg = Vec::new();
            let mut param = Vec::new();
            for (k, s) in l.segments.iter().enumerate() {
                let g = first + k as u32;
                self.curves.push(Some(*s));
                self.segs.push(SegInfo {
                    local,
                    prev: first + (k as u32 + n - 1) % n,
                    next: first + (k as u32 + 1) % n,
                });
                local += 1;
                if let Some(params) = shared.params(s) {
                    for t in params {
                        points.push(point_at(s, t));
                        seg.push(g);
                        param.push(t);
                    }
                    continue;
                }
                let pieces = arc_piece_count(s, chord_fraction, own_size);
                for j in 0..pieces {
                    let t = j as f64 / pieces as f64;
                    points.push(point_at(s, t));
                    seg.push(g);
                    param.push(t);
                }
            }
            self.loops
                .push(PolyLoop::new(points, seg, param, owner, own_size));
        }
    }

    /// The region of `p`: the last shape containing it, [`Mesh::OUTER_REGION`]
    /// inside the outer outline only, or [`OUTSIDE`].
    pub(crate) fn classify(&self, p: Point) -> u32 {
        let mut inside_outer = false;
        let mut shape_parity: Vec<(u32, bool)> = Vec::new();
        for l in &self.loops {
            let c = l.crossings(p);
            if l.owner == OUTER_OWNER {
                inside_outer ^= c;
            } else if c {
                match shape_parity.iter_mut().find(|e| e.0 == l.owner) {
                    Some(e) => e.1 = !e.1,
                    None => shape_parity.push((l.owner, true)),
                }
            }
        }
        if !inside_outer {
            return OUTSIDE;
        }
        shape_parity
            .iter()
            .filter(|e| e.1)
            .map(|e| e.0)
            .max()
            .unwrap_or(Mesh::OUTER_REGION)
    }

    /// Size of a region label.
    pub(crate) fn region_size(&self, label: u32) -> f64 {
        match label {
            OUTSIDE => f64::INFINITY,
            l if (l as usize) < self.shape_sizes.len() => self.shape_sizes[l as usize],
            _ => self.max_size,
        }
    }

    /// Add polyline points where a thin feature is sampled too coarsely to
    /// be seen (two long parallel edges sampled only at their ends), and
    /// return the final feature caps of [`Domain::feature_caps`]; or, as
    /// soon as the loops hold more than `max_points` points, that number
    /// (the mesh would be too large, and the caps of many points in narrow
    /// gaps are slow to find).
    pub(crate) fn refine_for_features(
        &mut self,
        max_points: usize,
    ) -> Result<Vec<Vec<f64>>, usize> {
        let mut caps = self.feature_caps(None);
        for _round in 0..4 {
            if self.fixed_boundary {
                return Ok(caps);
            }
            // Pieces each loop edge asks for (1: keep it). A piece of a
            // shared circle takes the most any outline asks for it, so
            // that coincident arcs stay split at the same points.
            let mut wanted: Vec<Vec<usize>> = Vec::with_capacity(caps.len());
            let mut on_shared: std::collections::HashMap<(usize, i64, i64), usize> =
                std::collections::HashMap::new();
            for (l, cap) in self.loops.iter().zip(&caps) {
                let n = l.points.len();
                let mut w = vec![1; n];
                for (i, wi) in w.iter_mut().enumerate() {
                    let j = (i + 1) % n;
                    let Some(curve) = self.curves[l.seg[i] as usize] else {
                        continue;
                    };
                    let feature = ELEMENTS_ACROSS_FEATURE * cap[i].min(cap[j]);
                    let (a, b) = (l.points[i], l.points[j]);
                    let len = (b[0] - a[0]).hypot(b[1] - a[1]);
                    if feature.is_finite() && len > 1.5 * feature {
                        // At most 8 pieces a round: thin spots are refined
                        // progressively instead of the whole edge at once.
                        *wi = ((len / feature).ceil() as usize).min(8);
                    }
                    if let Some(c) = self.shared.circle_of(&curve) {
                        let most = on_shared.entry(self.shared.piece_key(c, a, b)).or_insert(1);
                        *most = (*most).max(*wi);
                    }
                }
                wanted.push(w);
            }
            let mut changed = false;
            let mut known = Vec::with_capacity(caps.len());
            for ((l, cap), w) in self.loops.iter_mut().zip(&caps).zip(&wanted) {
                let n = l.points.len();
                let (mut points, mut seg, mut param) = (Vec::new(), Vec::new(), Vec::new());
                let mut old = Vec::new();
                for i in 0..n {
                    points.push(l.points[i]);
                    seg.push(l.seg[i]);
                    param.push(l.param[i]);
                    old.push(cap[i]);
                    let j = (i + 1) % n;
                    let Some(curve) = self.curves[l.seg[i] as usize] else {
                        continue;
                    };
                    let pieces = match self.shared.circle_of(&curve) {
                        Some(c) => on_shared[&self.shared.piece_key(c, l.points[i], l.points[j])],
                        None => w[i],
                    };
                    let t0 = l.param[i];
                    let t1 = if l.seg[j] == l.seg[i] && l.param[j] > t0 {
                        l.param[j]
                    } else {
                        1.0
                    };
                    for q in 1..pieces {
                        let t = t0 + (t1 - t0) * q as f64 / pieces as f64;
                        points.push(point_at(&curve, t));
                        seg.push(l.seg[i]);
                        param.push(t);
                        old.push(f64::NAN);
                    }
                    changed |= pieces > 1;
                }
                if points.len() != n {
                    *l = PolyLoop::new(points, seg, param, l.owner, l.own_size);
                }
                known.push(old);
            }
            if !changed {
                return Ok(caps);
            }
            let points = self.loops.iter().map(|l| l.points.len()).sum::<usize>();
            if points > max_points {
                return Err(points);
            }
            // Only the new points need their caps (NaN marks them).
            caps = self.feature_caps(Some(known));
        }
        Ok(caps)
    }

    /// Whether segments `a` and `b` are both arcs of the same circle.
    fn same_circle(&self, a: u32, b: u32) -> bool {
        match (self.curves[a as usize], self.curves[b as usize]) {
            (
                Some(Segment::Arc {
                    center: ca,
                    radius: ra,
                    ..
                }),
                Some(Segment::Arc {
                    center: cb,
                    radius: rb,
                    ..
                }),
            ) => {
                let tol = 1e-9 * ra.max(rb);
                (ca[0] - cb[0]).abs() <= tol
                    && (ca[1] - cb[1]).abs() <= tol
                    && (ra - rb).abs() <= tol
            }
            _ => false,
        }
    }

    /// Size cap from the local feature size at every vertex of every loop:
    /// the distance to the nearest input segment that is neither the
    /// vertex's own segment nor joined to it, over
    /// [`ELEMENTS_ACROSS_FEATURE`].
    pub(crate) fn feature_caps(&self, known: Option<Vec<Vec<f64>>>) -> Vec<Vec<f64>> {
        let mut edges = Vec::new();
        let mut edge_seg = Vec::new();
        for l in &self.loops {
            let n = l.points.len();
            for i in 0..n {
                edges.push([l.points[i], l.points[(i + 1) % n]]);
                edge_seg.push(l.seg[i]);
            }
        }
        let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
        for e in &edges {
            for p in e {
                for k in 0..2 {
                    lo[k] = lo[k].min(p[k]);
                    hi[k] = hi[k].max(p[k]);
                }
            }
        }
        let touch = 1e-9 * (hi[0] - lo[0]).max(hi[1] - lo[1]).max(1e-300);
        let grid = SegmentGrid::new(&edges);
        let mut caps = Vec::with_capacity(self.loops.len());
        for (li, l) in self.loops.iter().enumerate() {
            let n = l.points.len();
            let mut cap = vec![f64::INFINITY; n];
            for i in 0..n {
                if let Some(k) = &known {
                    if !k[li][i].is_nan() {
                        cap[i] = k[li][i];
                        continue;
                    }
                }
                let p = l.points[i];
                let own = [l.seg[(i + n - 1) % n], l.seg[i]];
                let corner = own[0] != own[1];
                let excluded = |s: u32| -> bool {
                    own.contains(&s)
                        || (!corner
                            && (self.segs[own[0] as usize].prev == s
                                || self.segs[own[0] as usize].next == s))
                        // Two arcs of one circle (a magnet sitting on a
                        // rotor) are chords of the same curve: their
                        // distance is the chord error, not a thin gap, and
                        // refining for it never ends.
                        || own.iter().any(|&o| self.same_circle(o, s))
                };
                // Only features closer than this can lower the size.
                let radius = ELEMENTS_ACROSS_FEATURE * l.own_size.min(self.max_size);
                let mut best = f64::INFINITY;
                let mut candidates: Vec<(f64, usize, f64)> = Vec::new();
                // Search outwards in growing boxes; stop once the nearest
                // accepted feature is inside the box searched.
                let mut r = grid.cell_size().min(radius);
                loop {
                    candidates.clear();
                    grid.query([p[0] - r, p[1] - r], [p[0] + r, p[1] + r], |j| {
                        if !excluded(edge_seg[j]) {
                            let (d, t) = point_segment_distance(p, edges[j][0], edges[j][1]);
                            if d > touch && d <= r {
                                candidates.push((d, j, t));
                            }
                        }
                    });
                    candidates.sort_by(|x, y| x.0.total_cmp(&y.0));
                    candidates.dedup_by_key(|c| c.1);
                    for &(d, j, t) in &candidates {
                        let [a, b] = edges[j];
                        // A nearest point on this edge that also lies on the
                        // vertex's own segments is a shared corner, not a gap.
                        let q = [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
                        let mut on_own = false;
                        grid.query(
                            [q[0] - touch, q[1] - touch],
                            [q[0] + touch, q[1] + touch],
                            |k| {
                                if !on_own && own.contains(&edge_seg[k]) {
                                    let [c, e] = edges[k];
                                    on_own = point_segment_distance(q, c, e).0 <= touch;
                                }
                            },
                        );
                        // Near a crossing of the two segments the gap is a
                        // corner that closes at the crossing point (handled
                        // by the angle rules), not a thin feature.
                        let reach = 2.0 * d;
                        grid.query(
                            [p[0] - reach, p[1] - reach],
                            [p[0] + reach, p[1] + reach],
                            |k| {
                                if !on_own && own.contains(&edge_seg[k]) {
                                    let [c, e] = edges[k];
                                    if let Some(x) = segments_touch(c, e, a, b) {
                                        on_own = (x[0] - p[0]).hypot(x[1] - p[1]) <= reach;
                                    }
                                }
                            },
                        );
                        if !on_own {
                            best = d;
                            break;
                        }
                    }
                    if best <= r || r >= radius {
                        break;
                    }
                    r = (2.0 * r).min(radius);
                }
                cap[i] = best / ELEMENTS_ACROSS_FEATURE;
            }
            caps.push(cap);
        }
        if let (None, Some(vc)) = (&known, &self.vertex_caps) {
            for (cap, extra) in caps.iter_mut().zip(vc) {
                for (c, e) in cap.iter_mut().zip(extra) {
                    *c = c.min(*e);
                }
            }
        }
        caps
    }
}
