//! Block Krylov–Schur iteration for the shift-inverted symmetric pencil.
//!
//! For K x = λ M x (K symmetric positive semi-definite, M symmetric positive definite)
//! and a shift σ, the operator T = (K − σM)⁻¹ M is self-adjoint in the M-inner product
//! ⟨x, y⟩_M = xᵀ M y and has eigenvalues θ = 1/(λ − σ): the eigenvalues nearest σ become
//! the largest |θ|, and the huge kernel of K (gradients, λ = 0) maps to θ = −1/σ, far from
//! the wanted ones.
//!
//! The iteration keeps a Krylov decomposition
//!
//!   T V₁ = V₁ H₁₁ + V₂ H₂₁,
//!
//! with [V₁ V₂] M-orthonormal (V₂ is the newest block, not yet multiplied by T) and
//! H₁₁ = V₁ᵀ M T V₁ symmetric. A block step applies T to V₂ (one solve per column: M V₂
//! is stored, so no mass product is needed), M-orthogonalises the result against the
//! basis by block classical Gram–Schmidt twice ("twice is enough"), whose coefficients
//! are the new column block of H, and orthonormalises it inside the block through the
//! eigen-decomposition of its M-Gram matrix (twice, as for Gram–Schmidt). Block size
//! p ≥ the largest expected multiplicity, so that every member of a degenerate group is
//! found.
//!
//! Ritz pairs (θ, s) of H₁₁ give approximate eigenpairs (θ, V₁ s) whose residual
//! T V₁ s − θ V₁ s = V₂ H₂₁ s has M-norm ‖H₂₁ s‖₂, known without touching n-vectors: a
//! pair is accepted when ‖H₂₁ s‖₂ ≤ tol·|θ|. Convergence is checked after every block,
//! so the iteration stops as soon as the wanted pairs have converged. When the basis is
//! full, it is truncated to the leading Ritz vectors with their coupling to V₂ (Krylov–
//! Schur restart: Stewart, SIAM J. Matrix Anal. Appl. 23 (2001) 601; for the symmetric
//! case it is the thick restart of Wu & Simon, SIAM J. Matrix Anal. Appl. 22 (2000) 602;
//! both from memory), which keeps an exact Krylov decomposition.

use crate::error::SolverError;
use crate::tall_skinny::{add_times, adjoint_times, times};
use faer::{Mat, MatRef, Side};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// The shift-inverted operator's two ingredients, applied to blocks of vectors.
pub trait ShiftInvertOperator: Sync {
    /// Dimension n.
    fn dim(&self) -> usize;
    /// Y = (K − σM)⁻¹ B.
    fn solve(&self, b: MatRef<'_, f64>, y: faer::MatMut<'_, f64>);
    /// Y = M X.
    fn mass(&self, x: MatRef<'_, f64>, y: faer::MatMut<'_, f64>);
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
pub struct RitzPairs {
    /// θ = 1/(λ − σ).
    pub theta: Vec<f64>,
    /// M-orthonormal Ritz vectors, one per column.
    pub vectors: Mat<f64>,
    /// Relative residuals ‖T y − θ y‖ / (|θ| ‖y‖).
    pub residuals: Vec<f64>,
    /// Number of operator applications (single vectors).
    pub applications: usize,
    /// Number of restarts used.
    pub restarts: usize,
}

/// The Krylov decomposition T V[.., ..done] = V[.., ..used] H[..used, ..done].
struct Decomposition {
    v: Mat<f64>,
    mv: Mat<f64>,
    h: Mat<f64>,
    done: usize,
    used: usize,
}

/// A block M-orthonormalised against the basis: Q (with M Q) and its coordinates.
struct Orthonormal {
    q: Mat<f64>,
    mq: Mat<f64>,
    /// Coefficients against the basis (used × b).
    coef: Mat<f64>,
    /// W − V coef = Q R, R is (rank × b).
    r: Mat<f64>,
}

impl Decomposition {
    fn new(n: usize, capacity: usize) -> Self {
        Self {
            v: Mat::zeros(n, capacity),
            mv: Mat::zeros(n, capacity),
            h: Mat::zeros(capacity, capacity),
            done: 0,
            used: 0,
        }
    }

    fn capacity(&self) -> usize {
        self.v.ncols()
    }

    fn grow(&mut self, m: usize) {
        if m <= self.capacity() {
            return;
        }
        let n = self.v.nrows();
        for mat in [&mut self.v, &mut self.mv] {
            let mut bigger = Mat::zeros(n, m);
            bigger
                .as_mut()
                .get_mut(.., ..self.used)
                .copy_from(mat.as_ref().get(.., ..self.used));
            *mat = bigger;
        }
        let mut h = Mat::zeros(m, m);
        h.as_mut()
            .get_mut(..self.used, ..self.used)
            .copy_from(self.h.as_ref().get(..self.used, ..self.used));
        self.h = h;
    }

