//! Sparse symmetric factorisation of the shifted operator A = K − σM.
//!
//! A is real symmetric and indefinite (σ lies inside the spectrum). It is factorised with
//! a fill-reducing ordering by [`super::supernodal_ldlt`] (LDLᵀ with Bunch–Kaufman
//! pivoting inside supernodes, factorised in parallel over the elimination tree; the
//! solver's path), or by faer's supernodal LDLᵀ (unpivoted) or intranode LBLᵀ (the same
//! pivoting, sequential over the supernodes: the reference the parallel factor replaced;
//! faer's numeric factorisations visit the supernodes in one sequential loop and
//! parallelise only inside each supernode's dense kernels).
//! Accuracy of a solve is checked by its residual and improved by iterative refinement
//! x ← x + A⁻¹(b − Ax) when asked.

use crate::error::{FactorStep, SolverError};
use crate::linalg::sparse::{spmv, SparseMatrix};
use crate::linalg::supernodal_ldlt::SupernodalLdlt;
use crate::linalg::tall_skinny::{column, column_mut};
use crate::linalg::triangular::{self, LbltFactor, TreeSchedule};
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::ldlt::factor::LdltRegularization;
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, IntranodeLbltRef, LdltRef,
    SymbolicCholesky, SymbolicCholeskyRaw, SymmetricOrdering,
};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side};

/// Which symmetric factorisation to use.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FactorKind {
    /// faer's LDLᵀ without pivoting.
    Ldlt,
    /// LDLᵀ with 1×1/2×2 Bunch–Kaufman pivoting inside supernodes
    /// ([`super::supernodal_ldlt`], parallel over the elimination tree).
    Lblt,
    /// faer's intranode LBLᵀ (the same pivoting; sequential over the supernodes).
    FaerLblt,
}

enum Numeric {
    Supernodal(Box<SupernodalLdlt<f64>>),
    Ldlt {
        values: Vec<f64>,
    },
    Lblt {
        values: Vec<f64>,
        subdiag: Vec<f64>,
        fwd: Vec<u32>,
        inv: Vec<u32>,
        /// For the tree-parallel solve (supernodal factors only): the schedule and the
        /// combined permutation (fill-reducing ordering, then pivoting).
        tree: Option<Box<(TreeSchedule, Vec<u32>)>>,
    },
}

/// A factorised real symmetric sparse matrix.
pub struct SymmetricFactor {
    /// faer's symbolic factor (None for [`FactorKind::Lblt`], which keeps its own).
    symbolic: Option<SymbolicCholesky<u32>>,
    numeric: Numeric,
    par: Par,
    /// Solve workspaces kept between solves: a fresh multi-megabyte buffer per solve
    /// costs page faults and page clearing comparable to the solve itself (measured:
    /// ~15 % of the eigen iteration).
    workspaces: std::sync::Mutex<Vec<(usize, MemBuffer)>>,
    /// Whether solves need refinement: 0 not yet known, 1 no, 2 yes. Decided by the first
    /// refined solve's residual, so accurate factorisations (the pivoted one, usually)
    /// skip the residual product and its buffers afterwards.
    refine_state: std::sync::atomic::AtomicU8,
}

/// A zeroed vector of `len` entries, or [`SolverError::OutOfMemory`] when it exceeds
/// [`crate::budget::memory_limit`] or the allocator refuses it (the factor's values are the largest single allocation of a solve, and a
/// user's mesh settings decide their size).
pub fn zeroed(len: usize, workspace: &'static str) -> Result<Vec<f64>, SolverError> {
    zeroed_of::<f64>(len, workspace)
}

/// [`zeroed`] for any scalar (f64 or c64 factor values).
pub fn zeroed_of<T: crate::linalg::triangular::FactorScalar>(
    len: usize,
    workspace: &'static str,
) -> Result<Vec<T>, SolverError> {
    let size = std::mem::size_of::<T>();
    let oom = || SolverError::OutOfMemory {
        workspace,
        bytes: len.saturating_mul(size),
    };
    let bytes = len as f64 * size as f64;
    if crate::budget::memory_limit().is_some_and(|limit| bytes > limit) {
        return Err(oom());
    }
    let mut v = Vec::new();
    v.try_reserve_exact(len).map_err(|_| oom())?;
    v.resize(len, T::of(0.0));
    Ok(v)
}

