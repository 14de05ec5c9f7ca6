//! Tree-parallel block solves with a supernodal LBLᵀ factor, real or complex symmetric.
//!
//! The factor of P A Pᵀ = L B Lᵀ (faer's supernodal intranode-pivoted LBLᵀ of a real
//! symmetric matrix, or [`crate::linalg::complex_ldlt`]'s of a complex symmetric one,
//! transposes throughout and no conjugation: L unit lower
//! triangular and stored by supernodes, B block diagonal with 1×1 and 2×2 blocks, P the
//! fill-reducing ordering composed with the pivoting inside supernodes) is applied as
//!
//!   y = P b,   L z = y (forward),   B w = z,   Lᵀ u = w (backward),   x = Pᵀ u.
//!
//! Supernode s eliminates the columns [start, start + size); its stored block is the
//! dense (size + |pattern|) × size column-major matrix [L_top; L_bot], with L_bot's rows
//! given by the pattern. A supernode updates only rows of its ancestors in the
//! elimination tree, so disjoint subtrees are independent: each thread runs the forward
//! pass of its own subtrees, collecting the updates meant for the shared ancestors
//! ("top" supernodes) in a private buffer; the buffers are summed, the top supernodes
//! finish sequentially; the backward pass runs the top first, then the subtrees again in
//! parallel (they only read top rows). Every entry of L is read once per pass for all
//! right-hand sides together, where two independent half-width solves would read it
//! twice. Each supernode gathers its rows into small column-major blocks and uses faer's
//! dense triangular solve and matrix product on them.
//!
//! Measured on the 2-core machine, blocks of 6 right-hand sides (the eigen iteration's):
//! 14 % less time than faer's own solve run as two concurrent halves on an order-2
//! factor with 59M entries, equal on an order-1 factor with 16M entries; one right-hand
//! side alone is 1.7× faster (both cores share it).
//!
//! Rows of a subtree's supernodes that lie in the subtree come before those in the top
//! part in every pattern (the ancestors inside the subtree end at its root, whose own
//! ancestors have larger indices), so each pattern splits at one point into direct and
//! buffered updates.

use faer::linalg::matmul::matmul;
use faer::linalg::triangular_solve::{
    solve_unit_lower_triangular_in_place, solve_unit_upper_triangular_in_place,
};
use faer::sparse::linalg::cholesky::supernodal::SymbolicSupernodalCholesky;
use faer::{Accum, MatMut, MatRef, Par};

/// Marker for "not in the top part" / "no parent".
const NONE: u32 = u32::MAX;

/// A schedule of the supernodes over threads, built once per factor.
pub struct TreeSchedule {
    /// Supernodes of each parallel task, ascending.
    tasks: Vec<Vec<u32>>,
    /// Top supernodes (ancestors shared by tasks), ascending.
    top: Vec<u32>,
    /// For each supernode: how many leading pattern rows lie inside its own task.
    cut: Vec<u32>,
    /// Position of each row in the top buffer, or NONE.
    top_pos: Vec<u32>,
    /// Number of rows in the top part.
    n_top_rows: usize,
}

/// The scalars a factor can hold: f64 (real symmetric) and c64 (complex symmetric; the
/// solve uses transposes only, never conjugates), and their single-precision forms f32
/// and c32 for the mixed-precision path ([`crate::linalg::mixed`]).
pub trait FactorScalar:
    faer::traits::ComplexField
    + Copy
    + Send
    + Sync
    + PartialEq
    + std::ops::Add<Output = Self>
    + std::ops::Sub<Output = Self>
    + std::ops::Mul<Output = Self>
    + std::ops::Div<Output = Self>
    + std::ops::AddAssign
    + std::ops::SubAssign
    + std::ops::MulAssign
{
    /// The real number x in this type (rounded to single precision for f32 and c32).
    fn of(x: f64) -> Self;
    /// The pivot-search modulus: |x| of a real entry, |re| + |im| of a complex one
    /// (LAPACK's cabs1, cheaper than the true modulus and as good for choosing pivots).
    fn abs1(self) -> f64;
}

