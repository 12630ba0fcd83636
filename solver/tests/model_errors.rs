//! One test per class of model error: each bad model must fail with a
//! message that names the file, the culprit and (where it has one) the line.

use fluxwright_solver::model::{ErrorKind, Model, ModelErrors, ModelSource};

const FILE: &str = "devices/bad-model.toml";

fn errors(text: &str) -> ModelErrors {
    match Model::from_toml_str(text, &ModelSource::new(FILE)) {
        Ok(m) => panic!("model should be rejected, parsed as {m:#?}"),
        Err(e) => e,
    }
}

/// The one error of `kind` whose message contains every piece of `culprit`;
/// checks it names the file and, when given, the line.
#[track_caller]
fn check(text: &str, kind: ErrorKind, line: Option<usize>, culprit: &[&str]) {
    let all = errors(text);
    let found = all
        .errors
        .iter()
        .find(|e| e.kind == kind && culprit.iter().all(|c| e.what.contains(c)));
    let Some(e) = found else {
        panic!("no {kind:?} error mentioning {culprit:?} in:\n{all}")
    };
    let shown = e.to_string();
    assert!(
        shown.starts_with(FILE),
        "message must name the file: {shown}"
    );
    if let Some(line) = line {
        assert_eq!(e.line, Some(line), "wrong line in: {shown}");
        assert!(shown.starts_with(&format!("{FILE}:{line}:")), "{shown}");
    }
}

const SQUARE: &str = "[[shape]]\nname = \"sq\"\nrectangle = { min = [0, 0], max = [10, 10] }\n";

#[test]
fn syntax_error_gives_line_and_column() {
    let text = "[model]\ntitle = \"x\"\nsymmetry = planar\n";
    check(text, ErrorKind::Syntax, Some(3), &["TOML syntax error"]);
    let e = errors(text);
    assert_eq!(e.errors.len(), 1);
    assert_eq!(e.errors[0].column, Some(12), "{}", e);
}

#[test]
fn unknown_key_suggests_the_nearest() {
    let text =
        format!("[materials.core]\nrelative_permability = 1000\n\n{SQUARE}material = \"core\"\n");
    check(
        &text,
        ErrorKind::UnknownKey,
        Some(2),
        &[
            "unknown key `relative_permability` in [materials.core]",
            "did you mean `relative_permeability`?",
        ],
    );
}

#[test]
fn unknown_table_and_misplaced_key() {
    check(
        &format!("[meshh]\nmax_size = 1\n{SQUARE}"),
        ErrorKind::UnknownKey,
        Some(1),
        &["`meshh`", "`mesh`"],
    );
    // `turns` is a winding key, not a shape key.
    check(
        &format!("{SQUARE}turns = 10\n"),
        ErrorKind::UnknownKey,
        Some(4),
        &["`turns`", "shape `sq`", "[windings.NAME]"],
    );
    // Unknown key inside an inline outline table.
    check(
        "[[shape]]\ncircle = { centre = [0, 0], radius = 1 }\n",
        ErrorKind::UnknownKey,
        Some(2),
        &["`centre`", "`center`"],
    );
}

#[test]
fn wrong_value_type() {
    check(
        &format!("[windings.coil]\nturns = \"many\"\n{SQUARE}winding = \"coil\"\n"),
        ErrorKind::WrongType,
        Some(2),
        &["`turns`", "[windings.coil]", "number", "string"],
    );
    check(
        &format!("{SQUARE}translate = [1, 2, 3]\n"),
        ErrorKind::WrongType,
        Some(4),
        &["`translate`", "shape `sq`"],
    );
}

#[test]
fn undefined_material_and_winding() {
    let text = format!("[materials.copper]\nrelative_permeability = 1\n{SQUARE}material = \"coper\"\nwinding = \"coil\"\n");
    check(
        &text,
        ErrorKind::UndefinedName,
        Some(6),
        &["shape `sq`", "material `coper`", "did you mean `copper`"],
    );
    check(
        &text,
        ErrorKind::UndefinedName,
        Some(7),
        &["shape `sq`", "winding `coil`"],
    );
}

