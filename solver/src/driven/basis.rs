//! Orthonormal bases for the sweep's projection: complex blocks of one expansion point's
//! Krylov space, and the real basis V the model is projected on, with the reduced
//! matrices Vᵀ A_i V kept up to date as columns are appended.
//!
//! Orthogonalisation is block classical Gram–Schmidt applied twice ("twice is enough":
//! Giraud, Langou & Rozložník, Comput. Math. Appl. 50 (2005) 1069, from memory), then a
//! column-by-column normalisation that drops (deflates) columns whose norm fell below
//! [`DEFLATION`] of their norm before orthogonalisation: such a column lies in the span
//! already held to working accuracy.

use super::affine::AffineSystem;
use crate::linalg::eigen::KrylovScalar;
use crate::linalg::sparse::spmm;
use crate::linalg::tall_skinny::{add_times, adjoint_times};
use faer::{c64, Mat, MatRef};

/// Relative norm below which an orthogonalised column is dropped: ~1e4 × the unit
/// round-off, so that round-off left by two Gram–Schmidt passes never survives as a new
/// direction (common practice, no source).
pub const DEFLATION: f64 = 1e-10;

fn column_norm<T: KrylovScalar>(x: MatRef<'_, T>, j: usize) -> f64 {
    (0..x.nrows())
        .map(|i| x[(i, j)].modulus().powi(2))
        .sum::<f64>()
        .sqrt()
}

/// Orthonormalise the columns of `w` against the orthonormal columns of `q` and among
/// themselves; returns the surviving columns (possibly none).
pub fn orthonormalise<T: KrylovScalar>(q: MatRef<'_, T>, w: MatRef<'_, T>) -> Mat<T> {
    let mut w = w.to_owned();
    let n = w.nrows();
    let before: Vec<f64> = (0..w.ncols()).map(|j| column_norm(w.as_ref(), j)).collect();
    if q.ncols() > 0 {
        for _ in 0..2 {
            let c = adjoint_times(q, w.as_ref());
            add_times(w.as_mut(), q, c.as_ref(), T::one_impl().scaled(-1.0));
        }
    }
    // Within the block: modified Gram–Schmidt, twice per column.
    let mut kept: Vec<usize> = Vec::new();
    for j in 0..w.ncols() {
        for _ in 0..2 {
            for &i in &kept {
                let mut d = T::zero_impl();
                for r in 0..n {
                    d += w[(r, i)].conjugate() * w[(r, j)];
                }
                for r in 0..n {
                    let wi = w[(r, i)];
                    w[(r, j)] -= wi * d;
                }
            }
        }
        let nrm = column_norm(w.as_ref(), j);
        if before[j] > 0.0 && nrm > DEFLATION * before[j] {
            for r in 0..n {
                w[(r, j)] = w[(r, j)].scaled(1.0 / nrm);
            }
            kept.push(j);
        }
    }
    Mat::from_fn(n, kept.len(), |i, c| w[(i, kept[c])])
}

/// The real orthonormal basis V and the reduced operator pieces Vᵀ A_i V, Vᵀ b_p.
///
/// A real basis spanning Re and Im of the complex Krylov vectors keeps every structure of
/// the full system in the reduced one: Vᵀ A_i V is real symmetric, positive
/// (semi-)definite where A_i is, so the reduced model is complex symmetric (reciprocal)
/// and satisfies the same discrete energy balance as the full model (passive).
pub struct RealBasis {
    pub v: Mat<f64>,
    /// Vᵀ A_i V per term.
    pub reduced: Vec<Mat<f64>>,
    /// Vᵀ b_p (m × P).
    pub sources: Mat<f64>,
    /// Which expansion point generated each column.
    pub origin: Vec<usize>,
}

impl RealBasis {
    pub fn new(n: usize, system: &AffineSystem) -> Self {
        Self {
            v: Mat::zeros(n, 0),
            reduced: system.terms.iter().map(|_| Mat::zeros(0, 0)).collect(),
            sources: Mat::zeros(0, system.n_sources()),
            origin: Vec::new(),
        }
    }

    pub fn dim(&self) -> usize {
        self.v.ncols()
    }

    /// Append the directions of Re and Im of the complex block `w` that V does not hold
    /// yet; update the reduced matrices. Returns the number of columns added.
    pub fn extend(&mut self, system: &AffineSystem, w: MatRef<'_, c64>, origin: usize) -> usize {
        let (n, b) = (w.nrows(), w.ncols());
        let parts = Mat::<f64>::from_fn(n, 2 * b, |i, c| {
            if c < b {
                w[(i, c)].re
            } else {
                w[(i, c - b)].im
            }
        });
        let new = orthonormalise(self.v.as_ref(), parts.as_ref());
        let (m0, add) = (self.dim(), new.ncols());
        if add == 0 {
            return 0;
        }
        let m = m0 + add;
        let mut v = Mat::<f64>::zeros(n, m);
        v.as_mut().get_mut(.., ..m0).copy_from(self.v.as_ref());
        v.as_mut().get_mut(.., m0..).copy_from(new.as_ref());
        self.v = v;
        self.origin.extend(std::iter::repeat_n(origin, add));
        let mut z = Mat::<f64>::zeros(n, add);
        for (t, term) in system.terms.iter().enumerate() {
            spmm(term.matrix, new.as_ref(), z.as_mut());
            // Columns m0.. of Vᵀ A V; the rows m0.. follow by symmetry.
            let block = adjoint_times(self.v.as_ref(), z.as_ref());
            let mut r = Mat::<f64>::zeros(m, m);
            r.as_mut()
                .get_mut(..m0, ..m0)
                .copy_from(self.reduced[t].as_ref());
            for j in 0..add {
                for i in 0..m {
                    r[(i, m0 + j)] = block[(i, j)];
                }
            }
            for j in 0..add {
                for i in 0..m0 {
                    r[(m0 + j, i)] = block[(i, j)];
                }
            }
            // Symmetrise the new diagonal block (round-off of the two triangles).
            for a in 0..add {
                for c in a + 1..add {
                    let s = 0.5 * (r[(m0 + a, m0 + c)] + r[(m0 + c, m0 + a)]);
                    r[(m0 + a, m0 + c)] = s;
                    r[(m0 + c, m0 + a)] = s;
                }
            }
            self.reduced[t] = r;
        }
        let mut s = Mat::<f64>::zeros(m, system.n_sources());
        s.as_mut()
            .get_mut(..m0, ..)
            .copy_from(self.sources.as_ref());
        for (p, src) in system.sources.iter().enumerate() {
            for &(i, val) in &src.entries {
                for j in m0..m {
                    s[(j, p)] += self.v[(i, j)] * val;
                }
            }
        }
        self.sources = s;
        add
    }
}
