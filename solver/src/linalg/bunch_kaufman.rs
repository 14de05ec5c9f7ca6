//! Dense LDLᵀ of a symmetric block, real or complex, with Bunch–Kaufman pivoting (the
//! supernode kernel of [`super::supernodal_ldlt`]).
//!
//! For a symmetric A = Aᵀ (real, or complex with transpose, not conjugate transpose) of
//! order m the
//! factorisation is P A Pᵀ = L D Lᵀ with L unit lower triangular and D block diagonal
//! with 1×1 and 2×2 blocks. The pivot choice is the partial pivoting of Bunch & Kaufman
//! (Math. Comp. 31 (1977) 163–179) with α = (1 + √17)/8, in the form LAPACK's zsytf2 /
//! zlasyf use it (complex modulus |re| + |im|, the absolute value of a real entry): with λ the largest off-diagonal entry of
//! column k (at row r) and σ the largest off-diagonal entry of column r,
//!
//!   |a_kk| ≥ αλ  or  |a_kk|·σ ≥ αλ²  → 1×1 pivot a_kk;
//!   |a_rr| ≥ ασ                       → 1×1 pivot a_rr (swap r and k);
//!   otherwise                         → 2×2 pivot [[a_kk, a_kr], [a_rk, a_rr]].
//!
//! The block is factorised in panels as in zlasyf: within a panel of `PANEL` columns the
//! columns are updated lazily (column c of the reduced matrix is a_c − L_panel W_panelᵀ
//! e_c, with W = L D the updated columns before scaling), so the pivot search sees the
//! current values of any candidate column; after each panel one matrix product updates
//! the trailing part.
//!
//! The block is the top of a supernode's dense column block: the rows below the m×m top
//! (the supernode's pattern rows) are never pivot candidates, so pivoting stays inside
//! the supernode (the same restriction as faer's intranode LBLᵀ). Once the top is
//! factorised they follow from A_bot Pᵀ = L_bot D L_topᵀ as L_bot = A_bot Pᵀ L_top⁻ᵀ D⁻¹:
//! one triangular solve with many right-hand sides (matrix-matrix work) instead of
//! carrying the rows through every panel's column-by-column updates.

use crate::linalg::triangular::FactorScalar;
use faer::linalg::matmul::matmul;
use faer::linalg::matmul::triangular::{self, BlockStructure};
use faer::linalg::triangular_solve::solve_unit_lower_triangular_in_place;
use faer::{Accum, Mat, MatMut, MatRef, Par};

/// Bunch–Kaufman's α = (1 + √17)/8, which minimises the bound on element growth per
/// elimination step (Bunch & Kaufman 1977).
pub const ALPHA: f64 = 0.640_388_203_202_208_4;

/// Columns per panel: the trailing product has inner dimension `PANEL` (a common block
/// size for LAPACK's xSYTRF on current machines; common practice, no source).
const PANEL: usize = 64;

/// A pivot column whose whole reduced column (within the block) is zero: the block is
/// singular.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ZeroPivot {
    /// Column of the block (after pivoting) at which the reduced column vanished.
    pub column: usize,
}

/// Factorise the column block `a` (rows ≥ columns m; the lower triangle of its top m×m
/// part and all rows below hold the block) in place; `par` splits the trailing
/// products over threads.
///
/// On return the strict lower triangle of the top holds L (unit diagonal implied, zero
/// below the first column of each 2×2 block), its diagonal holds D's diagonal,
/// `subdiag[k]` holds D's entry (k+1, k) of a 2×2 block starting at k (zero otherwise),
/// the rows below hold L_bot, and `perm[i]` is the column of the input that became
/// column i. The strict upper triangle of the top is zeroed.
pub fn factor_in_place<T: FactorScalar>(
    a: MatMut<'_, T>,
    perm: &mut [u32],
    subdiag: &mut [T],
    par: Par,
) -> Result<(), ZeroPivot> {
    let (nr, m) = (a.nrows(), a.ncols());
    assert!(nr >= m, "block has fewer rows than columns");
    assert!(
        perm.len() == m && subdiag.len() == m,
        "pivot arrays of order m"
    );
    let (mut top, mut bot) = a.split_at_row_mut(m);
    factor_top(top.as_mut(), perm, subdiag, par)?;
    if nr > m {
        // L_bot = A_bot Pᵀ L_top⁻ᵀ D⁻¹: the pivoting's column order, one triangular solve
        // with the transposed rows, then D⁻¹ by blocks.
        permute_columns(bot.as_mut(), perm);
        solve_unit_lower_triangular_in_place(top.as_ref(), bot.as_mut().transpose_mut(), par);
        scale_by_d_inverse(top.as_ref(), subdiag, bot);
    }
    Ok(())
}

