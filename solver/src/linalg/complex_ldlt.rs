//! Sparse LDLᵀ of a complex symmetric matrix (A = Aᵀ, not Hermitian), supernodal, with
//! Bunch–Kaufman pivoting inside supernodes.
//!
//! The lossy and fed problems give A = Ar + jAi with real symmetric Ar, Ai on one
//! pattern. Factorising A itself (n unknowns, complex entries) instead of the real 2n form
//! [[Ar, −Ai], [−Ai, −Ar]] halves the factor's memory (one 16-byte entry of the n × n
//! factor against four 8-byte ones of the 2n factor, with equal fill per block) and
//! needs about a quarter of the real flops... measured figures are in the README.
//!
//! * Symbolic: faer's supernodal symbolic Cholesky of the n × n pattern with the given
//!   fill-reducing ordering (METIS nested dissection): supernodes, their row patterns.
//! * Numeric, left-looking by supernodes in elimination order: supernode s gathers its
//!   columns of P A Pᵀ (lower part), subtracts the updates L_d[s rows] D_d L_d[s and
//!   below]ᵀ of every descendant d whose pattern meets s's columns (dense products,
//!   transposes only), then factorises its dense column block with
//!   [`super::bunch_kaufman`] (LAPACK zsytrf's pivoting, Bunch & Kaufman, Math. Comp. 31
//!   (1977); pivots confined to the supernode, as in faer's intranode LBLᵀ of real
//!   matrices).
//! * Solve: the tree-parallel block solves of [`super::triangular`] in complex arithmetic.
//!
//! Descendants are applied before the ancestor is pivoted, so their rows refer to the
//! ancestor's columns before pivoting; the solve maps them through the pivot inverse.

use crate::error::{FactorStep, SolverError};
use crate::linalg::bunch_kaufman;
use crate::linalg::sparse::SparseMatrix;
use crate::linalg::triangular::{self, LbltFactor, TreeSchedule};
use faer::linalg::matmul::matmul;
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::supernodal::SymbolicSupernodalCholesky;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, SymbolicCholesky, SymbolicCholeskyRaw,
    SymmetricOrdering,
};
use faer::sparse::linalg::SupernodalThreshold;
use faer::sparse::SymbolicSparseColMatRef;
use faer::{c64, Accum, MatMut, MatRef, Par, Side};

type Symbolic = SymbolicSupernodalCholesky<u32>;

/// Marker for "not a pattern row of the current supernode".
const NONE: u32 = u32::MAX;

/// A factorised complex symmetric sparse matrix P A Pᵀ = L D Lᵀ.
pub struct ComplexSymmetricFactor {
    symbolic: SymbolicCholesky<u32>,
    values: Vec<c64>,
    subdiag: Vec<c64>,
    /// Combined permutation: row i of P A Pᵀ is row `perm[i]` of A.
    perm: Vec<u32>,
    /// Pivot inverse: stored position of each column of the fill-ordered matrix.
    pivot_inv: Vec<u32>,
    schedule: TreeSchedule,
}

fn symbolic_error(n: usize, detail: String) -> SolverError {
    SolverError::FactorFailed {
        step: FactorStep::Symbolic,
        n,
        detail,
    }
}

impl ComplexSymmetricFactor {
    /// Factorise A = `re` + j`im` (full symmetric storage, one pattern for both parts)
    /// with the fill-reducing `ordering` (forward, inverse) if given, else minimum degree.
    pub fn new(
        re: &SparseMatrix,
        im: &SparseMatrix,
        ordering: Option<(&[u32], &[u32])>,
    ) -> Result<Self, SolverError> {
        let n = re.rows();
        assert!(
            im.rows() == n && re.indptr() == im.indptr() && re.indices() == im.indices(),
            "real and imaginary parts must share one pattern"
        );
        let pattern = SymbolicSparseColMatRef::new_checked(
            n,
            n,
            re.indptr().into_raw_storage(),
            None,
            re.indices(),
        );
        let ord = match ordering {
            Some((fwd, inv)) => SymmetricOrdering::Custom(PermRef::new_checked(fwd, inv, n)),
            None => SymmetricOrdering::Amd,
        };
        let params = CholeskySymbolicParams {
            supernodal_flop_ratio_threshold: SupernodalThreshold::FORCE_SUPERNODAL,
            ..Default::default()
        };
        let symbolic = factorize_symbolic_cholesky(pattern, Side::Upper, ord, params)
            .map_err(|e| symbolic_error(n, format!("{e:?}")))?;
        let SymbolicCholeskyRaw::Supernodal(sn) = symbolic.raw() else {
            return Err(symbolic_error(n, "no supernodal structure".into()));
        };
        let (fill_fwd, fill_inv): (Vec<u32>, Vec<u32>) = match symbolic.perm() {
            Some(p) => (p.arrays().0.to_vec(), p.arrays().1.to_vec()),
            None => ((0..n as u32).collect(), (0..n as u32).collect()),
        };
        let mut values = vec![c64::new(0.0, 0.0); sn.len_val()];
        let mut subdiag = vec![c64::new(0.0, 0.0); n];
        let mut pivot_fwd = vec![0u32; n];
        numeric(
            sn,
            Matrix {
                re,
                im,
                fwd: &fill_fwd,
                inv: &fill_inv,
            },
            &mut values,
            &mut subdiag,
            &mut pivot_fwd,
        )?;
        let mut pivot_inv = vec![0u32; n];
        for (i, &p) in pivot_fwd.iter().enumerate() {
            pivot_inv[p as usize] = i as u32;
        }
        let perm = pivot_fwd.iter().map(|&p| fill_fwd[p as usize]).collect();
        let schedule = TreeSchedule::new(sn, rayon::current_num_threads());
        Ok(Self {
            symbolic,
            values,
            subdiag,
            perm,
            pivot_inv,
            schedule,
        })
    }

