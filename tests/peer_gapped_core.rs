//! fluxwright against an outside finite-element code on a saturated
//! nonlinear model.
//!
//! Source of every reference number here: the general-purpose FE library
//! scikit-fem (PyPI, version in `tests/peer/gapped_core_reference.json`,
//! 12.0.2 when committed), driven by `tests/peer/gapped_core_skfem.py` on
//! its own structured P2 mesh, three refinements, finest kept. The script
//! also writes the model file, so both codes read the same B-H samples.
//! See `tests/peer/README.md`.

use fluxwright::mesher;
use fluxwright::solver::model::{Model, ModelSource, Permeability};
use fluxwright::solver::{nonlinear, study};
use serde_json::Value;

const MODEL: &str = include_str!("peer/gapped_core.toml");
const REFERENCE: &str = include_str!("peer/gapped_core_reference.json");
const MU0: f64 = 4.0e-7 * std::f64::consts::PI;

fn reference() -> Value {
    serde_json::from_str(REFERENCE).expect("tests/peer/gapped_core_reference.json parses")
}

fn number(v: &Value, path: &[&str]) -> f64 {
    let mut at = v;
    for key in path {
        at = &at[*key];
    }
    at.as_f64()
        .unwrap_or_else(|| panic!("reference JSON has no number at {path:?}"))
}

fn relative_error(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

#[test]
fn saturated_gapped_core_matches_scikit_fem() {
    let reference = reference();
    let model = Model::from_toml_str(MODEL, &ModelSource::new("tests/peer/gapped_core.toml"))
        .expect("valid model");
    let mesh = mesher::mesh(&model.mesh_input()).expect("meshes");
    let setup = study::problem(&model, &mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    let results = study::results(&model, &mesh, &setup, &solution, 0.0);
    let solve = &results.solve;
    // Shown with --nocapture, for the comparison table in the README.
    println!(
        "fluxwright: {} unknowns, {} Newton steps, residuals {:?}, energy {} J",
        results.mesh.unknowns, solve.iterations, solve.residual_history, results.energy_j
    );
    for (name, p) in &results.probes {
        println!("  probe {name}: B {:?} T, |B| {} T", p.b_t, p.b_magnitude_t);
    }

    // The reference really is deep in saturation (scikit-fem 12.0.2,
    // tests/peer/gapped_core_skfem.py): most of the iron above 1.8 T, so
    // this exercises the nonlinear path, not a nearly linear one.
    assert!(number(&reference, &["iron_area_share_above_1_8_t"]) > 0.6);
    assert!(number(&reference, &["peak_iron_b_t"]) > 2.5);

    // Newton from A = 0: relative residual ≤ 1e-8 within 12 steps (a
    // requirement of our issue tracker; scikit-fem with the same consistent
    // tangent and an energy line search needs 9 to 10 steps on this model,
    // tests/peer/gapped_core_reference.json `runs[].newton_steps`).
    assert!(
        solve.converged && solve.relative_residual <= 1e-8 && solve.iterations <= 12,
        "Newton: converged {}, {} steps, residual history {:?}",
        solve.converged,
        solve.iterations,
        solve.residual_history
    );

    // Stored energy for the 25 mm depth against scikit-fem 12.0.2
    // (tests/peer/gapped_core_skfem.py, finest level, analytic law).
    // The script measures that its own last refinement moves the energy by
    // far less than this and that the sampled table instead of the analytic
    // law changes it by ~1e-6, so 1 % is left to fluxwright's coarse mesh.
    let want = number(&reference, &["energy_j"]);
    assert!(
        relative_error(results.energy_j, want) < 0.01,
        "energy {} J vs scikit-fem {} J",
        results.energy_j,
        want
    );

    // Probe |B| against scikit-fem 12.0.2 (same script). Point values of
    // a P2 field converge one order slower than energy and are sampled on
    // two different meshes, near saturated corners, so 3 % (common practice,
    // no source) rather than the energy's 1 %.
    let probes = reference["probes"].as_object().expect("probes object");
    assert!(probes.len() >= 3);
    for (name, want) in probes {
        let want_b = number(want, &["b_magnitude_t"]);
        let got = results
            .probes
            .get(name)
            .unwrap_or_else(|| panic!("probe `{name}` reported"));
        assert!(
            relative_error(got.b_magnitude_t, want_b) < 0.03,
            "probe {name}: |B| {} T vs scikit-fem {} T",
            got.b_magnitude_t,
            want_b
        );
        // Direction too: the vector difference, relative to |B|, within
        // the same 3 %.
        let b_t = &want["b_t"];
        let wb = [
            b_t[0].as_f64().unwrap_or(f64::NAN),
            b_t[1].as_f64().unwrap_or(f64::NAN),
        ];
        let diff = (got.b_t[0] - wb[0]).hypot(got.b_t[1] - wb[1]);
        assert!(
            diff < 0.03 * want_b,
            "probe {name}: B {:?} T vs scikit-fem {wb:?} T",
            got.b_t
        );
    }
}

#[test]
fn model_curve_samples_the_reference_law() {
    // The model's bh_curve must be the scikit-fem script's analytic law
    // (tests/peer/gapped_core_reference.json `law`), sampled: else the two
    // codes would not solve the same problem.
    let reference = reference();
    let js = number(&reference, &["law", "js_t"]);
    let mu_i = number(&reference, &["law", "mu_i"]);
    let k = std::f64::consts::PI * (mu_i - 1.0) * MU0 / (2.0 * js);
    let model = Model::from_toml_str(MODEL, &ModelSource::new("tests/peer/gapped_core.toml"))
        .expect("valid model");
    let iron = model
        .materials
        .iter()
        .find(|m| m.name == "iron")
        .expect("material `iron`");
    let Permeability::Curve(curve) = &iron.permeability else {
        panic!("iron has a B-H curve");
    };
    assert!(curve.h_a_per_m.len() >= 40);
    for (&h, &b) in curve.h_a_per_m.iter().zip(&curve.b_t) {
        let law = MU0 * h + js * std::f64::consts::FRAC_2_PI * (k * h).atan();
        assert!(
            (b - law).abs() <= 1e-12 * law.max(1e-12),
            "H = {h}: B {b} vs law {law}"
        );
    }
    // Beyond the largest B any solve reaches.
    let last_b = curve.b_t.last().copied().unwrap_or(0.0);
    assert!(last_b >= number(&reference, &["peak_iron_b_t"]));
}
