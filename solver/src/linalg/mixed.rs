//! Mixed precision: the shifted operator factorised in single precision, solves in double
//! by iterative refinement, with flexible GMRES when refinement stagnates.
//!
//! The factor's values dominate a solve's memory (8 or 16 bytes per real or complex
//! entry in double). Here A (real symmetric K − σM′ or complex symmetric
//! K + jβP − σ(M′ − jM″)) is factorised by [`super::supernodal_ldlt`] in f32 or c32
//! (half the bytes), and A x = b is solved in double:
//!
//! * Iterative refinement (Wilkinson; Higham, *Accuracy and Stability of Numerical
//!   Algorithms*, 2nd ed. 2002, ch. 12): x₀ = 0, r = b − A x (double sparse product),
//!   x ← x + L̃⁻¹ r (the single-precision factor applied to the scaled, rounded residual).
//!   Each step multiplies the error by about ρ ≈ κ(A)·u_single, so it converges when the
//!   factor is a good enough approximate inverse and stalls otherwise (a shift very near
//!   an eigenvalue).
//! * When the relative residual shrinks by less than [`STAGNATION`] in one step (or has
//!   not met the bar after [`MAX_REFINEMENT`] steps), that column continues with flexible
//!   GMRES (Saad, SIAM J. Sci. Comput. 14 (1993) 461), right-preconditioned by the single
//!   factor, restarted every [`RESTART`] iterations, in double: GMRES–IR of Carson &
//!   Higham, SIAM J. Sci. Comput. 40 (2018) A817, which converges where plain refinement
//!   does not.
//! * Stop when ‖b − A x‖₂ ≤ [`TOLERANCE`]·‖b‖₂ for every column.
//!
//! The counts of refinement steps and GMRES iterations are kept ([`MixedSummary`]) so a
//! run can report them.

use crate::error::{FactorStep, SolverError};
use crate::linalg::sparse::SparseMatrix;
use crate::linalg::supernodal_ldlt::SupernodalLdlt;
use crate::linalg::triangular::FactorScalar;
use faer::{c32, c64, Mat, MatMut, MatRef};
use std::sync::atomic::{AtomicU64, AtomicUsize, Ordering::Relaxed};

/// Relative residual every mixed-precision solve reaches: ‖b − A x‖ ≤ 1e-12 ‖b‖. The
/// double path accepts 1e-10 (`factor::REFINE_ABOVE`, two orders below the eigen
/// iteration's 1e-8) and its pivoted solves land at ~1e-14…1e-13 (DEVELOPERS.md, "Where
/// the time goes"); 1e-12 keeps the single path between the two, so the iteration sees
/// the same operator to well below its own tolerance. Own choice, no source.
pub const TOLERANCE: f64 = 1e-12;

/// Refinement steps before a column that has not converged goes to GMRES.
pub const MAX_REFINEMENT: usize = 12;

/// A refinement step that leaves more than this fraction of the previous residual is
/// stagnation: ρ ≥ 0.5 would need ≥ 40 steps from 1 to 1e-12, where GMRES needs far
/// fewer (own choice, no source).
pub const STAGNATION: f64 = 0.5;

/// GMRES restart length (~30 is the common practice default, no source).
pub const RESTART: usize = 30;

/// Most GMRES iterations per column before giving up with the best iterate (the final
/// eigen residual check still guards every returned mode).
pub const MAX_GMRES: usize = 10 * RESTART;

/// Precision of the shifted operator's factor.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum FactorPrecision {
    /// f64 / c64 factor, solves refined only when a residual check asks for it.
    #[default]
    Double,
    /// f32 / c32 factor (half the memory), solves refined in double ([`MixedFactor`]).
    Single,
}

impl FactorPrecision {
    /// "double" or "single".
    pub fn name(self) -> &'static str {
        match self {
            Self::Double => "double",
            Self::Single => "single",
        }
    }
}

/// The double-precision scalars of a mixed solve and their single-precision factor type.
pub trait Working: FactorScalar + std::ops::Neg<Output = Self> {
    type Low: FactorScalar;
    fn lower(self) -> Self::Low;
    fn raise(low: Self::Low) -> Self;
    fn conj_(self) -> Self;
    fn abs2(self) -> f64;
    fn scale(self, s: f64) -> Self;
}

impl Working for f64 {
    type Low = f32;
    fn lower(self) -> f32 {
        self as f32
    }
    fn raise(low: f32) -> f64 {
        f64::from(low)
    }
    fn conj_(self) -> f64 {
        self
    }
    fn abs2(self) -> f64 {
        self * self
    }
    fn scale(self, s: f64) -> f64 {
        self * s
    }
}

