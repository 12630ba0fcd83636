//! Good models: defaults, unit conversion, transforms, repeat expansion and
//! the example models under tests/models/good/.

use fluxwright_solver::model::{
    EdgeKind, Excitation, ForceMethod, LengthUnit, Model, ModelSource, OuterCondition, OutlineSpec,
    Permeability, Sweep, Symmetry,
};

fn parse(text: &str) -> Model {
    match Model::from_toml_str(text, &ModelSource::new("models/test-model.toml")) {
        Ok(m) => m,
        Err(e) => panic!("model should parse, got:\n{e}"),
    }
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * (1.0 + b.abs())
}

fn centroid_of_box(m: &Model, name: &str) -> [f64; 2] {
    let (i, _) = m
        .shapes
        .iter()
        .enumerate()
        .find(|(_, s)| s.name == name)
        .expect("shape exists");
    let (lo, hi) = m.shapes[i].outline.bounding_box();
    [0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1])]
}

const MINIMAL: &str = r#"
[[shape]]
rectangle = { min = [0, 0], max = [40, 10] }

[[probe]]
at = [1, 1]

[[profile]]
from = [0, 5]
to = [40, 5]

[[force]]
shapes = ["shape-1"]
"#;

#[test]
fn minimal_model_gets_the_documented_defaults() {
    let m = parse(MINIMAL);
    // Defaults from model-format.md.
    assert_eq!(m.title, "test-model"); // the file stem
    assert_eq!(m.symmetry, Symmetry::Planar);
    assert_eq!(m.length_unit, LengthUnit::Millimetre);
    assert_eq!(m.element_order, 2);
    assert!(close(m.depth, 1000.0, 1e-12)); // 1 m in mm
    assert_eq!(m.depth_m(), Some(1.0));
    assert!(close(m.mesh.max_size, 4.0, 1e-12)); // a tenth of the 40 mm extent
    assert_eq!(m.mesh.min_angle_deg, 25.0);
    assert_eq!(m.mesh.growth, 1.3);
    assert_eq!(m.mesh.adapt, 0);
    assert_eq!(m.mesh.target_error, 0.005);
    let s = &m.shapes[0];
    assert_eq!(s.name, "shape-1");
    assert_eq!(m.materials[s.material].name, "air");
    assert_eq!(s.mesh_size, m.mesh.max_size);
    assert_eq!(s.excitation, Excitation::None);
    assert_eq!(m.probes[0].name, "probe-1");
    assert_eq!(m.profiles[0].samples, 201);
    assert_eq!(m.forces[0].method, ForceMethod::StressTensor);
    assert_eq!(m.forces[0].shapes, vec![0]);
    assert_eq!(m.outer.condition, OuterCondition::Open);
    assert!(m.outer.is_default);
    // Default outer: 3× the shapes' bounding circle, centred on the box
    // centre (20, 5); half-diagonal = hypot(20, 5).
    match m.outer.spec {
        OutlineSpec::Circle { center, radius } => {
            assert_eq!(center, [20.0, 5.0]);
            assert!(close(radius, 3.0 * 20f64.hypot(5.0), 1e-12));
        }
        ref other => panic!("default outer should be a circle, got {other:?}"),
    }
    assert!(m.warnings.is_empty(), "{:?}", m.warnings);
}

#[test]
fn length_units_convert_to_metres() {
    // Exact definitions: 1 in = 25.4 mm (international inch, 1959); SI prefixes.
    for (unit, to_m) in [
        ("m", 1.0),
        ("cm", 0.01),
        ("mm", 0.001),
        ("um", 1e-6),
        ("in", 0.0254),
    ] {
        let text = format!("[model]\nlength_unit = \"{unit}\"\ndepth = 2\n{MINIMAL}");
        let m = parse(&text);
        assert!(close(m.unit_to_m(), to_m, 1e-15), "{unit}");
        assert!(
            close(m.depth_m().expect("planar"), 2.0 * to_m, 1e-15),
            "{unit}"
        );
        // Coordinates stay in model units.
        assert_eq!(m.shapes[0].outline.bounding_box().1, [40.0, 10.0]);
    }
    // The default depth is 1 m whatever the unit: 1/0.0254 = 39.370… in.
    let m = parse(&format!("[model]\nlength_unit = \"in\"\n{MINIMAL}"));
    assert!(close(m.depth, 1.0 / 0.0254, 1e-12));
    assert!(close(m.depth_m().expect("planar"), 1.0, 1e-12));
}

