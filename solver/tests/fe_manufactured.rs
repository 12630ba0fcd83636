//! Manufactured solutions: measured L² convergence rates of the potential.
//!
//! Reference: a priori estimates for Lagrange elements of degree p on
//! smooth solutions, ‖u − u_h‖_L² = O(h^{p+1}) (e.g. Brenner & Scott, The
//! Mathematical Theory of Finite Element Methods, Thm. 5.7.6 with the
//! Aubin-Nitsche argument): rate 2 for P1 and 3 for P2. The rate is the
//! least-squares slope of log error against log h over three meshes, as in
//! the convergence tests of general-purpose FE libraries.

use fluxwright_solver::fe::structured::rectangle;
use fluxwright_solver::material::NU0;
use fluxwright_solver::nonlinear::{solve, NewtonOptions};
use fluxwright_solver::problem::*;
use std::f64::consts::PI;
use std::sync::Arc;

fn lines(n: usize) -> Vec<f64> {
    (0..=n).map(|i| i as f64 / n as f64).collect()
}

fn slope(h: &[f64], e: &[f64]) -> f64 {
    let x: Vec<f64> = h.iter().map(|v| v.ln()).collect();
    let y: Vec<f64> = e.iter().map(|v| v.ln()).collect();
    let (mx, my) = (x.iter().sum::<f64>() / 3.0, y.iter().sum::<f64>() / 3.0);
    let sxy: f64 = x.iter().zip(&y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    sxy / sxx
}

/// Errors on meshes of 1/n for n in `ns`, for a problem on the unit square
/// with zero potential around it.
fn errors(
    order: ElementOrder,
    symmetry: Symmetry,
    ns: &[usize],
    exact: fn([f64; 2]) -> f64,
    source: fn([f64; 2]) -> f64,
) -> Vec<f64> {
    ns.iter()
        .map(|&n| {
            let mesh = rectangle(&lines(n), &lines(n), |_| 0);
            let problem = Problem {
                mesh: &mesh,
                length_scale_m: 1.0,
                symmetry,
                order,
                regions: vec![RegionProps::air(), RegionProps::air()],
                boundary: BoundarySpec::uniform(EdgeCondition::ZeroPotential),
                source: Some(Arc::new(source)),
            };
            let s = solve(&problem, &NewtonOptions::default()).unwrap();
            assert!(s.report.converged);
            s.potential_l2_error(exact)
        })
        .collect()
}

// Planar: A = sin(πx) sin(πy), so J = −ν0 ΔA = 2π² ν0 A.
fn planar_exact(p: [f64; 2]) -> f64 {
    (PI * p[0]).sin() * (PI * p[1]).sin()
}
fn planar_source(p: [f64; 2]) -> f64 {
    2.0 * PI * PI * NU0 * planar_exact(p)
}

// Axisymmetric: A_φ = r sin(πr) sin(πz) (zero on the axis and the square's
// edges). J_φ = (∇×ν0∇×A)_φ = −ν0 (A_rr + A_r/r − A/r² + A_zz)
// = −ν0 sin(πz) (3π cos(πr) − 2π² r sin(πr)).
fn axi_exact(p: [f64; 2]) -> f64 {
    p[0] * (PI * p[0]).sin() * (PI * p[1]).sin()
}
fn axi_source(p: [f64; 2]) -> f64 {
    let (r, z) = (p[0], p[1]);
    -NU0 * (PI * z).sin() * (3.0 * PI * (PI * r).cos() - 2.0 * PI * PI * r * (PI * r).sin())
}

#[test]
fn planar_rates_are_two_and_three() {
    let ns = [8, 16, 32];
    let h: Vec<f64> = ns.iter().map(|&n| 1.0 / n as f64).collect();
    let planar = Symmetry::Planar { depth_m: 1.0 };
    let e1 = errors(ElementOrder::P1, planar, &ns, planar_exact, planar_source);
    let e2 = errors(ElementOrder::P2, planar, &ns, planar_exact, planar_source);
    let (r1, r2) = (slope(&h, &e1), slope(&h, &e2));
    eprintln!("planar P1 {e1:?} rate {r1:.3}; P2 {e2:?} rate {r2:.3}");
    assert!((r1 - 2.0).abs() < 0.1, "P1 rate {r1}");
    assert!((r2 - 3.0).abs() < 0.15, "P2 rate {r2}");
}

#[test]
fn axisymmetric_rates_are_two_and_three() {
    let ns = [8, 16, 32];
    let h: Vec<f64> = ns.iter().map(|&n| 1.0 / n as f64).collect();
    let e1 = errors(
        ElementOrder::P1,
        Symmetry::Axisymmetric,
        &ns,
        axi_exact,
        axi_source,
    );
    let e2 = errors(
        ElementOrder::P2,
        Symmetry::Axisymmetric,
        &ns,
        axi_exact,
        axi_source,
    );
    let (r1, r2) = (slope(&h, &e1), slope(&h, &e2));
    eprintln!("axisymmetric P1 {e1:?} rate {r1:.3}; P2 {e2:?} rate {r2:.3}");
    assert!((r1 - 2.0).abs() < 0.1, "P1 rate {r1}");
    assert!((r2 - 3.0).abs() < 0.15, "P2 rate {r2}");
}