fn as_faer(a: &SparseMatrix) -> SparseColMatRef<'_, u32, f64> {
    // Full symmetric storage: the CSR arrays are also the CSC arrays of Aᵀ = A.
    let n = a.rows();
    let sym = SymbolicSparseColMatRef::new_checked(
        n,
        n,
        a.indptr().into_raw_storage(),
        None,
        a.indices(),
    );
    SparseColMatRef::new(sym, a.data())
}

impl SymmetricFactor {
    /// Factorise `a` (full symmetric storage), with the fill-reducing `ordering`
    /// (forward, inverse) if given, else approximate minimum degree. `par` sets faer's
    /// kernels (its factorisations and solves); [`FactorKind::Lblt`] runs on the threads
    /// of the current rayon pool.
    pub fn new(
        a: &SparseMatrix,
        kind: FactorKind,
        par: Par,
        ordering: Option<(&[u32], &[u32])>,
    ) -> Result<Self, SolverError> {
        Self::with_threads(a, kind, par, ordering, rayon::current_num_threads())
    }

    /// As [`Self::new`], with `threads` groups of subtrees factorised concurrently by
    /// [`FactorKind::Lblt`] (1: its sequential factorisation).
    pub fn with_threads(
        a: &SparseMatrix,
        kind: FactorKind,
        par: Par,
        ordering: Option<(&[u32], &[u32])>,
        threads: usize,
    ) -> Result<Self, SolverError> {
        let af = as_faer(a);
        if kind == FactorKind::Lblt {
            let data = a.data();
            let f =
                SupernodalLdlt::new(a, |p| data[p], ordering, threads, FactorStep::NumericLdlt)?;
            return Ok(Self {
                symbolic: None,
                numeric: Numeric::Supernodal(Box::new(f)),
                par,
                workspaces: std::sync::Mutex::new(Vec::new()),
                refine_state: std::sync::atomic::AtomicU8::new(0),
            });
        }
        let ord = match ordering {
            Some((fwd, inv)) => SymmetricOrdering::Custom(PermRef::new_checked(fwd, inv, a.rows())),
            None => SymmetricOrdering::Amd,
        };
        let symbolic = factorize_symbolic_cholesky(
            af.symbolic(),
            Side::Upper,
            ord,
            CholeskySymbolicParams::default(),
        )
        .map_err(|e| SolverError::FactorFailed {
            step: FactorStep::Symbolic,
            n: a.rows(),
            detail: format!("{e:?}"),
        })?;
        let len = symbolic.len_val();
        let numeric = match kind {
            FactorKind::Ldlt => {
                let mut values = zeroed(len, "factor values")?;
                let req = symbolic.factorize_numeric_ldlt_scratch::<f64>(par, Default::default());
                let mut mem = MemBuffer::try_new(req).map_err(|_| SolverError::OutOfMemory {
                    workspace: "LDLᵀ factorisation workspace",
                    bytes: req.size_bytes(),
                })?;
                symbolic
                    .factorize_numeric_ldlt(
                        &mut values,
                        af,
                        Side::Upper,
                        LdltRegularization::default(),
                        par,
                        MemStack::new(&mut mem),
                        Default::default(),
                    )
                    .map_err(|e| SolverError::FactorFailed {
                        step: FactorStep::NumericLdlt,
                        n: a.rows(),
                        detail: format!("{e:?}"),
                    })?;
                Numeric::Ldlt { values }
            }
            FactorKind::Lblt => unreachable!("handled above"),
            FactorKind::FaerLblt => {
                let n = a.rows();
                let mut values = zeroed(len, "factor values")?;
                let mut subdiag = vec![0.0; n];
                let mut fwd = vec![0u32; n];
                let mut inv = vec![0u32; n];
                let req = symbolic
                    .factorize_numeric_intranode_lblt_scratch::<f64>(par, Default::default());
                let mut mem = MemBuffer::try_new(req).map_err(|_| SolverError::OutOfMemory {
                    workspace: "LBLᵀ factorisation workspace",
                    bytes: req.size_bytes(),
                })?;
                symbolic.factorize_numeric_intranode_lblt(
                    &mut values,
                    &mut subdiag,
                    &mut fwd,
                    &mut inv,
                    af,
                    Side::Upper,
                    par,
                    MemStack::new(&mut mem),
                    Default::default(),
                );
                let tree = match symbolic.raw() {
                    SymbolicCholeskyRaw::Supernodal(sn) => {
                        let fill = symbolic.perm().map(|p| p.arrays().0.to_vec());
                        let perm = fwd
                            .iter()
                            .map(|&d| fill.as_ref().map_or(d, |f| f[d as usize]))
                            .collect();
                        Some(Box::new((
                            TreeSchedule::new(sn, rayon::current_num_threads()),
                            perm,
                        )))
                    }
                    SymbolicCholeskyRaw::Simplicial(_) => None,
                };
                Numeric::Lblt {
                    values,
                    subdiag,
                    fwd,
                    inv,
                    tree,
                }
            }
        };
        Ok(Self {
            symbolic: Some(symbolic),
            numeric,
            par,
            workspaces: std::sync::Mutex::new(Vec::new()),
            refine_state: std::sync::atomic::AtomicU8::new(0),
        })
    }

