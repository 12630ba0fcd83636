//! Outlines: closed loops of lines and circular arcs.

/// A point `[x, y]`.
pub type Point = [f64; 2];

/// One piece of a loop.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Segment {
    /// A straight line.
    Line {
        /// Start point.
        from: Point,
        /// End point.
        to: Point,
    },
    /// A circular arc from angle `start` through `start + sweep` (radians;
    /// positive sweep is counter-clockwise).
    Arc {
        /// Centre of the circle.
        center: Point,
        /// Radius, > 0.
        radius: f64,
        /// Start angle from +x, radians.
        start: f64,
        /// Signed sweep, radians, |sweep| ≤ 2π.
        sweep: f64,
    },
}

impl Segment {
    /// The start point.
    pub fn start_point(&self) -> Point {
        match *self {
            Segment::Line { from, .. } => from,
            Segment::Arc {
                center,
                radius,
                start,
                ..
            } => polar(center, radius, start),
        }
    }

    /// The end point.
    pub fn end_point(&self) -> Point {
        match *self {
            Segment::Line { to, .. } => to,
            Segment::Arc {
                center,
                radius,
                start,
                sweep,
            } => polar(center, radius, start + sweep),
        }
    }

    /// Length of the segment.
    pub fn length(&self) -> f64 {
        match *self {
            Segment::Line { from, to } => (to[0] - from[0]).hypot(to[1] - from[1]),
            Segment::Arc { radius, sweep, .. } => radius * sweep.abs(),
        }
    }

    /// Contribution ½∮(x dy − y dx) of this segment to its loop's signed area.
    fn signed_area_term(&self) -> f64 {
        match *self {
            Segment::Line { from, to } => 0.5 * (from[0] * to[1] - to[0] * from[1]),
            Segment::Arc {
                center,
                radius,
                sweep,
                ..
            } => {
                let (p, q) = (self.start_point(), self.end_point());
                0.5 * (center[0] * (q[1] - p[1]) - center[1] * (q[0] - p[0])
                    + radius * radius * sweep)
            }
        }
    }

    fn transformed(&self, f: &impl Fn(Point) -> Point, rotation: f64) -> Segment {
        match *self {
            Segment::Line { from, to } => Segment::Line {
                from: f(from),
                to: f(to),
            },
            Segment::Arc {
                center,
                radius,
                start,
                sweep,
            } => Segment::Arc {
                center: f(center),
                radius,
                start: start + rotation,
                sweep,
            },
        }
    }
}

pub(crate) fn polar(center: Point, radius: f64, angle: f64) -> Point {
    // Degrees converted to radians miss quarter turns by one rounding, so
    // cos 90° comes out as 6e-17: make those zeros exact, so that a sector
    // bounded by the axis of an axisymmetric model puts its points on x = 0.
    let exact = |v: f64| if v.abs() < 1e-15 { 0.0 } else { v };
    let (s, c) = angle.sin_cos();
    [center[0] + radius * exact(c), center[1] + radius * exact(s)]
}

/// A closed loop: each segment ends where the next starts, the last ends at
/// the first's start.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Loop {
    /// The segments in order.
    pub segments: Vec<Segment>,
}

impl Loop {
    /// Signed area (positive when counter-clockwise).
    pub fn signed_area(&self) -> f64 {
        self.segments.iter().map(Segment::signed_area_term).sum()
    }
}

/// A region bounded by one or more closed loops, filled by the even-odd
/// rule: an annulus is two loops, and a loop inside a loop is a hole.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Outline {
    /// The boundary loops.
    pub loops: Vec<Loop>,
}

/// Why an outline is not a valid region.
#[derive(Debug, thiserror::Error, PartialEq)]
#[non_exhaustive]
pub enum GeometryError {
    /// A number is NaN or infinite.
    #[error("a coordinate or size is not a finite number")]
    NotFinite,
    /// A radius is zero or negative, or inner ≥ outer.
    #[error("radius must be positive (and inner radius below outer): {0}")]
    BadRadius(String),
    /// A polygon has fewer than three corners.
    #[error("a polygon needs at least 3 corners, found {0}")]
    TooFewPoints(usize),
    /// The region encloses no area.
    #[error("the outline encloses no area")]
    NoArea,
    /// Two edges of the outline cross or touch away from their shared corner.
    #[error("the outline crosses itself near ({0:.6}, {1:.6})")]
    SelfIntersection(f64, f64),
}

