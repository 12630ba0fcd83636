//! Winding flux linkage and inductances through the whole pipeline (model
//! text → mesher → solver → post-processing), against analytic inductances,
//! the energy identity and finite differences. Each check names its source.

use fluxwright_solver::field::Solution;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::post::windings::{self, WindingSpec};
use fluxwright_solver::{nonlinear, study};
use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

/// Parse `text`, mesh it with chords of sagitta ≤ 1e-4 × radius, set each
/// winding's current with `currents` (by index), solve, and hand the
/// solution and the winding specs to `inspect`.
fn solve<R>(
    text: &str,
    currents: &[f64],
    inspect: impl FnOnce(&Solution, &[WindingSpec]) -> R,
) -> R {
    let mut model =
        Model::from_toml_str(text, &ModelSource::new("windings.toml")).expect("valid model");
    model.mesh.chord_fraction = 1e-4;
    for (w, &i) in model.windings.iter_mut().zip(currents) {
        w.current_a = i;
    }
    let mesh = fluxwright_mesher::mesh(&model.mesh_input()).expect("meshes");
    let setup = study::problem(&model, &mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    assert!(solution.report.converged, "{:?}", solution.report);
    let specs = windings::winding_specs(&model);
    inspect(&solution, &specs)
}

fn rel(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

const COAX: &str = r#"
    [model]
    element_order = 2
    [mesh]
    max_size = 1
    [windings.cable]
    turns = 1
    current = 10
    [[shape]]
    name = "inner"
    circle = { center = [0, 0], radius = 2 }
    winding = "cable"
    mesh_size = 0.4
    [[shape]]
    name = "sheath"
    sector = { center = [0, 0], inner_radius = 6, outer_radius = 7 }
    winding = "cable"
    direction = -1
    mesh_size = 0.3
    [outer]
    shape = { circle = { center = [0, 0], radius = 9 } }
    condition = "zero-potential"
"#;

#[test]
fn coaxial_cable_inductance_per_length() {
    // Coaxial line, inner conductor radius a, sheath from b to c, uniform
    // currents ±I. Ampère's law gives H = I r/2πa² (r < a), I/2πr
    // (a < r < b), I/2πr · (c² − r²)/(c² − b²) (b < r < c), 0 beyond; then
    // W' = ½ L' I² gives (e.g. Cheng, Field and Wave Electromagnetics, 2nd
    // ed., §6-12, whose thin-sheath case is the first two terms)
    // L' = μ0/2π [ln(b/a) + 1/4 + (c⁴ ln(c/b) − (c² − b²)(3c² − b²)/4)/(c² − b²)²].
    let (a, b, c): (f64, f64, f64) = (2.0, 6.0, 7.0);
    let d = c * c - b * b;
    let want = MU0 / (2.0 * PI)
        * ((b / a).ln()
            + 0.25
            + (c.powi(4) * (c / b).ln() - d * (3.0 * c * c - b * b) / 4.0) / (d * d));
    let current = 10.0;
    solve(COAX, &[current], |solution, specs| {
        let results = windings::winding_results(solution, specs).expect("winding results");
        let r = &results[0];
        let l = r.inductance_h.expect("nonzero current");
        // Depth is 1 m: L is per metre.
        assert!(
            rel(l, want) < 0.01,
            "L' {l} vs {want} H/m (error {:.2e})",
            rel(l, want)
        );
        eprintln!(
            "coax: L' = {l:.6e} H/m, analytic {want:.6e}, error {:.2e}",
            rel(l, want)
        );
        // Linear problem: dλ/dI = λ/I (λ is proportional to I).
        let inc = r.incremental_inductance_h;
        assert!(rel(inc, l) < 1e-6, "incremental {inc} vs secant {l}");
        // Energy identity of a linear system, W = ½ L I² (any textbook,
        // e.g. Griffiths, Introduction to Electrodynamics, 4th ed., §7.2.4).
        let w = solution.energy();
        assert!(
            rel(0.5 * l * current * current, w) < 1e-6,
            "½LI² {} vs W {w}",
            0.5 * l * current * current
        );
        // After a linear solve the factorisation is reused as it is.
        let m = windings::incremental_inductance_matrix(solution, specs).expect("matrix");
        assert!(
            !m.work.factored && !m.work.analysed && !m.work.assembled,
            "{:?}",
            m.work
        );
    });
}

#[test]
fn thin_ring_self_inductance_axisymmetric() {
    // A circular loop of radius R = 20 mm made of round wire of radius
    // a = 1 mm with uniform current: L = μ0 R (ln(8R/a) − 7/4) to order
    // (a/R)² (e.g. Landau & Lifshitz, Electrodynamics of Continuous Media,
    // §34, problem 1; formula from memory; the neglected term is about
    // 5e-4 relative here). A = 0 on a half-circle 15 R away.
    let text = r#"
        [model]
        symmetry = "axisymmetric"
        [mesh]
        max_size = 40
        [windings.ring]
        turns = 1
        current = 5
        [[shape]]
        name = "near"
        rectangle = { min = [0, -30], max = [45, 30] }
        mesh_size = 2.5
        [[shape]]
        name = "wire"
        circle = { center = [20, 0], radius = 1 }
        winding = "ring"
        mesh_size = 0.2
        [outer]
        shape = { sector = { center = [0, 0], inner_radius = 0, outer_radius = 300, start_angle = -90, end_angle = 90 } }
        condition = "zero-potential"
    "#;
    let (r_m, a_m): (f64, f64) = (20e-3, 1e-3);
    let want = MU0 * r_m * ((8.0 * r_m / a_m).ln() - 1.75);
    solve(text, &[5.0], |solution, specs| {
        let results = windings::winding_results(solution, specs).expect("winding results");
        let l = results[0].inductance_h.expect("nonzero current");
        eprintln!(
            "ring: L = {l:.6e} H, formula {want:.6e}, error {:.2e}",
            rel(l, want)
        );
        assert!(rel(l, want) < 0.01, "L {l} vs {want}");
        // W = ½ L I² (as above).
        let w = solution.energy();
        assert!(
            rel(0.5 * l * 25.0, w) < 1e-6,
            "½LI² {} vs W {w}",
            0.5 * l * 25.0
        );
        assert!(rel(results[0].incremental_inductance_h, l) < 1e-6);
    });
}

/// A C-core of saturable steel with a 1 mm gap in its right leg, a coil
/// around its left leg (go side in the window, return side outside) and a
/// secondary coil around the right leg, in mm.
const CORE: &str = r#"
    [model]
    element_order = 2
    depth = 20
    [mesh]
    max_size = 6
    [materials.steel]
    bh_curve = { h = [0, 100, 200, 500, 1000, 5000, 20000, 100000], b = [0, 0.9, 1.2, 1.45, 1.55, 1.7, 1.9, 2.2] }
    [windings.primary]
    turns = 100
    current = 20
    [windings.secondary]
    turns = 30
    current = 0
    [[shape]]
    name = "core"
    material = "steel"
    rectangle = { min = [-30, -20], max = [30, 20] }
    mesh_size = 2
    [[shape]]
    name = "window"
    rectangle = { min = [-20, -10], max = [20, 10] }
    [[shape]]
    name = "gap"
    rectangle = { min = [20, -0.5], max = [30, 0.5] }
    mesh_size = 0.5
    [[shape]]
    name = "go"
    rectangle = { min = [-19, -8], max = [-15, 8] }
    winding = "primary"
    mesh_size = 2
    [[shape]]
    name = "return"
    rectangle = { min = [-36, -8], max = [-32, 8] }
    winding = "primary"
    direction = -1
    mesh_size = 2
    [[shape]]
    name = "sec_go"
    rectangle = { min = [32, 5], max = [35, 15] }
    winding = "secondary"
    mesh_size = 2
    [[shape]]
    name = "sec_return"
    rectangle = { min = [15, 5], max = [18, 9] }
    winding = "secondary"
    direction = -1
    mesh_size = 2
    [outer]
    shape = { rectangle = { min = [-70, -60], max = [70, 60] } }
    condition = "zero-potential"
"#;

#[test]
fn saturating_core_incremental_inductance_matches_finite_difference() {
    let current = 20.0;
    let (results, matrix) = solve(CORE, &[current, 0.0], |solution, specs| {
        // The matrix first, to see what its tangent solve had to do.
        let matrix = windings::incremental_inductance_matrix(solution, specs).expect("matrix");
        let results = windings::winding_results(solution, specs).expect("winding results");
        (results, matrix)
    });
    // Central finite difference of λ(I) with two more full solves (the
    // derivative's definition; truncation error O(δ²)).
    let delta = 0.01 * current;
    let lambda_at = |i: f64| {
        solve(CORE, &[i, 0.0], |solution, specs| {
            windings::flux_linkages(solution, specs).expect("linkages")
        })
    };
    let (up, down) = (lambda_at(current + delta), lambda_at(current - delta));
    let fd_self = (up[0] - down[0]) / (2.0 * delta);
    let fd_mutual = (up[1] - down[1]) / (2.0 * delta);
    let inc = results[0].incremental_inductance_h;
    let secant = results[0].inductance_h.expect("nonzero current");
    eprintln!(
        "core: secant {secant:.6e} H, incremental {inc:.6e} H, finite difference {fd_self:.6e} H \
         (error {:.2e}); mutual {:.6e} vs {fd_mutual:.6e}; tangent work {:?}",
        rel(inc, fd_self),
        matrix.values[1][0],
        matrix.work
    );
    assert!(
        rel(inc, fd_self) < 0.01,
        "incremental {inc} vs finite difference {fd_self}"
    );
    assert!(
        rel(matrix.values[1][0], fd_mutual) < 0.01,
        "mutual {} vs {fd_mutual}",
        matrix.values[1][0]
    );
    // Saturation: the λ(I) curve bends down, so its slope is below the
    // chord from the origin (concavity of a saturating magnetisation curve).
    assert!(
        inc < 0.9 * secant,
        "incremental {inc} should be well below secant {secant}"
    );
    // Reciprocity of incremental inductances of a lossless magnetic system,
    // dλ_1/dI_2 = dλ_2/dI_1 (λ_k = ∂W'/∂I_k; e.g. Woodson & Melcher,
    // Electromechanical Dynamics, part I, §3.1).
    let (m12, m21) = (matrix.values[0][1], matrix.values[1][0]);
    assert!(
        (m12 - m21).abs() < 1e-9 * m12.abs().max(1e-30),
        "M12 {m12} vs M21 {m21}"
    );
    // A nonlinear solve leaves the tangent assembled at the final iterate
    // and its symbolic analysis: one numeric factorisation, nothing else.
    assert!(
        matrix.work.factored && !matrix.work.analysed && !matrix.work.assembled,
        "{:?}",
        matrix.work
    );
}