/// Column i of `a` becomes its column `perm[i]`.
fn permute_columns<T: FactorScalar>(mut a: MatMut<'_, T>, perm: &[u32]) {
    let mut row = Vec::with_capacity(perm.len());
    for i in 0..a.nrows() {
        row.clear();
        row.extend(perm.iter().map(|&p| a[(i, p as usize)]));
        for (j, &v) in row.iter().enumerate() {
            a[(i, j)] = v;
        }
    }
}

/// Rows x of `bot` become x D⁻¹ (D: the diagonal of `top` and the 2×2 blocks' `subdiag`).
fn scale_by_d_inverse<T: FactorScalar>(top: MatRef<'_, T>, subdiag: &[T], mut bot: MatMut<'_, T>) {
    let (one, zero) = (T::of(1.0), T::of(0.0));
    let m = top.ncols();
    let mut k = 0;
    while k < m {
        if subdiag[k] == zero {
            let r = one / top[(k, k)];
            for i in 0..bot.nrows() {
                bot[(i, k)] *= r;
            }
            k += 1;
        } else {
            // zlasyf's scaled form, as in `pivot_step`.
            let b = subdiag[k];
            let d11 = top[(k + 1, k + 1)] / b;
            let d22 = top[(k, k)] / b;
            let d21 = one / (d11 * d22 - one) / b;
            for i in 0..bot.nrows() {
                let (x, y) = (bot[(i, k)], bot[(i, k + 1)]);
                bot[(i, k)] = d21 * (d11 * x - y);
                bot[(i, k + 1)] = d21 * (d22 * y - x);
            }
            k += 2;
        }
    }
}

/// Factorise the m × m top (its lower triangle) in place, as [`factor_in_place`] does.
fn factor_top<T: FactorScalar>(
    mut a: MatMut<'_, T>,
    perm: &mut [u32],
    subdiag: &mut [T],
    par: Par,
) -> Result<(), ZeroPivot> {
    let m = a.ncols();
    let zero = T::of(0.0);
    for j in 0..m {
        for i in j + 1..m {
            a[(j, i)] = a[(i, j)];
        }
    }
    for (i, p) in perm.iter_mut().enumerate() {
        *p = i as u32;
    }
    subdiag.fill(zero);
    let nb = PANEL.min(m).max(2);
    let mut w = Mat::<T>::zeros(m, nb);
    let mut k = 0;
    while k < m {
        let start = k;
        // Room for a 2×2 pivot: W columns kw and kw + 1.
        while k < m && k - start + 1 < nb {
            let kstep = pivot_step(a.as_mut(), w.as_mut(), start, k, perm, subdiag)?;
            k += kstep;
        }
        if k < m {
            // Trailing update A[k.., k..] −= L[k.., panel] W[k.., panel]ᵀ, symmetric: the
            // lower triangle by one product, then mirrored (the pivot search and the
            // swaps read whole columns).
            let kb = k - start;
            let (done, rest) = a.as_mut().split_at_col_mut(k);
            let mut trail = rest.subrows_mut(k, m - k);
            triangular::matmul(
                trail.as_mut(),
                BlockStructure::TriangularLower,
                Accum::Add,
                done.as_ref().submatrix(k, start, m - k, kb),
                BlockStructure::Rectangular,
                w.as_ref().submatrix(k, 0, m - k, kb).transpose(),
                BlockStructure::Rectangular,
                T::of(-1.0),
                par,
            );
            for j in 0..m - k {
                for i in j + 1..m - k {
                    trail[(j, i)] = trail[(i, j)];
                }
            }
        }
    }
    for j in 0..m {
        for i in 0..j {
            a[(i, j)] = zero;
        }
    }
    Ok(())
}

