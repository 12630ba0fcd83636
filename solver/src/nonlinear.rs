//! Newton-Raphson with the consistent tangent and a backtracking line
//! search.
//!
//! Each step solves K_t(u) δ = −R(u) with the tangent of
//! [`crate::fe`] (exact derivative of the residual, so convergence is
//! quadratic near the solution), then halves the step length α until
//! ‖R(u + αδ)‖ ≤ (1 − 10⁻⁴α)‖R(u)‖ (Armijo's condition on the residual norm,
//! e.g. Dennis & Schnabel, Numerical Methods for Unconstrained Optimization
//! and Nonlinear Equations, 1983, §6.3). Non-convergence is reported in
//! [`NewtonReport`], not raised as an error: the last iterate is returned.
//! Problems with only linear materials take exactly one solve.

use crate::assembly::Assembler;
use crate::boundary::DofTarget;
use crate::field::{Solution, TangentCache};
use crate::linear::{FaerCholesky, SpdSolver};
use crate::problem::{Problem, SolveError};
use crate::progress::{NewtonStep, Progress, Silent};
use std::time::Instant;

/// Largest relative residual accepted after the single solve of a linear
/// problem (common practice, no source: a sound direct solve leaves about
/// 1e-12).
const LINEAR_RESIDUAL_LIMIT: f64 = 1e-6;

/// Stopping rules and limits.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct NewtonOptions {
    /// Converged when ‖R‖ ≤ this × ‖R(u₀)‖ (u₀: fixed values, zero
    /// elsewhere). Default 1e-8.
    pub residual_tolerance: f64,
    /// Also converged when the step changes the unknowns by less than this
    /// relative to their size (Newton has reached the rounding floor).
    /// Default 1e-10.
    pub update_tolerance: f64,
    /// Most Newton steps. Default 50.
    pub max_iterations: usize,
    /// Most residual evaluations of the line search per step. Default 12.
    pub max_halvings: usize,
    /// How the step length is chosen. Default [`LineSearch::Energy`].
    pub line_search: LineSearch,
}

/// Step-length rule of the Newton iteration.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LineSearch {
    /// Minimise the magnetic energy functional
    /// Π(u) = ∫ w(B) dV − ∫ J·A dV along the Newton direction δ. Π is convex
    /// (H(B) is monotone) and its derivative along δ is R(u + αδ)·δ, so the
    /// minimiser is the root of that, found by the Illinois variant of
    /// regula falsi (Dowell & Jarratt, BIT 11 (1971) 168–174) to 10 % of
    /// the initial slope; α = 1 is kept when Π still decreases there.
    Energy,
    /// Halve α until Armijo's condition ‖R(u + αδ)‖ ≤ (1 − 10⁻⁴α)‖R(u)‖
    /// holds.
    ResidualNorm,
}

impl Default for NewtonOptions {
    fn default() -> Self {
        NewtonOptions {
            residual_tolerance: 1e-8,
            update_tolerance: 1e-10,
            max_iterations: 50,
            max_halvings: 12,
            line_search: LineSearch::Energy,
        }
    }
}

/// Wall-clock seconds spent in each phase.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Timings {
    /// Dofs, constraints, pattern and scatter table.
    pub setup_s: f64,
    /// Symbolic analysis of the linear solver.
    pub analyze_s: f64,
    /// All assemblies (tangents and line-search residuals).
    pub assembly_s: f64,
    /// All numeric factorisations.
    pub factor_s: f64,
    /// All triangular solves.
    pub solve_s: f64,
    /// The whole solve, set-up to last step: less than the sum of the
    /// phases, since the analysis and the first assembly run side by side.
    pub total_s: f64,
}

/// What the nonlinear iteration did.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct NewtonReport {
    /// Whether a stopping rule was met.
    pub converged: bool,
    /// Newton steps taken (linear solves).
    pub iterations: usize,
    /// ‖R‖/‖R(u₀)‖ before the first step and after each step.
    pub residual_history: Vec<f64>,
    /// Step length α of each step.
    pub step_lengths: Vec<f64>,
    /// Relative size of the last update ‖αδ‖/‖u‖.
    pub relative_update: f64,
    /// The final relative residual.
    pub relative_residual: f64,
    /// Number of reduced unknowns.
    pub unknowns: usize,
    /// Whether the problem was linear (one solve).
    pub linear: bool,
    /// Time per phase.
    pub timings: Timings,
}

