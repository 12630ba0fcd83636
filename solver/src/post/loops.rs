//! Ampère's-law checks: ∮H·dl around a closed loop against the source
//! current the loop encloses.
//!
//! # The line integral, element by element
//!
//! The loop is a closed polygon (arcs of an outline become chords whose
//! sagitta is at most [`LOOP_CHORD_FRACTION`] of the radius). Each polygon
//! side is cut where it crosses triangle edges: the side is clipped against
//! every nearby triangle (barycentric coordinates are linear along it), the
//! clip ends become break points, and each piece between two break points
//! lies in one triangle, where the field is a single polynomial. H·t is
//! integrated over each piece with [`GAUSS_POINTS`]-point Gauss-Legendre
//! quadrature (exact to polynomial degree 7): exact for every linear
//! material (B and H = νB are of degree order − 1 along the piece) and
//! accurate where ν varies along the piece (a B-H curve). Where a piece runs
//! along an edge shared by two triangles, the two sides' values are
//! averaged (the finite-element tangential H jumps there slightly).
//! Axisymmetric B has a term A_φ/r, which is not a polynomial: Gauss
//! quadrature is then accurate rather than exact.
//!
//! # The enclosed current, from the sources
//!
//! The enclosed current is not taken from the field: it is the sum over
//! triangles of the region's current density times the area of the
//! triangle's part inside the loop, found exactly by clipping the loop
//! polygon with the triangle (Sutherland-Hodgman with the convex triangle
//! as the clip window, valid for any simple subject polygon; the output may
//! contain zero-width bridges, which add no area). A position-dependent
//! extra source ([`crate::problem::Problem::source`]) is integrated over the
//! clipped part with a degree-6 rule on a fan of triangles.
//!
//! Both sides of the check use the same polygon, so the check is exact
//! whatever the chord error; the polygon's area differs from that of a true
//! arc by about 1.3 × [`LOOP_CHORD_FRACTION`] relative.
//!
//! # Orientation
//!
//! Loops are traversed with their inside on the left (outer loops
//! counter-clockwise, holes clockwise, whichever way they were written), so
//! planar current along +z counts positive. In axisymmetry the (r, z) view
//! has +φ pointing into the page (r̂ × ẑ = −φ̂), so loops are traversed
//! the other way (inside on the right) and current along +φ counts
//! positive: both reported numbers then agree in sign with the current.

use crate::fe::{quadrature, Symmetry};
use crate::field::Solution;
use fluxwright_mesher::{Outline, Point};

/// Largest sagitta of the chords that replace arcs, as a fraction of the
/// radius.
pub const LOOP_CHORD_FRACTION: f64 = 1e-5;

/// Gauss-Legendre points per piece of the loop inside one triangle.
pub const GAUSS_POINTS: usize = 4;

/// Gauss-Legendre nodes on [−1, 1] and weights, 4 points (Abramowitz &
/// Stegun, Handbook of Mathematical Functions, table 25.4; written from
/// memory as the closed forms √((3 ∓ 2√(6/5))/7), (18 ± √30)/36, and
/// checked by the exactness test below).
fn gauss_legendre_4() -> ([f64; 4], [f64; 4]) {
    let a = ((3.0 - 2.0 * (6.0f64 / 5.0).sqrt()) / 7.0).sqrt();
    let b = ((3.0 + 2.0 * (6.0f64 / 5.0).sqrt()) / 7.0).sqrt();
    let wa = (18.0 + 30f64.sqrt()) / 36.0;
    let wb = (18.0 - 30f64.sqrt()) / 36.0;
    ([-b, -a, a, b], [wb, wa, wa, wb])
}

/// Slack on barycentric coordinates when clipping a side against a
/// triangle, so that sides running along an edge or through a vertex are
/// found in every triangle touching them despite rounding.
const BARY_SLACK: f64 = 1e-10;

/// Break points closer than this (as a fraction of the piece) are merged.
const MERGE: f64 = 1e-12;

