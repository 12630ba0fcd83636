//! A permeable cylinder (radius a, μr) in a uniform applied field B0.
//!
//! Reference: separation of variables for the 2D Laplace equation, the
//! cylinder analogue of the sphere in Jackson, Classical Electrodynamics
//! (3rd ed., §5.11–5.12 and problem 5.14's 2D setting). In an unbounded
//! region the field inside is uniform, B = 2μr/(μr + 1) · B0. Here the
//! uniform-field condition A = B0·y is imposed on a circle of radius R, so we
//! use the bounded solution of the same separation: with A = C r sinθ
//! inside and (D r + E/r) sinθ outside, continuity of A and of H_θ at r = a
//! and A = B0 R sinθ at r = R give
//! C = 2μr/(μr + 1) · D, D = B0 / (1 + k a²/R²), k = (μr − 1)/(μr + 1),
//! and B inside = (C, 0): the unbounded result times 1/(1 + k a²/R²).

use fluxwright_solver::fe::structured::{disc, ring_radii};
use fluxwright_solver::material::Material;
use fluxwright_solver::nonlinear::{solve, NewtonOptions};
use fluxwright_solver::problem::*;

const B0: f64 = 0.5;

fn inside_field(order: ElementOrder, mu_r: f64) -> ([f64; 2], f64) {
    let (a, r_out) = (1.0, 5.0);
    let radii = ring_radii(0.05, a, 1.1, r_out);
    let mesh = disc(&radii, |c| if c[0].hypot(c[1]) < a { 0 } else { 1 });
    let problem = Problem {
        mesh: &mesh,
        length_scale_m: 1.0,
        symmetry: Symmetry::Planar { depth_m: 1.0 },
        order,
        regions: vec![
            RegionProps::of(Material::Linear { mu_r }),
            RegionProps::air(),
            RegionProps::air(),
        ],
        boundary: BoundarySpec::uniform(EdgeCondition::UniformField { b: [B0, 0.0] }),
        source: None,
    };
    let solution = solve(&problem, &NewtonOptions::default()).unwrap();
    let k = (mu_r - 1.0) / (mu_r + 1.0);
    let unbounded = 2.0 * mu_r / (mu_r + 1.0) * B0;
    let exact = unbounded / (1.0 + k * (a / r_out).powi(2));
    // Worst deviation from (exact, 0) over the centroids with r < 0.8a.
    let mut worst = [0.0f64; 2];
    for (t, f) in solution.element_fields().iter().enumerate() {
        let p = mesh.triangles[t].map(|i| mesh.nodes[i as usize]);
        let c = [
            (p[0][0] + p[1][0] + p[2][0]) / 3.0,
            (p[0][1] + p[1][1] + p[2][1]) / 3.0,
        ];
        if c[0].hypot(c[1]) < 0.8 * a {
            worst[0] = worst[0].max((f.b[0] / exact - 1.0).abs());
            worst[1] = worst[1].max((f.b[1] / exact).abs());
        }
    }
    // Probe at the centre too.
    let centre = solution.probe([0.0, 0.0]).unwrap();
    (worst, centre.b[0] / exact - 1.0)
}

#[test]
fn p1_cylinder_field_is_uniform_and_amplified() {
    let (worst, centre) = inside_field(ElementOrder::P1, 100.0);
    eprintln!("P1: worst {worst:?}, centre {centre:.2e}");
    assert!(worst[0] < 0.005 && worst[1] < 0.002, "{worst:?}");
    assert!(centre.abs() < 0.003);
}

#[test]
fn p2_cylinder_field_is_uniform_and_amplified() {
    for mu_r in [3.0, 1000.0] {
        let (worst, centre) = inside_field(ElementOrder::P2, mu_r);
        eprintln!("P2 μr {mu_r}: worst {worst:?}, centre {centre:.2e}");
        assert!(worst[0] < 5e-4 && worst[1] < 1e-4, "{worst:?}");
        assert!(centre.abs() < 5e-4);
    }
}
