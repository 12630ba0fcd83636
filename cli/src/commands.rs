//! One function a subcommand. This is the only module that reads model files
//! and writes results; it holds no physics.

use crate::args::{Cli, Command};
use crate::output::Staging;
use crate::plot::{self, FieldPicture, MeshPicture, RegionStyle};
use crate::progress::SolveBar;
use crate::vtu;
use crate::Failure;
use anyhow::{Context, Result};
use fluxwright_mesher::Mesh;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::{adapt, study};
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::time::Instant;

/// The built-in demo model (an invented scenario).
pub const DEMO_MODEL: &str = include_str!("demo/door_holder.toml");
const DEMO_NAME: &str = "demo/door_holder.toml (built in)";

/// Run a parsed command line; returns the exit code.
pub fn run(cli: Cli) -> Result<u8> {
    if let Some(n) = cli.threads {
        rayon::ThreadPoolBuilder::new()
            .num_threads(usize::from(n))
            .build_global()
            .context("cannot set up the worker threads")?;
    }
    match cli.command {
        Command::Check { model } => check(&model),
        Command::Mesh { model: file, out } => {
            let model = load_model(&file)?;
            mesh(&model, &out.unwrap_or_else(|| default_out(&file, "")))
        }
        Command::Solve {
            model: file,
            out,
            view,
        } => {
            let model = load_model(&file)?;
            solve(&model, &out.unwrap_or_else(|| default_out(&file, "")), view)
        }
        Command::Sweep {
            model: file,
            out,
            shard,
        } => {
            let model = load_model(&file)?;
            let suffix = match shard {
                Some(s) => format!("-sweep-{}-of-{}", s.index + 1, s.count),
                None => "-sweep".into(),
            };
            let out = out.unwrap_or_else(|| default_out(&file, &suffix));
            crate::sweep::sweep(&model, &out, shard)
        }
        Command::Merge { shards, out } => crate::sweep::merge(&shards, &out),
        Command::Materials { name } => materials(name.as_deref()),
        Command::Demo { out, save_model } => demo(&out, save_model.as_deref()),
    }
}

/// Read and validate a model file; every error names the file.
fn load_model(path: &Path) -> Result<Model> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path)
        .map_err(|e| Failure::input(format!("{name}: cannot read the model file: {e}")))?;
    let dir = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let loader = move |relative: &str| -> Result<String, String> {
        let p: PathBuf = dir.join(relative);
        std::fs::read_to_string(&p).map_err(|e| format!("cannot read {}: {e}", p.display()))
    };
    parse_model(&text, &name, &loader)
}

fn parse_model(
    text: &str,
    name: &str,
    loader: &dyn fluxwright_solver::model::FileLoader,
) -> Result<Model> {
    match Model::from_toml_str_with_files(text, &ModelSource::new(name), loader) {
        Ok(model) => {
            for w in &model.warnings {
                eprintln!("warning: {w}");
            }
            Ok(model)
        }
        Err(errors) => {
            let n = errors.errors.len();
            let mut message = errors.to_string();
            message.push_str(&format!(
                "\n{name}: {n} error{} found; nothing was written",
                if n == 1 { "" } else { "s" }
            ));
            Err(Failure::input(message).into())
        }
    }
}

fn check(path: &Path) -> Result<u8> {
    let model = load_model(path)?;
    print_summary(&model);
    println!("\n{}: the model is valid", path.display());
    Ok(0)
}

