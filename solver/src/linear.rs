//! Sparse symmetric positive definite solvers.
//!
//! The default is faer's sparse Cholesky factorisation: the symbolic
//! analysis (fill-reducing ordering and the elimination structure) is done
//! once per pattern and reused by every numeric factorisation (every Newton
//! step, every sweep step on the same mesh).
//!
//! Defaults, as measured on the gapped-core benchmarks of 10k to 2M
//! unknowns (see benches/README.md): the coordinate nested dissection of
//! [`crate::ordering`] when the caller gives the unknowns' positions
//! ([`SpdSolver::analyze_with_points`], as the Newton solver does), faer's
//! approximate minimum degree ordering otherwise; faer's supernodal
//! factorisation (simplicial was 10× slower at 1M), and a sequential
//! numeric phase (`Par::Seq`: `Par::rayon(2)` gained nothing on the shared
//! 2-core machines). On P1 the dissection needs 0.52–0.77 of AMD's flops
//! from 30k unknowns up and is faster to compute (1M: analyse + factor
//! 2.5–3.1 s against 3.9–4.2 s; 2M: a 10-step Newton solve 44 s against
//! 83 s); on P2 both are within ±7 % end to end. A METIS order (halving
//! the flops, but slow to compute) can be passed in as
//! [`FillOrdering::Custom`].

use crate::assembly::SparsityPattern;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltParams;
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, LltRef, SymbolicCholesky,
    SymbolicCholeskyRaw, SymmetricOrdering,
};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
/// faer's parallelism setting, taken by [`FaerCholesky::new`].
pub use faer::Par;
use faer::{Conj, MatMut, Side, Spec};

/// Errors of a linear solver.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum LinearError {
    /// `factor` or `solve` before `analyze`/`factor`.
    #[error("linear solver used before {0}")]
    NotReady(&'static str),
    /// The matrix is not numerically positive definite (a region with no
    /// path to a fixed potential, or a non-physical material).
    #[error("the system matrix is not positive definite (pivot {pivot}); check that the potential is fixed somewhere and materials have μr > 0")]
    NotPositiveDefinite {
        /// The failing pivot, in the solver's ordering.
        pivot: usize,
    },
    /// Sizes do not match the analysed pattern.
    #[error("size mismatch: expected {expected}, got {got}")]
    Size {
        /// Expected length.
        expected: usize,
        /// Given length.
        got: usize,
    },
    /// The library reported an error (index overflow, memory).
    #[error("sparse factorisation failed: {0}")]
    Backend(String),
    /// A [`FillOrdering::Custom`] order that is not a permutation of the
    /// unknowns.
    #[error("custom elimination order: {0}")]
    InvalidOrdering(String),
}

/// The fill-reducing ordering of [`FaerCholesky`]'s symbolic analysis.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
#[non_exhaustive]
pub enum FillOrdering {
    /// faer's approximate minimum degree ordering (Amestoy, Davis & Duff,
    /// SIAM J. Matrix Anal. Appl. 17 (1996) 886–905), computed from the
    /// pattern alone. Fewer flops than [`FillOrdering::CoordinateDissection`]
    /// on P2 meshes (0.8–0.9 of them), but more on large P1 ones.
    Amd,
    /// A caller's elimination order, e.g. a nested dissection from a graph
    /// partitioner: `order[k]` is the unknown eliminated k-th. It is
    /// postordered on its elimination tree before use (same fill, but
    /// contiguous supernodes: without it a METIS order factored 1.5–1.9× slower
    /// at 100k unknowns).
    Custom(Vec<usize>),
    /// Coordinate nested dissection ([`crate::ordering`]) from one point per
    /// unknown, given to [`SpdSolver::analyze_with_points`]; postordered like
    /// [`FillOrdering::Custom`]. Plain [`SpdSolver::analyze`] has no points
    /// and falls back to [`FillOrdering::Amd`]. The default.
    #[default]
    CoordinateDissection,
}

