//! Matched (periodic) pairs of straight outer segments: both segments of a
//! pair carry the same nodes, mapped by the rigid motion (rotation or
//! translation) that carries one onto the other.
//!
//! The initial cut of the two segments is planned together (the union of
//! both segments' graph vertices, cut to the finer of the two sides' sizes),
//! and during refinement every split of a piece on one side is mirrored on
//! the other ([`crate::refine`]), so Ruppert's encroachment rule still holds
//! on both.

use crate::geometry::{Outline, Point, Segment};
use crate::mesh::{BoundaryEdge, Mesh, MeshError};
use crate::sizefield::{Pslg, SizeField};

/// Two straight segments of the outer outline that must carry identical
/// node distributions (for periodic and anti-periodic conditions).
///
/// Segment indices count the segments of all the outer outline's loops in
/// order, as in [`crate::BoundaryEdge::segment`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct MatchedPair {
    /// One segment.
    pub segment: u32,
    /// Its partner.
    pub partner: u32,
    /// Whether the start of `segment` maps onto the end of `partner` (and
    /// its end onto the partner's start).
    pub reversed: bool,
}

/// A rotation (possibly by zero: a translation) taking `from` to `to`.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Motion {
    from: Point,
    to: Point,
    cos: f64,
    sin: f64,
}

impl Motion {
    pub(crate) fn apply(&self, p: Point) -> Point {
        let r = [p[0] - self.from[0], p[1] - self.from[1]];
        [
            self.to[0] + self.cos * r[0] - self.sin * r[1],
            self.to[1] + self.sin * r[0] + self.cos * r[1],
        ]
    }

    pub(crate) fn inverse(&self) -> Motion {
        Motion {
            from: self.to,
            to: self.from,
            cos: self.cos,
            sin: -self.sin,
        }
    }
}

/// A validated pair: the two lines and the motion from the first onto the
/// second.
#[derive(Clone, Copy, Debug)]
pub(crate) struct MatchedLine {
    pub pair: MatchedPair,
    /// Start and end of `pair.segment`.
    pub a: [Point; 2],
    /// The images of `a` on the partner.
    pub b: [Point; 2],
    /// Carries `a` onto `b`.
    pub motion: Motion,
}

fn culprit(pair: &MatchedPair, reason: String) -> MeshError {
    MeshError::Matched {
        segment: pair.segment,
        partner: pair.partner,
        reason,
    }
}

fn dist(a: Point, b: Point) -> f64 {
    (a[0] - b[0]).hypot(a[1] - b[1])
}

/// Check the pairs against the outer outline and build their motions.
pub(crate) fn validate(
    outer: &Outline,
    pairs: &[MatchedPair],
) -> Result<Vec<MatchedLine>, MeshError> {
    let segments: Vec<&Segment> = outer.loops.iter().flat_map(|l| &l.segments).collect();
    let mut used = vec![false; segments.len()];
    let mut out = Vec::with_capacity(pairs.len());
    for pair in pairs {
        let line = |i: u32| -> Result<[Point; 2], MeshError> {
            match segments.get(i as usize) {
                Some(Segment::Line { from, to }) => Ok([*from, *to]),
                Some(_) => Err(culprit(pair, format!("segment {i} is not straight"))),
                None => Err(culprit(
                    pair,
                    format!(
                        "segment {i} does not exist (the outer outline has {})",
                        segments.len()
                    ),
                )),
            }
        };
        let a = line(pair.segment)?;
        let b = line(pair.partner)?;
        if pair.segment == pair.partner {
            return Err(culprit(pair, "a segment cannot be its own partner".into()));
        }
        for s in [pair.segment, pair.partner] {
            if std::mem::replace(&mut used[s as usize], true) {
                return Err(culprit(
                    pair,
                    format!("segment {s} is in more than one pair"),
                ));
            }
        }
        let (la, lb) = (dist(a[0], a[1]), dist(b[0], b[1]));
        if !((la - lb).abs() <= 1e-7 * la.max(lb)) {
            return Err(culprit(
                pair,
                format!("the segments differ in length ({la} against {lb})"),
            ));
        }
        let (b0, b1) = if pair.reversed {
            (b[1], b[0])
        } else {
            (b[0], b[1])
        };
        let theta =
            (b1[1] - b0[1]).atan2(b1[0] - b0[0]) - (a[1][1] - a[0][1]).atan2(a[1][0] - a[0][0]);
        let (sin, cos) = theta.sin_cos();
        out.push(MatchedLine {
            pair: *pair,
            a,
            b: [b0, b1],
            motion: Motion {
                from: a[0],
                to: b0,
                cos,
                sin,
            },
        });
    }
    Ok(out)
}

