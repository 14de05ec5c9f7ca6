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

use crate::error::SolverError;
use crate::tall_skinny::{add_times, adjoint_times, times};
use faer::traits::ComplexField;
use faer::{c64, Mat, MatMut, MatRef, Side};
use rand::{Rng, SeedableRng};
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
}

fn projection_failed(e: impl std::fmt::Debug) -> SolverError {
    SolverError::InvalidSetting(format!("projected eigenproblem failed: {e:?}"))
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
            .map_err(projection_failed)?;
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
        let evd = h.eigen().map_err(projection_failed)?;
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
}

/// Which eigenvalues are wanted, in terms of θ = 1/(λ − σ): at least the `nearest`
/// ones with largest |θ|, and every one with |θ| ≥ `theta_min` (|λ − σ| ≤ 1/theta_min),
/// but never more than `max`. Ritz values within a relative 1e-6 of `kernel_theta`
/// (θ = −1/σ, the image of λ = 0: gradient fields) are never wanted; without this, a
/// shift below the lowest resonance would return the kernel instead of modes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Wanted {
    pub nearest: usize,
    pub theta_min: Option<f64>,
    pub max: usize,
    pub kernel_theta: Option<f64>,
}

impl Wanted {
    /// Whether the Ritz value `theta` (given by its distance to the kernel image and its
    /// size) belongs to the kernel.
    pub fn is_kernel(&self, distance_to_kernel: f64) -> bool {
        self.kernel_theta
            .is_some_and(|k| distance_to_kernel <= 1e-6 * k.abs())
    }

    /// Order Ritz values by decreasing |θ|, kernel images last.
    pub fn order(&self, abs_theta: &[f64], distance_to_kernel: &[f64]) -> Vec<usize> {
        let mut order: Vec<usize> = (0..abs_theta.len()).collect();
        order.sort_by(|&a, &b| {
            let (ka, kb) = (
                self.is_kernel(distance_to_kernel[a]),
                self.is_kernel(distance_to_kernel[b]),
            );
            ka.cmp(&kb).then(abs_theta[b].total_cmp(&abs_theta[a]))
        });
        order
    }

    /// How many of the ordered Ritz values (|θ| given, decreasing, the first `usable` not
    /// kernel images) must converge: the `nearest`, and with a radius all inside it plus
    /// one beyond, which must also have converged so that nothing inside can still be
    /// missing.
    pub fn active(&self, abs_theta: &[f64], usable: usize) -> usize {
        match self.theta_min {
            None => self.nearest.min(usable),
            Some(t) => {
                let inside = abs_theta.iter().take(usable).filter(|&&a| a >= t).count();
                self.nearest.max(inside + 1).min(self.max + 1).min(usable)
            }
        }
    }

    /// How many of the `active` converged Ritz values to return (the guard beyond the
    /// radius is dropped).
    pub fn returned(&self, abs_theta: &[f64], active: usize) -> usize {
        match self.theta_min {
            None => active,
            Some(t) => abs_theta
                .iter()
                .take(active)
                .filter(|&&a| a >= t)
                .count()
                .max(self.nearest.min(active)),
        }
    }

    /// Ritz vectors kept at a restart: the active ones plus a block, at least half the
    /// basis, leaving room for one block.
    pub fn keep(active: usize, block: usize, capacity: usize, used: usize) -> usize {
        (active + block)
            .max(capacity / 2)
            .min(used.saturating_sub(block).max(active))
            .min(used)
    }

    /// Number of leading (ordered) Ritz values that are not kernel images.
    pub fn usable(&self, ordered_distance: &[f64]) -> usize {
        ordered_distance
            .iter()
            .take_while(|&&d| !self.is_kernel(d))
            .count()
    }
}

/// Tuning of the iteration.
#[derive(Clone, Copy, Debug)]
pub struct EigenOptions {
    /// Block size p.
    pub block: usize,
    /// Basis size before a restart (grown automatically when more modes are wanted).
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

/// The Krylov decomposition T V[.., ..done] = V[.., ..used] H[..used, ..done].
struct Decomposition<T> {
    v: Mat<T>,
    /// M V (None when the inner product is Euclidean).
    mv: Option<Mat<T>>,
    h: Mat<T>,
    done: usize,
    used: usize,
}

/// A block orthonormalised against the basis: Q (with its metric image) and its
/// coordinates.
struct Orthonormal<T> {
    q: Mat<T>,
    mq: Option<Mat<T>>,
    /// Coefficients against the basis (used × b).
    coef: Mat<T>,
    /// W − V coef = Q R, R is (rank × b).
    r: Mat<T>,
}

/// The first `used` columns of `mat` in a matrix of `m` columns.
fn widened<T: KrylovScalar>(mat: &Mat<T>, used: usize, m: usize) -> Mat<T> {
    let mut bigger = Mat::zeros(mat.nrows(), m);
    bigger
        .as_mut()
        .get_mut(.., ..used)
        .copy_from(mat.as_ref().get(.., ..used));
    bigger
}

fn one<T: KrylovScalar>() -> T {
    T::one_impl()
}

impl<T: KrylovScalar> Decomposition<T> {
    fn new(n: usize, capacity: usize, euclidean: bool) -> Self {
        Self {
            v: Mat::zeros(n, capacity),
            mv: (!euclidean).then(|| Mat::zeros(n, capacity)),
            h: Mat::zeros(capacity, capacity),
            done: 0,
            used: 0,
        }
    }