    /// Order n.
    pub fn n(&self) -> usize {
        self.perm.len()
    }

    /// Stored complex entries of the factor.
    pub fn factor_nnz(&self) -> usize {
        self.values.len()
    }

    /// Solve A X = B in place (any number of columns), tree-parallel.
    pub fn solve_in_place(&self, rhs: MatMut<'_, c64>) {
        let SymbolicCholeskyRaw::Supernodal(symbolic) = self.symbolic.raw() else {
            unreachable!("the factor is built supernodal");
        };
        let f = LbltFactor {
            symbolic,
            values: &self.values,
            subdiag: &self.subdiag,
            perm: &self.perm,
            pivot_inv: &self.pivot_inv,
        };
        triangular::solve(&f, &self.schedule, rhs);
    }
}

/// The input matrix with its fill-reducing ordering.
struct Matrix<'a> {
    re: &'a SparseMatrix,
    im: &'a SparseMatrix,
    fwd: &'a [u32],
    inv: &'a [u32],
}

/// For each supernode, the descendants whose patterns meet its columns (ascending).
fn updaters(sn: &Symbolic) -> Vec<Vec<u32>> {
    let ns = sn.n_supernodes();
    let (begin, end) = (sn.supernode_begin(), sn.supernode_end());
    let mut sn_of = vec![0u32; sn.nrows()];
    for s in 0..ns {
        sn_of[begin[s] as usize..end[s] as usize].fill(s as u32);
    }
    let mut lists: Vec<Vec<u32>> = vec![Vec::new(); ns];
    for d in 0..ns {
        let mut last = NONE;
        for &r in sn.supernode(d).pattern() {
            let s = sn_of[r as usize];
            if s != last {
                lists[s as usize].push(d as u32);
                last = s;
            }
        }
    }
    lists
}

/// The left-looking numeric factorisation (see the module docs).
fn numeric(
    sn: &Symbolic,
    a: Matrix<'_>,
    values: &mut [c64],
    subdiag: &mut [c64],
    pivot_fwd: &mut [u32],
) -> Result<(), SolverError> {
    let n = sn.nrows();
    let ns = sn.n_supernodes();
    let (begin, end, ptr) = (
        sn.supernode_begin(),
        sn.supernode_end(),
        sn.col_ptr_for_val(),
    );
    let lists = updaters(sn);
    let mut local = vec![NONE; n];
    let mut scratch = Vec::new();
    let mut lperm = Vec::new();
    let (re_ptr, re_idx) = (a.re.indptr(), a.re.indices());
    let re_ptr = re_ptr.raw_storage();
    let (re_val, im_val) = (a.re.data(), a.im.data());
    for s in 0..ns {
        let (s0, s1) = (begin[s] as usize, end[s] as usize);
        let size = s1 - s0;
        let pattern = sn.supernode(s).pattern();
        for (i, &r) in pattern.iter().enumerate() {
            local[r as usize] = (size + i) as u32;
        }
        let (head, tail) = values.split_at_mut(ptr[s] as usize);
        let len = ptr[s + 1] as usize - ptr[s] as usize;
        let mut ls =
            MatMut::from_column_major_slice_mut(&mut tail[..len], size + pattern.len(), size);
        for j in s0..s1 {
            // Column j of P A Pᵀ is column fwd[j] of A (= row fwd[j]: symmetric storage).
            let orig = a.fwd[j] as usize;
            for p in re_ptr[orig] as usize..re_ptr[orig + 1] as usize {
                let i = a.inv[re_idx[p] as usize] as usize;
                if i < j {
                    continue;
                }
                let row = if i < s1 { i - s0 } else { local[i] as usize };
                ls[(row, j - s0)] += c64::new(re_val[p], im_val[p]);
            }
        }
        let (sub_done, sub_s) = subdiag.split_at_mut(s0);
        for &d in &lists[s] {
            let cols = (s0, s1);
            update_from(
                sn,
                d as usize,
                cols,
                head,
                sub_done,
                &local,
                ls.as_mut(),
                &mut scratch,
            );
        }
        lperm.resize(size, 0u32);
        bunch_kaufman::factor_in_place(ls, &mut lperm, &mut sub_s[..size]).map_err(|z| {
            SolverError::FactorFailed {
                step: FactorStep::NumericComplexLdlt,
                n,
                detail: format!("zero pivot at column {} of {n}", s0 + z.column),
            }
        })?;
        for (i, &p) in lperm.iter().enumerate() {
            pivot_fwd[s0 + i] = (s0 + p as usize) as u32;
        }
        for &r in pattern {
            local[r as usize] = NONE;
        }
    }
    Ok(())
}

