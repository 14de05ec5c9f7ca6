//! Block Krylov–Schur iteration for a shift-inverted pencil, real symmetric or complex.
//!
//! For K x = λ M x and a shift σ, T = (K − σM)⁻¹ M has eigenvalues θ = 1/(λ − σ): the
//! eigenvalues nearest σ become the largest |θ|, and the huge kernel of the curl-curl
//! operator (gradients, λ = 0) maps to θ = −1/σ, far from the wanted ones. Two cases:
//!
//! - lossless, no ports: K, M real symmetric (K semi-definite, M definite), T is
//!   self-adjoint in the M-inner product ⟨x, y⟩ = xᵀ M y, the projected matrix is real
//!   symmetric and θ real;
//! - losses (εr = ε′ − jε″) or matched ports: the pencil (K + jB, M′ − jM″) is complex
//!   symmetric but not Hermitian, T is not self-adjoint in any inner product we can form
//!   cheaply; the Euclidean inner product is used and the projected matrix is general.
//!   Measured (README, Performance): forced through this case, a lossless problem needs
//!   the real case's number of solves, and the M′-inner product brought none fewer on a
//!   lossy one; the extra solves of lossy problems come from their spectrum (Ritz values
//!   spread into the plane converge more slowly, and restarts lose more), so the complex
//!   case restarts with a basis 5/4 the size ([`KrylovScalar::basis_before_restart`]).
//!
//! The iteration keeps a Krylov decomposition
//!
//!   T V₁ = V₁ H₁₁ + V₂ H₂₁,
//!
//! with [V₁ V₂] orthonormal in the chosen inner product (V₂ is the newest block, not yet
//! multiplied by T). A block step applies T to V₂, orthogonalises the result against the
//! basis by block classical Gram–Schmidt twice ("twice is enough"), whose coefficients
//! are the new column block of H, and orthonormalises it inside the block through the
//! eigen-decomposition of its Gram matrix (twice, as for Gram–Schmidt). Block size p ≥
//! the largest expected multiplicity, so that every member of a degenerate group is found.
//!
//! Ritz pairs (θ, s) of H₁₁ give approximate eigenpairs (θ, V₁ s) whose residual
//! T V₁ s − θ V₁ s = V₂ H₂₁ s has norm ‖H₂₁ s‖₂, known without touching n-vectors: a
//! pair is accepted when ‖H₂₁ s‖₂ ≤ tol·|θ|·‖s‖₂. Convergence is checked after every
//! block, so the iteration stops as soon as the wanted pairs have converged. When the
//! basis is full it is truncated to an orthonormal basis Q of the leading Ritz
//! coordinates (S = QR): V₁ ← V₁Q, H₁₁ ← QᴴH₁₁Q, H₂₁ ← H₂₁Q. Since span S is invariant
//! under H₁₁ this is again an exact Krylov decomposition (the Krylov–Schur restart;
//! Stewart, SIAM J. Matrix Anal. Appl. 23 (2001) 601; in the symmetric case Wu & Simon's
//! thick restart, SIAM J. Matrix Anal. Appl. 22 (2000) 602; both from memory).

mod decomposition;
mod scalar;
mod wanted;

pub use scalar::KrylovScalar;
pub use wanted::Wanted;

use crate::error::SolverError;
use crate::linalg::tall_skinny::times;
use decomposition::Decomposition;
use faer::{Mat, MatMut, MatRef};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

