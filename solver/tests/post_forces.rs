//! Forces and torques on named shapes (weighted Maxwell stress tensor and
//! Coulomb's virtual work) through the whole pipeline: model text → mesher
//! → solver → post::force. Each check names its source.

use fluxwright_mesher::Mesh;
use fluxwright_solver::field::Solution;
use fluxwright_solver::material::MU0;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::nonlinear::{self, NewtonOptions};
use fluxwright_solver::post::force::{self, Band, ForceError};
use fluxwright_solver::problem::Problem;
use fluxwright_solver::study;
use std::f64::consts::PI;

/// Mesh and solve a model given as text, then hand the pieces to `inspect`.
fn solve<R>(text: &str, inspect: impl FnOnce(&Model, &Problem, &Solution) -> R) -> R {
    let model = Model::from_toml_str(text, &ModelSource::new("forces.toml")).expect("valid model");
    let mesh = fluxwright_mesher::mesh(&model.mesh_input()).expect("meshes");
    let setup = study::problem(&model, &mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &NewtonOptions::default()).expect("solves");
    assert!(solution.report.converged, "{:?}", solution.report);
    inspect(&model, &setup.problem, &solution)
}

/// The region (shape index) of the shape called `name`.
fn region(model: &Model, name: &str) -> u32 {
    model
        .shapes
        .iter()
        .position(|s| s.name == name)
        .unwrap_or_else(|| panic!("no shape `{name}`")) as u32
}

