//! The open boundary (Kelvin transformation), planar: fields of line
//! currents against Ampère's law with superposition, through the whole
//! pipeline (model text → mesh with exterior → solve). Each check names its
//! source.

use fluxwright_solver::field::Solution;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::{nonlinear, study};
use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

/// Solve `text` and hand the model, its mesh and the solution to `inspect`.
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

/// B of infinitely long straight wires (position in mm, current in A along
/// +z) at `p` (mm), T: Ampère's law for each wire, B = μ0 I / 2πr
/// circulating counter-clockwise, superposed.
fn wires_b(wires: &[([f64; 2], f64)], p: [f64; 2]) -> [f64; 2] {
    let mut b = [0.0; 2];
    for &(c, i) in wires {
        let d = [(p[0] - c[0]) * 1e-3, (p[1] - c[1]) * 1e-3];
        let r2 = d[0] * d[0] + d[1] * d[1];
        let k = MU0 * i / (2.0 * PI * r2);
        b[0] += -k * d[1];
        b[1] += k * d[0];
    }
    b
}

fn vector_error(got: [f64; 2], want: [f64; 2]) -> f64 {
    (got[0] - want[0]).hypot(got[1] - want[1]) / want[0].hypot(want[1])
}

fn pair_model(condition: &str) -> String {
    format!(
        r#"
        [model]
        element_order = 2
        [mesh]
        max_size = 2
        [[shape]]
        name = "go"
        circle = {{ center = [-10, 0], radius = 2 }}
        current = 100
        mesh_size = 0.5
        [[shape]]
        name = "return"
        circle = {{ center = [10, 0], radius = 2 }}
        current = -100
        mesh_size = 0.5
        [outer]
        shape = {{ circle = {{ center = [0, 0], radius = 60 }} }}
        condition = "{condition}"
        "#
    )
}

/// Points between, beside and around the pair, out to 0.93 of the outer
/// radius (mm).
const PAIR_POINTS: [[f64; 2]; 7] = [
    [0.0, 0.0],
    [0.0, 15.0],
    [25.0, 5.0],
    [-40.0, 0.0],
    [0.0, -50.0],
    [39.0, 39.0],
    [-56.0, 0.0],
];

fn pair_errors(condition: &str) -> Vec<f64> {
    let wires = [([-10.0, 0.0], 100.0), ([10.0, 0.0], -100.0)];
    solve(&pair_model(condition), |_, solution, _| {
        PAIR_POINTS
            .iter()
            .map(|&p| {
                let got = solution.probe(p).expect("inside the model").b;
                vector_error(got, wires_b(&wires, p))
            })
            .collect()
    })
}

#[test]
fn go_and_return_pair_matches_superposed_wires_with_an_open_circle() {
    // Two 100 A wires 20 mm apart, open circle of radius 60 mm (3× the
    // spacing). Reference: Ampère's law for each round wire with uniform
    // current (outside it, B = μ0 I / 2πr, e.g. Griffiths, Introduction to
    // Electrodynamics, 4th ed., ex. 5.10), superposed; exact in free space.
    let open = pair_errors("open");
    println!("open: {open:?}");
    for (p, e) in PAIR_POINTS.iter().zip(&open) {
        assert!(
            *e < 0.01,
            "open boundary: B at {p:?} off by {:.3} %",
            100.0 * e
        );
    }
    // The same circle with A = 0 (a flux line) bends the field near it: the
    // image currents of the grounded circle are missing from free space.
    let closed = pair_errors("zero-potential");
    println!("zero potential: {closed:?}");
    let worst = closed.iter().cloned().fold(0.0, f64::max);
    assert!(
        worst > 0.03,
        "zero potential should be visibly worse, worst {worst}"
    );
}

#[test]
fn single_off_centre_wire_follows_amperes_law_with_an_open_circle() {
    // A 100 A wire 15 mm off the centre of an open circle of radius 60 mm.
    // Net current: A grows like ln r, and the image centre (infinity) is the
    // return path. Reference: Ampère's law, B = μ0 I / 2πr (Griffiths, ex.
    // 5.10), exact in free space.
    let model = |condition: &str| {
        format!(
            r#"
            [model]
            element_order = 2
            [mesh]
            max_size = 2
            [[shape]]
            name = "wire"
            circle = {{ center = [15, 0], radius = 2 }}
            current = 100
            mesh_size = 0.5
            [outer]
            shape = {{ circle = {{ center = [0, 0], radius = 60 }} }}
            condition = "{condition}"
            "#
        )
    };
    let wires = [([15.0, 0.0], 100.0)];
    let points = [
        [0.0, 0.0],
        [15.0, 20.0],
        [-40.0, 10.0],
        [45.0, -30.0],
        [-57.0, 0.0],
    ];
    let errors = |condition: &str| {
        solve(&model(condition), |_, solution, _| {
            points
                .iter()
                .map(|&p| vector_error(solution.probe(p).expect("inside").b, wires_b(&wires, p)))
                .collect::<Vec<f64>>()
        })
    };
    let open = errors("open");
    println!("open: {open:?}");
    for (p, e) in points.iter().zip(&open) {
        assert!(
            *e < 0.01,
            "open boundary: B at {p:?} off by {:.3} %",
            100.0 * e
        );
    }
    // A grounded circle returns the current on itself: its image wire at
    // R²/15 = 240 mm bends the field by tens of per cent near the far side.
    let closed = errors("zero-potential");
    println!("zero potential: {closed:?}");
    assert!(closed.iter().cloned().fold(0.0, f64::max) > 0.03);
}