    /// M-orthonormalise the columns of `w` against V[.., ..used]: block classical
    /// Gram–Schmidt twice, then twice an orthonormalisation inside the block through the
    /// eigen-decomposition of its M-Gram matrix, dropping directions whose new part is
    /// below 1e-8 of the column's size (already in the span, numerically).
    fn orthonormalise<O: ShiftInvertOperator>(&self, op: &O, mut w: Mat<f64>) -> Orthonormal {
        let (n, b, u) = (w.nrows(), w.ncols(), self.used);
        let mut coef = Mat::<f64>::zeros(u, b);
        if u > 0 {
            for _ in 0..2 {
                let c = adjoint_times(self.mv.as_ref().get(.., ..u), w.as_ref());
                add_times(w.as_mut(), self.v.as_ref().get(.., ..u), c.as_ref(), -1.0);
                coef += &c;
            }
        }
        let mut mw = Mat::<f64>::zeros(n, b);
        op.mass(w.as_ref(), mw.as_mut());
        let g = adjoint_times(w.as_ref(), mw.as_ref());
        // Size of each column before projection: ‖w_j‖²_M = ‖coef_j‖² + ‖rest_j‖²_M.
        let size2 = (0..b)
            .map(|j| (0..u).map(|i| coef[(i, j)].powi(2)).sum::<f64>() + g[(j, j)].max(0.0))
            .fold(0.0, f64::max);
        let (mut q, mut mq, mut r) = (w, mw, Mat::<f64>::identity(b, b));
        let mut g = g;
        for _ in 0..2 {
            let gs = Mat::from_fn(g.nrows(), g.ncols(), |i, j| 0.5 * (g[(i, j)] + g[(j, i)]));
            let Ok(evd) = gs.self_adjoint_eigen(Side::Lower) else {
                break;
            };
            let lam = evd.S().column_vector();
            let keep: Vec<usize> = (0..lam.nrows())
                .filter(|&i| lam[i] > 1e-16 * size2 && lam[i].is_finite())
                .collect();
            // Z = U_keep Λ^{-1/2}: Q Z is M-orthonormal; R ← Λ^{1/2} U_keepᵀ R.
            let z = Mat::from_fn(gs.nrows(), keep.len(), |i, j| {
                evd.U()[(i, keep[j])] / lam[keep[j]].sqrt()
            });
            let zi = Mat::from_fn(keep.len(), gs.nrows(), |i, j| {
                evd.U()[(j, keep[i])] * lam[keep[i]].sqrt()
            });
            q = times(q.as_ref(), z.as_ref());
            mq = times(mq.as_ref(), z.as_ref());
            r = &zi * &r;
            g = adjoint_times(q.as_ref(), mq.as_ref());
            if keep.is_empty() {
                break;
            }
        }
        Orthonormal { q, mq, coef, r }
    }

    /// Append an orthonormal block as the new V₂ (its coupling rows of H are written by
    /// the caller).
    fn append(&mut self, block: &Orthonormal) {
        let (u, r) = (self.used, block.q.ncols());
        self.v.as_mut().get_mut(.., u..u + r).copy_from(&block.q);
        self.mv.as_mut().get_mut(.., u..u + r).copy_from(&block.mq);
        self.used += r;
    }

    /// Append up to `k` random directions (no coupling), as far as room allows.
    fn append_random<O: ShiftInvertOperator>(
        &mut self,
        op: &O,
        k: usize,
        rng: &mut ChaCha8Rng,
    ) -> usize {
        let k = k.min(self.capacity() - self.used);
        if k == 0 {
            return 0;
        }
        let block = self.orthonormalise(op, random_block(self.v.nrows(), k, rng));
        self.append(&block);
        block.q.ncols()
    }