fn print_summary(model: &Model) {
    let s = model.summary();
    let unit = s.length_unit;
    println!("{}", s.title);
    match s.depth_m {
        Some(d) => println!(
            "  {} , depth {} m, lengths in {unit}, element order {}",
            s.symmetry, d, s.element_order
        ),
        None => println!(
            "  {} (full turn), lengths in {unit}, element order {}",
            s.symmetry, s.element_order
        ),
    }
    println!("  outer: {}", s.outer);
    let mut rows = vec![[
        "shape".to_string(),
        "outline".into(),
        "material".into(),
        "source".into(),
        format!("area ({unit}²)"),
    ]];
    for r in &s.shapes {
        rows.push([
            r.name.clone(),
            r.outline.into(),
            r.material.clone(),
            r.source.clone(),
            format!("{:.4}", r.area),
        ]);
    }
    println!();
    print_table(&rows);
    let mut rows = vec![[
        "material".to_string(),
        "law".into(),
        "stacking".into(),
        "used by".into(),
    ]];
    for r in &s.materials {
        rows.push([
            r.name.clone(),
            r.kind.clone(),
            format!("{}", r.stacking_factor),
            r.shapes.join(", "),
        ]);
    }
    println!();
    print_table(&rows);
    if !s.windings.is_empty() {
        let mut rows = vec![[
            "winding".to_string(),
            "turns".into(),
            "current (A)".into(),
            "shapes".into(),
        ]];
        for r in &s.windings {
            rows.push([
                r.name.clone(),
                format!("{}", r.turns),
                format!("{}", r.current_a),
                r.shapes.join(", "),
            ]);
        }
        println!();
        print_table(&rows);
    }
}

fn print_table<const N: usize>(rows: &[[String; N]]) {
    let mut widths = [0usize; N];
    for row in rows {
        for (w, cell) in widths.iter_mut().zip(row) {
            *w = (*w).max(cell.chars().count());
        }
    }
    for (i, row) in rows.iter().enumerate() {
        let line: Vec<String> = row
            .iter()
            .zip(widths)
            .map(|(cell, w)| format!("{cell}{}", " ".repeat(w - cell.chars().count())))
            .collect();
        println!("  {}", line.join("  ").trim_end());
        if i == 0 {
            let rule: Vec<String> = widths.iter().map(|&w| "-".repeat(w)).collect();
            println!("  {}", rule.join("  "));
        }
    }
}

/// mesh.json, per model-format.md.
#[derive(Serialize)]
struct MeshReport {
    format: &'static str,
    nodes: usize,
    triangles: usize,
    min_angle_deg: f64,
    seconds: f64,
    shapes: BTreeMap<String, ShapeMeshReport>,
}

#[derive(Serialize)]
struct ShapeMeshReport {
    triangles: usize,
    area: f64,
}

fn build_mesh(model: &Model) -> Result<(Mesh, f64)> {
    let start = Instant::now();
    let mesh = fluxwright_mesher::mesh(&model.mesh_input())
        .map_err(|e| Failure::input(format!("{}: meshing failed: {e}", model.source)))?;
    check_mesh(model, &mesh)?;
    Ok((mesh, start.elapsed().as_secs_f64()))
}

/// Mesh invariants hold for any valid model; a failure is our bug.
fn check_mesh(model: &Model, mesh: &Mesh) -> Result<()> {
    mesh.check().with_context(|| {
        format!(
            "{}: the mesh failed its own checks (a bug; please report it)",
            model.source
        )
    })
}

fn region_name(model: &Model, region: u32) -> String {
    if region == Mesh::OUTER_REGION {
        "outer".to_string()
    } else {
        model.shapes[region as usize].name.clone()
    }
}

fn mesh(model: &Model, out: &Path) -> Result<u8> {
    let (mesh, seconds) = build_mesh(model)?;
    let staging = Staging::new(out)?;
    write_mesh_files(model, &mesh, seconds, &staging)?;
    staging.commit()?;
    let q = mesh.quality();
    println!(
        "{}: {} nodes, {} triangles, smallest angle {:.1}°, {:.2} s",
        model.source,
        mesh.nodes.len(),
        mesh.triangles.len(),
        q.min_angle_deg,
        seconds
    );
    for p in &mesh.report.small_input_angles {
        println!("  note: an input corner at ({:.4}, {:.4}) is sharper than min_angle; its triangles keep that angle", p[0], p[1]);
    }
    if !mesh.report.complete {
        println!("  note: refinement stopped before every triangle met the targets");
    }
    println!("wrote {}", out.display());
    Ok(0)
}