/// An Ampère's-law check (the `loops.NAME` keys of model-format.md).
#[derive(Clone, Debug, PartialEq)]
pub struct LoopResult {
    /// ∮H·dl, A.
    pub h_line_integral_a: f64,
    /// The source current enclosed, A.
    pub enclosed_current_a: f64,
    /// |∮H·dl − I| / |I|; when the enclosed current is zero (|I| below
    /// 1e-9 × [`LoopResult::abs_h_line_integral_a`]) the mismatch is taken
    /// relative to ∮|H·t| dl instead (the size of the terms that should
    /// cancel), and it is 0 when that is zero too.
    pub relative_mismatch: f64,
    /// ∮|H·t| dl, A: the scale of the line integral.
    pub abs_h_line_integral_a: f64,
    /// Length of the loop, m.
    pub length_m: f64,
    /// Number of pieces (one triangle each) the loop was cut into.
    pub pieces: usize,
}

/// Why a loop cannot be checked.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum LoopError {
    /// A part of the loop lies outside the mesh.
    #[error("the loop leaves the mesh near ({}, {}) (model units)", .point[0], .point[1])]
    OutsideMesh {
        /// A point of the loop outside the mesh, model units.
        point: Point,
    },
    /// A loop polygon has fewer than three points or no area.
    #[error(
        "a loop needs at least three points enclosing some area (got {points} points, area {area})"
    )]
    Degenerate {
        /// Number of points.
        points: usize,
        /// Its area, model units².
        area: f64,
    },
}

/// Check Ampère's law around the region of `outline` (model units): the sum
/// over its loops, each oriented as described in the module documentation
/// (even-odd fill: a loop inside another is a hole).
pub fn ampere_loop(solution: &Solution, outline: &Outline) -> Result<LoopResult, LoopError> {
    let polygons = outline.polylines(LOOP_CHORD_FRACTION);
    let mut total = Sums::default();
    for (i, p) in polygons.iter().enumerate() {
        let Some(probe) = p.first().copied() else {
            continue;
        };
        let depth = polygons
            .iter()
            .enumerate()
            .filter(|&(j, q)| j != i && polygon_contains(q, probe))
            .count();
        let mut oriented = p.clone();
        let ccw = signed_area(&oriented) > 0.0;
        if ccw != (depth % 2 == 0) {
            oriented.reverse();
        }
        total.add(&loop_sums(solution, &oriented)?);
    }
    Ok(total.result())
}

/// Check Ampère's law around one closed polygon (model units, last point
/// not repeated), traversed with its inside on the left whichever way it
/// is given (see the module documentation for axisymmetry).
pub fn ampere_polygon(solution: &Solution, polygon: &[Point]) -> Result<LoopResult, LoopError> {
    let mut oriented = polygon.to_vec();
    if signed_area(&oriented) < 0.0 {
        oriented.reverse();
    }
    Ok(loop_sums(solution, &oriented)?.result())
}

#[derive(Clone, Copy, Debug, Default)]
struct Sums {
    line: f64,
    abs_line: f64,
    current: f64,
    length: f64,
    pieces: usize,
}

impl Sums {
    fn add(&mut self, o: &Sums) {
        self.line += o.line;
        self.abs_line += o.abs_line;
        self.current += o.current;
        self.length += o.length;
        self.pieces += o.pieces;
    }

    fn result(&self) -> LoopResult {
        let diff = (self.line - self.current).abs();
        let relative_mismatch = if self.current.abs() > 1e-9 * self.abs_line {
            diff / self.current.abs()
        } else if self.abs_line > 0.0 {
            diff / self.abs_line
        } else {
            0.0
        };
        LoopResult {
            h_line_integral_a: self.line,
            enclosed_current_a: self.current,
            relative_mismatch,
            abs_h_line_integral_a: self.abs_line,
            length_m: self.length,
            pieces: self.pieces,
        }
    }
}

/// Line integral and enclosed current of one polygon (model units) in the
/// orientation given, with the axisymmetric sense applied.
fn loop_sums(solution: &Solution, polygon: &[Point]) -> Result<Sums, LoopError> {
    let problem = solution.assembler().problem();
    let scale = problem.length_scale_m;
    let area = signed_area(polygon);
    if polygon.len() < 3 || !(area.abs() > 0.0) {
        return Err(LoopError::Degenerate {
            points: polygon.len(),
            area,
        });
    }
    let metres: Vec<Point> = polygon
        .iter()
        .map(|p| [p[0] * scale, p[1] * scale])
        .collect();
    let mut sums = line_integral(solution, &metres)?;
    sums.current = enclosed_current(solution, &metres);
    if matches!(problem.symmetry, Symmetry::Axisymmetric) {
        // Inside on the right in the (r, z) view: the right-hand sense
        // about +φ, in which the enclosed ∫J_φ dA counts positive.
        sums.line = -sums.line;
    }
    Ok(sums)
}