impl Outline {
    /// An axis-aligned rectangle.
    pub fn rectangle(min: Point, max: Point) -> Result<Outline, GeometryError> {
        check_finite(&[min[0], min[1], max[0], max[1]])?;
        if !(max[0] > min[0] && max[1] > min[1]) {
            return Err(GeometryError::NoArea);
        }
        Outline::polygon(&[min, [max[0], min[1]], max, [min[0], max[1]]])
    }

    /// A full circle (one arc segment).
    pub fn circle(center: Point, radius: f64) -> Result<Outline, GeometryError> {
        check_finite(&[center[0], center[1], radius])?;
        if !(radius > 0.0) {
            return Err(GeometryError::BadRadius(format!("radius {radius}")));
        }
        Ok(Outline {
            loops: vec![Loop {
                segments: vec![Segment::Arc {
                    center,
                    radius,
                    start: 0.0,
                    sweep: std::f64::consts::TAU,
                }],
            }],
        })
    }

    /// A polygon through `points`, closed implicitly; either orientation.
    pub fn polygon(points: &[Point]) -> Result<Outline, GeometryError> {
        check_finite(&points.iter().flatten().copied().collect::<Vec<_>>())?;
        if points.len() < 3 {
            return Err(GeometryError::TooFewPoints(points.len()));
        }
        let n = points.len();
        let segments = (0..n)
            .map(|i| Segment::Line {
                from: points[i],
                to: points[(i + 1) % n],
            })
            .collect();
        let outline = Outline {
            loops: vec![Loop { segments }],
        };
        outline.validate()?;
        Ok(outline)
    }

    /// An annular sector between two radii and two angles (degrees,
    /// counter-clockwise from `start_deg` to `end_deg`). A sweep of 360° gives
    /// a full annulus (two loops), or a disc when `inner_radius` is 0.
    pub fn sector(
        center: Point,
        inner_radius: f64,
        outer_radius: f64,
        start_deg: f64,
        end_deg: f64,
    ) -> Result<Outline, GeometryError> {
        check_finite(&[
            center[0],
            center[1],
            inner_radius,
            outer_radius,
            start_deg,
            end_deg,
        ])?;
        if !(inner_radius >= 0.0 && outer_radius > inner_radius) {
            return Err(GeometryError::BadRadius(format!(
                "inner radius {inner_radius}, outer radius {outer_radius}"
            )));
        }
        let sweep_deg = end_deg - start_deg;
        if !(sweep_deg > 0.0 && sweep_deg <= 360.0) {
            return Err(GeometryError::NoArea);
        }
        let (start, sweep) = (start_deg.to_radians(), sweep_deg.to_radians());
        if (sweep_deg - 360.0).abs() < 1e-12 {
            let mut loops = vec![Loop {
                segments: vec![Segment::Arc {
                    center,
                    radius: outer_radius,
                    start,
                    sweep,
                }],
            }];
            if inner_radius > 0.0 {
                loops.push(Loop {
                    segments: vec![Segment::Arc {
                        center,
                        radius: inner_radius,
                        start,
                        sweep: -sweep,
                    }],
                });
            }
            return Ok(Outline { loops });
        }
        let mut segments = Vec::with_capacity(4);
        let outer = Segment::Arc {
            center,
            radius: outer_radius,
            start,
            sweep,
        };
        if inner_radius > 0.0 {
            let inner = Segment::Arc {
                center,
                radius: inner_radius,
                start: start + sweep,
                sweep: -sweep,
            };
            segments.push(Segment::Line {
                from: inner.end_point(),
                to: outer.start_point(),
            });
            segments.push(outer);
            segments.push(Segment::Line {
                from: outer.end_point(),
                to: inner.start_point(),
            });
            segments.push(inner);
        } else {
            segments.push(Segment::Line {
                from: center,
                to: outer.start_point(),
            });
            segments.push(outer);
            segments.push(Segment::Line {
                from: outer.end_point(),
                to: center,
            });
        }
        Ok(Outline {
            loops: vec![Loop { segments }],
        })
    }

    /// This outline moved by `d`.
    pub fn translated(&self, d: Point) -> Outline {
        self.map(&|p| [p[0] + d[0], p[1] + d[1]], 0.0)
    }

    /// This outline rotated counter-clockwise by `angle_deg` about `about`.
    pub fn rotated(&self, angle_deg: f64, about: Point) -> Outline {
        let a = angle_deg.to_radians();
        let (s, c) = a.sin_cos();
        self.map(
            &|p| {
                let (x, y) = (p[0] - about[0], p[1] - about[1]);
                [about[0] + c * x - s * y, about[1] + s * x + c * y]
            },
            a,
        )
    }