fn write_mesh_files(model: &Model, mesh: &Mesh, seconds: f64, staging: &Staging) -> Result<()> {
    let mut shapes: BTreeMap<String, ShapeMeshReport> = BTreeMap::new();
    let mut counts: BTreeMap<u32, usize> = BTreeMap::new();
    for &r in &mesh.regions {
        *counts.entry(r).or_default() += 1;
    }
    for (region, area) in mesh.region_areas() {
        shapes.insert(
            region_name(model, region),
            ShapeMeshReport {
                triangles: counts.get(&region).copied().unwrap_or(0),
                area,
            },
        );
    }
    // Shapes covered entirely by later ones still appear, with nothing left.
    for s in &model.shapes {
        shapes.entry(s.name.clone()).or_insert(ShapeMeshReport {
            triangles: 0,
            area: 0.0,
        });
    }
    let min_angle: Vec<f64> = (0..mesh.triangles.len())
        .map(|t| mesh.min_angle(t).to_degrees())
        .collect();
    let report = MeshReport {
        format: "fluxwright-mesh/1",
        nodes: mesh.nodes.len(),
        triangles: mesh.triangles.len(),
        min_angle_deg: if min_angle.is_empty() {
            0.0
        } else {
            min_angle.iter().copied().fold(f64::INFINITY, f64::min)
        },
        seconds,
        shapes,
    };

    let shape_index = shape_indices(mesh);
    staging.write_with("mesh.vtu", |w| {
        vtu::write(
            w,
            &mesh.nodes,
            vtu::Cells::Triangles(mesh.triangles.as_flattened()),
            &[],
            &[
                vtu::Array::Int("shape", shape_index),
                vtu::Array::Scalar("min_angle_deg", min_angle),
            ],
        )
    })?;

    // Regions for the picture: the outer region first, then each shape.
    let mut styles = vec![RegionStyle {
        label: "outer (air)".into(),
        is_air: true,
    }];
    for s in &model.shapes {
        let material = &model.materials[s.material];
        styles.push(RegionStyle {
            label: format!("{} ({})", s.name, material.name),
            is_air: s.material == 0,
        });
    }
    let region_of: Vec<usize> = mesh
        .regions
        .iter()
        .map(|&r| {
            if r == Mesh::OUTER_REGION {
                0
            } else {
                r as usize + 1
            }
        })
        .collect();
    let title = format!("{}: mesh", model.title);
    let png = staging.path("mesh.png")?;
    plot::mesh_png(
        &png,
        &MeshPicture {
            title: &title,
            unit: model.length_unit.as_str(),
            nodes: &mesh.nodes,
            triangles: &mesh.triangles,
            region_of: &region_of,
            regions: &styles,
        },
    )?;
    staging.write(
        "mesh.json",
        serde_json::to_string_pretty(&report)?.as_bytes(),
    )?;
    Ok(())
}

