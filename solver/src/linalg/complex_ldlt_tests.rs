//! Tests of the complex symmetric sparse LDLᵀ against faer's dense LU (a general-purpose
//! reference library) and by solve residuals.

use super::*;
use crate::constants::k0_squared;
use crate::fem::assembly::{assemble, RegionMaterial};
use crate::fem::{NedelecOrder, Space};
use crate::linalg::ordering::nested_dissection;
use crate::linalg::sparse::combine;
use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::RegionInfo;
use faer::prelude::Solve;
use faer::Mat;
use rand::{Rng, SeedableRng};

/// Dense copy of A = re + j·im.
fn dense(re: &SparseMatrix, im: &SparseMatrix) -> Mat<c64> {
    let n = re.rows();
    let mut a = Mat::<c64>::zeros(n, n);
    for (v, (i, j)) in re.iter() {
        a[(i as usize, j as usize)] += c64::new(*v, 0.0);
    }
    for (v, (i, j)) in im.iter() {
        a[(i as usize, j as usize)] += c64::new(0.0, *v);
    }
    a
}

/// Largest relative residual ‖A x − b‖/‖b‖ over the columns, in dense arithmetic.
fn residual(a: &Mat<c64>, x: &Mat<c64>, b: &Mat<c64>) -> f64 {
    let r = a * x - b;
    (0..b.ncols())
        .map(|j| r.col(j).norm_l2() / b.col(j).norm_l2())
        .fold(0.0, f64::max)
}

/// A random complex symmetric matrix on the 7-point pattern of an m³ grid with a
/// diagonal shifted into the middle of the spectrum (indefinite real and imaginary parts).
fn random_grid_matrix(m: usize, seed: u64) -> (SparseMatrix, SparseMatrix) {
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let id = |i: usize, j: usize, k: usize| i + m * (j + m * k);
    let n = m * m * m;
    let mut re = sprs::TriMatI::<f64, u32>::new((n, n));
    let mut im = sprs::TriMatI::<f64, u32>::new((n, n));
    for k in 0..m {
        for j in 0..m {
            for i in 0..m {
                let a = id(i, j, k);
                re.add_triplet(a, a, rng.gen_range(-1.0..1.0));
                im.add_triplet(a, a, rng.gen_range(-0.3..0.3));
                for (di, dj, dk) in [(1, 0, 0), (0, 1, 0), (0, 0, 1)] {
                    let (p, q, r) = (i + di, j + dj, k + dk);
                    if p < m && q < m && r < m {
                        let b = id(p, q, r);
                        let (vr, vi) = (rng.gen_range(-1.0..1.0), rng.gen_range(-0.3..0.3));
                        re.add_triplet(a, b, vr);
                        re.add_triplet(b, a, vr);
                        im.add_triplet(a, b, vi);
                        im.add_triplet(b, a, vi);
                    }
                }
            }
        }
    }
    let (re, im): (SparseMatrix, SparseMatrix) = (re.to_csr(), im.to_csr());
    // One pattern for both parts.
    let pattern = combine(&[(0.0, &re), (0.0, &im)]);
    (
        combine(&[(1.0, &re), (0.0, &pattern)]),
        combine(&[(1.0, &im), (0.0, &pattern)]),
    )
}

fn random_rhs(n: usize, k: usize, seed: u64) -> Mat<c64> {
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    Mat::from_fn(n, k, |_, _| {
        c64::new(rng.gen_range(-1.0..1.0), rng.gen_range(-1.0..1.0))
    })
}

/// Solve with the sparse factor and compare with faer's dense LU with partial pivoting.
fn check_against_dense(re: &SparseMatrix, im: &SparseMatrix, ordered: bool, tol: f64) {
    let n = re.rows();
    let ord = if ordered {
        Some(nested_dissection(re).expect("ordering"))
    } else {
        None
    };
    let f = ComplexSymmetricFactor::new(re, im, ord.as_ref().map(|(a, b)| (&a[..], &b[..])))
        .expect("factor");
    let a = dense(re, im);
    let b = random_rhs(n, 3, 11);
    let mut x = b.clone();
    f.solve_in_place(x.as_mut());
    let x_ref = a.partial_piv_lu().solve(&b);
    let diff = (&x - &x_ref).norm_max() / x_ref.norm_max();
    let res = residual(&a, &x, &b);
    let res_ref = residual(&a, &x_ref, &b);
    eprintln!("n = {n}: residual {res:.2e} (dense LU {res_ref:.2e}), vs dense {diff:.2e}");
    assert!(
        res < tol,
        "n = {n}: residual {res:.2e} (dense LU: {res_ref:.2e})"
    );
    // The two solutions differ by at most about cond(A)·(both residuals).
    assert!(
        diff < 1e3 * tol,
        "n = {n}: sparse vs dense solution differ by {diff:.2e}"
    );
}

/// Random indefinite complex symmetric grid matrices, with the METIS ordering and with
/// minimum degree. Tolerance: a backward-stable solve gives residuals of a modest
/// multiple of n·ε·growth ≈ 1e-13 at n = 1000 (Higham, Accuracy and Stability of
/// Numerical Algorithms, 2nd ed., §11.1, from memory); 1e-11 leaves room for the
/// supernode-confined pivoting.
#[test]
fn random_grid_matrices_match_dense_lu() {
    for (m, seed, ordered) in [(4, 1, true), (10, 2, true), (10, 3, false), (12, 4, true)] {
        let (re, im) = random_grid_matrix(m, seed);
        check_against_dense(&re, &im, ordered, 1e-11);
    }
}

/// A lossy cavity operator K − σ(M′ − jM″) (box, order 2, a lossy slab filling the lower
/// third, σ = k0² at 2.45 GHz, inside the spectrum): the indefinite shifted operator of
/// the mode solver.
#[test]
fn lossy_cavity_operator_matches_dense_lu() {
    let mesh = grid_mesh(
        &GridLines::uniform([0.0; 3], [0.2, 0.15, 0.12], [5, 4, 3]),
        vec![
            RegionInfo { name: "air".into() },
            RegionInfo {
                name: "load".into(),
            },
        ],
        |c| Some(if c[2] < 0.04 { 1 } else { 0 }),
    );
    let space = Space::new(&mesh, NedelecOrder::Two, |_| true);
    // Water-like load at 2.45 GHz (εr ≈ 78 − j10, from memory; any lossy value serves).
    let load = RegionMaterial {
        eps_real: 78.0,
        eps_imag: 10.0,
        mu_r: 1.0,
    };
    let m = assemble(&space, &[RegionMaterial::VACUUM, load]);
    let sigma = k0_squared(2.45e9);
    let mi = m.mass_imag.as_ref().expect("a lossy region gives M″");
    let pattern = combine(&[(0.0, &m.stiffness), (0.0, &m.mass_real), (0.0, mi)]);
    let re = combine(&[(1.0, &m.stiffness), (-sigma, &m.mass_real), (0.0, &pattern)]);
    let im = combine(&[(sigma, mi), (0.0, &pattern)]);
    // The FE matrices are scaled like 1/h and h·k0², condition ~1e4–1e6: residuals of a
    // stable solve stay near n·ε ≈ 1e-13; 1e-12 is the accuracy target of the solver
    // (its eigen iteration needs 1e-10, `factor::REFINE_ABOVE`).
    check_against_dense(&re, &im, true, 1e-12);
}
