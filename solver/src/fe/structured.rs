//! Structured meshes for verification and benchmarks: tensor-product
//! rectangles and ring discs, with regions chosen by a function of the
//! triangle's centroid. They satisfy the invariants of
//! [`fluxwright_mesher::Mesh`].

use fluxwright_mesher::{BoundaryEdge, Mesh, Point};
use std::f64::consts::PI;

/// The rectangle spanned by grid lines `xs` × `ys` (each strictly
/// increasing, at least two values), each cell cut into two triangles along
/// alternating diagonals. Outer segments: 0 bottom, 1 right, 2 top, 3 left.
/// `region_of` receives each triangle's centroid.
pub fn rectangle(xs: &[f64], ys: &[f64], region_of: impl Fn(Point) -> u32) -> Mesh {
    let (nx, ny) = (xs.len(), ys.len());
    let id = |i: usize, j: usize| (j * nx + i) as u32;
    let mut nodes = Vec::with_capacity(nx * ny);
    for &y in ys {
        for &x in xs {
            nodes.push([x, y]);
        }
    }
    let mut triangles = Vec::with_capacity(2 * (nx - 1) * (ny - 1));
    for j in 0..ny - 1 {
        for i in 0..nx - 1 {
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            if (i + j) % 2 == 0 {
                triangles.push([a, b, c]);
                triangles.push([a, c, d]);
            } else {
                triangles.push([a, b, d]);
                triangles.push([b, c, d]);
            }
        }
    }
    let mut boundary = Vec::new();
    for i in 0..nx - 1 {
        boundary.push(BoundaryEdge {
            nodes: [id(i, 0), id(i + 1, 0)],
            segment: 0,
        });
    }
    for j in 0..ny - 1 {
        boundary.push(BoundaryEdge {
            nodes: [id(nx - 1, j), id(nx - 1, j + 1)],
            segment: 1,
        });
    }
    for i in (0..nx - 1).rev() {
        boundary.push(BoundaryEdge {
            nodes: [id(i + 1, ny - 1), id(i, ny - 1)],
            segment: 2,
        });
    }
    for j in (0..ny - 1).rev() {
        boundary.push(BoundaryEdge {
            nodes: [id(0, j + 1), id(0, j)],
            segment: 3,
        });
    }
    finish(nodes, triangles, boundary, region_of)
}

/// A disc about the origin made of rings at `ring_radii` (strictly
/// increasing, > 0), the last being the outer circle (segment 0). Ring k has
/// about 2πr_k / (r_k − r_{k−1}) nodes (at least 6), so triangles stay
/// near-equilateral when the ring spacing changes. `region_of` receives each
/// triangle's centroid.
pub fn disc(ring_radii: &[f64], region_of: impl Fn(Point) -> u32) -> Mesh {
    let mut nodes = vec![[0.0, 0.0]];
    let mut triangles = Vec::new();
    let mut inner: Vec<u32> = vec![0];
    let mut previous_radius = 0.0;
    for &r in ring_radii {
        let wanted = (2.0 * PI * r / (r - previous_radius)).round() as usize;
        let count = wanted.max(6);
        let outer: Vec<u32> = (0..count)
            .map(|j| {
                let angle = 2.0 * PI * j as f64 / count as f64;
                nodes.push([r * angle.cos(), r * angle.sin()]);
                (nodes.len() - 1) as u32
            })
            .collect();
        zip_rings(&inner, &outer, &mut triangles);
        inner = outer;
        previous_radius = r;
    }
    let m = inner.len();
    let boundary = (0..m)
        .map(|j| BoundaryEdge {
            nodes: [inner[j], inner[(j + 1) % m]],
            segment: 0,
        })
        .collect();
    finish(nodes, triangles, boundary, region_of)
}

