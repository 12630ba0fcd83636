//! Cost of a current sweep against one solve (issue 5's target: a 21-step
//! current sweep of a 50k-unknown nonlinear model costs at most 6 times one
//! solve of it on 2 cores).
//!
//! The model: the invented gapped E-core choke of `examples/gapped_choke.toml`
//! (P2, saturating silicon steel, 1 mm gap) with every mesh size scaled by
//! `FLUXWRIGHT_SWEEP_SCALE` (default 0.61: about 50k reduced unknowns), and
//! a sweep of the winding current from 2 A to 42 A, 21 solves (`steps = 20`
//! intervals; the centre leg saturates above about 30 A).
//!
//! Timed, each `FLUXWRIGHT_SWEEP_RUNS` times (default 3), medians printed:
//! - `one solve`: what a single solve of the model at the top current does
//!   (mesh, problem set-up, cold Newton solve, every result), the same work
//!   as one sweep step plus the meshing;
//! - `sweep`: `sweep::run` over the 21 steps (its own mesh included), on the
//!   global rayon pool (`RAYON_NUM_THREADS`, default: all cores).
//!
//! ```text
//! cargo bench --bench sweep
//! FLUXWRIGHT_SWEEP_SCALE=0.5 FLUXWRIGHT_SWEEP_RUNS=5 cargo bench --bench sweep
//! ```
//!
//! Per-step Newton iterations and phase timings of the last sweep run are
//! printed too (where the time goes), and a digest of every reported number
//! (equal digests: the same results to the last bit).
//!
//! `FLUXWRIGHT_SWEEP_PREDICTORS=1` instead counts Newton steps per sweep
//! value from a cold start and from three warm starts, and what blocks of
//! 4 to 11 steps would cost with each ([`predictor_study`]).

#[path = "common/choke.rs"]
mod choke;
#[path = "common/stats.rs"]
mod stats;
use stats::median;

use choke::choke_toml;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::nonlinear::{self, NewtonOptions};
use fluxwright_solver::study;
use fluxwright_solver::sweep::{self, SweepOptions};
use std::time::Instant;

const TOP_CURRENT_A: f64 = 42.0;

fn model(scale: f64) -> Model {
    // Probes, the Ampère loop and the sweep of the current.
    let extra = format!(
        r#"
[[probe]]
name = "gap_centre"
at = [30, 25]

[[loop]]
name = "around_coil_go"
rectangle = {{ min = [10.5, 10.5], max = [19.5, 39.5] }}

[sweep]
current = {{ winding = "main", from = 2, to = {TOP_CURRENT_A}, steps = 20 }}
"#
    );
    let text = choke_toml(
        "Gapped E-core choke, sweep benchmark (invented)",
        scale,
        2,
        TOP_CURRENT_A,
        &extra,
    );
    Model::from_toml_str(&text, &ModelSource::new("sweep-bench.toml")).expect("valid model")
}

/// A hash of every number the steps report except timings: equal digests
/// mean the same results to the last bit (FNV-1a over the bits).
fn digest(steps: &[sweep::SweepStep]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    let mut eat = |x: f64| {
        for b in x.to_bits().to_le_bytes() {
            h = (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3);
        }
    };
    for s in steps {
        let r = &s.results;
        eat(r.energy_j);
        eat(r.coenergy_j);
        eat(r.solve.iterations as f64);
        r.solve.residual_history.iter().for_each(|&v| eat(v));
        for w in r.windings.values() {
            eat(w.flux_linkage_wb);
            eat(w.incremental_inductance_h);
        }
        for p in r.probes.values() {
            p.b_t.iter().chain(&p.h_a_per_m).for_each(|&v| eat(v));
        }
        for l in r.loops.values() {
            eat(l.h_line_integral_a);
        }
    }
    h
}