#[test]
fn undefined_shapes_in_force_torque_and_sweep() {
    let text = format!(
        "{SQUARE}\n[[force]]\nname = \"pull\"\nshapes = [\"sq\", \"armature\"]\n\n[[torque]]\nname = \"t\"\nshapes = [\"sqq\"]\n\n[sweep]\nmove = {{ shapes = [\"plunger\"], along = [0, 1], from = 0, to = 1, steps = 2 }}\n"
    );
    check(
        &text,
        ErrorKind::UndefinedName,
        Some(7),
        &["[[force]] `pull`", "shape `armature`"],
    );
    check(
        &text,
        ErrorKind::UndefinedName,
        Some(11),
        &["[[torque]] `t`", "shape `sqq`", "did you mean `sq`"],
    );
    check(
        &text,
        ErrorKind::UndefinedName,
        Some(14),
        &["[sweep] move", "shape `plunger`"],
    );
    assert_eq!(
        errors(&text).errors.len(),
        3,
        "all three reported: {}",
        errors(&text)
    );
}

#[test]
fn undefined_winding_in_sweep() {
    let text = format!("[windings.main]\nturns = 3\ncurrent = 1\n{SQUARE}winding = \"main\"\n[sweep]\ncurrent = {{ winding = \"mian\", from = 0, to = 1, steps = 1 }}\n");
    check(
        &text,
        ErrorKind::UndefinedName,
        Some(9),
        &["[sweep] current", "winding `mian`", "did you mean `main`"],
    );
}

#[test]
fn non_finite_numbers() {
    check(
        "[[shape]]\ncircle = { center = [0, 0], radius = nan }\n",
        ErrorKind::OutOfRange,
        Some(2),
        &["`radius`", "finite", "NaN"],
    );
    check(
        &format!("{SQUARE}current = inf\n"),
        ErrorKind::OutOfRange,
        Some(4),
        &["`current`", "shape `sq`", "finite"],
    );
    check(
        "[[shape]]\npolygon = [[0, 0], [1, -inf], [1, 1]]\n",
        ErrorKind::OutOfRange,
        Some(2),
        &["`polygon`", "shape #1", "finite"],
    );
}

