//! A parametrised complex-symmetric system in affine form, the input of the fast sweep.
//!
//!   A(k) = Σ_i α_i(k) A_i,      F(k) = [g_1(k) b_1, …, g_P(k) b_P],
//!
//! with real symmetric sparse A_i (one sparsity pattern or subsets of it), complex scalar
//! coefficient functions α_i(k) of the real parameter k (the free-space wavenumber k0 in
//! the driven solver), and real sparse source vectors b_p scaled by g_p(k). A(k) is complex
//! symmetric (Aᵀ = A, not Hermitian). The outputs of interest are y_qp(k) = b_qᵀ x_p(k):
//! the source vectors double as output selectors, the structure of a reciprocal
//! multiport, which the symmetric projection of [`super::sweep`] preserves.
//!
//! In the driven solver: A_i are K, the per-region mass matrices, the wall matrix and
//! the port diagonals; α_i(k) are 1, −k²εr(k), jRs(k)/(ωμ0), jβ_p(k); b_p selects the
//! port-p amplitude and g_p(k) = 2jβ_p(k)N_p (see [`super`]).

use crate::linalg::sparse::{combine, spmm, SparseMatrix};
use crate::modes::operator::ComplexFactor;
use faer::{c64, Mat, MatMut, MatRef};

/// A complex scalar function of the sweep parameter.
pub type Coefficient<'a> = Box<dyn Fn(f64) -> c64 + Send + Sync + 'a>;

/// One term α(k) A of the operator.
pub struct Term<'a> {
    /// Real symmetric matrix (full storage).
    pub matrix: &'a SparseMatrix,
    pub coefficient: Coefficient<'a>,
    /// Name for reports ("stiffness", "mass water", …).
    pub name: String,
}

/// One source column g(k) b (b sparse: (index, value) pairs).
pub struct Source<'a> {
    pub entries: Vec<(usize, f64)>,
    pub coefficient: Coefficient<'a>,
}

/// The parametrised system.
pub struct AffineSystem<'a> {
    pub terms: Vec<Term<'a>>,
    pub sources: Vec<Source<'a>>,
}

/// Relative step of the central difference for coefficient derivatives: the truncation
/// error is O(h²) ≈ 1e-10 relative for functions smooth on the scale of k, which is
/// ample, since the derivative only shapes the projection space and the reduced model
/// evaluates the exact coefficients (common practice, no source).
const DIFF_STEP: f64 = 1e-5;

impl AffineSystem<'_> {
    /// Number of unknowns.
    pub fn dim(&self) -> usize {
        self.terms.first().map_or(0, |t| t.matrix.rows())
    }

    /// Number of source (and output) columns.
    pub fn n_sources(&self) -> usize {
        self.sources.len()
    }

    /// The coefficients α_i(k).
    pub fn coefficients(&self, k: f64) -> Vec<c64> {
        self.terms.iter().map(|t| (t.coefficient)(k)).collect()
    }

    /// dα_i/dk by a central difference.
    pub fn coefficient_derivatives(&self, k: f64) -> Vec<c64> {
        let h = DIFF_STEP * k.abs().max(f64::MIN_POSITIVE);
        self.terms
            .iter()
            .map(|t| ((t.coefficient)(k + h) - (t.coefficient)(k - h)) / (2.0 * h))
            .collect()
    }

    /// Real and imaginary parts of Σ w_i A_i on one sparsity pattern (the union of the
    /// terms'), as a factorisation of the real equivalent form needs them.
    pub fn combined(&self, weights: &[c64]) -> (SparseMatrix, SparseMatrix) {
        let zero: Vec<(f64, &SparseMatrix)> = self.terms.iter().map(|t| (0.0, t.matrix)).collect();
        let pattern = combine(&zero);
        let part = |f: fn(c64) -> f64| {
            let mut terms: Vec<(f64, &SparseMatrix)> = self
                .terms
                .iter()
                .zip(weights)
                .map(|(t, &w)| (f(w), t.matrix))
                .collect();
            terms.push((0.0, &pattern));
            combine(&terms)
        };
        (part(|z| z.re), part(|z| z.im))
    }

    /// A(k) as real and imaginary parts on one pattern.
    pub fn matrix_at(&self, k: f64) -> (SparseMatrix, SparseMatrix) {
        self.combined(&self.coefficients(k))
    }

    /// The source vectors b_p as dense columns (n × P).
    pub fn source_vectors(&self) -> Mat<f64> {
        let mut b = Mat::<f64>::zeros(self.dim(), self.n_sources());
        for (p, s) in self.sources.iter().enumerate() {
            for &(i, v) in &s.entries {
                b[(i, p)] += v;
            }
        }
        b
    }

    /// g_p(k).
    pub fn source_coefficients(&self, k: f64) -> Vec<c64> {
        self.sources.iter().map(|s| (s.coefficient)(k)).collect()
    }

    /// F(k) = [g_p(k) b_p] (n × P).
    pub fn rhs(&self, k: f64) -> Mat<c64> {
        let g = self.source_coefficients(k);
        let mut f = Mat::<c64>::zeros(self.dim(), self.n_sources());
        for (p, s) in self.sources.iter().enumerate() {
            for &(i, v) in &s.entries {
                f[(i, p)] += g[p] * v;
            }
        }
        f
    }

    /// Outputs b_qᵀ X (P × columns of X).
    pub fn outputs(&self, x: MatRef<'_, c64>) -> Mat<c64> {
        let mut y = Mat::<c64>::zeros(self.n_sources(), x.ncols());
        for (q, s) in self.sources.iter().enumerate() {
            for &(i, v) in &s.entries {
                for c in 0..x.ncols() {
                    y[(q, c)] += x[(i, c)] * v;
                }
            }
        }
        y
    }

    /// Y = Σ_i w_i(c) A_i X(:, c) for every column c, with per-column weights
    /// (`weights[c][i]`): the operator at a different parameter for each column. One
    /// pass over each A_i for the whole block (real and imaginary parts together).
    pub fn apply_columnwise(
        &self,
        x: MatRef<'_, c64>,
        weights: &[Vec<c64>],
        mut y: MatMut<'_, c64>,
    ) {
        let (n, m) = (x.nrows(), x.ncols());
        assert_eq!(weights.len(), m, "one weight list per column");
        let parts = Mat::<f64>::from_fn(n, 2 * m, |i, c| {
            if c < m {
                x[(i, c)].re
            } else {
                x[(i, c - m)].im
            }
        });
        let mut prod = Mat::<f64>::zeros(n, 2 * m);
        y.fill(c64::new(0.0, 0.0));
        for (t, term) in self.terms.iter().enumerate() {
            spmm(term.matrix, parts.as_ref(), prod.as_mut());
            for c in 0..m {
                let w = weights[c][t];
                for i in 0..n {
                    y[(i, c)] += w * c64::new(prod[(i, c)], prod[(i, m + c)]);
                }
            }
        }
    }
}

/// A factorised A(k_e): solves A(k_e) X = B in place. Implementations: the sparse
/// complex symmetric factor ([`ComplexFactor`]: native LDLᵀ, or the real 2n form as a
/// reference), a dense LU in tests.
pub trait ShiftedSolver: Send + Sync {
    fn solve_in_place(&self, rhs: MatMut<'_, c64>);
}

impl ShiftedSolver for ComplexFactor {
    fn solve_in_place(&self, rhs: MatMut<'_, c64>) {
        ComplexFactor::solve_in_place(self, rhs);
    }
}
