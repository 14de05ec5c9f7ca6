//! Restarted block Rayleigh–Ritz iteration for the shift-inverted symmetric pencil.
//!
//! For K x = λ M x (K symmetric positive semi-definite, M symmetric positive definite)
//! and a shift σ, the operator T = (K − σM)⁻¹ M is self-adjoint in the M-inner product
//! ⟨x, y⟩_M = xᵀ M y and has eigenvalues θ = 1/(λ − σ): the eigenvalues nearest σ become
//! the largest |θ|, and the huge kernel of K (gradients, λ = 0) maps to θ = −1/σ, far from
//! the wanted ones.
//!
//! The iteration builds an M-orthonormal basis V of a block Krylov space of T (block size
//! p ≥ the largest expected multiplicity, so that every member of a degenerate group is
//! found), keeps T V and M V alongside, and extracts Ritz pairs from the projected matrix
//! H = (MV)ᵀ (TV) = Vᵀ M T V (symmetric). When the basis is full it restarts from the
//! best Ritz vectors (thick restart, as in Wu & Simon, SIAM J. Matrix Anal. Appl. 22
//! (2000) 602, from memory) and continues from their residuals. Classical Gram–Schmidt
//! in the M-inner product is applied twice ("twice is enough") for orthogonality.
//!
//! Convergence: a Ritz pair (θ, y) is accepted when ‖T y − θ y‖₂ ≤ tol·|θ|·‖y‖₂.