#[test]
fn numbers_out_of_range() {
    let w = |turns: &str| format!("[windings.coil]\nturns = {turns}\n{SQUARE}winding = \"coil\"\n");
    check(
        &w("-5"),
        ErrorKind::OutOfRange,
        Some(2),
        &["`turns`", "[windings.coil]", "> 0"],
    );
    check(&w("0"), ErrorKind::OutOfRange, Some(2), &["`turns`"]);
    for r in ["0", "-1"] {
        check(
            &format!("[[shape]]\nname = \"wire\"\ncircle = {{ center = [0, 0], radius = {r} }}\n"),
            ErrorKind::OutOfRange,
            Some(3),
            &["`radius`", "shape `wire`", "> 0"],
        );
    }
    let mat = |kv: &str| format!("[materials.m]\n{kv}\n{SQUARE}material = \"m\"\n");
    for mu in ["0.5", "0", "-2"] {
        check(
            &mat(&format!("relative_permeability = {mu}")),
            ErrorKind::OutOfRange,
            Some(2),
            &["`relative_permeability`", "[materials.m]", "≥ 1"],
        );
    }
    for f in ["0", "1.5", "-0.1"] {
        check(
            &mat(&format!(
                "relative_permeability = 100\nstacking_factor = {f}"
            )),
            ErrorKind::OutOfRange,
            Some(3),
            &["`stacking_factor`", "[materials.m]", "(0, 1]"],
        );
    }
    check(
        &format!("[model]\nelement_order = 3\n{SQUARE}"),
        ErrorKind::OutOfRange,
        Some(2),
        &["`element_order`", "from 1 to 2"],
    );
    check(
        &format!("{SQUARE}mesh_size = -1\n"),
        ErrorKind::OutOfRange,
        Some(4),
        &["`mesh_size`", "shape `sq`"],
    );
    check(
        &format!("[mesh]\ngrowth = 1.0\n{SQUARE}"),
        ErrorKind::OutOfRange,
        Some(2),
        &["`growth`", "[mesh]", "> 1"],
    );
    for a in ["0", "40", "-5"] {
        check(
            &format!("[mesh]\nmin_angle = {a}\n{SQUARE}"),
            ErrorKind::OutOfRange,
            Some(2),
            &["`min_angle`", "(0, 34]"],
        );
    }
    check(
        &format!("{SQUARE}direction = 0.5\n"),
        ErrorKind::OutOfRange,
        Some(4),
        &["`direction`", "shape `sq`", "+1"],
    );
    check(
        &format!("{SQUARE}[[profile]]\nname = \"p\"\nfrom = [0, 0]\nto = [1, 1]\nsamples = 1\n"),
        ErrorKind::OutOfRange,
        Some(8),
        &["`samples`", "[[profile]] `p`", "from 2 to"],
    );
    check(
        &format!("[model]\nlength_unit = \"mm2\"\n{SQUARE}"),
        ErrorKind::OutOfRange,
        Some(2),
        &["`length_unit`", "\"mm\""],
    );
    check(
        &format!("{SQUARE}repeat = {{ count = 0 }}\n"),
        ErrorKind::OutOfRange,
        Some(4),
        &["`count`", "`repeat` of shape `sq`"],
    );
}

#[test]
fn material_needs_exactly_one_permeability() {
    let mat = |kv: &str| format!("[materials.m]\n{kv}\n{SQUARE}material = \"m\"\n");
    check(
        &mat("stacking_factor = 0.9"),
        ErrorKind::Conflict,
        Some(1),
        &["[materials.m]", "no permeability"],
    );
    check(
        &mat("relative_permeability = 100\nbh_curve = { h = [0, 1], b = [0, 1] }"),
        ErrorKind::Conflict,
        Some(3),
        &[
            "[materials.m]",
            "both `relative_permeability` and `bh_curve`",
        ],
    );
    check(
        &mat("bh_curve = { h = [0, 1], b = [0, 1] }\nbh_curve_file = \"steel.csv\""),
        ErrorKind::Conflict,
        None,
        &["[materials.m]", "`bh_curve_file`"],
    );
}

#[test]
fn unknown_library_material() {
    check(
        "[materials.m]\nfrom_library = \"ndfbe\"\n[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\nmaterial = \"m\"\n",
        ErrorKind::UndefinedName,
        Some(2),
        &["[materials.m]", "\"ndfbe\"", "did you mean `ndfeb`"],
    );
}

#[test]
fn air_cannot_be_redefined() {
    check(
        &format!("[materials.air]\nrelative_permeability = 1\n{SQUARE}"),
        ErrorKind::DuplicateName,
        Some(1),
        &["`air` is built in"],
    );
}

#[test]
fn bad_polygons() {
    check(
        "[[shape]]\nname = \"bow\"\npolygon = [[0, 0], [2, 2], [2, 0], [0, 2]]\n",
        ErrorKind::Geometry,
        Some(1),
        &["shape `bow`", "crosses", "(1.000000, 1.000000)"],
    );
    check(
        "[[shape]]\nname = \"flat\"\npolygon = [[0, 0], [1, 0], [2, 0]]\n",
        ErrorKind::Geometry,
        Some(1),
        &["shape `flat`"],
    );
    check(
        "[[shape]]\nname = \"two\"\npolygon = [[0, 0], [1, 0]]\n",
        ErrorKind::Geometry,
        Some(3),
        &["shape `two`", "at least 3"],
    );
    check(
        "[[shape]]\nname = \"r\"\nrectangle = { min = [1, 0], max = [0, 1] }\n",
        ErrorKind::Geometry,
        Some(3),
        &["shape `r`", "no area"],
    );
    check(
        "[[shape]]\nname = \"s\"\nsector = { center = [0, 0], outer_radius = 1, start_angle = 90, end_angle = 0 }\n",
        ErrorKind::Geometry,
        Some(3),
        &["shape `s`", "end_angle"],
    );
}

