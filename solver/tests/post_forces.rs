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

#[test]
fn parallel_wires_attract_or_repel_per_the_ampere_definition() {
    // Force per length between two long parallel currents,
    // F/L = μ0 I1 I2 / (2π d), attracting for equal directions: the former SI
    // definition of the ampere (BIPM, The International System of Units,
    // 8th ed., 2006, §2.1.1.4). It holds exactly for round wires with uniform
    // current (the field of a round wire outside it is that of a line
    // current, and the mean of a harmonic field over a disc is its value at
    // the centre). The A = 0 circle at 300 mm adds image forces of about
    // (d/2)/R²·d ≈ 2e-5 relative, and the two images nearly cancel.
    let want = MU0 * 1000.0 * 1000.0 / (2.0 * PI * 0.020);
    for (direction, sign) in [(1, 1.0), (-1, -1.0)] {
        solve(&two_wires(direction), |model, _, s| {
            let a = [region(model, "a")];
            let b = [region(model, "b")];
            let st_a = force::stress_tensor_force(s, &a).expect("force");
            let st_b = force::stress_tensor_force(s, &b).expect("force");
            let vw_a = force::virtual_work_force(s, &a).expect("force");
            println!("direction {direction}: ST a {st_a:?} b {st_b:?}, VW a {vw_a:?}, want {want}");
            // Wire a sits at x = −10 mm: attraction pulls it towards +x.
            for (name, f) in [("ST a", st_a), ("VW a", vw_a), ("ST b", [-st_b[0], -st_b[1]])] {
                assert!(
                    relative_error(f[0], sign * want) < 0.01,
                    "{name}: Fx {} vs {}",
                    f[0],
                    sign * want
                );
                assert!(f[1].abs() < 0.01 * want, "{name}: Fy {}", f[1]);
            }
        });
    }
}
