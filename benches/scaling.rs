//! Time and peak memory against the number of unknowns, P1 and P2, from
//! about 10k to 2M unknowns (issue 5), with the default coordinate nested
//! dissection ordering against approximate minimum degree (issue 3).
//!
//! The model: the invented gapped E-core choke of `examples/gapped_choke.toml`
//! (saturating silicon steel, 1 mm gap, 40 turns at 20 A, zero potential
//! around), meshed by the project's mesher with every mesh size scaled so
//! that the reduced unknowns come out near each target size.
//!
//! Every size runs in a child process of this binary (so that its peak
//! resident set, `VmHWM` of `/proc/self/status`, is its own), 3 times up
//! to 300k unknowns and once above; the table shows medians. Each child:
//! 1. `mesh`: `study::mesh_for`; `newton`: `study::problem` +
//!    `nonlinear::solve` (default solver), whose own phase timings and
//!    Newton steps are kept; `peak`: VmHWM right after (mesh + solve, what
//!    a single solve needs);
//! 2. then, on the same problem: `setup` (`Assembler::new`), `assemble`
//!    (one tangent and residual at the zero potential), and for each
//!    ordering `analyze`, `factor` (one numeric factorisation of that
//!    tangent), `solve` (one substitution), the factor's stored entries and
//!    flops (`FaerCholesky::factor_counts`), and a whole Newton solve with
//!    that ordering (`nonlinear::solve_from`).
//!
//! Then `time = a·n^b` is fitted by least squares in log-log for each
//! column and printed with the tables (markdown).
//!
//! ```text
//! cargo bench --bench scaling                          # P1 10k–2M, P2 50k–1M
//! FLUXWRIGHT_SCALING_MAX=300000 cargo bench --bench scaling   # smaller
//! ```

use fluxwright_solver::assembly::Assembler;
use fluxwright_solver::linear::{FaerCholesky, FillOrdering, Par, SpdSolver};
#[path = "common/choke.rs"]
mod choke;
#[path = "common/stats.rs"]
mod stats;
use stats::median;

use choke::choke_toml;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::nonlinear::{self, NewtonOptions};
use fluxwright_solver::study;
use serde_json::{json, Map, Value};
use std::collections::BTreeMap;
use std::process::Command;
use std::time::Instant;

/// Target sizes, P1.
const TARGETS_P1: [usize; 6] = [10_000, 30_000, 100_000, 300_000, 1_000_000, 2_000_000];
/// Target sizes, P2: the coarsest P2 mesh of this geometry has about 48k
/// unknowns (the 1 mm gap and the windows need their elements), and 2M
/// would take several GB for the factor.
const TARGETS_P2: [usize; 4] = [50_000, 100_000, 300_000, 1_000_000];

/// The model at mesh-size scale `scale`, element order `order`.
fn model(scale: f64, order: u8) -> Model {
    let title = "Gapped E-core choke, scaling benchmark (invented)";
    let text = choke_toml(title, scale, order, 20.0, "");
    Model::from_toml_str(&text, &ModelSource::new("scaling-bench.toml")).expect("valid model")
}

/// Mesh-size scale for about `n` unknowns: measured 154 783 P2 unknowns at
/// scale 0.25, unknowns ∝ scale⁻², P1 a quarter of P2.
fn scale_for(n: usize, order: u8) -> f64 {
    let p2_equivalent = if order == 1 { 4.0 * n as f64 } else { n as f64 };
    0.25 * (154_783.0 / p2_equivalent).sqrt()
}

fn peak_kib() -> f64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse().ok())
        .unwrap_or(f64::NAN)
}

fn timed<T>(f: impl FnOnce() -> T) -> (T, f64) {
    let t = Instant::now();
    let v = f();
    (v, t.elapsed().as_secs_f64())
}

/// The model, its mesh and the seconds of that meshing, for about
/// `target` unknowns: the 1 mm gap and the windows put a floor under the
/// coarse meshes, so the scale is corrected (secant steps in log-log) until
/// the unknowns are within 10 % of the target, at most 6 meshings.
fn calibrated(order: u8, target: usize) -> (Model, study::ModelMesh, f64) {
    let unknowns = |m: &Model, mm: &study::ModelMesh| -> f64 {
        let setup = study::problem(m, &mm.mesh).expect("problem");
        Assembler::new(&setup.problem)
            .expect("assembler")
            .constraints
            .n_free as f64
    };
    let goal = target as f64;
    let mut scale = scale_for(target, order);
    let mut last: Option<(f64, f64)> = None;
    for attempt in 0.. {
        let m = model(scale, order);
        let (mm, t_mesh) = timed(|| study::mesh_for(&m).expect("mesh"));
        let n = unknowns(&m, &mm);
        if (n / goal - 1.0).abs() < 0.1 || attempt == 5 {
            return (m, mm, t_mesh);
        }
        // n ∝ scale^slope; −2 where the sizes, not the features, decide.
        let slope = match last {
            Some((s0, n0)) if s0 != scale => ((n / n0).ln() / (scale / s0).ln()).clamp(-3.0, -0.3),
            _ => -2.0,
        };
        last = Some((scale, n));
        scale *= (goal / n).powf(1.0 / slope);
    }
    unreachable!()
}

