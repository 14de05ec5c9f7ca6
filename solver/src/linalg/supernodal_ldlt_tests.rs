//! The parallel factorisation against the sequential one, and the real factor's solves
//! against faer's LBLᵀ (a general-purpose reference library).

use super::*;
use crate::constants::k0_squared;
use crate::fem::assembly::{assemble, RegionMaterial};
use crate::fem::{NedelecOrder, Space};
use crate::linalg::factor::{FactorKind, SymmetricFactor};
use crate::linalg::ordering::nested_dissection;
use crate::linalg::sparse::{combine, spmv};
use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::RegionInfo;
use faer::c64;
use rand::{Rng, SeedableRng};

/// A seeded random complex symmetric matrix on the 7-point pattern of an m³ grid plus
/// `extra` random symmetric couplings across a grid cell's diagonal (an irregular but
/// local pattern, so that nested dissection still finds separators), with a random
/// diagonal of both signs (indefinite real and imaginary parts).
fn random_complex_symmetric(m: usize, extra: usize, seed: u64) -> (SparseMatrix, SparseMatrix) {
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let id = |i: usize, j: usize, k: usize| i + m * (j + m * k);
    let n = m * m * m;
    let mut re = sprs::TriMatI::<f64, u32>::new((n, n));
    let mut im = sprs::TriMatI::<f64, u32>::new((n, n));
    let mut couple = |a: usize, b: usize, rng: &mut rand_chacha::ChaCha8Rng| {
        let (vr, vi) = (rng.gen_range(-1.0..1.0), rng.gen_range(-0.3..0.3));
        re.add_triplet(a, b, vr);
        im.add_triplet(a, b, vi);
        if a != b {
            re.add_triplet(b, a, vr);
            im.add_triplet(b, a, vi);
        }
    };
    for k in 0..m {
        for j in 0..m {
            for i in 0..m {
                let a = id(i, j, k);
                couple(a, a, &mut rng);
                for (di, dj, dk) in [(1, 0, 0), (0, 1, 0), (0, 0, 1)] {
                    let (p, q, r) = (i + di, j + dj, k + dk);
                    if p < m && q < m && r < m {
                        couple(a, id(p, q, r), &mut rng);
                    }
                }
            }
        }
    }
    for _ in 0..extra {
        let (i, j, k) = (
            rng.gen_range(0..m - 1),
            rng.gen_range(0..m - 1),
            rng.gen_range(0..m - 1),
        );
        couple(id(i, j, k), id(i + 1, j + 1, k + 1), &mut rng);
    }
    let (re, im): (SparseMatrix, SparseMatrix) = (re.to_csr(), im.to_csr());
    let pattern = combine(&[(0.0, &re), (0.0, &im)]);
    (
        combine(&[(1.0, &re), (0.0, &pattern)]),
        combine(&[(1.0, &im), (0.0, &pattern)]),
    )
}

/// Largest entry difference of two factors relative to the largest entry, after checking
/// that they pivoted alike.
fn factor_difference<T: FactorScalar>(a: &SupernodalLdlt<T>, b: &SupernodalLdlt<T>) -> f64 {
    let (va, sa, pa) = a.parts();
    let (vb, sb, pb) = b.parts();
    assert_eq!(pa, pb, "the two factorisations chose different pivots");
    let scale = va.iter().map(|v| v.abs1()).fold(0.0, f64::max);
    let diff = va
        .iter()
        .zip(vb)
        .chain(sa.iter().zip(sb))
        .map(|(&x, &y)| (x - y).abs1())
        .fold(0.0, f64::max);
    diff / scale
}

/// The factorisation is really split: the two-thread schedule has two subtree groups and
/// a top part, so both the concurrent subtrees and the threaded top kernels are tested.
fn assert_split(
    f: &SupernodalLdlt<impl FactorScalar>,
    pattern: &SparseMatrix,
    ord: &(Vec<u32>, Vec<u32>),
) {
    let sym = SymbolicSparseColMatRef::new_checked(
        pattern.rows(),
        pattern.rows(),
        pattern.indptr().into_raw_storage(),
        None,
        pattern.indices(),
    );
    let params = CholeskySymbolicParams {
        supernodal_flop_ratio_threshold: SupernodalThreshold::FORCE_SUPERNODAL,
        ..Default::default()
    };
    let perm = SymmetricOrdering::Custom(PermRef::new_checked(&ord.0, &ord.1, pattern.rows()));
    let symbolic = factorize_symbolic_cholesky(sym, Side::Upper, perm, params).expect("symbolic");
    let SymbolicCholeskyRaw::Supernodal(sn) = symbolic.raw() else {
        panic!("supernodal expected");
    };
    let schedule = TreeSchedule::new(sn, 2);
    assert!(
        schedule.tasks().len() == 2 && !schedule.top().is_empty(),
        "expected two subtree groups and a top part, got {} groups, {} top supernodes",
        schedule.tasks().len(),
        schedule.top().len()
    );
    assert_eq!(f.n(), pattern.rows());
}