/// The shift-inverted operator T and its inner product, applied to blocks of vectors.
pub trait KrylovOperator<T>: Sync {
    /// Dimension n.
    fn dim(&self) -> usize;
    /// Whether the inner product is Euclidean; otherwise it is ⟨x, y⟩ = xᴴ M y.
    fn euclidean(&self) -> bool;
    /// Y = M X (called only when the inner product is not Euclidean).
    fn metric(&self, x: MatRef<'_, T>, y: MatMut<'_, T>);
    /// Y = T V, given V and its metric image (M V, or V when Euclidean).
    fn apply(&self, v: MatRef<'_, T>, metric_v: MatRef<'_, T>, y: MatMut<'_, T>);
}

/// Tuning of the iteration.
#[derive(Clone, Copy, Debug)]
pub struct EigenOptions {
    /// Block size p.
    pub block: usize,
    /// Basis size before a restart (grown automatically when more modes are wanted), in
    /// the real symmetric case; the complex case uses 5/4 of it
    /// ([`KrylovScalar::basis_before_restart`]).
    pub basis: usize,
    /// Relative residual tolerance in the transformed problem.
    pub tol: f64,
    /// Maximum number of restarts.
    pub max_restarts: usize,
    /// Seed of the random start block.
    pub seed: u64,
}

impl Default for EigenOptions {
    fn default() -> Self {
        Self {
            block: 6,
            basis: 80,
            tol: 1e-8,
            max_restarts: 80,
            seed: 0x5eed,
        }
    }
}

/// Progress of the iteration, for a display.
#[derive(Clone, Copy, Debug)]
pub struct EigenProgress {
    pub restarts: usize,
    pub converged: usize,
    pub wanted: usize,
    pub applications: usize,
}

/// Converged Ritz pairs of T, ordered by decreasing |θ|.
#[derive(Clone, Debug)]
pub struct RitzPairs<T> {
    /// θ = 1/(λ − σ).
    pub theta: Vec<T>,
    /// Ritz vectors, one per column, of unit norm in the iteration's inner product
    /// (M-norm in the symmetric case, Euclidean in the general one).
    pub vectors: Mat<T>,
    /// Relative residuals ‖T y − θ y‖ / (|θ| ‖y‖) in that norm.
    pub residuals: Vec<f64>,
    /// Number of operator applications (single vectors).
    pub applications: usize,
    /// Number of restarts used.
    pub restarts: usize,
}
/// Find the wanted eigenpairs of T.
pub fn solve<T: KrylovScalar, O: KrylovOperator<T>>(
    op: &O,
    wanted: Wanted,
    opts: &EigenOptions,
    progress: &mut dyn FnMut(EigenProgress),
) -> Result<RitzPairs<T>, SolverError> {
    let n = op.dim();
    if n == 0 {
        return Err(SolverError::NoUnknowns);
    }
    let p = opts.block.max(1).min(n);
    let initial_wanted = wanted
        .nearest
        .max(if wanted.theta_min.is_some() { 8 } else { 0 })
        .min(wanted.max);
    if initial_wanted == 0 {
        return Err(SolverError::NoModesWanted);
    }
    // Basis size m (Ritz vectors come from V₁, at most m columns) plus room for V₂.
    // (larger in the complex case: [`KrylovScalar::basis_before_restart`]).
    let basis_for = |nw: usize| T::basis_before_restart(opts.basis.max(2 * nw + 3 * p)).min(n);
    let mut m = basis_for(initial_wanted);
    let mut dec = Decomposition::<T>::new(n, (m + p).min(n), op.euclidean());
    let mut rng = ChaCha8Rng::seed_from_u64(opts.seed);
    dec.append_random(op, p, &mut rng);
    let mut applications = 0usize;
    let mut restarts = 0usize;
    loop {
        if dec.used > dec.done {
            applications += dec.step(op, p, &mut rng);
        }
        let (d, u) = (dec.done, dec.used);
        // Rayleigh–Ritz on H₁₁; residual norms ‖H₂₁ s‖.
        let (values, vectors) = T::eigenpairs(&T::projected(dec.h.as_ref().get(..d, ..d)))?;
        let abs: Vec<f64> = values.iter().map(|t| t.modulus()).collect();
        let kernel = wanted.kernel_theta.unwrap_or(f64::NAN);
        let dist: Vec<f64> = values
            .iter()
            .map(|t| t.minus_real(kernel).modulus())
            .collect();
        let order = wanted.order(&abs, &dist);
        let theta: Vec<T> = order.iter().map(|&i| values[i]).collect();
        let usable = wanted.usable(&order.iter().map(|&i| dist[i]).collect::<Vec<_>>());
        let abs_sorted: Vec<f64> = theta.iter().map(|t| t.modulus()).collect();
        let nw = wanted.active(&abs_sorted, usable);
        let h21 = dec.h.as_ref().get(d..u, ..d);
        let res: Vec<f64> = order
            .iter()
            .zip(&abs_sorted)
            .map(|(&i, a)| {
                let s = vectors.col(i);
                (h21 * s).norm_l2() / (a * s.norm_l2()).max(f64::MIN_POSITIVE)
            })
            .collect();
        let converged = res.iter().take(nw).take_while(|&&r| r <= opts.tol).count();
        progress(EigenProgress {
            restarts,
            converged,
            wanted: nw,
            applications,
        });
        // Fewer usable Ritz values than requested (the kernel crowds the basis): go on.
        let all_converged = nw > 0 && converged == nw;
        let exhausted = u == d; // T V₂ in the span and no room or rank for new directions
        if all_converged && (nw >= wanted.nearest.min(d) || exhausted) {
            let count = wanted.returned(&abs_sorted, nw);
            let s = Mat::from_fn(d, count, |i, j| {
                let c = vectors.col(order[j]);
                c[i].scaled(1.0 / c.norm_l2())
            });
            return Ok(RitzPairs {
                theta: theta[..count].to_vec(),
                vectors: times(dec.v.as_ref().get(.., ..d), s.as_ref()),
                residuals: res[..count].to_vec(),
                applications,
                restarts,
            });
        }
        if dec.used + p <= dec.capacity() && !exhausted {
            continue;
        }
        if restarts >= opts.max_restarts || exhausted {
            if usable == 0 {
                return Err(SolverError::TargetBelowModes);
            }
            return Err(SolverError::NotConverged {
                found: converged,
                wanted: nw,
                tol: opts.tol,
                restarts,
            });
        }
        restarts += 1;
        let keep = Wanted::keep(nw, p, m, d);
        let s = Mat::from_fn(d, keep, |i, j| vectors[(i, order[j])]);
        m = basis_for(nw).max(m);
        dec.truncate(s.as_ref(), m, p);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::c64;

    /// T = diag(θ) with a diagonal "mass" matrix: the exact eigenvalues are known.
    struct Diagonal<T> {
        theta: Vec<T>,
        /// Diagonal of M (None: Euclidean inner product).
        mass: Option<Vec<T>>,
    }

    impl<T: KrylovScalar> KrylovOperator<T> for Diagonal<T> {
        fn dim(&self) -> usize {
            self.theta.len()
        }
        fn euclidean(&self) -> bool {
            self.mass.is_none()
        }
        fn metric(&self, x: MatRef<'_, T>, mut y: MatMut<'_, T>) {
            let m = self.mass.as_ref().expect("metric only with a mass");
            for j in 0..x.ncols() {
                for i in 0..x.nrows() {
                    y[(i, j)] = m[i] * x[(i, j)];
                }
            }
        }
        fn apply(&self, v: MatRef<'_, T>, _mv: MatRef<'_, T>, mut y: MatMut<'_, T>) {
            for j in 0..v.ncols() {
                for i in 0..v.nrows() {
                    y[(i, j)] = self.theta[i] * v[(i, j)];
                }
            }
        }
    }

    fn wanted(nearest: usize) -> Wanted {
        Wanted {
            nearest,
            theta_min: None,
            max: 100,
            kernel_theta: None,
        }
    }

    /// Spectrum with a six-fold group among the wanted values: every member is found
    /// (block size 6 ≥ the multiplicity), in the M-inner product (real symmetric case).
    #[test]
    fn real_diagonal_with_degenerate_group() {
        let n = 400;
        // θ_i = 1/(λ_i − σ) for λ spread on both sides of σ; six copies of θ = 0.5.
        let mut theta: Vec<f64> = (0..n)
            .map(|i| {
                let d = (i as f64 + 1.0) * if i % 2 == 0 { 0.3 } else { -0.37 };
                1.0 / d
            })
            .collect();
        for t in theta.iter_mut().skip(40).take(6) {
            *t = 0.5;
        }
        let mass = (0..n).map(|i| 1.0 + (i % 7) as f64 * 0.25).collect();
        let op = Diagonal {
            theta: theta.clone(),
            mass: Some(mass),
        };
        let mut exact = theta.clone();
        exact.sort_by(|a, b| b.abs().total_cmp(&a.abs()));
        let got = solve(&op, wanted(12), &EigenOptions::default(), &mut |_| {}).expect("converges");
        assert!(got.theta.len() >= 12);
        for (g, e) in got.theta.iter().zip(&exact) {
            // Converged to tol 1e-8 in the residual; Ritz values of a symmetric operator
            // are accurate to the residual squared, far below 1e-12 relative.
            assert!((g - e).abs() <= 1e-12 * e.abs(), "θ {g} vs exact {e}");
        }
        let group = got
            .theta
            .iter()
            .filter(|t| (*t - 0.5).abs() < 1e-12)
            .count();
        let in_wanted = exact[..12]
            .iter()
            .filter(|t| (*t - 0.5).abs() < 1e-12)
            .count();
        assert_eq!(group, in_wanted, "members of the six-fold group found");
    }

    /// A complex (non-Hermitian in effect: complex θ) diagonal operator in the Euclidean
    /// inner product: the largest |θ| are found with their Ritz vectors.
    #[test]
    fn complex_diagonal_largest_modulus() {
        let n = 300;
        let theta: Vec<c64> = (0..n)
            .map(|i| {
                let r = 1.0 / (1.0 + i as f64 * 0.21);
                let phase = 0.7 * (i as f64).sin();
                c64::new(r * phase.cos(), r * phase.sin())
            })
            .collect();
        let op = Diagonal {
            theta: theta.clone(),
            mass: None,
        };
        let got = solve(&op, wanted(10), &EigenOptions::default(), &mut |_| {}).expect("converges");
        assert!(got.theta.len() >= 10);
        for (k, g) in got.theta.iter().enumerate().take(10) {
            // θ_k is the k-th largest by construction (|θ_i| decreases with i).
            let e = theta[k];
            assert!(
                (*g - e).norm() <= 1e-10 * e.norm(),
                "θ {g:?} vs exact {e:?}"
            );
            // The Ritz vector is the k-th unit vector up to a phase.
            let v = got.vectors.col(k);
            assert!(
                (v[k].norm() - 1.0).abs() < 1e-8,
                "Ritz vector {k} not e_{k}"
            );
        }
    }
}
