//! Assembly of the global curl-curl and mass matrices.
//!
//!   K_ab = Σ_T (1/μr) ∫_T curl φa · curl φb dV,
//!   M′_ab = Σ_T ε′ ∫_T φa · φb dV,     M″_ab = Σ_T ε″ ∫_T φa · φb dV,
//!
//! so that the lossy mass matrix is M = M′ − j M″ (εr = ε′ − jε″). All three share one
//! sparsity pattern (unknowns coupled through a common tetrahedron), stored as CSR with
//! `u32` indices; the matrices are symmetric and stored in full.

use crate::dofmap::{DofMap, FIXED};
use crate::element::{NedelecTet, TetGeometry};
use crate::topology::Topology;
use antinode_mesh::TetMesh;
use rayon::prelude::*;

/// Sparse symmetric matrix in CSR form (full storage).
pub type SparseMatrix = sprs::CsMatI<f64, u32, u32>;

/// Material constants of one region at the solve frequency.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RegionMaterial {
    /// ε′
    pub eps_real: f64,
    /// ε″ ≥ 0 (loss)
    pub eps_imag: f64,
    /// μr (real)
    pub mu_r: f64,
}

impl RegionMaterial {
    /// Vacuum / air.
    pub const VACUUM: Self = Self {
        eps_real: 1.0,
        eps_imag: 0.0,
        mu_r: 1.0,
    };
}

/// The assembled system.
#[derive(Clone, Debug)]
pub struct SystemMatrices {
    /// Curl-curl matrix K (1/μr weighted), m⁻¹ units folded in (coordinates in m).
    pub stiffness: SparseMatrix,
    /// ε′-weighted mass matrix M′.
    pub mass_real: SparseMatrix,
    /// ε″-weighted mass matrix M″ (None when every region is lossless).
    pub mass_imag: Option<SparseMatrix>,
}

/// Sparsity pattern (CSR row pointers and sorted column indices) of the coupling graph.
fn pattern(dofs: &DofMap) -> (Vec<u32>, Vec<u32>) {
    let n = dofs.n_dofs;
    let nl = dofs.n_local;
    let n_tets = dofs.tet_dofs.len() / nl;
    // dof → tets (CSR by counting sort)
    let mut count = vec![0u32; n + 1];
    for &d in &dofs.tet_dofs {
        if d != FIXED {
            count[d as usize + 1] += 1;
        }
    }
    for i in 0..n {
        count[i + 1] += count[i];
    }
    let mut fill = count.clone();
    let mut dof_tets = vec![0u32; count[n] as usize];
    for t in 0..n_tets {
        for &d in dofs.of_tet(t) {
            if d != FIXED {
                dof_tets[fill[d as usize] as usize] = t as u32;
                fill[d as usize] += 1;
            }
        }
    }
    let rows: Vec<Vec<u32>> = (0..n)
        .into_par_iter()
        .map(|r| {
            let mut cols = Vec::with_capacity(64);
            for &t in &dof_tets[count[r] as usize..count[r + 1] as usize] {
                cols.extend(
                    dofs.of_tet(t as usize)
                        .iter()
                        .copied()
                        .filter(|&d| d != FIXED),
                );
            }
            cols.sort_unstable();
            cols.dedup();
            cols
        })
        .collect();
    let mut indptr = Vec::with_capacity(n + 1);
    indptr.push(0u32);
    let mut nnz = 0u64;
    for r in &rows {
        nnz += r.len() as u64;
        assert!(nnz < u32::MAX as u64, "matrix too large for 32-bit indices");
        indptr.push(nnz as u32);
    }
    let mut indices = Vec::with_capacity(nnz as usize);
    for r in rows {
        indices.extend_from_slice(&r);
    }
    (indptr, indices)
}

/// Assemble K, M′ and (if any region is lossy) M″. `materials[region id]`.
pub fn assemble(
    mesh: &TetMesh,
    topo: &Topology,
    dofs: &DofMap,
    materials: &[RegionMaterial],
) -> SystemMatrices {
    assemble_alongside(mesh, topo, dofs, materials, |_, _| ()).0
}

/// [`assemble`], running `alongside` on the sparsity pattern (CSR row pointers, sorted
/// column indices; the pattern all three matrices share) while the values are computed:
/// the fill-reducing ordering needs only the pattern and runs on one core, so it
/// overlaps the parallel element loop instead of following it.
pub fn assemble_alongside<R: Send>(
    mesh: &TetMesh,
    topo: &Topology,
    dofs: &DofMap,
    materials: &[RegionMaterial],
    alongside: impl FnOnce(&[u32], &[u32]) -> R + Send,
) -> (SystemMatrices, R) {
    let (indptr, indices) = pattern(dofs);
    let (r, matrices) = rayon::join(
        || alongside(&indptr, &indices),
        || fill(mesh, topo, dofs, materials, &indptr, &indices),
    );
    (matrices, r)
}

