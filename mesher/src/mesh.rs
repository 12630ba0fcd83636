//! The output mesh and its invariants.

use crate::geometry::Point;

/// An edge of the mesh on the outer outline.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BoundaryEdge {
    /// The two node indices, in counter-clockwise order around the domain
    /// (the domain lies to the left of `nodes[0] -> nodes[1]`).
    pub nodes: [u32; 2],
    /// Index of the outer outline's segment this edge lies on, counting the
    /// segments of all its loops in order.
    pub segment: u32,
}

/// What the refinement did and whether it met its targets.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RefinementReport {
    /// Whether every triangle met the angle and size targets (false when the
    /// vertex budget ran out, or where an input angle was too small to meet).
    pub complete: bool,
    /// Input corners with an angle below the requested minimum angle, where
    /// the target cannot be met by any mesh (reported, not looped on).
    pub small_input_angles: Vec<Point>,
    /// Wall-clock seconds spent meshing.
    pub seconds: f64,
}

/// Quality statistics of a mesh.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct QualityStats {
    /// Smallest angle of any triangle, degrees.
    pub min_angle_deg: f64,
    /// Mean of the smallest angle of each triangle, degrees.
    pub mean_min_angle_deg: f64,
    /// Shortest and longest edge length.
    pub edge_length_range: [f64; 2],
}

/// Edge topology for quadratic (P2) elements: one mid-edge node per edge.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct EdgeTopology {
    /// Each edge's two end nodes, smaller index first.
    pub edges: Vec<[u32; 2]>,
    /// For each triangle `[a, b, c]`, the edges `a-b`, `b-c`, `c-a`.
    pub triangle_edges: Vec<[u32; 3]>,
}

/// A triangle mesh with a region on every triangle.
///
/// # Invariants (checked by [`Mesh::check`])
/// - every triangle is counter-clockwise with positive area;
/// - `regions.len() == triangles.len()`;
/// - every input edge is a union of mesh edges;
/// - every edge with a single triangle is on the outer outline and listed in
///   `boundary`.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Mesh {
    /// Node coordinates.
    pub nodes: Vec<Point>,
    /// Triangles as node indices, counter-clockwise.
    pub triangles: Vec<[u32; 3]>,
    /// The region of each triangle: an index into [`crate::MeshInput::shapes`],
    /// or [`Mesh::OUTER_REGION`] where no shape covers it.
    pub regions: Vec<u32>,
    /// The edges on the outer outline.
    pub boundary: Vec<BoundaryEdge>,
    /// What the refinement did.
    pub report: RefinementReport,
}

/// Errors from meshing or from a mesh's invariant check.
#[derive(Debug, thiserror::Error, PartialEq)]
#[non_exhaustive]
pub enum MeshError {
    /// An outline is not a valid region.
    #[error(transparent)]
    Geometry(#[from] crate::geometry::GeometryError),
    /// The outline of one shape is not a valid region.
    #[error("shape {shape}: {source}")]
    ShapeGeometry {
        /// Index of the shape in [`crate::MeshInput::shapes`].
        shape: usize,
        /// What is wrong with its outline.
        source: crate::geometry::GeometryError,
    },
    /// A size or quality parameter is out of range.
    #[error("mesh parameter `{name}` = {value} is out of range: {reason}")]
    Parameter {
        /// The parameter's name.
        name: &'static str,
        /// The value given.
        value: f64,
        /// What it must be.
        reason: &'static str,
    },
    /// The mesh would be too large to build.
    #[error("the mesh would need about {estimated_triangles:.3e} triangles (limit {limit:.3e}); raise mesh sizes")]
    TooLarge {
        /// Estimated triangle count.
        estimated_triangles: f64,
        /// The limit.
        limit: f64,
    },
    /// The triangulation library refused the input.
    #[error("triangulation failed: {0}")]
    Triangulation(String),
    /// A matched (periodic) pair of outer segments cannot be meshed alike.
    #[error("matched segments {segment} and {partner}: {reason}")]
    Matched {
        /// The pair's first segment.
        segment: u32,
        /// Its partner.
        partner: u32,
        /// What is wrong.
        reason: String,
    },
    /// An invariant of [`Mesh`] does not hold.
    #[error("mesh invariant broken: {0}")]
    Invariant(String),
}

impl Mesh {
    /// Region value of triangles covered by no shape (the outer region).
    pub const OUTER_REGION: u32 = u32::MAX;