/// Solve `problem` with faer's Cholesky factorisation.
///
/// The solution keeps the solver (its symbolic analysis, and for a linear
/// problem its factorisation) and the tangent at the final iterate, for
/// later solves with the tangent ([`Solution::solve_tangent`]: incremental
/// inductances).
pub fn solve<'p>(
    problem: &'p Problem<'p>,
    options: &NewtonOptions,
) -> Result<Solution<'p>, SolveError> {
    solve_from(problem, options, Box::new(FaerCholesky::default()), None)
}

/// Solve `problem` with `solver`, starting Newton from `start` when given:
/// a full dof vector on the same dofs (a neighbouring sweep step's
/// potential, say); its fixed values are replaced by this problem's. The
/// stopping rule stays relative to the residual at the cold start (fixed
/// values, zero elsewhere), so a warm start stops at the same accuracy.
///
/// `solver` keeps its symbolic analysis when it was last analysed for the
/// same pattern. The solution keeps the solver for tangent solves; take it
/// back with [`Solution::take_solver`] for the next solve.
pub fn solve_from<'p>(
    problem: &'p Problem<'p>,
    options: &NewtonOptions,
    solver: Box<dyn SpdSolver>,
    start: Option<&[f64]>,
) -> Result<Solution<'p>, SolveError> {
    solve_observed(problem, options, solver, start, &Silent)
}

/// [`solve_from`], telling `progress` about each Newton step.
pub fn solve_observed<'p>(
    problem: &'p Problem<'p>,
    options: &NewtonOptions,
    mut solver: Box<dyn SpdSolver>,
    start: Option<&[f64]>,
    progress: &dyn Progress,
) -> Result<Solution<'p>, SolveError> {
    let (mut solution, values, factored) = run(problem, options, solver.as_mut(), start, progress)?;
    solution.set_tangent(TangentCache {
        values: Some(values),
        solver: Some(solver),
        factored,
    });
    Ok(solution)
}

/// Solve `problem` with the given linear solver. The solution keeps the
/// tangent values at the final iterate (not the solver).
pub fn solve_with<'p>(
    problem: &'p Problem<'p>,
    options: &NewtonOptions,
    solver: &mut dyn SpdSolver,
) -> Result<Solution<'p>, SolveError> {
    let (mut solution, values, _) = run(problem, options, solver, None, &Silent)?;
    solution.set_tangent(TangentCache {
        values: Some(values),
        solver: None,
        factored: false,
    });
    Ok(solution)
}