    fn capacity(&self) -> usize {
        self.v.ncols()
    }

    /// Metric image of the basis (M V, or V).
    fn mv(&self) -> MatRef<'_, T> {
        self.mv.as_ref().unwrap_or(&self.v).as_ref()
    }

    fn grow(&mut self, m: usize) {
        if m <= self.capacity() {
            return;
        }
        let u = self.used;
        self.v = widened(&self.v, u, m);
        self.mv = self.mv.as_ref().map(|mv| widened(mv, u, m));
        let mut h = Mat::zeros(m, m);
        h.as_mut()
            .get_mut(..u, ..u)
            .copy_from(self.h.as_ref().get(..u, ..u));
        self.h = h;
    }

    /// Orthonormalise the columns of `w` against V[.., ..used]: block classical
    /// Gram–Schmidt twice, then twice an orthonormalisation inside the block through the
    /// eigen-decomposition of its Gram matrix, dropping directions whose new part is
    /// below 1e-8 of their columns' size (already in the span, numerically).
    fn orthonormalise<O: KrylovOperator<T>>(&self, op: &O, mut w: Mat<T>) -> Orthonormal<T> {
        let (n, b, u) = (w.nrows(), w.ncols(), self.used);
        let mut coef = Mat::<T>::zeros(u, b);
        if u > 0 {
            for _ in 0..2 {
                let c = adjoint_times(self.mv().get(.., ..u), w.as_ref());
                add_times(
                    w.as_mut(),
                    self.v.as_ref().get(.., ..u),
                    c.as_ref(),
                    -one::<T>(),
                );
                coef += &c;
            }
        }
        let mut mw = (!op.euclidean()).then(|| {
            let mut mw = Mat::<T>::zeros(n, b);
            op.metric(w.as_ref(), mw.as_mut());
            mw
        });
        let gram = |q: &Mat<T>, mq: &Option<Mat<T>>| {
            adjoint_times(q.as_ref(), mq.as_ref().unwrap_or(q).as_ref())
        };
        let g0 = gram(&w, &mw);
        // Each column's size before projection, ‖w_j‖² = ‖coef_j‖² + ‖rest_j‖²; columns
        // are scaled to unit size so that "negligible" is judged per column (one column
        // can be 1e16 times the others when the shift sits on an eigenvalue).
        let size: Vec<f64> = (0..b)
            .map(|j| {
                let s2 = (0..u).map(|i| coef[(i, j)].modulus().powi(2)).sum::<f64>()
                    + g0[(j, j)].modulus();
                if s2 > 0.0 && s2.is_finite() {
                    s2.sqrt()
                } else {
                    1.0
                }
            })
            .collect();
        let d = Mat::<T>::from_fn(b, b, |i, j| {
            if i == j {
                one::<T>().scaled(1.0 / size[j])
            } else {
                T::zero_impl()
            }
        });
        // The Gram matrix of W D, without forming W D: D is folded into the first Z.
        let mut pending_scale = Some(d);
        let mut g = Mat::from_fn(b, b, |i, j| g0[(i, j)].scaled(1.0 / (size[i] * size[j])));
        // W = (W D) diag(size) = Q R.
        let mut r = Mat::<T>::from_fn(b, b, |i, j| {
            if i == j {
                one::<T>().scaled(size[j])
            } else {
                T::zero_impl()
            }
        });
        for _ in 0..2 {
            // The Gram matrix is Hermitian positive semi-definite: its Hermitian part.
            let gh = Mat::from_fn(g.nrows(), g.ncols(), |i, j| {
                (g[(i, j)] + g[(j, i)].conjugate()).scaled(0.5)
            });
            let Ok(evd) = gh.self_adjoint_eigen(Side::Lower) else {
                break;
            };
            let lam: Vec<f64> = (0..gh.nrows())
                .map(|i| evd.S().column_vector()[i].re())
                .collect();
            let keep: Vec<usize> = (0..lam.len())
                .filter(|&i| lam[i] > 1e-16 && lam[i].is_finite())
                .collect();
            // Z = U_keep Λ^{-1/2}: W Z is orthonormal; R ← Λ^{1/2} U_keepᴴ R.
            let z = Mat::from_fn(gh.nrows(), keep.len(), |i, j| {
                evd.U()[(i, keep[j])].scaled(1.0 / lam[keep[j]].sqrt())
            });
            let zi = Mat::from_fn(keep.len(), gh.nrows(), |i, j| {
                evd.U()[(j, keep[i])]
                    .conjugate()
                    .scaled(lam[keep[i]].sqrt())
            });
            let z = match pending_scale.take() {
                Some(d) => &d * &z,
                None => z,
            };
            w = times(w.as_ref(), z.as_ref());
            mw = mw.map(|m| times(m.as_ref(), z.as_ref()));
            r = &zi * &r;
            g = gram(&w, &mw);
            if keep.is_empty() {
                break;
            }
        }
        // The decomposition failed before the first Z: apply D alone, so that Q R = W.
        if let Some(d) = pending_scale {
            w = times(w.as_ref(), d.as_ref());
            mw = mw.map(|m| times(m.as_ref(), d.as_ref()));
        }
        Orthonormal {
            q: w,
            mq: mw,
            coef,
            r,
        }
    }

