//! Ampère's-law loops and line profiles through the whole pipeline (model
//! text → mesher → solver → post-processing). Each check names its source.

use fluxwright_mesher::Outline;
use fluxwright_solver::field::Solution;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::post::loops::{self, LoopResult};
use fluxwright_solver::post::profiles;
use fluxwright_solver::{nonlinear, study};
use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

/// The issue's requirement on P2 elements: ∮H·dl within 0.5 % of the
/// enclosed current.
const P2_MISMATCH: f64 = 0.005;

fn solve<R>(text: &str, inspect: impl FnOnce(&Model, &Solution) -> R) -> R {
    let mut model =
        Model::from_toml_str(text, &ModelSource::new("loops.toml")).expect("valid model");
    model.mesh.chord_fraction = 1e-4;
    let mesh = fluxwright_mesher::mesh(&model.mesh_input()).expect("meshes");
    let setup = study::problem(&model, &mesh).expect("problem builds");
    let solution = nonlinear::solve(&setup.problem, &Default::default()).expect("solves");
    assert!(solution.report.converged, "{:?}", solution.report);
    inspect(&model, &solution)
}

fn check(solution: &Solution, name: &str, outline: &Outline) -> LoopResult {
    let r = loops::ampere_loop(solution, outline).expect("loop inside the mesh");
    eprintln!(
        "{name}: ∮H·dl = {:.6} A, enclosed {:.6} A, mismatch {:.2e} ({} pieces)",
        r.h_line_integral_a, r.enclosed_current_a, r.relative_mismatch, r.pieces
    );
    r
}

fn rect(min: [f64; 2], max: [f64; 2]) -> Outline {
    Outline::rectangle(min, max).expect("rectangle")
}

fn circle(center: [f64; 2], radius: f64) -> Outline {
    Outline::circle(center, radius).expect("circle")
}

/// Area of the part of a disc of radius r beyond a chord at distance d from
/// the centre (plane geometry: r² acos(d/r) − d √(r² − d²)).
fn segment_area(r: f64, d: f64) -> f64 {
    r * r * (d / r).acos() - d * (r * r - d * d).sqrt()
}

const WIRE: &str = r#"
    [model]
    element_order = 2
    [mesh]
    max_size = 8
    [[shape]]
    name = "near"
    circle = { center = [0, 0], radius = 16 }
    mesh_size = 1.5
    [[shape]]
    name = "wire"
    circle = { center = [0, 0], radius = 5 }
    current = 100
    mesh_size = 0.8
    [outer]
    shape = { circle = { center = [0, 0], radius = 60 } }
    condition = "zero-potential"
"#;

#[test]
fn loops_around_and_through_a_round_conductor() {
    solve(WIRE, |_, solution| {
        let (i, a) = (100.0, 5.0);
        // Ampère's law: a loop enclosing the whole wire encloses I (e.g.
        // Griffiths, Introduction to Electrodynamics, 4th ed., §5.3.3).
        for (name, outline) in [
            ("circle r=10", circle([0.0, 0.0], 10.0)),
            ("square 16", rect([-8.0, -8.0], [8.0, 8.0])),
            ("off-centre square", rect([-7.0, -6.0], [12.0, 9.5])),
        ] {
            let r = check(solution, name, &outline);
            assert!(
                (r.enclosed_current_a - i).abs() < 1e-9 * i,
                "{name}: {}",
                r.enclosed_current_a
            );
            assert!(r.relative_mismatch < P2_MISMATCH, "{name}: {r:?}");
        }
        // A circle of radius 3 inside the wire encloses I (3/5)² (uniform
        // current density; the loop polygon's area differs from the
        // circle's by ≈ 1.3e-5).
        let r = check(solution, "inside r=3", &circle([0.0, 0.0], 3.0));
        assert!(
            (r.enclosed_current_a - i * 9.0 / 25.0).abs() < 1e-3 * i * 9.0 / 25.0,
            "{r:?}"
        );
        assert!(r.relative_mismatch < P2_MISMATCH, "{r:?}");
        // A rectangle cutting the wire along the chord x = 2 encloses the
        // circular segment beyond it: I · segment(5, 2)/(π 5²).
        let r = check(solution, "chord x=2", &rect([2.0, -12.0], [12.0, 12.0]));
        let want = i * segment_area(a, 2.0) / (PI * a * a);
        assert!(
            (r.enclosed_current_a - want).abs() < 1e-3 * want,
            "{} vs {want}",
            r.enclosed_current_a
        );
        assert!(r.relative_mismatch < P2_MISMATCH, "{r:?}");
        // Clockwise-written polygons are traversed with the inside on the
        // left all the same.
        let cw = [[-8.0, -8.0], [-8.0, 8.0], [8.0, 8.0], [8.0, -8.0]];
        let r = loops::ampere_polygon(solution, &cw).expect("inside");
        assert!(
            (r.enclosed_current_a - i).abs() < 1e-9 * i && r.h_line_integral_a > 0.0,
            "{r:?}"
        );
        // A loop reaching outside the mesh is refused.
        assert!(matches!(
            loops::ampere_loop(solution, &circle([0.0, 0.0], 70.0)),
            Err(loops::LoopError::OutsideMesh { .. })
        ));
    });
}