/// Triangulate the annulus between two rings whose nodes are evenly spaced
/// in angle starting at angle 0, by merging them in angular order.
fn zip_rings(inner: &[u32], outer: &[u32], triangles: &mut Vec<[u32; 3]>) {
    let (m, n) = (inner.len(), outer.len());
    let (mut i, mut o) = (0, 0);
    while o < n || (m > 1 && i < m) {
        let next_inner = (i + 1) as f64 / m as f64;
        let next_outer = (o + 1) as f64 / n as f64;
        if o < n && (m == 1 || i == m || next_outer <= next_inner) {
            triangles.push([inner[i % m], outer[o], outer[(o + 1) % n]]);
            o += 1;
        } else {
            triangles.push([inner[i % m], outer[o % n], inner[(i + 1) % m]]);
            i += 1;
        }
    }
}

/// Ring radii for [`disc`]: spacing `h` up to `uniform_to` (rounded to a
/// whole number of rings, so `uniform_to` is a ring when it is a multiple of
/// `h`), then growing by `growth` per ring up to `outer`, the last spacing
/// stretched (never shrunk) to end exactly at `outer`.
pub fn ring_radii(h: f64, uniform_to: f64, growth: f64, outer: f64) -> Vec<f64> {
    let n = (uniform_to / h).round().max(1.0) as usize;
    let mut radii: Vec<f64> = (1..=n).map(|k| h * k as f64).collect();
    let mut step = h * growth;
    let mut r = radii[n - 1];
    while outer - r > 1.5 * step {
        r += step;
        radii.push(r);
        step *= growth;
    }
    if outer > r {
        radii.push(outer);
    }
    radii
}

/// Grid lines from `from` to `to` with spacing `h0` at `from`, growing
/// geometrically by `growth` per cell, the last cell stretched to end at `to`.
pub fn graded_lines(from: f64, to: f64, h0: f64, growth: f64) -> Vec<f64> {
    let sign = if to >= from { 1.0 } else { -1.0 };
    let mut v = vec![from];
    let mut h = h0;
    let mut x = from;
    while (to - x) * sign > 1.5 * h {
        x += sign * h;
        v.push(x);
        h *= growth;
    }
    if to != from {
        v.push(to);
    }
    v
}

fn finish(
    nodes: Vec<Point>,
    triangles: Vec<[u32; 3]>,
    boundary: Vec<BoundaryEdge>,
    region_of: impl Fn(Point) -> u32,
) -> Mesh {
    let regions = triangles
        .iter()
        .map(|t| {
            let p = t.map(|i| nodes[i as usize]);
            region_of([
                (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                (p[0][1] + p[1][1] + p[2][1]) / 3.0,
            ])
        })
        .collect();
    Mesh {
        nodes,
        triangles,
        regions,
        boundary,
        report: Default::default(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rectangle_and_disc_satisfy_the_mesh_invariants() {
        let xs = [0.0, 0.5, 1.0, 2.0];
        let ys = [0.0, 1.0, 1.5];
        let m = rectangle(&xs, &ys, |_| 0);
        m.check().unwrap();
        let area: f64 = (0..m.triangles.len()).map(|t| m.triangle_area(t)).sum();
        assert!((area - 3.0).abs() < 1e-12);
        let radii = ring_radii(0.1, 0.8, 1.25, 3.5);
        assert!(radii[..8]
            .iter()
            .enumerate()
            .all(|(k, r)| (r - 0.1 * (k + 1) as f64).abs() < 1e-12));
        let d = disc(&radii, |p| u32::from(p[0].hypot(p[1]) > 0.8));
        d.check().unwrap();
        // The area is that of the regular n-gon inscribed in the outer
        // circle, n/2 · r² · sin(2π/n) (elementary geometry).
        let area: f64 = (0..d.triangles.len()).map(|t| d.triangle_area(t)).sum();
        let n = d.boundary.len() as f64;
        assert!((area - 0.5 * n * 3.5 * 3.5 * (2.0 * PI / n).sin()).abs() < 1e-12);
        assert!(d.quality().min_angle_deg > 20.0, "{:?}", d.quality());
    }
}
