//! Sweeps end to end: current, move and sharding. Every model here is
//! invented for the test.

use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::sweep::{self, Shard, StepMesh, SweepOptions, SweepStep};

fn model(text: &str) -> Model {
    Model::from_toml_str(text, &ModelSource::new("sweep-test.toml")).expect("valid model")
}

fn run(model: &Model, shard: Option<Shard>) -> Vec<SweepStep> {
    let options = SweepOptions {
        shard,
        ..SweepOptions::default()
    };
    sweep::run(model, &options, &|_| {}).expect("sweep runs")
}

/// A gapped C-core with a saturating library steel; `sweep` is the sweep
/// table's body.
fn gapped_core(sweep: &str) -> Model {
    model(&format!(
        r#"
[model]
length_unit = "mm"
depth = 25
element_order = 2

[mesh]
max_size = 20

[materials.iron]
from_library = "low-carbon-steel"

[windings.main]
turns = 120
current = 1

[[shape]]
name = "core"
rectangle = {{ min = [0, 0], max = [60, 50] }}
material = "iron"
mesh_size = 4

[[shape]]
name = "window"
rectangle = {{ min = [12, 12], max = [48, 38] }}
mesh_size = 5

[[shape]]
name = "gap"
rectangle = {{ min = [48, 24.5], max = [60, 25.5] }}

[[shape]]
name = "coil_go"
rectangle = {{ min = [14, 14], max = [24, 36] }}
winding = "main"
direction = 1
mesh_size = 5

[[shape]]
name = "coil_return"
rectangle = {{ min = [-12, 14], max = [-2, 36] }}
winding = "main"
direction = -1
mesh_size = 5

[outer]
shape = {{ rectangle = {{ min = [-60, -50], max = [120, 100] }} }}
condition = "zero-potential"

[sweep]
{sweep}
"#
    ))
}

fn linkage(s: &SweepStep) -> (f64, f64, Option<f64>) {
    let w = &s.results.windings["main"];
    (
        w.flux_linkage_wb,
        w.incremental_inductance_h,
        w.inductance_h,
    )
}