    fn map(&self, f: &impl Fn(Point) -> Point, rotation: f64) -> Outline {
        Outline {
            loops: self
                .loops
                .iter()
                .map(|l| Loop {
                    segments: l
                        .segments
                        .iter()
                        .map(|s| s.transformed(f, rotation))
                        .collect(),
                })
                .collect(),
        }
    }

    /// The exact enclosed area (even-odd fill; arcs counted exactly).
    pub fn area(&self) -> f64 {
        // Loops of a valid outline are disjoint and nested, so with even-odd
        // fill the area is the alternating sum by nesting depth.
        let areas: Vec<f64> = self.loops.iter().map(|l| l.signed_area().abs()).collect();
        let mut total = 0.0;
        for (i, l) in self.loops.iter().enumerate() {
            let probe = l.segments[0].start_point();
            let depth = self
                .loops
                .iter()
                .enumerate()
                .filter(|&(j, other)| j != i && loop_contains(other, probe))
                .count();
            total += if depth % 2 == 0 { areas[i] } else { -areas[i] };
        }
        total
    }

    /// Whether `p` lies inside the region (even-odd over all loops). Points on
    /// the boundary may go either way.
    pub fn contains(&self, p: Point) -> bool {
        self.loops.iter().filter(|l| loop_contains(l, p)).count() % 2 == 1
    }

    /// Axis-aligned bounding box `(min, max)`, exact for arcs.
    pub fn bounding_box(&self) -> (Point, Point) {
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        let mut add = |p: Point| {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        };
        for s in self.loops.iter().flat_map(|l| &l.segments) {
            add(s.start_point());
            add(s.end_point());
            if let Segment::Arc {
                center,
                radius,
                start,
                sweep,
            } = *s
            {
                // The axis extremes of the circle that the arc passes through.
                for k in 0..4 {
                    let a = k as f64 * std::f64::consts::FRAC_PI_2;
                    if angle_in_arc(a, start, sweep) {
                        add(polar(center, radius, a));
                    }
                }
            }
        }
        (lo, hi)
    }

    /// Each loop as a closed polyline (last point not repeated), arcs split
    /// so that no chord strays more than `chord_fraction × radius` from its
    /// arc.
    pub fn polylines(&self, chord_fraction: f64) -> Vec<Vec<Point>> {
        self.loops
            .iter()
            .map(|l| {
                let mut pts = Vec::new();
                for s in &l.segments {
                    match *s {
                        Segment::Line { from, .. } => pts.push(from),
                        Segment::Arc {
                            center,
                            radius,
                            start,
                            sweep,
                        } => {
                            let n = arc_pieces(sweep, chord_fraction);
                            for k in 0..n {
                                pts.push(polar(
                                    center,
                                    radius,
                                    start + sweep * k as f64 / n as f64,
                                ));
                            }
                        }
                    }
                }
                pts
            })
            .collect()
    }

    /// Check the outline is a valid region: finite, at least one loop with
    /// area, and no loop crossing itself or another loop.
    pub fn validate(&self) -> Result<(), GeometryError> {
        crate::triangulate::validate_outline(self)
    }
}

/// Number of equal pieces an arc of `sweep` radians needs so that the
/// sagitta of each chord is at most `chord_fraction` of the radius.
pub(crate) fn arc_pieces(sweep: f64, chord_fraction: f64) -> usize {
    // sagitta = r (1 - cos(θ/2)) ≤ f r  →  θ ≤ 2 acos(1 - f)
    let f = chord_fraction.clamp(1e-9, 0.5);
    let max_piece = 2.0 * (1.0 - f).acos();
    ((sweep.abs() / max_piece).ceil() as usize).max(if sweep.abs() > 6.0 { 3 } else { 1 })
}