#[test]
fn shape_outside_the_outer() {
    check(
        &format!("{SQUARE}[[shape]]\nname = \"far\"\ncircle = {{ center = [30, 0], radius = 2 }}\n[outer]\nshape = {{ circle = {{ center = [0, 0], radius = 20 }} }}\n"),
        ErrorKind::Geometry,
        Some(4),
        &["shape `far`", "outside [outer] shape"],
    );
    // Touching the outer edge is allowed: a square filling the outer square.
    let ok = "[[shape]]\nrectangle = { min = [0, 0], max = [10, 10] }\n[outer]\nshape = { rectangle = { min = [0, 0], max = [10, 10] } }\ncondition = \"flux-normal\"\n";
    assert!(Model::from_toml_str(ok, &ModelSource::new(FILE)).is_ok());
}

#[test]
fn probes_and_loops_outside_the_outer() {
    let text = format!(
        "{SQUARE}[outer]\nshape = {{ circle = {{ center = [5, 5], radius = 20 }} }}\n[[probe]]\nname = \"far\"\nat = [100, 0]\n[[loop]]\nname = \"big\"\ncircle = {{ center = [5, 5], radius = 30 }}\n"
    );
    check(
        &text,
        ErrorKind::Geometry,
        Some(7),
        &["[[probe]] `far`", "outside"],
    );
    check(
        &text,
        ErrorKind::Geometry,
        Some(10),
        &["[[loop]] `big`", "outside"],
    );
}

#[test]
fn axisymmetric_shape_left_of_the_axis() {
    check(
        "[model]\nsymmetry = \"axisymmetric\"\n[[shape]]\nname = \"coil\"\nrectangle = { min = [-1, 0], max = [5, 5] }\n",
        ErrorKind::Geometry,
        Some(3),
        &["shape `coil`", "x = r ≥ 0"],
    );
    check(
        "[model]\nsymmetry = \"axisymmetric\"\ndepth = 5\n[[shape]]\nrectangle = { min = [0, 0], max = [5, 5] }\n",
        ErrorKind::Conflict,
        Some(3),
        &["`depth`", "planar models only"],
    );
}

#[test]
fn bad_bh_curves() {
    let mat = |curve: &str| {
        format!("[materials.iron]\nbh_curve = {curve}\n{SQUARE}material = \"iron\"\n")
    };
    check(
        &mat("{ h = [10, 100], b = [0, 1] }"),
        ErrorKind::BhCurve,
        Some(2),
        &["[materials.iron]", "start at H = 0, B = 0"],
    );
    check(
        &mat("{ h = [0, 100, 50], b = [0, 1, 1.2] }"),
        ErrorKind::BhCurve,
        Some(2),
        &["[materials.iron]", "increasing in H", "point 3"],
    );
    check(
        &mat("{ h = [0, 100, 200], b = [0, 1, 0.9] }"),
        ErrorKind::BhCurve,
        Some(2),
        &["increasing in B"],
    );
    check(
        &mat("{ h = [0, 100, 200], b = [0, 1] }"),
        ErrorKind::BhCurve,
        Some(2),
        &["3 H values but 2 B values"],
    );
    check(
        &mat("{ h = [0], b = [0] }"),
        ErrorKind::BhCurve,
        Some(2),
        &["at least 2"],
    );
    check(
        &mat("{ h = [0, 100] }"),
        ErrorKind::MissingKey,
        Some(2),
        &["needs `b`"],
    );
    // H given in kA/m by mistake: B/H falls below μ0.
    check(
        &mat("{ h = [0, 1000, 2000], b = [0, 0.001, 0.0015] }"),
        ErrorKind::BhCurve,
        Some(2),
        &["below μ0", "units"],
    );
    // A magnet with a B-H curve instead of a recoil permeability.
    check(
        &format!("[materials.iron]\nbh_curve = {{ h = [0, 100], b = [0, 1] }}\nremanence = 1.1\n{SQUARE}material = \"iron\"\n"),
        ErrorKind::Conflict,
        Some(3),
        &["[materials.iron]", "recoil permeability"],
    );
}