impl Working for c64 {
    type Low = c32;
    fn lower(self) -> c32 {
        c32::new(self.re as f32, self.im as f32)
    }
    fn raise(low: c32) -> c64 {
        c64::new(f64::from(low.re), f64::from(low.im))
    }
    fn conj_(self) -> c64 {
        c64::new(self.re, -self.im)
    }
    fn abs2(self) -> f64 {
        self.re * self.re + self.im * self.im
    }
    fn scale(self, s: f64) -> c64 {
        c64::new(self.re * s, self.im * s)
    }
}

/// Counts of the mixed-precision solves so far.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct MixedSummary {
    /// Right-hand sides solved.
    pub columns: usize,
    /// Refinement steps summed over the columns (each one single-precision solve).
    pub refinement_steps: usize,
    /// Columns that went on to GMRES.
    pub gmres_columns: usize,
    /// GMRES iterations summed over those columns.
    pub gmres_iterations: usize,
    /// Columns that missed [`TOLERANCE`] even after GMRES.
    pub unconverged: usize,
    /// Largest final relative residual of any column.
    pub worst_residual: f64,
}

/// A single-precision factor of a double-precision matrix, applied by refinement.
pub struct MixedFactor<W: Working> {
    low: SupernodalLdlt<W::Low>,
    columns: AtomicUsize,
    refinement_steps: AtomicUsize,
    gmres_columns: AtomicUsize,
    gmres_iterations: AtomicUsize,
    unconverged: AtomicUsize,
    /// f64 bits of the worst residual (non-negative, so the bit order is the value order).
    worst: AtomicU64,
}

impl MixedFactor<f64> {
    /// Single-precision factor of the real symmetric `a` (full storage).
    pub fn real(a: &SparseMatrix, ordering: Option<(&[u32], &[u32])>) -> Result<Self, SolverError> {
        let v = a.data();
        let low = SupernodalLdlt::new(
            a,
            |p| v[p] as f32,
            ordering,
            rayon::current_num_threads(),
            FactorStep::NumericLdlt,
        )?;
        Ok(Self::from_low(low))
    }
}

impl MixedFactor<c64> {
    /// Single-precision factor of the complex symmetric `re` + j`im` (one pattern).
    pub fn complex(
        re: &SparseMatrix,
        im: &SparseMatrix,
        ordering: Option<(&[u32], &[u32])>,
    ) -> Result<Self, SolverError> {
        assert!(
            re.indptr() == im.indptr() && re.indices() == im.indices(),
            "real and imaginary parts must share one pattern"
        );
        let (rv, iv) = (re.data(), im.data());
        let low = SupernodalLdlt::new(
            re,
            |p| c32::new(rv[p] as f32, iv[p] as f32),
            ordering,
            rayon::current_num_threads(),
            FactorStep::NumericComplexLdlt,
        )?;
        Ok(Self::from_low(low))
    }
}

impl<W: Working> MixedFactor<W> {
    fn from_low(low: SupernodalLdlt<W::Low>) -> Self {
        Self {
            low,
            columns: AtomicUsize::new(0),
            refinement_steps: AtomicUsize::new(0),
            gmres_columns: AtomicUsize::new(0),
            gmres_iterations: AtomicUsize::new(0),
            unconverged: AtomicUsize::new(0),
            worst: AtomicU64::new(0),
        }
    }

    /// Stored entries of the single-precision factor.
    pub fn factor_nnz(&self) -> usize {
        self.low.factor_nnz()
    }

    /// Bytes of the factor's values (4 per real entry, 8 per complex one).
    pub fn factor_bytes(&self) -> usize {
        std::mem::size_of::<W::Low>() * self.low.factor_nnz()
    }

    /// The counts so far.
    pub fn summary(&self) -> MixedSummary {
        MixedSummary {
            columns: self.columns.load(Relaxed),
            refinement_steps: self.refinement_steps.load(Relaxed),
            gmres_columns: self.gmres_columns.load(Relaxed),
            gmres_iterations: self.gmres_iterations.load(Relaxed),
            unconverged: self.unconverged.load(Relaxed),
            worst_residual: f64::from_bits(self.worst.load(Relaxed)),
        }
    }