fn loop_contains(l: &Loop, p: Point) -> bool {
    // Ray cast to +x over the exact segments. Every piece is treated like a
    // line with the half-open rule on y (a piece counts when exactly one of
    // its ends is above p), so shared corners count once; arcs are cut into
    // pieces that are monotone in y for this.
    let mut inside = false;
    let crossing = |inside: &mut bool, a: Point, b: Point, x_at: &dyn Fn() -> f64| {
        if (a[1] > p[1]) != (b[1] > p[1]) && x_at() > p[0] {
            *inside = !*inside;
        }
    };
    for s in &l.segments {
        match *s {
            Segment::Line { from, to } => {
                crossing(&mut inside, from, to, &|| {
                    from[0] + (p[1] - from[1]) * (to[0] - from[0]) / (to[1] - from[1])
                });
            }
            Segment::Arc {
                center,
                radius,
                sweep,
                ..
            } if sweep.abs() >= std::f64::consts::TAU - 1e-12 => {
                // A full circle: its two end angles round to different y, so
                // count its two crossings directly.
                let dy = p[1] - center[1];
                if dy.abs() < radius {
                    let dx = (radius * radius - dy * dy).sqrt();
                    for x in [center[0] - dx, center[0] + dx] {
                        if x > p[0] {
                            inside = !inside;
                        }
                    }
                }
            }
            Segment::Arc {
                center,
                radius,
                start,
                sweep,
            } => {
                for (a0, a1) in y_monotone_pieces(start, sweep) {
                    let (pa, pb) = (polar(center, radius, a0), polar(center, radius, a1));
                    let right_half = (0.5 * (a0 + a1)).cos() >= 0.0;
                    crossing(&mut inside, pa, pb, &|| {
                        let dy = p[1] - center[1];
                        let dx = (radius * radius - dy * dy).max(0.0).sqrt();
                        if right_half {
                            center[0] + dx
                        } else {
                            center[0] - dx
                        }
                    });
                }
            }
        }
    }
    inside
}

/// The arc from `start` sweeping `sweep` cut at the angles where y is
/// extreme (π/2 + kπ), as `(from, to)` angle pairs in sweep order.
pub(crate) fn y_monotone_pieces(start: f64, sweep: f64) -> Vec<(f64, f64)> {
    use std::f64::consts::{FRAC_PI_2, PI};
    let end = start + sweep;
    let (lo, hi) = if sweep >= 0.0 {
        (start, end)
    } else {
        (end, start)
    };
    let mut cuts = vec![lo];
    let mut k = ((lo - FRAC_PI_2) / PI).floor() + 1.0;
    loop {
        let a = FRAC_PI_2 + k * PI;
        if a >= hi {
            break;
        }
        if a > lo {
            cuts.push(a);
        }
        k += 1.0;
    }
    cuts.push(hi);
    let mut pieces: Vec<(f64, f64)> = cuts.windows(2).map(|w| (w[0], w[1])).collect();
    if sweep < 0.0 {
        pieces.reverse();
        for piece in &mut pieces {
            *piece = (piece.1, piece.0);
        }
    }
    pieces
}

/// Whether angle `a` lies on the arc from `start` sweeping `sweep` (half-open
/// at the end so that joined arcs count a shared point once).
pub(crate) fn angle_in_arc(a: f64, start: f64, sweep: f64) -> bool {
    let tau = std::f64::consts::TAU;
    if sweep.abs() >= tau - 1e-15 {
        return true;
    }
    let (lo, len) = if sweep >= 0.0 {
        (start, sweep)
    } else {
        (start + sweep, -sweep)
    };
    let rel = (a - lo).rem_euclid(tau);
    rel < len
}