/// A direct solver for sparse SPD systems whose upper triangle is given in
/// the layout of a [`SparsityPattern`].
pub trait SpdSolver: Send {
    /// Symbolic analysis of the pattern (ordering, elimination tree); once
    /// per pattern.
    fn analyze(&mut self, pattern: &SparsityPattern) -> Result<(), LinearError>;
    /// [`SpdSolver::analyze`] with the position of every unknown (`points[i]`
    /// of unknown i), for orderings that use geometry; others ignore it.
    fn analyze_with_points(
        &mut self,
        pattern: &SparsityPattern,
        points: &[[f64; 2]],
    ) -> Result<(), LinearError> {
        let _ = points;
        self.analyze(pattern)
    }
    /// Numeric factorisation of the matrix with these values (one per stored
    /// entry of the analysed pattern).
    fn factor(&mut self, values: &[f64]) -> Result<(), LinearError>;
    /// Solve A x = b in place (`rhs` holds b on entry, x on exit).
    fn solve(&mut self, rhs: &mut [f64]) -> Result<(), LinearError>;
}

/// faer's sparse Cholesky (LLᵀ), supernodal, with a [`FillOrdering`] (coordinate
/// nested dissection by default).
pub struct FaerCholesky {
    par: Par,
    ordering: FillOrdering,
    pattern: Option<SparsityPattern>,
    symbolic: Option<SymbolicCholesky<usize>>,
    factor_values: Vec<f64>,
    factored: bool,
    /// The matrix values of the factorisation held (when `factored`): the
    /// same values again are not factored twice (a sweep's warm start
    /// assembles the tangent its predecessor's incremental inductance
    /// factored).
    factored_from: Vec<f64>,
    scratch: Option<MemBuffer>,
}

impl std::fmt::Debug for FaerCholesky {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("FaerCholesky")
            .field("n", &self.pattern.as_ref().map(|p| p.n))
            .field("factor_nnz", &self.factor_values.len())
            .field("factored", &self.factored)
            .finish()
    }
}

impl Default for FaerCholesky {
    fn default() -> Self {
        FaerCholesky::new(Par::Seq)
    }
}

impl FaerCholesky {
    /// A solver running its numeric phase with parallelism `par`, with the
    /// default [`FillOrdering`] (coordinate nested dissection when given
    /// points, AMD otherwise).
    pub fn new(par: Par) -> FaerCholesky {
        FaerCholesky::with_ordering(par, FillOrdering::default())
    }

    /// A solver with parallelism `par` and fill-reducing `ordering`.
    pub fn with_ordering(par: Par, ordering: FillOrdering) -> FaerCholesky {
        FaerCholesky {
            par,
            ordering,
            pattern: None,
            symbolic: None,
            factor_values: Vec::new(),
            factored: false,
            factored_from: Vec::new(),
            scratch: None,
        }
    }

    /// Number of stored entries of the Cholesky factor (after analysis).
    pub fn factor_nnz(&self) -> usize {
        self.symbolic.as_ref().map_or(0, |s| s.len_val())
    }

    /// Entries of the lower-triangular factor L (diagonal included, as
    /// stored by the supernodal structure: relaxed supernodes may hold
    /// explicit zeros) and Σ c_j² over its columns (c_j entries in column j;
    /// about the floating-point work of one factorisation), after analysis.
    pub fn factor_counts(&self) -> (usize, f64) {
        let Some(symbolic) = &self.symbolic else {
            return (0, 0.0);
        };
        let (mut entries, mut flops) = (0usize, 0.0f64);
        match symbolic.raw() {
            SymbolicCholeskyRaw::Supernodal(sn) => {
                for s in 0..sn.n_supernodes() {
                    let width = sn.supernode_end()[s] - sn.supernode_begin()[s];
                    let below = sn.supernode(s).pattern().len();
                    for i in 0..width {
                        let c = width - i + below;
                        entries += c;
                        flops += (c * c) as f64;
                    }
                }
            }
            SymbolicCholeskyRaw::Simplicial(sp) => {
                for w in sp.col_ptr().windows(2) {
                    let c = w[1] - w[0];
                    entries += c;
                    flops += (c * c) as f64;
                }
            }
        }
        (entries, flops)
    }
}

