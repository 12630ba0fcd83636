//! Geometry checks the model needs beyond the mesher's outline type:
//! polygon self-crossing, distance to an outline's edge, bounding boxes.

use fluxwright_mesher::{Outline, Point, Segment};

/// Where a polygon first crosses or touches itself, or folds back on itself.
/// Returns the point of trouble.
pub(crate) fn polygon_self_crossing(points: &[Point]) -> Option<Point> {
    let n = points.len();
    if n < 3 {
        return None;
    }
    let seg = |i: usize| (points[i], points[(i + 1) % n]);
    // Zero-length edges and spikes (an edge doubling back along the previous).
    for i in 0..n {
        let (a, b) = seg(i);
        if a == b {
            return Some(a);
        }
        let (_, c) = seg((i + 1) % n);
        if orient(a, b, c) == 0.0 && dot(sub(b, a), sub(c, b)) < 0.0 {
            return Some(b);
        }
    }
    // Sort edges by their least x, then test only pairs whose x ranges meet.
    let mut order: Vec<usize> = (0..n).collect();
    let xmin = |i: usize| seg(i).0[0].min(seg(i).1[0]);
    let xmax = |i: usize| seg(i).0[0].max(seg(i).1[0]);
    order.sort_by(|&i, &j| xmin(i).total_cmp(&xmin(j)));
    for (k, &i) in order.iter().enumerate() {
        let hi = xmax(i);
        for &j in &order[k + 1..] {
            if xmin(j) > hi {
                break;
            }
            let adjacent = (i + 1) % n == j || (j + 1) % n == i;
            if adjacent {
                continue;
            }
            let (a, b) = seg(i);
            let (c, d) = seg(j);
            if let Some(p) = segments_meet(a, b, c, d) {
                return Some(p);
            }
        }
    }
    None
}

fn sub(a: Point, b: Point) -> Point {
    [a[0] - b[0], a[1] - b[1]]
}

fn dot(a: Point, b: Point) -> f64 {
    a[0] * b[0] + a[1] * b[1]
}

fn orient(a: Point, b: Point, c: Point) -> f64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

fn on_segment(a: Point, b: Point, p: Point) -> bool {
    p[0] >= a[0].min(b[0])
        && p[0] <= a[0].max(b[0])
        && p[1] >= a[1].min(b[1])
        && p[1] <= a[1].max(b[1])
}

/// A point shared by closed segments ab and cd, if any.
fn segments_meet(a: Point, b: Point, c: Point, d: Point) -> Option<Point> {
    let (o1, o2, o3, o4) = (
        orient(a, b, c),
        orient(a, b, d),
        orient(c, d, a),
        orient(c, d, b),
    );
    if o1 * o2 < 0.0 && o3 * o4 < 0.0 {
        let t = o3 / (o3 - o4);
        return Some([a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]);
    }
    for (o, p, s, e) in [(o1, c, a, b), (o2, d, a, b), (o3, a, c, d), (o4, b, c, d)] {
        if o == 0.0 && on_segment(s, e, p) {
            return Some(p);
        }
    }
    None
}

/// Distance from `p` to the nearest point of a segment.
pub(crate) fn distance_to_segment(s: &Segment, p: Point) -> f64 {
    match *s {
        Segment::Line { from, to } => distance_to_line_piece(from, to, p),
        Segment::Arc {
            center,
            radius,
            start,
            sweep,
        } => {
            let d = sub(p, center);
            let r = d[0].hypot(d[1]);
            let angle = d[1].atan2(d[0]);
            if r > 0.0 && angle_on_arc(angle, start, sweep) {
                (r - radius).abs()
            } else {
                let (a, b) = (s.start_point(), s.end_point());
                dist(a, p).min(dist(b, p))
            }
        }
    }
}

fn dist(a: Point, b: Point) -> f64 {
    (a[0] - b[0]).hypot(a[1] - b[1])
}

/// Distance from `p` to the straight piece `a`-`b`.
pub(crate) fn distance_to_line_piece(a: Point, b: Point, p: Point) -> f64 {
    let ab = sub(b, a);
    let len2 = dot(ab, ab);
    if len2 == 0.0 {
        return dist(a, p);
    }
    let t = (dot(sub(p, a), ab) / len2).clamp(0.0, 1.0);
    dist([a[0] + t * ab[0], a[1] + t * ab[1]], p)
}

