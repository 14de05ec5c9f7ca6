//! Products of tall, skinny dense blocks (n × m with n ≫ m), split by rows over threads.
//!
//! The eigen iterations spend their non-solve time in three shapes: Vᴴ W (an m × b
//! matrix of inner products), W − V C and V S. faer's own threading of these shapes
//! synchronises inside every call and measured slower than sequential on 2 cores; one
//! sequential product per contiguous row range, run on rayon's threads, needs one join
//! per call instead.

use faer::linalg::matmul::matmul;
use faer::traits::ComplexField;
use faer::{Accum, Mat, MatMut, MatRef, Par};
use rayon::prelude::*;

/// Fewest rows a thread is given: below this a split costs more than it saves.
const MIN_ROWS: usize = 4096;

fn ranges(n: usize) -> Vec<std::ops::Range<usize>> {
    let parts = rayon::current_num_threads().min(n / MIN_ROWS).max(1);
    (0..parts)
        .map(|i| (i * n / parts)..((i + 1) * n / parts))
        .collect()
}

/// Aᴴ B (A: n × m, B: n × b).
pub fn adjoint_times<T: ComplexField>(a: MatRef<'_, T>, b: MatRef<'_, T>) -> Mat<T> {
    assert_eq!(a.nrows(), b.nrows(), "adjoint_times: row counts differ");
    let parts: Vec<Mat<T>> = ranges(a.nrows())
        .into_par_iter()
        .map(|r| {
            let mut c = Mat::<T>::zeros(a.ncols(), b.ncols());
            matmul(
                c.as_mut(),
                Accum::Replace,
                a.get(r.clone(), ..).adjoint(),
                b.get(r, ..),
                T::one_impl(),
                Par::Seq,
            );
            c
        })
        .collect();
    let mut sum = Mat::<T>::zeros(a.ncols(), b.ncols());
    for p in &parts {
        sum += p;
    }
    sum
}

/// W ← W + α A C (W, A: n rows).
pub fn add_times<T: ComplexField>(w: MatMut<'_, T>, a: MatRef<'_, T>, c: MatRef<'_, T>, alpha: T) {
    assert_eq!(w.nrows(), a.nrows(), "add_times: row counts differ");
    let rs = ranges(w.nrows());
    split_rows(w, &rs, &|r, part| {
        matmul(part, Accum::Add, a.get(r, ..), c, alpha.clone(), Par::Seq)
    });
}

/// A S (A: n × m, S: m × k).
pub fn times<T: ComplexField>(a: MatRef<'_, T>, s: MatRef<'_, T>) -> Mat<T> {
    let mut out = Mat::<T>::zeros(a.nrows(), s.ncols());
    add_times(out.as_mut(), a, s, T::one_impl());
    out
}

/// Column j of a column-major block as a slice (blocks the solver allocates are
/// contiguous per column; a strided view is a caller error).
pub fn column<T>(x: MatRef<'_, T>, j: usize) -> &[T] {
    x.col(j)
        .try_as_col_major()
        .expect("column-major block with contiguous columns")
        .as_slice()
}

/// Mutable [`column()`].
pub fn column_mut<T>(x: MatMut<'_, T>, j: usize) -> &mut [T] {
    x.col_mut(j)
        .try_as_col_major_mut()
        .expect("column-major block with contiguous columns")
        .as_slice_mut()
}

/// Run `f(rows, W[rows, ..])` for each row range, in parallel.
fn split_rows<T: ComplexField>(
    w: MatMut<'_, T>,
    rs: &[std::ops::Range<usize>],
    f: &(dyn Fn(std::ops::Range<usize>, MatMut<'_, T>) + Sync),
) {
    match rs {
        [] => {}
        [r] => f(r.clone(), w),
        _ => {
            let mid = rs.len() / 2;
            let at = rs[mid].start - rs[0].start;
            let (top, bottom) = w.split_at_row_mut(at);
            rayon::join(
                || split_rows(top, &rs[..mid], f),
                || split_rows(bottom, &rs[mid..], f),
            );
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The split products equal faer's plain products (consistency of two paths).
    #[test]
    fn split_products_match_plain_ones() {
        let n = 3 * MIN_ROWS + 17;
        let a = Mat::<f64>::from_fn(n, 5, |i, j| ((i * 31 + j * 7) % 13) as f64 - 6.0);
        let b = Mat::<f64>::from_fn(n, 3, |i, j| ((i * 11 + j * 5) % 9) as f64 - 4.0);
        let c = Mat::<f64>::from_fn(5, 3, |i, j| (i as f64) - 0.5 * j as f64);
        let g = adjoint_times(a.as_ref(), b.as_ref());
        let g_ref = a.transpose() * &b;
        let mut w = b.clone();
        add_times(w.as_mut(), a.as_ref(), c.as_ref(), -1.0);
        let w_ref = &b - &a * &c;
        // Integer-valued data: the sums are exact up to a few ulps of their magnitude.
        assert!((&g - &g_ref).norm_max() <= 1e-12 * g_ref.norm_max());
        assert!((&w - &w_ref).norm_max() <= 1e-12 * w_ref.norm_max());
        let t = times(a.as_ref(), c.as_ref());
        assert!((&t - &a * &c).norm_max() <= 1e-12 * t.norm_max());
    }
}