fn env<T: std::str::FromStr>(name: &str, default: T) -> T {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// One solve at the model's current (the top of the sweep): seconds, and
/// (unknowns, Newton steps, seconds of `study::results`).
fn one_solve(model: &Model) -> (f64, (usize, usize, f64)) {
    let start = Instant::now();
    let mm = study::mesh_for(model).expect("mesh");
    let setup = study::problem(model, &mm.mesh).expect("problem");
    let solution = nonlinear::solve(&setup.problem, &NewtonOptions::default()).expect("solve");
    let post = Instant::now();
    let results = study::results(
        model,
        &mm.mesh,
        &setup,
        &solution,
        start.elapsed().as_secs_f64(),
    );
    let post = post.elapsed().as_secs_f64();
    assert!(results.solve.converged);
    (
        start.elapsed().as_secs_f64(),
        (results.mesh.unknowns, results.solve.iterations, post),
    )
}

/// Newton steps of every sweep value from a cold start and from three
/// warm starts (the previous value's potential, as `sweep::run` does; that
/// potential scaled by the current ratio; the secant extrapolation through
/// the two previous values), and what blocks of 4, 6, 8 and 11 steps would
/// cost in Newton steps: the sum, and the longest chain of blocks one of 2
/// threads gets (halves of the block list, as rayon splits it).
fn predictor_study(model: &Model) {
    let values: Vec<f64> = model.sweep.as_ref().expect("sweep").values();
    let mm = study::mesh_for(model).expect("mesh");
    let options = NewtonOptions::default();
    let solve = |k: usize, start: Option<&[f64]>| -> (usize, Vec<f64>, Vec<f64>) {
        let mk = sweep::model_at(model, values[k]);
        let setup = study::problem(&mk, &mm.mesh).expect("problem");
        let solver = Box::new(fluxwright_solver::linear::FaerCholesky::default());
        let s = nonlinear::solve_from(&setup.problem, &options, solver, start).expect("solve");
        assert!(s.report.converged);
        (
            s.report.iterations,
            s.potential().to_vec(),
            s.report.step_lengths.clone(),
        )
    };
    let cold: Vec<(usize, Vec<f64>, Vec<f64>)> =
        (0..values.len()).map(|k| solve(k, None)).collect();
    let mut previous = vec![0usize; values.len()];
    let mut scaled = vec![0usize; values.len()];
    let mut secant = vec![0usize; values.len()];
    println!("\nstep current cold previous scaled secant  (cold step lengths)");
    for k in 0..values.len() {
        previous[k] = cold[k].0;
        scaled[k] = cold[k].0;
        secant[k] = cold[k].0;
        if k >= 1 {
            let u1 = &cold[k - 1].1;
            previous[k] = solve(k, Some(u1)).0;
            let f = values[k] / values[k - 1];
            let start: Vec<f64> = u1.iter().map(|v| v * f).collect();
            scaled[k] = solve(k, Some(&start)).0;
            secant[k] = scaled[k];
        }
        if k >= 2 {
            let (u0, u1) = (&cold[k - 2].1, &cold[k - 1].1);
            let t = (values[k] - values[k - 1]) / (values[k - 1] - values[k - 2]);
            let start: Vec<f64> = u1.iter().zip(u0).map(|(a, b)| a + t * (a - b)).collect();
            secant[k] = solve(k, Some(&start)).0;
        }
        let lengths: Vec<String> = cold[k].2.iter().map(|a| format!("{a:.2}")).collect();
        println!(
            "{k:4} {:7.1} {:4} {:8} {:6} {:6}  ({})",
            values[k],
            cold[k].0,
            previous[k],
            scaled[k],
            secant[k],
            lengths.join(" ")
        );
    }
    println!("block  start      total  2-thread chain");
    for block in [4usize, 6, 8, 11] {
        for (name, warm) in [
            ("previous", &previous),
            ("scaled", &scaled),
            ("secant", &secant),
        ] {
            // Within a block the second step has one predecessor only.
            let cost = |k: usize| -> usize {
                match k % block {
                    0 => cold[k].0,
                    1 if name == "secant" => scaled[k],
                    _ => warm[k],
                }
            };
            let blocks: Vec<usize> = (0..values.len())
                .collect::<Vec<_>>()
                .chunks(block)
                .map(|b| b.iter().map(|&k| cost(k)).sum())
                .collect();
            let half = blocks.len().div_ceil(2);
            let chain = blocks[..half]
                .iter()
                .sum::<usize>()
                .max(blocks[half..].iter().sum());
            println!(
                "{block:5}  {name:9} {:6} {:6}",
                blocks.iter().sum::<usize>(),
                chain
            );
        }
    }
}

fn main() {
    // `cargo bench` passes `--bench`; nothing else is taken.
    let scale = env("FLUXWRIGHT_SWEEP_SCALE", 0.61);
    let runs = env("FLUXWRIGHT_SWEEP_RUNS", 3usize).max(1);
    let m = model(scale);
    if env("FLUXWRIGHT_SWEEP_PREDICTORS", 0u8) == 1 {
        predictor_study(&m);
        return;
    }
    let threads = rayon::current_num_threads();
    let (mut single, mut swept) = (Vec::new(), Vec::new());
    let mut last = Vec::new();
    let mut info = (0, 0, 0.0);
    for run in 0..runs {
        let (t, i) = one_solve(&m);
        single.push(t);
        info = i;
        let start = Instant::now();
        let steps = sweep::run(&m, &SweepOptions::default(), &|_| {}).expect("sweep");
        let t_sweep = start.elapsed().as_secs_f64();
        swept.push(t_sweep);
        assert!(steps.iter().all(|s| s.results.solve.converged));
        eprintln!(
            "run {run}: one solve {t:.3} s, sweep {t_sweep:.3} s, ratio {:.2}",
            t_sweep / t
        );
        last = steps;
    }
    let (unknowns, iterations, post) = info;
    println!(
        "gapped choke P2, scale {scale}: {unknowns} unknowns, {threads} rayon threads, {runs} runs"
    );
    println!("one solve at {TOP_CURRENT_A} A: {iterations} Newton steps, results {post:.3} s");
    println!("step  current  newton  seconds  setup  analyze  assembly  factor  solve  residuals");
    for s in &last {
        let t = &s.results.solve.timings_s;
        let history: Vec<String> = s
            .results
            .solve
            .residual_history
            .iter()
            .map(|r| format!("{r:.1e}"))
            .collect();
        println!(
            "{:4} {:8.1} {:7} {:8.3} {:6.3} {:8.3} {:9.3} {:7.3} {:6.3}  {}",
            s.index,
            s.value,
            s.results.solve.iterations,
            s.results.solve.seconds,
            t.setup,
            t.analyze,
            t.assembly,
            t.factor,
            t.solve,
            history.join(" ")
        );
    }
    println!(
        "results digest (energies, windings, probes, loops, residuals; bit for bit): {:016x}",
        digest(&last)
    );
    let newton: usize = last.iter().map(|s| s.results.solve.iterations).sum();
    let (t1, t21) = (median(&mut single), median(&mut swept));
    println!("Newton steps over the sweep: {newton} (one cold solve: {iterations})");
    println!(
        "median one solve {t1:.3} s, median 21-step sweep {t21:.3} s, ratio {:.2} (target ≤ 6)",
        t21 / t1
    );
}
