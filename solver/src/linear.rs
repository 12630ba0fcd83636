//! Sparse symmetric positive definite solvers.
//!
//! The default is faer's sparse Cholesky factorisation: the symbolic
//! analysis (AMD fill-reducing ordering and the elimination structure) is
//! done once per pattern and reused by every numeric factorisation (every
//! Newton step, every sweep step on the same mesh). The numeric step runs
//! sequentially by default (`Par::Seq`), which measured faster than the
//! rayon path on the 2-core machines this runs on.

use crate::assembly::SparsityPattern;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltParams;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, LltRef, SymbolicCholesky,
    SymmetricOrdering,
};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side, Spec};

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
}

/// A direct solver for sparse SPD systems whose upper triangle is given in
/// the layout of a [`SparsityPattern`].
pub trait SpdSolver: Send {
    /// Symbolic analysis of the pattern (ordering, elimination tree); once
    /// per pattern.
    fn analyze(&mut self, pattern: &SparsityPattern) -> Result<(), LinearError>;
    /// Numeric factorisation of the matrix with these values (one per stored
    /// entry of the analysed pattern).
    fn factor(&mut self, values: &[f64]) -> Result<(), LinearError>;
    /// Solve A x = b in place (`rhs` holds b on entry, x on exit).
    fn solve(&mut self, rhs: &mut [f64]) -> Result<(), LinearError>;
}

/// faer's sparse Cholesky (LLᵀ) with AMD ordering.
pub struct FaerCholesky {
    par: Par,
    pattern: Option<SparsityPattern>,
    symbolic: Option<SymbolicCholesky<usize>>,
    factor_values: Vec<f64>,
    factored: bool,
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
    /// A solver running its numeric phase with parallelism `par`.
    pub fn new(par: Par) -> FaerCholesky {
        FaerCholesky {
            par,
            pattern: None,
            symbolic: None,
            factor_values: Vec::new(),
            factored: false,
            scratch: None,
        }
    }

    /// Number of stored entries of the Cholesky factor (after analysis).
    pub fn factor_nnz(&self) -> usize {
        self.symbolic.as_ref().map_or(0, |s| s.len_val())
    }
}

impl SpdSolver for FaerCholesky {
    fn analyze(&mut self, pattern: &SparsityPattern) -> Result<(), LinearError> {
        let sym = SymbolicSparseColMatRef::new_checked(
            pattern.n,
            pattern.n,
            &pattern.col_ptr,
            None,
            &pattern.row_idx,
        );
        let symbolic = factorize_symbolic_cholesky(
            sym,
            Side::Upper,
            SymmetricOrdering::Amd,
            CholeskySymbolicParams::default(),
        )
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
}