use crate::error::SolverError;
use faer::{Mat, MatMut, MatRef, Side};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// The shift-inverted operator and the mass matrix, applied to blocks of vectors.
pub trait ShiftInvertOperator: Sync {
    /// Dimension n.
    fn dim(&self) -> usize;
    /// Y = (K − σM)⁻¹ M X.
    fn apply(&self, x: MatRef<'_, f64>, y: MatMut<'_, f64>);
    /// Y = M X.
    fn mass(&self, x: MatRef<'_, f64>, y: MatMut<'_, f64>);
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

struct Basis {
    v: Mat<f64>,
    mv: Mat<f64>,
    tv: Mat<f64>,
    used: usize,
}

impl Basis {
    fn new(n: usize, m: usize) -> Self {
        Self {
            v: Mat::zeros(n, m),
            mv: Mat::zeros(n, m),
            tv: Mat::zeros(n, m),
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
        for mat in [&mut self.v, &mut self.mv, &mut self.tv] {
            let mut bigger = Mat::zeros(n, m);
            bigger
                .as_mut()
                .get_mut(.., ..self.used)
                .copy_from(mat.as_ref().get(.., ..self.used));
            *mat = bigger;
        }
    }

    /// M-orthogonalise the columns of `cand` against the basis and append the ones that
    /// keep a significant part; returns the number appended. T is applied to them.
    ///
    /// Block classical Gram–Schmidt, twice, against the basis (two matrix products that
    /// read the basis once per block instead of once per column), then modified
    /// Gram–Schmidt inside the block.
    fn extend<O: ShiftInvertOperator>(
        &mut self,
        op: &O,
        cand: MatRef<'_, f64>,
        applications: &mut usize,
    ) -> usize {
        let n = self.v.nrows();
        let start = self.used;
        let k = cand.ncols().min(self.capacity() - start);
        if k == 0 {
            return 0;
        }
        let mut c = cand.get(.., ..k).to_owned();
        let norm0: Vec<f64> = (0..k)
            .map(|j| c.as_ref().get(.., j..j + 1).norm_l2())
            .collect();
        if start > 0 {
            for _ in 0..2 {
                let coef = self.mv.as_ref().get(.., ..start).transpose() * c.as_ref();
                c -= self.v.as_ref().get(.., ..start) * &coef;
            }
        }
        let mut mc = Mat::<f64>::zeros(n, 1);
        for (j, &nrm0) in norm0.iter().enumerate() {
            if self.used == self.capacity() || nrm0 == 0.0 || !nrm0.is_finite() {
                continue;
            }
            let mut cj = c.as_ref().get(.., j..j + 1).to_owned();
            for _ in 0..2 {
                let (s, u) = (start, self.used);
                if u > s {
                    let coef = self.mv.as_ref().get(.., s..u).transpose() * cj.as_ref();
                    cj -= self.v.as_ref().get(.., s..u) * &coef;
                }
            }
            if cj.norm_l2() < 1e-8 * nrm0 {
                continue; // already (numerically) in the span
            }
            op.mass(cj.as_ref(), mc.as_mut());
            let mnorm2 = (cj.as_ref().transpose() * mc.as_ref())[(0, 0)];
            if mnorm2 <= 0.0 || !mnorm2.is_finite() {
                continue;
            }
            let sc = 1.0 / mnorm2.sqrt();
            let u = self.used;
            self.v
                .as_mut()
                .get_mut(.., u..u + 1)
                .copy_from(cj.as_ref() * faer::Scale(sc));
            self.mv
                .as_mut()
                .get_mut(.., u..u + 1)
                .copy_from(mc.as_ref() * faer::Scale(sc));
            self.used += 1;
        }
        let added = self.used - start;
        if added > 0 {
            let (vv, tv) = (
                self.v.as_ref().get(.., start..self.used),
                self.tv.as_mut().get_mut(.., start..self.used),
            );
            op.apply(vv, tv);
            *applications += added;
        }
        added
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
    let cap_for = |nw: usize| (opts.basis.max(2 * nw + 3 * p)).min(n);
    let mut basis = Basis::new(n, cap_for(initial_wanted));
    let mut rng = ChaCha8Rng::seed_from_u64(opts.seed);
    let mut applications = 0usize;
    let mut cand = random_block(n, p, &mut rng);
    let mut restarts = 0usize;
    loop {
        // Expand the block Krylov space until the basis is full.
        while basis.used < basis.capacity() {
            let before = basis.used;
            let added = basis.extend(op, cand.as_ref(), &mut applications);
            if added == 0 {
                cand = random_block(n, p, &mut rng);
                if basis.extend(op, cand.as_ref(), &mut applications) == 0 {
                    break; // the basis spans everything reachable (tiny problems)
                }
            }
            let u = basis.used;
            let from = if added == 0 { before } else { u - added };
            cand = basis.tv.as_ref().get(.., from..u).to_owned();
        }
        let u = basis.used;
        // Rayleigh–Ritz on H = (MV)ᵀ (TV).
        let h = basis.mv.as_ref().get(.., ..u).transpose() * basis.tv.as_ref().get(.., ..u);
        let hs = Mat::from_fn(u, u, |i, j| 0.5 * (h[(i, j)] + h[(j, i)]));
        let evd = hs.self_adjoint_eigen(Side::Lower).map_err(|e| {
            SolverError::InvalidSetting(format!("projected eigenproblem failed: {e:?}"))
        })?;
        let s_diag = evd.S().column_vector();
        let abs: Vec<f64> = (0..u).map(|i| s_diag[i].abs()).collect();
        let dist: Vec<f64> = (0..u)
            .map(|i| (s_diag[i] - wanted.kernel_theta.unwrap_or(f64::NAN)).abs())
            .collect();
        let order = wanted.order(&abs, &dist);
        let theta: Vec<f64> = order.iter().map(|&i| s_diag[i]).collect();
        let usable = wanted.usable(&order.iter().map(|&i| dist[i]).collect::<Vec<_>>());
        let abs_sorted: Vec<f64> = theta.iter().map(|t| t.abs()).collect();
        let nw = wanted.active(&abs_sorted, usable);
        // Ritz vectors of the leading part and their residuals.
        let keep = Wanted::keep(nw, p, basis.capacity(), u);
        let s_keep = Mat::from_fn(u, keep, |i, j| evd.U()[(i, order[j])]);
        let y = basis.v.as_ref().get(.., ..u) * &s_keep;
        let ty = basis.tv.as_ref().get(.., ..u) * &s_keep;
        let my = basis.mv.as_ref().get(.., ..u) * &s_keep;
        let mut res = vec![0.0; keep];
        let mut resid = Mat::<f64>::zeros(n, keep);
        for j in 0..keep {
            let t = theta[j];
            let mut r = ty.as_ref().get(.., j..j + 1).to_owned();
            r -= y.as_ref().get(.., j..j + 1) * faer::Scale(t);
            let yn = y.as_ref().get(.., j..j + 1).norm_l2();
            res[j] = r.norm_l2() / (t.abs() * yn).max(f64::MIN_POSITIVE);
            resid.as_mut().get_mut(.., j..j + 1).copy_from(&r);
        }
        let converged = res.iter().take(nw).take_while(|&&r| r <= opts.tol).count();
        progress(EigenProgress {
            restarts,
            converged,
            wanted: nw,
            applications,
        });
        // Fewer usable Ritz values than requested (the kernel crowds the basis): go on.
        let done = converged == nw && nw >= wanted.nearest.min(u);
        if done || restarts >= opts.max_restarts {
            if !done {
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
            let count = wanted.returned(&abs_sorted, nw);
            return Ok(RitzPairs {
                theta: theta[..count].to_vec(),
                vectors: y.as_ref().get(.., ..count).to_owned(),
                residuals: res[..count].to_vec(),
                applications,
                restarts,
            });
        }
        // Thick restart: keep the leading Ritz vectors, continue from the residuals of
        // the unconverged ones (largest first), padded with random directions.
        restarts += 1;
        basis.grow(cap_for(nw));
        basis.v.as_mut().get_mut(.., ..keep).copy_from(&y);
        basis.tv.as_mut().get_mut(.., ..keep).copy_from(&ty);
        basis.mv.as_mut().get_mut(.., ..keep).copy_from(&my);
        basis.used = keep;
        let mut unconv: Vec<usize> = (0..keep).filter(|&j| res[j] > opts.tol).collect();
        unconv.sort_by(|&a, &b| res[b].total_cmp(&res[a]));
        unconv.truncate(p);
        let mut next = random_block(n, p, &mut rng);
        for (slot, &j) in unconv.iter().enumerate() {
            next.as_mut()
                .get_mut(.., slot..slot + 1)
                .copy_from(resid.as_ref().get(.., j..j + 1));
        }
        cand = next;
    }
}
