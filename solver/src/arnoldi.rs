//! Restarted block Arnoldi (Rayleigh–Ritz) iteration for a general shift-inverted
//! operator, used when losses or ports make the pencil complex symmetric.
//!
//! With εr = ε′ − jε″ and matched ports the discrete problem (K + jB) x = λ (M′ − jM″) x
//! is complex symmetric but not Hermitian, so T = (K + jB − σM)⁻¹ M is not self-adjoint
//! in any inner product we can form cheaply. The iteration keeps a Euclidean-orthonormal
//! basis V of a block Krylov space of T together with TV, extracts Ritz pairs from the
//! small dense matrix H = Vᴴ T V (general eigenproblem), and restarts from an orthonormal
//! basis of the wanted Ritz vectors: if S holds their coordinates and S = QR, the new basis
//! is VQ and T(VQ) = (TV)Q, so a restart costs no operator application. Continuation
//! directions are the residuals of the unconverged Ritz pairs (a thick-restart variant of
//! the Krylov–Schur idea; Stewart, SIAM J. Matrix Anal. Appl. 23 (2001) 601, from memory).
//!
//! A Ritz pair (θ, y) is accepted when ‖T y − θ y‖ ≤ tol·|θ|·‖y‖.

use crate::eigen::{EigenOptions, EigenProgress, Wanted};
use crate::error::SolverError;
use faer::{c64, Mat, MatMut, MatRef};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// A complex shift-inverted operator applied to blocks of vectors.
pub trait ComplexOperator: Sync {
    /// Dimension n.
    fn dim(&self) -> usize;
    /// Y = T X.
    fn apply(&self, x: MatRef<'_, c64>, y: MatMut<'_, c64>);
}

/// Converged Ritz pairs of T, ordered by decreasing |θ|.
#[derive(Clone, Debug)]
pub struct ComplexRitzPairs {
    pub theta: Vec<c64>,
    /// Unit-norm Ritz vectors, one per column.
    pub vectors: Mat<c64>,
    pub residuals: Vec<f64>,
    pub applications: usize,
    pub restarts: usize,
}

fn random_block(n: usize, p: usize, rng: &mut ChaCha8Rng) -> Mat<c64> {
    Mat::from_fn(n, p, |_, _| {
        c64::new(rng.gen_range(-1.0..1.0), rng.gen_range(-1.0..1.0))
    })
}

struct Basis {
    v: Mat<c64>,
    tv: Mat<c64>,
    used: usize,
}

impl Basis {
    fn capacity(&self) -> usize {
        self.v.ncols()
    }

    fn grow(&mut self, m: usize) {
        if m <= self.capacity() {
            return;
        }
        let n = self.v.nrows();
        for mat in [&mut self.v, &mut self.tv] {
            let mut bigger = Mat::zeros(n, m);
            bigger
                .as_mut()
                .get_mut(.., ..self.used)
                .copy_from(mat.as_ref().get(.., ..self.used));
            *mat = bigger;
        }
    }

    /// Orthogonalise the columns of `cand` against the basis (block classical
    /// Gram–Schmidt twice, then modified Gram–Schmidt inside the block), append those
    /// that keep a significant part, and apply T to them.
    fn extend<O: ComplexOperator>(
        &mut self,
        op: &O,
        cand: MatRef<'_, c64>,
        applications: &mut usize,
    ) -> usize {
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
                let coef = self.v.as_ref().get(.., ..start).adjoint() * c.as_ref();
                c -= self.v.as_ref().get(.., ..start) * &coef;
            }
        }
        for (j, &nrm0) in norm0.iter().enumerate() {
            if self.used == self.capacity() || nrm0 == 0.0 || !nrm0.is_finite() {
                continue;
            }
            let mut cj = c.as_ref().get(.., j..j + 1).to_owned();
            for _ in 0..2 {
                let (s, u) = (start, self.used);
                if u > s {
                    let coef = self.v.as_ref().get(.., s..u).adjoint() * cj.as_ref();
                    cj -= self.v.as_ref().get(.., s..u) * &coef;
                }
            }
            let nrm = cj.norm_l2();
            if nrm < 1e-8 * nrm0 {
                continue;
            }
            let u = self.used;
            self.v
                .as_mut()
                .get_mut(.., u..u + 1)
                .copy_from(cj.as_ref() * faer::Scale(c64::new(1.0 / nrm, 0.0)));
            self.used += 1;
        }
        let added = self.used - start;
        if added > 0 {
            op.apply(
                self.v.as_ref().get(.., start..self.used),
                self.tv.as_mut().get_mut(.., start..self.used),
            );
            *applications += added;
        }
        added
    }
}