fn demo(out: &Path, save_model: Option<&Path>) -> Result<u8> {
    let model = parse_model(DEMO_MODEL, DEMO_NAME, &fluxwright_solver::model::NoFiles)?;
    println!("fluxwright demo: {}", model.title);
    println!("  An invented scenario: a fire door's hold-open magnet. A 600-turn coil at 0.4 A");
    println!("  magnetises an E-shaped steel core; a steel armature plate sits 0.3 mm away.\n");
    if let Some(path) = save_model {
        std::fs::write(path, DEMO_MODEL)
            .with_context(|| format!("cannot write {}", path.display()))?;
        println!(
            "  model saved to {} (edit it, then: fluxwright solve {} -o OUT)\n",
            path.display(),
            path.display()
        );
    }
    print_summary(&model);
    println!();
    let code = solve(&model, out, None)?;
    println!();
    println!("How to read these numbers:");
    println!("  stored energy  the magnetic energy in the device and the air around it, for its 60 mm depth;");
    println!("                 with a linear core it would equal L·I²/2 of the coil");
    println!("  co-energy      the energy's twin from ∫B·dH; it exceeds the energy once the steel saturates");
    println!(
        "  probe          the flux density in the middle of the 0.3 mm gap under the centre leg; a"
    );
    println!("                 hand estimate with ideal steel and no fringing, μ0·N·I/(g·(1 + 15/20)), gives 0.57 T");
    println!("  winding        flux linkage λ of the 600 turns; inductance λ/I; incremental dλ/dI from the");
    println!(
        "                 tangent at this current (below λ/I once the steel starts to saturate)"
    );
    println!(
        "  force          the pull on the armature (negative y: towards the core) by the weighted"
    );
    println!("                 Maxwell stress tensor; B²A/2μ0 over the three pole faces gives about 195 N");
    println!(
        "  loop           Ampère's law: ∮H·dl around a path through steel, gap and armature equals"
    );
    println!(
        "                 the 240 A-turns of the coil side it encloses; the mismatch says how well"
    );
    println!("                 the mesh resolves the field along that path");
    println!(
        "  estimated error  the field's relative error in the energy norm, estimated from how far"
    );
    println!(
        "                 the element-wise B differs from a smoothed B (Zienkiewicz-Zhu); local"
    );
    println!("                 numbers such as the gap probe or the force can be off by more");
    println!("  profile        B along a line through the gap, as CSV and a plot under profiles/");
    println!("  Newton steps   iterations of the nonlinear solve for the saturating steel, to a 1e-8 residual");
    println!("Open fields.vtu in ParaView to see |B|, B, H and μr per triangle.");
    Ok(code)
}

/// out/<file stem><suffix>: where a run goes when `--out` is not given.
fn default_out(model_file: &Path, suffix: &str) -> PathBuf {
    let stem = model_file
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "model".into());
    Path::new("out").join(format!("{stem}{suffix}"))
}

/// Mesh, solve (adapting the mesh for `[mesh] adapt` rounds, one line each)
/// and write results.json and fields.vtu (and the mesh files). Exit code 3
/// when Newton did not converge (the results are still written, marked).
fn solve(model: &Model, out: &Path, view: Option<[f64; 4]>) -> Result<u8> {
    let start = Instant::now();
    let bar = SolveBar::new();
    let on_round = |r: &adapt::AdaptRound, _: &fluxwright_solver::field::Solution| {
        if model.mesh.adapt > 0 {
            bar.println(&format!(
                "{}: adapt round {}: {} triangles, {} unknowns, estimated error {:.2e}",
                model.source, r.round, r.triangles, r.unknowns, r.error_estimate
            ));
        }
    };
    let written = adapt::mesh_and_solve_adaptive(model, &Default::default(), &bar, on_round, |a| {
        write_solved(model, out, view, start, a, &bar)
    });
    bar.clear();
    written.map_err(|e| match e {
        adapt::AdaptError::MeshCheck(e) => anyhow::Error::new(e).context(format!(
            "{}: the mesh failed its own checks (a bug; please report it)",
            model.source
        )),
        e => Failure::input(format!("{}: {e}", model.source)).into(),
    })?
}