    /// z ≈ A⁻¹ r with the single factor: each column scaled by its largest entry before
    /// rounding (so small residuals keep their digits), solved, scaled back.
    fn low_solve(&self, r: MatRef<'_, W>, mut z: MatMut<'_, W>) {
        let (n, k) = (r.nrows(), r.ncols());
        let scales: Vec<f64> = (0..k)
            .map(|j| {
                let m = (0..n).map(|i| r[(i, j)].abs2()).fold(0.0, f64::max).sqrt();
                if m > 0.0 {
                    m
                } else {
                    1.0
                }
            })
            .collect();
        let mut low = Mat::<W::Low>::from_fn(n, k, |i, j| r[(i, j)].scale(1.0 / scales[j]).lower());
        self.low.solve_in_place(low.as_mut());
        for j in 0..k {
            for i in 0..n {
                z[(i, j)] = W::raise(low[(i, j)]).scale(scales[j]);
            }
        }
    }

    /// Solve A X = B in place to [`TOLERANCE`], `apply(x, y)` computing y = A x with the
    /// double-precision matrix.
    pub fn solve_in_place(
        &self,
        apply: &(dyn Fn(MatRef<'_, W>, MatMut<'_, W>) + Sync),
        mut rhs: MatMut<'_, W>,
    ) {
        let (n, k) = (rhs.nrows(), rhs.ncols());
        if n == 0 || k == 0 {
            return;
        }
        self.columns.fetch_add(k, Relaxed);
        let b = rhs.to_owned();
        let bnorm: Vec<f64> = (0..k).map(|j| col_norm(b.as_ref(), j)).collect();
        let mut x = Mat::<W>::zeros(n, k);
        // Columns still refined, with their last relative residual.
        let mut active: Vec<(usize, f64)> = (0..k)
            .filter(|&j| bnorm[j] > 0.0)
            .map(|j| (j, 1.0))
            .collect();
        let mut to_gmres: Vec<usize> = Vec::new();
        let mut final_res = vec![0.0f64; k];
        let mut r = b.clone();
        for step in 0..MAX_REFINEMENT {
            if active.is_empty() {
                break;
            }
            let m = active.len();
            let ra = Mat::<W>::from_fn(n, m, |i, c| r[(i, active[c].0)]);
            let mut za = Mat::<W>::zeros(n, m);
            self.low_solve(ra.as_ref(), za.as_mut());
            self.refinement_steps.fetch_add(m, Relaxed);
            for (c, &(j, _)) in active.iter().enumerate() {
                for i in 0..n {
                    x[(i, j)] += za[(i, c)];
                }
            }
            let xa = Mat::<W>::from_fn(n, m, |i, c| x[(i, active[c].0)]);
            let mut ax = Mat::<W>::zeros(n, m);
            apply(xa.as_ref(), ax.as_mut());
            let mut next = Vec::with_capacity(m);
            for (c, &(j, prev)) in active.iter().enumerate() {
                for i in 0..n {
                    r[(i, j)] = b[(i, j)] - ax[(i, c)];
                }
                let res = col_norm(r.as_ref(), j) / bnorm[j];
                final_res[j] = res;
                if res <= TOLERANCE {
                    continue;
                }
                // The first step has no previous residual of its own to compare with.
                if (step > 0 && res > STAGNATION * prev) || step + 1 == MAX_REFINEMENT {
                    to_gmres.push(j);
                } else {
                    next.push((j, res));
                }
            }
            active = next;
        }
        to_gmres.extend(active.iter().map(|&(j, _)| j));
        for &j in &to_gmres {
            self.gmres_columns.fetch_add(1, Relaxed);
            let (iters, res) = self.fgmres(apply, b.as_ref(), x.as_mut(), j, bnorm[j]);
            self.gmres_iterations.fetch_add(iters, Relaxed);
            final_res[j] = res;
            if res > TOLERANCE {
                self.unconverged.fetch_add(1, Relaxed);
            }
        }
        let worst = final_res.iter().copied().fold(0.0, f64::max);
        self.worst.fetch_max(worst.to_bits(), Relaxed);
        rhs.copy_from(&x);
    }