    /// Signed area of triangle `t` (positive for counter-clockwise).
    pub fn triangle_area(&self, t: usize) -> f64 {
        let [a, b, c] = self.triangles[t].map(|i| self.nodes[i as usize]);
        0.5 * ((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))
    }

    /// The three angles of triangle `t`, radians.
    pub fn triangle_angles(&self, t: usize) -> [f64; 3] {
        let p = self.triangles[t].map(|i| self.nodes[i as usize]);
        let mut out = [0.0; 3];
        for (k, angle) in out.iter_mut().enumerate() {
            let a = p[k];
            let b = p[(k + 1) % 3];
            let c = p[(k + 2) % 3];
            let u = [b[0] - a[0], b[1] - a[1]];
            let v = [c[0] - a[0], c[1] - a[1]];
            let cross = u[0] * v[1] - u[1] * v[0];
            let dot = u[0] * v[0] + u[1] * v[1];
            *angle = cross.abs().atan2(dot);
        }
        out
    }

    /// The smallest angle of triangle `t`, radians (see [`min_angle`]).
    pub fn min_angle(&self, t: usize) -> f64 {
        min_angle(self.triangles[t].map(|i| self.nodes[i as usize]))
    }

    /// Total area of the triangles of each region: `(region, area)` pairs
    /// sorted by region, [`Mesh::OUTER_REGION`] last.
    pub fn region_areas(&self) -> Vec<(u32, f64)> {
        let mut map = std::collections::BTreeMap::new();
        for t in 0..self.triangles.len() {
            *map.entry(self.regions[t]).or_insert(0.0) += self.triangle_area(t);
        }
        map.into_iter().collect()
    }

    /// Quality statistics.
    pub fn quality(&self) -> QualityStats {
        let mut min_angle = f64::INFINITY;
        let mut sum_min = 0.0;
        // Squared edge lengths; the square roots of the extremes at the end.
        let mut len2 = [f64::INFINITY, 0.0f64];
        for (t, tri) in self.triangles.iter().enumerate() {
            let m = self.min_angle(t);
            min_angle = min_angle.min(m);
            sum_min += m;
            for k in 0..3 {
                let a = self.nodes[tri[k] as usize];
                let b = self.nodes[tri[(k + 1) % 3] as usize];
                let l2 = (b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2);
                len2[0] = len2[0].min(l2);
                len2[1] = len2[1].max(l2);
            }
        }
        let len = len2.map(f64::sqrt);
        let n = self.triangles.len().max(1) as f64;
        QualityStats {
            min_angle_deg: if self.triangles.is_empty() {
                0.0
            } else {
                min_angle.to_degrees()
            },
            mean_min_angle_deg: (sum_min / n).to_degrees(),
            edge_length_range: if self.triangles.is_empty() {
                [0.0, 0.0]
            } else {
                len
            },
        }
    }

