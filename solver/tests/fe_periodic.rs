//! Periodic, anti-periodic and flux-normal edges against closed-form
//! solutions of −ΔA = μ0 J (separation of variables, e.g. Haberman, Applied
//! Partial Differential Equations, ch. 7; the functions are checked by
//! substitution in the comments).

use fluxwright_solver::fe::structured::rectangle;
use fluxwright_solver::material::{Material, MU0, NU0};
use fluxwright_solver::nonlinear::{solve, NewtonOptions};
use fluxwright_solver::problem::*;
use std::f64::consts::PI;
use std::sync::Arc;

fn uniform(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..=n)
        .map(|i| lo + (hi - lo) * i as f64 / n as f64)
        .collect()
}

fn planar(
    mesh: &fluxwright_mesher::Mesh,
    boundary: BoundarySpec,
    source: Option<Arc<fluxwright_solver::fe::SourceFn>>,
    j: f64,
) -> Problem<'_> {
    Problem {
        mesh,
        length_scale_m: 1.0,
        symmetry: Symmetry::Planar { depth_m: 1.0 },
        order: ElementOrder::P2,
        regions: vec![
            RegionProps {
                material: Material::AIR,
                current_density_a_per_m2: j,
            },
            RegionProps::air(),
        ],
        boundary,
        source,
    }
}

#[test]
fn flux_normal_sides_give_the_slab_solution() {
    // Uniform J between A = 0 at y = 0 and y = H, flux-normal at x = 0, W:
    // A = μ0 J y (H − y)/2 (−A'' = μ0 J). P2 holds it exactly.
    let (w, h, j) = (1.0, 0.5, 1e6);
    let mesh = rectangle(&uniform(0.0, w, 7), &uniform(0.0, h, 5), |_| 0);
    let boundary = BoundarySpec {
        default: EdgeCondition::ZeroPotential,
        segments: vec![
            (1, EdgeCondition::FluxNormal),
            (3, EdgeCondition::FluxNormal),
        ],
    };
    let problem = planar(&mesh, boundary, None, j);
    let s = solve(&problem, &NewtonOptions::default()).unwrap();
    let err = s.potential_l2_error(|p| MU0 * j * p[1] * (h - p[1]) / 2.0);
    let scale = MU0 * j * h * h / 8.0;
    assert!(err < 1e-10 * scale, "{err}");
}

/// A = sin(kx + φ) g(y) with g = (μ0J0/k²)(1 − cosh(k(y − H/2))/cosh(kH/2))
/// solves −ΔA = μ0 J0 sin(kx + φ) with A = 0 at y = 0, H:
/// −A_xx = k² A, −A_yy = −sin(·) g'' and g'' = k² g − μ0 J0.
fn strip_exact(p: [f64; 2], k: f64, phase: f64, h: f64, j0: f64) -> f64 {
    let g = MU0 * j0 / (k * k) * (1.0 - (k * (p[1] - h / 2.0)).cosh() / (k * h / 2.0).cosh());
    (k * p[0] + phase).sin() * g
}

#[test]
fn translation_periodic_and_anti_periodic_strips() {
    let (w, h, j0, phase) = (1.0, 0.4, 1e6, 0.7);
    let k = 2.0 * PI / w;
    let scale = MU0 * j0 / (k * k);
    for (width, condition) in [
        (w, EdgeCondition::Periodic { partner: 1 }),
        (w / 2.0, EdgeCondition::AntiPeriodic { partner: 1 }),
    ] {
        let n = (24.0 * width / w) as usize;
        // Uneven spacing in x: nodes still match across the period.
        let xs: Vec<f64> = (0..=n)
            .map(|i| {
                let t = i as f64 / n as f64;
                width * (t + 0.05 * (2.0 * PI * t).sin())
            })
            .collect();
        let mesh = rectangle(&xs, &uniform(0.0, h, 10), |_| 0);
        let boundary = BoundarySpec {
            default: EdgeCondition::ZeroPotential,
            segments: vec![(3, condition)],
        };
        let source = move |p: [f64; 2]| j0 * (k * p[0] + phase).sin();
        let problem = planar(&mesh, boundary, Some(Arc::new(source)), 0.0);
        let s = solve(&problem, &NewtonOptions::default()).unwrap();
        let exact = |p: [f64; 2]| strip_exact(p, k, phase, h, j0);
        let err = s.potential_l2_error(exact) / (scale * (width * h).sqrt());
        eprintln!("{condition:?}: relative L2 error {err:.2e}");
        assert!(err < 1e-3, "{condition:?}: {err}");
        // The same problem with flux-normal sides is wrong: the condition
        // matters.
        let wrong = planar(
            &mesh,
            BoundarySpec {
                default: EdgeCondition::ZeroPotential,
                segments: vec![
                    (3, EdgeCondition::FluxNormal),
                    (1, EdgeCondition::FluxNormal),
                ],
            },
            Some(Arc::new(source)),
            0.0,
        );
        let s = solve(&wrong, &NewtonOptions::default()).unwrap();
        assert!(s.potential_l2_error(exact) / (scale * (width * h).sqrt()) > 0.05);
    }
}

#[test]
fn rotation_periodic_sectors() {
    // Annular sector r1 < r < r2, 0 < θ < Θ with A = 0 on both arcs, built
    // by mapping a rectangle in (r, θ). A = s(r) cos(pθ + φ) with
    // s = sin(π(r − r1)/L) solves −ΔA = μ0 J for
    // J = −ν0 (s'' + s'/r − p² s/r²) cos(pθ + φ) (polar Laplacian).
    let (r1, r2, phase) = (1.0, 2.0, 0.3);
    let l = r2 - r1;
    for (p, condition) in [
        (4.0, EdgeCondition::Periodic { partner: 0 }),
        (2.0, EdgeCondition::AntiPeriodic { partner: 0 }),
    ] {
        let sector = PI / 2.0;
        // 48 chords per arc keep the polygonal-arc error (sagitta) below 1e-3.
        let mut mesh = rectangle(&uniform(r1, r2, 12), &uniform(0.0, sector, 48), |_| 0);
        for q in &mut mesh.nodes {
            let (r, t) = (q[0], q[1]);
            *q = [r * t.cos(), r * t.sin()];
        }
        let boundary = BoundarySpec {
            default: EdgeCondition::ZeroPotential,
            segments: vec![(2, condition)],
        };
        let source = move |x: [f64; 2]| {
            let (r, t) = (x[0].hypot(x[1]), x[1].atan2(x[0]));
            let a = PI / l;
            let s = (a * (r - r1)).sin();
            let ds = a * (a * (r - r1)).cos();
            let d2s = -a * a * s;
            -NU0 * (d2s + ds / r - p * p * s / (r * r)) * (p * t + phase).cos()
        };
        let exact = move |x: [f64; 2]| {
            let (r, t) = (x[0].hypot(x[1]), x[1].atan2(x[0]));
            (PI * (r - r1) / l).sin() * (p * t + phase).cos()
        };
        let problem = planar(&mesh, boundary, Some(Arc::new(source)), 0.0);
        let s = solve(&problem, &NewtonOptions::default()).unwrap();
        let area = sector / 2.0 * (r2 * r2 - r1 * r1);
        let err = s.potential_l2_error(exact) / area.sqrt();
        eprintln!("{condition:?}: relative L2 error {err:.2e}");
        assert!(err < 1e-3, "{condition:?}: {err}");
    }
}
