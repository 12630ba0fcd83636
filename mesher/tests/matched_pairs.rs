//! Matched (periodic) pairs of outer segments get identical nodes under the
//! rigid motion between them, even when the shapes next to the two sides ask
//! for different sizes.

use fluxwright_mesher::{
    mesh, MatchedPair, Mesh, MeshError, MeshInput, Outline, Point, ShapeInput,
};

fn nodes_on(m: &Mesh, segment: u32) -> Vec<Point> {
    let mut ids: Vec<u32> = m
        .boundary
        .iter()
        .filter(|e| e.segment == segment)
        .flat_map(|e| e.nodes)
        .collect();
    ids.sort_unstable();
    ids.dedup();
    ids.into_iter().map(|i| m.nodes[i as usize]).collect()
}

/// Every node of `a` mapped by `f` lies within `tol` of a node of `b`, and
/// the counts agree.
fn assert_images(a: &[Point], b: &[Point], f: impl Fn(Point) -> Point, tol: f64) {
    assert_eq!(a.len(), b.len(), "node counts on the two sides");
    for &p in a {
        let q = f(p);
        let d = b
            .iter()
            .map(|r| (r[0] - q[0]).hypot(r[1] - q[1]))
            .fold(f64::INFINITY, f64::min);
        assert!(
            d <= tol,
            "node {p:?} maps to {q:?}, nearest partner node {d} away"
        );
    }
}

fn min_angle_deg(m: &Mesh) -> f64 {
    m.quality().min_angle_deg
}

#[test]
fn quarter_sector_radii_match_under_rotation() {
    // A 90° sector of radius 50 with a small finely meshed block next to
    // the first radius only: without matching, the two radii would be cut
    // differently.
    let outer = Outline::sector([0.0, 0.0], 0.0, 50.0, 0.0, 90.0).expect("sector");
    let block = Outline::rectangle([10.0, 0.5], [20.0, 3.0]).expect("block");
    let mut input = MeshInput::new(outer, 6.0);
    input.shapes = vec![ShapeInput {
        outline: block,
        mesh_size: 0.4,
    }];
    input.matched = vec![MatchedPair {
        segment: 0,
        partner: 2,
        reversed: true,
    }];
    let m = mesh(&input).expect("sector meshes");
    m.check().expect("mesh invariants");
    let (a, b) = (nodes_on(&m, 0), nodes_on(&m, 2));
    // The block forces a fine cut on the x axis; the matched y axis must
    // carry the same: a rotation by 90° about the origin.
    assert!(
        a.len() > 30,
        "fine cut expected near the block, got {}",
        a.len()
    );
    assert_images(&a, &b, |p| [-p[1], p[0]], 1e-9 * 50.0);
    // Ruppert's guarantee is kept (splits are mirrored, not refused): the
    // 25° default target is met (the sector's corners are 90°).
    assert!(m.report.complete, "refinement report {:?}", m.report);
    assert!(
        min_angle_deg(&m) >= 25.0 - 1e-6,
        "min angle {}",
        min_angle_deg(&m)
    );
}

#[test]
fn rectangle_sides_match_under_translation() {
    // Left side (segment 3, running down) matched with the right side
    // (segment 1, running up): the translation by +40 in x, reversed.
    let outer = Outline::rectangle([0.0, 0.0], [40.0, 20.0]).expect("box");
    let near_right = Outline::circle([37.0, 12.0], 1.5).expect("disc");
    let mut input = MeshInput::new(outer, 5.0);
    input.shapes = vec![ShapeInput {
        outline: near_right,
        mesh_size: 0.3,
    }];
    input.matched = vec![MatchedPair {
        segment: 3,
        partner: 1,
        reversed: true,
    }];
    let m = mesh(&input).expect("box meshes");
    m.check().expect("mesh invariants");
    let (a, b) = (nodes_on(&m, 3), nodes_on(&m, 1));
    assert!(a.len() > 8, "graded cut expected, got {}", a.len());
    assert_images(&a, &b, |p| [p[0] + 40.0, p[1]], 1e-9 * 40.0);
    assert!(m.report.complete, "refinement report {:?}", m.report);
}

#[test]
fn mismatched_pairs_are_refused_naming_the_segments() {
    let outer = Outline::rectangle([0.0, 0.0], [40.0, 20.0]).expect("box");
    let mut input = MeshInput::new(outer, 5.0);
    // Sides of 40 and 20: no rigid motion carries one onto the other.
    input.matched = vec![MatchedPair {
        segment: 0,
        partner: 1,
        reversed: false,
    }];
    match mesh(&input) {
        Err(MeshError::Matched {
            segment: 0,
            partner: 1,
            ..
        }) => {}
        other => panic!("expected a matched-pair error, got {other:?}"),
    }
    input.matched[0].partner = 9;
    assert!(matches!(
        mesh(&input),
        Err(MeshError::Matched { partner: 9, .. })
    ));
}
