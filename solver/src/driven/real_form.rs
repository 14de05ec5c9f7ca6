//! A(k_e)⁻¹ for a complex symmetric A = Ar + jAi through the real symmetric 2n form
//! [[Ar, −Ai], [−Ai, −Ar]] (x = xr + jxi ↔ [xr; xi], right-hand side [br; −bi]) and the
//! sparse symmetric factorisation of [`crate::linalg::factor`]. Until a native complex-symmetric
//! factorisation exists this is the sweep's [`ShiftedSolver`]; it costs about four times
//! the real factor's entries.

use super::affine::ShiftedSolver;
use crate::error::SolverError;
use crate::linalg::factor::{FactorKind, SymmetricFactor};
use crate::linalg::ordering::doubled;
use crate::linalg::sparse::real_form;
use crate::linalg::sparse::SparseMatrix;
use faer::{c64, Mat, MatMut, Par};

/// Iterative refinement steps per solve (one, skipped once the first solve proves
/// accurate; see [`SymmetricFactor::solve_refined`]).
const REFINE: usize = 1;

/// The factorised real 2n form.
pub struct RealFormSolver {
    big: SparseMatrix,
    factor: SymmetricFactor,
    n: usize,
}

impl RealFormSolver {
    /// Factorise A = Ar + jAi (one pattern) with the pivoted LBLᵀ factorisation;
    /// `ordering` is a fill-reducing (forward, inverse) ordering of the n unknowns.
    pub fn new(
        ar: &SparseMatrix,
        ai: &SparseMatrix,
        ordering: Option<&(Vec<u32>, Vec<u32>)>,
    ) -> Result<Self, SolverError> {
        let big = real_form(ar, ai);
        let ord2 = ordering.map(|(f, _)| doubled(f));
        let factor = SymmetricFactor::new(
            &big,
            FactorKind::Lblt,
            Par::Seq,
            ord2.as_ref().map(|(f, i)| (&f[..], &i[..])),
        )?;
        Ok(Self {
            big,
            factor,
            n: ar.rows(),
        })
    }

    /// Stored entries of the factor.
    pub fn factor_nnz(&self) -> usize {
        self.factor.factor_nnz()
    }
}

impl ShiftedSolver for RealFormSolver {
    fn solve_in_place(&self, mut rhs: MatMut<'_, c64>) {
        let (n, k) = (self.n, rhs.ncols());
        let mut big = Mat::<f64>::from_fn(2 * n, k, |i, j| {
            if i < n {
                rhs[(i, j)].re
            } else {
                -rhs[(i - n, j)].im
            }
        });
        self.factor.solve_refined(&self.big, big.as_mut(), REFINE);
        for j in 0..k {
            for i in 0..n {
                rhs[(i, j)] = c64::new(big[(i, j)], big[(n + i, j)]);
            }
        }
    }
}