/// The output of [`solve`] from its last (or only) round.
fn write_solved(
    model: &Model,
    out: &Path,
    view: Option<[f64; 4]>,
    start: Instant,
    adapted: adapt::Adapted<'_>,
    bar: &SolveBar,
) -> Result<u8> {
    bar.writing();
    let (mm, setup, solution) = (adapted.mesh, adapted.setup, adapted.solution);
    let mesh_seconds = adapted.mesh_seconds;
    let model_mesh = model_part(mm);
    let mut results = study::results_estimated(
        model,
        &mm.mesh,
        setup,
        solution,
        start.elapsed().as_secs_f64(),
        adapted.estimate,
    );
    // The results hold what needed the tangent factorisation (incremental
    // inductances): free it before the field files (about 300 MB at 1M
    // unknowns).
    drop(solution.take_solver());
    if model.mesh.adapt > 0 {
        results.adapt = adapted.rounds;
        results.notes.extend(adapted.stopped);
    }

    let staging = Staging::new(out)?;
    // Everything below shows the model only, not the Kelvin image of the
    // exterior that an open boundary appends to the mesh.
    let n_tri = model_mesh.triangles.len();
    let view_dofs = ViewDofs::new(solution, n_tri, model.unit_to_m());
    // The VTU files (mostly writing) and the field map (mostly drawing) go
    // side by side.
    let (files, map) = rayon::join(
        || -> Result<()> {
            write_mesh_files(model, &model_mesh, mesh_seconds, &staging)?;
            write_fields_vtu(solution, &model_mesh, &view_dofs, &staging)
        },
        || write_field_map(model, &model_mesh, solution, &view_dofs, view, &staging),
    );
    files.and(map)?;
    for (name, samples) in study::profile_samples(model, solution) {
        let file = study::profile_file(&name);
        staging.write(
            &file,
            fluxwright_solver::post::profiles::profile_csv(&samples).as_bytes(),
        )?;
        let points: Vec<plot::ProfilePoint> = samples
            .iter()
            .map(|s| {
                (
                    s.position,
                    s.field.as_ref().map(|f| [f.b[0], f.b[1], f.b_magnitude]),
                )
            })
            .collect();
        let png = staging.path(&file.replace(".csv", ".png"))?;
        plot::profile_png(
            &png,
            &format!("{}: profile {name}", model.title),
            model.length_unit.as_str(),
            &points,
        )?;
    }
    staging.write(
        "results.json",
        serde_json::to_string_pretty(&results)?.as_bytes(),
    )?;
    staging.commit()?;

    bar.clear();
    print_results(model, &results);
    println!("wrote {}", out.display());
    if results.solve.converged {
        Ok(0)
    } else {
        eprintln!(
            "{}: Newton did not converge (relative residual {:.2e} after {} steps); results are written and marked converged = false",
            model.source, results.solve.relative_residual, results.solve.iterations
        );
        Ok(3)
    }
}

/// fields.vtu: A at the nodes; B, H, |B|, μr and the shape per triangle.
fn write_fields_vtu(
    solution: &fluxwright_solver::field::Solution,
    model_mesh: &Mesh,
    view_dofs: &ViewDofs,
    staging: &Staging,
) -> Result<()> {
    let fields = &solution.element_fields()[..model_mesh.triangles.len()];
    let potential: Vec<f64> = view_dofs
        .kept
        .iter()
        .map(|&d| solution.potential()[d as usize])
        .collect();
    // Quadratic elements are written as VTK quadratic triangles, whose
    // node order (corners, then mid-edges 0-1, 1-2, 2-0) is our dof order.
    let cells = if view_dofs.per_element == 6 {
        vtu::Cells::QuadraticTriangles(&view_dofs.elements)
    } else {
        vtu::Cells::Triangles(&view_dofs.elements)
    };
    staging.write_with("fields.vtu", |w| {
        vtu::write(
            w,
            &view_dofs.points,
            cells,
            &[vtu::Array::Scalar("A", potential)],
            &[
                vtu::Array::Vector2("B", fields.iter().map(|f| f.b).collect()),
                vtu::Array::Vector2("H", fields.iter().map(|f| f.h).collect()),
                vtu::Array::Scalar(
                    "B_magnitude",
                    fields.iter().map(|f| f.b_magnitude).collect(),
                ),
                vtu::Array::Scalar("mu_r", fields.iter().map(|f| f.mu_r).collect()),
                vtu::Array::Int("shape", shape_indices(model_mesh)),
            ],
        )
    })
}