#[test]
fn bh_curve_file_problems() {
    let loader = |path: &str| -> Result<String, String> {
        match path {
            "bad.csv" => Ok("H,B\n0,0\n100,x\n".into()),
            "decreasing.csv" => Ok("0 0\n100 1.0\n200 0.5\n".into()),
            _ => Err(format!("no such file `{path}`")),
        }
    };
    for (file, needles) in [
        (
            "missing.csv",
            vec!["cannot read", "\"missing.csv\"", "no such file"],
        ),
        ("bad.csv", vec!["\"bad.csv\"", "line 3"]),
        (
            "decreasing.csv",
            vec!["\"decreasing.csv\"", "increasing in B"],
        ),
    ] {
        let text =
            format!("[materials.iron]\nbh_curve_file = \"{file}\"\n{SQUARE}material = \"iron\"\n");
        let e = Model::from_toml_str_with_files(&text, &ModelSource::new(FILE), &loader)
            .expect_err("bad file");
        let hit = e
            .errors
            .iter()
            .find(|x| needles.iter().all(|n| x.what.contains(n)));
        let hit = hit.unwrap_or_else(|| panic!("{needles:?} not in {e}"));
        assert_eq!(hit.line, Some(2), "{hit}");
        assert!(hit.what.contains("[materials.iron]"), "{hit}");
    }
    // Without a loader, a curve file is an error that says why.
    check(
        &format!("[materials.iron]\nbh_curve_file = \"steel.csv\"\n{SQUARE}material = \"iron\"\n"),
        ErrorKind::File,
        Some(2),
        &["\"steel.csv\"", "[materials.iron]"],
    );
}

#[test]
fn model_without_shapes() {
    check(
        "[model]\ntitle = \"empty\"\n",
        ErrorKind::MissingKey,
        None,
        &["no shapes"],
    );
    check(
        "[[shape]]\nname = \"x\"\nmaterial = \"air\"\n",
        ErrorKind::MissingKey,
        Some(1),
        &["shape `x`", "no outline"],
    );
}

#[test]
fn duplicate_names() {
    check(
        &format!("{SQUARE}{SQUARE}"),
        ErrorKind::DuplicateName,
        Some(5),
        &["`sq`", "shape #1"],
    );
    check(
        &format!(
            "{SQUARE}[[probe]]\nname = \"p\"\nat = [1, 1]\n[[probe]]\nname = \"p\"\nat = [2, 2]\n"
        ),
        ErrorKind::DuplicateName,
        Some(8),
        &["[[probe]]", "`p`"],
    );
}

#[test]
fn winding_and_current_together() {
    check(
        &format!(
            "[windings.coil]\nturns = 10\ncurrent = 1\n{SQUARE}winding = \"coil\"\ncurrent = 5\n"
        ),
        ErrorKind::Conflict,
        Some(8),
        &["shape `sq`", "both `winding` and `current`"],
    );
}