/// Find the wanted eigenpairs of the general operator T.
pub fn solve<O: ComplexOperator>(
    op: &O,
    wanted: Wanted,
    opts: &EigenOptions,
    progress: &mut dyn FnMut(EigenProgress),
) -> Result<ComplexRitzPairs, SolverError> {
    let n = op.dim();
    if n == 0 {
        return Err(SolverError::NoUnknowns);
    }
    let p = opts.block.max(1).min(n);
    let initial = wanted
        .nearest
        .max(if wanted.theta_min.is_some() { 8 } else { 0 })
        .min(wanted.max);
    if initial == 0 {
        return Err(SolverError::InvalidSetting("zero modes requested".into()));
    }
    let cap_for = |nw: usize| (opts.basis.max(2 * nw + 3 * p)).min(n);
    let m0 = cap_for(initial);
    let mut basis = Basis {
        v: Mat::zeros(n, m0),
        tv: Mat::zeros(n, m0),
        used: 0,
    };
    let mut rng = ChaCha8Rng::seed_from_u64(opts.seed);
    let mut applications = 0usize;
    let mut restarts = 0usize;
    let mut cand = random_block(n, p, &mut rng);
    loop {
        while basis.used < basis.capacity() {
            let before = basis.used;
            let mut added = basis.extend(op, cand.as_ref(), &mut applications);
            if added == 0 {
                cand = random_block(n, p, &mut rng);
                added = basis.extend(op, cand.as_ref(), &mut applications);
                if added == 0 {
                    break;
                }
            }
            let _ = before;
            let u = basis.used;
            cand = basis.tv.as_ref().get(.., u - added..u).to_owned();
        }
        let u = basis.used;
        let h = basis.v.as_ref().get(.., ..u).adjoint() * basis.tv.as_ref().get(.., ..u);
        let evd = h.eigen().map_err(|e| {
            SolverError::InvalidSetting(format!("projected eigenproblem failed: {e:?}"))
        })?;
        let s = evd.S().column_vector();
        let abs: Vec<f64> = (0..u).map(|i| s[i].norm()).collect();
        let kernel = c64::new(wanted.kernel_theta.unwrap_or(f64::NAN), 0.0);
        let dist: Vec<f64> = (0..u).map(|i| (s[i] - kernel).norm()).collect();
        let order = wanted.order(&abs, &dist);
        let theta: Vec<c64> = order.iter().map(|&i| s[i]).collect();
        let usable = wanted.usable(&order.iter().map(|&i| dist[i]).collect::<Vec<_>>());
        let abs_sorted: Vec<f64> = theta.iter().map(|t| t.norm()).collect();
        let nw = wanted.active(&abs_sorted, usable);
        let keep = Wanted::keep(nw, p, basis.capacity(), u);
        let s_keep = Mat::from_fn(u, keep, |i, j| evd.U()[(i, order[j])]);
        let y = basis.v.as_ref().get(.., ..u) * &s_keep;
        let ty = basis.tv.as_ref().get(.., ..u) * &s_keep;
        let mut res = vec![0.0; keep];
        let mut resid = Mat::<c64>::zeros(n, keep);
        for j in 0..keep {
            let mut r = ty.as_ref().get(.., j..j + 1).to_owned();
            r -= y.as_ref().get(.., j..j + 1) * faer::Scale(theta[j]);
            let yn = y.as_ref().get(.., j..j + 1).norm_l2();
            res[j] = r.norm_l2() / (theta[j].norm() * yn).max(f64::MIN_POSITIVE);
            resid.as_mut().get_mut(.., j..j + 1).copy_from(&r);
        }
        let converged = res.iter().take(nw).take_while(|&&r| r <= opts.tol).count();
        progress(EigenProgress {
            restarts,
            converged,
            wanted: nw,
            applications,
        });
        if converged == nw && nw >= wanted.nearest.min(u) {
            let count = wanted.returned(&abs_sorted, nw);
            let mut vectors = y.as_ref().get(.., ..count).to_owned();
            for j in 0..count {
                let nrm = vectors.as_ref().get(.., j..j + 1).norm_l2();
                let scaled =
                    vectors.as_ref().get(.., j..j + 1) * faer::Scale(c64::new(1.0 / nrm, 0.0));
                vectors.as_mut().get_mut(.., j..j + 1).copy_from(&scaled);
            }
            return Ok(ComplexRitzPairs {
                theta: theta[..count].to_vec(),
                vectors,
                residuals: res[..count].to_vec(),
                applications,
                restarts,
            });
        }
        if restarts >= opts.max_restarts {
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
        // Orthonormal basis of the kept Ritz vectors: S = QR, V ← VQ, TV ← (TV)Q.
        let q = s_keep.qr().compute_thin_Q();
        let new_v = basis.v.as_ref().get(.., ..u) * &q;
        let new_tv = basis.tv.as_ref().get(.., ..u) * &q;
        basis.grow(cap_for(nw));
        basis.v.as_mut().get_mut(.., ..keep).copy_from(&new_v);
        basis.tv.as_mut().get_mut(.., ..keep).copy_from(&new_tv);
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
