//! Reconnection: a new triangulation of part of a mesh whose nodes have
//! moved, on the same nodes.
//!
//! When the nodes of a mesh move (a part slides past another, the air
//! between them shears), the triangles between them degrade although the
//! nodes themselves are still well spread. [`reconnect`] keeps a chosen set
//! of triangles as they are and replaces the others (the band) by the
//! constrained Delaunay triangulation of the band's nodes, with the band's
//! outline and every edge between band triangles of different regions as
//! constraints. Nothing else changes: no node is added, removed or moved, and
//! a triangle of the new band takes the region on its side of the
//! constraints (flood fill).

use std::collections::{HashMap, HashSet, VecDeque};

use spade::handles::FixedVertexHandle;
use spade::{ConstrainedDelaunayTriangulation, Point2, Triangulation};

use crate::geometry::Point;

/// Why a band could not be reconnected (its moved outline is no longer a
/// valid one).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ReconnectError {
    /// Input slices of different lengths, or a node index out of range.
    #[error("reconnect: {0}")]
    Input(&'static str),
    /// Two band nodes at one point.
    #[error("nodes {0} and {1} of the band are at one point")]
    Coincident(u32, u32),
    /// Two edges of the band's outline cross, or a node lies on one.
    #[error("the band's outline crosses itself near node {0}")]
    Crossing(u32),
    /// A triangle of the new band lies on two sides of the outline at once,
    /// or a band node ended up outside the band.
    #[error("the band's outline no longer encloses its nodes (near node {0})")]
    Tangled(u32),
    /// The triangulation library refused a node.
    #[error("the triangulation library refused node {0}")]
    Library(u32),
}

/// Triangles of a mesh after [`reconnect`]: the kept ones in their order,
/// the band's new ones in the band's first old slots (two slots fewer for
/// each node left out).
#[derive(Clone, Debug, PartialEq)]
pub struct Reconnected {
    /// Counter-clockwise triangles, as many as given.
    pub triangles: Vec<[u32; 3]>,
    /// Region of each triangle.
    pub regions: Vec<u32>,
    /// Whether each triangle is a new one of the band.
    pub band: Vec<bool>,
}

