//! Validity checks of outlines: finite numbers, closed loops, positive area
//! and no loop crossing or touching itself or another loop.

use crate::geometry::{GeometryError, Outline, Segment};
use crate::spatial::{segments_touch, SegmentGrid};

/// Chord fraction for the crossing test: arcs are cut finely enough that a
/// crossing missed between chord and arc is below 1e-5 of the radius.
const TEST_CHORD_FRACTION: f64 = 1e-5;

pub(crate) fn validate_outline(outline: &Outline) -> Result<(), GeometryError> {
    if outline.loops.is_empty() || outline.loops.iter().any(|l| l.segments.is_empty()) {
        return Err(GeometryError::NoArea);
    }
    let (lo, hi) = outline.bounding_box();
    let scale = (hi[0] - lo[0])
        .abs()
        .max((hi[1] - lo[1]).abs())
        .max(lo[0].abs())
        .max(lo[1].abs());
    for l in &outline.loops {
        for s in &l.segments {
            match *s {
                Segment::Line { from, to } => {
                    if !(from.iter().chain(&to).all(|v| v.is_finite())) {
                        return Err(GeometryError::NotFinite);
                    }
                    if from == to {
                        return Err(GeometryError::SelfIntersection(from[0], from[1]));
                    }
                }
                Segment::Arc {
                    center,
                    radius,
                    start,
                    sweep,
                } => {
                    if ![center[0], center[1], radius, start, sweep]
                        .iter()
                        .all(|v| v.is_finite())
                    {
                        return Err(GeometryError::NotFinite);
                    }
                    if !(radius > 0.0) {
                        return Err(GeometryError::BadRadius(format!("arc radius {radius}")));
                    }
                    if sweep == 0.0 || sweep.abs() > std::f64::consts::TAU * (1.0 + 1e-12) {
                        return Err(GeometryError::BadRadius(format!(
                            "arc sweep {sweep} rad must be non-zero and at most 2π"
                        )));
                    }
                }
            }
        }
        // Each segment must end where the next starts.
        let n = l.segments.len();
        for i in 0..n {
            let e = l.segments[i].end_point();
            let s = l.segments[(i + 1) % n].start_point();
            if (e[0] - s[0]).hypot(e[1] - s[1]) > 1e-9 * scale.max(1e-300) {
                return Err(GeometryError::SelfIntersection(e[0], e[1]));
            }
        }
    }
    // Crossing test on finely cut polylines: any two edges may share a point
    // only when they are consecutive in one loop (their common corner).
    let polys = outline.polylines(TEST_CHORD_FRACTION);
    let mut edges = Vec::new();
    let mut owner = Vec::new();
    for (li, poly) in polys.iter().enumerate() {
        let n = poly.len();
        for i in 0..n {
            edges.push([poly[i], poly[(i + 1) % n]]);
            owner.push((li, i, n));
        }
    }
    let grid = SegmentGrid::new(&edges);
    let mut found = None;
    for (i, e) in edges.iter().enumerate() {
        let lo = [e[0][0].min(e[1][0]), e[0][1].min(e[1][1])];
        let hi = [e[0][0].max(e[1][0]), e[0][1].max(e[1][1])];
        grid.query(lo, hi, |j| {
            if j <= i || found.is_some() {
                return;
            }
            let (li, ki, n) = owner[i];
            let (lj, kj, _) = owner[j];
            let f = edges[j];
            let adjacent = li == lj && (kj == (ki + 1) % n || ki == (kj + 1) % n);
            if adjacent {
                // Consecutive edges share one corner; they must not fold back
                // onto each other.
                let (shared, a, b) = if kj == (ki + 1) % n {
                    (e[1], e[0], f[1])
                } else {
                    (e[0], e[1], f[0])
                };
                let u = [a[0] - shared[0], a[1] - shared[1]];
                let v = [b[0] - shared[0], b[1] - shared[1]];
                let cross = u[0] * v[1] - u[1] * v[0];
                let dot = u[0] * v[0] + u[1] * v[1];
                if n > 2 && cross == 0.0 && dot > 0.0 {
                    found = Some(shared);
                }
                return;
            }
            if let Some(p) = segments_touch(e[0], e[1], f[0], f[1]) {
                found = Some(p);
            }
        });
        if let Some(p) = found {
            return Err(GeometryError::SelfIntersection(p[0], p[1]));
        }
    }
    if !(outline.area() > 0.0) {
        return Err(GeometryError::NoArea);
    }
    Ok(())
}
