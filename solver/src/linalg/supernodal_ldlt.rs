//! Sparse supernodal LDLᵀ of a symmetric matrix, real (f64) or complex symmetric (c64,
//! A = Aᵀ, not Hermitian), with Bunch–Kaufman pivoting inside supernodes, factorised in
//! parallel over the elimination tree.
//!
//! * Symbolic: faer's supernodal symbolic Cholesky of the pattern with the given
//!   fill-reducing ordering (METIS nested dissection): supernodes, their row patterns.
//! * Numeric, left-looking by supernodes in elimination order: supernode s gathers its
//!   columns of P A Pᵀ (lower part), subtracts the updates L_d[s rows] D_d L_d[s and
//!   below]ᵀ of every descendant d whose pattern meets s's columns (dense products,
//!   transposes only), then factorises its dense column block with
//!   [`super::bunch_kaufman`] (LAPACK xsytrf's pivoting, Bunch & Kaufman, Math. Comp. 31
//!   (1977); pivots confined to the supernode, as in faer's intranode LBLᵀ).
//! * Parallel: a supernode's descendants lie in its own subtree of the elimination tree,
//!   so disjoint subtrees are independent. The subtrees of the solve's
//!   [`TreeSchedule`] (whole subtrees of about equal work, one group per thread) are
//!   factorised on separate threads, each with sequential dense kernels; the top
//!   supernodes (their common ancestors, the largest dense blocks) follow in elimination
//!   order, each with its dense products (descendant updates and the panel's trailing
//!   update) split over the threads (faer's `Par::rayon`).
//! * Solve: the tree-parallel block solves of [`super::triangular`].
//!
//! The parallel and the sequential factorisation perform the same operations on every
//! supernode in the same order; only the threaded products of the top supernodes may sum
//! in another order, so the two factors agree to rounding.
//!
//! Descendants are applied before the ancestor is pivoted, so their rows refer to the
//! ancestor's columns before pivoting; the solve maps them through the pivot inverse.

use crate::error::{FactorStep, SolverError};
use crate::linalg::bunch_kaufman;
use crate::linalg::factor::zeroed_of;
use crate::linalg::sparse::SparseMatrix;
use crate::linalg::triangular::{self, FactorScalar, LbltFactor, TreeSchedule};
use faer::linalg::matmul::matmul;
use faer::linalg::matmul::triangular::{matmul as triangular_matmul, BlockStructure};
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::supernodal::SymbolicSupernodalCholesky;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, SymbolicCholesky, SymbolicCholeskyRaw,
    SymmetricOrdering,
};
use faer::sparse::linalg::SupernodalThreshold;
use faer::sparse::SymbolicSparseColMatRef;
use faer::{Accum, MatMut, MatRef, Par, Side};

type Symbolic = SymbolicSupernodalCholesky<u32>;

/// Marker for "not a pattern row of the current supernode".
const NONE: u32 = u32::MAX;

/// A factorised symmetric sparse matrix P A Pᵀ = L D Lᵀ.
pub struct SupernodalLdlt<T> {
    symbolic: SymbolicCholesky<u32>,
    values: Vec<T>,
    subdiag: Vec<T>,
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

/// The input matrix: its pattern (full symmetric CSR storage), the value of its p-th
/// stored entry, and the fill-reducing ordering.
struct Matrix<'a, F> {
    pattern: &'a SparseMatrix,
    value: F,
    fwd: &'a [u32],
    inv: &'a [u32],
}

/// The supernodal symbolic factorisation [`SupernodalLdlt::new`] starts with, of a
/// pattern in CSR form (row pointers, sorted column indices; full symmetric storage).
fn symbolic_of(
    n: usize,
    indptr: &[u32],
    indices: &[u32],
    ordering: Option<(&[u32], &[u32])>,
) -> Result<SymbolicCholesky<u32>, SolverError> {
    let sym = SymbolicSparseColMatRef::new_checked(n, n, indptr, None, indices);
    let ord = match ordering {
        Some((fwd, inv)) => SymmetricOrdering::Custom(PermRef::new_checked(fwd, inv, n)),
        None => SymmetricOrdering::Amd,
    };
    let params = CholeskySymbolicParams {
        supernodal_flop_ratio_threshold: SupernodalThreshold::FORCE_SUPERNODAL,
        ..Default::default()
    };
    factorize_symbolic_cholesky(sym, Side::Upper, ord, params)
        .map_err(|e| symbolic_error(n, format!("{e:?}")))
}