/// ∮H·dl, ∮|H·t| dl, length and pieces along the closed polygon `p`
/// (metres), in its own orientation.
fn line_integral(solution: &Solution, p: &[Point]) -> Result<Sums, LoopError> {
    let scale = solution.assembler().problem().length_scale_m;
    let perimeter: f64 = (0..p.len()).map(|i| dist(p[i], p[(i + 1) % p.len()])).sum();
    // Pieces of about one locator bucket keep the candidate lists short.
    let chunk = solution.bucket_size().max(1e-6 * perimeter);
    let (xi, wi) = gauss_legendre_4();
    let mut sums = Sums {
        length: perimeter,
        ..Sums::default()
    };
    let mut hits: Vec<(usize, f64, f64)> = Vec::new();
    let mut breaks: Vec<f64> = Vec::new();
    for i in 0..p.len() {
        let (start, end) = (p[i], p[(i + 1) % p.len()]);
        let len = dist(start, end);
        if len == 0.0 {
            continue;
        }
        let n_chunks = (len / chunk).ceil().max(1.0) as usize;
        for c in 0..n_chunks {
            let lerp = |s: f64| {
                [
                    start[0] + s * (end[0] - start[0]),
                    start[1] + s * (end[1] - start[1]),
                ]
            };
            let a = lerp(c as f64 / n_chunks as f64);
            let b = lerp((c + 1) as f64 / n_chunks as f64);
            let d = [b[0] - a[0], b[1] - a[1]];
            let lo = [a[0].min(b[0]), a[1].min(b[1])];
            let hi = [a[0].max(b[0]), a[1].max(b[1])];
            hits.clear();
            for t in solution.triangles_near(lo, hi) {
                if let Some((s0, s1)) = clip_to_triangle(solution, t, a, b) {
                    hits.push((t, s0, s1));
                }
            }
            breaks.clear();
            breaks.extend([0.0, 1.0]);
            breaks.extend(hits.iter().flat_map(|&(_, s0, s1)| [s0, s1]));
            breaks.sort_by(f64::total_cmp);
            breaks.dedup_by(|x, y| (*x - *y).abs() <= MERGE);
            for w in breaks.windows(2) {
                let (u, v) = (w[0], w[1]);
                if v - u <= MERGE {
                    continue;
                }
                let mid = 0.5 * (u + v);
                let covering: Vec<usize> = hits
                    .iter()
                    .filter(|&&(_, s0, s1)| s0 <= mid && mid <= s1)
                    .map(|&(t, _, _)| t)
                    .collect();
                if covering.is_empty() {
                    let m = [a[0] + mid * d[0], a[1] + mid * d[1]];
                    return Err(LoopError::OutsideMesh {
                        point: [m[0] / scale, m[1] / scale],
                    });
                }
                let share = 1.0 / covering.len() as f64;
                for &t in &covering {
                    let tri = solution.assembler().triangle(t);
                    for (x, w) in xi.iter().zip(&wi) {
                        let s = u + 0.5 * (x + 1.0) * (v - u);
                        let l = tri.barycentric([a[0] + s * d[0], a[1] + s * d[1]]);
                        let h = solution.field_in(t, l).h;
                        let ht = (h[0] * d[0] + h[1] * d[1]) * 0.5 * w * (v - u) * share;
                        sums.line += ht;
                        sums.abs_line += ht.abs();
                    }
                }
                sums.pieces += 1;
            }
        }
    }
    Ok(sums)
}

/// The parameter interval [s0, s1] ⊂ [0, 1] of the segment a→b (metres)
/// inside triangle `t`, if it has positive length.
fn clip_to_triangle(solution: &Solution, t: usize, a: Point, b: Point) -> Option<(f64, f64)> {
    let tri = solution.assembler().triangle(t);
    let la = tri.barycentric(a);
    let lb = tri.barycentric(b);
    let (mut s0, mut s1) = (0.0f64, 1.0f64);
    for k in 0..3 {
        // λ_k(s) = la + s (lb − la) ≥ −slack
        let (alpha, beta) = (la[k] + BARY_SLACK, lb[k] - la[k]);
        if beta.abs() < 1e-300 {
            if alpha < 0.0 {
                return None;
            }
        } else if beta > 0.0 {
            s0 = s0.max(-alpha / beta);
        } else {
            s1 = s1.min(-alpha / beta);
        }
    }
    (s1 - s0 > MERGE).then_some((s0, s1))
}

