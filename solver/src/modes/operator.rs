//! The shifted operator: built, factorised, and applied as the shift-invert operator of
//! the eigen iteration.
//!
//! * Real (lossless, no ports): A = K − σM′, factorised as LBLᵀ (or LDLᵀ);
//!   T = A⁻¹M′ is self-adjoint in the M′-inner product.
//! * Complex (lossy loads or ports): A = K + jβP − σ(M′ − jM″) = Ar + jAi with
//!   Ar = K + Re(jβ)P − σM′ and Ai = Im(jβ)P + σM″ on one pattern; A is complex
//!   symmetric and is factorised natively as P A Pᵀ = L D Lᵀ
//!   ([`crate::linalg::complex_ldlt`]); its real symmetric 2n form
//!   [[Ar, −Ai], [−Ai, −Ar]] ([`crate::linalg::sparse::real_form`]) is kept as the
//!   reference the native factor is tested against ([`ComplexForm::RealForm`]);
//!   T = A⁻¹(M′ − jM″) in the Euclidean inner product.
//!
//! The pieces are separate so that other solves (a driven response at one frequency:
//! A x = b with σ = k0²) can build and factorise A the same way and call
//! [`ComplexFactor::solve`].

use crate::error::SolverError;
use crate::fem::assembly::SystemMatrices;
use crate::fem::port::PortTerms;
use crate::linalg::complex_ldlt::ComplexSymmetricFactor;
use crate::linalg::eigen::KrylovOperator;
use crate::linalg::factor::{FactorKind, SymmetricFactor, REFINE_ABOVE};
use crate::linalg::mixed::{FactorPrecision, MixedFactor, MixedSummary};
use crate::linalg::ordering::doubled;
use crate::linalg::sparse::{combine, diagonal, real_form, spmm, spmm_complex, SparseMatrix};
use faer::{c64, Mat, MatMut, MatRef, Par};
use std::sync::atomic::{AtomicU8, Ordering::Relaxed};

/// A factorised real symmetric matrix, kept with the matrix for residual-checked
/// refinement: a double factor (refined when its first residual check asks), or a
/// single-precision one refined in double on every solve.
pub struct RefinedFactor {
    pub matrix: SparseMatrix,
    inner: RealInner,
    /// Refinement steps per solve of a double factor (0 or 1; see
    /// [`SymmetricFactor::solve_refined`]).
    pub refine: usize,
}

enum RealInner {
    Double(SymmetricFactor),
    Single(MixedFactor<f64>),
}

impl RefinedFactor {
    /// Factorise `matrix` with the fill-reducing `ordering` (forward, inverse) if given.
    /// The default pivoted factor (`linalg::supernodal_ldlt`) uses the rayon pool's
    /// threads itself (subtrees, then the top supernodes' products); `Par::Seq` here only
    /// governs faer's reference factorisations.
    pub fn new(
        matrix: SparseMatrix,
        kind: FactorKind,
        ordering: Option<&(Vec<u32>, Vec<u32>)>,
        refine: usize,
    ) -> Result<Self, SolverError> {
        Self::with_precision(matrix, kind, ordering, refine, FactorPrecision::Double)
    }

    /// As [`Self::new`] in the given precision (single: the pivoted supernodal LBLᵀ in
    /// f32, whatever `kind` says).
    pub fn with_precision(
        matrix: SparseMatrix,
        kind: FactorKind,
        ordering: Option<&(Vec<u32>, Vec<u32>)>,
        refine: usize,
        precision: FactorPrecision,
    ) -> Result<Self, SolverError> {
        let ord = ordering.map(|(f, i)| (&f[..], &i[..]));
        let inner = match precision {
            FactorPrecision::Double => {
                RealInner::Double(SymmetricFactor::new(&matrix, kind, Par::Seq, ord)?)
            }
            FactorPrecision::Single => RealInner::Single(MixedFactor::real(&matrix, ord)?),
        };
        Ok(Self {
            matrix,
            inner,
            refine,
        })
    }

    /// Stored entries of the factor.
    pub fn factor_nnz(&self) -> usize {
        match &self.inner {
            RealInner::Double(f) => f.factor_nnz(),
            RealInner::Single(f) => f.factor_nnz(),
        }
    }