#[test]
fn translate_then_rotate_places_the_shape() {
    let m = parse(
        r#"
[[shape]]
name = "bar"
rectangle = { min = [0, 0], max = [2, 1] }
translate = [3, 0]
rotate = 90
rotate_about = [0, 0]
"#,
    );
    // Moved to x 3..5, y 0..1, then turned 90° about the origin:
    // (x, y) -> (-y, x), so x -1..0, y 3..5.
    let (lo, hi) = m.shapes[0].outline.bounding_box();
    assert!(
        close(lo[0], -1.0, 1e-9) && close(hi[0], 0.0, 1e-9),
        "{lo:?} {hi:?}"
    );
    assert!(
        close(lo[1], 3.0, 1e-9) && close(hi[1], 5.0, 1e-9),
        "{lo:?} {hi:?}"
    );
    // Area is kept (2 × 1).
    assert!(close(m.shapes[0].outline.area(), 2.0, 1e-12));
}

#[test]
fn repeat_with_alternate_flips_direction_and_magnetization() {
    let m = parse(
        r#"
[materials.magnet]
relative_permeability = 1.05
remanence = 1.2

[windings.w]
turns = 10
current = 1

[[shape]]
name = "pole"
rectangle = { min = [9, -1], max = [11, 1] }
material = "magnet"
magnetization_angle = 0
repeat = { count = 4, angle = 90, alternate = true }

[[shape]]
name = "tooth"
circle = { center = [5, 0], radius = 0.5 }
winding = "w"
repeat = { count = 4, alternate = true }

[[torque]]
shapes = ["pole"]
"#,
    );
    let names: Vec<&str> = m.shapes.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(
        names,
        [
            "pole[0]", "pole[1]", "pole[2]", "pole[3]", "tooth[0]", "tooth[1]", "tooth[2]",
            "tooth[3]"
        ]
    );
    // Copy k turned by k·90° about the origin: centres (10,0), (0,10), (-10,0), (0,-10).
    for (k, c) in [[10.0, 0.0], [0.0, 10.0], [-10.0, 0.0], [0.0, -10.0]]
        .iter()
        .enumerate()
    {
        let got = centroid_of_box(&m, &format!("pole[{k}]"));
        assert!(
            close(got[0], c[0], 1e-9) && close(got[1], c[1], 1e-9),
            "pole[{k}] at {got:?}"
        );
    }
    // Magnetization turns with the copy, plus 180° on odd copies.
    let angles: Vec<f64> = m.shapes[..4]
        .iter()
        .map(|s| s.magnetization_angle_deg)
        .collect();
    assert_eq!(angles, [0.0, 270.0, 180.0, 450.0]);
    // Winding direction flips on odd copies; `angle` defaults to 360/count.
    let dirs: Vec<f64> = m.shapes[4..]
        .iter()
        .map(|s| match s.excitation {
            Excitation::Winding { direction, .. } => direction,
            _ => f64::NAN,
        })
        .collect();
    assert_eq!(dirs, [1.0, -1.0, 1.0, -1.0]);
    assert!(close(centroid_of_box(&m, "tooth[1]")[1], 5.0, 1e-9));
    // The base name selects every copy.
    assert_eq!(m.torques[0].shapes, vec![0, 1, 2, 3]);
    assert_eq!(m.shapes_named("pole[2]"), vec![2]);
}

#[test]
fn rotate_turns_the_magnetization_with_the_shape() {
    let m = parse(
        r#"
[materials.magnet]
from_library = "ndfeb"

[[shape]]
rectangle = { min = [0, 0], max = [1, 1] }
material = "magnet"
magnetization_angle = 30
rotate = 45
"#,
    );
    assert_eq!(m.shapes[0].magnetization_angle_deg, 75.0);
    let mat = &m.materials[m.shapes[0].material];
    assert_eq!(mat.remanence_t, Some(1.2));
    assert_eq!(mat.permeability, Permeability::Linear { relative: 1.05 });
}

#[test]
fn library_values_can_be_overridden() {
    let m = parse(
        r#"
[materials.n42]
from_library = "ndfeb"
remanence = 1.3

[materials.steel]
from_library = "silicon-steel"
stacking_factor = 0.96

[materials.linear_steel]
from_library = "silicon-steel"
relative_permeability = 2000

[[shape]]
rectangle = { min = [0, 0], max = [1, 1] }
material = "n42"
[[shape]]
rectangle = { min = [2, 0], max = [3, 1] }
material = "steel"
[[shape]]
rectangle = { min = [4, 0], max = [5, 1] }
material = "linear_steel"
"#,
    );
    let (_, n42) = m.material("n42").expect("defined");
    assert_eq!(n42.remanence_t, Some(1.3));
    let (_, steel) = m.material("steel").expect("defined");
    assert_eq!(steel.stacking_factor, 0.96);
    assert!(matches!(steel.permeability, Permeability::Curve(_)));
    let (_, lin) = m.material("linear_steel").expect("defined");
    assert_eq!(lin.permeability, Permeability::Linear { relative: 2000.0 });
}

