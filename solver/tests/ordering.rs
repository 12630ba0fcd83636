//! Coordinate nested dissection ([`fluxwright_solver::ordering`]): a valid
//! permutation for any points, the fill on a structured grid against George's
//! nested-dissection bound, and the same solutions as the default ordering
//! on small problems (plain, periodic P2, and an open boundary whose Kelvin
//! image lies beside the model).

use faer::Par;
use fluxwright_solver::assembly::{Assembler, SparsityPattern};
use fluxwright_solver::fe::structured::rectangle;
use fluxwright_solver::linear::{FaerCholesky, FillOrdering, SpdSolver};
use fluxwright_solver::material::Material;
use fluxwright_solver::model::{Model, ModelSource};
use fluxwright_solver::ordering::coordinate_dissection;
use fluxwright_solver::problem::*;
use fluxwright_solver::{nonlinear, study};

fn uniform(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..=n)
        .map(|i| lo + (hi - lo) * i as f64 / n as f64)
        .collect()
}

/// A square of P1 triangles, `cells` a side, A = 0 around, a current in the
/// middle: the unknowns are the (cells − 1)² interior grid nodes.
fn grid_problem(mesh: &fluxwright_mesher::Mesh, order: ElementOrder) -> Problem<'_> {
    Problem {
        mesh,
        length_scale_m: 1e-3,
        symmetry: Symmetry::Planar { depth_m: 1.0 },
        order,
        regions: vec![
            RegionProps {
                material: Material::AIR,
                current_density_a_per_m2: 1e6,
            },
            RegionProps::of(Material::Linear { mu_r: 1000.0 }),
            RegionProps::air(),
            // The last entry is the outer region's.
            RegionProps::air(),
        ],
        boundary: BoundarySpec::uniform(EdgeCondition::ZeroPotential),
        source: None,
    }
}

fn grid_mesh(cells: usize) -> fluxwright_mesher::Mesh {
    rectangle(&uniform(0.0, 1.0, cells), &uniform(0.0, 1.0, cells), |c| {
        if (c[0] - 0.5).abs() < 0.1 && (c[1] - 0.5).abs() < 0.1 {
            0
        } else if c[0] > 0.7 {
            1
        } else {
            2
        }
    })
}

fn is_permutation(order: &[usize], n: usize) -> bool {
    let mut seen = vec![false; n];
    order.len() == n
        && order
            .iter()
            .all(|&i| i < n && !std::mem::replace(&mut seen[i], true))
}

#[test]
fn any_points_give_a_permutation() {
    let mesh = grid_mesh(40);
    let problem = grid_problem(&mesh, ElementOrder::P1);
    let asm = Assembler::new(&problem).unwrap();
    let pattern: &SparsityPattern = &asm.pattern;
    let n = pattern.n;
    let good = asm.unknown_points();
    assert!(good.iter().all(|p| p[0].is_finite() && p[1].is_finite()));
    let scrambled: Vec<[f64; 2]> = (0..n)
        .map(|i| [((i * 7919) % 101) as f64, ((i * 104_729) % 97) as f64])
        .collect();
    let same = vec![[1.0, 2.0]; n];
    let mut broken = good.clone();
    for p in broken.iter_mut().step_by(5) {
        *p = [f64::NAN, f64::INFINITY];
    }
    for (name, points) in [
        ("mesh", &good),
        ("scrambled", &scrambled),
        ("all equal", &same),
        ("non-finite", &broken),
    ] {
        let order = coordinate_dissection(pattern, points).unwrap();
        assert!(is_permutation(&order, n), "{name}");
        // And the solver takes it.
        let mut solver = FaerCholesky::with_ordering(Par::Seq, FillOrdering::Custom(order));
        solver.analyze(pattern).unwrap();
    }
    // A wrong number of points is an error, not a panic.
    assert!(coordinate_dissection(pattern, &good[1..]).is_err());
    let mut solver = FaerCholesky::with_ordering(Par::Seq, FillOrdering::CoordinateDissection);
    assert!(solver.analyze_with_points(pattern, &good[1..]).is_err());
}