    /// The refinement counts of a single-precision factor (None for a double one).
    pub fn mixed_summary(&self) -> Option<MixedSummary> {
        match &self.inner {
            RealInner::Double(_) => None,
            RealInner::Single(f) => Some(f.summary()),
        }
    }

    /// Solve A X = B in place.
    pub fn solve(&self, rhs: MatMut<'_, f64>) {
        match &self.inner {
            RealInner::Double(f) => f.solve_refined(&self.matrix, rhs, self.refine),
            RealInner::Single(f) => {
                let a = &self.matrix;
                f.solve_in_place(&|x, y| spmm(a, x, y), rhs);
            }
        }
    }
}

/// K − σM′.
pub fn shifted_real(sys: &SystemMatrices, sigma: f64) -> SparseMatrix {
    combine(&[(1.0, &sys.stiffness), (-sigma, &sys.mass_real)])
}

/// A complex symmetric matrix A = Ar + jAi with both parts on one pattern.
pub struct ComplexParts {
    pub re: SparseMatrix,
    pub im: SparseMatrix,
}

/// K + jβP − σ(M′ − jM″) with the port terms `ports` on the diagonal.
pub fn shifted_complex(sys: &SystemMatrices, sigma: f64, ports: &PortTerms) -> ComplexParts {
    let n = sys.n();
    let port_diag = |part: fn(c64) -> f64| -> SparseMatrix {
        let entries: Vec<(usize, f64)> = (0..ports.len())
            .map(|p| (ports.base + p, part(ports.jbeta[p]) * ports.norm[p]))
            .collect();
        diagonal(n, &entries)
    };
    let p_re = port_diag(|z| z.re);
    let p_im = port_diag(|z| z.im);
    let mut re_terms = vec![
        (1.0, &sys.stiffness),
        (-sigma, &sys.mass_real),
        (1.0, &p_re),
    ];
    let mut im_terms = vec![(0.0, &sys.stiffness), (1.0, &p_im)];
    if let Some(mi) = &sys.mass_imag {
        im_terms.push((sigma, mi));
        re_terms.push((0.0, mi));
    }
    // Both parts on one pattern (the union), as the real 2n form requires.
    let all: Vec<(f64, &SparseMatrix)> = re_terms
        .iter()
        .chain(&im_terms)
        .map(|&(_, m)| (0.0, m))
        .collect();
    let pattern = combine(&all);
    let with_pattern = |terms: &[(f64, &SparseMatrix)]| {
        let mut t = terms.to_vec();
        t.push((0.0, &pattern));
        combine(&t)
    };
    ComplexParts {
        re: with_pattern(&re_terms),
        im: with_pattern(&im_terms),
    }
}

/// How a complex symmetric matrix is factorised.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ComplexForm {
    /// Native complex symmetric LDLᵀ of the n × n matrix (the solver's path).
    Native,
    /// Real symmetric factor of the 2n form (the reference the native path is tested
    /// against; about twice the memory and several times the time).
    RealForm(FactorKind),
}

enum ComplexInner {
    Native(ComplexSymmetricFactor),
    Single(MixedFactor<c64>),
    RealForm(RefinedFactor),
}

/// A factorised complex symmetric matrix.
pub struct ComplexFactor {
    pub parts: ComplexParts,
    inner: ComplexInner,
    /// Refinement steps per solve (0 or 1), native path.
    refine: usize,
    /// As [`SymmetricFactor`]'s: 0 not yet known, 1 no refinement needed, 2 needed.
    refine_state: AtomicU8,
}

impl ComplexFactor {
    /// Factorise `parts` in the given `form`; `ordering` (forward, inverse) is a
    /// fill-reducing ordering of the n × n pattern (interleaved for the 2n form).
    pub fn new(
        parts: ComplexParts,
        form: ComplexForm,
        ordering: Option<&(Vec<u32>, Vec<u32>)>,
        refine: usize,
    ) -> Result<Self, SolverError> {
        Self::with_precision(parts, form, ordering, refine, FactorPrecision::Double)
    }

