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
        let schedule = TreeSchedule::new(sn, rayon::current_num_threads());
        numeric(
            sn,
            Matrix {
                re,
                im,
                fwd: &fill_fwd,
                inv: &fill_inv,
            },
            &schedule,
            &mut values,
            &mut subdiag,
            &mut pivot_fwd,
        )?;
        let mut pivot_inv = vec![0u32; n];
        for (i, &p) in pivot_fwd.iter().enumerate() {
            pivot_inv[p as usize] = i as u32;
        }
        let perm = pivot_fwd.iter().map(|&p| fill_fwd[p as usize]).collect();
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

/// The factor's storage, shared by the threads of [`numeric`]: each supernode's values,
/// 2×2 subdiagonal and pivot order are written by the one task that factorises it, and
/// read (as a descendant) only after that.
#[derive(Clone, Copy)]
struct Storage {
    values: *mut c64,
    subdiag: *mut c64,
    pivot: *mut u32,
}

// SAFETY: see `numeric`: tasks write disjoint supernodes and read only finished ones.
unsafe impl Send for Storage {}
unsafe impl Sync for Storage {}

/// Per-thread work arrays.
struct Work {
    /// Local row of each global row in the current supernode's pattern, or NONE.
    local: Vec<u32>,
    scratch: Vec<c64>,
    lperm: Vec<u32>,
}

/// The left-looking numeric factorisation (see the module docs), tree-parallel: the
/// schedule's tasks are disjoint subtrees of the elimination tree, and a supernode's
/// descendants lie in its own subtree, so the tasks run on separate threads; the top
/// supernodes (their common ancestors) follow in order, with the dense products of each
/// split over the threads.
fn numeric(
    sn: &Symbolic,
    a: Matrix<'_>,
    schedule: &TreeSchedule,
    values: &mut [c64],
    subdiag: &mut [c64],
    pivot_fwd: &mut [u32],
) -> Result<(), SolverError> {
    use rayon::prelude::*;
    let n = sn.nrows();
    assert!(values.len() == sn.len_val() && subdiag.len() == n && pivot_fwd.len() == n);
    let lists = updaters(sn);
    let store = Storage {
        values: values.as_mut_ptr(),
        subdiag: subdiag.as_mut_ptr(),
        pivot: pivot_fwd.as_mut_ptr(),
    };
    let new_work = || Work {
        local: vec![NONE; n],
        scratch: Vec::new(),
        lperm: Vec::new(),
    };
    schedule
        .tasks()
        .par_iter()
        .try_for_each(|task| -> Result<(), SolverError> {
            let mut work = new_work();
            for &s in task {
                // SAFETY: this task owns s and its subtree (all of s's descendants).
                unsafe {
                    factor_supernode(sn, &a, &lists, s as usize, store, &mut work, Par::Seq)?
                };
            }
            Ok(())
        })?;
    let mut work = new_work();
    let par = Par::rayon(rayon::current_num_threads());
    for &s in schedule.top() {
        // SAFETY: single-threaded here; every task has finished.
        unsafe { factor_supernode(sn, &a, &lists, s as usize, store, &mut work, par)? };
    }
    Ok(())
}

/// Gather supernode s's columns of P A Pᵀ, apply its descendants' updates and factorise
/// its block.
///
/// # Safety
/// The caller owns supernode s (no other thread touches its storage) and every
/// descendant of s is finished and not written meanwhile.
unsafe fn factor_supernode(
    sn: &Symbolic,
    a: &Matrix<'_>,
    lists: &[Vec<u32>],
    s: usize,
    store: Storage,
    work: &mut Work,
    par: Par,
) -> Result<(), SolverError> {
    let (begin, end, ptr) = (
        sn.supernode_begin(),
        sn.supernode_end(),
        sn.col_ptr_for_val(),
    );
    let (s0, s1) = (begin[s] as usize, end[s] as usize);
    let size = s1 - s0;
    let pattern = sn.supernode(s).pattern();
    let local = &mut work.local;
    for (i, &r) in pattern.iter().enumerate() {
        local[r as usize] = (size + i) as u32;
    }
    let len = ptr[s + 1] as usize - ptr[s] as usize;
    let vals = std::slice::from_raw_parts_mut(store.values.add(ptr[s] as usize), len);
    let mut ls = MatMut::from_column_major_slice_mut(vals, size + pattern.len(), size);
    let re_ptr = a.re.indptr();
    let re_ptr = re_ptr.raw_storage();
    let (re_idx, re_val, im_val) = (a.re.indices(), a.re.data(), a.im.data());
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
    for &d in &lists[s] {
        let d = d as usize;
        let d0 = begin[d] as usize;
        let dsize = end[d] as usize - d0;
        let dlen = ptr[d + 1] as usize - ptr[d] as usize;
        let dvals = std::slice::from_raw_parts(store.values.add(ptr[d] as usize), dlen);
        let dsub = std::slice::from_raw_parts(store.subdiag.add(d0), dsize);
        let desc = Descendant {
            pattern: sn.supernode(d).pattern(),
            values: dvals,
            subdiag: dsub,
        };
        update_from(&desc, (s0, s1), local, ls.as_mut(), &mut work.scratch, par);
    }
    work.lperm.resize(size, 0u32);
    let sub = std::slice::from_raw_parts_mut(store.subdiag.add(s0), size);
    bunch_kaufman::factor_in_place(ls, &mut work.lperm, sub, par).map_err(|z| {
        SolverError::FactorFailed {
            step: FactorStep::NumericComplexLdlt,
            n: sn.nrows(),
            detail: format!("zero pivot at column {} of {}", s0 + z.column, sn.nrows()),
        }
    })?;
    let piv = std::slice::from_raw_parts_mut(store.pivot.add(s0), size);
    for (p, &l) in piv.iter_mut().zip(&work.lperm) {
        *p = (s0 + l as usize) as u32;
    }
    for &r in pattern {
        local[r as usize] = NONE;
    }
    Ok(())
}

/// A finished descendant supernode: its pattern, values and 2×2 subdiagonal.
struct Descendant<'a> {
    pattern: &'a [u32],
    values: &'a [c64],
    subdiag: &'a [c64],
}

/// Subtract descendant d's update from supernode s (columns [s0, s1)):
/// L_s −= L_d[rows ≥ s0] D_d L_d[rows in s]ᵀ, scattered to s's rows.
fn update_from(
    d: &Descendant<'_>,
    (s0, s1): (usize, usize),
    local: &[u32],
    mut ls: MatMut<'_, c64>,
    scratch: &mut Vec<c64>,
    par: Par,
) {
    let dpat = d.pattern;
    let dsize = d.subdiag.len();
    let ld = MatRef::from_column_major_slice(d.values, dsize + dpat.len(), dsize);
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
    let dsub = d.subdiag;
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
        par,
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