    /// Unique edges and, per triangle, its three edges (for P2 mid-edge nodes:
    /// the mid-edge node of edge `e` is numbered `nodes.len() + e`).
    pub fn edge_topology(&self) -> EdgeTopology {
        // Bucket the half-edges by their lower node (a counting sort), then
        // sort each short bucket by the upper node: edges come out in
        // lexicographic order, in linear time (a global sort of the 3·T
        // half-edges took four times as long at 2M triangles).
        let n = self.nodes.len();
        let mut start = vec![0u32; n + 1];
        for tri in &self.triangles {
            for k in 0..3 {
                let (a, b) = (tri[k], tri[(k + 1) % 3]);
                start[a.min(b) as usize + 1] += 1;
            }
        }
        for v in 0..n {
            start[v + 1] += start[v];
        }
        let mut fill = start.clone();
        // upper node << 32 | half-edge slot t·3 + k, in buckets of the lower
        // node (one u64 sorts faster than a pair).
        let mut bucket = vec![0u64; 3 * self.triangles.len()];
        for (t, tri) in self.triangles.iter().enumerate() {
            for k in 0..3 {
                let (a, b) = (tri[k], tri[(k + 1) % 3]);
                let lo = a.min(b) as usize;
                bucket[fill[lo] as usize] = (u64::from(a.max(b)) << 32) | (t * 3 + k) as u64;
                fill[lo] += 1;
            }
        }
        let mut edges = Vec::with_capacity(bucket.len() / 2 + 1);
        let mut triangle_edges = vec![[0u32; 3]; self.triangles.len()];
        for lo in 0..n {
            let b = &mut bucket[start[lo] as usize..start[lo + 1] as usize];
            b.sort_unstable();
            let mut last = u32::MAX;
            for &key in b.iter() {
                let (hi, slot) = ((key >> 32) as u32, key as u32);
                if hi != last {
                    edges.push([lo as u32, hi]);
                    last = hi;
                }
                triangle_edges[slot as usize / 3][slot as usize % 3] = (edges.len() - 1) as u32;
            }
        }
        EdgeTopology {
            edges,
            triangle_edges,
        }
    }

    /// Mid-edge node coordinates for P2 elements, in the order of
    /// [`EdgeTopology::edges`].
    pub fn mid_edge_nodes(&self, topology: &EdgeTopology) -> Vec<Point> {
        topology
            .edges
            .iter()
            .map(|&[a, b]| {
                let (p, q) = (self.nodes[a as usize], self.nodes[b as usize]);
                [0.5 * (p[0] + q[0]), 0.5 * (p[1] + q[1])]
            })
            .collect()
    }

