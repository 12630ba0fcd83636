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

/// ∂W'/∂s at constant current by central differences: every mesh node moved
/// by ±`step` (model units) × its band weight along `direction`, a full
/// re-solve each time (a tight Newton tolerance, so rounding of the
/// solution stays far below the co-energy change).
fn coenergy_slope(problem: &Problem, band: &Band, direction: [f64; 2], step: f64) -> f64 {
    let options = NewtonOptions {
        residual_tolerance: 1e-12,
        ..NewtonOptions::default()
    };
    let coenergy = |sign: f64| {
        let mut mesh: Mesh = problem.mesh.clone();
        for (p, g) in mesh.nodes.iter_mut().zip(&band.weight) {
            p[0] += sign * step * g * direction[0];
            p[1] += sign * step * g * direction[1];
        }
        let moved = Problem {
            mesh: &mesh,
            ..problem.clone()
        };
        let sol = nonlinear::solve(&moved, &options).expect("moved model solves");
        assert!(sol.report.converged);
        sol.coenergy()
    };
    (coenergy(1.0) - coenergy(-1.0)) / (2.0 * step * problem.length_scale_m)
}

fn relative_error(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

/// Two round wires of radius 2 mm, 20 mm apart: 1000 A in `a`, `current_b`
/// in `b`.
fn two_wires(current_b: f64) -> String {
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
        current = {current_b}
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

/// The x force per length on a line current `ia` at (−s, 0) next to `ib`
/// at (s, 0), inside a circle of radius `r` held at constant A: the other
/// current plus both image currents −I at R²/s (method of images for a
/// circle, e.g. Smythe, Static and Dynamic Electricity, 3rd ed., ch. 7;
/// from memory), N/m.
fn x_force_with_images(ia: f64, ib: f64, s: f64, r: f64) -> f64 {
    let image = |p: [f64; 2]| {
        let k = r * r / (p[0] * p[0] + p[1] * p[1]);
        [k * p[0], k * p[1]]
    };
    let (pa, pb) = ([-s, 0.0], [s, 0.0]);
    [(ib, pb), (-ia, image(pa)), (-ib, image(pb))]
        .iter()
        .map(|&(ik, pk)| line_current_force(ia, pa, ik, pk)[0])
        .sum()
}

#[test]
fn parallel_wires_attract_or_repel_per_the_ampere_definition() {
    // Force per length between two long parallel currents,
    // F/L = μ0 I1 I2 / (2π d), attracting for equal directions: the former SI
    // definition of the ampere (BIPM, The International System of Units,
    // 8th ed., 2006, §2.1.1.4). It holds exactly for round wires with uniform
    // current (outside, a round wire's field is that of a line current, and
    // the mean of a harmonic field over a disc is its value at the centre).
    // The A = 0 circle acts through image currents
    // ([`x_force_with_images`]): they cancel for equal currents and shift
    // the force by −0.44 % for opposite ones. With no current in the other
    // wire only the own image is left: a lone wire feels (almost) nothing.
    let (i, s, r) = (1000.0, 0.010, 0.300);
    let ideal = MU0 * i * i / (2.0 * PI * 2.0 * s);
    for current_b in [i, -i, 0.0] {
        let want = x_force_with_images(i, current_b, s, r);
        solve(&two_wires(current_b), |model, _, sol| {
            let a = [region(model, "a")];
            let b = [region(model, "b")];
            let mut checks = vec![
                (
                    "stress tensor a",
                    force::stress_tensor_force(sol, &a).expect("force"),
                ),
                (
                    "virtual work a",
                    force::virtual_work_force(sol, &a).expect("force"),
                ),
            ];
            if current_b != 0.0 {
                // Newton's third law: b feels the opposite force.
                let st_b = force::stress_tensor_force(sol, &b).expect("force");
                let vw_b = force::virtual_work_force(sol, &b).expect("force");
                checks.push(("stress tensor -b", [-st_b[0], -st_b[1]]));
                checks.push(("virtual work -b", [-vw_b[0], -vw_b[1]]));
            }
            for (name, f) in checks {
                println!(
                    "I_b = {current_b}: {name} Fx {:.5} N/m, want {want:.5} (error {:.3e} of μ0I²/2πd = {ideal:.1})",
                    f[0],
                    (f[0] - want).abs() / ideal
                );
                // Wire a sits at x = −10 mm: attraction pulls it towards +x.
                assert!(f[0] * current_b >= 0.0, "{name}: attraction/repulsion sign");
                assert!(
                    (f[0] - want).abs() < 0.01 * want.abs().max(0.1 * ideal),
                    "{name}: Fx {} vs {want}",
                    f[0]
                );
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
            assert!(
                relative_error(f_go[1], side) < 0.01,
                "{name}: go Fy {}",
                f_go[1]
            );
            assert!(
                relative_error(f_ret[1], -side) < 0.01,
                "{name}: return Fy {}",
                f_ret[1]
            );
            assert!(
                relative_error(tau, couple) < 0.01,
                "{name}: torque {tau} vs {couple}"
            );
            // The sides repel along x (parallel-wire law with opposite
            // currents; the field circle's images, as in the previous test,
            // take 1 % off), so their x forces are equal and opposite.
            let repel = x_force_with_images(ni, -ni, 0.5 * w, 0.400);
            println!(
                "{name}: go Fx {:.5} vs {:.5} (error {:.3e})",
                f_go[0],
                -repel,
                relative_error(f_go[0], -repel)
            );
            assert!(
                relative_error(f_go[0], -repel) < 0.01,
                "{name}: go Fx {} vs {}",
                f_go[0],
                -repel
            );
            assert!(
                (f_go[0] + f_ret[0]).abs() < 1e-3 * repel.abs(),
                "{name}: net Fx"
            );
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
            assert!(
                relative_error(tau, want) < 0.01,
                "{name}: torque {tau} vs {want}"
            );
            assert!(
                f[0].hypot(f[1]) < 1e-3 * pressure_scale,
                "{name}: net force {f:?}"
            );
        }
    });
}

/// A C-core (legs x ∈ ±[10, 20] mm, yoke y ∈ [30, 40] mm) with a 1000
/// ampere-turn coil round its yoke, and an armature bar below its pole
/// faces across a gap of `gap` mm. `iron` is the TOML body of the iron
/// material.
fn c_core(iron: &str, gap: f64, ampere_turns: f64) -> String {
    let y0 = -gap;
    let y1 = -gap - 10.0;
    format!(
        r#"
        [mesh]
        max_size = 20
        [materials.iron]
        {iron}
        [windings.coil]
        turns = 100
        current = {current}
        [[shape]]
        name = "core"
        material = "iron"
        polygon = [[-20, 0], [-10, 0], [-10, 30], [10, 30], [10, 0], [20, 0], [20, 40], [-20, 40]]
        mesh_size = 1.5
        [[shape]]
        name = "tip"
        material = "iron"
        rectangle = {{ min = [-20, 0], max = [-10, 3] }}
        mesh_size = 0.5
        [[shape]]
        name = "coil_in"
        rectangle = {{ min = [-8, 22], max = [8, 28] }}
        winding = "coil"
        mesh_size = 1.5
        [[shape]]
        name = "coil_out"
        rectangle = {{ min = [-8, 42], max = [8, 48] }}
        winding = "coil"
        direction = -1
        mesh_size = 1.5
        [[shape]]
        name = "gap_left"
        rectangle = {{ min = [-23, {y0}], max = [-7, 0] }}
        mesh_size = {fine}
        [[shape]]
        name = "gap_right"
        rectangle = {{ min = [7, {y0}], max = [23, 0] }}
        mesh_size = {fine}
        [[shape]]
        name = "armature"
        material = "iron"
        rectangle = {{ min = [-20, {y1}], max = [20, {y0}] }}
        mesh_size = 1
        [outer]
        shape = {{ circle = {{ center = [0, 15], radius = 200 }} }}
        condition = "zero-potential"
        [[probe]]
        name = "gap_left"
        at = [-15, {ym}]
        [[probe]]
        name = "gap_right"
        at = [15, {ym}]
    "#,
        current = ampere_turns / 100.0,
        fine = gap / 4.0,
        ym = -0.5 * gap,
    )
}

#[test]
fn armature_is_pulled_by_the_maxwell_pressure_of_the_gap_field() {
    // An armature across the poles of a gapped C-core (μr = 1000, gap
    // 0.5 mm, pole faces 10 mm wide, depth 1 m). Rule of thumb for small
    // gaps: each pole pulls B²A/(2μ0) with B the gap field under the pole
    // (common practice, no source); fringing adds a few per cent (4.7 %
    // measured here, 8.6 % with a 1 mm gap, unchanged when the mesh is
    // halved), so 8 % is allowed. The two methods agree (here they coincide:
    // the band is in air), and both match the derivative of co-energy at
    // constant current, F = ∂W'/∂y (e.g. Fitzgerald, Kingsley & Umans,
    // Electric Machinery, 6th ed., §3.4), taken by central differences of
    // two full re-solves with the armature moved by ±1 µm.
    let text = c_core("relative_permeability = 1000", 0.5, 1000.0);
    solve(&text, |model, problem, sol| {
        let body = [region(model, "armature")];
        let pole_area = 0.010 * 1.0;
        let mut want = 0.0;
        for p in &model.probes {
            let b = sol.probe(p.at).expect("probe inside").b;
            println!("gap field at {:?}: {b:?} T", p.at);
            want += (b[0] * b[0] + b[1] * b[1]) * pole_area / (2.0 * MU0);
        }
        let st = force::stress_tensor_force(sol, &body).expect("force");
        let vw = force::virtual_work_force(sol, &body).expect("force");
        println!(
            "armature: stress tensor {st:?}, virtual work {vw:?}, B²A/2μ0 {want:.1} N (errors {:.3e}, {:.3e}; methods differ by {:.2e})",
            relative_error(st[1], want),
            relative_error(vw[1], want),
            relative_error(vw[1], st[1])
        );
        // Pulled up towards the poles.
        assert!(
            relative_error(st[1], want) < 0.08,
            "stress tensor {} vs {want}",
            st[1]
        );
        assert!(
            relative_error(vw[1], want) < 0.08,
            "virtual work {} vs {want}",
            vw[1]
        );
        assert!(relative_error(vw[1], st[1]) < 0.02);
        // Symmetric about x = 0 (mirror symmetry of the device).
        assert!(st[0].abs() < 1e-3 * want, "Fx {}", st[0]);
        let band = Band::around(sol, &body, force::DEFAULT_LAYERS).expect("band");
        let fd = coenergy_slope(problem, &band, [0.0, 1.0], 1e-3);
        println!(
            "armature: ∂W'/∂y by re-solves {fd:.2} N (virtual work differs by {:.2e})",
            relative_error(vw[1], fd)
        );
        assert!(
            relative_error(vw[1], fd) < 5e-3,
            "virtual work {} vs ∂W'/∂y {fd}",
            vw[1]
        );
    });
}

/// A typical non-oriented electrical steel B-H curve (values from memory of
/// published data sheets; only its saturating shape matters here).
const STEEL: &str = "bh_curve = { h = [0, 40, 60, 80, 100, 150, 200, 300, 500, 1000, 2500, 5000, 10000, 30000, 100000], \
                     b = [0, 0.3, 0.55, 0.8, 1.0, 1.2, 1.3, 1.4, 1.5, 1.6, 1.7, 1.8, 1.9, 2.05, 2.2] }";

#[test]
fn virtual_work_through_saturated_iron_is_the_coenergy_derivative() {
    // The pole tip of the left leg, a separate shape of the same saturating
    // steel, is the body: its band must cross the leg's iron, which the
    // stress tensor refuses and Coulomb's virtual work handles (J.L.
    // Coulomb, IEEE Trans. Magn. 19(6), 1983: the local Jacobian derivative
    // is the exact derivative of the discrete co-energy, nonlinear materials
    // included). Checked against ∂W'/∂y at constant current from two full
    // nonlinear re-solves with the tip moved by ±1 µm (the definition of
    // the force, e.g. Fitzgerald, Kingsley & Umans, Electric Machinery,
    // 6th ed., §3.4).
    // Coarser than the previous test (the check is exact at any mesh).
    let text = c_core(STEEL, 1.0, 3000.0).replace("mesh_size = 0.25", "mesh_size = 0.5");
    solve(&text, |model, problem, sol| {
        let tip = [region(model, "tip")];
        let b_tip = sol.probe([-15.0, 1.5]).expect("inside").b_magnitude();
        println!("tip |B| {b_tip:.3} T");
        // Past the knee of the curve: the secant μr there is under half its
        // value at 1 T, so dν/dB² matters in the band.
        assert!(b_tip > 1.4, "the tip should be saturating: |B| = {b_tip} T");
        let err = force::stress_tensor_force(sol, &tip).expect_err("band crosses iron");
        assert_eq!(
            err,
            ForceError::BandNotAir {
                region: region(model, "core")
            }
        );
        let vw = force::virtual_work_force(sol, &tip).expect("force");
        let band = Band::around(sol, &tip, force::DEFAULT_LAYERS).expect("band");
        let fd = coenergy_slope(problem, &band, [0.0, 1.0], 1e-3);
        println!(
            "tip: virtual work {vw:?} N, ∂W'/∂y by re-solves {fd:.3} N (differ by {:.2e})",
            relative_error(vw[1], fd)
        );
        assert!(
            relative_error(vw[1], fd) < 1e-3,
            "virtual work {} vs ∂W'/∂y {fd}",
            vw[1]
        );
    });
}

/// Complete elliptic integrals K(k) and E(k) by the arithmetic-geometric
/// mean (Abramowitz & Stegun, Handbook of Mathematical Functions, 17.6).
fn elliptic_ke(k: f64) -> (f64, f64) {
    let (mut a, mut b) = (1.0, (1.0 - k * k).sqrt());
    let mut sum = 0.5 * k * k;
    let mut power = 0.5;
    while (a - b).abs() > 1e-15 * a {
        let c = 0.5 * (a - b);
        (a, b) = (0.5 * (a + b), (a * b).sqrt());
        power *= 2.0;
        sum += power * c * c;
    }
    let big_k = PI / (2.0 * a);
    (big_k, big_k * (1.0 - sum))
}

/// Mutual inductance of two coaxial circles of radii `a`, `b` a distance
/// `z` apart, H (Maxwell's formula, e.g. Smythe, Static and Dynamic
/// Electricity, 3rd ed., ch. 8, from memory; Jackson, Classical
/// Electrodynamics, 3rd ed., §5.5 for the vector potential it comes from).
fn coaxial_mutual_inductance(a: f64, b: f64, z: f64) -> f64 {
    let k = (4.0 * a * b / ((a + b).powi(2) + z * z)).sqrt();
    let (big_k, big_e) = elliptic_ke(k);
    MU0 * (a * b).sqrt() * ((2.0 / k - k) * big_k - 2.0 / k * big_e)
}

#[test]
fn coaxial_rings_attract_with_the_mutual_inductance_gradient() {
    // Two coaxial rings (radius 20 mm, wire radius 0.5 mm) 10 mm apart,
    // 1000 A each in the same sense, axisymmetric model (full turn). The
    // axial force is F = I1 I2 ∂M/∂z1 (the force between two circuits at
    // constant currents, e.g. Smythe, Static and Dynamic Electricity, ch. 8
    // inductance; a standard result, from memory), attracting, with M from
    // Maxwell's formula; ∂M/∂z by central differences of the formula. The finite wire section changes
    // M by about (ρ/a)² ≈ 6e-4.
    let (a, z, i) = (0.020, 0.010, 1000.0);
    let text = r#"
        [model]
        symmetry = "axisymmetric"
        [mesh]
        max_size = 30
        [[shape]]
        name = "lower"
        circle = { center = [20, -5], radius = 0.5 }
        current = 1000
        mesh_size = 0.12
        [[shape]]
        name = "upper"
        circle = { center = [20, 5], radius = 0.5 }
        current = 1000
        mesh_size = 0.12
        [outer]
        shape = { sector = { center = [0, 0], inner_radius = 0, outer_radius = 300, start_angle = -90, end_angle = 90 } }
        condition = "zero-potential"
    "#;
    let h = 1e-6;
    let dm_dz = (coaxial_mutual_inductance(a, a, z + h) - coaxial_mutual_inductance(a, a, z - h))
        / (2.0 * h);
    // Moving the lower ring up shortens the separation.
    let want = -i * i * dm_dz;
    solve(text, |model, _, sol| {
        let lower = [region(model, "lower")];
        let upper = [region(model, "upper")];
        for (name, f_lower, f_upper) in [
            (
                "stress tensor",
                force::stress_tensor_force(sol, &lower).expect("force"),
                force::stress_tensor_force(sol, &upper).expect("force"),
            ),
            (
                "virtual work",
                force::virtual_work_force(sol, &lower).expect("force"),
                force::virtual_work_force(sol, &upper).expect("force"),
            ),
        ] {
            println!(
                "{name}: lower {f_lower:?}, upper {f_upper:?} N vs ±{want:.4} (errors {:.3e}, {:.3e})",
                relative_error(f_lower[1], want),
                relative_error(f_upper[1], -want)
            );
            assert!(want > 0.0);
            assert!(
                relative_error(f_lower[1], want) < 0.01,
                "{name}: lower Fz {}",
                f_lower[1]
            );
            assert!(
                relative_error(f_upper[1], -want) < 0.01,
                "{name}: upper Fz {}",
                f_upper[1]
            );
            assert_eq!(f_lower[0], 0.0, "no net radial force on a ring");
        }
        assert_eq!(
            force::stress_tensor_torque(sol, &lower, [0.0, 0.0]),
            Err(ForceError::AxisymmetricTorque)
        );
    });
}

#[test]
fn unusable_bodies_and_bands_are_named() {
    // A current-carrying bar in contact with the body: neither method may
    // put its band in a conductor (the current would move with the band).
    let text = r#"
        [mesh]
        max_size = 10
        [[shape]]
        name = "block"
        rectangle = { min = [0, 0], max = [10, 10] }
        mesh_size = 2
        [[shape]]
        name = "bar"
        rectangle = { min = [10, 0], max = [14, 10] }
        current = 100
        mesh_size = 2
        [outer]
        shape = { circle = { center = [5, 5], radius = 60 } }
        condition = "zero-potential"
    "#;
    solve(text, |model, _, sol| {
        let block = [region(model, "block")];
        let bar = region(model, "bar");
        assert_eq!(
            force::stress_tensor_force(sol, &block),
            Err(ForceError::CurrentInBand { region: bar })
        );
        assert_eq!(
            force::virtual_work_force(sol, &block),
            Err(ForceError::CurrentInBand { region: bar })
        );
        assert_eq!(
            force::stress_tensor_force(sol, &[77]),
            Err(ForceError::EmptyBody { regions: vec![77] })
        );
        assert_eq!(
            force::stress_tensor_force_with(sol, &block, 0),
            Err(ForceError::Layers(0))
        );
        // Block and bar together are wrapped in air: a force exists.
        assert!(force::stress_tensor_force(sol, &[block[0], bar]).is_ok());
    });
}