#[test]
fn one_sided_planar_winding_is_a_warning() {
    let text = format!("[windings.coil]\nturns = 10\ncurrent = 1\n{SQUARE}winding = \"coil\"\n");
    let m = Model::from_toml_str(&text, &ModelSource::new(FILE)).expect("a warning, not an error");
    let w = m
        .warnings
        .iter()
        .find(|w| w.what.contains("winding `coil`"))
        .expect("warned");
    assert!(w.what.contains("only a go (+1) side"), "{w}");
    assert_eq!(w.line, Some(1));
    assert!(w.to_string().starts_with(FILE));
    // Axisymmetric windings need no return side: no warning.
    let text = format!("[model]\nsymmetry = \"axisymmetric\"\n{text}");
    let m = Model::from_toml_str(&text, &ModelSource::new(FILE)).expect("valid");
    assert!(m.warnings.is_empty(), "{:?}", m.warnings);
}

#[test]
fn outer_condition_problems() {
    check(
        &format!("{SQUARE}[outer]\ncondition = \"uniform-field\"\n"),
        ErrorKind::MissingKey,
        Some(4),
        &["[outer]", "`field`"],
    );
    check(
        &format!("{SQUARE}[outer]\ncondition = \"flux-normall\"\n"),
        ErrorKind::OutOfRange,
        Some(5),
        &["`condition`", "did you mean `flux-normal`"],
    );
    check(
        &format!(
            "{SQUARE}[outer]\nshape = {{ rectangle = {{ min = [-5, -5], max = [15, 15] }} }}\n"
        ),
        ErrorKind::Conflict,
        Some(5),
        &["\"open\"", "circular"],
    );
    check(
        &format!("{SQUARE}[outer]\nfield = [0, 1]\n"),
        ErrorKind::Conflict,
        Some(5),
        &["`field`", "uniform-field"],
    );
}

#[test]
fn edge_problems() {
    let outer = "[outer]\nshape = { rectangle = { min = [-5, -5], max = [15, 15] } }\ncondition = \"zero-potential\"\n";
    check(
        &format!(
            "{SQUARE}{outer}[[edge]]\nfrom = [-5, -5]\nto = [15, -5]\ncondition = \"periodic\"\n"
        ),
        ErrorKind::MissingKey,
        Some(7),
        &["[[edge]] #1", "`partner`"],
    );
    check(
        &format!("{SQUARE}{outer}[[edge]]\nfrom = [-5, -5]\nto = [15, 15]\ncondition = \"flux-normal\"\n"),
        ErrorKind::Geometry,
        Some(7),
        &["[[edge]] #1", "not along a straight part"],
    );
    check(
        &format!("{SQUARE}{outer}[[edge]]\nfrom = [-5, -5]\nto = [15, -5]\ncondition = \"periodic\"\npartner = {{ from = [-5, -5], to = [-5, 5] }}\n"),
        ErrorKind::Geometry,
        Some(11),
        &["`partner` of [[edge]] #1", "equal lengths"],
    );
}

#[test]
fn sweep_problems() {
    check(
        &format!("{SQUARE}[sweep]\n"),
        ErrorKind::Conflict,
        Some(4),
        &["[sweep]", "exactly one"],
    );
    check(
        &format!("{SQUARE}[sweep]\nmove = {{ shapes = [\"sq\"], along = [1, 0], from = 0, to = 1, steps = 1 }}\nturn = {{ shapes = [\"sq\"], from = 0, to = 1, steps = 1 }}\n"),
        ErrorKind::Conflict,
        Some(4),
        &["move and turn", "exactly one"],
    );
    check(
        &format!("{SQUARE}[sweep]\nturn = {{ shapes = [\"sq\"], from = 0, to = 10, steps = 0 }}\n"),
        ErrorKind::OutOfRange,
        Some(5),
        &["`steps`", "from 1 to"],
    );
    // Moving the square 1000 mm takes it out of the default outer circle.
    check(
        &format!("{SQUARE}[sweep]\nmove = {{ shapes = [\"sq\"], along = [1, 0], from = 0, to = 1000, steps = 4 }}\n"),
        ErrorKind::Geometry,
        Some(5),
        &["shape `sq`", "outside"],
    );
}