/// The Newton iteration: the solution, the tangent values at its final
/// potential, and whether `solver` holds their factorisation.
fn run<'p>(
    problem: &'p Problem<'p>,
    options: &NewtonOptions,
    solver: &mut dyn SpdSolver,
    guess_start: Option<&[f64]>,
    progress: &dyn Progress,
) -> Result<(Solution<'p>, Vec<f64>, bool), SolveError> {
    let start = Instant::now();
    let assembler = Assembler::new(problem)?;
    let mut timings = Timings {
        setup_s: start.elapsed().as_secs_f64(),
        ..Timings::default()
    };
    let n = assembler.constraints.n_free;
    let linear = !problem.is_nonlinear();
    let mut report = NewtonReport {
        unknowns: n,
        linear,
        ..NewtonReport::default()
    };
    let mut u = assembler.initial_potential();
    let mut x = vec![0.0; n];
    let mut values = vec![0.0; assembler.pattern.nnz()];
    let mut residual = vec![0.0; n];
    let guess = guess_start.filter(|g| g.len() == u.len() && n > 0);
    // The symbolic analysis needs only the pattern, the first assembly only
    // the potential: they run side by side (the analysis is partly
    // sequential).
    let (analyzed, (warm, reference, assembly_s)) = rayon::join(
        || {
            let clock = Instant::now();
            let analyzed =
                solver.analyze_with_points(&assembler.pattern, &assembler.unknown_points());
            (analyzed, clock.elapsed().as_secs_f64())
        },
        || {
            let clock = Instant::now();
            // With a start to try, the cold residual only sets the
            // reference: its tangent is not needed unless the start is not
            // used.
            assembler.assemble(
                &u,
                guess.is_none().then_some(values.as_mut_slice()),
                &mut residual,
            );
            let reference = norm(&residual);
            let warm = match guess {
                Some(guess) if reference > 0.0 => {
                    reduce(&assembler.constraints.target, guess, &mut x);
                    assembler.constraints.expand(&x, &mut u);
                    assembler.assemble(&u, Some(&mut values), &mut residual);
                    true
                }
                Some(_) => {
                    assembler.assemble(&u, Some(&mut values), &mut residual);
                    false
                }
                None => false,
            };
            (warm, reference, clock.elapsed().as_secs_f64())
        },
    );
    timings.analyze_s = analyzed.1;
    analyzed.0?;
    timings.assembly_s += assembly_s;
    report.residual_history.push(if warm {
        norm(&residual) / reference
    } else {
        1.0
    });
    if reference == 0.0 || n == 0 {
        // Nothing drives the field (or nothing is free): u₀ is the answer.
        report.converged = true;
        report.residual_history[0] = 0.0;
        timings.total_s = start.elapsed().as_secs_f64();
        report.timings = timings;
        return Ok((Solution::new(assembler, u, report), values, false));
    }
    let mut current = norm(&residual);
    if warm && current <= options.residual_tolerance * reference {
        // The start already solves this problem (a repeated sweep value).
        report.converged = true;
        report.relative_residual = current / reference;
        timings.total_s = start.elapsed().as_secs_f64();
        report.timings = timings;
        return Ok((Solution::new(assembler, u, report), values, false));
    }
    let mut trial_x = vec![0.0; n];
    let mut trial_u = u.clone();
    let mut trial_r = vec![0.0; n];
    // The full step's residual and tangent: the line search tries α = 1
    // first and mostly keeps it, and then they are the next iterate's
    // (the residual does not depend on whether the tangent is assembled).
    let mut full_values = if linear {
        Vec::new()
    } else {
        vec![0.0; values.len()]
    };
    let mut full_r = vec![0.0; n];
    let mut step = vec![0.0; n];
    while report.iterations < options.max_iterations {
        let clock = Instant::now();
        solver.factor(&values)?;
        timings.factor_s += clock.elapsed().as_secs_f64();
        let clock = Instant::now();
        for (s, r) in step.iter_mut().zip(&residual) {
            *s = -r;
        }
        solver.solve(&mut step)?;
        timings.solve_s += clock.elapsed().as_secs_f64();
        report.iterations += 1;

        let clock = Instant::now();
        // Whether full_values and full_r hold the tangent and residual at α = 1.
        let mut full_done = false;
        let mut trial = |alpha: f64, trial_r: &mut Vec<f64>| -> f64 {
            for ((t, xi), s) in trial_x.iter_mut().zip(&x).zip(&step) {
                *t = xi + alpha * s;
            }
            assembler.constraints.expand(&trial_x, &mut trial_u);
            if alpha == 1.0 && !linear && !full_done {
                assembler.assemble(&trial_u, Some(&mut full_values), &mut full_r);
                full_done = true;
                trial_r.copy_from_slice(&full_r);
            } else {
                assembler.assemble(&trial_u, None, trial_r);
            }
            norm(trial_r)
        };
        let best = if linear {
            (1.0, 0.0)
        } else {
            match options.line_search {
                LineSearch::ResidualNorm => backtrack_residual(
                    &mut |a| trial(a, &mut trial_r),
                    current,
                    options.max_halvings,
                ),
                LineSearch::Energy => {
                    let slope0: f64 = residual.iter().zip(&step).map(|(r, s)| r * s).sum();
                    let mut directional = |a: f64| {
                        let n = trial(a, &mut trial_r);
                        let d: f64 = trial_r.iter().zip(&step).map(|(r, s)| r * s).sum();
                        (d, n)
                    };
                    energy_line_search(&mut directional, slope0, options.max_halvings)
                }
            }
        };
        let (alpha, _) = best;
        for (xi, s) in x.iter_mut().zip(&step) {
            *xi += alpha * s;
        }
        assembler.constraints.expand(&x, &mut u);
        report.step_lengths.push(alpha);
        report.relative_update = alpha * norm(&step) / norm(&x).max(f64::MIN_POSITIVE);
        if linear {
            assembler.assemble(&u, None, &mut residual);
        } else if alpha == 1.0 && full_done {
            // x + 1·δ is the trial point α = 1: same bits as assembling at u.
            std::mem::swap(&mut values, &mut full_values);
            std::mem::swap(&mut residual, &mut full_r);
        } else {
            assembler.assemble(&u, Some(&mut values), &mut residual);
        }
        timings.assembly_s += clock.elapsed().as_secs_f64();
        current = norm(&residual);
        let relative = current / reference;
        report.residual_history.push(relative);
        report.relative_residual = relative;
        progress.newton_step(NewtonStep {
            iteration: report.iterations,
            relative_residual: relative,
            tolerance: options.residual_tolerance,
        });
        if linear {
            // A direct solve leaves a rounding-level residual; a large one
            // means the system was too ill-conditioned to trust.
            report.converged = relative <= options.residual_tolerance.max(LINEAR_RESIDUAL_LIMIT);
            break;
        }
        if relative <= options.residual_tolerance
            || report.relative_update <= options.update_tolerance
        {
            report.converged = true;
            break;
        }
    }
    timings.total_s = start.elapsed().as_secs_f64();
    report.timings = timings;
    // A linear problem's matrix does not depend on u, so its single
    // factorisation is the tangent at the solution; after a nonlinear step
    // the values were reassembled at the new iterate but not yet factored.
    let factored = linear && report.iterations > 0;
    Ok((Solution::new(assembler, u, report), values, factored))
}

