//! Assembly of the global curl-curl and mass matrices.
//!
//!   K_ab = Σ_T (1/μr) ∫_T curl φa · curl φb dV,
//!   M′_ab = Σ_T ε′ ∫_T φa · φb dV,     M″_ab = Σ_T ε″ ∫_T φa · φb dV,
//!
//! so that the lossy mass matrix is M = M′ − j M″ (εr = ε′ − jε″). All three share one
//! sparsity pattern (unknowns coupled through a common tetrahedron), stored as CSR with
//! `u32` indices; the matrices are symmetric and stored in full. Element matrices come
//! from [`crate::fem::element`]; the values are scattered into a pattern built first
//! (unknowns coupled through a common tetrahedron), so the fill-reducing ordering,
//! which needs only the pattern, can run alongside the element loop.

use crate::fem::dofmap::{DofMap, FIXED};
use crate::fem::element::NedelecTet;
use crate::fem::Space;
use crate::linalg::dot;
use crate::linalg::sparse::{spmv, SparseMatrix};
use faer::c64;
use rayon::prelude::*;

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
pub(crate) fn pattern(dofs: &DofMap) -> (Vec<u32>, Vec<u32>) {
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
pub fn assemble(space: &Space<'_>, materials: &[RegionMaterial]) -> SystemMatrices {
    assemble_alongside(space, materials, |_, _| ()).0
}

/// [`assemble`], running `alongside` on the sparsity pattern (CSR row pointers, sorted
/// column indices; the pattern all three matrices share) while the values are computed:
/// the fill-reducing ordering needs only the pattern and runs on one core, so it
/// overlaps the parallel element loop instead of following it.
pub fn assemble_alongside<R: Send>(
    space: &Space<'_>,
    materials: &[RegionMaterial],
    alongside: impl FnOnce(&[u32], &[u32]) -> R + Send,
) -> (SystemMatrices, R) {
    let (indptr, indices) = pattern(&space.dofs);
    let (r, matrices) = rayon::join(
        || alongside(&indptr, &indices),
        || fill(space, materials, &indptr, &indices),
    );
    (matrices, r)
}

/// The values of K, M′ and M″ on the given pattern.
fn fill(
    space: &Space<'_>,
    materials: &[RegionMaterial],
    indptr: &[u32],
    indices: &[u32],
) -> SystemMatrices {
    let (mesh, dofs) = (space.mesh, &space.dofs);
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
    for start in (0..space.n_tets()).step_by(CHUNK) {
        let end = (start + CHUNK).min(space.n_tets());
        buf_k[..(end - start) * nl * nl]
            .par_chunks_mut(nl * nl)
            .zip(buf_m[..(end - start) * nl * nl].par_chunks_mut(nl * nl))
            .enumerate()
            .for_each(|(i, (ke, me))| {
                space.element_matrices(&element, start + i, ke, me);
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

impl SystemMatrices {
    /// Whether some region is lossy (M″ present).
    pub fn is_lossy(&self) -> bool {
        self.mass_imag.is_some()
    }

    /// Order of the matrices.
    pub fn n(&self) -> usize {
        self.stiffness.rows()
    }

    /// M x for M = M′ − jM″ and x = xr + j xi (an empty `xi` is a real x), as real and
    /// imaginary parts (the imaginary part empty when both x and M are real); `t` is
    /// scratch of the matrices' order.
    pub fn mass_times(&self, xr: &[f64], xi: &[f64], t: &mut [f64]) -> (Vec<f64>, Vec<f64>) {
        let n = xr.len();
        let mut yr = vec![0.0; n];
        spmv(&self.mass_real, xr, &mut yr);
        if xi.is_empty() && self.mass_imag.is_none() {
            return (yr, Vec::new());
        }
        let mut yi = vec![0.0; n];
        if !xi.is_empty() {
            spmv(&self.mass_real, xi, &mut yi);
        }
        if let Some(mi) = &self.mass_imag {
            if !xi.is_empty() {
                spmv(mi, xi, t);
                for i in 0..n {
                    yr[i] += t[i];
                }
            }
            spmv(mi, xr, t);
            for i in 0..n {
                yi[i] -= t[i];
            }
        }
        (yr, yi)
    }

    /// The unconjugated bilinear form xᵀ M x for M = M′ − jM″ (the normalisation of a
    /// complex symmetric pencil, whose left eigenvector is x itself).
    pub fn mass_bilinear(&self, xr: &[f64], xi: &[f64]) -> c64 {
        let mut t = vec![0.0; xr.len()];
        let (yr, yi) = self.mass_times(xr, xi, &mut t);
        let re = dot(xr, &yr)
            - if xi.is_empty() || yi.is_empty() {
                0.0
            } else {
                dot(xi, &yi)
            };
        let im = (if yi.is_empty() { 0.0 } else { dot(xr, &yi) })
            + if xi.is_empty() { 0.0 } else { dot(xi, &yr) };
        c64::new(re, im)
    }
}
