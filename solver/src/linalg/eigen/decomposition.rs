//! The Krylov decomposition T V₁ = V₁ H₁₁ + V₂ H₂₁ of the iteration: block steps
//! (apply T to the newest block, block classical Gram–Schmidt twice against the basis,
//! orthonormalisation inside the block through the eigen-decomposition of its Gram
//! matrix) and the Krylov–Schur truncation V₁ ← V₁Q, H₁₁ ← QᴴH₁₁Q, H₂₁ ← H₂₁Q
//! (see the module docs of [`super`]).

use super::{KrylovOperator, KrylovScalar};
use crate::linalg::tall_skinny::{add_times, adjoint_times, times};
use faer::{Mat, MatRef, Side};
use rand_chacha::ChaCha8Rng;

/// The Krylov decomposition T V[.., ..done] = V[.., ..used] H[..used, ..done].
pub(super) struct Decomposition<T> {
    pub(super) v: Mat<T>,
    /// M V (None when the inner product is Euclidean).
    mv: Option<Mat<T>>,
    pub(super) h: Mat<T>,
    pub(super) done: usize,
    pub(super) used: usize,
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
    pub(super) fn new(n: usize, capacity: usize, euclidean: bool) -> Self {
        Self {
            v: Mat::zeros(n, capacity),
            mv: (!euclidean).then(|| Mat::zeros(n, capacity)),
            h: Mat::zeros(capacity, capacity),
            done: 0,
            used: 0,
        }
    }

    pub(super) fn capacity(&self) -> usize {
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
    pub(super) fn append_random<O: KrylovOperator<T>>(
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
    pub(super) fn step<O: KrylovOperator<T>>(
        &mut self,
        op: &O,
        p: usize,
        rng: &mut ChaCha8Rng,
    ) -> usize {
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
    pub(super) fn truncate(&mut self, s: MatRef<'_, T>, m: usize, p: usize) {
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
