//! The Zienkiewicz-Zhu error estimate and error-driven adaptation against
//! fields known in closed form.
//!
//! Each case compares the estimated relative energy error
//! η = sqrt(Σ η_K² / ∫ν|B_h|²) with the true one, sqrt(∫ν|B − B_h|² /
//! ∫ν|B|²), computed from the analytic B. The requirement that the estimate
//! lie within a factor of 3 of the true error is the project's own
//! acceptance bound (issue 5); estimates of this kind are asymptotically
//! exact on smooth solutions (Zienkiewicz & Zhu, Int. J. Numer. Meth. Eng.
//! 24 (1987) 337–357), so a factor of 3 is a loose bound.

use fluxwright_solver::adapt::{mesh_and_solve_adaptive, AdaptRound};
use fluxwright_solver::field::Solution;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::post::estimate::{relative_energy_error, zienkiewicz_zhu};
use fluxwright_solver::progress::Silent;
use fluxwright_solver::{nonlinear, study};
use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

/// Wire radius, outer radius (mm) and current (A) of the conductor case.
const WIRE_MM: f64 = 10.0;
const OUTER_MM: f64 = 30.0;
const CURRENT: f64 = 100.0;

/// A long round conductor in a zero-potential circle.
fn conductor_model(order: u8, size: f64, extra: &str) -> Model {
    let text = format!(
        r#"
        [model]
        element_order = {order}
        [mesh]
        max_size = {size}
        {extra}
        [[shape]]
        name = "wire"
        circle = {{ center = [0, 0], radius = {WIRE_MM} }}
        current = {CURRENT}
        [outer]
        shape = {{ circle = {{ center = [0, 0], radius = {OUTER_MM} }} }}
        condition = "zero-potential"
        "#
    );
    Model::from_toml_str(&text, &ModelSource::new("conductor.toml")).expect("valid model")
}

/// B of the conductor (T) at `p` (mm) in a triangle of `region`.
/// Reference: Ampère's law (e.g. Griffiths, Introduction to
/// Electrodynamics, ch. 5): B = μ0 I r / (2π a²) inside, μ0 I / (2π r)
/// outside, counter-clockwise; a concentric zero-potential circle changes
/// nothing. The region decides which formula (the meshed wire is a polygon).
fn conductor_b(region: u32, p: [f64; 2]) -> [f64; 2] {
    let (x, y) = (p[0] * 1e-3, p[1] * 1e-3);
    let r2 = x * x + y * y;
    let a = WIRE_MM * 1e-3;
    let k = if region == 0 {
        MU0 * CURRENT / (2.0 * PI * a * a)
    } else {
        MU0 * CURRENT / (2.0 * PI * r2)
    };
    [-k * y, k * x]
}

/// Permeable cylinder in a uniform field: radius, outer radius (mm), μr, B0.
const CYL_MM: f64 = 10.0;
const CYL_OUTER_MM: f64 = 40.0;
const CYL_MU: f64 = 50.0;
const B0: f64 = 0.5;

fn cylinder_model(order: u8, size: f64) -> Model {
    let text = format!(
        r#"
        [model]
        element_order = {order}
        [mesh]
        max_size = {size}
        [materials.iron]
        relative_permeability = {CYL_MU}
        [[shape]]
        name = "rod"
        circle = {{ center = [0, 0], radius = {CYL_MM} }}
        material = "iron"
        [outer]
        shape = {{ circle = {{ center = [0, 0], radius = {CYL_OUTER_MM} }} }}
        condition = "uniform-field"
        field = [{B0}, 0]
        "#
    );
    Model::from_toml_str(&text, &ModelSource::new("cylinder.toml")).expect("valid model")
}