    /// Verify the invariants listed on [`Mesh`] that need no input geometry:
    /// counter-clockwise triangles of positive area, a region on every
    /// triangle, valid node indices, and every single-triangle edge listed as
    /// a boundary edge.
    pub fn check(&self) -> Result<(), MeshError> {
        if self.regions.len() != self.triangles.len() {
            return Err(MeshError::Invariant(format!(
                "{} regions for {} triangles",
                self.regions.len(),
                self.triangles.len()
            )));
        }
        let n = self.nodes.len() as u32;
        for (t, tri) in self.triangles.iter().enumerate() {
            if tri.iter().any(|&i| i >= n) {
                return Err(MeshError::Invariant(format!(
                    "triangle {t} has a node index out of range"
                )));
            }
            let area = self.triangle_area(t);
            if !(area > 0.0) {
                return Err(MeshError::Invariant(format!(
                    "triangle {t} is not counter-clockwise with positive area (area {area:e})"
                )));
            }
        }
        let topo = self.edge_topology();
        let mut count = vec![0u8; topo.edges.len()];
        for te in &topo.triangle_edges {
            for &e in te {
                count[e as usize] = count[e as usize].saturating_add(1);
            }
        }
        let mut boundary: Vec<[u32; 2]> = self
            .boundary
            .iter()
            .map(|e| {
                let [a, b] = e.nodes;
                if a < b {
                    [a, b]
                } else {
                    [b, a]
                }
            })
            .collect();
        boundary.sort_unstable();
        for (e, &c) in count.iter().enumerate() {
            if c > 2 {
                return Err(MeshError::Invariant(format!(
                    "edge {:?} is shared by {c} triangles",
                    topo.edges[e]
                )));
            }
            if c == 1 && boundary.binary_search(&topo.edges[e]).is_err() {
                return Err(MeshError::Invariant(format!(
                    "edge {:?} has one triangle but is not a tagged outer edge",
                    topo.edges[e]
                )));
            }
        }
        Ok(())
    }
}

/// The smallest angle of the triangle with corners `p`, radians: the one
/// opposite its shortest edge, so one `atan2` instead of three.
pub fn min_angle(p: [Point; 3]) -> f64 {
    let l2 = |k: usize| {
        let (a, b) = (p[(k + 1) % 3], p[(k + 2) % 3]);
        (a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)
    };
    // Vertex k faces edge (k+1, k+2).
    let (l0, l1, l2) = (l2(0), l2(1), l2(2));
    let k = if l0 <= l1 && l0 <= l2 {
        0
    } else if l1 <= l2 {
        1
    } else {
        2
    };
    let (a, b, c) = (p[k], p[(k + 1) % 3], p[(k + 2) % 3]);
    let u = [b[0] - a[0], b[1] - a[1]];
    let v = [c[0] - a[0], c[1] - a[1]];
    (u[0] * v[1] - u[1] * v[0])
        .abs()
        .atan2(u[0] * v[0] + u[1] * v[1])
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A 3 × 2 grid of squares, each split into two triangles, with its
    /// nodes numbered out of order so that buckets are not trivially sorted.
    fn grid() -> Mesh {
        let (nx, ny) = (4u32, 3u32);
        let relabel = |i: u32| (i * 7) % (nx * ny); // 7 is prime to 12
        let mut nodes = vec![[0.0; 2]; (nx * ny) as usize];
        for j in 0..ny {
            for i in 0..nx {
                nodes[relabel(j * nx + i) as usize] = [i as f64, j as f64];
            }
        }
        let mut triangles = Vec::new();
        for j in 0..ny - 1 {
            for i in 0..nx - 1 {
                let [a, b, c, d] = [
                    j * nx + i,
                    j * nx + i + 1,
                    (j + 1) * nx + i + 1,
                    (j + 1) * nx + i,
                ]
                .map(relabel);
                triangles.push([a, b, c]);
                triangles.push([a, c, d]);
            }
        }
        Mesh {
            nodes,
            regions: vec![0; triangles.len()],
            triangles,
            boundary: Vec::new(),
            report: Default::default(),
        }
    }

    #[test]
    fn min_angle_is_the_smallest_of_the_three() {
        // A 3-4-5 right triangle (smallest angle atan(3/4)), a sliver and an
        // equilateral triangle, each in all three vertex rotations.
        let corners = [
            [[0.0, 0.0], [4.0, 0.0], [4.0, 3.0]],
            [[0.0, 0.0], [10.0, 0.0], [5.0, 0.01]],
            [[0.0, 0.0], [1.0, 0.0], [0.5, 0.75f64.sqrt()]],
        ];
        for c in corners {
            for r in 0..3 {
                let m = Mesh {
                    nodes: (0..3).map(|k| c[(k + r) % 3]).collect(),
                    triangles: vec![[0, 1, 2]],
                    regions: vec![0],
                    boundary: Vec::new(),
                    report: Default::default(),
                };
                let all = m.triangle_angles(0);
                let expected = all.into_iter().fold(f64::INFINITY, f64::min);
                assert!(
                    (m.min_angle(0) - expected).abs() < 1e-14,
                    "{c:?} rotated {r}"
                );
                assert!((all.iter().sum::<f64>() - std::f64::consts::PI).abs() < 1e-12);
            }
        }
        let right = Mesh {
            nodes: corners[0].to_vec(),
            triangles: vec![[0, 1, 2]],
            regions: vec![0],
            boundary: Vec::new(),
            report: Default::default(),
        };
        assert!((right.min_angle(0) - 0.75f64.atan()).abs() < 1e-14);
    }

    #[test]
    fn edge_topology_lists_each_edge_once_in_order() {
        let m = grid();
        let topo = m.edge_topology();
        // The definition: the sorted, deduplicated (low, high) node pairs.
        let mut expected: Vec<[u32; 2]> = m
            .triangles
            .iter()
            .flat_map(|t| (0..3).map(move |k| [t[k].min(t[(k + 1) % 3]), t[k].max(t[(k + 1) % 3])]))
            .collect();
        expected.sort_unstable();
        expected.dedup();
        // 3 × 2 squares: 4·2 + 3·3 grid edges and 6 diagonals (Euler: E = V + F − 1).
        assert_eq!(expected.len(), 12 + 12 - 1);
        assert_eq!(topo.edges, expected);
        for (t, te) in topo.triangle_edges.iter().enumerate() {
            for (k, &e) in te.iter().enumerate() {
                let (a, b) = (m.triangles[t][k], m.triangles[t][(k + 1) % 3]);
                assert_eq!(topo.edges[e as usize], [a.min(b), a.max(b)]);
            }
        }
    }
}
