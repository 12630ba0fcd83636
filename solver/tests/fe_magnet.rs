//! A permanent magnet in a closed, highly permeable iron circuit.
//!
//! Reference: Ampère's law around the circuit, ∮H·dl = 0 with no current:
//! with H ≈ 0 in iron of μr → ∞, the magnet's H is ≈ 0 too, so its flux
//! density equals its remanence, B = Br along the magnetization (e.g.
//! Griffiths, Introduction to Electrodynamics, §6.3, or any magnetic
//! circuit text). With iron μr = 10⁵ the correction is below 10⁻³.

use fluxwright_solver::fe::structured::rectangle;
use fluxwright_solver::material::Material;
use fluxwright_solver::nonlinear::{solve, NewtonOptions};
use fluxwright_solver::problem::*;

#[test]
fn magnet_in_closed_iron_carries_its_remanence() {
    let lines: Vec<f64> = (0..=40).map(|i| -2.0 + 0.1 * i as f64).collect();
    let magnet = |p: [f64; 2]| p[0].abs() < 0.5 && p[1].abs() < 0.5;
    let mesh = rectangle(&lines, &lines, |c| u32::from(!magnet(c)));
    let br = 1.2;
    for (angle_deg, order) in [
        (0.0f64, ElementOrder::P1),
        (0.0, ElementOrder::P2),
        (90.0, ElementOrder::P2),
        (210.0, ElementOrder::P1),
    ] {
        let theta = angle_deg.to_radians();
        let problem = Problem {
            mesh: &mesh,
            length_scale_m: 0.01,
            symmetry: Symmetry::Planar { depth_m: 0.05 },
            order,
            regions: vec![
                RegionProps::of(Material::Magnet {
                    remanence_t: br,
                    recoil_mu_r: 1.05,
                    direction_rad: theta,
                }),
                RegionProps::of(Material::Linear { mu_r: 1e5 }),
                RegionProps::air(),
            ],
            boundary: BoundarySpec::uniform(EdgeCondition::ZeroPotential),
            source: None,
        };
        let s = solve(&problem, &NewtonOptions::default()).unwrap();
        let b = s.probe([0.0, 0.0]).unwrap().b;
        eprintln!("{order:?} {angle_deg}°: B = {b:?}");
        assert!((b[0] - br * theta.cos()).abs() < 2e-3 * br, "{b:?}");
        assert!((b[1] - br * theta.sin()).abs() < 2e-3 * br, "{b:?}");
        // The stored energy of a magnet at H = 0 is ≈ 0 (B on its remanence).
        assert!(
            s.energy().abs()
                < 1e-3 * 0.5 * br * br / fluxwright_solver::material::MU0 * 1e-4 * 0.05
        );
    }
}