    /// As [`Self::new`] in the given precision: single factorises the n × n complex
    /// symmetric matrix natively in c32 ([`MixedFactor`]) whatever `form` says.
    pub fn with_precision(
        parts: ComplexParts,
        form: ComplexForm,
        ordering: Option<&(Vec<u32>, Vec<u32>)>,
        refine: usize,
        precision: FactorPrecision,
    ) -> Result<Self, SolverError> {
        let ord = ordering.map(|(f, i)| (&f[..], &i[..]));
        let inner = match (precision, form) {
            (FactorPrecision::Single, _) => {
                ComplexInner::Single(MixedFactor::complex(&parts.re, &parts.im, ord)?)
            }
            (FactorPrecision::Double, ComplexForm::Native) => {
                ComplexInner::Native(ComplexSymmetricFactor::new(&parts.re, &parts.im, ord)?)
            }
            (FactorPrecision::Double, ComplexForm::RealForm(kind)) => {
                let big = real_form(&parts.re, &parts.im);
                let ordering2 = ordering.map(|(f, _)| doubled(f));
                ComplexInner::RealForm(RefinedFactor::new(big, kind, ordering2.as_ref(), refine)?)
            }
        };
        Ok(Self {
            parts,
            inner,
            refine,
            refine_state: AtomicU8::new(0),
        })
    }

    /// Order n of the complex system.
    pub fn n(&self) -> usize {
        self.parts.re.rows()
    }

    /// Stored entries of the factor (complex ones natively, real ones in the 2n form).
    pub fn factor_nnz(&self) -> usize {
        match &self.inner {
            ComplexInner::Native(f) => f.factor_nnz(),
            ComplexInner::Single(f) => f.factor_nnz(),
            ComplexInner::RealForm(f) => f.factor_nnz(),
        }
    }

    /// The refinement counts of a single-precision factor (None for a double one).
    pub fn mixed_summary(&self) -> Option<MixedSummary> {
        match &self.inner {
            ComplexInner::Single(f) => Some(f.summary()),
            _ => None,
        }
    }

    /// Bytes of the factor's values (16 per complex entry, 8 per real one; single
    /// precision half that).
    pub fn factor_bytes(&self) -> usize {
        match &self.inner {
            ComplexInner::Native(f) => 16 * f.factor_nnz(),
            ComplexInner::Single(f) => f.factor_bytes(),
            ComplexInner::RealForm(f) => 8 * f.factor_nnz(),
        }
    }

    /// Solve A X = B in place, refined as [`SymmetricFactor::solve_refined`] is: the
    /// first solve's residual decides whether later ones need a refinement step.
    pub fn solve_in_place(&self, mut rhs: MatMut<'_, c64>) {
        let f = match &self.inner {
            ComplexInner::Native(f) => f,
            ComplexInner::Single(f) => {
                let (re, im) = (&self.parts.re, &self.parts.im);
                f.solve_in_place(&|x, y| spmm_complex(re, im, x, y), rhs);
                return;
            }
            ComplexInner::RealForm(f) => {
                let (n, k) = (self.n(), rhs.ncols());
                let mut big = Mat::<f64>::from_fn(2 * n, k, |i, j| {
                    if i < n {
                        rhs[(i, j)].re
                    } else {
                        -rhs[(i - n, j)].im
                    }
                });
                f.solve(big.as_mut());
                for j in 0..k {
                    for i in 0..n {
                        rhs[(i, j)] = c64::new(big[(i, j)], big[(n + i, j)]);
                    }
                }
                return;
            }
        };
        if self.refine == 0 || self.refine_state.load(Relaxed) == 1 {
            f.solve_in_place(rhs);
            return;
        }
        let b = rhs.to_owned();
        f.solve_in_place(rhs.as_mut());
        let mut r = Mat::<c64>::zeros(self.n(), rhs.ncols());
        for _ in 0..self.refine {
            spmm_complex(&self.parts.re, &self.parts.im, rhs.as_ref(), r.as_mut());
            r = &b - &r;
            let worst = (0..b.ncols())
                .map(|j| {
                    let bn = b.col(j).norm_l2();
                    if bn > 0.0 {
                        r.col(j).norm_l2() / bn
                    } else {
                        0.0
                    }
                })
                .fold(0.0, f64::max);
            if worst <= REFINE_ABOVE {
                let _ = self.refine_state.compare_exchange(0, 1, Relaxed, Relaxed);
                break;
            }
            self.refine_state.store(2, Relaxed);
            f.solve_in_place(r.as_mut());
            rhs += &r;
        }
    }

    /// X = A⁻¹ B for a complex block B.
    pub fn solve(&self, b: MatRef<'_, c64>) -> Mat<c64> {
        let mut x = b.to_owned();
        self.solve_in_place(x.as_mut());
        x
    }
}