/// W[k.., col] = A[k.., c] − L[k.., start..k] W[c, ..k−start]ᵀ: column c of the reduced
/// matrix, from the rows at and below k.
fn updated_column<T: FactorScalar>(
    a: MatRef<'_, T>,
    mut w: MatMut<'_, T>,
    start: usize,
    k: usize,
    c: usize,
    col: usize,
) {
    let nr = a.nrows();
    let kw = k - start;
    for i in k..nr {
        w[(i, col)] = a[(i, c)];
    }
    if kw > 0 {
        let (prev, mut out) = w.as_mut().split_at_col_mut(col);
        matmul(
            out.as_mut().submatrix_mut(k, 0, nr - k, 1),
            Accum::Add,
            a.submatrix(k, start, nr - k, kw),
            prev.as_ref().submatrix(c, 0, 1, kw).transpose(),
            T::of(-1.0),
            Par::Seq,
        );
    }
}

/// Swap unknowns i and j (both ≥ the current column) in the full symmetric top block,
/// the finished columns' rows and the pattern rows' columns.
fn swap_symmetric<T: FactorScalar>(mut a: MatMut<'_, T>, i: usize, j: usize) {
    let (nr, m) = (a.nrows(), a.ncols());
    for c in 0..m {
        let t = a[(i, c)];
        a[(i, c)] = a[(j, c)];
        a[(j, c)] = t;
    }
    for r in 0..nr {
        let t = a[(r, i)];
        a[(r, i)] = a[(r, j)];
        a[(r, j)] = t;
    }
}