impl FaerCholesky {
    /// Symbolic analysis with this solver's ordering; `points` (one per
    /// unknown) when the caller has them.
    fn analyze_at(
        &mut self,
        pattern: &SparsityPattern,
        points: Option<&[[f64; 2]]>,
    ) -> Result<(), LinearError> {
        if self.symbolic.is_some() && self.pattern.as_ref() == Some(pattern) {
            // Same pattern (the next step of a sweep, say): keep the analysis,
            // and the factorisation, which is still one of this pattern.
            return Ok(());
        }
        let sym = SymbolicSparseColMatRef::new_checked(
            pattern.n,
            pattern.n,
            &pattern.col_ptr,
            None,
            &pattern.row_idx,
        );
        let dissection;
        let order = match (&self.ordering, points) {
            (FillOrdering::Amd, _) | (FillOrdering::CoordinateDissection, None) => None,
            (FillOrdering::Custom(order), _) => Some(order.as_slice()),
            (FillOrdering::CoordinateDissection, Some(points)) => {
                dissection = crate::ordering::coordinate_dissection(pattern, points)?;
                Some(dissection.as_slice())
            }
        };
        let symbolic = match order {
            None => factorize_symbolic_cholesky(
                sym,
                Side::Upper,
                SymmetricOrdering::Amd,
                CholeskySymbolicParams::default(),
            ),
            Some(order) => {
                let inverse = inverse_permutation(order, pattern.n)?;
                let (forward, inverse) = postorder(pattern, order, inverse);
                let perm = PermRef::new_checked(&forward, &inverse, pattern.n);
                factorize_symbolic_cholesky(
                    sym,
                    Side::Upper,
                    SymmetricOrdering::Custom(perm),
                    CholeskySymbolicParams::default(),
                )
            }
        }
        .map_err(|e| LinearError::Backend(format!("{e:?}")))?;
        self.factor_values = vec![0.0; symbolic.len_val()];
        let req = symbolic
            .factorize_numeric_llt_scratch::<f64>(self.par, Spec::<LltParams, f64>::default());
        let req = req.or(symbolic.solve_in_place_scratch::<f64>(1, self.par));
        self.scratch =
            Some(MemBuffer::try_new(req).map_err(|e| LinearError::Backend(format!("{e:?}")))?);
        self.symbolic = Some(symbolic);
        self.pattern = Some(pattern.clone());
        self.factored = false;
        Ok(())
    }
}

impl SpdSolver for FaerCholesky {
    fn analyze(&mut self, pattern: &SparsityPattern) -> Result<(), LinearError> {
        self.analyze_at(pattern, None)
    }

    fn analyze_with_points(
        &mut self,
        pattern: &SparsityPattern,
        points: &[[f64; 2]],
    ) -> Result<(), LinearError> {
        self.analyze_at(pattern, Some(points))
    }

    fn factor(&mut self, values: &[f64]) -> Result<(), LinearError> {
        let (Some(pattern), Some(symbolic), Some(scratch)) =
            (&self.pattern, &self.symbolic, &mut self.scratch)
        else {
            return Err(LinearError::NotReady("analyze"));
        };
        if values.len() != pattern.nnz() {
            return Err(LinearError::Size {
                expected: pattern.nnz(),
                got: values.len(),
            });
        }
        let same = |a: &[f64], b: &[f64]| a.iter().zip(b).all(|(x, y)| x.to_bits() == y.to_bits());
        if self.factored
            && self.factored_from.len() == values.len()
            && same(&self.factored_from, values)
        {
            // Bit for bit the matrix already factored: the same factor.
            return Ok(());
        }
        self.factored = false;
        let sym = SymbolicSparseColMatRef::new_checked(
            pattern.n,
            pattern.n,
            &pattern.col_ptr,
            None,
            &pattern.row_idx,
        );
        let mat = SparseColMatRef::new(sym, values);
        symbolic
            .factorize_numeric_llt::<f64>(
                &mut self.factor_values,
                mat,
                Side::Upper,
                Default::default(),
                self.par,
                MemStack::new(scratch),
                Default::default(),
            )
            .map_err(|e| match e {
                faer::linalg::solvers::LltError::NonPositivePivot { index } => {
                    LinearError::NotPositiveDefinite { pivot: index }
                }
            })?;
        self.factored_from.clear();
        self.factored_from.extend_from_slice(values);
        self.factored = true;
        Ok(())
    }

    fn solve(&mut self, rhs: &mut [f64]) -> Result<(), LinearError> {
        let (Some(symbolic), Some(scratch), true) =
            (&self.symbolic, &mut self.scratch, self.factored)
        else {
            return Err(LinearError::NotReady("factor"));
        };
        if rhs.len() != symbolic.nrows() {
            return Err(LinearError::Size {
                expected: symbolic.nrows(),
                got: rhs.len(),
            });
        }
        let n = rhs.len();
        let llt = LltRef::new(symbolic, &self.factor_values);
        let rhs_mat = MatMut::from_column_major_slice_mut(rhs, n, 1);
        llt.solve_in_place_with_conj(Conj::No, rhs_mat, self.par, MemStack::new(scratch));
        Ok(())
    }
}

