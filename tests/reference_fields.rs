//! Whole-pipeline checks: model text → mesher → solver → results, against
//! analytic fields. Each check names its source.

use fluxwright::mesher;
use fluxwright::solver::model::{Model, ModelSource};
use fluxwright::solver::{nonlinear, study};

const MU0: f64 = 4.0e-7 * std::f64::consts::PI;

/// Solve a model given as text and hand the solved pieces to `inspect`.
fn solve<R>(
    text: &str,
    inspect: impl FnOnce(&Model, &fluxwright::solver::field::Solution, &study::SolveResults) -> R,
) -> R {
    let model =
        Model::from_toml_str(text, &ModelSource::new("reference.toml")).expect("valid model");
    let mesh = mesher::mesh(&model.mesh_input()).expect("meshes");
    mesh.check().expect("valid mesh");
    let setup = study::problem(&model, &mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    let results = study::results(&model, &mesh, &setup, &solution, 0.0);
    assert!(
        results.solve.converged,
        "did not converge: {:?}",
        results.solve
    );
    inspect(&model, &solution, &results)
}

fn relative_error(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

#[test]
fn long_round_conductor_follows_amperes_law_inside_and_outside() {
    // A 100 A wire of radius a = 5 mm, A = 0 on a circle 40 a away (B of a
    // round wire does not depend on where A = 0 is set, by symmetry).
    let text = r#"
        [model]
        element_order = 2
        [mesh]
        max_size = 40
        [[shape]]
        name = "wire"
        circle = { center = [0, 0], radius = 5 }
        current = 100
        mesh_size = 1
        [outer]
        shape = { circle = { center = [0, 0], radius = 200 } }
        condition = "zero-potential"
        [[probe]]
        name = "inside"
        at = [2.5, 0]
        [[probe]]
        name = "surface_out"
        at = [0, 7.5]
        [[probe]]
        name = "far"
        at = [-35.355339, -35.355339]
    "#;
    solve(text, |_, _, r| {
        let (i, a) = (100.0, 5e-3);
        // Ampère's law for a long round conductor with uniform current
        // (e.g. Griffiths, Introduction to Electrodynamics, 4th ed., ex. 5.10
        // and problem 5.14): B = μ0 I r / 2πa² inside, μ0 I / 2πr outside.
        let inside = MU0 * i * 2.5e-3 / (2.0 * std::f64::consts::PI * a * a);
        let out = |r: f64| MU0 * i / (2.0 * std::f64::consts::PI * r);
        let b = |name: &str| r.probes[name].b_magnitude_t;
        assert!(
            relative_error(b("inside"), inside) < 0.01,
            "inside {} vs {}",
            b("inside"),
            inside
        );
        assert!(
            relative_error(b("surface_out"), out(7.5e-3)) < 0.01,
            "{} vs {}",
            b("surface_out"),
            out(7.5e-3)
        );
        assert!(
            relative_error(b("far"), out(50e-3)) < 0.01,
            "{} vs {}",
            b("far"),
            out(50e-3)
        );
        // Direction: +z current circulates B counter-clockwise: at (0, +y)
        // B points along −x (right-hand rule).
        assert!(r.probes["surface_out"].b_t[0] < 0.0);
    });
}

#[test]
fn permeable_cylinder_in_a_uniform_field() {
    // A long cylinder (μr = 50, radius a = 10 mm) across a uniform field B0
    // = 0.1 T along x. Exact (unbounded) 2D result: uniform B inside equal to
    // 2μr/(μr + 1)·B0 (e.g. Jackson, Classical Electrodynamics, 3rd ed.,
    // problem 5.12's 2D analogue; Smythe, Static and Dynamic Electricity,
    // §4.09). The uniform field is applied on a circle 20 a away, which
    // perturbs the inside field by about (a/R)² = 0.25 %.
    let text = r#"
        [mesh]
        max_size = 20
        [materials.soft]
        relative_permeability = 50
        [[shape]]
        name = "cylinder"
        material = "soft"
        circle = { center = [0, 0], radius = 10 }
        mesh_size = 1.5
        [outer]
        shape = { circle = { center = [0, 0], radius = 200 } }
        condition = "uniform-field"
        field = [0.1, 0]
        [[probe]]
        name = "centre"
        at = [0, 0]
        [[probe]]
        name = "off_centre"
        at = [4, -5]
    "#;
    solve(text, |_, _, r| {
        let (mu_r, b0) = (50.0, 0.1);
        let want = 2.0 * mu_r / (mu_r + 1.0) * b0;
        for name in ["centre", "off_centre"] {
            let p = &r.probes[name];
            assert!(
                relative_error(p.b_t[0], want) < 0.01,
                "{name}: Bx {} vs {want}",
                p.b_t[0]
            );
            assert!(p.b_t[1].abs() < 0.01 * want, "{name}: By {}", p.b_t[1]);
        }
    });
}

#[test]
fn circular_current_ring_on_axis_field() {
    // A ring of radius a = 20 mm carrying I = 50 A (a thin round
    // conductor, 1 mm radius). On-axis field by the Biot-Savart law
    // (e.g. Griffiths, Introduction to Electrodynamics, 4th ed., ex. 5.6):
    // Bz = μ0 I a² / 2 (a² + z²)^(3/2). A = 0 on a half-circle 15 a away
    // (the ring's dipole field there is about 3e-4 of the centre field). An
    // air shape near the axis keeps the mesh there fine enough.
    let text = r#"
        [model]
        symmetry = "axisymmetric"
        [mesh]
        max_size = 40
        [[shape]]
        name = "near_axis"
        rectangle = { min = [0, -45], max = [30, 45] }
        mesh_size = 3
        [[shape]]
        name = "ring"
        circle = { center = [20, 0], radius = 1 }
        current = 50
        mesh_size = 0.3
        [outer]
        shape = { sector = { center = [0, 0], inner_radius = 0, outer_radius = 300, start_angle = -90, end_angle = 90 } }
        condition = "zero-potential"
        [[probe]]
        name = "centre"
        at = [0.001, 0]
        [[probe]]
        name = "z10"
        at = [0.001, 10]
        [[probe]]
        name = "z30"
        at = [0.001, -30]
    "#;
    solve(text, |_, _, r| {
        let (i, a) = (50.0, 20e-3);
        let bz = |z: f64| MU0 * i * a * a / (2.0 * (a * a + z * z).powf(1.5));
        for (name, z) in [("centre", 0.0), ("z10", 10e-3), ("z30", -30e-3)] {
            let got = r.probes[name].b_t[1];
            assert!(
                relative_error(got, bz(z)) < 0.01,
                "{name}: Bz {got} vs {}",
                bz(z)
            );
            assert!(
                r.probes[name].b_t[0].abs() < 0.01 * bz(z),
                "{name}: Br {}",
                r.probes[name].b_t[0]
            );
        }
    });
}

#[test]
fn finite_thin_solenoid_centre_field() {
    // A thin solenoid: 400 turns at 2 A in a 0.5 mm thick layer of mean
    // radius a = 10 mm and length L = 80 mm. Centre field of a finite
    // current sheet (integrating the ring formula over the length, e.g.
    // Griffiths, Introduction to Electrodynamics, 4th ed., problem 5.11):
    // B = μ0 N I / sqrt(L² + 4a²). The long-solenoid value μ0 N I / L is
    // 1.5 % higher for this L/a.
    let text = r#"
        [model]
        symmetry = "axisymmetric"
        [mesh]
        max_size = 50
        [windings.coil]
        turns = 400
        current = 2
        [[shape]]
        name = "layer"
        rectangle = { min = [9.75, -40], max = [10.25, 40] }
        winding = "coil"
        mesh_size = 0.5
        [outer]
        shape = { sector = { center = [0, 0], inner_radius = 0, outer_radius = 600, start_angle = -90, end_angle = 90 } }
        condition = "zero-potential"
        [[probe]]
        name = "centre"
        at = [0.001, 0]
    "#;
    solve(text, |_, _, r| {
        let (n, i, a, l): (f64, f64, f64, f64) = (400.0, 2.0, 10e-3, 80e-3);
        let want = MU0 * n * i / (l * l + 4.0 * a * a).sqrt();
        let got = r.probes["centre"].b_t[1];
        assert!(relative_error(got, want) < 0.005, "Bz {got} vs {want}");
        assert!(
            relative_error(got, MU0 * n * i / l) > 0.01,
            "finite length must show"
        );
    });
}
