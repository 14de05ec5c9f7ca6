//! Sparse matrices in compressed-row form and the operations the solver needs on them.
//!
//! * y = A x and Y = A X (one pass over A for a block of columns);
//! * Σ cᵢ Aᵢ on the union of the patterns, and diagonal matrices (port terms);
//! * the real symmetric 2n form of a complex symmetric A = Ar + jAi,
//!
//!     [[Ar, −Ai], [−Ai, −Ar]] [xr; xi] = [br; −bi]  ⇔  A (xr + j xi) = br + j bi,
//!
//!   which lets a real symmetric factorisation solve a complex symmetric system (twice
//!   the order, four times the entries);
//! * the largest absolute row sum ‖A‖∞ (an upper bound of ‖A‖₂ for symmetric A).

use rayon::prelude::*;

/// Sparse matrix in CSR form with `u32` indices (symmetric ones stored in full).
pub type SparseMatrix = sprs::CsMatI<f64, u32, u32>;

/// y = A x for a CSR matrix, parallel over rows.
pub fn spmv(a: &SparseMatrix, x: &[f64], y: &mut [f64]) {
    let indptr = a.indptr();
    let indptr = indptr.raw_storage();
    let idx = a.indices();
    let val = a.data();
    y.par_iter_mut()
        .enumerate()
        .with_min_len(256)
        .for_each(|(r, yr)| {
            let (s, e) = (indptr[r] as usize, indptr[r + 1] as usize);
            let mut acc = 0.0;
            for p in s..e {
                acc += val[p] * x[idx[p] as usize];
            }
            *yr = acc;
        });
}

/// Y = A X for a CSR matrix and a block of columns, parallel over rows. The block is
/// gathered row-wise first so that each stored entry of A is read once for all columns
/// (one pass over A instead of one per column).
pub fn spmm(a: &SparseMatrix, x: faer::MatRef<'_, f64>, mut y: faer::MatMut<'_, f64>) {
    let (n, k) = (x.nrows(), x.ncols());
    assert_eq!(
        a.cols(),
        n,
        "spmm: A has {} columns, X {} rows",
        a.cols(),
        n
    );
    assert_eq!((y.nrows(), y.ncols()), (a.rows(), k), "spmm: output shape");
    if k == 0 {
        return;
    }
    let mut xt = vec![0.0; n * k];
    xt.par_chunks_mut(k)
        .with_min_len(1024)
        .enumerate()
        .for_each(|(i, row)| {
            for (j, v) in row.iter_mut().enumerate() {
                *v = x[(i, j)];
            }
        });
    let indptr = a.indptr();
    let indptr = indptr.raw_storage();
    let (idx, val) = (a.indices(), a.data());
    let mut yt = vec![0.0; a.rows() * k];
    yt.par_chunks_mut(k)
        .with_min_len(256)
        .enumerate()
        .for_each(|(r, out)| {
            for p in indptr[r] as usize..indptr[r + 1] as usize {
                let (v, c) = (val[p], idx[p] as usize);
                for (o, &xv) in out.iter_mut().zip(&xt[c * k..(c + 1) * k]) {
                    *o += v * xv;
                }
            }
        });
    for j in 0..k {
        for (i, row) in yt.chunks_exact(k).enumerate() {
            y[(i, j)] = row[j];
        }
    }
}

/// xᵀ A x (`t` is scratch of A's order).
pub fn quadratic_form(a: &SparseMatrix, x: &[f64], t: &mut [f64]) -> f64 {
    spmv(a, x, t);
    x.iter().zip(t.iter()).map(|(p, q)| p * q).sum()
}

/// Largest absolute row sum.
pub fn row_sum_norm(a: &SparseMatrix) -> f64 {
    a.outer_iterator()
        .map(|row| row.data().iter().map(|v| v.abs()).sum::<f64>())
        .fold(0.0, f64::max)
}