/// Source current through the inside of the closed polygon `p` (metres),
/// signed by its orientation (positive when counter-clockwise).
fn enclosed_current(solution: &Solution, p: &[Point]) -> f64 {
    let asm = solution.assembler();
    let problem = asm.problem();
    let scale = problem.length_scale_m;
    let (plo, phi) = bounding_box(p);
    let source = problem.source.as_deref();
    let rule = quadrature::dunavant(6);
    let mut total = 0.0;
    let mut clipped = Vec::new();
    let mut scratch = Vec::new();
    for t in 0..problem.mesh.triangles.len() {
        let j = asm.region_props(t).current_density_a_per_m2;
        if j == 0.0 && source.is_none() {
            continue;
        }
        let tri = asm.triangle(t);
        let (tlo, thi) = bounding_box(&tri.vertices);
        if tlo[0] > phi[0] || tlo[1] > phi[1] || thi[0] < plo[0] || thi[1] < plo[1] {
            continue;
        }
        clip_polygon_by_triangle(p, &tri.vertices, &mut clipped, &mut scratch);
        if clipped.len() < 3 {
            continue;
        }
        total += j * signed_area(&clipped);
        if let Some(f) = source {
            // Signed fan triangles from the first vertex: exact bookkeeping
            // of the (possibly non-convex) clipped part.
            let o = clipped[0];
            for k in 1..clipped.len() - 1 {
                let (q, r) = (clipped[k], clipped[k + 1]);
                let fan_area =
                    0.5 * ((q[0] - o[0]) * (r[1] - o[1]) - (q[1] - o[1]) * (r[0] - o[0]));
                let integral: f64 = rule
                    .points
                    .iter()
                    .zip(&rule.weights)
                    .map(|(l, w)| {
                        let x = l[0] * o[0] + l[1] * q[0] + l[2] * r[0];
                        let y = l[0] * o[1] + l[1] * q[1] + l[2] * r[1];
                        w * f([x / scale, y / scale])
                    })
                    .sum();
                total += fan_area * integral;
            }
        }
    }
    total
}

/// Sutherland-Hodgman: the part of polygon `subject` inside the
/// counter-clockwise triangle `window`, into `out` (its orientation is the
/// subject's).
fn clip_polygon_by_triangle(
    subject: &[Point],
    window: &[Point; 3],
    out: &mut Vec<Point>,
    scratch: &mut Vec<Point>,
) {
    out.clear();
    out.extend_from_slice(subject);
    for k in 0..3 {
        let (e0, e1) = (window[k], window[(k + 1) % 3]);
        // > 0 on the inner (left) side of the edge e0→e1.
        let side = |q: Point| (e1[0] - e0[0]) * (q[1] - e0[1]) - (e1[1] - e0[1]) * (q[0] - e0[0]);
        std::mem::swap(out, scratch);
        out.clear();
        let n = scratch.len();
        for i in 0..n {
            let cur = scratch[i];
            let prev = scratch[(i + n - 1) % n];
            let (sc, sp) = (side(cur), side(prev));
            if sc >= 0.0 {
                if sp < 0.0 {
                    out.push(intersect(prev, cur, sp, sc));
                }
                out.push(cur);
            } else if sp >= 0.0 {
                out.push(intersect(prev, cur, sp, sc));
            }
        }
        if out.is_empty() {
            return;
        }
    }
}

/// The point where the segment p→q crosses the line on which the side
/// function is zero, given its values `sp`, `sq` of opposite signs.
fn intersect(p: Point, q: Point, sp: f64, sq: f64) -> Point {
    let s = sp / (sp - sq);
    [p[0] + s * (q[0] - p[0]), p[1] + s * (q[1] - p[1])]
}

fn signed_area(p: &[Point]) -> f64 {
    let n = p.len();
    0.5 * (0..n)
        .map(|i| {
            let (a, b) = (p[i], p[(i + 1) % n]);
            a[0] * b[1] - b[0] * a[1]
        })
        .sum::<f64>()
}