/// The inverse of `order` (new → old), checked to be a permutation of 0..n.
fn inverse_permutation(order: &[usize], n: usize) -> Result<Vec<usize>, LinearError> {
    if order.len() != n {
        return Err(LinearError::InvalidOrdering(format!(
            "{} entries for {n} unknowns",
            order.len()
        )));
    }
    let mut inverse = vec![usize::MAX; n];
    for (k, &old) in order.iter().enumerate() {
        match inverse.get_mut(old) {
            Some(slot) if *slot == usize::MAX => *slot = k,
            Some(_) => {
                return Err(LinearError::InvalidOrdering(format!(
                    "unknown {old} appears twice"
                )))
            }
            None => {
                return Err(LinearError::InvalidOrdering(format!(
                    "unknown {old} is out of range (n = {n})"
                )))
            }
        }
    }
    Ok(inverse)
}

/// No parent in an elimination tree.
const NONE: usize = usize::MAX;

/// The elimination tree of the matrix permuted by `inverse` (old → new):
/// `parent[k]` of the k-th eliminated unknown, or [`NONE`] for a root. Liu's
/// algorithm with path compression (Liu, SIAM J. Matrix Anal. Appl. 11
/// (1990) 134–172, §4.1).
fn elimination_tree(pattern: &SparsityPattern, inverse: &[usize]) -> Vec<usize> {
    let n = pattern.n;
    // Upper triangle of the permuted matrix, grouped by column.
    let mut start = vec![0usize; n + 1];
    let permuted = |row: usize, col: usize| {
        let (a, b) = (inverse[row], inverse[col]);
        (a.min(b), a.max(b))
    };
    for col in 0..n {
        for &row in &pattern.row_idx[pattern.col_ptr[col]..pattern.col_ptr[col + 1]] {
            if row != col {
                start[permuted(row, col).1 + 1] += 1;
            }
        }
    }
    for k in 0..n {
        start[k + 1] += start[k];
    }
    let mut next_slot = start.clone();
    let mut rows = vec![0usize; start[n]];
    for col in 0..n {
        for &row in &pattern.row_idx[pattern.col_ptr[col]..pattern.col_ptr[col + 1]] {
            if row != col {
                let (lo, hi) = permuted(row, col);
                rows[next_slot[hi]] = lo;
                next_slot[hi] += 1;
            }
        }
    }
    let mut parent = vec![NONE; n];
    let mut ancestor = vec![NONE; n];
    for k in 0..n {
        for &first in &rows[start[k]..start[k + 1]] {
            let mut i = first;
            while i != NONE && i < k {
                let up = ancestor[i];
                ancestor[i] = k;
                if up == NONE {
                    parent[i] = k;
                }
                i = up;
            }
        }
    }
    parent
}