/// One size in this process: a JSON object of measurements on stdout.
fn child(order: u8, target: usize) {
    let (m, mm, t_mesh) = calibrated(order, target);
    let mut out = Map::new();
    let setup = study::problem(&m, &mm.mesh).expect("problem");
    let (solution, t_newton) =
        timed(|| nonlinear::solve(&setup.problem, &NewtonOptions::default()).expect("solve"));
    // Includes the calibration's meshes, each freed before the next (a
    // smaller one first, so the peak is the final mesh's and the solve's).
    out.insert("peak_mib".into(), json!(peak_kib() / 1024.0));
    let r = &solution.report;
    assert!(r.converged, "Newton did not converge at {target}");
    out.insert("n".into(), json!(r.unknowns));
    out.insert("triangles".into(), json!(mm.mesh.triangles.len()));
    out.insert("mesh".into(), json!(t_mesh));
    out.insert("newton".into(), json!(t_newton));
    out.insert("newton_steps".into(), json!(r.iterations));
    out.insert("newton_assembly".into(), json!(r.timings.assembly_s));
    out.insert("newton_factor".into(), json!(r.timings.factor_s));
    drop(solution);

    let p = &setup.problem;
    let (asm, t_setup) = timed(|| Assembler::new(p).expect("assembler"));
    out.insert("setup".into(), json!(t_setup));
    let u = asm.initial_potential();
    let mut values = vec![0.0; asm.pattern.nnz()];
    let mut residual = vec![0.0; asm.constraints.n_free];
    let ((), t_assemble) = timed(|| asm.assemble(&u, Some(&mut values), &mut residual));
    out.insert("assemble".into(), json!(t_assemble));
    let points = asm.unknown_points();
    for (name, ordering) in [
        ("amd", FillOrdering::Amd),
        ("nd", FillOrdering::CoordinateDissection),
    ] {
        let mut solver = FaerCholesky::with_ordering(Par::Seq, ordering.clone());
        let ((), t_analyze) = timed(|| {
            solver
                .analyze_with_points(&asm.pattern, &points)
                .expect("analysis")
        });
        let ((), t_factor) = timed(|| solver.factor(&values).expect("SPD"));
        let mut rhs = residual.clone();
        let ((), t_solve) = timed(|| solver.solve(&mut rhs).expect("factored"));
        let (entries, flops) = solver.factor_counts();
        drop(solver);
        let solver: Box<dyn SpdSolver> = Box::new(FaerCholesky::with_ordering(Par::Seq, ordering));
        let (s, t_full) = timed(|| {
            nonlinear::solve_from(p, &NewtonOptions::default(), solver, None).expect("solve")
        });
        assert!(s.report.converged);
        for (k, v) in [
            ("analyze", t_analyze),
            ("factor", t_factor),
            ("solve", t_solve),
            ("entries", entries as f64),
            ("flops", flops),
            ("newton", t_full),
            ("newton_factor", s.report.timings.factor_s),
            ("newton_steps", s.report.iterations as f64),
        ] {
            out.insert(format!("{name}_{k}"), json!(v));
        }
    }
    println!("{}", Value::Object(out));
}