    /// Append the first `r` columns of an orthonormal block as part of V₂.
    fn append(&mut self, block: &Orthonormal<T>, r: usize) {
        let u = self.used;
        self.v
            .as_mut()
            .get_mut(.., u..u + r)
            .copy_from(block.q.as_ref().get(.., ..r));
        if let (Some(mv), Some(mq)) = (self.mv.as_mut(), block.mq.as_ref()) {
            mv.as_mut()
                .get_mut(.., u..u + r)
                .copy_from(mq.as_ref().get(.., ..r));
        }
        self.used += r;
    }

    /// Append up to `k` random directions (no coupling), as far as room allows.
    fn append_random<O: KrylovOperator<T>>(
        &mut self,
        op: &O,
        k: usize,
        rng: &mut ChaCha8Rng,
    ) -> usize {
        let k = k.min(self.capacity() - self.used);
        if k == 0 {
            return 0;
        }
        let w = Mat::from_fn(self.v.nrows(), k, |_, _| T::random(rng));
        let block = self.orthonormalise(op, w);
        let r = block.q.ncols();
        self.append(&block, r);
        r
    }

    /// One block step: apply T to V₂, orthonormalise, extend H; V₂ is padded back to `p`
    /// columns with random directions when T V₂ is (partly) in the span. Returns the
    /// number of operator applications.
    fn step<O: KrylovOperator<T>>(&mut self, op: &O, p: usize, rng: &mut ChaCha8Rng) -> usize {
        let (d, u) = (self.done, self.used);
        let b = u - d;
        let mut w = Mat::<T>::zeros(self.v.nrows(), b);
        op.apply(
            self.v.as_ref().get(.., d..u),
            self.mv().get(.., d..u),
            w.as_mut(),
        );
        let block = self.orthonormalise(op, w);
        let r = block.q.ncols().min(self.capacity() - u);
        self.h.as_mut().get_mut(..u, d..u).copy_from(&block.coef);
        self.append(&block, r);
        self.h
            .as_mut()
            .get_mut(u..u + r, d..u)
            .copy_from(block.r.as_ref().get(..r, ..));
        self.done = u;
        if r < p {
            self.append_random(op, p - r, rng);
        }
        b
    }

    /// Krylov–Schur truncation to the span of the Ritz coordinates `s` (done × k).
    ///
    /// The span of eigenvectors of H₁₁ is invariant, so H₁₁Q = Q(QᴴH₁₁Q) and the new
    /// decomposition is exact to round-off. (In the general case ill-conditioned
    /// eigenvectors, nearly defective groups, would make this approximate; Schur vectors
    /// would not. Not seen on cavity spectra, whose non-normality is weak.)
    fn truncate(&mut self, s: MatRef<'_, T>, m: usize, p: usize) {
        let (d, u) = (self.done, self.used);
        let (k, b) = (s.ncols(), u - d);
        let q = s.qr().compute_thin_Q();
        let h11 = T::projected(self.h.as_ref().get(..d, ..d));
        let new_h11 = q.adjoint() * &h11 * &q;
        let coupling = self.h.as_ref().get(d..u, ..d) * &q;
        let y = times(self.v.as_ref().get(.., ..d), q.as_ref());
        let v2 = self.v.as_ref().get(.., d..u).to_owned();
        let my = self
            .mv
            .as_ref()
            .map(|mv| times(mv.as_ref().get(.., ..d), q.as_ref()));
        let mv2 = self
            .mv
            .as_ref()
            .map(|mv| mv.as_ref().get(.., d..u).to_owned());
        self.grow((m + p).min(self.v.nrows()));
        self.v.as_mut().get_mut(.., ..k).copy_from(&y);
        self.v.as_mut().get_mut(.., k..k + b).copy_from(&v2);
        if let (Some(mv), Some(my), Some(mv2)) = (self.mv.as_mut(), my, mv2) {
            mv.as_mut().get_mut(.., ..k).copy_from(&my);
            mv.as_mut().get_mut(.., k..k + b).copy_from(&mv2);
        }
        self.h.fill(T::zero_impl());
        self.h.as_mut().get_mut(..k, ..k).copy_from(&new_h11);
        self.h.as_mut().get_mut(k..k + b, ..k).copy_from(&coupling);
        self.done = k;
        self.used = k + b;
    }
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
        return Err(SolverError::InvalidSetting("zero modes requested".into()));
    }
    // Basis size m (Ritz vectors come from V₁, at most m columns) plus room for V₂.
    let basis_for = |nw: usize| opts.basis.max(2 * nw + 3 * p).min(n);
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