    /// Flexible GMRES(m) on column `j`: A e = b_j − A x_j from e = 0, right-preconditioned
    /// by the single factor, x_j ← x_j + e; restarted from the true residual. Returns the
    /// iterations and the final relative residual.
    fn fgmres(
        &self,
        apply: &(dyn Fn(MatRef<'_, W>, MatMut<'_, W>) + Sync),
        b: MatRef<'_, W>,
        mut x: MatMut<'_, W>,
        j: usize,
        bnorm: f64,
    ) -> (usize, f64) {
        let n = b.nrows();
        let zero = W::of(0.0);
        let mut total = 0;
        let mut r = Mat::<W>::zeros(n, 1);
        let residual = |x: MatRef<'_, W>, r: &mut Mat<W>| -> f64 {
            let mut ax = Mat::<W>::zeros(n, 1);
            apply(x.subcols(j, 1), ax.as_mut());
            for i in 0..n {
                r[(i, 0)] = b[(i, j)] - ax[(i, 0)];
            }
            col_norm(r.as_ref(), 0)
        };
        let mut beta = residual(x.as_ref(), &mut r);
        let m = RESTART;
        while beta > TOLERANCE * bnorm && total < MAX_GMRES {
            let mut v = Mat::<W>::zeros(n, m + 1);
            let mut z = Mat::<W>::zeros(n, m);
            // Hessenberg (column-major, (m+1) × m), Givens rotations, rotated rhs.
            let mut h = vec![zero; (m + 1) * m];
            let mut cs = vec![0.0f64; m];
            let mut sn = vec![zero; m];
            let mut g = vec![zero; m + 1];
            g[0] = W::of(beta);
            for i in 0..n {
                v[(i, 0)] = r[(i, 0)].scale(1.0 / beta);
            }
            let mut used = 0;
            for it in 0..m {
                self.low_solve(v.as_ref().subcols(it, 1), z.as_mut().subcols_mut(it, 1));
                let mut w = Mat::<W>::zeros(n, 1);
                apply(z.as_ref().subcols(it, 1), w.as_mut());
                // Modified Gram–Schmidt, h_l = ⟨v_l, w⟩ (conjugate-linear in v_l).
                for l in 0..=it {
                    let mut d = zero;
                    for i in 0..n {
                        d += v[(i, l)].conj_() * w[(i, 0)];
                    }
                    for i in 0..n {
                        w[(i, 0)] -= d * v[(i, l)];
                    }
                    h[it * (m + 1) + l] = d;
                }
                let hn = col_norm(w.as_ref(), 0);
                h[it * (m + 1) + it + 1] = W::of(hn);
                if hn > 0.0 {
                    for i in 0..n {
                        v[(i, it + 1)] = w[(i, 0)].scale(1.0 / hn);
                    }
                }
                // Earlier rotations on the new column, then a new one zeroing h[it+1, it].
                let col = &mut h[it * (m + 1)..(it + 1) * (m + 1)];
                for l in 0..it {
                    let (a, c) = (col[l], col[l + 1]);
                    col[l] = a.scale(cs[l]) + sn[l] * c;
                    col[l + 1] = -(sn[l].conj_() * a) + c.scale(cs[l]);
                }
                let (a, c) = (col[it], col[it + 1]);
                let t = (a.abs2() + c.abs2()).sqrt();
                if a.abs2() == 0.0 {
                    cs[it] = 0.0;
                    sn[it] = W::of(1.0);
                } else {
                    let am = a.abs2().sqrt();
                    cs[it] = am / t;
                    sn[it] = a.scale(1.0 / am) * c.conj_().scale(1.0 / t);
                }
                col[it] = a.scale(cs[it]) + sn[it] * c;
                col[it + 1] = zero;
                let gi = g[it];
                g[it] = gi.scale(cs[it]);
                g[it + 1] = -(sn[it].conj_() * gi);
                used = it + 1;
                total += 1;
                if g[it + 1].abs2().sqrt() <= TOLERANCE * bnorm || hn == 0.0 || total >= MAX_GMRES {
                    break;
                }
            }
            // Back substitution H y = g, then x_j += Z y.
            let mut y = vec![zero; used];
            for l in (0..used).rev() {
                let mut s = g[l];
                for q in l + 1..used {
                    s -= h[q * (m + 1) + l] * y[q];
                }
                y[l] = s / h[l * (m + 1) + l];
            }
            for (q, &yq) in y.iter().enumerate() {
                for i in 0..n {
                    x[(i, j)] += z[(i, q)] * yq;
                }
            }
            let new_beta = residual(x.as_ref(), &mut r);
            if new_beta >= beta {
                // No progress in a whole cycle: stop with what we have.
                beta = new_beta;
                break;
            }
            beta = new_beta;
        }
        (total, beta / bnorm)
    }
}

/// ‖x_j‖₂.
fn col_norm<W: Working>(x: MatRef<'_, W>, j: usize) -> f64 {
    (0..x.nrows()).map(|i| x[(i, j)].abs2()).sum::<f64>().sqrt()
}

#[cfg(test)]
#[path = "mixed_tests.rs"]
mod tests;
