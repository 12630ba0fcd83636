//! The `fluxwright` binary as a user runs it: exit codes, messages that name
//! the culprit, and output directories that appear whole or not at all.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn fluxwright(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_fluxwright"))
        .args(args)
        .output()
        .expect("the binary runs")
}

fn scratch(name: &str) -> PathBuf {
    let dir =
        std::env::temp_dir().join(format!("fluxwright-cli-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// A small gapped C-core (invented), meshed coarsely so the test is fast.
const SMALL_CORE: &str = r#"
[model]
title = "small gapped core"
depth = 20

[mesh]
max_size = 8

[materials.iron]
relative_permeability = 2000

[windings.coil]
turns = 100
current = 1.5

[[shape]]
name = "core"
material = "iron"
polygon = [[0, 0], [40, 0], [40, 40], [0, 40], [0, 21], [10, 21], [10, 30], [30, 30], [30, 10], [10, 10], [10, 19], [0, 19]]
mesh_size = 3

[[shape]]
name = "go"
rectangle = { min = [12, 12], max = [18, 28] }
winding = "coil"
direction = 1

[[shape]]
name = "return"
rectangle = { min = [42, 12], max = [48, 28] }
winding = "coil"
direction = -1

[outer]
shape = { rectangle = { min = [-40, -40], max = [90, 80] } }
condition = "zero-potential"
"#;

#[test]
fn check_accepts_a_good_model_and_prints_its_shapes() {
    let dir = scratch("check-good");
    let model = write(&dir, "core.toml", SMALL_CORE);
    let out = fluxwright(&["check", model.to_str().unwrap()]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    let text = String::from_utf8_lossy(&out.stdout);
    for name in ["core", "go", "return", "iron", "coil", "the model is valid"] {
        assert!(text.contains(name), "`{name}` missing from:\n{text}");
    }
}

#[test]
fn a_missing_model_file_is_exit_1_naming_the_file() {
    let out = fluxwright(&["check", "no/such/model.toml"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(
        stderr(&out).contains("no/such/model.toml"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn a_misspelt_key_names_file_line_and_the_nearest_key() {
    let dir = scratch("typo");
    let text = SMALL_CORE.replace(
        "relative_permeability = 2000",
        "relative_permability = 2000",
    );
    let model = write(&dir, "typo.toml", &text);
    let out = fluxwright(&["check", model.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(1));
    let err = stderr(&out);
    let line = text
        .lines()
        .position(|l| l.contains("relative_permability"))
        .unwrap()
        + 1;
    assert!(err.contains(&format!("typo.toml:{line}:")), "{err}");
    assert!(
        err.contains("relative_permeability"),
        "no suggestion in: {err}"
    );
}

#[test]
fn a_failed_mesh_run_leaves_no_partial_result() {
    let dir = scratch("bad-mesh");
    let text = SMALL_CORE.replace("material = \"iron\"", "material = \"irn\"");
    let model = write(&dir, "bad.toml", &text);
    let out_dir = dir.join("out");
    let out = fluxwright(&[
        "mesh",
        model.to_str().unwrap(),
        "-o",
        out_dir.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr(&out).contains("irn"), "{}", stderr(&out));
    assert!(!out_dir.join("mesh.json").exists());
}

#[test]
fn usage_errors_exit_2() {
    assert_eq!(fluxwright(&[]).status.code(), Some(2));
    assert_eq!(fluxwright(&["mesh"]).status.code(), Some(2));
    assert_eq!(fluxwright(&["frobnicate"]).status.code(), Some(2));
}

#[test]
fn mesh_writes_json_vtu_and_png_with_exact_shape_areas() {
    let dir = scratch("mesh-good");
    let model = write(&dir, "core.toml", SMALL_CORE);
    let out_dir = dir.join("out");
    let out = fluxwright(&[
        "mesh",
        model.to_str().unwrap(),
        "-o",
        out_dir.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out_dir.join("mesh.json")).unwrap()).unwrap();
    assert_eq!(json["format"], "fluxwright-mesh/1");
    assert!(json["min_angle_deg"].as_f64().unwrap() >= 25.0 - 1e-9);
    // Exact areas of straight-sided shapes (plane geometry): the C-core is a
    // 40×40 square less a 20×20 window and a 10×2 gap; the coil sides 6×16.
    let area = |name: &str| json["shapes"][name]["area"].as_f64().unwrap();
    assert!((area("core") - (1600.0 - 400.0 - 20.0)).abs() < 1e-9);
    assert!((area("go") - 96.0).abs() < 1e-9);
    assert!((area("return") - 96.0).abs() < 1e-9);
    assert!((area("outer") - (130.0 * 120.0 - 1180.0 - 192.0)).abs() < 1e-7);
    for file in ["mesh.vtu", "mesh.png"] {
        assert!(
            std::fs::metadata(out_dir.join(file)).unwrap().len() > 1000,
            "{file}"
        );
    }
    let vtu = std::fs::read_to_string(out_dir.join("mesh.vtu")).unwrap();
    let triangles = json["triangles"].as_u64().unwrap();
    assert!(vtu.contains(&format!("NumberOfCells=\"{triangles}\"")));
    // Nothing of the staging folder is left behind.
    let leftovers: Vec<_> = std::fs::read_dir(&out_dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().starts_with('.'))
        .collect();
    assert!(leftovers.is_empty());
}

#[test]
fn demo_runs_and_can_save_its_model() {
    let dir = scratch("demo");
    let saved = dir.join("demo.toml");
    let out_dir = dir.join("out");
    let out = fluxwright(&[
        "demo",
        "-o",
        out_dir.to_str().unwrap(),
        "--save-model",
        saved.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "stderr: {}", stderr(&out));
    assert!(out_dir.join("mesh.json").exists());
    let check = fluxwright(&["check", saved.to_str().unwrap()]);
    assert!(check.status.success(), "stderr: {}", stderr(&check));
}

#[test]
fn every_bad_model_exits_1_naming_its_line_and_culprit() {
    // Each file under tests/models/bad/ starts with `# expect: LINE | TEXT`.
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../tests/models/bad");
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        let text = std::fs::read_to_string(&path).unwrap();
        let expect = text
            .lines()
            .next()
            .unwrap()
            .strip_prefix("# expect: ")
            .expect("expect header");
        let (line, what) = expect.split_once(" | ").unwrap();
        let out_dir = scratch(&format!("bad-{seen}"));
        for args in [
            vec!["check", path.to_str().unwrap()],
            vec![
                "mesh",
                path.to_str().unwrap(),
                "-o",
                out_dir.to_str().unwrap(),
            ],
        ] {
            let out = fluxwright(&args);
            let err = stderr(&out);
            assert_eq!(out.status.code(), Some(1), "{}: {err}", path.display());
            let file = path.file_name().unwrap().to_str().unwrap();
            assert!(
                err.contains(&format!("{file}:{line}:")),
                "{file}: no line {line} in:\n{err}"
            );
            assert!(err.contains(what), "{file}: `{what}` missing from:\n{err}");
            assert!(!err.contains("panicked"), "{err}");
        }
        assert!(!out_dir.join("mesh.json").exists());
        seen += 1;
    }
    assert!(seen >= 8, "only {seen} bad models found");
}

#[test]
fn every_good_model_checks_and_solves() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../tests/models/good");
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("toml") {
            continue;
        }
        let out = fluxwright(&["check", path.to_str().unwrap()]);
        assert!(out.status.success(), "{}: {}", path.display(), stderr(&out));
        let out_dir = scratch(path.file_stem().unwrap().to_str().unwrap());
        let out = fluxwright(&[
            "solve",
            path.to_str().unwrap(),
            "-o",
            out_dir.to_str().unwrap(),
        ]);
        assert!(out.status.success(), "{}: {}", path.display(), stderr(&out));
        let results: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(out_dir.join("results.json")).unwrap())
                .unwrap();
        assert_eq!(results["solve"]["converged"], true, "{}", path.display());
        assert!(
            results["energy_j"].as_f64().unwrap() > 0.0,
            "{}",
            path.display()
        );
        for file in ["field.png", "field.svg", "fields.vtu", "mesh.json"] {
            assert!(out_dir.join(file).exists(), "{}: {file}", path.display());
        }
    }
}

#[test]
fn materials_lists_the_library_and_shows_one_with_its_source() {
    let out = fluxwright(&["materials"]);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("silicon-steel") && text.contains("supplier"),
        "{text}"
    );
    let out = fluxwright(&["materials", "silicon-steel"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success() && text.contains("H (A/m)") && text.contains("source:"),
        "{text}"
    );
    let out = fluxwright(&["materials", "unobtainium"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr(&out).contains("unobtainium"));
}

#[test]
fn solve_with_adapt_writes_every_round_with_falling_estimates() {
    // A round conductor in a zero-potential circle, meshed coarsely, with
    // two rounds of adaptation towards a target it cannot reach in two.
    let dir = scratch("adapt");
    let path = write(
        &dir,
        "wire.toml",
        r#"
[model]
element_order = 1
[mesh]
max_size = 8
adapt = 2
target_error = 0.02
[[shape]]
name = "wire"
circle = { center = [0, 0], radius = 10 }
current = 100
[outer]
shape = { circle = { center = [0, 0], radius = 30 } }
condition = "zero-potential"
"#,
    );
    let out_dir = dir.join("out");
    let out = fluxwright(&[
        "solve",
        path.to_str().unwrap(),
        "-o",
        out_dir.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(stdout.matches("adapt round").count(), 3, "{stdout}");
    let results: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out_dir.join("results.json")).unwrap())
            .unwrap();
    let rounds = results["adapt"].as_array().expect("an `adapt` list");
    assert_eq!(rounds.len(), 3);
    for (k, w) in rounds.windows(2).enumerate() {
        assert_eq!(w[1]["round"], k as u64 + 1);
        assert!(w[1]["triangles"].as_u64() > w[0]["triangles"].as_u64());
        assert!(w[1]["unknowns"].as_u64() > w[0]["unknowns"].as_u64());
        let (a, b) = (
            w[0]["error_estimate"].as_f64().unwrap(),
            w[1]["error_estimate"].as_f64().unwrap(),
        );
        assert!(b < a, "estimates {a} then {b}");
    }
    // The results are those of the last round.
    let last = &rounds[2];
    assert_eq!(results["mesh"]["triangles"], last["triangles"]);
    assert_eq!(results["solve"]["error_estimate"], last["error_estimate"]);
}

/// Without `-o`, `mesh` writes to out/<model name> under the working folder.
#[test]
fn mesh_without_out_writes_to_out_and_the_model_name() {
    let dir = scratch("default-out");
    let model = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples/busbars.toml");
    let status = Command::new(env!("CARGO_BIN_EXE_fluxwright"))
        .current_dir(&dir)
        .args(["mesh", model.to_str().expect("utf-8 path")])
        .status()
        .expect("run fluxwright");
    assert!(status.success());
    assert!(dir.join("out/busbars/mesh.json").is_file());
}

/// Writes one shard folder as `sweep` would: its index, its table and a
/// results file per step.
fn fake_shard(dir: &Path, shard: usize, steps: &[usize], rows: &str) {
    std::fs::create_dir_all(dir.join("steps")).unwrap();
    let index = format!(
        r#"{{"format": "fluxwright-sweep/1", "title": "t", "parameter": "current in main (A)",
            "total_steps": 3, "shard": [{shard}, 2], "steps": {steps:?}, "converged": true}}"#
    );
    write(dir, "sweep.json", &index);
    for k in steps {
        write(&dir.join("steps"), &format!("{k:03}.json"), "{}");
    }
    write(dir, "sweep.csv", rows);
}

/// More shards than blocks leaves one shard empty, with only the fixed
/// columns: merge still joins the others into the whole table.
#[test]
fn merge_accepts_an_empty_shard() {
    let dir = scratch("merge-empty");
    let fixed = "step,main.current_a,converged,iterations,error_estimate,energy_j,coenergy_j";
    let full = format!("{fixed},main.flux_linkage_wb\n");
    let rows = format!(
        "{full}0,1,true,9,0.01,0.5,0.5,0.1\n1,2,true,4,0.01,2,2,0.2\n2,3,true,4,0.01,4.5,4.5,0.3\n"
    );
    fake_shard(&dir.join("a"), 1, &[0, 1, 2], &rows);
    fake_shard(&dir.join("b"), 2, &[], &format!("{fixed}\n"));
    let out = dir.join("merged");
    let o = fluxwright(&[
        "merge",
        dir.join("b").to_str().unwrap(),
        dir.join("a").to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
    ]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert_eq!(
        std::fs::read_to_string(out.join("sweep.csv")).unwrap(),
        rows
    );
    // A shard whose columns differ from the others' is still refused.
    fake_shard(
        &dir.join("d"),
        2,
        &[2],
        &format!("{fixed},other\n2,3,true,4,0.01,4.5,4.5,7\n"),
    );
    let o = fluxwright(&[
        "merge",
        dir.join("a").to_str().unwrap(),
        dir.join("d").to_str().unwrap(),
        "-o",
        dir.join("bad").to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("hold different sweeps"));
}

/// The binary arrays of a `.vtu` file written by `solve`, decoded with the
/// `base64` crate (an implementation independent of ours): name → bytes,
/// after checking each array's UInt64 byte-count header.
fn vtu_arrays(doc: &str) -> std::collections::BTreeMap<String, Vec<u8>> {
    use base64::Engine as _;
    let mut arrays = std::collections::BTreeMap::new();
    for part in doc.split("<DataArray ").skip(1) {
        let name = part
            .split("Name=\"")
            .nth(1)
            .unwrap()
            .split('"')
            .next()
            .unwrap();
        let body = part.split('>').nth(1).unwrap().split('<').next().unwrap();
        let bytes = base64::engine::general_purpose::STANDARD
            .decode(body)
            .unwrap_or_else(|e| panic!("{name}: not base64: {e}"));
        let header = u64::from_le_bytes(bytes[..8].try_into().unwrap()) as usize;
        assert_eq!(header, bytes.len() - 8, "{name}: byte-count header");
        arrays.insert(name.to_string(), bytes[8..].to_vec());
    }
    arrays
}

fn f64s(bytes: &[u8]) -> Vec<f64> {
    bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

#[test]
fn fields_vtu_reads_back_and_holds_the_stored_energy() {
    // First-order elements: B and H are constant in each triangle, so
    // ½ Σ B·H · area · depth over the cells of fields.vtu is exactly the
    // stored energy of a linear model (W = ½∫B·H dV), which results.json
    // reports from the solver's own quadrature.
    let dir = scratch("vtu-energy");
    let model = write(
        &dir,
        "core.toml",
        &SMALL_CORE.replace("depth = 20", "depth = 20\nelement_order = 1"),
    );
    let out_dir = dir.join("out");
    let out = fluxwright(&[
        "solve",
        model.to_str().unwrap(),
        "-o",
        out_dir.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let doc = std::fs::read_to_string(out_dir.join("fields.vtu")).unwrap();
    let count = |key: &str| -> usize {
        doc.split(&format!("{key}=\""))
            .nth(1)
            .unwrap()
            .split('"')
            .next()
            .unwrap()
            .parse()
            .unwrap()
    };
    let (n_points, n_cells) = (count("NumberOfPoints"), count("NumberOfCells"));
    let a = vtu_arrays(&doc);
    let points = f64s(&a["Points"]);
    let cells: Vec<usize> = a["connectivity"]
        .chunks_exact(8)
        .map(|c| i64::from_le_bytes(c.try_into().unwrap()) as usize)
        .collect();
    assert_eq!(points.len(), 3 * n_points);
    assert_eq!(cells.len(), 3 * n_cells);
    assert!(cells.iter().all(|&i| i < n_points));
    assert_eq!(a["types"], vec![5u8; n_cells]);
    assert_eq!(f64s(&a["A"]).len(), n_points);
    let (b, h, magnitude) = (f64s(&a["B"]), f64s(&a["H"]), f64s(&a["B_magnitude"]));
    let mut energy = 0.0;
    for (t, c) in cells.chunks_exact(3).enumerate() {
        let p = |k: usize| [points[3 * c[k]], points[3 * c[k] + 1]];
        let (p0, p1, p2) = (p(0), p(1), p(2));
        let area_mm2 =
            0.5 * ((p1[0] - p0[0]) * (p2[1] - p0[1]) - (p2[0] - p0[0]) * (p1[1] - p0[1]));
        let bt = [b[3 * t], b[3 * t + 1]];
        assert!((bt[0].hypot(bt[1]) - magnitude[t]).abs() <= 1e-12 * magnitude[t].max(1e-30));
        energy += 0.5 * (bt[0] * h[3 * t] + bt[1] * h[3 * t + 1]) * area_mm2 * 1e-6 * 0.020;
    }
    let results: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out_dir.join("results.json")).unwrap())
            .unwrap();
    let reported = results["energy_j"].as_f64().unwrap();
    assert!(
        (energy / reported - 1.0).abs() < 1e-9,
        "energy from fields.vtu {energy:e} J, results.json {reported:e} J"
    );
}