#[test]
fn bh_curve_file_is_read_through_the_loader() {
    let loader = |path: &str| -> Result<String, String> {
        match path {
            "curves/steel.csv" => Ok("H [A/m],B [T]\n0,0\n100,0.9\n1000,1.5\n".to_string()),
            _ => Err("not found".into()),
        }
    };
    let text = r#"
[materials.steel]
bh_curve_file = "curves/steel.csv"

[[shape]]
rectangle = { min = [0, 0], max = [1, 1] }
material = "steel"
"#;
    let m = Model::from_toml_str_with_files(text, &ModelSource::new("m.toml"), &loader)
        .expect("parses");
    let (_, steel) = m.material("steel").expect("defined");
    match &steel.permeability {
        Permeability::Curve(c) => {
            assert_eq!(c.h_a_per_m, vec![0.0, 100.0, 1000.0]);
            assert_eq!(c.b_t, vec![0.0, 0.9, 1.5]);
        }
        other => panic!("expected a curve, got {other:?}"),
    }
}

#[test]
fn axisymmetric_default_outer_is_a_half_disc_on_the_axis() {
    let m = parse(
        r#"
[model]
symmetry = "axisymmetric"

[[shape]]
rectangle = { min = [0, -10], max = [6, 20] }
"#,
    );
    assert_eq!(m.depth_m(), None);
    match m.outer.spec {
        OutlineSpec::Sector {
            center,
            inner_radius,
            outer_radius,
            start_angle_deg,
            end_angle_deg,
        } => {
            assert_eq!(center, [0.0, 5.0]);
            assert_eq!(inner_radius, 0.0);
            // 3 × the reach from (0, 5) to the far corner (6, ±15).
            assert!(close(outer_radius, 3.0 * 6f64.hypot(15.0), 1e-12));
            assert_eq!((start_angle_deg, end_angle_deg), (-90.0, 90.0));
        }
        ref other => panic!("expected a sector, got {other:?}"),
    }
    let (lo, _) = m.outer.outline.bounding_box();
    assert!(lo[0] >= -1e-9, "the outer stays in x ≥ 0: {lo:?}");
    // Half-disc area ½πR².
    let r = 3.0 * 6f64.hypot(15.0);
    assert!(close(
        m.outer.outline.area(),
        0.5 * std::f64::consts::PI * r * r,
        1e-9
    ));
}

#[test]
fn periodic_edges_and_uniform_field() {
    let m = parse(
        r#"
[[shape]]
name = "tooth"
sector = { center = [0, 0], inner_radius = 10, outer_radius = 20, start_angle = 10, end_angle = 35 }

[outer]
shape = { sector = { center = [0, 0], inner_radius = 5, outer_radius = 30, start_angle = 0, end_angle = 45 } }
condition = "uniform-field"
field = [0.0, 0.5]

[[edge]]
from = [5, 0]
to = [30, 0]
condition = "anti-periodic"
partner = { from = [3.5355339059327378, 3.5355339059327373], to = [21.213203435596427, 21.213203435596423] }
"#,
    );
    assert_eq!(
        m.outer.condition,
        OuterCondition::UniformField {
            field_t: [0.0, 0.5]
        }
    );
    assert!(matches!(m.edges[0].kind, EdgeKind::AntiPeriodic { .. }));
    // Annular sector area ½·θ·(R² − r²) with θ = 25° (shape) and 45° (outer).
    let area = |deg: f64, r: f64, rr: f64| 0.5 * deg.to_radians() * (rr * rr - r * r);
    assert!(close(
        m.shapes[0].outline.area(),
        area(25.0, 10.0, 20.0),
        1e-12
    ));
    assert!(close(m.outer.outline.area(), area(45.0, 5.0, 30.0), 1e-12));
}

#[test]
fn sweep_values_include_both_ends() {
    let m = parse(&format!(
        "{MINIMAL}\n[windings.w]\nturns = 5\n[[shape]]\nrectangle = {{ min = [0, 12], max = [4, 14] }}\nwinding = \"w\"\ndirection = 1\n[[shape]]\nrectangle = {{ min = [6, 12], max = [10, 14] }}\nwinding = \"w\"\ndirection = -1\n[sweep]\ncurrent = {{ winding = \"w\", from = 0, to = 2, steps = 4 }}\n"
    ));
    let sweep = m.sweep.as_ref().expect("sweep");
    assert!(matches!(
        sweep,
        Sweep::Current {
            winding: 0,
            steps: 4,
            ..
        }
    ));
    assert_eq!(sweep.values(), vec![0.0, 0.5, 1.0, 1.5, 2.0]);
    // A swept winding without `current` is not warned about.
    assert!(m.warnings.is_empty(), "{:?}", m.warnings);
}