/// Stored entries the factor of a matrix with this pattern (CSR row pointers and sorted
/// column indices, full symmetric storage) will have under `ordering`: exactly the count
/// [`SupernodalLdlt::new`] allocates, from the same symbolic factorisation, without any
/// numeric work.
pub fn factor_entries_of_pattern(
    indptr: &[u32],
    indices: &[u32],
    ordering: Option<(&[u32], &[u32])>,
) -> Result<usize, SolverError> {
    let n = indptr.len().saturating_sub(1);
    let symbolic = symbolic_of(n, indptr, indices, ordering)?;
    match symbolic.raw() {
        SymbolicCholeskyRaw::Supernodal(sn) => Ok(sn.len_val()),
        SymbolicCholeskyRaw::Simplicial(_) => {
            Err(symbolic_error(n, "no supernodal structure".into()))
        }
    }
}

impl<T: FactorScalar> SupernodalLdlt<T> {
    /// Factorise the matrix with pattern `pattern` (full symmetric storage) whose p-th
    /// stored entry is `value(p)`, with the fill-reducing `ordering` (forward, inverse)
    /// if given, else minimum degree. `threads` groups of subtrees are factorised
    /// concurrently (1: the sequential factorisation); a zero pivot is reported as a
    /// failure of `step`.
    pub fn new(
        pattern: &SparseMatrix,
        value: impl Fn(usize) -> T + Sync,
        ordering: Option<(&[u32], &[u32])>,
        threads: usize,
        step: FactorStep,
    ) -> Result<Self, SolverError> {
        let n = pattern.rows();
        let symbolic = symbolic_of(
            n,
            pattern.indptr().into_raw_storage(),
            pattern.indices(),
            ordering,
        )?;
        let SymbolicCholeskyRaw::Supernodal(sn) = symbolic.raw() else {
            return Err(symbolic_error(n, "no supernodal structure".into()));
        };
        let (fill_fwd, fill_inv): (Vec<u32>, Vec<u32>) = match symbolic.perm() {
            Some(p) => (p.arrays().0.to_vec(), p.arrays().1.to_vec()),
            None => ((0..n as u32).collect(), (0..n as u32).collect()),
        };
        let mut values = zeroed_of::<T>(sn.len_val(), "factor values")?;
        let mut subdiag = vec![T::of(0.0); n];
        let mut pivot_fwd = vec![0u32; n];
        let threads = threads.max(1);
        let schedule = TreeSchedule::new(sn, threads);
        let a = Matrix {
            pattern,
            value,
            fwd: &fill_fwd,
            inv: &fill_inv,
        };
        let out = Output {
            values: &mut values,
            subdiag: &mut subdiag,
            pivot_fwd: &mut pivot_fwd,
        };
        numeric(sn, &a, &schedule, threads, out, step)?;
        let mut pivot_inv = vec![0u32; n];
        for (i, &p) in pivot_fwd.iter().enumerate() {
            pivot_inv[p as usize] = i as u32;
        }
        let perm = pivot_fwd.iter().map(|&p| fill_fwd[p as usize]).collect();
        // The solve's schedule: one group of subtrees per thread of the pool it runs on.
        let schedule = if threads == rayon::current_num_threads() {
            schedule
        } else {
            TreeSchedule::new(sn, rayon::current_num_threads())
        };
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

    /// Stored entries of the factor.
    pub fn factor_nnz(&self) -> usize {
        self.values.len()
    }

    /// The factor's values (supernode blocks in order), D's 2×2 subdiagonal and the
    /// combined permutation, for comparing two factorisations.
    pub fn parts(&self) -> (&[T], &[T], &[u32]) {
        (&self.values, &self.subdiag, &self.perm)
    }

    /// Solve A X = B in place (any number of columns), tree-parallel.
    pub fn solve_in_place(&self, rhs: MatMut<'_, T>) {
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

/// The factor's arrays, filled by [`numeric`].
struct Output<'a, T> {
    values: &'a mut [T],
    subdiag: &'a mut [T],
    pivot_fwd: &'a mut [u32],
}

/// The factor's storage, shared by the threads of [`numeric`]: each supernode's values,
/// 2×2 subdiagonal and pivot order are written by the one task that factorises it, and
/// read (as a descendant) only after that.
struct Storage<T> {
    values: *mut T,
    subdiag: *mut T,
    pivot: *mut u32,
}

impl<T> Clone for Storage<T> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<T> Copy for Storage<T> {}

// SAFETY: see `numeric`: tasks write disjoint supernodes and read only finished ones.
unsafe impl<T: Send> Send for Storage<T> {}
unsafe impl<T: Sync> Sync for Storage<T> {}

/// Per-thread work arrays.
struct Work<T> {
    /// Local row of each global row in the current supernode's pattern, or NONE.
    local: Vec<u32>,
    scratch: Vec<T>,
    lperm: Vec<u32>,
}

/// The left-looking numeric factorisation (see the module docs), tree-parallel: the
/// schedule's tasks are disjoint subtrees, run on separate threads; the top supernodes
/// follow in order with their dense products split over `threads` threads.
fn numeric<T: FactorScalar, F: Fn(usize) -> T + Sync>(
    sn: &Symbolic,
    a: &Matrix<'_, F>,
    schedule: &TreeSchedule,
    threads: usize,
    out: Output<'_, T>,
    step: FactorStep,
) -> Result<(), SolverError> {
    use rayon::prelude::*;
    let n = sn.nrows();
    assert!(out.values.len() == sn.len_val() && out.subdiag.len() == n && out.pivot_fwd.len() == n);
    let lists = updaters(sn);
    let store = Storage {
        values: out.values.as_mut_ptr(),
        subdiag: out.subdiag.as_mut_ptr(),
        pivot: out.pivot_fwd.as_mut_ptr(),
    };
    let new_work = || Work {
        local: vec![NONE; n],
        scratch: Vec::new(),
        lperm: Vec::new(),
    };
    let run_task = |task: &Vec<u32>| -> Result<(), SolverError> {
        let mut work = new_work();
        for &s in task {
            // SAFETY: this task owns s and its subtree (all of s's descendants).
            unsafe {
                factor_supernode(sn, a, &lists, s as usize, store, &mut work, Par::Seq, step)?
            };
        }
        Ok(())
    };
    if threads > 1 {
        schedule.tasks().par_iter().try_for_each(run_task)?;
    } else {
        schedule.tasks().iter().try_for_each(run_task)?;
    }
    let mut work = new_work();
    let par = if threads > 1 {
        Par::rayon(threads)
    } else {
        Par::Seq
    };
    for &s in schedule.top() {
        // SAFETY: single-threaded here; every task has finished.
        unsafe { factor_supernode(sn, a, &lists, s as usize, store, &mut work, par, step)? };
    }
    Ok(())
}

/// Gather supernode s's columns of P A Pᵀ, apply its descendants' updates and factorise
/// its block.
///
/// # Safety
/// The caller owns supernode s (no other thread touches its storage) and every
/// descendant of s is finished and not written meanwhile.
#[allow(clippy::too_many_arguments)]
unsafe fn factor_supernode<T: FactorScalar, F: Fn(usize) -> T>(
    sn: &Symbolic,
    a: &Matrix<'_, F>,
    lists: &[Vec<u32>],
    s: usize,
    store: Storage<T>,
    work: &mut Work<T>,
    par: Par,
    step: FactorStep,
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
    let a_ptr = a.pattern.indptr();
    let a_ptr = a_ptr.raw_storage();
    let a_idx = a.pattern.indices();
    for j in s0..s1 {
        // Column j of P A Pᵀ is column fwd[j] of A (= row fwd[j]: symmetric storage).
        let orig = a.fwd[j] as usize;
        let (lo, hi) = (a_ptr[orig] as usize, a_ptr[orig + 1] as usize);
        for (p, &c) in (lo..hi).zip(&a_idx[lo..hi]) {
            let i = a.inv[c as usize] as usize;
            if i < j {
                continue;
            }
            let row = if i < s1 { i - s0 } else { local[i] as usize };
            ls[(row, j - s0)] += (a.value)(p);
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
            step,
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
struct Descendant<'a, T> {
    pattern: &'a [u32],
    values: &'a [T],
    subdiag: &'a [T],
}

/// Subtract descendant d's update from supernode s (columns [s0, s1)):
/// L_s −= L_d[rows ≥ s0] D_d L_d[rows in s]ᵀ, scattered to s's rows.
fn update_from<T: FactorScalar>(
    d: &Descendant<'_, T>,
    (s0, s1): (usize, usize),
    local: &[u32],
    mut ls: MatMut<'_, T>,
    scratch: &mut Vec<T>,
    par: Par,
) {
    let zero = T::of(0.0);
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
    scratch.resize(mid * dsize + below * mid, zero);
    let (ldd, prod) = scratch.split_at_mut(mid * dsize);
    let mut ldd = MatMut::from_column_major_slice_mut(ldd, mid, dsize);
    let dsub = d.subdiag;
    let mut j = 0;
    while j < dsize {
        let a = ld[(j, j)];
        if dsub[j] == zero {
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
    let (prod_mid, prod_bot) = prod.as_mut().split_at_row_mut(mid);
    // The mid × mid block is symmetric: only its lower triangle is needed.
    triangular_matmul(
        prod_mid,
        BlockStructure::TriangularLower,
        Accum::Replace,
        l_mid,
        BlockStructure::Rectangular,
        ldd.as_ref().transpose(),
        BlockStructure::Rectangular,
        T::of(1.0),
        par,
    );
    matmul(
        prod_bot,
        Accum::Replace,
        l_mid_bot.subrows(mid, below - mid),
        ldd.as_ref().transpose(),
        T::of(1.0),
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
#[path = "supernodal_ldlt_tests.rs"]
mod tests;