#[test]
fn every_error_is_reported_in_file_order() {
    let text = "[model]\nsymetry = \"planar\"\n\n[materials.core]\nrelative_permeability = 0.5\n\n[[shape]]\nname = \"a\"\ncircle = { center = [0, 0], radius = -1 }\n\n[[shape]]\nname = \"b\"\nrectangle = { min = [0, 0], max = [1, 1] }\nmaterial = \"cor\"\n";
    let e = errors(text);
    let lines: Vec<Option<usize>> = e.errors.iter().map(|x| x.line).collect();
    assert_eq!(lines, vec![Some(2), Some(5), Some(9), Some(14)], "{e}");
    // The rendered list has one line per error.
    assert_eq!(e.to_string().lines().count(), 4);
}

#[test]
fn too_fine_a_mesh_is_refused_before_meshing() {
    check(
        &format!("{SQUARE}mesh_size = 1e-5\n"),
        ErrorKind::OutOfRange,
        Some(1),
        &["shape `sq`", "triangles", "larger size"],
    );
}

#[test]
fn legal_but_suspicious_models_give_warnings() {
    let text = r#"
[materials.unused]
relative_permeability = 100

[materials.iron]
relative_permeability = 1000

[windings.idle]
turns = 5
current = 1

[windings.main]
turns = 10

[[shape]]
name = "pole"
rectangle = { min = [1, 0], max = [2, 1] }
material = "iron"
magnetization_angle = 90
repeat = { count = 3, alternate = true }

[[shape]]
name = "go"
rectangle = { min = [3, 3], max = [4, 4] }
winding = "main"
[[shape]]
name = "back"
rectangle = { min = [5, 3], max = [6, 4] }
winding = "main"
direction = -1
"#;
    let m = Model::from_toml_str(text, &ModelSource::new(FILE)).expect("warnings only");
    let expect = [
        (Some(2), "material `unused` is not used by any shape"),
        (Some(8), "winding `idle` is in no shape"),
        (Some(12), "winding `main` has no `current`; it carries 0 A"),
        (
            Some(19),
            "`magnetization_angle` has no effect: material `iron` has no `remanence`",
        ),
        (Some(20), "`alternate` with an odd count (3)"),
    ];
    for (line, text) in expect {
        let w = m.warnings.iter().find(|w| w.what.contains(text));
        let w = w.unwrap_or_else(|| panic!("no warning {text:?} in {:#?}", m.warnings));
        assert_eq!(w.line, line, "{w}");
    }
    assert_eq!(m.warnings.len(), expect.len(), "{:#?}", m.warnings);
}

#[test]
fn the_triangle_limit_follows_the_memory_per_element() {
    // About 1e7 triangles: a 1 m square at 0.5 mm mesh size gives
    // 1e6 mm² / (√3/4 · 0.25 mm²) ≈ 9.2e6 in the plate. With P1 elements
    // (about 630 B a triangle, ~6 GB) that is within the default limit; with
    // P2 (about 2.5 kB, ~23 GB) it is not. The estimate is the model
    // reader's own, checked before any mesh exists.
    let model = |order: u8| {
        format!(
            "[model]\nlength_unit = \"mm\"\nelement_order = {order}\n\n[mesh]\nmax_size = 50\n\n\
             [[shape]]\nname = \"plate\"\nrectangle = {{ min = [0, 0], max = [1000, 1000] }}\nmesh_size = 0.5\n\n\
             [outer]\nshape = {{ rectangle = {{ min = [-100, -100], max = [1100, 1100] }} }}\ncondition = \"zero-potential\"\n"
        )
    };
    if let Err(e) = Model::from_toml_str(&model(1), &ModelSource::new(FILE)) {
        panic!("the P1 model is within the limit: {e}");
    }
    check(
        &model(2),
        ErrorKind::OutOfRange,
        None,
        &["triangles (limit 5040000)", "GB of memory", "shape `plate`"],
    );
}