fn angle_on_arc(a: f64, start: f64, sweep: f64) -> bool {
    let tau = std::f64::consts::TAU;
    if sweep.abs() >= tau - 1e-12 {
        return true;
    }
    let (lo, len) = if sweep >= 0.0 {
        (start, sweep)
    } else {
        (start + sweep, -sweep)
    };
    (a - lo).rem_euclid(tau) <= len
}

/// Distance from `p` to the edge of `outline`.
pub(crate) fn distance_to_edge(outline: &Outline, p: Point) -> f64 {
    outline
        .loops
        .iter()
        .flat_map(|l| l.segments.iter())
        .map(|s| distance_to_segment(s, p))
        .fold(f64::INFINITY, f64::min)
}

/// Whether `p` is inside `outline` or within `tol` of its edge.
pub(crate) fn inside_or_on(outline: &Outline, p: Point, tol: f64) -> bool {
    outline.contains(p) || distance_to_edge(outline, p) <= tol
}

/// Points that stand for an outline in containment checks: the polyline
/// corners and the middle of each polyline edge.
pub(crate) fn sample_points(outline: &Outline) -> Vec<Point> {
    let mut out = Vec::new();
    for pl in outline.polylines(0.01) {
        let n = pl.len();
        for i in 0..n {
            let (a, b) = (pl[i], pl[(i + 1) % n]);
            out.push(a);
            out.push([0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])]);
        }
    }
    out
}

/// Bounding box of several outlines; `None` when there are none.
pub(crate) fn bounding_box<'a>(
    outlines: impl IntoIterator<Item = &'a Outline>,
) -> Option<(Point, Point)> {
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for o in outlines {
        let (a, b) = o.bounding_box();
        for k in 0..2 {
            lo[k] = lo[k].min(a[k]);
            hi[k] = hi[k].max(b[k]);
        }
    }
    (lo[0] <= hi[0] && lo[1] <= hi[1]).then_some((lo, hi))
}

/// Whether `a`-`b` lies along a straight segment of the outline's edge
/// (both ends within `tol` of the same line segment).
pub(crate) fn on_straight_edge(outline: &Outline, a: Point, b: Point, tol: f64) -> bool {
    outline
        .loops
        .iter()
        .flat_map(|l| l.segments.iter())
        .any(|s| match *s {
            Segment::Line { from, to } => {
                distance_to_line_piece(from, to, a) <= tol
                    && distance_to_line_piece(from, to, b) <= tol
            }
            Segment::Arc { .. } => false,
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bow_tie_crosses_itself_at_its_centre() {
        let bow_tie = [[0.0, 0.0], [2.0, 2.0], [2.0, 0.0], [0.0, 2.0]];
        let p = polygon_self_crossing(&bow_tie).expect("a bow tie crosses");
        // The diagonals of the 2×2 square meet at (1, 1).
        assert!((p[0] - 1.0).abs() < 1e-12 && (p[1] - 1.0).abs() < 1e-12);
    }

    #[test]
    fn convex_and_concave_polygons_are_simple() {
        let square = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        assert_eq!(polygon_self_crossing(&square), None);
        let l_shape = [
            [0.0, 0.0],
            [2.0, 0.0],
            [2.0, 1.0],
            [1.0, 1.0],
            [1.0, 2.0],
            [0.0, 2.0],
        ];
        assert_eq!(polygon_self_crossing(&l_shape), None);
    }

    #[test]
    fn touching_corner_and_spike_are_caught() {
        // Corner (1, 0) revisited: the outline touches itself there.
        let touching = [
            [0.0, 0.0],
            [1.0, 0.0],
            [2.0, 0.0],
            [2.0, 1.0],
            [1.0, 0.0],
            [0.0, 1.0],
        ];
        assert!(polygon_self_crossing(&touching).is_some());
        let spike = [[0.0, 0.0], [2.0, 0.0], [1.0, 0.0], [1.0, 1.0]];
        assert!(polygon_self_crossing(&spike).is_some());
    }

    #[test]
    fn distance_to_a_circle_edge() {
        let c = Outline::circle([0.0, 0.0], 2.0).expect("valid circle");
        // A point at radius 0.5 lies 1.5 from a circle of radius 2.
        assert!((distance_to_edge(&c, [0.5, 0.0]) - 1.5).abs() < 1e-12);
        assert!((distance_to_edge(&c, [0.0, 3.0]) - 1.0).abs() < 1e-12);
    }
}