fn check_finite(values: &[f64]) -> Result<(), GeometryError> {
    if values.iter().all(|v| v.is_finite()) {
        Ok(())
    } else {
        Err(GeometryError::NotFinite)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    // Exact areas below are the textbook formulas: circle πr², annulus
    // π(R² − r²), annular sector ½θ(R² − r²), rectangle w·h (invariant
    // under rotation).

    #[test]
    fn circle_area_is_pi_r_squared() {
        let c = Outline::circle([3.0, -2.0], 2.5).unwrap();
        assert!((c.area() - PI * 6.25).abs() < 1e-12);
    }

    #[test]
    fn annulus_and_sector_areas() {
        let ring = Outline::sector([1.0, 1.0], 2.0, 3.0, 0.0, 360.0).unwrap();
        assert!((ring.area() - PI * (9.0 - 4.0)).abs() < 1e-12);
        let s = Outline::sector([0.0, 0.0], 1.0, 4.0, 30.0, 120.0).unwrap();
        assert!((s.area() - 0.5 * (PI / 2.0) * (16.0 - 1.0)).abs() < 1e-12);
        let pie = Outline::sector([0.0, 0.0], 0.0, 2.0, -45.0, 200.0).unwrap();
        assert!((pie.area() - 0.5 * 245f64.to_radians() * 4.0).abs() < 1e-12);
        // A sector rotated and moved keeps its area.
        let moved = s.rotated(33.0, [5.0, 1.0]).translated([-7.0, 2.0]);
        assert!((moved.area() - s.area()).abs() < 1e-12);
    }

    #[test]
    fn rotated_rectangle_area_and_containment() {
        let r = Outline::rectangle([0.0, 0.0], [4.0, 1.0])
            .unwrap()
            .rotated(30.0, [0.0, 0.0]);
        assert!((r.area() - 4.0).abs() < 1e-12);
        let (s, c) = 30f64.to_radians().sin_cos();
        // The rectangle's centre (2, 0.5) rotated by 30°.
        assert!(r.contains([2.0 * c - 0.5 * s, 2.0 * s + 0.5 * c]));
        assert!(!r.contains([2.0, 0.0 - 0.6]));
    }

    #[test]
    fn arc_containment_near_the_extremes() {
        let c = Outline::circle([0.0, 0.0], 1.0).unwrap();
        assert!(c.contains([0.0, 0.999]));
        assert!(c.contains([0.0, -0.999]));
        assert!(c.contains([0.999, 0.0]));
        assert!(!c.contains([0.0, 1.001]));
        assert!(!c.contains([-1.001, 0.0]));
        // Half disc above the x axis, the ray passing through the corners.
        let half = Outline::sector([0.0, 0.0], 0.0, 1.0, 0.0, 180.0).unwrap();
        assert!(half.contains([0.2, 0.5]));
        assert!(!half.contains([0.2, -0.5]));
        let ring = Outline::sector([0.0, 0.0], 1.0, 2.0, 0.0, 360.0).unwrap();
        assert!(!ring.contains([0.0, 0.0]));
        assert!(ring.contains([0.0, 1.5]));
        assert!(ring.contains([-1.5, 0.0]));
    }

    #[test]
    fn bounding_box_of_arcs_is_exact() {
        let s = Outline::sector([0.0, 0.0], 0.0, 2.0, 10.0, 100.0).unwrap();
        let (lo, hi) = s.bounding_box();
        assert!((hi[1] - 2.0).abs() < 1e-15, "top of the arc at 90°");
        assert!((hi[0] - 2.0 * 10f64.to_radians().cos()).abs() < 1e-15);
        assert!((lo[0] - 2.0 * 100f64.to_radians().cos()).abs() < 1e-15);
        assert_eq!(lo[1], 0.0);
    }

    #[test]
    fn validation_finds_crossings_and_gaps() {
        // A bow tie crosses itself at (1, 1).
        match Outline::polygon(&[[0.0, 0.0], [2.0, 2.0], [2.0, 0.0], [0.0, 2.0]]) {
            Err(GeometryError::SelfIntersection(x, y)) => {
                assert!((x - 1.0).abs() < 1e-9 && (y - 1.0).abs() < 1e-9);
            }
            other => panic!("expected a self-intersection, got {other:?}"),
        }
        // Two overlapping circles as loops of one outline.
        let mut two = Outline::circle([0.0, 0.0], 1.0).unwrap();
        two.loops
            .extend(Outline::circle([1.5, 0.0], 1.0).unwrap().loops);
        assert!(matches!(
            two.validate(),
            Err(GeometryError::SelfIntersection(..))
        ));
        // Nested circles are a valid annulus.
        let mut ring = Outline::circle([0.0, 0.0], 2.0).unwrap();
        ring.loops
            .extend(Outline::circle([0.1, 0.0], 1.0).unwrap().loops);
        assert!(ring.validate().is_ok());
        assert!((ring.area() - PI * 3.0).abs() < 1e-12);
        // An open loop is refused.
        let open = Outline {
            loops: vec![Loop {
                segments: vec![
                    Segment::Line {
                        from: [0.0, 0.0],
                        to: [1.0, 0.0],
                    },
                    Segment::Line {
                        from: [1.0, 0.0],
                        to: [1.0, 1.0],
                    },
                    Segment::Line {
                        from: [1.0, 1.0],
                        to: [0.1, 0.0],
                    },
                ],
            }],
        };
        assert!(open.validate().is_err());
        // A polygon touching itself at a vertex is refused.
        let touch = Outline::polygon(&[
            [0.0, 0.0],
            [2.0, 0.0],
            [1.0, 1.0],
            [2.0, 2.0],
            [0.0, 2.0],
            [1.0, 1.0],
        ]);
        assert!(touch.is_err());
        assert!(matches!(
            Outline::polygon(&[[0.0, 0.0], [f64::NAN, 0.0], [1.0, 1.0]]),
            Err(GeometryError::NotFinite)
        ));
    }
}
