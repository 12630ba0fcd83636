//! The open boundary (Kelvin transformation), axisymmetric: a current ring
//! and a magnetized sphere against their free-space fields, through the
//! whole pipeline (model text → mesh with exterior → solve). Each check
//! names its source.

use fluxwright_solver::field::Solution;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::{nonlinear, study};
use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

/// Solve `text` and hand the mesh, the solution and the results to `inspect`.
fn solve<R>(
    text: &str,
    inspect: impl FnOnce(&study::ModelMesh, &Solution, &study::SolveResults) -> R,
) -> R {
    let model = Model::from_toml_str(text, &ModelSource::new("kelvin.toml")).expect("valid model");
    let mesh = study::mesh_for(&model).expect("meshes");
    mesh.mesh.check().expect("valid combined mesh");
    let setup = study::problem(&model, &mesh.mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    let results = study::results(&model, &mesh.mesh, &setup, &solution, 0.0);
    assert!(results.solve.converged);
    inspect(&mesh, &solution, &results)
}

fn relative_error(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

/// Ring of mean radius 10 mm, round section of radius 0.5 mm, 100 A, inside
/// a half-circle of radius 30 mm (3× the ring radius).
fn ring_model(condition: &str) -> String {
    format!(
        r#"
        [model]
        symmetry = "axisymmetric"
        element_order = 2
        [mesh]
        max_size = 1.5
        [[shape]]
        name = "ring"
        circle = {{ center = [10, 0], radius = 0.5 }}
        current = 100
        mesh_size = 0.15
        [outer]
        shape = {{ sector = {{ center = [0, 0], inner_radius = 0, outer_radius = 30, start_angle = -90, end_angle = 90 }} }}
        condition = "{condition}"
        "#
    )
}

/// On-axis Bz of the ring, T: the Biot-Savart field of one circular loop,
/// Bz = μ0 I a²/2(a² + z²)^{3/2} (e.g. Griffiths, Introduction to
/// Electrodynamics, 4th ed., ex. 5.6), superposed over the round section
/// with uniform current density (midpoint rule, 60 × 60 in polar
/// coordinates).
fn ring_axis_bz(z: f64) -> f64 {
    let (a, b, i) = (10e-3, 0.5e-3, 100.0);
    let n = 60;
    let mut sum = 0.0;
    let mut weight = 0.0;
    for k in 0..n {
        let s = b * (k as f64 + 0.5) / n as f64;
        for j in 0..n {
            let t = 2.0 * PI * (j as f64 + 0.5) / n as f64;
            let (r, zz) = (a + s * t.cos(), s * t.sin());
            let w = s;
            sum += w * MU0 * r * r / (2.0 * (r * r + (z - zz).powi(2)).powf(1.5));
            weight += w;
        }
    }
    i * sum / weight
}

fn ring_axis_errors(condition: &str) -> (Vec<f64>, f64) {
    solve(&ring_model(condition), |_, solution, results| {
        let errors = [0.0, 10.0, 20.0]
            .iter()
            .map(|&z| {
                let b = solution.probe([0.0, z]).expect("on the axis").b;
                relative_error(b[1], ring_axis_bz(z * 1e-3))
            })
            .collect();
        (errors, results.energy_j)
    })
}

#[test]
fn current_ring_on_axis_field_and_energy_with_an_open_half_circle() {
    let (open, w_open) = ring_axis_errors("open");
    println!("open: Bz errors at z = 0, a, 2a: {open:?}");
    for (z, e) in [0, 1, 2].iter().zip(&open) {
        assert!(*e < 0.01, "open: Bz at z = {z}a off by {:.3} %", 100.0 * e);
    }
    // A = 0 on the half-circle makes it a flux surface: the ring's dipole
    // field cannot leave, and the field on the axis drops (by about
    // (a/R)³ of the centre field, a superconducting sphere's image).
    let (closed, w_closed) = ring_axis_errors("zero-potential");
    println!("zero potential: {closed:?}");
    assert!(
        closed.iter().all(|&e| e > 0.03),
        "zero potential should be visibly worse: {closed:?}"
    );
    // Energy ½LI² with the self-inductance of a thin ring of round section
    // and uniform current, L = μ0 a (ln(8a/b) − 7/4) (Maxwell's formula;
    // e.g. Grover, Inductance Calculations, 1946; from memory), exact as
    // b/a → 0 (here b/a = 0.05).
    let (a, b, i): (f64, f64, f64) = (10e-3, 0.5e-3, 100.0);
    let want = 0.5 * MU0 * a * ((8.0 * a / b).ln() - 1.75) * i * i;
    let (e_open, e_closed) = ((w_open - want) / want, (w_closed - want) / want);
    println!("energy open {w_open} ({e_open:+.2e}), A = 0 {w_closed} ({e_closed:+.2e}), reference {want}");
    assert!(
        e_open.abs() < 0.005,
        "open: energy off by {:.3} %",
        100.0 * e_open
    );
    assert!(e_closed.abs() > 2.0 * e_open.abs());
}

/// A sphere of radius 10 mm magnetized along +z (Br = 1 T, recoil μr = 1)
/// inside a half-circle of radius 20 mm.
fn sphere_model(condition: &str) -> String {
    format!(
        r#"
        [model]
        symmetry = "axisymmetric"
        element_order = 2
        [mesh]
        max_size = 1
        [materials.magnet]
        relative_permeability = 1
        remanence = 1
        [[shape]]
        name = "ball"
        sector = {{ center = [0, 0], inner_radius = 0, outer_radius = 10, start_angle = -90, end_angle = 90 }}
        material = "magnet"
        magnetization_angle = 90
        [outer]
        shape = {{ sector = {{ center = [0, 0], inner_radius = 0, outer_radius = 20, start_angle = -90, end_angle = 90 }} }}
        condition = "{condition}"
        "#
    )
}

/// Free-space field of the uniformly magnetized sphere (radius a, μ0M = Br
/// along z), T: inside, B = (2/3) Br uniform; outside, the field of the dipole
/// m = (4/3)πa³M (Griffiths, 4th ed., ex. 6.1, and the dipole field, eq.
/// 5.89; equation number from memory).
fn sphere_b(p: [f64; 2]) -> [f64; 2] {
    let (a, br) = (10.0, 1.0);
    let r = p[0].hypot(p[1]);
    if r < a {
        return [0.0, 2.0 / 3.0 * br];
    }
    // B = (μ0 m / 4π r³)(3 (ẑ·r̂) r̂ − ẑ), μ0 m / 4π = Br a³ / 3.
    let k = br * a.powi(3) / 3.0 / r.powi(3);
    let (ur, uz) = (p[0] / r, p[1] / r);
    [k * 3.0 * uz * ur, k * (3.0 * uz * uz - 1.0)]
}

#[test]
fn magnetized_sphere_is_uniform_inside_and_a_dipole_outside() {
    // The exterior of a uniformly magnetized sphere is an exact dipole, so
    // the open boundary at only twice its radius must give the free-space
    // values; A = 0 there adds the uniform field of a superconducting
    // sphere's image, −(2/3) Br (a/R)³ = −Br/12 (12.5 % of the inside field).
    let inside = [[3.0, 0.0], [0.0, 5.0], [4.0, -6.0]];
    let near = [[0.0, 12.0], [13.0, 0.0], [9.0, 14.0]];
    let errors = |condition: &str| {
        solve(&sphere_model(condition), |mesh, solution, _| {
            let mut e: Vec<f64> = inside
                .iter()
                .chain(&near)
                .map(|&p| {
                    let (got, want) = (solution.probe(p).expect("inside").b, sphere_b(p));
                    (got[0] - want[0]).hypot(got[1] - want[1]) / want[0].hypot(want[1])
                })
                .collect();
            // Far outside, through the image: the dipole field at 1.5 to 5 R.
            if let Some(map) = mesh.exterior {
                for p in [[0.0, 30.0], [40.0, 0.0], [-0.0, -100.0], [60.0, 60.0]] {
                    let q = map.to_image(p).expect("outside");
                    let b_image = solution.probe(q).expect("inside the image").b;
                    let got = map.exterior_flux_density(
                        p,
                        b_image,
                        solution.assembler().problem().symmetry,
                    );
                    let want = sphere_b(p);
                    e.push((got[0] - want[0]).hypot(got[1] - want[1]) / want[0].hypot(want[1]));
                }
            }
            e
        })
    };
    let open = errors("open");
    println!("open: {open:?}");
    for e in &open {
        assert!(*e < 0.01, "open: {:.3} % off", 100.0 * e);
    }
    let closed = errors("zero-potential");
    println!("zero potential: {closed:?}");
    assert!(
        closed[..3].iter().all(|&e| e > 0.1),
        "inside field should drop by about 12.5 %"
    );
}