/// Σ c_i A_i on the union of the patterns (rows merged in sorted order).
pub fn combine(terms: &[(f64, &SparseMatrix)]) -> SparseMatrix {
    let (rows, cols) = terms[0].1.shape();
    let mut indptr = Vec::with_capacity(rows + 1);
    indptr.push(0u32);
    let mut indices: Vec<u32> = Vec::new();
    let mut data: Vec<f64> = Vec::new();
    let mut row: Vec<(u32, f64)> = Vec::new();
    for r in 0..rows {
        row.clear();
        for &(c, a) in terms {
            if let Some(v) = a.outer_view(r) {
                row.extend(v.iter().map(|(j, &x)| (j as u32, c * x)));
            }
        }
        row.sort_unstable_by_key(|e| e.0);
        let mut k = 0;
        while k < row.len() {
            let (j, mut v) = row[k];
            k += 1;
            while k < row.len() && row[k].0 == j {
                v += row[k].1;
                k += 1;
            }
            indices.push(j);
            data.push(v);
        }
        indptr.push(indices.len() as u32);
    }
    SparseMatrix::new((rows, cols), indptr, indices, data)
}

/// n × n diagonal matrix with the given (index, value) entries.
pub fn diagonal(n: usize, entries: &[(usize, f64)]) -> SparseMatrix {
    let mut tri = sprs::TriMatI::<f64, u32>::new((n, n));
    for &(i, v) in entries {
        tri.add_triplet(i, i, v);
    }
    tri.to_csr()
}

/// The real symmetric 2n × 2n form [[Ar, −Ai], [−Ai, −Ar]] of A = Ar + jAi
/// (Ar and Ai on one pattern).
pub fn real_form(ar: &SparseMatrix, ai: &SparseMatrix) -> SparseMatrix {
    let n = ar.rows();
    let mut indptr = Vec::with_capacity(2 * n + 1);
    indptr.push(0u32);
    let mut indices = Vec::with_capacity(4 * ar.nnz());
    let mut data = Vec::with_capacity(4 * ar.nnz());
    for half in 0..2 {
        for r in 0..n {
            let (first, second, s1, s2) = if half == 0 {
                (ar, ai, 1.0, -1.0)
            } else {
                (ai, ar, -1.0, -1.0)
            };
            if let Some(v) = first.outer_view(r) {
                for (j, &x) in v.iter() {
                    indices.push(j as u32);
                    data.push(s1 * x);
                }
            }
            if let Some(v) = second.outer_view(r) {
                for (j, &x) in v.iter() {
                    indices.push((n + j) as u32);
                    data.push(s2 * x);
                }
            }
            indptr.push(indices.len() as u32);
        }
    }
    SparseMatrix::new((2 * n, 2 * n), indptr, indices, data)
}

/// Y = (Ar + jAi) X for a complex block X (Ar and Ai on one pattern), parallel over rows.
pub fn spmm_complex(
    ar: &SparseMatrix,
    ai: &SparseMatrix,
    x: faer::MatRef<'_, faer::c64>,
    mut y: faer::MatMut<'_, faer::c64>,
) {
    use faer::c64;
    let (n, k) = (x.nrows(), x.ncols());
    assert!(
        ar.cols() == n && ar.indptr() == ai.indptr(),
        "spmm_complex: shapes"
    );
    let mut xt = vec![c64::new(0.0, 0.0); n * k];
    for (i, row) in xt.chunks_exact_mut(k.max(1)).enumerate().take(n) {
        for (j, v) in row.iter_mut().enumerate() {
            *v = x[(i, j)];
        }
    }
    let indptr = ar.indptr();
    let indptr = indptr.raw_storage();
    let (idx, re, im) = (ar.indices(), ar.data(), ai.data());
    let mut yt = vec![c64::new(0.0, 0.0); ar.rows() * k];
    if k > 0 {
        yt.par_chunks_mut(k)
            .with_min_len(256)
            .enumerate()
            .for_each(|(r, out)| {
                for p in indptr[r] as usize..indptr[r + 1] as usize {
                    let (v, c) = (c64::new(re[p], im[p]), idx[p] as usize);
                    for (o, &xv) in out.iter_mut().zip(&xt[c * k..(c + 1) * k]) {
                        *o += v * xv;
                    }
                }
            });
    }
    for j in 0..k {
        for (i, row) in yt.chunks_exact(k).enumerate() {
            y[(i, j)] = row[j];
        }
    }
}