impl FactorScalar for f64 {
    fn of(x: f64) -> Self {
        x
    }
    fn abs1(self) -> f64 {
        self.abs()
    }
}
impl FactorScalar for faer::c64 {
    fn of(x: f64) -> Self {
        faer::c64::new(x, 0.0)
    }
    fn abs1(self) -> f64 {
        self.re.abs() + self.im.abs()
    }
}
impl FactorScalar for f32 {
    fn of(x: f64) -> Self {
        x as f32
    }
    fn abs1(self) -> f64 {
        f64::from(self.abs())
    }
}
impl FactorScalar for faer::c32 {
    fn of(x: f64) -> Self {
        faer::c32::new(x as f32, 0.0)
    }
    fn abs1(self) -> f64 {
        f64::from(self.re.abs() + self.im.abs())
    }
}

/// The numeric factor in the form the solve needs.
pub struct LbltFactor<'a, T> {
    pub symbolic: &'a SymbolicSupernodalCholesky<u32>,
    pub values: &'a [T],
    /// B's entry below the diagonal of each 2×2 block (at its first column), else zero.
    pub subdiag: &'a [T],
    /// Combined permutation: row i of P A Pᵀ is row `perm[i]` of A.
    pub perm: &'a [u32],
    /// Pivot permutation inverse (maps a pattern row to its stored position).
    pub pivot_inv: &'a [u32],
}

impl TreeSchedule {
    /// Split the supernodal elimination tree into `threads` groups of whole subtrees of
    /// about equal work plus the top part above them.
    pub fn new(symbolic: &SymbolicSupernodalCholesky<u32>, threads: usize) -> Self {
        let ns = symbolic.n_supernodes();
        let n = symbolic.nrows();
        let begin = symbolic.supernode_begin();
        let end = symbolic.supernode_end();
        let mut sn_of = vec![0u32; n];
        for s in 0..ns {
            sn_of[begin[s] as usize..end[s] as usize].fill(s as u32);
        }
        let mut parent = vec![NONE; ns];
        let mut work = vec![0f64; ns];
        for s in 0..ns {
            let pat = symbolic.supernode(s).pattern();
            if let Some(&first) = pat.iter().min() {
                parent[s] = sn_of[first as usize];
            }
            let size = (end[s] - begin[s]) as f64;
            work[s] = size * (size + pat.len() as f64);
        }
        // Children are numbered before parents: subtree work in one ascending sweep.
        let mut subtree = work.clone();
        let mut children: Vec<Vec<u32>> = vec![Vec::new(); ns];
        for s in 0..ns {
            if parent[s] != NONE {
                subtree[parent[s] as usize] += subtree[s];
                children[parent[s] as usize].push(s as u32);
            }
        }
        let total: f64 = work.iter().sum();
        let mut frontier: Vec<u32> = (0..ns as u32)
            .filter(|&s| parent[s as usize] == NONE)
            .collect();
        let mut top: Vec<u32> = Vec::new();
        let mut top_work = 0.0;
        // Open the largest subtree while it alone exceeds a thread's share and the top
        // part stays small.
        for _ in 0..256 {
            let Some((i, &s)) = frontier
                .iter()
                .enumerate()
                .max_by(|a, b| subtree[*a.1 as usize].total_cmp(&subtree[*b.1 as usize]))
            else {
                break;
            };
            let share = (total - top_work) / threads as f64;
            if threads < 2
                || subtree[s as usize] <= 1.05 * share
                || children[s as usize].is_empty()
                || top_work + work[s as usize] > 0.25 * total
            {
                break;
            }
            frontier.swap_remove(i);
            top.push(s);
            top_work += work[s as usize];
            frontier.extend_from_slice(&children[s as usize]);
        }
        // Largest subtrees first, each to the least loaded thread.
        frontier.sort_by(|a, b| subtree[*b as usize].total_cmp(&subtree[*a as usize]));
        let mut load = vec![0.0f64; threads.max(1)];
        let mut roots: Vec<Vec<u32>> = vec![Vec::new(); threads.max(1)];
        for &s in &frontier {
            let t = (0..load.len())
                .min_by(|&a, &b| load[a].total_cmp(&load[b]))
                .unwrap_or(0);
            load[t] += subtree[s as usize];
            roots[t].push(s);
        }
        let mut owner = vec![NONE; ns];
        let mut tasks: Vec<Vec<u32>> = Vec::new();
        for rs in roots {
            let id = tasks.len() as u32;
            let mut nodes = Vec::new();
            let mut stack = rs;
            while let Some(s) = stack.pop() {
                owner[s as usize] = id;
                nodes.push(s);
                stack.extend_from_slice(&children[s as usize]);
            }
            nodes.sort_unstable();
            if !nodes.is_empty() {
                tasks.push(nodes);
            }
        }
        top.sort_unstable();
        let mut top_pos = vec![NONE; n];
        let mut n_top_rows = 0;
        for &s in &top {
            for r in begin[s as usize]..end[s as usize] {
                top_pos[r as usize] = n_top_rows as u32;
                n_top_rows += 1;
            }
        }
        let cut = (0..ns)
            .map(|s| {
                let pat = symbolic.supernode(s).pattern();
                let inside = pat
                    .iter()
                    .take_while(|&&r| owner[sn_of[r as usize] as usize] != NONE)
                    .count();
                debug_assert!(
                    owner[s] == NONE
                        || pat[inside..]
                            .iter()
                            .all(|&r| owner[sn_of[r as usize] as usize] == NONE),
                    "pattern rows inside the subtree must precede the top rows"
                );
                if owner[s] == NONE {
                    0
                } else {
                    inside as u32
                }
            })
            .collect();
        Self {
            tasks,
            top,
            cut,
            top_pos,
            n_top_rows,
        }
    }
}