#[test]
fn current_sweep_saturates_the_core() {
    // 0 to 300 A-turns per turn... up to 120 × 60 A = 7.2 kA-turns across a
    // 1 mm gap: about 9 T if the iron stayed linear, so it saturates.
    let m = gapped_core(r#"current = { winding = "main", from = 5, to = 60, steps = 5 }"#);
    let steps = run(&m, None);
    assert_eq!(steps.len(), 6);
    assert!(steps.iter().all(|s| s.results.solve.converged));
    assert!(steps.iter().all(|s| s.mesh == StepMesh::Shared));
    let l: Vec<(f64, f64, Option<f64>)> = steps.iter().map(linkage).collect();
    // λ(I) increases (B(H) is monotone), the secant inductance falls once
    // the iron saturates, and past the knee the incremental inductance is
    // below the secant one (λ(I) is concave there, since the differential
    // permeability of a saturating B-H curve falls).
    for w in l.windows(2) {
        assert!(w[1].0 > w[0].0, "λ must increase: {l:?}");
    }
    let secant_first = l[0].2.expect("non-zero current");
    let secant_last = l[5].2.expect("non-zero current");
    assert!(
        secant_last < 0.7 * secant_first,
        "secant L must fall in saturation: {secant_first} → {secant_last}"
    );
    assert!(
        l[5].1 < secant_last,
        "incremental below secant past the knee"
    );
    // Warm starts: later steps need fewer Newton steps than a cold start of
    // the same step would (Newton from zero takes at least 5 here).
    assert!(steps[5].results.solve.iterations <= steps[1].results.solve.iterations + 3);
}

#[test]
fn incremental_inductance_is_the_slope_of_the_linkage() {
    // Definition of incremental inductance, dλ/dI, against a central
    // difference over ±0.5 % of the current (truncation error O(δ²)), on
    // the knee of the curve where secant and incremental differ.
    let m = gapped_core(r#"current = { winding = "main", from = 29.85, to = 30.15, steps = 2 }"#);
    let steps = run(&m, None);
    let (l0, _, _) = linkage(&steps[0]);
    let (_, incremental, secant) = linkage(&steps[1]);
    let (l2, _, _) = linkage(&steps[2]);
    let slope = (l2 - l0) / 0.3;
    let rel = (incremental - slope).abs() / slope;
    assert!(
        rel < 2e-3,
        "dλ/dI {incremental} vs slope {slope}: {rel:.2e}"
    );
    assert!(
        incremental < 0.9 * secant.unwrap(),
        "this point should be past the knee"
    );
}

#[test]
fn shards_give_the_unsharded_numbers_to_the_last_digit() {
    // 9 steps: blocks of 5 and 4; of three shards the last has none.
    let m = gapped_core(r#"current = { winding = "main", from = 10, to = 50, steps = 8 }"#);
    let whole = run(&m, None);
    let mut merged: Vec<SweepStep> = (0..3)
        .flat_map(|k| run(&m, Some(Shard { index: k, count: 3 })))
        .collect();
    merged.sort_by_key(|s| s.index);
    assert_eq!(merged.len(), whole.len());
    for (a, b) in whole.iter().zip(&merged) {
        assert_eq!(a.index, b.index);
        assert_eq!(a.results.energy_j.to_bits(), b.results.energy_j.to_bits());
        assert_eq!(
            a.results.coenergy_j.to_bits(),
            b.results.coenergy_j.to_bits()
        );
        let (x, y) = (linkage(a), linkage(b));
        assert_eq!(x.0.to_bits(), y.0.to_bits());
        assert_eq!(x.1.to_bits(), y.1.to_bits());
    }
    assert_eq!(
        sweep::shard_steps(9, Some(Shard { index: 1, count: 3 })),
        vec![5, 6, 7, 8]
    );
    assert!(sweep::shard_steps(9, Some(Shard { index: 2, count: 3 })).is_empty());
    assert_eq!(
        [2, 9, 21, 40].map(sweep::block_steps),
        [4, 5, 11, 11],
        "half the sweep, between 4 and 11"
    );
}

/// A U-core electromagnet with linear iron pulling a flat armature; the
/// armature starts 1 mm above the pole faces and moves away.
const ARMATURE: &str = r#"
[model]
length_unit = "mm"
depth = 30
element_order = 2

[mesh]
max_size = 25

[materials.iron]
relative_permeability = 1500

[windings.coil]
turns = 200
current = 2

[[shape]]
name = "core"
polygon = [[-30, 0], [30, 0], [30, 40], [20, 40], [20, 10], [-20, 10], [-20, 40], [-30, 40]]
material = "iron"
mesh_size = 3

[[shape]]
name = "coil_go"
rectangle = { min = [-19, 12], max = [-13, 36] }
winding = "coil"
direction = 1
mesh_size = 3

[[shape]]
name = "coil_return"
rectangle = { min = [-37, 12], max = [-31, 36] }
winding = "coil"
direction = -1
mesh_size = 3

[[shape]]
name = "armature"
rectangle = { min = [-35, 41], max = [35, 49] }
material = "iron"
mesh_size = 3

[outer]
shape = { rectangle = { min = [-100, -60], max = [100, 120] } }
condition = "zero-potential"

[[force]]
name = "pull"
shapes = ["armature"]

[sweep]
move = { shapes = ["armature"], along = [0, 1], from = 0, to = 0.4, steps = 4 }
"#;

#[test]
fn moving_armature_blends_the_mesh_and_obeys_virtual_work() {
    let m = model(ARMATURE);
    let steps = run(&m, None);
    assert_eq!(steps[0].mesh, StepMesh::Fresh);
    assert!(
        steps[1..].iter().all(|s| s.mesh == StepMesh::Blended),
        "small moves should blend the first mesh: {:?}",
        steps.iter().map(|s| s.mesh).collect::<Vec<_>>()
    );
    // Principle of virtual work at constant current: F = +dW'/dx (e.g.
    // Woodson & Melcher, Electromechanical Dynamics, 1968, ch. 3). On one
    // mesh topology the co-energies vary smoothly, so a central difference
    // over ±0.1 mm is accurate.
    let h = 0.1e-3;
    for k in 1..steps.len() - 1 {
        let dw = (steps[k + 1].results.coenergy_j - steps[k - 1].results.coenergy_j) / (2.0 * h);
        let f = steps[k].results.forces["pull"].force_n[1];
        assert!(f < 0.0, "the armature is pulled back towards the core");
        let rel = (f - dw).abs() / dw.abs();
        assert!(
            rel < 0.01,
            "step {k}: stress tensor {f} N vs dW'/dx {dw} N ({rel:.2e})"
        );
    }
    // The pull weakens as the gap opens.
    for w in steps.windows(2) {
        assert!(
            w[1].results.forces["pull"].force_n[1].abs()
                < w[0].results.forces["pull"].force_n[1].abs()
        );
    }
}

#[test]
fn a_blended_step_matches_a_fresh_mesh_at_the_same_position() {
    // The same armature position solved on the blended mesh and on a mesh
    // made for it agree to discretisation accuracy (both are P2 solutions
    // of one model; 1 % is well above the mesh-to-mesh scatter seen here).
    let m = model(ARMATURE);
    let steps = run(&m, None);
    let last = steps.last().unwrap();
    let moved = sweep::model_at(&m, last.value);
    let mm = fluxwright_solver::study::mesh_for(&moved).unwrap();
    let setup = fluxwright_solver::study::problem(&moved, &mm.mesh).unwrap();
    let solution =
        fluxwright_solver::nonlinear::solve(&setup.problem, &Default::default()).unwrap();
    let fresh = fluxwright_solver::study::results(&moved, &mm.mesh, &setup, &solution, 0.0);
    let (a, b) = (
        last.results.forces["pull"].force_n[1],
        fresh.forces["pull"].force_n[1],
    );
    assert!(
        (a - b).abs() < 0.01 * b.abs(),
        "blended {a} N vs fresh {b} N"
    );
    let (a, b) = (last.results.coenergy_j, fresh.coenergy_j);
    assert!(
        (a - b).abs() < 1e-3 * b.abs(),
        "blended {a} J vs fresh {b} J"
    );
}

#[test]
fn a_model_without_a_sweep_is_refused() {
    let text = ARMATURE.split("[sweep]").next().unwrap();
    let m = model(text);
    let err = sweep::run(&m, &SweepOptions::default(), &|_| {}).unwrap_err();
    assert!(err.to_string().contains("[sweep]"), "{err}");
}