#[test]
fn mesh_input_matches_the_shapes() {
    let m = parse(&format!(
        "[mesh]\nmax_size = 3\nmin_angle = 30\ngrowth = 1.2\n{MINIMAL}"
    ));
    let input = m.mesh_input();
    assert_eq!(input.shapes.len(), m.shapes.len());
    assert_eq!(input.shapes[0].mesh_size, 3.0);
    assert_eq!(input.max_size, 3.0);
    assert_eq!(input.min_angle_deg, 30.0);
    assert_eq!(input.growth, 1.2);
    assert!(input.outer.validate().is_ok());
    assert!(input.chord_fraction > 0.0 && input.chord_fraction < 0.01);
}

fn example(name: &str, text: &str) -> Model {
    match Model::from_toml_str(text, &ModelSource::new(name)) {
        Ok(m) => m,
        Err(e) => panic!("{name} should parse:\n{e}"),
    }
}

#[test]
fn door_holding_magnet_example() {
    let m = example(
        "door_holding_magnet.toml",
        include_str!("../../tests/models/good/door_holding_magnet.toml"),
    );
    assert!(m.warnings.is_empty(), "{:?}", m.warnings);
    let summary = m.summary();
    assert_eq!(summary.depth_m, Some(0.02));
    let core = summary
        .shapes
        .iter()
        .find(|r| r.name == "core")
        .expect("core row");
    // U-core: 40 × 20 block less the 24 × 14 slot = 800 − 336 = 464 mm².
    assert!(close(core.area, 464.0, 1e-12));
    let coil = &summary.windings[0];
    assert_eq!(coil.shapes, vec!["coil_go (+1)", "coil_return (-1)"]);
    assert_eq!(m.forces[0].shapes, vec![3]);
    assert!(summary
        .materials
        .iter()
        .any(|r| r.name == "core_steel" && r.kind.starts_with("B-H curve")));
}

#[test]
fn gapped_choke_example() {
    let m = example(
        "gapped_choke.toml",
        include_str!("../../tests/models/good/gapped_choke.toml"),
    );
    assert!(m.warnings.is_empty(), "{:?}", m.warnings);
    assert_eq!(m.outer.condition, OuterCondition::ZeroPotential);
    let gap = &m.shapes[3];
    assert_eq!((gap.name.as_str(), gap.mesh_size), ("gap", 0.25));
    // Default max_size: a tenth of the 60 mm extent of the shapes.
    assert!(close(m.mesh.max_size, 6.0, 1e-12));
    let (_, lam) = m.material("lamination").expect("defined");
    assert_eq!(lam.stacking_factor, 0.95);
    assert_eq!(m.winding_side(0, 1.0), vec![4]);
    assert_eq!(m.winding_side(0, -1.0), vec![5]);
    assert_eq!(m.sweep.as_ref().map(|s| s.values().len()), Some(11));
}

#[test]
fn axisymmetric_plunger_example() {
    let m = example(
        "axisymmetric_plunger.toml",
        include_str!("../../tests/models/good/axisymmetric_plunger.toml"),
    );
    assert!(m.warnings.is_empty(), "{:?}", m.warnings);
    assert_eq!(m.symmetry, Symmetry::Axisymmetric);
    assert!(matches!(m.outer.spec, OutlineSpec::Sector { .. }));
    match &m.sweep {
        Some(Sweep::Move { shapes, along, .. }) => {
            assert_eq!(shapes, &vec![5]);
            assert_eq!(*along, [0.0, 1.0]);
        }
        other => panic!("expected a move sweep, got {other:?}"),
    }
    assert_eq!(m.forces[0].method, ForceMethod::VirtualWork);
}

#[test]
fn busbar_pair_example() {
    let m = example(
        "busbar_pair.toml",
        include_str!("../../tests/models/good/busbar_pair.toml"),
    );
    assert!(m.warnings.is_empty(), "{:?}", m.warnings);
    assert_eq!(m.shapes[0].excitation, Excitation::Current { amps: 1000.0 });
    assert_eq!(
        m.shapes[1].excitation,
        Excitation::Current { amps: -1000.0 }
    );
    // Circle loop of radius 23: area π·23².
    assert!(close(
        m.loops[0].outline.area(),
        std::f64::consts::PI * 23.0 * 23.0,
        1e-12
    ));
    assert_eq!(m.summary().shapes[0].source, "1000 A");
}