/// The values of K, M′ and M″ on the given pattern.
fn fill(
    mesh: &TetMesh,
    topo: &Topology,
    dofs: &DofMap,
    materials: &[RegionMaterial],
    indptr: &[u32],
    indices: &[u32],
) -> SystemMatrices {
    let element = NedelecTet::new(dofs.order);
    let nl = element.len();
    let n = dofs.n_dofs;
    let nnz = indices.len();
    let lossy = materials.iter().any(|m| m.eps_imag != 0.0);
    let mut k = vec![0.0; nnz];
    let mut mr = vec![0.0; nnz];
    let mut mi = if lossy { vec![0.0; nnz] } else { Vec::new() };

    // Element matrices are computed in parallel chunk by chunk, then scattered in
    // parallel over disjoint row ranges (no two threads write the same row).
    const CHUNK: usize = 8192;
    let n_parts = rayon::current_num_threads().max(1) * 4;
    let row_bounds: Vec<usize> = (0..=n_parts).map(|p| p * n / n_parts).collect();
    let mut buf_k = vec![0.0; CHUNK * nl * nl];
    let mut buf_m = vec![0.0; CHUNK * nl * nl];
    for start in (0..topo.n_tets()).step_by(CHUNK) {
        let end = (start + CHUNK).min(topo.n_tets());
        buf_k[..(end - start) * nl * nl]
            .par_chunks_mut(nl * nl)
            .zip(buf_m[..(end - start) * nl * nl].par_chunks_mut(nl * nl))
            .enumerate()
            .for_each(|(i, (ke, me))| {
                let t = start + i;
                let x = topo.tets[t].map(|v| mesh.nodes[v as usize]);
                let geo = TetGeometry::new(x);
                element.matrices(&geo, ke, me);
            });
        // Split value arrays by row ranges so each part owns its rows' values.
        let mut k_parts = split_by_rows(&mut k, indptr, &row_bounds);
        let mut mr_parts = split_by_rows(&mut mr, indptr, &row_bounds);
        let mut mi_parts: Vec<Option<&mut [f64]>> = if lossy {
            split_by_rows(&mut mi, indptr, &row_bounds)
                .into_iter()
                .map(Some)
                .collect()
        } else {
            (0..n_parts).map(|_| None).collect()
        };
        let buf_k = &buf_k;
        let buf_m = &buf_m;
        k_parts
            .par_iter_mut()
            .zip(mr_parts.par_iter_mut())
            .enumerate()
            .zip(mi_parts.par_iter_mut())
            .for_each(|((p, (kp, mrp)), mip)| {
                let (r0, r1) = (row_bounds[p], row_bounds[p + 1]);
                let base = indptr[r0] as usize;
                for t in start..end {
                    let region = mesh.tet_region[t] as usize;
                    let mat = materials[region];
                    let inv_mu = 1.0 / mat.mu_r;
                    let td = dofs.of_tet(t);
                    let off = (t - start) * nl * nl;
                    for a in 0..nl {
                        let r = td[a];
                        if r == FIXED || (r as usize) < r0 || (r as usize) >= r1 {
                            continue;
                        }
                        let (rs, re) =
                            (indptr[r as usize] as usize, indptr[r as usize + 1] as usize);
                        let cols = &indices[rs..re];
                        for b in 0..nl {
                            let c = td[b];
                            if c == FIXED {
                                continue;
                            }
                            let pos = rs
                                + cols
                                    .binary_search(&c)
                                    .expect("pattern holds every coupling")
                                - base;
                            kp[pos] += inv_mu * buf_k[off + a * nl + b];
                            let m = buf_m[off + a * nl + b];
                            mrp[pos] += mat.eps_real * m;
                            if let Some(mi) = mip.as_deref_mut() {
                                mi[pos] += mat.eps_imag * m;
                            }
                        }
                    }
                }
            });
    }
    let make = |vals: Vec<f64>| SparseMatrix::new((n, n), indptr.to_vec(), indices.to_vec(), vals);
    SystemMatrices {
        stiffness: make(k),
        mass_real: make(mr),
        mass_imag: if lossy { Some(make(mi)) } else { None },
    }
}

fn split_by_rows<'a>(vals: &'a mut [f64], indptr: &[u32], bounds: &[usize]) -> Vec<&'a mut [f64]> {
    let mut out = Vec::with_capacity(bounds.len() - 1);
    let mut rest = vals;
    for w in bounds.windows(2) {
        let len = (indptr[w[1]] - indptr[w[0]]) as usize;
        let (head, tail) = rest.split_at_mut(len);
        out.push(head);
        rest = tail;
    }
    out
}

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