/// B of the cylinder (T). Reference: separation of variables for the 2D
/// Laplace equation (cf. Jackson, Classical Electrodynamics, 3rd ed.,
/// §5.11–5.12, in its 2D form): A = C r sinθ inside and (D r + E/r) sinθ
/// outside; continuity of A and H_θ at r = a and A = B0 R sinθ at r = R
/// give D = B0 / (1 + k a²/R²), k = (μr − 1)/(μr + 1), C = 2μr/(μr + 1)·D,
/// E = (C − D) a². Then B = (C, 0) inside and
/// B = (D + E (x² − y²)/r⁴, 2E xy/r⁴) outside.
fn cylinder_b(region: u32, p: [f64; 2]) -> [f64; 2] {
    let (a, big_r) = (CYL_MM, CYL_OUTER_MM);
    let k = (CYL_MU - 1.0) / (CYL_MU + 1.0);
    let d = B0 / (1.0 + k * (a / big_r).powi(2));
    let c = 2.0 * CYL_MU / (CYL_MU + 1.0) * d;
    if region == 0 {
        return [c, 0.0];
    }
    let e = (c - d) * a * a;
    let (x, y) = (p[0], p[1]);
    let r4 = (x * x + y * y).powi(2);
    [d + e * (x * x - y * y) / r4, 2.0 * e * x * y / r4]
}

/// Permeable sphere in a uniform axial field (axisymmetric): radius and
/// outer radius (mm), μr as the cylinder's.
const SPHERE_MM: f64 = 10.0;
const SPHERE_OUTER_MM: f64 = 40.0;

fn sphere_model(order: u8, size: f64) -> Model {
    let text = format!(
        r#"
        [model]
        symmetry = "axisymmetric"
        element_order = {order}
        [mesh]
        max_size = {size}
        [materials.iron]
        relative_permeability = {CYL_MU}
        [[shape]]
        name = "ball"
        sector = {{ center = [0, 0], inner_radius = 0, outer_radius = {SPHERE_MM}, start_angle = -90, end_angle = 90 }}
        material = "iron"
        [outer]
        shape = {{ sector = {{ center = [0, 0], inner_radius = 0, outer_radius = {SPHERE_OUTER_MM}, start_angle = -90, end_angle = 90 }} }}
        condition = "uniform-field"
        field = [0, {B0}]
        "#
    );
    Model::from_toml_str(&text, &ModelSource::new("sphere.toml")).expect("valid model")
}

/// B = (B_r, B_z) of the sphere (T) at `p` = (r, z) in mm. Reference:
/// separation of variables in spherical coordinates (s, θ) (Jackson,
/// Classical Electrodynamics, 3rd ed., §5.11–5.12): A_φ = C s sinθ / 2
/// inside and (D s / 2 + E / s²) sinθ outside; continuity of A_φ and H_θ at
/// s = a and A_φ = B0 R sinθ / 2 at s = R give C = 3μr/(μr + 2)·D,
/// E = (C − D) a³ / 2, D = B0 / (1 + 2(μr − 1)/(μr + 2)·a³/R³). Then B =
/// (0, C) inside and, outside, B_r = 3E sinθ cosθ / s³,
/// B_z = D + E (3cos²θ − 1) / s³ (a uniform field plus a dipole).
fn sphere_b(region: u32, p: [f64; 2]) -> [f64; 2] {
    let (a, big_r) = (SPHERE_MM, SPHERE_OUTER_MM);
    let mu = CYL_MU;
    let d = B0 / (1.0 + 2.0 * (mu - 1.0) / (mu + 2.0) * (a / big_r).powi(3));
    let c = 3.0 * mu / (mu + 2.0) * d;
    if region == 0 {
        return [0.0, c];
    }
    let e = (c - d) * a.powi(3) / 2.0;
    let s = p[0].hypot(p[1]);
    let (sin, cos) = (p[0] / s, p[1] / s);
    let s3 = s.powi(3);
    [
        3.0 * e * sin * cos / s3,
        d + e * (3.0 * cos * cos - 1.0) / s3,
    ]
}

/// The arcs' chord sagitta, as a fraction of the radius, for these tests:
/// fine enough that the polygons standing in for the circles add an error
/// well below the discretisation error that the estimate measures (with
/// the default 2e-3, a P2 mesh of size 1 mm here is off by about 1e-3
/// through the polygons alone; the estimate cannot see that error).
const FINE_CHORDS: f64 = 2e-5;

fn fine(mut model: Model) -> Model {
    model.mesh.chord_fraction = FINE_CHORDS;
    model
}