/// Least squares fit of ln t = ln a + b ln n: (a, b).
fn power_law(points: &[(f64, f64)]) -> (f64, f64) {
    let k = points.len() as f64;
    let (mx, my) = points.iter().fold((0.0, 0.0), |(x, y), &(n, t)| {
        (x + n.ln() / k, y + t.ln() / k)
    });
    let (mut sxy, mut sxx) = (0.0, 0.0);
    for &(n, t) in points {
        sxy += (n.ln() - mx) * (t.ln() - my);
        sxx += (n.ln() - mx) * (n.ln() - mx);
    }
    let b = sxy / sxx;
    ((my - b * mx).exp(), b)
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if let Some(i) = args.iter().position(|a| a == "--child") {
        let order: u8 = args[i + 1].parse().expect("order");
        let target: usize = args[i + 2].parse().expect("size");
        child(order, target);
        return;
    }
    let max: usize = std::env::var("FLUXWRIGHT_SCALING_MAX")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(usize::MAX);
    let exe = std::env::current_exe().expect("own executable");
    // order → rows of medians
    let mut rows: BTreeMap<u8, Vec<BTreeMap<String, f64>>> = BTreeMap::new();
    for order in [1u8, 2] {
        let targets: &[usize] = if order == 1 { &TARGETS_P1 } else { &TARGETS_P2 };
        for &target in targets.iter().filter(|&&t| t <= max) {
            let reps = if target <= 300_000 { 3 } else { 1 };
            let mut runs: Vec<Map<String, Value>> = Vec::new();
            for _ in 0..reps {
                let output = Command::new(&exe)
                    .args(["--child", &order.to_string(), &target.to_string()])
                    .output()
                    .expect("child runs");
                let text = String::from_utf8_lossy(&output.stdout);
                match text
                    .lines()
                    .last()
                    .and_then(|l| serde_json::from_str(l).ok())
                {
                    Some(Value::Object(m)) => runs.push(m),
                    _ => {
                        eprintln!(
                            "P{order} {target}: child failed: {}",
                            String::from_utf8_lossy(&output.stderr)
                        );
                        break;
                    }
                }
            }
            if runs.is_empty() {
                continue;
            }
            let mut row = BTreeMap::new();
            for key in runs[0].keys() {
                let mut v: Vec<f64> = runs.iter().filter_map(|r| r[key].as_f64()).collect();
                row.insert(key.clone(), median(&mut v));
            }
            eprintln!("P{order} {target}: {row:?}");
            rows.entry(order).or_default().push(row);
        }
    }
    let columns = [
        ("mesh", "mesh"),
        ("setup", "setup"),
        ("assemble", "assemble"),
        ("nd_analyze", "analyze"),
        ("nd_factor", "factor"),
        ("nd_solve", "substitute"),
        ("newton", "Newton solve"),
    ];
    for (order, rows) in &rows {
        println!("\n### P{order}, default ordering (coordinate nested dissection)\n");
        println!(
            "| unknowns | triangles | {} | Newton steps | peak RSS |",
            columns.map(|c| c.1).join(" | ")
        );
        println!("|{}", "---:|".repeat(columns.len() + 4));
        for r in rows {
            let times: Vec<String> = columns.iter().map(|c| secs(r[c.0])).collect();
            println!(
                "| {:.0} | {:.0} | {} | {:.0} | {:.0} MiB |",
                r["n"],
                r["triangles"],
                times.join(" | "),
                r["newton_steps"],
                r["peak_mib"]
            );
        }
        let fits: Vec<String> = columns
            .iter()
            .map(|c| {
                let pts: Vec<(f64, f64)> = rows.iter().map(|r| (r["n"], r[c.0])).collect();
                let (a, b) = power_law(&pts);
                format!("{}: b = {b:.2} (a = {a:.2e} s)", c.1)
            })
            .chain(std::iter::once({
                let pts: Vec<(f64, f64)> = rows.iter().map(|r| (r["n"], r["peak_mib"])).collect();
                let (a, b) = power_law(&pts);
                format!("peak RSS: b = {b:.2} (a = {a:.2e} MiB)")
            }))
            .collect();
        println!("\nFitted time = a·n^b: {}", fits.join("; "));

        println!("\n### P{order}, AMD against coordinate nested dissection (ND)\n");
        println!("| unknowns | analyze AMD | analyze ND | factor AMD | factor ND | factor entries AMD | ND | Gflop AMD | ND | Newton AMD (steps) | Newton ND (steps) | Newton factor time AMD | ND |");
        println!("|{}", "---:|".repeat(13));
        for r in rows {
            println!(
                "| {:.0} | {} | {} | {} | {} | {:.2} M | {:.2} M | {:.2} | {:.2} | {} ({:.0}) | {} ({:.0}) | {} | {} |",
                r["n"],
                secs(r["amd_analyze"]),
                secs(r["nd_analyze"]),
                secs(r["amd_factor"]),
                secs(r["nd_factor"]),
                r["amd_entries"] / 1e6,
                r["nd_entries"] / 1e6,
                r["amd_flops"] / 1e9,
                r["nd_flops"] / 1e9,
                secs(r["amd_newton"]),
                r["amd_newton_steps"],
                secs(r["nd_newton"]),
                r["nd_newton_steps"],
                secs(r["amd_newton_factor"]),
                secs(r["nd_newton_factor"]),
            );
        }
    }
}

fn secs(t: f64) -> String {
    if t < 1.0 {
        format!("{:.0} ms", t * 1e3)
    } else {
        format!("{t:.2} s")
    }
}
