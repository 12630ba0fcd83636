//! The planar straight-line graph of all input polylines: vertices closer
//! than a tolerance merged, edges split where a vertex lies on them or where
//! two edges cross, duplicate edges merged. What is left has no two edges
//! crossing or overlapping, which the constrained triangulation needs.

use std::collections::HashMap;

use crate::domain::PolyLoop;
use crate::geometry::Point;
use crate::spatial::{orient, point_segment_distance, SegmentGrid};

pub(crate) struct Arrangement {
    pub points: Vec<Point>,
    pub edges: Vec<[u32; 2]>,
    /// The arrangement vertex of every loop point.
    pub loop_ids: Vec<Vec<u32>>,
}

struct VertexSet {
    points: Vec<Point>,
    cells: HashMap<(i64, i64), Vec<u32>>,
    tol: f64,
}

impl VertexSet {
    fn key(&self, p: Point) -> (i64, i64) {
        (
            (p[0] / (2.0 * self.tol)).floor() as i64,
            (p[1] / (2.0 * self.tol)).floor() as i64,
        )
    }

    /// The vertex within `tol` of `p`, or a new one.
    fn id(&mut self, p: Point) -> u32 {
        let (kx, ky) = self.key(p);
        for dx in -1..=1 {
            for dy in -1..=1 {
                if let Some(list) = self.cells.get(&(kx + dx, ky + dy)) {
                    for &i in list {
                        let q = self.points[i as usize];
                        if (p[0] - q[0]).hypot(p[1] - q[1]) <= self.tol {
                            return i;
                        }
                    }
                }
            }
        }
        let i = self.points.len() as u32;
        self.points.push(p);
        self.cells.entry((kx, ky)).or_default().push(i);
        i
    }
}

pub(crate) fn build(loops: &[PolyLoop], tol: f64) -> Arrangement {
    let mut vs = VertexSet {
        points: Vec::new(),
        cells: HashMap::new(),
        tol,
    };
    let loop_ids: Vec<Vec<u32>> = loops
        .iter()
        .map(|l| l.points.iter().map(|&p| vs.id(p)).collect())
        .collect();
    let mut edges: Vec<[u32; 2]> = Vec::new();
    for ids in &loop_ids {
        let n = ids.len();
        for i in 0..n {
            let (a, b) = (ids[i], ids[(i + 1) % n]);
            if a != b {
                edges.push([a, b]);
            }
        }
    }
    // Split until no vertex lies inside an edge and no two edges cross;
    // each round handles what the previous round's new vertices created.
    for _round in 0..6 {
        let segs: Vec<[Point; 2]> = edges
            .iter()
            .map(|e| [vs.points[e[0] as usize], vs.points[e[1] as usize]])
            .collect();
        let grid = SegmentGrid::new(&segs);
        let mut splits: Vec<Vec<u32>> = vec![Vec::new(); edges.len()];
        let mut changed = false;
        // Crossings.
        for (i, e) in edges.iter().enumerate() {
            let [p1, p2] = segs[i];
            let lo = [p1[0].min(p2[0]) - tol, p1[1].min(p2[1]) - tol];
            let hi = [p1[0].max(p2[0]) + tol, p1[1].max(p2[1]) + tol];
            let mut found: Vec<(usize, Point)> = Vec::new();
            grid.query(lo, hi, |j| {
                if j <= i {
                    return;
                }
                let f = edges[j];
                if f.contains(&e[0]) || f.contains(&e[1]) {
                    return;
                }
                let [q1, q2] = segs[j];
                let (o1, o2) = (orient(p1, p2, q1), orient(p1, p2, q2));
                let (o3, o4) = (orient(q1, q2, p1), orient(q1, q2, p2));
                if o1 * o2 < 0.0 && o3 * o4 < 0.0 {
                    let t = o1 / (o1 - o2);
                    let x = [q1[0] + t * (q2[0] - q1[0]), q1[1] + t * (q2[1] - q1[1])];
                    if !found.iter().any(|&(k, _)| k == j) {
                        found.push((j, x));
                    }
                }
            });
            for (j, x) in found {
                let v = vs.id(x);
                for k in [i, j] {
                    if !edges[k].contains(&v) && !splits[k].contains(&v) {
                        splits[k].push(v);
                        changed = true;
                    }
                }
            }
        }
        // Vertices on (or within the tolerance of) an edge's interior.
        let npts = vs.points.len();
        for v in 0..npts as u32 {
            let p = vs.points[v as usize];
            grid.query([p[0] - tol, p[1] - tol], [p[0] + tol, p[1] + tol], |j| {
                let e = edges[j];
                if e.contains(&v) || splits[j].contains(&v) {
                    return;
                }
                let (d, t) = point_segment_distance(p, segs[j][0], segs[j][1]);
                if d <= tol && t > 0.0 && t < 1.0 {
                    splits[j].push(v);
                    changed = true;
                }
            });
        }
        if !changed {
            break;
        }
        let mut next = Vec::with_capacity(edges.len() * 2);
        for (i, e) in edges.iter().enumerate() {
            let [a, b] = segs[i];
            let d = [b[0] - a[0], b[1] - a[1]];
            let mut along: Vec<(f64, u32)> = splits[i]
                .iter()
                .map(|&v| {
                    let p = vs.points[v as usize];
                    ((p[0] - a[0]) * d[0] + (p[1] - a[1]) * d[1], v)
                })
                .collect();
            along.sort_by(|x, y| x.0.total_cmp(&y.0));
            let mut prev = e[0];
            for (_, v) in along.into_iter().chain(std::iter::once((0.0, e[1]))) {
                if v != prev {
                    next.push([prev, v]);
                    prev = v;
                }
            }
        }
        edges = next;
    }
    // Merge duplicates (shared edges of touching shapes).
    let mut keyed: Vec<[u32; 2]> = edges
        .iter()
        .map(|&[a, b]| if a < b { [a, b] } else { [b, a] })
        .collect();
    keyed.sort_unstable();
    keyed.dedup();
    Arrangement {
        points: vs.points,
        edges: keyed,
        loop_ids,
    }
}