/// One Bunch–Kaufman step at column k of the panel begun at `start`: choose the pivot,
/// swap, store L's column(s) and D; returns the pivot order (1 or 2).
fn pivot_step<T: FactorScalar>(
    mut a: MatMut<'_, T>,
    mut w: MatMut<'_, T>,
    start: usize,
    k: usize,
    perm: &mut [u32],
    subdiag: &mut [T],
) -> Result<usize, ZeroPivot> {
    let (nr, m) = (a.nrows(), a.ncols());
    let kw = k - start;
    updated_column(a.as_ref(), w.as_mut(), start, k, k, kw);
    let absakk = T::abs1(w[(k, kw)]);
    let (mut imax, mut colmax) = (k, 0.0f64);
    for i in k + 1..m {
        let v = T::abs1(w[(i, kw)]);
        if v > colmax {
            (imax, colmax) = (i, v);
        }
    }
    if absakk.max(colmax) == 0.0 {
        return Err(ZeroPivot { column: k });
    }
    let (kstep, kp) = if absakk >= ALPHA * colmax {
        (1, k)
    } else {
        updated_column(a.as_ref(), w.as_mut(), start, k, imax, kw + 1);
        let rowmax = (k..m)
            .filter(|&i| i != imax)
            .map(|i| T::abs1(w[(i, kw + 1)]))
            .fold(0.0f64, f64::max);
        if absakk >= ALPHA * colmax * (colmax / rowmax) {
            (1, k)
        } else if T::abs1(w[(imax, kw + 1)]) >= ALPHA * rowmax {
            for i in k..nr {
                w[(i, kw)] = w[(i, kw + 1)];
            }
            (1, imax)
        } else {
            (2, imax)
        }
    };
    let kk = k + kstep - 1;
    if kp != kk {
        swap_symmetric(a.as_mut(), kk, kp);
        for c in 0..w.ncols() {
            let t = w[(kk, c)];
            w[(kk, c)] = w[(kp, c)];
            w[(kp, c)] = t;
        }
        perm.swap(kk, kp);
    }
    let one = T::of(1.0);
    if kstep == 1 {
        let d = w[(k, kw)];
        a[(k, k)] = d;
        let r = one / d;
        for i in k + 1..nr {
            a[(i, k)] = w[(i, kw)] * r;
        }
    } else {
        // [L_k L_k+1] = [w_k w_k+1] D⁻¹ in zlasyf's scaled form (D = [[a, b], [b, c]]:
        // d11 = c/b, d22 = a/b, D⁻¹ = [[d11, −1], [−1, d22]] / (b (d11 d22 − 1))).
        let b = w[(k + 1, kw)];
        let d11 = w[(k + 1, kw + 1)] / b;
        let d22 = w[(k, kw)] / b;
        let t = one / (d11 * d22 - one);
        let d21 = t / b;
        for i in k + 2..nr {
            let (wk, wk1) = (w[(i, kw)], w[(i, kw + 1)]);
            a[(i, k)] = d21 * (d11 * wk - wk1);
            a[(i, k + 1)] = d21 * (d22 * wk1 - wk);
        }
        a[(k, k)] = w[(k, kw)];
        a[(k + 1, k)] = T::of(0.0);
        a[(k + 1, k + 1)] = w[(k + 1, kw + 1)];
        subdiag[k] = b;
    }
    Ok(kstep)
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::c64;
    use rand::{Rng, SeedableRng};

    fn random_c64(rng: &mut rand_chacha::ChaCha8Rng) -> c64 {
        c64::new(rng.gen_range(-1.0..1.0), rng.gen_range(-1.0..1.0))
    }

    /// Factorise a random complex symmetric block (m × m top, `extra` rows below) and
    /// check P A Pᵀ = L D Lᵀ on the top and A_bot Pᵀ = L_bot D L_topᵀ below, entry by entry.
    /// `zero_diag` empties the top's diagonal, which forces 2×2 pivots.
    fn check(m: usize, extra: usize, zero_diag: bool, seed: u64) {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
        let nr = m + extra;
        let mut a0 = Mat::<c64>::zeros(nr, m);
        for j in 0..m {
            for i in j..nr {
                a0[(i, j)] = if i == j && zero_diag {
                    c64::new(0.0, 0.0)
                } else {
                    random_c64(&mut rng)
                };
            }
        }
        let mut f = a0.clone();
        let mut perm = vec![0u32; m];
        let mut sub = vec![c64::new(0.0, 0.0); m];
        factor_in_place(f.as_mut(), &mut perm, &mut sub, Par::Seq).expect("nonsingular block");
        let two_by_two = sub.iter().filter(|z| z.re != 0.0 || z.im != 0.0).count();
        if zero_diag {
            assert!(two_by_two > 0, "a zero diagonal must give 2×2 pivots");
        }
        // L (nr × m, unit top) and D (m × m).
        let l = Mat::<c64>::from_fn(nr, m, |i, j| match i.cmp(&j) {
            std::cmp::Ordering::Equal => c64::new(1.0, 0.0),
            std::cmp::Ordering::Greater => f[(i, j)],
            std::cmp::Ordering::Less => c64::new(0.0, 0.0),
        });
        let d = Mat::<c64>::from_fn(m, m, |i, j| {
            if i == j {
                f[(i, i)]
            } else if i == j + 1 {
                sub[j]
            } else if j == i + 1 {
                sub[i]
            } else {
                c64::new(0.0, 0.0)
            }
        });
        let ldlt = &l * &d * l.as_ref().subrows(0, m).transpose();
        // The permuted input: column c of the result is input column perm[c]; rows of the
        // top likewise; rows below stay.
        let sym = |i: usize, j: usize| if i >= j { a0[(i, j)] } else { a0[(j, i)] };
        let mut worst = 0.0f64;
        for j in 0..m {
            for i in 0..nr {
                let pj = perm[j] as usize;
                let want = if i < m {
                    sym(perm[i] as usize, pj)
                } else {
                    a0[(i, pj)]
                };
                worst = worst.max((ldlt[(i, j)] - want).norm());
            }
        }
        // Bunch–Kaufman is backward stable with growth bounded by (2.57)^(m−1) in the
        // worst case but O(1)·m·ε on random matrices in practice (Higham, Accuracy and
        // Stability of Numerical Algorithms, 2nd ed., §11.1, from memory): 1e-12 leaves
        // two orders of margin over m·ε ≈ 4e-14 at m = 200.
        assert!(worst < 1e-12, "m = {m}: reconstruction error {worst:.2e}");
    }

    #[test]
    fn reconstructs_random_blocks() {
        check(1, 0, false, 1);
        check(5, 3, false, 2);
        check(150, 40, false, 3);
        check(200, 0, false, 4);
    }

    #[test]
    fn zero_diagonal_takes_two_by_two_pivots() {
        check(2, 1, true, 5);
        check(130, 20, true, 6);
    }

    #[test]
    fn singular_block_is_reported() {
        let mut a = Mat::<c64>::zeros(3, 3);
        let (mut p, mut s) = (vec![0u32; 3], vec![c64::new(0.0, 0.0); 3]);
        assert_eq!(
            factor_in_place(a.as_mut(), &mut p, &mut s, Par::Seq),
            Err(ZeroPivot { column: 0 })
        );
    }
}