    /// Number of stored factor entries (a measure of fill and memory).
    pub fn factor_nnz(&self) -> usize {
        match (&self.numeric, &self.symbolic) {
            (Numeric::Supernodal(f), _) => f.factor_nnz(),
            (_, Some(symbolic)) => symbolic.len_val(),
            (_, None) => unreachable!("faer's factors keep their symbolic factor"),
        }
    }

    /// faer's symbolic factor (its factorisations only).
    fn faer_symbolic(&self) -> &SymbolicCholesky<u32> {
        self.symbolic
            .as_ref()
            .expect("faer's factors keep their symbolic factor")
    }

    /// Solve A X = B in place (B has any number of columns). A supernodal LBLᵀ factor is
    /// applied tree-parallel ([`triangular`]); otherwise faer's solve runs on the two
    /// halves of the block concurrently.
    pub fn solve_in_place(&self, rhs: MatMut<'_, f64>) {
        if let Numeric::Supernodal(f) = &self.numeric {
            f.solve_in_place(rhs);
            return;
        }
        if let (
            Numeric::Lblt {
                values,
                subdiag,
                inv,
                tree: Some(tree),
                ..
            },
            SymbolicCholeskyRaw::Supernodal(symbolic),
        ) = (&self.numeric, self.faer_symbolic().raw())
        {
            let (schedule, perm) = &**tree;
            let f = LbltFactor {
                symbolic,
                values,
                subdiag,
                perm,
                pivot_inv: inv,
            };
            triangular::solve(&f, schedule, rhs);
            return;
        }
        self.solve_split(rhs);
    }

    /// faer's own supernodal solve, the two halves of the block on the two cores.
    fn solve_split(&self, rhs: MatMut<'_, f64>) {
        let k = rhs.ncols();
        if k >= 2 && rayon::current_num_threads() >= 2 {
            let (left, right) = rhs.split_at_col_mut(k / 2);
            rayon::join(|| self.solve_block(left), || self.solve_block(right));
        } else {
            self.solve_block(rhs);
        }
    }

    fn solve_block(&self, rhs: MatMut<'_, f64>) {
        let k = rhs.ncols();
        let pooled = self.workspaces.lock().ok().and_then(|mut pool| {
            let i = pool.iter().position(|(cols, _)| *cols >= k)?;
            Some(pool.swap_remove(i))
        });
        let (cols, mut mem) = pooled.unwrap_or_else(|| {
            let req = self
                .faer_symbolic()
                .solve_in_place_scratch::<f64>(k, self.par);
            (k, MemBuffer::new(req))
        });
        self.solve_with(rhs, &mut mem);
        if let Ok(mut pool) = self.workspaces.lock() {
            pool.push((cols, mem));
        }
    }

    fn solve_with(&self, rhs: MatMut<'_, f64>, mem: &mut MemBuffer) {
        let stack = MemStack::new(mem);
        match &self.numeric {
            Numeric::Supernodal(f) => f.solve_in_place(rhs),
            Numeric::Ldlt { values } => {
                LdltRef::new(self.faer_symbolic(), values).solve_in_place_with_conj(
                    Conj::No,
                    rhs,
                    self.par,
                    stack,
                );
            }
            Numeric::Lblt {
                values,
                subdiag,
                fwd,
                inv,
                ..
            } => {
                let perm = PermRef::new_checked(fwd, inv, fwd.len());
                IntranodeLbltRef::new(self.faer_symbolic(), values, subdiag, perm)
                    .solve_in_place_with_conj(Conj::No, rhs, self.par, stack);
            }
        }
    }