/// Reorder the elimination order `forward` (new → old, `inverse` old → new)
/// into a postorder of its elimination tree: every subtree numbered
/// contiguously, so chains of columns with nested patterns become adjacent
/// and merge into supernodes. A topological reordering of the tree, so the
/// fill is unchanged (Liu, SIAM J. Matrix Anal. Appl. 11 (1990) 134–172,
/// §3). Returns the new (forward, inverse).
fn postorder(
    pattern: &SparsityPattern,
    forward: &[usize],
    mut inverse: Vec<usize>,
) -> (Vec<usize>, Vec<usize>) {
    let n = pattern.n;
    let parent = elimination_tree(pattern, &inverse);
    // Depth-first postorder over child lists (children in increasing order).
    let mut first_child = vec![NONE; n];
    let mut sibling = vec![NONE; n];
    for j in (0..n).rev() {
        if parent[j] != NONE {
            sibling[j] = first_child[parent[j]];
            first_child[parent[j]] = j;
        }
    }
    let mut post = Vec::with_capacity(n);
    let mut stack = Vec::new();
    for root in (0..n).filter(|&j| parent[j] == NONE) {
        stack.push(root);
        while let Some(&top) = stack.last() {
            let child = first_child[top];
            if child == NONE {
                post.push(top);
                stack.pop();
            } else {
                first_child[top] = sibling[child];
                stack.push(child);
            }
        }
    }
    let forward: Vec<usize> = post.iter().map(|&j| forward[j]).collect();
    for (k, &old) in forward.iter().enumerate() {
        inverse[old] = k;
    }
    (forward, inverse)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solves_a_tridiagonal_laplacian() {
        // 1D Laplacian tridiag(−1, 2, −1) with b = e: solution x_i = i(n+1−i)/2
        // (closed form of the discrete Poisson problem).
        let n = 50;
        let mut col_ptr = vec![0];
        let mut row_idx = Vec::new();
        let mut values = Vec::new();
        for c in 0..n {
            if c > 0 {
                row_idx.push(c - 1);
                values.push(-1.0);
            }
            row_idx.push(c);
            values.push(2.0);
            col_ptr.push(row_idx.len());
        }
        let pattern = SparsityPattern {
            n,
            col_ptr,
            row_idx,
        };
        let mut solver = FaerCholesky::default();
        assert!(matches!(
            solver.factor(&values),
            Err(LinearError::NotReady(_))
        ));
        solver.analyze(&pattern).unwrap();
        solver.factor(&values).unwrap();
        let mut x = vec![1.0; n];
        solver.solve(&mut x).unwrap();
        for (i, xi) in x.iter().enumerate() {
            let k = (i + 1) as f64;
            assert!((xi - k * (n as f64 + 1.0 - k) / 2.0).abs() < 1e-9);
        }
        // Indefinite values are reported, not panicked on.
        let bad: Vec<f64> = values.iter().map(|v| -v).collect();
        assert!(matches!(
            solver.factor(&bad),
            Err(LinearError::NotPositiveDefinite { .. })
        ));
    }

    /// The 5-point Laplacian of a k × k grid of interior nodes (zero
    /// Dirichlet values around it), upper triangle, node (i, j) = j k + i.
    fn grid_laplacian(k: usize) -> (SparsityPattern, Vec<f64>) {
        let n = k * k;
        let mut col_ptr = vec![0];
        let mut row_idx = Vec::new();
        let mut values = Vec::new();
        for col in 0..n {
            let (i, j) = (col % k, col / k);
            if j > 0 {
                row_idx.push(col - k);
                values.push(-1.0);
            }
            if i > 0 {
                row_idx.push(col - 1);
                values.push(-1.0);
            }
            row_idx.push(col);
            values.push(4.0);
            col_ptr.push(row_idx.len());
        }
        let pattern = SparsityPattern {
            n,
            col_ptr,
            row_idx,
        };
        (pattern, values)
    }

    /// Nested dissection of the grid rectangle [i0, i1) × [j0, j1): both
    /// halves, then the grid line between them.
    fn grid_dissection(k: usize, i: (usize, usize), j: (usize, usize), out: &mut Vec<usize>) {
        let (wide, high) = (i.1 - i.0, j.1 - j.0);
        if wide.min(high) == 0 {
            return;
        }
        if wide.max(high) <= 2 {
            for jj in j.0..j.1 {
                out.extend((i.0..i.1).map(|ii| jj * k + ii));
            }
            return;
        }
        if wide >= high {
            let m = i.0 + wide / 2;
            grid_dissection(k, (i.0, m), j, out);
            grid_dissection(k, (m + 1, i.1), j, out);
            out.extend((j.0..j.1).map(|jj| jj * k + m));
        } else {
            let m = j.0 + high / 2;
            grid_dissection(k, i, (j.0, m), out);
            grid_dissection(k, i, (m + 1, j.1), out);
            out.extend((i.0..i.1).map(|ii| m * k + ii));
        }
    }

    fn relative_difference(a: &[f64], b: &[f64]) -> f64 {
        let d: f64 = a.iter().zip(b).map(|(x, y)| (x - y) * (x - y)).sum();
        let s: f64 = b.iter().map(|y| y * y).sum();
        (d / s).sqrt()
    }

    #[test]
    fn orderings_give_the_same_solution() {
        // Manufactured solution: b = A x* for a known x*, so every ordering
        // must return x* to rounding (a 127 × 127 grid has condition number
        // about 6.6e3, so 1e-10 relative leaves ample margin).
        let k = 127;
        let (pattern, values) = grid_laplacian(k);
        let n = pattern.n;
        let exact: Vec<f64> = (0..n)
            .map(|p| ((p % k) as f64 * 0.37).sin() + ((p / k) as f64 * 0.11).cos())
            .collect();
        let mut b = vec![0.0; n];
        pattern.sym_mul(&values, &exact, &mut b);

        let mut dissection = Vec::new();
        grid_dissection(k, (0, k), (0, k), &mut dissection);
        let natural: Vec<usize> = (0..n).collect();
        let solve_with = |ordering: FillOrdering| {
            let mut solver = FaerCholesky::with_ordering(Par::Seq, ordering);
            solver.analyze(&pattern).unwrap();
            solver.factor(&values).unwrap();
            let mut x = b.clone();
            solver.solve(&mut x).unwrap();
            (x, solver.factor_nnz())
        };
        let (amd, _) = solve_with(FillOrdering::Amd);
        let (nd, nd_nnz) = solve_with(FillOrdering::Custom(dissection.clone()));
        let (nat, nat_nnz) = solve_with(FillOrdering::Custom(natural));
        assert!(relative_difference(&amd, &exact) < 1e-10);
        assert!(relative_difference(&nd, &exact) < 1e-10);
        assert!(relative_difference(&nat, &exact) < 1e-10);
        assert!(relative_difference(&nd, &amd) < 1e-10);
        // The natural (banded) order fills about k³ = 2.0e6 entries, nested
        // dissection at most (31/4) k² log₂ k + O(k²) ≈ 0.9e6 (George, SIAM
        // J. Numer. Anal. 10 (1973) 345–363): the custom order is really
        // used (measured 2.5e6 and 0.46e6, supernodal storage).
        assert!(nat_nnz > 1_900_000, "natural order fill {nat_nnz}");
        assert!(
            (nd_nnz as f64) < 0.6 * nat_nnz as f64,
            "dissection fill {nd_nnz} vs natural {nat_nnz}"
        );
        // The same order reversed within each grid line is still valid.
        dissection.reverse();
        let (rev, _) = solve_with(FillOrdering::Custom(dissection));
        assert!(relative_difference(&rev, &exact) < 1e-10);
    }

    #[test]
    fn invalid_custom_orders_are_reported() {
        let (pattern, _) = grid_laplacian(4);
        for (order, what) in [
            ((0..15).collect::<Vec<usize>>(), "15 entries"),
            ([vec![0; 2], (2..16).collect()].concat(), "appears twice"),
            ([vec![16], (1..16).collect()].concat(), "out of range"),
        ] {
            let mut solver = FaerCholesky::with_ordering(Par::Seq, FillOrdering::Custom(order));
            match solver.analyze(&pattern) {
                Err(LinearError::InvalidOrdering(m)) => assert!(m.contains(what), "{m}"),
                other => panic!("expected InvalidOrdering, got {other:?}"),
            }
        }
    }

    #[test]
    fn postorder_numbers_every_subtree_contiguously() {
        // A scattered order (stride 7 through a 12 × 12 grid) has subtrees
        // spread all over; after postordering, the descendants of every node
        // j must be exactly j − size(j) + 1 ..= j (definition of a
        // postorder, Liu 1990 §3), and the result must stay a permutation.
        let k = 12;
        let (pattern, _) = grid_laplacian(k);
        let n = pattern.n;
        let scattered: Vec<usize> = (0..n).map(|i| (i * 7) % n).collect();
        let inverse = inverse_permutation(&scattered, n).unwrap();
        let (forward, inverse) = postorder(&pattern, &scattered, inverse);
        let mut seen = vec![false; n];
        for (k, &old) in forward.iter().enumerate() {
            assert!(!seen[old]);
            seen[old] = true;
            assert_eq!(inverse[old], k);
        }
        let parent = elimination_tree(&pattern, &inverse);
        let mut size = vec![1usize; n];
        for j in 0..n {
            assert!(parent[j] == NONE || parent[j] > j);
            if parent[j] != NONE {
                size[parent[j]] += size[j];
            }
        }
        for (j, &subtree) in size.iter().enumerate() {
            for i in j + 1 - subtree..=j {
                let mut a = i;
                while a != j {
                    assert!(
                        a < j,
                        "{i} is numbered in the subtree of {j} but is not below it"
                    );
                    a = parent[a];
                }
            }
        }
        // The scattered order itself is not a postorder (the test can fail).
        let parent = elimination_tree(&pattern, &inverse_permutation(&scattered, n).unwrap());
        let mut size = vec![1usize; n];
        for j in 0..n {
            if parent[j] != NONE {
                size[parent[j]] += size[j];
            }
        }
        let contiguous = (0..n).all(|j| {
            (j + 1 - size[j]..=j).all(|i| {
                let mut a = i;
                while a < j {
                    a = parent[a];
                }
                a == j
            })
        });
        assert!(!contiguous);
    }
}
