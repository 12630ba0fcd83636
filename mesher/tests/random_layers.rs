//! Random layered rectangles and circles inside a box, and random sectors
//! whose arcs share circles, always give a valid mesh or a clear error.

use fluxwright_mesher::{mesh, Mesh, MeshError, MeshInput, Outline, ShapeInput};
use proptest::prelude::*;

#[derive(Clone, Debug)]
enum Piece {
    Rect {
        x: f64,
        y: f64,
        w: f64,
        h: f64,
        turn: f64,
    },
    Circle {
        x: f64,
        y: f64,
        r: f64,
    },
}

fn piece() -> impl Strategy<Value = Piece> {
    prop_oneof![
        (
            5.0..95.0f64,
            5.0..95.0f64,
            1.0..40.0f64,
            1.0..40.0f64,
            0.0..90.0f64
        )
            .prop_map(|(x, y, w, h, turn)| Piece::Rect { x, y, w, h, turn }),
        (5.0..95.0f64, 5.0..95.0f64, 0.5..25.0f64).prop_map(|(x, y, r)| Piece::Circle { x, y, r }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    #[test]
    fn layered_shapes_mesh_or_fail_clearly(pieces in prop::collection::vec((piece(), 1.0..8.0f64), 1..6)) {
        let outer = Outline::rectangle([0.0, 0.0], [100.0, 100.0]).unwrap();
        let mut input = MeshInput::new(outer, 10.0);
        input.max_triangles = 400_000;
        for (p, size) in &pieces {
            let outline = match *p {
                Piece::Rect { x, y, w, h, turn } => Outline::rectangle([x - w / 2.0, y - h / 2.0], [x + w / 2.0, y + h / 2.0])
                    .unwrap()
                    .rotated(turn, [x, y]),
                Piece::Circle { x, y, r } => Outline::circle([x, y], r).unwrap(),
            };
            input.shapes.push(ShapeInput { outline, mesh_size: *size });
        }
        match mesh(&input) {
            Ok(m) => {
                prop_assert!(m.check().is_ok(), "{:?}", m.check());
                // The triangles tile the box: 100 × 100 (parts of shapes
                // outside it are dropped).
                let total: f64 = m.region_areas().iter().map(|r| r.1).sum();
                prop_assert!((total - 10_000.0).abs() < 1e-6, "total area {}", total);
                prop_assert!(m.regions.iter().all(|&r| r == Mesh::OUTER_REGION || (r as usize) < pieces.len()));
                // The angle target holds away from reported sharp corners
                // (within 8 sizes of 10, rule of thumb, no source).
                for t in 0..m.triangles.len() {
                    let a = m.triangle_angles(t).into_iter().fold(f64::INFINITY, f64::min).to_degrees();
                    if a < input.min_angle_deg - 1e-9 {
                        let p = m.triangles[t].map(|i| m.nodes[i as usize]);
                        let c = [(p[0][0] + p[1][0] + p[2][0]) / 3.0, (p[0][1] + p[1][1] + p[2][1]) / 3.0];
                        let near = m.report.small_input_angles.iter()
                            .map(|q| (q[0] - c[0]).hypot(q[1] - c[1]))
                            .fold(f64::INFINITY, f64::min);
                        prop_assert!(near < 80.0, "{:.2}° at {:?}, {} from a sharp corner", a, c, near);
                    }
                }
            }
            Err(MeshError::TooLarge { .. }) | Err(MeshError::Geometry(_)) | Err(MeshError::ShapeGeometry { .. }) => {}
            Err(e) => prop_assert!(false, "unclear error: {}", e),
        }
    }

    #[test]
    fn sectors_on_shared_circles_mesh_without_slivers(
        sectors in prop::collection::vec((0usize..4, 1usize..4, 0u32..36, 1u32..37, 0.5..6.0f64), 2..6)
    ) {
        // Radii from one small set and angles on a 10° grid, so that arcs
        // of different sectors lie on the same circles (and on each other)
        // in many ways, and radial edges cross other sectors' arcs at their
        // ends; radial edges either coincide or are 10° apart.
        const RADII: [f64; 5] = [8.0, 16.0, 24.0, 32.0, 40.0];
        let outer = Outline::rectangle([0.0, 0.0], [100.0, 100.0]).unwrap();
        let mut input = MeshInput::new(outer, 10.0);
        input.max_triangles = 400_000;
        for &(inner, extra, start, sweep, size) in &sectors {
            let outer_r = RADII[(inner + extra).min(RADII.len() - 1)];
            let start = 10.0 * f64::from(start);
            let end = start + 10.0 * f64::from(sweep);
            let outline = Outline::sector([50.0, 50.0], RADII[inner], outer_r, start, end).unwrap();
            input.shapes.push(ShapeInput { outline, mesh_size: size });
        }
        match mesh(&input) {
            Ok(m) => {
                prop_assert!(m.check().is_ok(), "{:?}", m.check());
                let total: f64 = m.region_areas().iter().map(|r| r.1).sum();
                prop_assert!((total - 10_000.0).abs() < 1e-6, "total area {}", total);
                // Radial edges meet the concentric arcs at right angles, so no
                // input angle is sharp: the target holds on every triangle
                // (arcs split at different points leave slivers that break it).
                prop_assert!(m.report.complete);
                let worst = (0..m.triangles.len())
                    .map(|t| m.triangle_angles(t).into_iter().fold(f64::INFINITY, f64::min).to_degrees())
                    .fold(f64::INFINITY, f64::min);
                prop_assert!(worst >= input.min_angle_deg - 1e-9, "smallest angle {:.2}°", worst);
            }
            Err(MeshError::TooLarge { .. }) | Err(MeshError::Geometry(_)) | Err(MeshError::ShapeGeometry { .. }) => {}
            Err(e) => prop_assert!(false, "unclear error: {}", e),
        }
    }
}