    /// Solve, then refine x ← x + A⁻¹(b − Ax) up to `steps` times while the relative
    /// residual of any column exceeds [`REFINE_ABOVE`]. The residual costs one sparse
    /// product per column. The first refined solve decides: if it is accurate without
    /// refinement, the factor is marked as needing none and later solves skip the check
    /// (the accuracy of a factorisation depends on its pivots, not on the right-hand side;
    /// the final eigen-residual check against K and M still guards every returned mode).
    pub fn solve_refined(&self, a: &SparseMatrix, mut rhs: MatMut<'_, f64>, steps: usize) {
        use std::sync::atomic::Ordering::Relaxed;
        if steps == 0 || self.refine_state.load(Relaxed) == 1 {
            self.solve_in_place(rhs);
            return;
        }
        let b = rhs.to_owned();
        self.solve_in_place(rhs.as_mut());
        let (n, k) = (a.rows(), rhs.ncols());
        let mut r = faer::Mat::<f64>::zeros(n, k);
        for _ in 0..steps {
            let mut worst = 0.0f64;
            for j in 0..k {
                let x = column(rhs.as_ref(), j);
                let rj = column_mut(r.as_mut(), j);
                spmv(a, x, rj);
                let bj = column(b.as_ref(), j);
                let (mut rn, mut bn) = (0.0, 0.0);
                for (ri, &bi) in rj.iter_mut().zip(bj) {
                    *ri = bi - *ri;
                    rn += *ri * *ri;
                    bn += bi * bi;
                }
                if bn > 0.0 {
                    worst = worst.max((rn / bn).sqrt());
                }
            }
            if worst <= REFINE_ABOVE {
                // Only an accurate first solve marks the factor as needing no refinement.
                let _ = self.refine_state.compare_exchange(0, 1, Relaxed, Relaxed);
                break;
            }
            self.refine_state.store(2, Relaxed);
            self.solve_in_place(r.as_mut());
            rhs += &r;
        }
    }
}

/// Relative residual above which a solve is refined. The eigen iteration converges to a
/// relative tolerance of 1e-8 (`EigenOptions::default`); solves two orders more accurate
/// do not limit it.
pub const REFINE_ABOVE: f64 = 1e-10;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::k0_squared;
    use crate::fem::assembly::{assemble, RegionMaterial};
    use crate::fem::{NedelecOrder, Space};
    use crate::linalg::ordering::nested_dissection;
    use crate::linalg::sparse::combine;
    use antinode_mesh::structured::{grid_mesh, GridLines};
    use antinode_mesh::RegionInfo;
    use rand::{Rng, SeedableRng};

    /// The tree-parallel solve and faer's solve of the same LBLᵀ factor agree (two paths),
    /// on an indefinite K − σM (box, order 2, σ among the eigenvalues).
    #[test]
    fn tree_solve_matches_faer_solve() {
        let mesh = grid_mesh(
            &GridLines::uniform([0.0; 3], [0.3, 0.3, 0.2], [6, 6, 4]),
            vec![RegionInfo { name: "air".into() }],
            |_| Some(0),
        );
        let space = Space::new(&mesh, NedelecOrder::Two, |_| true);
        let m = assemble(&space, &[RegionMaterial::VACUUM]);
        let a = combine(&[(1.0, &m.stiffness), (-k0_squared(2.45e9), &m.mass_real)]);
        let ord = nested_dissection(&a).expect("ordering");
        let f = SymmetricFactor::new(&a, FactorKind::FaerLblt, Par::Seq, Some((&ord.0, &ord.1)))
            .expect("factor");
        assert!(
            matches!(&f.numeric, Numeric::Lblt { tree: Some(_), .. }),
            "expected a supernodal factor with a tree schedule"
        );
        let n = a.rows();
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        for k in [1, 3, 6] {
            let b = faer::Mat::<f64>::from_fn(n, k, |_, _| rng.gen_range(-1.0..1.0));
            let mut x_tree = b.clone();
            f.solve_in_place(x_tree.as_mut());
            let mut x_faer = b.clone();
            f.solve_split(x_faer.as_mut());
            let diff = (&x_tree - &x_faer).norm_max() / x_faer.norm_max();
            // Same factor, same operations up to summation order: agreement to a few
            // hundred ulps of the solution (condition of the factor's triangles).
            assert!(
                diff < 1e-11,
                "k = {k}: tree vs faer solve differ by {diff:.2e}"
            );
        }
    }
}
