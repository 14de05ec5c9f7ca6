//! Sparse LDLᵀ of a complex symmetric matrix (A = Aᵀ, not Hermitian), supernodal, with
//! Bunch–Kaufman pivoting inside supernodes.
//!
//! The lossy and fed problems give A = Ar + jAi with real symmetric Ar, Ai on one
//! pattern. Factorising A itself (n unknowns, complex entries) instead of the real 2n form
//! [[Ar, −Ai], [−Ai, −Ar]] halves the factor's memory (one 16-byte entry of the n × n
//! factor against four 8-byte ones of the 2n factor, with equal fill per block) and
//! needs about a quarter of the real flops... measured figures are in the README.
//!
//! The factorisation is [`super::supernodal_ldlt`]'s in complex arithmetic (symbolic
//! analysis of the n × n pattern with the METIS ordering, left-looking numeric
//! factorisation with Bunch–Kaufman pivoting inside supernodes, parallel over the
//! elimination tree), and its solve the tree-parallel block solves of
//! [`super::triangular`].

use crate::error::{FactorStep, SolverError};
use crate::linalg::sparse::SparseMatrix;
use crate::linalg::supernodal_ldlt::SupernodalLdlt;
use faer::{c64, MatMut};

/// A factorised complex symmetric sparse matrix P A Pᵀ = L D Lᵀ.
pub struct ComplexSymmetricFactor(SupernodalLdlt<c64>);

impl ComplexSymmetricFactor {
    /// Factorise A = `re` + j`im` (full symmetric storage, one pattern for both parts)
    /// with the fill-reducing `ordering` (forward, inverse) if given, else minimum degree,
    /// on the threads of the current rayon pool.
    pub fn new(
        re: &SparseMatrix,
        im: &SparseMatrix,
        ordering: Option<(&[u32], &[u32])>,
    ) -> Result<Self, SolverError> {
        Self::with_threads(re, im, ordering, rayon::current_num_threads())
    }

    /// As [`Self::new`], with `threads` groups of subtrees factorised concurrently
    /// (1: the sequential factorisation).
    pub fn with_threads(
        re: &SparseMatrix,
        im: &SparseMatrix,
        ordering: Option<(&[u32], &[u32])>,
        threads: usize,
    ) -> Result<Self, SolverError> {
        assert!(
            im.rows() == re.rows() && re.indptr() == im.indptr() && re.indices() == im.indices(),
            "real and imaginary parts must share one pattern"
        );
        let (rv, iv) = (re.data(), im.data());
        SupernodalLdlt::new(
            re,
            |p| c64::new(rv[p], iv[p]),
            ordering,
            threads,
            FactorStep::NumericComplexLdlt,
        )
        .map(Self)
    }

    /// Order n.
    pub fn n(&self) -> usize {
        self.0.n()
    }

    /// Stored complex entries of the factor.
    pub fn factor_nnz(&self) -> usize {
        self.0.factor_nnz()
    }

    /// The factorisation itself.
    pub fn ldlt(&self) -> &SupernodalLdlt<c64> {
        &self.0
    }

    /// Solve A X = B in place (any number of columns), tree-parallel.
    pub fn solve_in_place(&self, rhs: MatMut<'_, c64>) {
        self.0.solve_in_place(rhs);
    }
}

#[cfg(test)]
#[path = "complex_ldlt_tests.rs"]
mod tests;