impl TreeSchedule {
    /// Supernodes of each parallel task (whole subtrees), ascending.
    pub fn tasks(&self) -> &[Vec<u32>] {
        &self.tasks
    }

    /// The top supernodes (ancestors shared by the tasks), ascending.
    pub fn top(&self) -> &[u32] {
        &self.top
    }
}

/// Raw access to the row-major right-hand sides shared by the tasks.
struct Rows<T> {
    ptr: *mut T,
    k: usize,
}

// SAFETY: tasks touch disjoint rows (their own supernodes' rows for writing; top rows only
// for reading, in the backward pass after the top part is final), see `solve`.
unsafe impl<T> Send for Rows<T> {}
unsafe impl<T> Sync for Rows<T> {}

impl<T> Clone for Rows<T> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<T> Copy for Rows<T> {}

impl<T> Rows<T> {
    /// Row i. The caller guarantees that no other thread writes it meanwhile.
    #[allow(clippy::mut_from_ref)]
    unsafe fn row(&self, i: usize) -> &mut [T] {
        std::slice::from_raw_parts_mut(self.ptr.add(i * self.k), self.k)
    }
}

/// Solve A X = B in place (B: n × k, any k), with the factor and a schedule built for it.
pub fn solve<T: FactorScalar>(f: &LbltFactor<'_, T>, sched: &TreeSchedule, mut rhs: MatMut<'_, T>) {
    let (n, k) = (rhs.nrows(), rhs.ncols());
    if k == 0 || n == 0 {
        return;
    }
    let zero = T::of(0.0);
    let mut x = vec![zero; n * k];
    for (i, &p) in f.perm.iter().enumerate() {
        for j in 0..k {
            x[i * k + j] = rhs[(p as usize, j)];
        }
    }
    let rows = Rows {
        ptr: x.as_mut_ptr(),
        k,
    };
    // Forward and diagonal: tasks in parallel with private top buffers, then the top.
    let buffers: Vec<Vec<T>> = {
        use rayon::prelude::*;
        sched
            .tasks
            .par_iter()
            .map(|task| {
                let mut buf = vec![zero; sched.n_top_rows * k];
                let mut scratch = Scratch::default();
                for &s in task {
                    // SAFETY: the task owns supernode s and its subtree's rows.
                    unsafe { forward(f, sched, s as usize, rows, Some(&mut buf), &mut scratch) };
                }
                buf
            })
            .collect()
    };
    let begin = f.symbolic.supernode_begin();
    let end = f.symbolic.supernode_end();
    for buf in &buffers {
        for &s in &sched.top {
            for r in begin[s as usize] as usize..end[s as usize] as usize {
                let p = sched.top_pos[r] as usize * k;
                for (xv, bv) in x[r * k..(r + 1) * k].iter_mut().zip(&buf[p..p + k]) {
                    *xv += *bv;
                }
            }
        }
    }
    let mut scratch = Scratch::default();
    for &s in &sched.top {
        // SAFETY: single-threaded here.
        unsafe { forward(f, sched, s as usize, rows, None, &mut scratch) };
    }
    // Backward: the top first, then the tasks in parallel.
    for &s in sched.top.iter().rev() {
        // SAFETY: single-threaded here.
        unsafe { backward(f, s as usize, rows, &mut scratch) };
    }
    {
        use rayon::prelude::*;
        sched.tasks.par_iter().for_each(|task| {
            let mut scratch = Scratch::default();
            for &s in task.iter().rev() {
                // SAFETY: writes only the task's own rows; reads top rows, now final.
                unsafe { backward(f, s as usize, rows, &mut scratch) };
            }
        });
    }
    for (i, &p) in f.perm.iter().enumerate() {
        for j in 0..k {
            rhs[(p as usize, j)] = x[i * k + j];
        }
    }
}