    /// One block step: apply T to V₂, orthonormalise, extend H; V₂ is padded back to `p`
    /// columns with random directions when T V₂ is (partly) in the span. Returns the
    /// number of solves.
    fn step<O: ShiftInvertOperator>(&mut self, op: &O, p: usize, rng: &mut ChaCha8Rng) -> usize {
        let (d, u) = (self.done, self.used);
        let b = u - d;
        let mut w = Mat::<f64>::zeros(self.v.nrows(), b);
        op.solve(self.mv.as_ref().get(.., d..u), w.as_mut());
        let block = self.orthonormalise(op, w);
        let room = self.capacity() - u;
        let r = block.q.ncols().min(room);
        let block = Orthonormal {
            q: block.q.as_ref().get(.., ..r).to_owned(),
            mq: block.mq.as_ref().get(.., ..r).to_owned(),
            r: block.r.as_ref().get(..r, ..).to_owned(),
            coef: block.coef,
        };
        self.h.as_mut().get_mut(..u, d..u).copy_from(&block.coef);
        self.append(&block);
        self.h.as_mut().get_mut(u..u + r, d..u).copy_from(&block.r);
        self.done = u;
        if r < p {
            self.append_random(op, p - r, rng);
        }
        b
    }
}

fn random_block(n: usize, p: usize, rng: &mut ChaCha8Rng) -> Mat<f64> {
    Mat::from_fn(n, p, |_, _| rng.gen_range(-1.0..1.0))
}

/// Find the wanted eigenpairs of T = (K − σM)⁻¹ M.
pub fn solve<O: ShiftInvertOperator>(
    op: &O,
    wanted: Wanted,
    opts: &EigenOptions,
    progress: &mut dyn FnMut(EigenProgress),
) -> Result<RitzPairs, SolverError> {
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
    let mut dec = Decomposition::new(n, (m + p).min(n));
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
        let hs = Mat::from_fn(d, d, |i, j| 0.5 * (dec.h[(i, j)] + dec.h[(j, i)]));
        let evd = hs.self_adjoint_eigen(Side::Lower).map_err(|e| {
            SolverError::InvalidSetting(format!("projected eigenproblem failed: {e:?}"))
        })?;
        let s_diag = evd.S().column_vector();
        let abs: Vec<f64> = (0..d).map(|i| s_diag[i].abs()).collect();
        let dist: Vec<f64> = (0..d)
            .map(|i| (s_diag[i] - wanted.kernel_theta.unwrap_or(f64::NAN)).abs())
            .collect();
        let order = wanted.order(&abs, &dist);
        let theta: Vec<f64> = order.iter().map(|&i| s_diag[i]).collect();
        let usable = wanted.usable(&order.iter().map(|&i| dist[i]).collect::<Vec<_>>());
        let abs_sorted: Vec<f64> = theta.iter().map(|t| t.abs()).collect();
        let nw = wanted.active(&abs_sorted, usable);
        let h21 = dec.h.as_ref().get(d..u, ..d);
        let res: Vec<f64> = order
            .iter()
            .zip(&theta)
            .map(|(&i, t)| (h21 * evd.U().col(i)).norm_l2() / t.abs().max(f64::MIN_POSITIVE))
            .collect();
        let converged = res.iter().take(nw).take_while(|&&r| r <= opts.tol).count();
        progress(EigenProgress {
            restarts,
            converged,
            wanted: nw,
            applications,
        });
        // Fewer usable Ritz values than requested (the kernel crowds the basis): go on.
        let done = nw > 0 && converged == nw && nw >= wanted.nearest.min(d);
        let exhausted = u == d; // invariant subspace and no room or rank left
        if done || (exhausted && nw > 0 && converged == nw) {
            let count = wanted.returned(&abs_sorted, nw);
            let s = Mat::from_fn(d, count, |i, j| evd.U()[(i, order[j])]);
            return Ok(RitzPairs {
                theta: theta[..count].to_vec(),
                vectors: times(dec.v.as_ref().get(.., ..d), s.as_ref()),
                residuals: res[..count].to_vec(),
                applications,
                restarts,
            });
        }
        let full = dec.used + p > dec.capacity() || exhausted;
        if !full {
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
        // Krylov–Schur restart: V₁ ← V₁ S_k, H₁₁ ← diag θ_k, H₂₁ ← H₂₁ S_k; V₂ stays.
        restarts += 1;
        let keep = Wanted::keep(nw, p, m, d);
        let s = Mat::from_fn(d, keep, |i, j| evd.U()[(i, order[j])]);
        let y = times(dec.v.as_ref().get(.., ..d), s.as_ref());
        let my = times(dec.mv.as_ref().get(.., ..d), s.as_ref());
        let coupling = h21 * &s;
        let b = u - d;
        let v2 = dec.v.as_ref().get(.., d..u).to_owned();
        let mv2 = dec.mv.as_ref().get(.., d..u).to_owned();
        m = basis_for(nw).max(m);
        dec.grow((m + p).min(n));
        dec.v.as_mut().get_mut(.., ..keep).copy_from(&y);
        dec.mv.as_mut().get_mut(.., ..keep).copy_from(&my);
        dec.v.as_mut().get_mut(.., keep..keep + b).copy_from(&v2);
        dec.mv.as_mut().get_mut(.., keep..keep + b).copy_from(&mv2);
        dec.h.fill(0.0);
        for (j, &t) in theta.iter().take(keep).enumerate() {
            dec.h[(j, j)] = t;
        }
        dec.h
            .as_mut()
            .get_mut(keep..keep + b, ..keep)
            .copy_from(&coupling);
        dec.done = keep;
        dec.used = keep + b;
    }
}