/// The initial cut of the matched segments.
pub(crate) struct Plan {
    /// For each graph edge on a matched segment, its interior points in
    /// order from its first to its second end.
    pub edge_points: Vec<Option<Vec<Point>>>,
    /// Lock bits of each graph vertex: bit `2k` for lying on the first
    /// segment of pair `k`, `2k + 1` for its partner. A constraint piece
    /// whose two ends share a bit lies on that side and is split only
    /// together with its image.
    pub vertex_lock: Vec<u64>,
    /// Lock bits of the interior points of each graph edge.
    pub edge_lock: Vec<u64>,
}

/// Bit of side `side` (0: segment, 1: partner) of pair `k`.
pub(crate) fn side_bit(k: usize, side: usize) -> u64 {
    1u64 << (2 * k + side)
}

/// Plan identical cuts on both segments of every pair.
pub(crate) fn plan(
    lines: &[MatchedLine],
    pslg: &Pslg,
    field: &SizeField,
    split_points: impl Fn(&SizeField, Point, Point, u32) -> Vec<Point>,
) -> Result<Plan, MeshError> {
    let mut plan = Plan {
        edge_points: vec![None; pslg.edges.len()],
        vertex_lock: vec![0; pslg.points.len()],
        edge_lock: vec![0; pslg.edges.len()],
    };
    if lines.len() > 32 {
        return Err(culprit(
            &lines[32].pair,
            "at most 32 matched pairs are supported".into(),
        ));
    }
    for (k, m) in lines.iter().enumerate() {
        let len = dist(m.a[0], m.a[1]);
        let tol = 1e-8 * len;
        let dir = [(m.a[1][0] - m.a[0][0]) / len, (m.a[1][1] - m.a[0][1]) / len];
        let back = m.motion.inverse();
        // Parameter along the first segment and distance from it.
        let param = |p: Point| {
            let r = [p[0] - m.a[0][0], p[1] - m.a[0][1]];
            (
                r[0] * dir[0] + r[1] * dir[1],
                (r[0] * dir[1] - r[1] * dir[0]).abs(),
            )
        };
        let at = |t: f64| {
            let s = t / len;
            [
                m.a[0][0] + s * (m.a[1][0] - m.a[0][0]),
                m.a[0][1] + s * (m.a[1][1] - m.a[0][1]),
            ]
        };
        let on = |p: Point| {
            let (t, off) = param(p);
            off <= tol && t >= -tol && t <= len + tol
        };
        // Graph edges on each side, with their ends' parameters.
        let mut side_edges: [Vec<(usize, f64, f64)>; 2] = [Vec::new(), Vec::new()];
        let mut params: Vec<(f64, u32)> = Vec::new();
        for (e, &[u, v]) in pslg.edges.iter().enumerate() {
            let (pu, pv) = (pslg.points[u as usize], pslg.points[v as usize]);
            for (side, edges) in side_edges.iter_mut().enumerate() {
                let (qu, qv) = if side == 0 {
                    (pu, pv)
                } else {
                    (back.apply(pu), back.apply(pv))
                };
                if on(qu) && on(qv) {
                    let (tu, tv) = (param(qu).0, param(qv).0);
                    edges.push((e, tu, tv));
                    params.push((tu, pslg.bg[u as usize]));
                    params.push((tv, pslg.bg[v as usize]));
                    plan.vertex_lock[u as usize] |= side_bit(k, side);
                    plan.vertex_lock[v as usize] |= side_bit(k, side);
                }
            }
        }
        for (side, edges) in side_edges.iter().enumerate() {
            let covered: f64 = edges.iter().map(|&(_, tu, tv)| (tv - tu).abs()).sum();
            if !((covered - len).abs() <= 1e-6 * len) {
                return Err(MeshError::Invariant(format!(
                    "matched segment {} is covered {covered} of {len} by graph edges",
                    if side == 0 {
                        m.pair.segment
                    } else {
                        m.pair.partner
                    }
                )));
            }
        }
        params.sort_by(|x, y| x.0.total_cmp(&y.0));
        params.dedup_by(|x, y| (x.0 - y.0).abs() <= tol);
        // Cut each gap to the finer of the two sides' local sizes.
        let mut all: Vec<f64> = params.iter().map(|p| p.0).collect();
        for w in params.windows(2) {
            let (t0, t1) = (w[0].0, w[1].0);
            let here = split_points(field, at(t0), at(t1), w[0].1);
            let there = split_points(
                field,
                m.motion.apply(at(t0)),
                m.motion.apply(at(t1)),
                w[0].1,
            );
            if here.len() >= there.len() {
                all.extend(here.into_iter().map(|p| param(p).0));
            } else {
                all.extend(there.into_iter().map(|p| param(back.apply(p)).0));
            }
        }
        all.sort_by(f64::total_cmp);
        all.dedup_by(|x, y| (*x - *y).abs() <= tol);
        for (side, edges) in side_edges.iter().enumerate() {
            for &(e, tu, tv) in edges {
                let (lo, hi) = (tu.min(tv), tu.max(tv));
                let mut inside: Vec<f64> = all
                    .iter()
                    .copied()
                    .filter(|&t| t > lo + tol && t < hi - tol)
                    .collect();
                if tu > tv {
                    inside.reverse();
                }
                let points = inside
                    .into_iter()
                    .map(|t| {
                        if side == 0 {
                            at(t)
                        } else {
                            // Along the partner's own ends (not through the
                            // motion) so the points stay collinear to
                            // rounding.
                            let s = t / len;
                            [
                                m.b[0][0] + s * (m.b[1][0] - m.b[0][0]),
                                m.b[0][1] + s * (m.b[1][1] - m.b[0][1]),
                            ]
                        }
                    })
                    .collect();
                plan.edge_points[e] = Some(points);
                plan.edge_lock[e] |= side_bit(k, side);
            }
        }
    }
    Ok(plan)
}