#[test]
fn profile_across_a_round_conductor() {
    solve(WIRE, |_, solution| {
        // From x = −20 to 70 mm along y = 0 (the mesh ends at 60): By from
        // Ampère's law, μ0 I x/2πa² inside and μ0 I/2πx outside (e.g.
        // Griffiths, as above, problem 5.14).
        let samples = profiles::sample_line(solution, [-20.0, 0.0], [70.0, 0.0], 91);
        assert_eq!(samples.len(), 91);
        let (i, a) = (100.0, 5e-3);
        for s in &samples {
            let x = s.point[0];
            assert!((s.position - (x + 20.0)).abs() < 1e-9);
            if x > 61.0 {
                assert!(!s.inside(), "x = {x} is outside the mesh");
                continue;
            }
            if x > 59.0 {
                // At the polygonal outer edge.
                continue;
            }
            let f = s.field.expect("inside the mesh");
            let xm = x * 1e-3;
            let want = if xm.abs() < a {
                MU0 * i * xm / (2.0 * PI * a * a)
            } else {
                MU0 * i / (2.0 * PI * xm)
            };
            assert!(
                (f.b[1] - want).abs() < 0.01 * want.abs().max(MU0 * i / (2.0 * PI * a) * 0.2),
                "x {x}: By {} vs {want}",
                f.b[1]
            );
            assert!((f.h[1] - f.b[1] / MU0).abs() < 1e-9 * f.h[1].abs().max(1.0));
        }
        let csv = profiles::profile_csv(&samples);
        assert!(csv.starts_with("position,Bx,By,|B|,Hx,Hy\n"));
        assert_eq!(csv.lines().count(), 92);
    });
}

