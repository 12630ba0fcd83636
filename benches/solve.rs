//! Finite-element core benchmarks: assembly, symbolic analysis, numeric
//! factorisation, triangular solve and the full nonlinear solve, P1 and P2,
//! at about 10k and 100k unknowns (1M with `FLUXWRIGHT_BENCH_1M=1`, slow).
//!
//! Ids: `assemble/p1/n=…`, `analyze/p1/n=…`, `factor/p2/n=…` (AMD: plain
//! `analyze` has no points), `analyze-nd/…`, `factor-nd/…` (coordinate nested dissection),
//! `substitute/p1/n=…` (forward and back substitution with the factor),
//! `solve/p1/n=…` (Newton, default ordering: the dissection) where n is the number of reduced unknowns. The problem: a square of side 0.2 m (zero
//! potential around it) holding an iron frame with a gapped centre leg,
//! driven into saturation by a coil around the leg; a structured mesh so
//! the sizes are exact.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use fluxwright_solver::assembly::Assembler;
use fluxwright_solver::fe::structured::rectangle;
use fluxwright_solver::linear::{FaerCholesky, FillOrdering, Par, SpdSolver};
use fluxwright_solver::material::{BhCurve, Material};
use fluxwright_solver::nonlinear::{solve, NewtonOptions};
use fluxwright_solver::problem::*;
use std::time::Duration;

fn steel() -> Material {
    let h = [
        0.0, 40.0, 60.0, 80.0, 100.0, 150.0, 200.0, 300.0, 500.0, 1000.0, 2500.0, 5000.0, 10000.0,
        30000.0, 100000.0,
    ];
    let b = [
        0.0, 0.3, 0.55, 0.8, 1.0, 1.2, 1.3, 1.4, 1.5, 1.6, 1.7, 1.8, 1.9, 2.05, 2.2,
    ];
    Material::Curve(BhCurve::try_new(&h, &b).expect("valid curve"))
}

fn mesh(cells: usize) -> fluxwright_mesher::Mesh {
    let lines: Vec<f64> = (0..=cells)
        .map(|i| -100.0 + 200.0 * i as f64 / cells as f64)
        .collect();
    rectangle(&lines, &lines, |c| {
        let frame =
            c[0].abs() < 40.0 && c[1].abs() < 40.0 && !(c[0].abs() < 20.0 && c[1].abs() < 20.0);
        // Centre leg with a 2 mm air gap: the flux is forced through iron.
        let leg = c[0].abs() < 5.0 && c[1].abs() < 20.0 && c[1].abs() > 1.0;
        if frame || leg {
            0
        } else if c[0] > -15.0 && c[0] < -5.0 && c[1].abs() < 15.0 {
            1 // coil, go
        } else if c[0] > 5.0 && c[0] < 15.0 && c[1].abs() < 15.0 {
            2 // coil, return
        } else {
            3
        }
    })
}

fn problem(mesh: &fluxwright_mesher::Mesh, order: ElementOrder) -> Problem<'_> {
    // 3 kA-turns through a 2 mm gap: the centre leg saturates (about 2 T).
    let j = 1e7;
    Problem {
        mesh,
        length_scale_m: 1e-3,
        symmetry: Symmetry::Planar { depth_m: 0.05 },
        order,
        regions: vec![
            RegionProps::of(steel()),
            RegionProps {
                material: Material::AIR,
                current_density_a_per_m2: j,
            },
            RegionProps {
                material: Material::AIR,
                current_density_a_per_m2: -j,
            },
            RegionProps::air(),
            RegionProps::air(),
        ],
        boundary: BoundarySpec::uniform(EdgeCondition::ZeroPotential),
        source: None,
    }
}

fn sizes() -> Vec<(ElementOrder, usize)> {
    // Cells per side for about 10k / 100k / 1M unknowns.
    let mut v = vec![
        (ElementOrder::P1, 100),
        (ElementOrder::P2, 50),
        (ElementOrder::P1, 316),
        (ElementOrder::P2, 158),
    ];
    if std::env::var_os("FLUXWRIGHT_BENCH_1M").is_some() {
        v.extend([(ElementOrder::P1, 1000), (ElementOrder::P2, 500)]);
    }
    v
}

fn name(order: ElementOrder) -> &'static str {
    match order {
        ElementOrder::P1 => "p1",
        ElementOrder::P2 => "p2",
    }
}

fn bench(c: &mut Criterion) {
    for (order, cells) in sizes() {
        let m = mesh(cells);
        let p = problem(&m, order);
        let asm = Assembler::new(&p).expect("valid problem");
        let n = asm.constraints.n_free;
        let mut group = c.benchmark_group("fe");
        group
            .sample_size(10)
            .measurement_time(Duration::from_secs(if n > 200_000 { 60 } else { 10 }));
        let u = asm.initial_potential();
        let mut values = vec![0.0; asm.pattern.nnz()];
        let mut residual = vec![0.0; n];
        group.bench_function(
            BenchmarkId::new(format!("assemble/{}", name(order)), n),
            |b| b.iter(|| asm.assemble(&u, Some(&mut values), &mut residual)),
        );
        let mut solver = FaerCholesky::default();
        group.bench_function(
            BenchmarkId::new(format!("analyze/{}", name(order)), n),
            |b| b.iter(|| solver.analyze(&asm.pattern).expect("analysis")),
        );
        solver.analyze(&asm.pattern).expect("analysis");
        group.bench_function(
            BenchmarkId::new(format!("factor/{}", name(order)), n),
            |b| b.iter(|| solver.factor(&values).expect("SPD")),
        );
        let mut rhs = residual.clone();
        group.bench_function(
            BenchmarkId::new(format!("substitute/{}", name(order)), n),
            |b| {
                b.iter(|| {
                    rhs.copy_from_slice(&residual);
                    solver.solve(&mut rhs).expect("factored")
                })
            },
        );
        // The coordinate nested dissection ordering, same pattern and values.
        let points = asm.unknown_points();
        let mut nd = FaerCholesky::with_ordering(Par::Seq, FillOrdering::CoordinateDissection);
        group.bench_function(
            BenchmarkId::new(format!("analyze-nd/{}", name(order)), n),
            |b| {
                b.iter(|| {
                    // A fresh solver: the same pattern would keep its analysis.
                    nd = FaerCholesky::with_ordering(Par::Seq, FillOrdering::CoordinateDissection);
                    nd.analyze_with_points(&asm.pattern, &points)
                        .expect("analysis")
                })
            },
        );
        group.bench_function(
            BenchmarkId::new(format!("factor-nd/{}", name(order)), n),
            |b| b.iter(|| nd.factor(&values).expect("SPD")),
        );
        group.bench_function(BenchmarkId::new(format!("solve/{}", name(order)), n), |b| {
            b.iter(|| {
                let s = solve(&p, &NewtonOptions::default()).expect("solve");
                assert!(s.report.converged);
                s.report.iterations
            })
        });
        group.finish();
        let s = solve(&p, &NewtonOptions::default()).expect("solve");
        eprintln!(
            "{} n={n}: {} Newton steps, {:?}",
            name(order),
            s.report.iterations,
            s.report.timings
        );
    }
}

criterion_group!(benches, bench);
criterion_main!(benches);