fn relative_error(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

/// Two round wires of radius 2 mm, 20 mm apart, 1000 A each.
fn two_wires(direction_b: i32) -> String {
    format!(
        r#"
        [mesh]
        max_size = 40
        [[shape]]
        name = "a"
        circle = {{ center = [-10, 0], radius = 2 }}
        current = 1000
        mesh_size = 0.4
        [[shape]]
        name = "b"
        circle = {{ center = [10, 0], radius = 2 }}
        current = 1000
        direction = {direction_b}
        mesh_size = 0.4
        [outer]
        shape = {{ circle = {{ center = [0, 0], radius = 300 }} }}
        condition = "zero-potential"
    "#
    )
}

/// Force per length on a line current `i1` at `p1` from a line current
/// `i2` at `p2`, N/m (the Biot-Savart field of a line current and the
/// Lorentz force; equal signs attract).
fn line_current_force(i1: f64, p1: [f64; 2], i2: f64, p2: [f64; 2]) -> [f64; 2] {
    let d = [p2[0] - p1[0], p2[1] - p1[1]];
    let r2 = d[0] * d[0] + d[1] * d[1];
    let k = MU0 * i1 * i2 / (2.0 * PI * r2);
    [k * d[0], k * d[1]]
}

#[test]
fn parallel_wires_attract_or_repel_per_the_ampere_definition() {
    // Force per length between two long parallel currents,
    // F/L = μ0 I1 I2 / (2π d), attracting for equal directions: the former SI
    // definition of the ampere (BIPM, The International System of Units,
    // 8th ed., 2006, §2.1.1.4). It holds exactly for round wires with uniform
    // current (outside, a round wire's field is that of a line current, and
    // the mean of a harmonic field over a disc is its value at the centre).
    // The A = 0 circle of radius R acts on each wire through an image
    // current −I at R²/s (method of images for a circle, e.g. Smythe,
    // Static and Dynamic Electricity, 3rd ed., §7.11; here from memory):
    // the images cancel for equal currents and shift the force by −0.44 %
    // for opposite ones, so they are included in the expected value.
    let (i, s, r) = (1000.0, 0.010, 0.300);
    let image = |p: [f64; 2]| {
        let k = r * r / (p[0] * p[0] + p[1] * p[1]);
        [k * p[0], k * p[1]]
    };
    let ideal = MU0 * i * i / (2.0 * PI * 2.0 * s);
    for direction in [1.0, -1.0] {
        let (pa, pb) = ([-s, 0.0], [s, 0.0]);
        let (ia, ib) = (i, direction * i);
        let mut want = [0.0; 2];
        for (ik, pk) in [(ib, pb), (-ia, image(pa)), (-ib, image(pb))] {
            let f = line_current_force(ia, pa, ik, pk);
            want = [want[0] + f[0], want[1] + f[1]];
        }
        solve(&two_wires(direction as i32), |model, _, sol| {
            let a = [region(model, "a")];
            let b = [region(model, "b")];
            let st_a = force::stress_tensor_force(sol, &a).expect("force");
            let st_b = force::stress_tensor_force(sol, &b).expect("force");
            let vw_a = force::virtual_work_force(sol, &a).expect("force");
            let vw_b = force::virtual_work_force(sol, &b).expect("force");
            // Wire a sits at x = −10 mm: attraction pulls it towards +x.
            // Newton's third law: b feels the opposite force.
            for (name, f) in [
                ("stress tensor a", st_a),
                ("virtual work a", vw_a),
                ("stress tensor -b", [-st_b[0], -st_b[1]]),
                ("virtual work -b", [-vw_b[0], -vw_b[1]]),
            ] {
                println!(
                    "direction {direction:+}: {name} Fx {:.5} N/m, want {:.5} (error {:.3e}; ideal {:.1})",
                    f[0],
                    want[0],
                    relative_error(f[0], want[0]),
                    direction * ideal
                );
                assert!(f[0] * direction > 0.0, "{name}: attraction/repulsion sign");
                assert!(relative_error(f[0], want[0]) < 0.01, "{name}: Fx {} vs {}", f[0], want[0]);
                assert!(f[1].abs() < 1e-3 * ideal, "{name}: Fy {}", f[1]);
            }
        });
    }
}

#[test]
fn coil_sides_in_a_uniform_field_feel_the_lorentz_force_and_torque() {
    // A planar coil of N = 10 turns at I = 100 A: go side (+z) at x = +20 mm,
    // return side at x = −20 mm (w = 40 mm), in a uniform applied field
    // B0 = 0.1 T along x (outer condition uniform-field). Lorentz force on a
    // straight current, F = I L × B (e.g. Griffiths, Introduction to
    // Electrodynamics, 4th ed., eq. 5.17): the go side feels +N I B0 per
    // metre along y, the return side −N I B0, a couple of torque
    // τ = N I w B0 per metre, counter-clockwise (the torque on a current
    // loop, m × B, same textbook ex. 6.1). The sides also repel each other
    // along x (μ0 (NI)²/2πw, the previous test's law), which adds no torque
    // about the coil's centre and nothing along y.
    let text = r#"
        [mesh]
        max_size = 40
        [windings.coil]
        turns = 10
        current = 100
        [[shape]]
        name = "go"
        circle = { center = [20, 0], radius = 2 }
        winding = "coil"
        mesh_size = 0.4
        [[shape]]
        name = "return"
        circle = { center = [-20, 0], radius = 2 }
        winding = "coil"
        direction = -1
        mesh_size = 0.4
        [outer]
        shape = { circle = { center = [0, 0], radius = 400 } }
        condition = "uniform-field"
        field = [0.1, 0]
    "#;
    let (ni, b0, w) = (1000.0, 0.1, 0.040);
    let side = ni * b0;
    let couple = ni * w * b0;
    solve(text, |model, _, sol| {
        let go = [region(model, "go")];
        let ret = [region(model, "return")];
        let both = [go[0], ret[0]];
        for (name, f_go, f_ret, tau) in [
            (
                "stress tensor",
                force::stress_tensor_force(sol, &go).expect("force"),
                force::stress_tensor_force(sol, &ret).expect("force"),
                force::stress_tensor_torque(sol, &both, [0.0, 0.0]).expect("torque"),
            ),
            (
                "virtual work",
                force::virtual_work_force(sol, &go).expect("force"),
                force::virtual_work_force(sol, &ret).expect("force"),
                force::virtual_work_torque(sol, &both, [0.0, 0.0]).expect("torque"),
            ),
        ] {
            println!(
                "{name}: go {f_go:?} (Fy error {:.3e}), return {f_ret:?} (Fy error {:.3e}), torque {tau:.5} N·m (error {:.3e}) vs {couple}",
                relative_error(f_go[1], side),
                relative_error(f_ret[1], -side),
                relative_error(tau, couple)
            );
            assert!(relative_error(f_go[1], side) < 0.01, "{name}: go Fy {}", f_go[1]);
            assert!(relative_error(f_ret[1], -side) < 0.01, "{name}: return Fy {}", f_ret[1]);
            assert!(relative_error(tau, couple) < 0.01, "{name}: torque {tau} vs {couple}");
            // The sides repel along x (parallel-wire law with opposite
            // currents), so their x forces are equal and opposite.
            let repel = MU0 * ni * ni / (2.0 * PI * w);
            assert!(relative_error(f_go[0], repel) < 0.02, "{name}: go Fx {} vs {repel}", f_go[0]);
            assert!((f_go[0] + f_ret[0]).abs() < 0.01 * repel, "{name}: net Fx");
        }
    });
}

/// A polygon through `n` points of the ellipse with semi-axes `a`, `b`
/// (model units), as TOML.
fn ellipse_polygon(a: f64, b: f64, n: usize) -> String {
    let points: Vec<String> = (0..n)
        .map(|k| {
            let t = 2.0 * PI * k as f64 / n as f64;
            format!("[{:.6}, {:.6}]", a * t.cos(), b * t.sin())
        })
        .collect();
    format!("[{}]", points.join(", "))
}

#[test]
fn iron_ellipse_in_a_uniform_field_turns_but_is_not_pulled() {
    // A long elliptic cylinder (semi-axes a = 20 mm, b = 5 mm, μr = 100), its
    // major axis at 30° to a uniform field B0 = 0.1 T along x. Inside, the
    // field is uniform, with 2D demagnetizing factors N_a = b/(a+b),
    // N_b = a/(a+b) (e.g. Landau & Lifshitz, Electrodynamics of Continuous
    // Media, §4, problem 4; from memory), so M_i = χ H0_i / (1 + χ N_i) and the
    // torque per metre is τ = μ0 (m × H0)_z with m = M·πab. It turns the major
    // axis towards the field (clockwise here). A uniform field pulls no net
    // force (the configuration is symmetric under x → −x with B0 along x, and
    // T is even in B). The polygon with 96 vertices has 0.07 % less area than
    // the ellipse; the field circle at 400 mm perturbs by about (a/R)²,
    // 0.25 %.
    let (a, b, mu_r, b0): (f64, f64, f64, f64) = (0.020, 0.005, 100.0, 0.1);
    let text = format!(
        r#"
        [mesh]
        max_size = 40
        [materials.iron]
        relative_permeability = {mu_r}
        [[shape]]
        name = "ellipse"
        material = "iron"
        polygon = {}
        rotate = 30
        mesh_size = 1
        [outer]
        shape = {{ circle = {{ center = [0, 0], radius = 400 }} }}
        condition = "uniform-field"
        field = [{b0}, 0]
    "#,
        ellipse_polygon(a * 1e3, b * 1e3, 96)
    );
    let chi = mu_r - 1.0;
    let h0 = b0 / MU0;
    let theta = -30f64.to_radians(); // field direction from the major axis
    let (ha, hb) = (h0 * theta.cos(), h0 * theta.sin());
    let (na, nb) = (b / (a + b), a / (a + b));
    let (ma, mb) = (chi * ha / (1.0 + chi * na), chi * hb / (1.0 + chi * nb));
    let want = MU0 * PI * a * b * (ma * hb - mb * ha);
    let pressure_scale = b0 * b0 / (2.0 * MU0) * 2.0 * a; // N/m over the body's size
    solve(&text, |model, _, sol| {
        let body = [region(model, "ellipse")];
        for (name, tau, f) in [
            (
                "stress tensor",
                force::stress_tensor_torque(sol, &body, [0.0, 0.0]).expect("torque"),
                force::stress_tensor_force(sol, &body).expect("force"),
            ),
            (
                "virtual work",
                force::virtual_work_torque(sol, &body, [0.0, 0.0]).expect("torque"),
                force::virtual_work_force(sol, &body).expect("force"),
            ),
        ] {
            println!(
                "{name}: torque {tau:.5} N·m vs {want:.5} (error {:.3e}); force {f:?} ({:.2e} of B0²/2μ0·2a = {pressure_scale:.1} N/m)",
                relative_error(tau, want),
                f[0].hypot(f[1]) / pressure_scale
            );
            assert!(relative_error(tau, want) < 0.01, "{name}: torque {tau} vs {want}");
            assert!(f[0].hypot(f[1]) < 1e-3 * pressure_scale, "{name}: net force {f:?}");
        }
    });
}