#[test]
fn loops_around_winding_sides() {
    let text = r#"
        [model]
        element_order = 2
        [mesh]
        max_size = 5
        [windings.coil]
        turns = 50
        current = 3
        [[shape]]
        name = "go"
        rectangle = { min = [-12, -6], max = [-4, 6] }
        winding = "coil"
        mesh_size = 1
        [[shape]]
        name = "return"
        rectangle = { min = [4, -6], max = [12, 6] }
        winding = "coil"
        direction = -1
        mesh_size = 1
        [outer]
        shape = { circle = { center = [0, 0], radius = 60 } }
        condition = "zero-potential"
    "#;
    solve(text, |_, solution| {
        let ni = 150.0;
        // Ampère's law (as above): the go side's loop encloses +N I, the
        // return side's −N I.
        let r = check(solution, "go side", &circle([-8.0, 0.0], 9.0));
        assert!(
            (r.enclosed_current_a - ni).abs() < 1e-9 * ni && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
        let r = check(solution, "return side", &rect([2.0, -8.0], [14.0, 9.0]));
        assert!(
            (r.enclosed_current_a + ni).abs() < 1e-9 * ni && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
        // Half of the go side: the rectangle x ≤ −8 holds half its area.
        let r = check(
            solution,
            "half go side",
            &rect([-20.0, -10.0], [-8.0, 10.0]),
        );
        assert!(
            (r.enclosed_current_a - 0.5 * ni).abs() < 1e-9 * ni
                && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
        // A loop on the go side's own outline runs along mesh edges (the
        // two triangles on either side are averaged) and encloses it all.
        let r = check(
            solution,
            "on the go outline",
            &rect([-12.0, -6.0], [-4.0, 6.0]),
        );
        assert!(
            (r.enclosed_current_a - ni).abs() < 1e-9 * ni && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
        // Both sides: no net current, so ∮H·dl ≈ 0 (relative to ∮|H·t|dl).
        let r = check(solution, "both sides", &rect([-15.0, -9.0], [15.0, 9.0]));
        assert!(r.enclosed_current_a.abs() < 1e-9 * ni, "{r:?}");
        assert!(
            r.h_line_integral_a.abs() < 1e-3 * ni && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
    });
}

/// An iron frame (outer [−20, 20]², window [−12, 12]², mm) around an
/// off-centre wire of radius 5 mm at (−4, 0); `MATERIAL` is replaced by the
/// frame's material.
const WIRE_IN_FRAME: &str = r#"
    [model]
    element_order = 2
    [mesh]
    max_size = 8
    [materials.iron]
    MATERIAL
    [[shape]]
    name = "frame"
    material = "iron"
    rectangle = { min = [-20, -20], max = [20, 20] }
    mesh_size = 1
    [[shape]]
    name = "window"
    rectangle = { min = [-12, -12], max = [12, 12] }
    mesh_size = 1.2
    [[shape]]
    name = "wire"
    circle = { center = [-4, 0], radius = 5 }
    current = 300
    mesh_size = 0.8
    [outer]
    shape = { circle = { center = [0, 0], radius = 60 } }
    condition = "zero-potential"
"#;

/// Loops through the frame; returns |B| in the middle of its right leg.
fn loops_through_iron(material: &str) -> f64 {
    let text = WIRE_IN_FRAME.replace("MATERIAL", material);
    solve(&text, |_, solution| {
        let (i, a) = (300.0, 5.0);
        // Ampère's law holds for H whatever the material (∇×H = J; e.g.
        // Griffiths, as above, §6.3.1). This loop runs through the frame on
        // three sides and cuts the wire along the chord x = −6, 2 mm left
        // of its centre: it encloses the wire minus the circular segment
        // beyond that chord.
        let r = check(
            solution,
            "through iron and wire",
            &rect([-6.0, -16.0], [16.0, 16.0]),
        );
        let want = i * (1.0 - segment_area(a, 2.0) / (PI * a * a));
        assert!(
            (r.enclosed_current_a - want).abs() < 1e-3 * want,
            "{} vs {want}",
            r.enclosed_current_a
        );
        assert!(r.relative_mismatch < P2_MISMATCH, "{r:?}");
        // A circle in and out of the frame around the whole wire.
        let r = check(
            solution,
            "circle in and out of iron",
            &circle([0.0, 0.0], 16.0),
        );
        assert!(
            (r.enclosed_current_a - i).abs() < 1e-9 * i && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
        // Inside the right leg: no current, ∮H·dl ≈ 0.
        let r = check(solution, "inside iron", &rect([13.0, -10.0], [19.0, 10.0]));
        assert!(
            r.enclosed_current_a == 0.0 && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
        let leg = solution.probe([16.0, 0.0]).expect("in the frame");
        eprintln!("|B| in the right leg: {:.3} T", leg.b_magnitude());
        leg.b_magnitude()
    })
}

#[test]
fn loops_through_linear_iron() {
    loops_through_iron("relative_permeability = 1000");
}

#[test]
fn loops_through_saturating_iron() {
    let b = loops_through_iron(
        "bh_curve = { h = [0, 100, 200, 500, 1000, 5000, 20000, 100000], b = [0, 0.9, 1.2, 1.45, 1.55, 1.7, 1.9, 2.2] }",
    );
    // 300 A around a ≈ 0.13 m iron path: H ≈ 2 kA/m, past the knee.
    assert!(b > 1.5, "the frame should be saturated, |B| = {b} T");
}

#[test]
fn axisymmetric_loop_counts_current_along_phi_positive() {
    // A ring conductor (current +50 A along +φ) at r = 20 mm: a loop around
    // its cross-section in the (r, z) plane encloses +50 A in the
    // right-hand sense about +φ (Ampère's law, as above).
    let text = r#"
        [model]
        symmetry = "axisymmetric"
        [mesh]
        max_size = 20
        [[shape]]
        name = "near"
        rectangle = { min = [0, -15], max = [40, 15] }
        mesh_size = 1.5
        [[shape]]
        name = "ring"
        circle = { center = [20, 0], radius = 2 }
        current = 50
        mesh_size = 0.4
        [outer]
        shape = { sector = { center = [0, 0], inner_radius = 0, outer_radius = 200, start_angle = -90, end_angle = 90 } }
        condition = "zero-potential"
    "#;
    solve(text, |_, solution| {
        let r = check(solution, "around ring", &rect([15.0, -5.0], [26.0, 6.0]));
        assert!((r.enclosed_current_a - 50.0).abs() < 1e-9 * 50.0, "{r:?}");
        assert!(
            r.h_line_integral_a > 0.0 && r.relative_mismatch < P2_MISMATCH,
            "{r:?}"
        );
        // Half the ring's section (z ≥ 0).
        let r = check(solution, "upper half", &rect([15.0, 0.0], [26.0, 6.0]));
        assert!((r.enclosed_current_a - 25.0).abs() < 1e-6 * 25.0, "{r:?}");
        assert!(r.relative_mismatch < P2_MISMATCH, "{r:?}");
    });
}