/// Armijo backtracking on the residual norm: (α, ‖R(α)‖).
fn backtrack_residual(
    residual_at: &mut dyn FnMut(f64) -> f64,
    current: f64,
    max_evaluations: usize,
) -> (f64, f64) {
    let mut alpha = 1.0;
    let mut best = (1.0, f64::INFINITY);
    for _ in 0..max_evaluations.max(1) {
        let r = residual_at(alpha);
        if r <= (1.0 - 1e-4 * alpha) * current {
            return (alpha, r);
        }
        if r < best.1 {
            best = (alpha, r);
        }
        alpha *= 0.5;
    }
    best
}

/// Root of the directional derivative d(α) = R(u + αδ)·δ of the convex
/// energy along δ, given d(0) = `slope0` < 0: (α, ‖R(α)‖).
fn energy_line_search(
    directional: &mut dyn FnMut(f64) -> (f64, f64),
    slope0: f64,
    max_evaluations: usize,
) -> (f64, f64) {
    let (d1, n1) = directional(1.0);
    if slope0.is_nan() || slope0 >= 0.0 || d1 <= 0.1 * slope0.abs() {
        // Still descending at the full Newton step (or nearly flat): take it.
        return (1.0, n1);
    }
    // d(0) < 0 < d(1): Illinois regula falsi on [0, 1].
    let (mut a, mut da) = (0.0, slope0);
    let (mut b, mut db) = (1.0, d1);
    let mut best = (1.0, n1, d1.abs());
    let mut side = 0i8;
    for _ in 1..max_evaluations.max(2) {
        let c = (a * db - b * da) / (db - da);
        let (dc, nc) = directional(c);
        if dc.abs() < best.2 {
            best = (c, nc, dc.abs());
        }
        if dc.abs() <= 0.1 * slope0.abs() {
            break;
        }
        if dc < 0.0 {
            a = c;
            da = dc;
            if side == -1 {
                db *= 0.5;
            }
            side = -1;
        } else {
            b = c;
            db = dc;
            if side == 1 {
                da *= 0.5;
            }
            side = 1;
        }
    }
    (best.0, best.1)
}

/// Reduced unknowns from a full dof vector: each free unknown takes the
/// value of the first dof that maps to it.
fn reduce(targets: &[DofTarget], u: &[f64], x: &mut [f64]) {
    let mut seen = vec![false; x.len()];
    for (&ui, t) in u.iter().zip(targets) {
        if let DofTarget::Free { index, sign } = *t {
            let i = index as usize;
            if !seen[i] {
                seen[i] = true;
                x[i] = sign * ui;
            }
        }
    }
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}