/// Parallel (two subtree groups, threaded top kernels) and sequential factorisations of a
/// seeded random sparse complex symmetric indefinite matrix give the same factor. Both
/// perform the same operations per supernode in the same order; only the threaded dense
/// products may sum in another order, which changes an entry by a few ulps times the
/// growth of the elimination: 1e-12 relative (the figure issue 11 asks for) leaves three
/// orders over ε·growth for these well-scaled random entries.
#[test]
fn parallel_factor_equals_sequential_on_random_complex_matrix() {
    let (re, im) = random_complex_symmetric(16, 400, 21);
    let ord = nested_dissection(&re).expect("ordering");
    let (rv, iv) = (re.data(), im.data());
    let value = |p: usize| c64::new(rv[p], iv[p]);
    let step = FactorStep::NumericComplexLdlt;
    let o = Some((&ord.0[..], &ord.1[..]));
    let seq = SupernodalLdlt::new(&re, value, o, 1, step).expect("sequential factor");
    let par = SupernodalLdlt::new(&re, value, o, 2, step).expect("parallel factor");
    assert_split(&par, &re, &ord);
    let diff = factor_difference(&seq, &par);
    eprintln!(
        "random complex, n = {}: parallel vs sequential {diff:.2e}",
        re.rows()
    );
    assert!(diff < 1e-12, "factors differ by {diff:.2e}");
}

/// The indefinite shifted operator K − σM of an empty cavity (box, order 2, σ = k0² at
/// 2.45 GHz, inside the spectrum).
fn cavity_operator() -> SparseMatrix {
    let mesh = grid_mesh(
        &GridLines::uniform([0.0; 3], [0.3, 0.3, 0.2], [6, 6, 4]),
        vec![RegionInfo { name: "air".into() }],
        |_| Some(0),
    );
    let space = Space::new(&mesh, NedelecOrder::Two, |_| true);
    let m = assemble(&space, &[RegionMaterial::VACUUM]);
    combine(&[(1.0, &m.stiffness), (-k0_squared(2.45e9), &m.mass_real)])
}

/// As above, on the real cavity operator (tolerance as above).
#[test]
fn parallel_factor_equals_sequential_on_cavity_operator() {
    let a = cavity_operator();
    let ord = nested_dissection(&a).expect("ordering");
    let data = a.data();
    let o = Some((&ord.0[..], &ord.1[..]));
    let step = FactorStep::NumericLdlt;
    let seq = SupernodalLdlt::new(&a, |p| data[p], o, 1, step).expect("sequential factor");
    let par = SupernodalLdlt::new(&a, |p| data[p], o, 2, step).expect("parallel factor");
    assert_split(&par, &a, &ord);
    let diff = factor_difference(&seq, &par);
    eprintln!(
        "cavity, n = {}: parallel vs sequential {diff:.2e}",
        a.rows()
    );
    assert!(diff < 1e-12, "factors differ by {diff:.2e}");
}

/// The real path's factor (parallel) solves the cavity operator as accurately as faer's
/// intranode LBLᵀ of the same matrix and ordering, and the two solutions agree.
/// Tolerances: the solver's accuracy target 1e-12 on the relative residual (as in the
/// complex factor's tests: n·ε ≈ 1e-13 for a stable solve at these sizes); the solutions
/// of two stable factorisations differ by about cond(A) × residual, cond ~1e4–1e6 for
/// these FE matrices (h-scaling, from memory), hence 1e-7.
#[test]
fn real_factor_solves_like_faer_lblt() {
    let a = cavity_operator();
    let n = a.rows();
    let ord = nested_dissection(&a).expect("ordering");
    let o = Some((&ord.0[..], &ord.1[..]));
    let ours = SymmetricFactor::with_threads(&a, FactorKind::Lblt, Par::Seq, o, 2).expect("factor");
    let faer_f = SymmetricFactor::new(&a, FactorKind::FaerLblt, Par::Seq, o).expect("faer");
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(5);
    let b: Vec<f64> = (0..n).map(|_| rng.gen_range(-1.0..1.0)).collect();
    let solve = |f: &SymmetricFactor| {
        let mut x = faer::Mat::from_fn(n, 1, |i, _| b[i]);
        f.solve_in_place(x.as_mut());
        let x: Vec<f64> = (0..n).map(|i| x[(i, 0)]).collect();
        let mut ax = vec![0.0; n];
        spmv(&a, &x, &mut ax);
        let r = ax
            .iter()
            .zip(&b)
            .map(|(p, q)| (p - q).powi(2))
            .sum::<f64>()
            .sqrt();
        (x, r / b.iter().map(|v| v * v).sum::<f64>().sqrt())
    };
    let (x, res) = solve(&ours);
    let (x_ref, res_ref) = solve(&faer_f);
    let diff = x
        .iter()
        .zip(&x_ref)
        .map(|(p, q)| (p - q).abs())
        .fold(0.0, f64::max)
        / x_ref.iter().map(|v| v.abs()).fold(0.0, f64::max);
    eprintln!("n = {n}: residual {res:.2e} (faer LBLᵀ {res_ref:.2e}), solutions differ {diff:.2e}");
    assert!(res < 1e-12, "residual {res:.2e} (faer LBLᵀ {res_ref:.2e})");
    assert!(diff < 1e-7, "solutions differ by {diff:.2e}");
}
