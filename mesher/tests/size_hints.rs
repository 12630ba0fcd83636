//! `mesh_with_size_hints`: a background size field from the caller caps the
//! element size where it is given and leaves the rest of the mesh graded as
//! usual. The reference is the mesher's own documented contract (every
//! triangle's longest edge is at most the local size).

use fluxwright_mesher::{mesh, mesh_with_size_hints, Mesh, MeshError, MeshInput, Outline, Point};

fn longest_edge(m: &Mesh, t: usize) -> f64 {
    let v = m.triangles[t].map(|i| m.nodes[i as usize]);
    (0..3)
        .map(|k| (v[k][0] - v[(k + 1) % 3][0]).hypot(v[k][1] - v[(k + 1) % 3][1]))
        .fold(0.0, f64::max)
}

fn centroid(m: &Mesh, t: usize) -> Point {
    let v = m.triangles[t].map(|i| m.nodes[i as usize]);
    [
        (v[0][0] + v[1][0] + v[2][0]) / 3.0,
        (v[0][1] + v[1][1] + v[2][1]) / 3.0,
    ]
}

fn square() -> MeshInput {
    MeshInput::new(
        Outline::rectangle([0.0, 0.0], [100.0, 100.0]).unwrap(),
        10.0,
    )
}

/// Hints of `size` on a grid of spacing `size` over the block `lo..hi`.
fn block_hints(lo: f64, hi: f64, size: f64) -> Vec<(Point, f64)> {
    let n = ((hi - lo) / size).round() as usize;
    let mut hints = Vec::new();
    for j in 0..=n {
        for i in 0..=n {
            let p = [lo + i as f64 * size, lo + j as f64 * size];
            hints.push((p, size));
        }
    }
    hints
}

#[test]
fn no_hints_give_the_plain_mesh() {
    let input = square();
    let (a, b) = (
        mesh(&input).unwrap(),
        mesh_with_size_hints(&input, &[]).unwrap(),
    );
    assert_eq!(a.nodes, b.nodes);
    assert_eq!(a.triangles, b.triangles);
}

#[test]
fn hints_refine_where_given_and_only_there() {
    let input = square();
    let plain = mesh(&input).unwrap();
    let hinted = mesh_with_size_hints(&input, &block_hints(40.0, 60.0, 1.0)).unwrap();
    hinted.check().unwrap();
    assert!(hinted.quality().min_angle_deg >= input.min_angle_deg - 1e-9);
    let inside = |p: Point| (41.0..=59.0).contains(&p[0]) && (41.0..=59.0).contains(&p[1]);
    let far = |p: Point| p[0] < 15.0 || p[0] > 85.0 || p[1] < 15.0 || p[1] > 85.0;
    let mut worst_inside: f64 = 0.0;
    let mut largest_far: f64 = 0.0;
    for t in 0..hinted.triangles.len() {
        let (c, l) = (centroid(&hinted, t), longest_edge(&hinted, t));
        if inside(c) {
            worst_inside = worst_inside.max(l);
        } else if far(c) {
            largest_far = largest_far.max(l);
        }
    }
    // The hinted block meets its size; far from it (25 units and more,
    // where growth 1.3 allows 1 + 0.3·25 > 8) sizes are back near max_size.
    assert!(
        worst_inside <= 1.0 + 1e-9,
        "longest edge {worst_inside} in the block"
    );
    assert!(largest_far > 5.0, "largest far edge {largest_far}");
    // Without hints the block is meshed at max_size (10 × 10 per cell,
    // about 3.6 triangles per h² of area): the hints add about 400 × 3.6.
    assert!(hinted.triangles.len() > plain.triangles.len() + 1000);
}

#[test]
fn hints_above_the_shape_sizes_change_nothing_they_only_cap() {
    let input = square();
    let plain = mesh(&input).unwrap();
    let loose = mesh_with_size_hints(&input, &block_hints(10.0, 90.0, 20.0)).unwrap();
    // Sizes stay capped by max_size = 10: the hints of 20 add background
    // vertices, not smaller elements.
    let ratio = loose.triangles.len() as f64 / plain.triangles.len() as f64;
    assert!((0.8..1.25).contains(&ratio), "{ratio}");
    for t in 0..loose.triangles.len() {
        assert!(longest_edge(&loose, t) <= 10.0 + 1e-9);
    }
}

#[test]
fn bad_hints_are_refused_by_name() {
    let input = square();
    for bad in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        match mesh_with_size_hints(&input, &[([50.0, 50.0], bad)]) {
            Err(MeshError::Parameter { name, .. }) => assert_eq!(name, "size_hints[].size"),
            other => panic!("size {bad}: {other:?}"),
        }
    }
    assert!(mesh_with_size_hints(&input, &[([f64::NAN, 50.0], 1.0)]).is_err());
}