/// Per-task scratch: the supernode's own rows and its pattern rows, column-major.
struct Scratch<T> {
    top: Vec<T>,
    bottom: Vec<T>,
}

impl<T> Default for Scratch<T> {
    fn default() -> Self {
        Self {
            top: Vec::new(),
            bottom: Vec::new(),
        }
    }
}

/// The values and pattern of supernode s.
struct Supernode<'a, T> {
    start: usize,
    size: usize,
    pattern: &'a [u32],
    /// (size + |pattern|) × size, column-major.
    val: &'a [T],
}

impl<'a, T> Supernode<'a, T> {
    fn of(f: &LbltFactor<'a, T>, s: usize) -> Self {
        let sym = f.symbolic;
        let start = sym.supernode_begin()[s] as usize;
        let ptr = sym.col_ptr_for_val();
        Self {
            start,
            size: sym.supernode_end()[s] as usize - start,
            pattern: sym.supernode(s).pattern(),
            val: &f.values[ptr[s] as usize..ptr[s + 1] as usize],
        }
    }
    fn rows(&self) -> usize {
        self.size + self.pattern.len()
    }
}

/// The supernode's own rows, column-major per right-hand side: xt[j·size + c].
///
/// # Safety
/// The caller owns the rows of the supernode.
unsafe fn own_rows<'b, T: FactorScalar>(
    sn: &Supernode<'_, T>,
    x: Rows<T>,
    xt: &'b mut Vec<T>,
) -> &'b mut Vec<T> {
    let (size, k) = (sn.size, x.k);
    xt.clear();
    xt.resize(size * k, T::of(0.0));
    for c in 0..size {
        for (j, &v) in x.row(sn.start + c).iter().enumerate() {
            xt[j * size + c] = v;
        }
    }
    xt
}

/// Write the rows gathered by [`own_rows`] back.
///
/// # Safety
/// The caller owns the rows of the supernode.
unsafe fn store_own_rows<T: FactorScalar>(sn: &Supernode<'_, T>, x: Rows<T>, xt: &[T]) {
    for c in 0..sn.size {
        for (j, v) in x.row(sn.start + c).iter_mut().enumerate() {
            *v = xt[j * sn.size + c];
        }
    }
}