/// Subtract descendant d's update from supernode s (columns [s0, s1)):
/// L_s −= L_d[rows ≥ s0] D_d L_d[rows in s]ᵀ, scattered to s's rows. `sub` is the
/// factor's 2×2 subdiagonal for the columns before s0.
#[allow(clippy::too_many_arguments)]
fn update_from(
    sn: &Symbolic,
    d: usize,
    (s0, s1): (usize, usize),
    head: &[c64],
    sub: &[c64],
    local: &[u32],
    mut ls: MatMut<'_, c64>,
    scratch: &mut Vec<c64>,
) {
    let ptr = sn.col_ptr_for_val();
    let d0 = sn.supernode_begin()[d] as usize;
    let dsize = sn.supernode_end()[d] as usize - d0;
    let dpat = sn.supernode(d).pattern();
    let ld = MatRef::from_column_major_slice(
        &head[ptr[d] as usize..ptr[d + 1] as usize],
        dsize + dpat.len(),
        dsize,
    );
    let first = dpat.partition_point(|&r| (r as usize) < s0);
    let mid = dpat[first..].partition_point(|&r| (r as usize) < s1);
    let below = dpat.len() - first;
    let l_mid_bot = ld.subrows(dsize + first, below);
    let l_mid = l_mid_bot.subrows(0, mid);
    // scratch = [L_mid D (mid × dsize) | product (below × mid)], column-major.
    scratch.clear();
    scratch.resize(mid * dsize + below * mid, c64::new(0.0, 0.0));
    let (ldd, prod) = scratch.split_at_mut(mid * dsize);
    let mut ldd = MatMut::from_column_major_slice_mut(ldd, mid, dsize);
    let dsub = &sub[d0..d0 + dsize];
    let mut j = 0;
    while j < dsize {
        let a = ld[(j, j)];
        if dsub[j] == c64::new(0.0, 0.0) {
            for i in 0..mid {
                ldd[(i, j)] = l_mid[(i, j)] * a;
            }
            j += 1;
        } else {
            // D block [[a, b], [b, c]] (symmetric, no conjugation).
            let (b, c) = (dsub[j], ld[(j + 1, j + 1)]);
            for i in 0..mid {
                let (x, y) = (l_mid[(i, j)], l_mid[(i, j + 1)]);
                ldd[(i, j)] = x * a + y * b;
                ldd[(i, j + 1)] = x * b + y * c;
            }
            j += 2;
        }
    }
    let mut prod = MatMut::from_column_major_slice_mut(prod, below, mid);
    matmul(
        prod.as_mut(),
        Accum::Replace,
        l_mid_bot,
        ldd.as_ref().transpose(),
        c64::new(1.0, 0.0),
        Par::Seq,
    );
    for (jj, &col) in dpat[first..first + mid].iter().enumerate() {
        let js = col as usize - s0;
        for (ii, &row) in dpat[first..].iter().enumerate().skip(jj) {
            let r = row as usize;
            let is = if r < s1 { r - s0 } else { local[r] as usize };
            ls[(is, js)] -= prod[(ii, jj)];
        }
    }
}

#[cfg(test)]
#[path = "complex_ldlt_tests.rs"]
mod tests;
