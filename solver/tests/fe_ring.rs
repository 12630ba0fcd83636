//! A circular current loop, axisymmetric, inside a large zero-potential box.
//!
//! Reference: Biot-Savart law for a circular loop (e.g. Griffiths,
//! Introduction to Electrodynamics, Example 5.6): on the axis
//! B_z = μ0 I a² / (2 (a² + z²)^{3/2}). The loop here has a small square
//! cross-section (side a/10), which changes the on-axis field by O((s/a)²)
//! ≈ 10⁻³, and the box at 10 a adds a truncation error of order (a/R)³
//! ≈ 10⁻³ (dipole field); the tolerance allows for both.

use fluxwright_solver::fe::structured::{graded_lines, rectangle};
use fluxwright_solver::material::MU0;
use fluxwright_solver::nonlinear::{solve, NewtonOptions};
use fluxwright_solver::problem::*;

/// Grid lines over [lo, hi] with uniform spacing `h` on [c0, c1] and
/// geometric growth outside it.
fn lines(lo: f64, c0: f64, c1: f64, hi: f64, h: f64, growth: f64) -> Vec<f64> {
    let mut v: Vec<f64> = graded_lines(c0, lo, h, growth).into_iter().rev().collect();
    let n = ((c1 - c0) / h).round() as usize;
    v.extend((1..=n).map(|i| c0 + (c1 - c0) * i as f64 / n as f64));
    v.extend(graded_lines(c1, hi, h, growth).into_iter().skip(1));
    v
}

#[test]
fn on_axis_field_of_a_current_loop() {
    let (a, s, big) = (0.1, 0.01, 1.0);
    let current = 1000.0;
    // Uniform spacing s/2 over the loop and the probed stretch of axis,
    // graded beyond.
    let xs = lines(0.0, 0.0, a + s / 2.0, big, s / 2.0, 1.15);
    let ys = lines(-big, -a - s / 2.0, a + s / 2.0, big, s / 2.0, 1.15);
    let coil = |p: [f64; 2]| (p[0] - a).abs() < s / 2.0 && p[1].abs() < s / 2.0;
    let mesh = rectangle(&xs, &ys, |c| u32::from(!coil(c)));
    for order in [ElementOrder::P1, ElementOrder::P2] {
        let problem = Problem {
            mesh: &mesh,
            length_scale_m: 1.0,
            symmetry: Symmetry::Axisymmetric,
            order,
            regions: vec![
                RegionProps {
                    material: fluxwright_solver::material::Material::AIR,
                    current_density_a_per_m2: current / (s * s),
                },
                RegionProps::air(),
                RegionProps::air(),
            ],
            // The left edge (segment 3) is the axis: A_φ = 0 there anyway.
            boundary: BoundarySpec::uniform(EdgeCondition::ZeroPotential),
            source: None,
        };
        let solution = solve(&problem, &NewtonOptions::default()).unwrap();
        for z in [0.0, 0.5 * a, a] {
            let exact = MU0 * current * a * a / (2.0 * (a * a + z * z).powf(1.5));
            let on_axis = solution.probe([0.0, z]).unwrap();
            let near_axis = solution.probe([0.02 * a, z]).unwrap();
            eprintln!("{order:?} z = {z}: Bz {:.5e} (axis), {:.5e} (r = a/50), exact {exact:.5e}, Br {:.2e}", on_axis.b[1], near_axis.b[1], on_axis.b[0]);
            let tol = if order == ElementOrder::P1 {
                0.01
            } else {
                0.005
            };
            assert!(
                (on_axis.b[1] / exact - 1.0).abs() < tol,
                "{order:?} z = {z}"
            );
            assert!(
                (near_axis.b[1] / exact - 1.0).abs() < tol,
                "{order:?} z = {z}"
            );
            // On the axis B is axial by symmetry.
            assert!(on_axis.b[0].abs() < 1e-9 * exact);
        }
    }
}
