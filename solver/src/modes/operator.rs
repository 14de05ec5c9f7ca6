//! The shifted operator: built, factorised, and applied as the shift-invert operator of
//! the eigen iteration.
//!
//! * Real (lossless, no ports): A = K − σM′, factorised as LBLᵀ (or LDLᵀ);
//!   T = A⁻¹M′ is self-adjoint in the M′-inner product.
//! * Complex (lossy loads or ports): A = K + jβP − σ(M′ − jM″) = Ar + jAi with
//!   Ar = K + Re(jβ)P − σM′ and Ai = Im(jβ)P + σM″ on one pattern; A is complex
//!   symmetric and is factorised through its real symmetric 2n form
//!   [[Ar, −Ai], [−Ai, −Ar]] ([`crate::linalg::sparse::real_form`]);
//!   T = A⁻¹(M′ − jM″) in the Euclidean inner product.
//!
//! The pieces are separate so that other solves (a driven response at one frequency:
//! A x = b with σ = k0²) can build and factorise A the same way and call
//! [`ComplexFactor::solve`].

use crate::error::SolverError;
use crate::fem::assembly::SystemMatrices;
use crate::fem::port::PortTerms;
use crate::linalg::eigen::KrylovOperator;
use crate::linalg::factor::{FactorKind, SymmetricFactor};
use crate::linalg::ordering::doubled;
use crate::linalg::sparse::{combine, diagonal, real_form, spmm, SparseMatrix};
use faer::{c64, Mat, MatMut, MatRef, Par};

/// A factorised real symmetric matrix, kept with the matrix for residual-checked
/// refinement.
pub struct RefinedFactor {
    pub matrix: SparseMatrix,
    pub factor: SymmetricFactor,
    /// Refinement steps per solve (0 or 1; see [`SymmetricFactor::solve_refined`]).
    pub refine: usize,
}

impl RefinedFactor {
    /// Factorise `matrix` (sequential supernodal kernels: faster than faer's threaded
    /// ones on two cores) with the fill-reducing `ordering` (forward, inverse) if given.
    pub fn new(
        matrix: SparseMatrix,
        kind: FactorKind,
        ordering: Option<&(Vec<u32>, Vec<u32>)>,
        refine: usize,
    ) -> Result<Self, SolverError> {
        let factor = SymmetricFactor::new(
            &matrix,
            kind,
            Par::Seq,
            ordering.map(|(f, i)| (&f[..], &i[..])),
        )?;
        Ok(Self {
            matrix,
            factor,
            refine,
        })
    }

    /// Stored entries of the factor.
    pub fn factor_nnz(&self) -> usize {
        self.factor.factor_nnz()
    }

    /// Solve A X = B in place.
    pub fn solve(&self, rhs: MatMut<'_, f64>) {
        self.factor.solve_refined(&self.matrix, rhs, self.refine);
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

/// A factorised complex symmetric matrix, solved through its real 2n form.
pub struct ComplexFactor {
    pub parts: ComplexParts,
    /// The factorised 2n form.
    pub real_form: RefinedFactor,
}

impl ComplexFactor {
    /// Build the 2n form of `parts` and factorise it; `ordering` (forward, inverse) is a
    /// fill-reducing ordering of the n × n pattern, applied to both halves.
    pub fn new(
        parts: ComplexParts,
        kind: FactorKind,
        ordering: Option<&(Vec<u32>, Vec<u32>)>,
        refine: usize,
    ) -> Result<Self, SolverError> {
        let big = real_form(&parts.re, &parts.im);
        let ordering2 = ordering.map(|(f, _)| doubled(f));
        let real_form = RefinedFactor::new(big, kind, ordering2.as_ref(), refine)?;
        Ok(Self { parts, real_form })
    }

    /// Order n of the complex system.
    pub fn n(&self) -> usize {
        self.parts.re.rows()
    }

    /// Solve A X = B given in 2n form: `rhs` = [Re B; −Im B] in, [Re X; Im X] out.
    pub fn solve_real_form(&self, rhs: MatMut<'_, f64>) {
        self.real_form.solve(rhs);
    }

    /// X = A⁻¹ B for a complex block B.
    pub fn solve(&self, b: MatRef<'_, c64>) -> Mat<c64> {
        let (n, k) = (self.n(), b.ncols());
        let mut rhs = Mat::<f64>::from_fn(2 * n, k, |i, j| {
            if i < n {
                b[(i, j)].re
            } else {
                -b[(i - n, j)].im
            }
        });
        self.solve_real_form(rhs.as_mut());
        Mat::from_fn(n, k, |i, j| c64::new(rhs[(i, j)], rhs[(n + i, j)]))
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
pub struct ComplexShiftInvert<'a> {
    pub factor: ComplexFactor,
    pub m_re: &'a SparseMatrix,
    pub m_im: Option<&'a SparseMatrix>,
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
        let (n, k) = (self.dim(), x.ncols());
        let xr = Mat::<f64>::from_fn(n, k, |i, j| x[(i, j)].re);
        let xi = Mat::<f64>::from_fn(n, k, |i, j| x[(i, j)].im);
        // b = (M′ − jM″)(xr + j xi): br = M′xr + M″xi, bi = M′xi − M″xr; rhs [br; −bi].
        let mut rhs = Mat::<f64>::zeros(2 * n, k);
        let (mut top, mut bottom) = rhs.as_mut().split_at_row_mut(n);
        spmm(self.m_re, xr.as_ref(), top.as_mut());
        spmm(self.m_re, xi.as_ref(), bottom.as_mut());
        bottom *= faer::Scale(-1.0);
        if let Some(mi) = self.m_im {
            let mut t = Mat::<f64>::zeros(n, k);
            spmm(mi, xi.as_ref(), t.as_mut());
            top += &t;
            spmm(mi, xr.as_ref(), t.as_mut());
            bottom += &t;
        }
        self.factor.solve_real_form(rhs.as_mut());
        for j in 0..k {
            for i in 0..n {
                y[(i, j)] = c64::new(rhs[(i, j)], rhs[(n + i, j)]);
            }
        }
    }
}
