//! A uniform bucket grid over line segments, for near-neighbour queries.

use crate::geometry::Point;

/// Segments bucketed by the grid cells their bounding boxes overlap.
pub(crate) struct SegmentGrid {
    lo: Point,
    cell: f64,
    nx: usize,
    ny: usize,
    starts: Vec<u32>,
    items: Vec<u32>,
}

impl SegmentGrid {
    /// Bucket `segments` on a grid of about `segments.len()` cells (at least
    /// one) spanning their bounding box.
    pub(crate) fn new(segments: &[[Point; 2]]) -> SegmentGrid {
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for s in segments {
            for p in s {
                for k in 0..2 {
                    lo[k] = lo[k].min(p[k]);
                    hi[k] = hi[k].max(p[k]);
                }
            }
        }
        if segments.is_empty() {
            lo = [0.0; 2];
            hi = [1.0; 2];
        }
        let w = (hi[0] - lo[0]).max(1e-300);
        let h = (hi[1] - lo[1]).max(1e-300);
        let target = (segments.len().max(1) as f64).clamp(1.0, 4.0e6);
        let cell = ((w * h) / target).sqrt().max(w.max(h) / 2048.0).max(1e-300);
        let nx = ((w / cell).ceil() as usize).clamp(1, 4096);
        let ny = ((h / cell).ceil() as usize).clamp(1, 4096);
        let cell = (w / nx as f64).max(h / ny as f64);
        let mut grid = SegmentGrid {
            lo,
            cell,
            nx,
            ny,
            starts: vec![0; nx * ny + 1],
            items: Vec::new(),
        };
        // Two passes: count, then fill (compressed rows).
        for pass in 0..2 {
            let mut fill = grid.starts.clone();
            for (i, s) in segments.iter().enumerate() {
                let (a, b) = grid.cell_range(
                    [s[0][0].min(s[1][0]), s[0][1].min(s[1][1])],
                    [s[0][0].max(s[1][0]), s[0][1].max(s[1][1])],
                );
                for y in a[1]..=b[1] {
                    for x in a[0]..=b[0] {
                        let c = y * nx + x;
                        if pass == 0 {
                            grid.starts[c + 1] += 1;
                        } else {
                            grid.items[fill[c] as usize] = i as u32;
                            fill[c] += 1;
                        }
                    }
                }
            }
            if pass == 0 {
                for c in 0..nx * ny {
                    grid.starts[c + 1] += grid.starts[c];
                }
                grid.items = vec![0; grid.starts[nx * ny] as usize];
            }
        }
        grid
    }

    fn cell_range(&self, lo: Point, hi: Point) -> ([usize; 2], [usize; 2]) {
        let f = |v: f64, k: usize, n: usize| -> usize {
            let c = ((v - self.lo[k]) / self.cell).floor();
            if c.is_nan() || c < 0.0 {
                0
            } else {
                (c as usize).min(n - 1)
            }
        };
        (
            [f(lo[0], 0, self.nx), f(lo[1], 1, self.ny)],
            [f(hi[0], 0, self.nx), f(hi[1], 1, self.ny)],
        )
    }

    /// The grid's cell size.
    pub(crate) fn cell_size(&self) -> f64 {
        self.cell
    }

    /// Call `f` with the index of every segment whose cells overlap the box
    /// (a segment may be reported more than once).
    pub(crate) fn query(&self, lo: Point, hi: Point, mut f: impl FnMut(usize)) {
        let (a, b) = self.cell_range(lo, hi);
        for y in a[1]..=b[1] {
            for x in a[0]..=b[0] {
                let c = y * self.nx + x;
                for &i in &self.items[self.starts[c] as usize..self.starts[c + 1] as usize] {
                    f(i as usize);
                }
            }
        }
    }
}

/// Exact orientation of `c` relative to the line `a -> b` (positive when
/// counter-clockwise).
pub(crate) fn orient(a: Point, b: Point, c: Point) -> f64 {
    robust::orient2d(
        robust::Coord { x: a[0], y: a[1] },
        robust::Coord { x: b[0], y: b[1] },
        robust::Coord { x: c[0], y: c[1] },
    )
}

/// Distance from `p` to the segment `a-b`, and the parameter of the nearest
/// point (0 at `a`, 1 at `b`).
pub(crate) fn point_segment_distance(p: Point, a: Point, b: Point) -> (f64, f64) {
    let d = [b[0] - a[0], b[1] - a[1]];
    let len2 = d[0] * d[0] + d[1] * d[1];
    let t = if len2 > 0.0 {
        (((p[0] - a[0]) * d[0] + (p[1] - a[1]) * d[1]) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let q = [a[0] + t * d[0], a[1] + t * d[1]];
    (((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)).sqrt(), t)
}

/// Whether the closed segments `p1-p2` and `q1-q2` share any point (exact),
/// and if so one such point (approximate).
pub(crate) fn segments_touch(p1: Point, p2: Point, q1: Point, q2: Point) -> Option<Point> {
    let o1 = orient(p1, p2, q1);
    let o2 = orient(p1, p2, q2);
    let o3 = orient(q1, q2, p1);
    let o4 = orient(q1, q2, p2);
    if o1 == 0.0 && o2 == 0.0 {
        // Collinear: overlap of the projections on the longer axis.
        let k = if (p2[0] - p1[0]).abs() >= (p2[1] - p1[1]).abs() {
            0
        } else {
            1
        };
        let (a0, a1) = (p1[k].min(p2[k]), p1[k].max(p2[k]));
        let (b0, b1) = (q1[k].min(q2[k]), q1[k].max(q2[k]));
        if a0 <= b1 && b0 <= a1 {
            for c in [q1, q2, p1, p2] {
                let v = c[k];
                if v >= a0 && v <= a1 && v >= b0 && v <= b1 {
                    return Some(c);
                }
            }
        }
        return None;
    }
    if (o1 > 0.0 && o2 > 0.0)
        || (o1 < 0.0 && o2 < 0.0)
        || (o3 > 0.0 && o4 > 0.0)
        || (o3 < 0.0 && o4 < 0.0)
    {
        return None;
    }
    let t = if (o1 - o2) != 0.0 {
        o1 / (o1 - o2)
    } else {
        0.0
    };
    Some([q1[0] + t * (q2[0] - q1[0]), q1[1] + t * (q2[1] - q1[1])])
}