/// (estimate, true error) of one solve.
fn solve(model: &Model, exact: fn(u32, [f64; 2]) -> [f64; 2]) -> (f64, f64) {
    let mm = study::mesh_for(model).expect("meshes");
    let setup = study::problem(model, &mm.mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    assert!(solution.report.converged);
    let results = study::results(model, &mm.mesh, &setup, &solution, 0.0);
    let eta = zienkiewicz_zhu(&solution).relative();
    assert_eq!(results.solve.error_estimate, Some(eta));
    (eta, true_error(&solution, exact))
}

fn true_error(solution: &Solution, exact: fn(u32, [f64; 2]) -> [f64; 2]) -> f64 {
    let regions = &solution.assembler().problem().mesh.regions;
    relative_energy_error(solution, |t, p| exact(regions[t], p))
}

/// Measured (this code, `cargo test -p fluxwright-solver --test estimate
/// -- --nocapture`): effectivity η/true 0.98–0.99 for P1 and 0.72–0.81
/// for P2, on every case and both sizes.
#[test]
fn estimate_is_within_a_factor_three_of_the_true_error() {
    type Case = (
        &'static str,
        fn(u8, f64) -> Model,
        fn(u32, [f64; 2]) -> [f64; 2],
    );
    let cases: [Case; 3] = [
        ("conductor", |o, h| conductor_model(o, h, ""), conductor_b),
        ("cylinder", cylinder_model, cylinder_b),
        ("sphere (axisymmetric)", sphere_model, sphere_b),
    ];
    for (name, model, exact) in cases {
        for order in [1u8, 2] {
            let mut last = f64::INFINITY;
            for size in [4.0, 2.0] {
                let (eta, err) = solve(&fine(model(order, size)), exact);
                let effectivity = eta / err;
                eprintln!(
                    "{name} P{order} h = {size} mm: estimate {eta:.3e}, true {err:.3e}, \
                     effectivity {effectivity:.3}"
                );
                // Issue 5's acceptance bound.
                assert!(
                    (1.0 / 3.0..=3.0).contains(&effectivity),
                    "{name} P{order} h = {size}: estimate {eta:.3e} vs true {err:.3e}"
                );
                // A finer mesh has a smaller true error (a priori estimates:
                // O(h^p) in the energy norm), and the estimate follows it.
                assert!(
                    eta < 0.8 * last,
                    "{name} P{order}: {eta:.3e} after {last:.3e}"
                );
                last = eta;
            }
        }
    }
}

/// The go/return wire pair of `kelvin_planar.rs` with an open boundary.
fn wire_pair_model() -> Model {
    let text = r#"
        [model]
        element_order = 2
        [mesh]
        max_size = 4
        [[shape]]
        name = "go"
        circle = { center = [-10, 0], radius = 2 }
        current = 100
        mesh_size = 0.5
        [[shape]]
        name = "return"
        circle = { center = [10, 0], radius = 2 }
        current = -100
        mesh_size = 0.5
        [outer]
        shape = { circle = { center = [0, 0], radius = 40 } }
        condition = "open"
        "#;
    Model::from_toml_str(text, &ModelSource::new("pair.toml")).expect("valid model")
}

/// B of the pair (T) at `p` (mm) in triangle region `region`: Ampère's law
/// for each wire (Griffiths, as above; inside a wire μ0 I r / 2πa²),
/// superposed; exact in free space, which the open boundary models.
fn wire_pair_b(region: u32, p: [f64; 2]) -> [f64; 2] {
    let wires = [([-10.0, 0.0], 100.0), ([10.0, 0.0], -100.0)];
    let a = 2e-3;
    let mut b = [0.0; 2];
    for (w, &(c, current)) in wires.iter().enumerate() {
        let d = [(p[0] - c[0]) * 1e-3, (p[1] - c[1]) * 1e-3];
        let r2 = d[0] * d[0] + d[1] * d[1];
        let k = if region == w as u32 {
            MU0 * current / (2.0 * PI * a * a)
        } else {
            MU0 * current / (2.0 * PI * r2)
        };
        b[0] += -k * d[1];
        b[1] += k * d[0];
    }
    b
}

#[test]
fn with_an_open_boundary_only_the_model_is_counted() {
    let model = wire_pair_model();
    let mm = study::mesh_for(&model).expect("meshes");
    assert!(
        mm.mesh.triangles.len() > mm.model_triangles,
        "the exterior image is meshed"
    );
    let setup = study::problem(&model, &mm.mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    let estimate = zienkiewicz_zhu(&solution);
    assert!(estimate.indicators_sq[mm.model_triangles..]
        .iter()
        .all(|&e| e == 0.0));
    assert!(estimate.indicators_sq[..mm.model_triangles]
        .iter()
        .all(|&e| e > 0.0));
    let err = true_error(&solution, wire_pair_b);
    let effectivity = estimate.relative() / err;
    // Measured: 0.74 (the default chords of the 2 mm wires add to the true
    // error here).
    eprintln!(
        "wire pair: estimate {:.3e}, true {err:.3e}",
        estimate.relative()
    );
    assert!(
        (1.0 / 3.0..=3.0).contains(&effectivity),
        "effectivity {effectivity}"
    );
}

/// Run the adaptation, recording each round with its true error.
fn adapt_rounds(model: &Model) -> Vec<(AdaptRound, f64)> {
    let mut seen = Vec::new();
    let rounds = mesh_and_solve_adaptive(
        model,
        &Default::default(),
        &Silent,
        |r, s| seen.push((*r, true_error(s, conductor_b))),
        |a| a.rounds,
    )
    .expect("adapts");
    assert_eq!(rounds, seen.iter().map(|s| s.0).collect::<Vec<_>>());
    seen
}

/// Measured: P1 8.0e-2 → 1.8e-2 → 7.1e-3 (true 8.3e-2 → 1.8e-2 → 7.2e-3);
/// P2 4.4e-3 → 2.2e-4 → 5.3e-5 (true 5.2e-3 → 2.9e-4 → 1.4e-4, the last
/// nearing the chords' share).
#[test]
fn adaptive_rounds_reduce_the_estimate_and_the_true_error() {
    for (order, target) in [(1u8, 0.01), (2, 1e-4)] {
        let extra = format!("adapt = 2\ntarget_error = {target}");
        let rounds = adapt_rounds(&fine(conductor_model(order, 8.0, &extra)));
        for (r, err) in &rounds {
            eprintln!("P{order} {r:?}, true {err:.3e}");
        }
        assert_eq!(rounds.len(), 3, "P{order}: round 0 and two adaptive rounds");
        for w in rounds.windows(2) {
            let ((a, ea), (b, eb)) = (w[0], w[1]);
            assert_eq!(b.round, a.round + 1);
            assert!(b.triangles > a.triangles);
            assert!(
                b.error_estimate < 0.7 * a.error_estimate,
                "P{order}: {a:?} -> {b:?}"
            );
            assert!(eb < 0.7 * ea, "P{order}: true error {ea:.3e} -> {eb:.3e}");
        }
    }
}

#[test]
fn adaptation_stops_once_the_target_is_met() {
    // The first mesh already beats a 50 % target: one round only.
    let rounds = adapt_rounds(&conductor_model(2, 8.0, "adapt = 3\ntarget_error = 0.5"));
    assert_eq!(rounds.len(), 1);
    assert!(rounds[0].0.error_estimate < 0.5);
}

#[test]
fn adapt_zero_is_the_plain_solve() {
    let model = conductor_model(2, 4.0, "");
    assert_eq!(model.mesh.adapt, 0);
    let mm = study::mesh_for(&model).expect("meshes");
    let setup = study::problem(&model, &mm.mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    let plain = study::results(&model, &mm.mesh, &setup, &solution, 0.0);
    let (adapted, rounds) = mesh_and_solve_adaptive(
        &model,
        &Default::default(),
        &Silent,
        |_, _| (),
        |a| {
            assert_eq!(a.mesh.mesh.nodes, mm.mesh.nodes);
            assert_eq!(a.mesh.mesh.triangles, mm.mesh.triangles);
            assert!(a.stopped.is_none());
            (
                study::results(&model, &a.mesh.mesh, a.setup, a.solution, 0.0),
                a.rounds,
            )
        },
    )
    .expect("solves");
    assert_eq!(rounds.len(), 1);
    assert_eq!(adapted.energy_j.to_bits(), plain.energy_j.to_bits());
    assert_eq!(adapted.solve.error_estimate, plain.solve.error_estimate);
    assert_eq!(
        rounds[0].error_estimate,
        plain.solve.error_estimate.unwrap()
    );
    assert!(
        adapted.adapt.is_empty(),
        "no `adapt` key unless the model adapts"
    );
}