#[test]
fn pair_energy_matches_the_two_wire_line_inductance() {
    // Energy per metre of a go/return pair of round wires (radius a, centres
    // d apart, uniform current I): W' = ½ L' I², L' = (μ0/π)(ln(d/a) + ¼)
    // (e.g. Grover, Inductance Calculations, 1946; internal part μ0/8π per
    // wire). With uniform current it holds for any d > 2a: outside its own
    // section each wire's potential is that of a line current and is
    // harmonic over the other section, whose mean is then its centre value
    // (the mean value property). The default depth is 1 m.
    let (i, a, d): (f64, f64, f64) = (100.0, 2e-3, 20e-3);
    let want = 0.5 * MU0 / PI * ((d / a).ln() + 0.25) * i * i;
    let open = solve(&pair_model("open"), |mesh, solution, results| {
        // The field outside the circle, read through the image: at 150 mm
        // the pair's field is nearly a pure line dipole.
        let map = mesh.exterior.expect("an open model has an exterior");
        let wires = [([-10.0, 0.0], 100.0), ([10.0, 0.0], -100.0)];
        for p in [[150.0, 40.0], [-90.0, -200.0], [0.0, 61.0]] {
            let q = map.to_image(p).expect("outside the circle");
            let b_image = solution.probe(q).expect("inside the image").b;
            let b = map.exterior_flux_density(p, b_image, solution.assembler().problem().symmetry);
            let e = vector_error(b, wires_b(&wires, p));
            println!("outside at {p:?}: error {e}");
            assert!(e < 0.01, "B outside at {p:?} off by {:.3} %", 100.0 * e);
        }
        results.energy_j
    });
    let closed = solve(&pair_model("zero-potential"), |_, _, results| {
        results.energy_j
    });
    let (e_open, e_closed) = ((open - want) / want, (closed - want) / want);
    println!("energy {open} (open, {e_open:+.2e}), {closed} (A = 0, {e_closed:+.2e}) vs {want}");
    assert!(
        e_open.abs() < 0.005,
        "open energy off by {:.3} %",
        100.0 * e_open
    );
    assert!(e_closed.abs() > 2.0 * e_open.abs());
}

#[test]
fn quarter_sector_with_zero_potential_radii_and_an_open_arc() {
    // Four 100 A wires at 45° + k·90° on a 20 mm radius, alternating in sign
    // (a line quadrupole), modelled by the 0–90° sector holding one wire:
    // the reflection in either radius maps the wires onto wires of opposite
    // current, so A = 0 on both radii (the default on straight sides of an
    // open sector; the image sector's radii take it too). The open arc at
    // 60 mm continues the sector to infinity. Reference:
    // the four wires superposed (Ampère's law, Griffiths ex. 5.10).
    let model = |condition: &str| {
        format!(
            r#"
            [model]
            element_order = 2
            [mesh]
            max_size = 2
            [[shape]]
            name = "wire"
            circle = {{ center = [14.142136, 14.142136], radius = 2 }}
            current = 100
            mesh_size = 0.5
            [outer]
            shape = {{ sector = {{ center = [0, 0], inner_radius = 0, outer_radius = 60, start_angle = 0, end_angle = 90 }} }}
            condition = "{condition}"
            "#
        )
    };
    let c = 14.142136;
    let wires = [
        ([c, c], 100.0),
        ([-c, c], -100.0),
        ([-c, -c], 100.0),
        ([c, -c], -100.0),
    ];
    let points = [
        [30.0, 5.0],
        [5.0, 30.0],
        [40.0, 40.0],
        [57.0, 10.0],
        [3.0, 3.0],
    ];
    let errors = |condition: &str| {
        solve(&model(condition), |_, solution, _| {
            points
                .iter()
                .map(|&p| vector_error(solution.probe(p).expect("inside").b, wires_b(&wires, p)))
                .collect::<Vec<f64>>()
        })
    };
    let open = errors("open");
    println!("open: {open:?}");
    for (p, e) in points.iter().zip(&open) {
        assert!(
            *e < 0.01,
            "open sector: B at {p:?} off by {:.3} %",
            100.0 * e
        );
    }
    let closed = errors("zero-potential");
    println!("zero potential: {closed:?}");
    assert!(closed.iter().cloned().fold(0.0, f64::max) > 0.03);
}