fn bounding_box(p: &[Point]) -> (Point, Point) {
    p.iter().fold(
        ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]),
        |(lo, hi), q| {
            (
                [lo[0].min(q[0]), lo[1].min(q[1])],
                [hi[0].max(q[0]), hi[1].max(q[1])],
            )
        },
    )
}

fn dist(a: Point, b: Point) -> f64 {
    (b[0] - a[0]).hypot(b[1] - a[1])
}

/// Even-odd ray cast.
fn polygon_contains(p: &[Point], q: Point) -> bool {
    let n = p.len();
    let mut inside = false;
    for i in 0..n {
        let (a, b) = (p[i], p[(i + 1) % n]);
        if (a[1] > q[1]) != (b[1] > q[1]) {
            let x = a[0] + (q[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0]);
            if x > q[0] {
                inside = !inside;
            }
        }
    }
    inside
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss_legendre_4_is_exact_to_degree_7() {
        // ∫_{-1}^{1} x^k dx = 2/(k+1) for even k, 0 for odd k.
        let (x, w) = gauss_legendre_4();
        for k in 0..=7 {
            let got: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(k)).sum();
            let want = if k % 2 == 0 {
                2.0 / (k as f64 + 1.0)
            } else {
                0.0
            };
            assert!((got - want).abs() < 1e-14, "degree {k}: {got} vs {want}");
        }
    }

    #[test]
    fn clipping_finds_exact_overlap_areas() {
        // Unit right triangle (area 1/2) against squares: the overlaps are
        // elementary areas (plane geometry).
        let tri = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]];
        let (mut out, mut scratch) = (Vec::new(), Vec::new());
        let square =
            |x0: f64, y0: f64, s: f64| vec![[x0, y0], [x0 + s, y0], [x0 + s, y0 + s], [x0, y0 + s]];
        // Square covering the triangle: the whole triangle.
        clip_polygon_by_triangle(&square(-1.0, -1.0, 3.0), &tri, &mut out, &mut scratch);
        assert!((signed_area(&out) - 0.5).abs() < 1e-15);
        // [0, ½]²: inside the triangle entirely (x + y ≤ 1).
        clip_polygon_by_triangle(&square(0.0, 0.0, 0.5), &tri, &mut out, &mut scratch);
        assert!((signed_area(&out) - 0.25).abs() < 1e-15);
        // [½, 1]²: only the corner point (½, ½) touches: no area.
        clip_polygon_by_triangle(&square(0.5, 0.5, 0.5), &tri, &mut out, &mut scratch);
        assert!(signed_area(&out).abs() < 1e-15);
        // [0, 1] × [0, ½]: triangle minus the top corner triangle of area ⅛.
        let strip = vec![[0.0, 0.0], [1.0, 0.0], [1.0, 0.5], [0.0, 0.5]];
        clip_polygon_by_triangle(&strip, &tri, &mut out, &mut scratch);
        assert!((signed_area(&out) - 0.375).abs() < 1e-15);
        // A non-convex U-shaped subject: base [0,1]×[0,0.2] and prongs
        // [0,0.2]×[0.2,1], [0.8,1]×[0.2,1]. With x + y ≤ 1: base ∩ T =
        // ∫₀^0.2 (1 − y) dy = 0.18; left prong ∩ T = 0.6·0.2 + ½·0.2² = 0.14;
        // the right prong has x + y ≥ 1, no area. Total 0.32.
        let u_shape = vec![
            [0.0, 0.0],
            [1.0, 0.0],
            [1.0, 1.0],
            [0.8, 1.0],
            [0.8, 0.2],
            [0.2, 0.2],
            [0.2, 1.0],
            [0.0, 1.0],
        ];
        clip_polygon_by_triangle(&u_shape, &tri, &mut out, &mut scratch);
        assert!(
            (signed_area(&out) - 0.32).abs() < 1e-14,
            "{}",
            signed_area(&out)
        );
        // Clockwise subject: negative area.
        let mut cw = square(0.0, 0.0, 0.5);
        cw.reverse();
        clip_polygon_by_triangle(&cw, &tri, &mut out, &mut scratch);
        assert!((signed_area(&out) + 0.25).abs() < 1e-15);
    }
}
