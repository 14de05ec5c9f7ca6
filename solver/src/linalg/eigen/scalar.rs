//! The two scalar types of the iteration: f64 for the real symmetric pencil (projected
//! matrix symmetric, Ritz values real) and c64 for the complex symmetric one (projected
//! matrix general, Ritz values complex).

use crate::error::SolverError;
use faer::traits::ComplexField;
use faer::{c64, Mat, MatRef, Side};
use rand::Rng;
use rand_chacha::ChaCha8Rng;

/// The scalar types the iteration runs in: f64 (symmetric case) and c64 (general case).
pub trait KrylovScalar: ComplexField<Real = f64> + Copy + Send + Sync {
    /// Complex conjugate (identity for real numbers).
    fn conjugate(self) -> Self;
    /// x·r for a real r.
    fn scaled(self, r: f64) -> Self;
    /// Real part.
    fn re(self) -> f64;
    /// The projected matrix the Ritz values are taken from (the symmetric part, in the
    /// real symmetric case: H₁₁ is symmetric up to round-off).
    fn projected(h: MatRef<'_, Self>) -> Mat<Self>;
    /// Eigenvalues and unit eigenvectors of the projected matrix.
    fn eigenpairs(h: &Mat<Self>) -> Result<(Vec<Self>, Mat<Self>), SolverError>;
    /// |x|.
    fn modulus(self) -> f64;
    /// x − r for a real r.
    fn minus_real(self, r: f64) -> Self;
    /// A random entry with parts uniform in (−1, 1).
    fn random(rng: &mut ChaCha8Rng) -> Self;
    /// The basis size before a restart, given the symmetric case's `m`: m itself for the
    /// real symmetric pencil; 5/4 of it for the complex one, whose Ritz values spread
    /// into the plane and whose restarts lose more (measured, README Performance: the
    /// lossy slab box needs 162 solves without any restart, 228 with the basis of 80,
    /// 180 with 100, 168 with 120, against 126 / 144 / 132 / 126 lossless).
    fn basis_before_restart(m: usize) -> usize;
}

/// The dense eigensolver did not converge on the projected matrix of order `dim`.
fn projection_failed(dim: usize) -> SolverError {
    SolverError::Projection { dim }
}

impl KrylovScalar for f64 {
    fn conjugate(self) -> Self {
        self
    }
    fn scaled(self, r: f64) -> Self {
        self * r
    }
    fn re(self) -> f64 {
        self
    }
    fn projected(h: MatRef<'_, f64>) -> Mat<f64> {
        Mat::from_fn(h.nrows(), h.ncols(), |i, j| 0.5 * (h[(i, j)] + h[(j, i)]))
    }
    fn eigenpairs(h: &Mat<f64>) -> Result<(Vec<f64>, Mat<f64>), SolverError> {
        let evd = h
            .self_adjoint_eigen(Side::Lower)
            .map_err(|_| projection_failed(h.nrows()))?;
        let s = evd.S().column_vector();
        Ok(((0..h.nrows()).map(|i| s[i]).collect(), evd.U().to_owned()))
    }
    fn modulus(self) -> f64 {
        self.abs()
    }
    fn minus_real(self, r: f64) -> Self {
        self - r
    }
    fn random(rng: &mut ChaCha8Rng) -> Self {
        rng.gen_range(-1.0..1.0)
    }
    fn basis_before_restart(m: usize) -> usize {
        m
    }
}

impl KrylovScalar for c64 {
    fn conjugate(self) -> Self {
        c64::new(self.re, -self.im)
    }
    fn scaled(self, r: f64) -> Self {
        c64::new(self.re * r, self.im * r)
    }
    fn re(self) -> f64 {
        self.re
    }
    fn projected(h: MatRef<'_, c64>) -> Mat<c64> {
        h.to_owned()
    }
    fn eigenpairs(h: &Mat<c64>) -> Result<(Vec<c64>, Mat<c64>), SolverError> {
        let evd = h.eigen().map_err(|_| projection_failed(h.nrows()))?;
        let s = evd.S().column_vector();
        let mut u = evd.U().to_owned();
        for j in 0..u.ncols() {
            let nrm = u.col(j).norm_l2();
            if nrm > 0.0 {
                for i in 0..u.nrows() {
                    u[(i, j)] /= nrm;
                }
            }
        }
        Ok(((0..h.nrows()).map(|i| s[i]).collect(), u))
    }
    fn modulus(self) -> f64 {
        self.norm()
    }
    fn minus_real(self, r: f64) -> Self {
        self - c64::new(r, 0.0)
    }
    fn random(rng: &mut ChaCha8Rng) -> Self {
        c64::new(rng.gen_range(-1.0..1.0), rng.gen_range(-1.0..1.0))
    }
    fn basis_before_restart(m: usize) -> usize {
        m + m / 4
    }
}