/// The shape index of each triangle for VTK files, −1 for the outer region.
fn shape_indices(mesh: &Mesh) -> Vec<i32> {
    mesh.regions
        .iter()
        .map(|&r| {
            if r == Mesh::OUTER_REGION {
                -1
            } else {
                r as i32
            }
        })
        .collect()
}

/// The model's own part of a mesh that may end with the Kelvin image.
fn model_part(mm: &study::ModelMesh) -> Mesh {
    let n = mm.model_nodes as u32;
    Mesh {
        nodes: mm.mesh.nodes[..mm.model_nodes].to_vec(),
        triangles: mm.mesh.triangles[..mm.model_triangles].to_vec(),
        regions: mm.mesh.regions[..mm.model_triangles].to_vec(),
        boundary: mm
            .mesh
            .boundary
            .iter()
            .filter(|e| e.nodes[0] < n && e.nodes[1] < n)
            .copied()
            .collect(),
        report: mm.mesh.report.clone(),
    }
}

/// The dofs of the model's first `n_tri` triangles, renumbered compactly,
/// with their positions in model units.
struct ViewDofs {
    /// Dofs per element (3 or 6).
    per_element: usize,
    /// Original dof of each kept point.
    kept: Vec<u32>,
    /// Positions of the kept points, model units.
    points: Vec<[f64; 2]>,
    /// Element connectivity in the compact numbering.
    elements: Vec<u32>,
}

impl ViewDofs {
    fn new(
        solution: &fluxwright_solver::field::Solution,
        n_tri: usize,
        unit_to_m: f64,
    ) -> ViewDofs {
        let dofs = solution.dofs();
        let total = solution.assembler().problem().mesh.triangles.len().max(1);
        let per_element = dofs.element_dofs.len() / total;
        let mut index = vec![u32::MAX; dofs.n_dofs];
        let mut kept = Vec::new();
        let elements = dofs.element_dofs[..per_element * n_tri]
            .iter()
            .map(|&d| {
                if index[d as usize] == u32::MAX {
                    index[d as usize] = kept.len() as u32;
                    kept.push(d);
                }
                index[d as usize]
            })
            .collect();
        let points = kept
            .iter()
            .map(|&d| dofs.coords[d as usize].map(|c| c / unit_to_m))
            .collect();
        ViewDofs {
            per_element,
            kept,
            points,
            elements,
        }
    }
}

fn print_results(model: &Model, r: &study::SolveResults) {
    println!(
        "{}: {} triangles, P{} elements, {} unknowns, {} Newton step{}, residual {:.1e}, {:.2} s",
        model.source,
        r.mesh.triangles,
        r.mesh.element_order,
        r.mesh.unknowns,
        r.solve.iterations,
        if r.solve.iterations == 1 { "" } else { "s" },
        r.solve.relative_residual,
        r.solve.seconds
    );
    let per = if r.model.depth_m.is_some() {
        "for the model depth"
    } else {
        "for the full turn"
    };
    if let Some(e) = r.solve.error_estimate {
        println!(
            "  estimated error {:.2} % (relative, energy norm)",
            100.0 * e
        );
    }
    println!("  stored energy   {:.6e} J ({per})", r.energy_j);
    println!("  co-energy       {:.6e} J", r.coenergy_j);
    for (name, p) in &r.probes {
        let (b, h) = (p.b_t, p.h_a_per_m);
        let (b_size, h_size) = (b[0].hypot(b[1]), h[0].hypot(h[1]));
        println!(
            "  probe {name}: |B| = {} T, B = ({}, {}) T, H = ({}, {}) A/m",
            four_digits(p.b_magnitude_t, b_size),
            four_digits(b[0], b_size),
            four_digits(b[1], b_size),
            four_digits(h[0], h_size),
            four_digits(h[1], h_size),
        );
    }
    for (name, w) in &r.windings {
        let secant = w
            .inductance_h
            .map(|l| format!("{l:.6e} H"))
            .unwrap_or_else(|| "— (no current)".into());
        println!(
            "  winding {name}: {} turns × {} A, flux linkage {:.6e} Wb, inductance {secant}, incremental {:.6e} H",
            w.turns, w.current_a, w.flux_linkage_wb, w.incremental_inductance_h
        );
    }
    for (name, f) in &r.forces {
        println!(
            "  force {name}: ({:.6e}, {:.6e}) N by the {}",
            f.force_n[0], f.force_n[1], f.method
        );
    }
    for (name, t) in &r.torques {
        println!("  torque {name}: {:.6e} N·m", t.torque_n_m);
    }
    for (name, l) in &r.loops {
        println!(
            "  loop {name}: ∮H·dl = {:.6e} A against {:.6e} A enclosed (mismatch {:.1e})",
            l.h_line_integral_a, l.enclosed_current_a, l.relative_mismatch
        );
    }
    for (name, file) in &r.profiles {
        println!("  profile {name}: {file} (and .png)");
    }
    for n in &r.notes {
        println!("  note: {n}");
    }
}