/// T = (K − σM′)⁻¹ M′ in the M′-inner product.
pub struct RealShiftInvert<'a> {
    pub factor: RefinedFactor,
    pub mass: &'a SparseMatrix,
}

impl KrylovOperator<f64> for RealShiftInvert<'_> {
    fn dim(&self) -> usize {
        self.mass.rows()
    }
    fn euclidean(&self) -> bool {
        false
    }
    fn metric(&self, x: MatRef<'_, f64>, y: MatMut<'_, f64>) {
        spmm(self.mass, x, y);
    }
    /// T V = (K − σM)⁻¹ (M V): the stored M V saves the mass product.
    fn apply(&self, _v: MatRef<'_, f64>, mv: MatRef<'_, f64>, mut y: MatMut<'_, f64>) {
        y.copy_from(mv);
        self.factor.solve(y);
    }
}

/// T = (K + jβP − σ(M′ − jM″))⁻¹ (M′ − jM″) in the Euclidean inner product.
///
/// Measured (README, Performance): on the lossless box forced through this path the
/// iteration needs the real path's number of solves, and the M′-inner product xᴴM′y
/// (T is then self-adjoint on lossless problems, nearly so on lossy ones) changed
/// nothing on the lossy slab while storing M′V; the Euclidean product is kept.
pub struct ComplexShiftInvert<'a> {
    pub factor: ComplexFactor,
    pub m_re: &'a SparseMatrix,
    pub m_im: Option<&'a SparseMatrix>,
}

/// Y = (M′ − jM″) X (M″ absent: Y = M′X) for a complex block X, in one pass over the
/// shared pattern of M′ and M″ with every row's products for all columns together.
pub fn complex_mass_times(
    m_re: &SparseMatrix,
    m_im: Option<&SparseMatrix>,
    x: MatRef<'_, c64>,
    mut y: MatMut<'_, c64>,
) {
    use rayon::prelude::*;
    let (n, k) = (x.nrows(), x.ncols());
    assert!(
        m_re.cols() == n && m_im.is_none_or(|mi| mi.indptr() == m_re.indptr()),
        "complex_mass_times: shapes"
    );
    assert_eq!(
        (y.nrows(), y.ncols()),
        (m_re.rows(), k),
        "complex_mass_times: output"
    );
    if k == 0 {
        return;
    }
    let zero = c64::new(0.0, 0.0);
    let mut xt = vec![zero; n * k];
    xt.par_chunks_mut(k)
        .with_min_len(1024)
        .enumerate()
        .for_each(|(i, row)| {
            for (j, v) in row.iter_mut().enumerate() {
                *v = x[(i, j)];
            }
        });
    let indptr = m_re.indptr();
    let indptr = indptr.raw_storage();
    let (idx, re) = (m_re.indices(), m_re.data());
    let im = m_im.map(|mi| mi.data());
    let mut yt = vec![zero; m_re.rows() * k];
    yt.par_chunks_mut(k)
        .with_min_len(256)
        .enumerate()
        .for_each(|(r, out)| {
            for p in indptr[r] as usize..indptr[r + 1] as usize {
                let xs = &xt[idx[p] as usize * k..(idx[p] as usize + 1) * k];
                match im {
                    Some(im) => {
                        let v = c64::new(re[p], -im[p]);
                        for (o, &xv) in out.iter_mut().zip(xs) {
                            *o += v * xv;
                        }
                    }
                    None => {
                        for (o, &xv) in out.iter_mut().zip(xs) {
                            *o += xv * re[p];
                        }
                    }
                }
            }
        });
    for j in 0..k {
        for (i, row) in yt.chunks_exact(k).enumerate() {
            y[(i, j)] = row[j];
        }
    }
}

impl KrylovOperator<c64> for ComplexShiftInvert<'_> {
    fn dim(&self) -> usize {
        self.m_re.rows()
    }
    fn euclidean(&self) -> bool {
        true
    }
    fn metric(&self, x: MatRef<'_, c64>, mut y: MatMut<'_, c64>) {
        y.copy_from(x);
    }
    fn apply(&self, x: MatRef<'_, c64>, _metric_x: MatRef<'_, c64>, mut y: MatMut<'_, c64>) {
        complex_mass_times(self.m_re, self.m_im, x, y.as_mut());
        self.factor.solve_in_place(y);
    }
}