#[test]
fn fill_on_a_grid_is_within_the_nested_dissection_bound() {
    // Nested dissection of a k × k regular finite-element grid fills
    // (31/4) k² log₂ k + O(k²) entries of L (George, "Nested dissection of a
    // regular finite element mesh", SIAM J. Numer. Anal. 10 (1973) 345–363;
    // the constant for his 9-point grid, from memory). Our P1 grid has the
    // 7-point stencil (one diagonal per square), a subgraph of his, so its
    // fill is below his for the same order. Tolerance: within the leading
    // term itself (the O(k²) part and supernodal padding on top; measured
    // 3.6e5 entries, 0.41 of it, at k = 127). The banded natural order fills
    // about k³ (measured 2.3e6) and must fail the same bound (the check can
    // fail).
    let cells = 128;
    let k = (cells - 1) as f64;
    let bound = 31.0 / 4.0 * k * k * k.log2();
    let mesh = grid_mesh(cells);
    let problem = grid_problem(&mesh, ElementOrder::P1);
    let asm = Assembler::new(&problem).unwrap();
    let fill = |ordering: FillOrdering| {
        let mut solver = FaerCholesky::with_ordering(Par::Seq, ordering);
        solver
            .analyze_with_points(&asm.pattern, &asm.unknown_points())
            .unwrap();
        solver.factor_counts()
    };
    let (nd_entries, nd_flops) = fill(FillOrdering::CoordinateDissection);
    let natural = (0..asm.pattern.n).collect();
    let (natural_entries, _) = fill(FillOrdering::Custom(natural));
    let (_, amd_flops) = fill(FillOrdering::Amd);
    eprintln!(
        "k = {k}: bound {bound:.3e}, dissection {nd_entries} entries {nd_flops:.3e} flops, \
         natural {natural_entries}, AMD {amd_flops:.3e} flops"
    );
    assert!(
        (nd_entries as f64) < bound,
        "dissection fill {nd_entries} vs bound {bound:.0}"
    );
    assert!(
        natural_entries as f64 > bound,
        "natural fill {natural_entries} vs bound {bound:.0}"
    );
    // Work: nested dissection is O(k³) flops against minimum degree's
    // larger constant on grids (George & Liu, Computer Solution of Large
    // Sparse Positive Definite Systems, 1981, ch. 8; common practice that it
    // is not worse): no more than AMD's here (measured 1.7e7 against 3.6e7).
    assert!(
        nd_flops <= amd_flops,
        "dissection {nd_flops:.3e} flops vs AMD {amd_flops:.3e}"
    );
}

/// The relative 2-norm difference of two vectors.
fn relative_difference(a: &[f64], b: &[f64]) -> f64 {
    let d: f64 = a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum();
    let s: f64 = b.iter().map(|y| y * y).sum();
    (d / s).sqrt()
}

/// Potentials of `problem` solved with AMD and with the coordinate
/// dissection (Newton through `solve_with`).
fn both_orderings(problem: &Problem<'_>) -> (Vec<f64>, Vec<f64>) {
    let solve = |ordering: FillOrdering| {
        let mut solver = FaerCholesky::with_ordering(Par::Seq, ordering);
        let s = nonlinear::solve_with(problem, &Default::default(), &mut solver).unwrap();
        assert!(s.report.converged);
        s.potential().to_vec()
    };
    (
        solve(FillOrdering::Amd),
        solve(FillOrdering::CoordinateDissection),
    )
}

#[test]
fn the_solution_is_the_same_as_with_amd() {
    // One SPD system, two elimination orders: the direct solutions agree to
    // rounding (condition number of this P1 system about 1e5, so 1e-10
    // relative leaves margin; common practice, no source).
    let mesh = grid_mesh(60);
    let problem = grid_problem(&mesh, ElementOrder::P1);
    let (amd, nd) = both_orderings(&problem);
    assert!(relative_difference(&nd, &amd) < 1e-10);
    assert!(amd.iter().any(|&a| a != 0.0));
}

#[test]
fn periodic_and_open_problems_solve_the_same() {
    // Periodic P2: partner dofs are merged into one unknown.
    let mesh = rectangle(&uniform(0.0, 1.0, 16), &uniform(0.0, 0.5, 9), |c| {
        u32::from(c[1] > 0.25)
    });
    let problem = Problem {
        regions: vec![
            RegionProps {
                material: Material::AIR,
                current_density_a_per_m2: 1e6,
            },
            RegionProps::air(),
            RegionProps::air(),
        ],
        boundary: BoundarySpec {
            default: EdgeCondition::ZeroPotential,
            // Left side (segment 3) tied to the right side (segment 1).
            segments: vec![(3, EdgeCondition::Periodic { partner: 1 })],
        },
        ..grid_problem(&mesh, ElementOrder::P2)
    };
    let (amd, nd) = both_orderings(&problem);
    assert!(relative_difference(&nd, &amd) < 1e-10);

    // Open boundary: the Kelvin image disc's unknowns lie beside the model,
    // tied to it at the rim.
    let text = r#"
        [mesh]
        max_size = 3
        [[shape]]
        name = "wire"
        circle = { center = [0, 0], radius = 2 }
        current = 100
        [outer]
        shape = { circle = { center = [0, 0], radius = 20 } }
        condition = "open"
    "#;
    let model = Model::from_toml_str(text, &ModelSource::new("open.toml")).unwrap();
    let mm = study::mesh_for(&model).unwrap();
    assert!(mm.exterior.is_some());
    let setup = study::problem(&model, &mm.mesh).unwrap();
    let (amd, nd) = both_orderings(&setup.problem);
    assert!(relative_difference(&nd, &amd) < 1e-10);
}
