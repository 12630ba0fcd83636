//! Move and turn sweeps whose meshes change only where they must: results
//! vary smoothly from step to step. Every model here is invented for the
//! test.

use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::sweep::{self, Shard, StepMesh, SweepOptions, SweepStep};

fn model(text: &str) -> Model {
    Model::from_toml_str(text, &ModelSource::new("sweep-smooth-test.toml")).expect("valid model")
}

fn run(model: &Model, shard: Option<Shard>) -> Vec<SweepStep> {
    let options = SweepOptions {
        shard,
        ..SweepOptions::default()
    };
    sweep::run(model, &options, &|_| {}).expect("sweep runs")
}

/// A plunger sliding along a bore 0.5 mm wider than it (shear across the
/// thin clearance), pulled towards a fixed pole across a working gap.
/// Planar, linear iron, so that a step is one linear solve.
const PLUNGER: &str = r#"
[model]
length_unit = "mm"
depth = 20
element_order = 2

[mesh]
max_size = 20

[materials.iron]
relative_permeability = 1000

[windings.coil]
turns = 300
current = 1

[[shape]]
name = "yoke_top"
rectangle = { min = [-30, 24], max = [30, 30] }
material = "iron"
mesh_size = 3

[[shape]]
name = "yoke_left"
rectangle = { min = [-30, -40], max = [-24, 24] }
material = "iron"
mesh_size = 3

[[shape]]
name = "yoke_right"
rectangle = { min = [24, -40], max = [30, 24] }
material = "iron"
mesh_size = 3

[[shape]]
name = "bottom_left"
rectangle = { min = [-24, -40], max = [-6.5, -34] }
material = "iron"
mesh_size = 2

[[shape]]
name = "bottom_right"
rectangle = { min = [6.5, -40], max = [24, -34] }
material = "iron"
mesh_size = 2

[[shape]]
name = "pole"
rectangle = { min = [-6, 12], max = [6, 24] }
material = "iron"
mesh_size = 1.5

[[shape]]
name = "coil_left"
rectangle = { min = [-22, -26], max = [-9, 22] }
winding = "coil"
direction = 1
mesh_size = 4

[[shape]]
name = "coil_right"
rectangle = { min = [9, -26], max = [22, 22] }
winding = "coil"
direction = -1
mesh_size = 4

[[shape]]
name = "plunger"
rectangle = { min = [-6, -50], max = [6, 10] }
material = "iron"
mesh_size = 1.5

[outer]
shape = { rectangle = { min = [-80, -100], max = [80, 80] } }
condition = "zero-potential"

[[force]]
name = "pull"
shapes = ["plunger"]

[sweep]
move = { shapes = ["plunger"], along = [0, -1], from = 0, to = 2, steps = 8 }
"#;

#[test]
fn a_sliding_plunger_reconnects_instead_of_remeshing_and_its_force_is_smooth() {
    let m = model(PLUNGER);
    let steps = run(&m, None);
    let kinds: Vec<StepMesh> = steps.iter().map(|s| s.mesh).collect();
    let fresh = kinds.iter().filter(|&&k| k == StepMesh::Fresh).count();
    assert!(
        fresh <= 2,
        "the shear in the clearance should be taken by reconnection: {kinds:?}"
    );
    assert!(kinds.contains(&StepMesh::Reconnected), "{kinds:?}");
    let f: Vec<f64> = steps
        .iter()
        .map(|s| s.results.forces["pull"].force_n[1])
        .collect();
    // Smoothness: the force at each step against the cubic through its two
    // neighbours on either side (Lagrange, equal spacing: (−f₋₂ + 4f₋₁ +
    // 4f₊₁ − f₊₂)/6, error O(h⁴), numerical analysis, from memory); the
    // deviation, relative to |F|, stays below that step's Zienkiewicz-Zhu
    // relative energy-error estimate (a jump from remeshing is of the order
    // of the discretisation error itself).
    for k in 2..f.len() - 2 {
        let cubic = (-f[k - 2] + 4.0 * f[k - 1] + 4.0 * f[k + 1] - f[k + 2]) / 6.0;
        let jump = (f[k] - cubic).abs() / f[k].abs();
        let estimate = steps[k].results.solve.error_estimate.expect("estimate");
        eprintln!(
            "step {k} {:?}: jump {jump:.2e}, estimate {estimate:.2e}",
            kinds[k]
        );
        assert!(
            jump < estimate,
            "step {k} ({:?}): jump {jump:.2e} vs error estimate {estimate:.2e}; forces {f:?}",
            kinds[k]
        );
    }
    // Principle of virtual work at constant current: F = +dW'/dx (e.g.
    // Woodson & Melcher, Electromechanical Dynamics, 1968, ch. 3, from
    // memory), against the central difference of the co-energy over ±h.
    // Along = −y, so F_y = −dW'/ds for the stroke s. 2 % covers the
    // O(h²) truncation and the stress tensor's own error.
    let h = 0.25e-3;
    for k in 1..steps.len() - 1 {
        let dw = (steps[k + 1].results.coenergy_j - steps[k - 1].results.coenergy_j) / (2.0 * h);
        let rel = (f[k] + dw).abs() / dw.abs();
        assert!(f[k] > 0.0, "the plunger is pulled back up: {f:?}");
        assert!(
            rel < 0.02,
            "step {k}: stress tensor {} N vs −dW'/ds {} N ({rel:.2e})",
            f[k],
            -dw
        );
    }
    // Shards plan the same meshes: the second of two shards (steps 5 to 8,
    // the second block of 9 steps) gives the unsharded numbers to the last
    // digit.
    let part = run(&m, Some(Shard { index: 1, count: 2 }));
    assert_eq!(
        part.iter().map(|s| s.index).collect::<Vec<_>>(),
        vec![5, 6, 7, 8]
    );
    for s in &part {
        let whole = &steps[s.index];
        assert_eq!(s.mesh, whole.mesh);
        assert_eq!(
            s.results.coenergy_j.to_bits(),
            whole.results.coenergy_j.to_bits()
        );
        assert_eq!(
            s.results.forces["pull"].force_n[1].to_bits(),
            whole.results.forces["pull"].force_n[1].to_bits()
        );
    }
}