/// `x` to four significant digits, fixed-point between 10⁻³ and 10⁵ and
/// with an exponent outside; "0" when it is below 10⁻⁶ of `scale` (the
/// solver's noise in a component that is zero by symmetry, far below the
/// four digits shown of the vector's size).
fn four_digits(x: f64, scale: f64) -> String {
    let size = x.abs();
    if size <= 1e-6 * scale || size == 0.0 {
        "0".into()
    } else if (1e-3..1e5).contains(&size) {
        let decimals = (3 - size.log10().floor() as i32).max(0) as usize;
        format!("{x:.decimals$}")
    } else {
        format!("{x:.3e}")
    }
}

/// field.png and field.svg: |B| shading, flux lines, shape outlines.
fn write_field_map(
    model: &Model,
    mesh: &Mesh,
    solution: &fluxwright_solver::field::Solution,
    view_dofs: &ViewDofs,
    view: Option<[f64; 4]>,
    staging: &Staging,
) -> Result<()> {
    let quadratic = view_dofs.per_element == 6;
    let mut cells = Vec::with_capacity(mesh.triangles.len() * if quadratic { 4 } else { 1 });
    let mut values = Vec::with_capacity(cells.capacity());
    for t in 0..mesh.triangles.len() {
        let d = &view_dofs.elements[view_dofs.per_element * t..view_dofs.per_element * (t + 1)];
        if quadratic {
            // Four sub-triangles through the mid-edge nodes, each shaded by
            // |B| at its own centroid (barycentric coordinates below).
            let (a, b, c, ab, bc, ca) = (d[0], d[1], d[2], d[3], d[4], d[5]);
            let (two, one) = (2.0 / 3.0, 1.0 / 6.0);
            for (cell, l) in [
                ([a, ab, ca], [two, one, one]),
                ([ab, b, bc], [one, two, one]),
                ([ca, bc, c], [one, one, two]),
                ([ab, bc, ca], [1.0 / 3.0; 3]),
            ] {
                cells.push(cell);
                values.push(solution.field_in(t, l).b_magnitude());
            }
        } else {
            cells.push([d[0], d[1], d[2]]);
            values.push(solution.field_in(t, [1.0 / 3.0; 3]).b_magnitude());
        }
    }
    let all_flux = study::flux_function(solution);
    let flux: Vec<f64> = view_dofs
        .kept
        .iter()
        .map(|&d| all_flux[d as usize])
        .collect();
    let outlines = region_outlines(mesh);
    let title = format!("{}: |B| and flux lines", model.title);
    let (png, svg) = (staging.path("field.png")?, staging.path("field.svg")?);
    plot::field_map(
        &png,
        &svg,
        &FieldPicture {
            title: &title,
            unit: model.length_unit.as_str(),
            points: &view_dofs.points,
            cells: &cells,
            cell_values: &values,
            flux: &flux,
            outlines: &outlines,
            view,
            flux_lines: 24,
        },
    )
}