/// Forward elimination and diagonal solve of supernode s. Updates for rows past the
/// task's cut go to `buf` (indexed by the top position) when given, else to x directly.
///
/// # Safety
/// The caller owns the rows of s and the rows it updates directly.
unsafe fn forward<T: FactorScalar>(
    f: &LbltFactor<'_, T>,
    sched: &TreeSchedule,
    s: usize,
    x: Rows<T>,
    buf: Option<&mut Vec<T>>,
    scratch: &mut Scratch<T>,
) {
    let sn = Supernode::of(f, s);
    let (size, nr, plen, k) = (sn.size, sn.rows(), sn.pattern.len(), x.k);
    let cut = if buf.is_some() {
        sched.cut[s] as usize
    } else {
        plen
    };
    let xt = own_rows(&sn, x, &mut scratch.top);
    // L_top z = y (unit lower), then the pattern rows' updates t = L_bot z.
    scratch.bottom.clear();
    scratch.bottom.resize(plen * k, T::of(0.0));
    let t = &mut scratch.bottom;
    {
        let l = MatRef::from_column_major_slice(sn.val, nr, size);
        let (l_top, l_bot) = l.split_at_row(size);
        let mut z = MatMut::from_column_major_slice_mut(xt.as_mut_slice(), size, k);
        solve_unit_lower_triangular_in_place(l_top, z.as_mut(), Par::Seq);
        let tm = MatMut::from_column_major_slice_mut(t.as_mut_slice(), plen, k);
        matmul(tm, Accum::Replace, l_bot, z.as_ref(), T::of(1.0), Par::Seq);
    }
    for (idx, &row) in sn.pattern.iter().enumerate().take(cut) {
        let dest = f.pivot_inv[row as usize] as usize;
        for (j, v) in x.row(dest).iter_mut().enumerate() {
            *v -= t[j * plen + idx];
        }
    }
    if let Some(b) = buf {
        for (idx, &row) in sn.pattern.iter().enumerate().skip(cut) {
            let p = sched.top_pos[f.pivot_inv[row as usize] as usize] as usize * k;
            for (j, v) in b[p..p + k].iter_mut().enumerate() {
                *v -= t[j * plen + idx];
            }
        }
    }
    // B⁻¹ on the supernode's rows (1×1 and 2×2 blocks, as faer stores them).
    let sub = &f.subdiag[sn.start..sn.start + size];
    let mut i = 0;
    while i < size {
        let one = T::of(1.0);
        if sub[i] == T::of(0.0) {
            let d = one / sn.val[i * nr + i];
            for j in 0..k {
                xt[j * size + i] *= d;
            }
            i += 1;
        } else {
            // The 2×2 block [[a, b], [b, c]] inverted in the scaled form of LAPACK's
            // xSYTRS: with d11 = a/b, d22 = c/b, x = (d22·y₁ − y₂)/(b(d11 d22 − 1)), …
            let d21 = one / sub[i];
            let d11 = d21 * sn.val[i * nr + i];
            let d22 = d21 * sn.val[(i + 1) * nr + i + 1];
            let denom = one / (d11 * d22 - one);
            for j in 0..k {
                let xk = xt[j * size + i] * d21;
                let xk1 = xt[j * size + i + 1] * d21;
                xt[j * size + i] = (d22 * xk - xk1) * denom;
                xt[j * size + i + 1] = (d11 * xk1 - xk) * denom;
            }
            i += 2;
        }
    }
    store_own_rows(&sn, x, xt);
}

/// Backward substitution of supernode s with Lᵀ.
///
/// # Safety
/// The caller owns the rows of s; the rows it reads are not written meanwhile.
unsafe fn backward<T: FactorScalar>(
    f: &LbltFactor<'_, T>,
    s: usize,
    x: Rows<T>,
    scratch: &mut Scratch<T>,
) {
    let sn = Supernode::of(f, s);
    let (size, nr, plen, k) = (sn.size, sn.rows(), sn.pattern.len(), x.k);
    scratch.bottom.clear();
    scratch.bottom.resize(plen * k, T::of(0.0));
    let t = &mut scratch.bottom;
    for (idx, &row) in sn.pattern.iter().enumerate() {
        for (j, &v) in x.row(f.pivot_inv[row as usize] as usize).iter().enumerate() {
            t[j * plen + idx] = v;
        }
    }
    let xt = own_rows(&sn, x, &mut scratch.top);
    {
        let l = MatRef::from_column_major_slice(sn.val, nr, size);
        let (l_top, l_bot) = l.split_at_row(size);
        let mut u = MatMut::from_column_major_slice_mut(xt.as_mut_slice(), size, k);
        let tm = MatRef::from_column_major_slice(t.as_slice(), plen, k);
        matmul(
            u.as_mut(),
            Accum::Add,
            l_bot.transpose(),
            tm,
            T::of(-1.0),
            Par::Seq,
        );
        solve_unit_upper_triangular_in_place(l_top.transpose(), u.as_mut(), Par::Seq);
    }
    store_own_rows(&sn, x, xt);
}