/// Re-triangulate the triangles with `keep[t] == false` (the band) on the
/// same nodes at their positions `nodes`, less those with `drop[v]` (which
/// must be inside the band, off its outline; nodes no triangle names may be
/// flagged freely and are ignored).
///
/// The band's outline (its edges with one band triangle, or with band
/// triangles of two regions on either side) is kept exactly; inside it the
/// band becomes the constrained Delaunay triangulation of its nodes, so only
/// connectivity changes (edge flips). A triangulation of a polygon with
/// holes has a number of triangles fixed by its node count, so the band has
/// as many triangles as before less two for each node left out. Deterministic: the same input gives the same
/// output bit for bit.
///
/// Fails when the moved outline crosses itself, when two band nodes
/// coincide, or when a band node lies outside the moved band.
pub fn reconnect(
    nodes: &[Point],
    triangles: &[[u32; 3]],
    regions: &[u32],
    keep: &[bool],
    drop: &[bool],
) -> Result<Reconnected, ReconnectError> {
    if triangles.len() != regions.len() || triangles.len() != keep.len() {
        return Err(ReconnectError::Input(
            "triangles, regions and keep differ in length",
        ));
    }
    if triangles
        .iter()
        .flatten()
        .any(|&v| v as usize >= nodes.len())
    {
        return Err(ReconnectError::Input("a triangle names a missing node"));
    }
    if drop.len() != nodes.len() {
        return Err(ReconnectError::Input("nodes and drop differ in length"));
    }
    let band: Vec<usize> = (0..triangles.len()).filter(|&t| !keep[t]).collect();
    let mut out = Reconnected {
        triangles: triangles.to_vec(),
        regions: regions.to_vec(),
        band: keep.iter().map(|k| !k).collect(),
    };
    if band.is_empty() {
        return Ok(out);
    }
    // Directed band edges (the triangle on their left) and its region.
    let mut left: HashMap<(u32, u32), u32> = HashMap::with_capacity(3 * band.len());
    for &t in &band {
        let tri = triangles[t];
        for k in 0..3 {
            left.insert((tri[k], tri[(k + 1) % 3]), regions[t]);
        }
    }
    // Outline edges, each once, in a fixed order.
    let mut constraints: Vec<(u32, u32)> = Vec::new();
    let mut seen: HashSet<(u32, u32)> = HashSet::new();
    for &t in &band {
        let tri = triangles[t];
        for k in 0..3 {
            let (a, b) = (tri[k], tri[(k + 1) % 3]);
            let inner = left.get(&(b, a)) == Some(&regions[t]);
            if !inner && seen.insert((a.min(b), a.max(b))) {
                constraints.push((a, b));
            }
        }
    }
    if constraints
        .iter()
        .any(|&(a, b)| drop[a as usize] || drop[b as usize])
    {
        return Err(ReconnectError::Input(
            "a node to leave out is on the band's outline",
        ));
    }
    if triangles
        .iter()
        .zip(keep)
        .any(|(t, &k)| k && t.iter().any(|&v| drop[v as usize]))
    {
        return Err(ReconnectError::Input(
            "a node to leave out is on a kept triangle",
        ));
    }
    // The band's nodes, in order of first appearance.
    let mut left_out: HashSet<u32> = HashSet::new();
    let mut handle: HashMap<u32, FixedVertexHandle> = HashMap::new();
    let mut node_of: Vec<u32> = Vec::new();
    let mut cdt: ConstrainedDelaunayTriangulation<Point2<f64>> =
        ConstrainedDelaunayTriangulation::new();
    for &t in &band {
        for &v in &triangles[t] {
            if handle.contains_key(&v) || left_out.contains(&v) {
                continue;
            }
            if drop[v as usize] {
                left_out.insert(v);
                continue;
            }
            let p = nodes[v as usize];
            let before = cdt.num_vertices();
            let h = cdt
                .insert(Point2::new(p[0], p[1]))
                .map_err(|_| ReconnectError::Library(v))?;
            if cdt.num_vertices() == before {
                return Err(ReconnectError::Coincident(node_of[h.index()], v));
            }
            debug_assert_eq!(h.index(), node_of.len());
            node_of.push(v);
            handle.insert(v, h);
        }
    }
    for &(a, b) in &constraints {
        if cdt.try_add_constraint(handle[&a], handle[&b]).is_empty() {
            return Err(ReconnectError::Crossing(a));
        }
    }
    // A node on an outline edge would have split it into two constraints.
    if cdt.num_constraints() != constraints.len() {
        let bad = constraints
            .iter()
            .find(|&&(a, b)| {
                cdt.get_edge_from_neighbors(handle[&a], handle[&b])
                    .is_none_or(|e| !cdt.is_constraint_edge(e.as_undirected().fix()))
            })
            .map_or(constraints[0].0, |c| c.0);
        return Err(ReconnectError::Crossing(bad));
    }
    // Label the faces: a region, or outside the band.
    // (i64, so that every u32 stays a region, u32::MAX included.)
    const UNKNOWN: i64 = -1;
    const OUTSIDE: i64 = -2;
    let mut label = vec![UNKNOWN; cdt.all_faces().len()];
    let mut queue = VecDeque::new();
    let set = |label: &mut [i64], f: usize, r: i64, at: u32| -> Result<bool, ReconnectError> {
        match label[f] {
            UNKNOWN => {
                label[f] = r;
                Ok(true)
            }
            old if old == r => Ok(false),
            _ => Err(ReconnectError::Tangled(at)),
        }
    };
    for &(a, b) in &constraints {
        let e = cdt
            .get_edge_from_neighbors(handle[&a], handle[&b])
            .ok_or(ReconnectError::Crossing(a))?;
        for (d, from, to) in [(e, a, b), (e.rev(), b, a)] {
            if let Some(face) = d.face().as_inner() {
                let r = left.get(&(from, to)).map_or(OUTSIDE, |&r| i64::from(r));
                let f = face.fix().index();
                if set(&mut label, f, r, from)? {
                    queue.push_back(face.fix());
                }
            }
        }
    }
    while let Some(f) = queue.pop_front() {
        let face = cdt.face(f);
        let r = label[f.index()];
        for e in face.adjacent_edges() {
            if cdt.is_constraint_edge(e.as_undirected().fix()) {
                continue;
            }
            if let Some(next) = e.rev().face().as_inner() {
                let at = node_of[e.from().fix().index()];
                if set(&mut label, next.fix().index(), r, at)? {
                    queue.push_back(next.fix());
                }
            }
        }
    }
    let mut fresh: Vec<([u32; 3], u32)> = Vec::with_capacity(band.len());
    let mut used = vec![false; node_of.len()];
    for face in cdt.inner_faces() {
        let r = label[face.fix().index()];
        if r == UNKNOWN || r == OUTSIDE {
            continue;
        }
        let vs = face.vertices().map(|v| v.fix().index());
        vs.iter().for_each(|&i| used[i] = true);
        fresh.push((vs.map(|i| node_of[i]), r as u32));
    }
    if let Some(i) = used.iter().position(|u| !u) {
        return Err(ReconnectError::Tangled(node_of[i]));
    }
    if fresh.len() + 2 * left_out.len() != band.len() {
        return Err(ReconnectError::Tangled(node_of[0]));
    }
    let surplus: HashSet<usize> = band[fresh.len()..].iter().copied().collect();
    for (&t, (tri, r)) in band.iter().zip(fresh) {
        out.triangles[t] = tri;
        out.regions[t] = r;
    }
    if !surplus.is_empty() {
        let kept = |t: &usize| !surplus.contains(t);
        out = Reconnected {
            triangles: (0..out.triangles.len())
                .filter(kept)
                .map(|t| out.triangles[t])
                .collect(),
            regions: (0..out.regions.len())
                .filter(kept)
                .map(|t| out.regions[t])
                .collect(),
            band: (0..out.band.len())
                .filter(kept)
                .map(|t| out.band[t])
                .collect(),
        };
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Signed doubled area.
    fn area2(p: &[Point], t: [u32; 3]) -> f64 {
        let [a, b, c] = t.map(|v| p[v as usize]);
        (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
    }

    #[test]
    fn a_sheared_strip_gets_flipped_back_to_delaunay() {
        // Two rows of nodes, 1 apart, the upper row slid by 0.9 spacing:
        // the old diagonals are now nearly flat; the Delaunay ones are not.
        let n = 6;
        let mut nodes: Vec<Point> = (0..n).map(|i| [i as f64, 0.0]).collect();
        nodes.extend((0..n).map(|i| [i as f64 + 0.9, 1.0]));
        let mut triangles = Vec::new();
        for i in 0..n as u32 - 1 {
            let (a, b, c, d) = (i, i + 1, n as u32 + i, n as u32 + i + 1);
            triangles.push([a, b, d]);
            triangles.push([a, d, c]);
        }
        // (The outer region's u32::MAX is a region like any other.)
        let regions = vec![u32::MAX; triangles.len()];
        let keep = vec![false; triangles.len()];
        let before: f64 = triangles.iter().map(|&t| area2(&nodes, t)).sum();
        let r = reconnect(
            &nodes,
            &triangles,
            &regions,
            &keep,
            &vec![false; nodes.len()],
        )
        .unwrap();
        assert_eq!(r.triangles.len(), triangles.len());
        // Same area (the outline is kept), every triangle right side up.
        let after: f64 = r.triangles.iter().map(|&t| area2(&nodes, t)).sum();
        assert!((before - after).abs() < 1e-12, "{before} vs {after}");
        assert!(r.triangles.iter().all(|&t| area2(&nodes, t) > 0.0));
        assert!(r.regions.iter().all(|&x| x == u32::MAX));
        // The diagonals now join each lower node i + 1 to upper node i.
        assert!(r
            .triangles
            .iter()
            .any(|t| t.contains(&1) && t.contains(&(n as u32))));
    }

    #[test]
    fn kept_triangles_and_region_borders_stay() {
        // A unit square of two regions split along x = 0.5, with a kept
        // triangle; the border between the regions is kept as it was.
        let nodes = vec![
            [0.0, 0.0],
            [0.5, 0.0],
            [1.0, 0.0],
            [0.0, 1.0],
            [0.5, 1.0],
            [1.0, 1.0],
            [1.5, 0.5],
        ];
        let triangles = vec![[0, 1, 4], [0, 4, 3], [1, 2, 5], [1, 5, 4], [2, 6, 5]];
        let regions = vec![0, 0, 1, 1, 2];
        let keep = vec![false, false, false, false, true];
        let r = reconnect(
            &nodes,
            &triangles,
            &regions,
            &keep,
            &vec![false; nodes.len()],
        )
        .unwrap();
        assert_eq!(r.triangles[4], [2, 6, 5]);
        for (t, &reg) in r.triangles.iter().zip(&r.regions) {
            let x = t.iter().map(|&v| nodes[v as usize][0]).sum::<f64>() / 3.0;
            assert_eq!(
                reg,
                if x < 0.5 {
                    0
                } else if x < 1.0 {
                    1
                } else {
                    2
                }
            );
        }
    }

    #[test]
    fn a_node_pushed_out_of_its_band_is_refused() {
        // The middle node of a fan moved outside the fan's outline.
        let nodes = vec![[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [0.0, 2.0], [3.0, 1.0]];
        let triangles = vec![[0, 1, 4], [1, 2, 4], [2, 3, 4], [3, 0, 4]];
        let regions = vec![0; 4];
        let keep = vec![false; 4];
        assert!(reconnect(&nodes, &triangles, &regions, &keep, &[false; 5]).is_err());
        // Left out, the node no longer matters: two triangles fill the square.
        let mut drop = [false; 5];
        drop[4] = true;
        let r = reconnect(&nodes, &triangles, &regions, &keep, &drop).unwrap();
        assert_eq!(r.triangles.len(), 2);
        assert!(r
            .triangles
            .iter()
            .all(|&t| !t.contains(&4) && area2(&nodes, t) > 0.0));
        // A corner of the outline cannot be left out.
        drop[0] = true;
        assert!(reconnect(&nodes, &triangles, &regions, &keep, &drop).is_err());
    }
}