/// Mesh edges where the region changes, and the outer edge: the outlines of
/// what is left of each shape.
fn region_outlines(mesh: &Mesh) -> Vec<[[f64; 2]; 2]> {
    let topo = mesh.edge_topology();
    let mut owner: Vec<Option<u32>> = vec![None; topo.edges.len()];
    let mut differs = vec![false; topo.edges.len()];
    let mut count = vec![0u8; topo.edges.len()];
    for (t, te) in topo.triangle_edges.iter().enumerate() {
        for &e in te {
            let e = e as usize;
            count[e] = count[e].saturating_add(1);
            match owner[e] {
                None => owner[e] = Some(mesh.regions[t]),
                Some(r) if r != mesh.regions[t] => differs[e] = true,
                _ => {}
            }
        }
    }
    topo.edges
        .iter()
        .enumerate()
        .filter(|&(e, _)| differs[e] || count[e] == 1)
        .map(|(_, &[a, b])| [mesh.nodes[a as usize], mesh.nodes[b as usize]])
        .collect()
}

/// `fluxwright materials [NAME]`: the built-in typical materials.
fn materials(name: Option<&str>) -> Result<u8> {
    use fluxwright_solver::model::{library_material, library_materials};
    let law = |m: &fluxwright_solver::model::LibraryMaterial| match (
        m.bh_curve,
        m.relative_permeability,
        m.remanence_t,
    ) {
        (_, Some(mu), Some(br)) => format!("magnet Br = {br} T, recoil μr = {mu}"),
        (Some((h, _)), _, _) => format!("B-H curve, {} points", h.len()),
        (None, Some(mu), None) => format!("linear μr = {mu}"),
        _ => "—".to_string(),
    };
    match name {
        None => {
            let mut rows = vec![["name".to_string(), "what it is".into(), "law".into()]];
            for m in library_materials() {
                rows.push([m.name.to_string(), m.description.to_string(), law(m)]);
            }
            print_table(&rows);
            println!("\nUse one with `from_library = \"NAME\"` under [materials.YOURNAME]; keys given beside it override.");
            println!("`fluxwright materials NAME` shows its values.");
        }
        Some(n) => {
            let Some(m) = library_material(n) else {
                let names: Vec<&str> = library_materials().iter().map(|m| m.name).collect();
                return Err(Failure::input(format!(
                    "no built-in material `{n}`; the built-in ones are: {}",
                    names.join(", ")
                ))
                .into());
            };
            println!("{}: {}", m.name, m.description);
            println!("  law: {}", law(m));
            if let Some((h, b)) = m.bh_curve {
                let mut rows = vec![["H (A/m)".to_string(), "B (T)".into()]];
                for (h, b) in h.iter().zip(b) {
                    rows.push([format!("{h}"), format!("{b}")]);
                }
                print_table(&rows);
                println!("  past the last point the curve continues with slope μ0");
            }
            println!("  source: {}", m.source);
        }
    }
    println!("\nCaution: these are typical values for first sketches. Real material data should come from the supplier's data sheet.");
    Ok(0)
}

#[cfg(test)]
mod tests {
    use super::four_digits;

    #[test]
    fn four_digits_keeps_small_fields_readable() {
        assert_eq!(four_digits(0.5573, 0.56), "0.5573");
        assert_eq!(four_digits(443480.0, 443480.0), "4.435e5");
        assert_eq!(four_digits(12.3456, 12.0), "12.35");
        // A 2 mT stray field must not print as 0.0000.
        assert_eq!(four_digits(0.0021, 0.0021), "0.002100");
        assert_eq!(four_digits(3.2e-6, 3.2e-6), "3.200e-6");
        // Rounding noise of a component that is zero by symmetry.
        assert_eq!(four_digits(-1.1e-17, 0.56), "0");
        assert_eq!(four_digits(1.085e-8, 0.9881), "0");
    }
}