/// Check that the boundary edges of every pair map onto each other.
pub(crate) fn check(mesh: &Mesh, lines: &[MatchedLine]) -> Result<(), MeshError> {
    let nodes_on = |segment: u32| {
        let mut v: Vec<u32> = mesh
            .boundary
            .iter()
            .filter(|e: &&BoundaryEdge| e.segment == segment)
            .flat_map(|e| e.nodes)
            .collect();
        v.sort_unstable();
        v.dedup();
        v
    };
    for m in lines {
        let (a, b) = (nodes_on(m.pair.segment), nodes_on(m.pair.partner));
        let tol = 1e-7 * dist(m.a[0], m.a[1]);
        if a.len() != b.len() {
            return Err(culprit(
                &m.pair,
                format!(
                    "{} boundary nodes against {} on the partner",
                    a.len(),
                    b.len()
                ),
            ));
        }
        for &i in &a {
            let image = m.motion.apply(mesh.nodes[i as usize]);
            if !b
                .iter()
                .any(|&j| dist(mesh.nodes[j as usize], image) <= tol)
            {
                return Err(culprit(
                    &m.pair,
                    format!(
                        "node at {:?} has no image on the partner",
                        mesh.nodes[i as usize]
                    ),
                ));
            }
        }
    }
    Ok(())
}
