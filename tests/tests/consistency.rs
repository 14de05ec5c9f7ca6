//! Consistency of the discrete operators and the eigen solver.
//!
//! * Dense reference: on small meshes K and M are assembled with the solver's own
//!   assembly, converted to dense matrices and the generalised symmetric problem is
//!   solved with faer (a general-purpose linear-algebra library): Cholesky M = L Lᵀ,
//!   eigenvalues of L⁻¹ K L⁻ᵀ (`self_adjoint_eigenvalues`). The sparse shift-invert
//!   solver's modes must equal the dense eigenvalues nearest the target.
//! * Structure: the dense spectrum's count of zero eigenvalues equals the dimension of
//!   the discrete gradient space (interior vertices for order 1; interior vertices +
//!   interior edges for order 2), the kernel of the curl in H0(curl) on a simply
//!   connected domain with connected boundary (discrete de Rham sequence; Boffi, Acta
//!   Numerica 19 (2010), from memory). Interior entities are counted geometrically here
//!   (midpoint not on the box surface), independently of the solver's numbering.
//! * No spurious (gradient, λ ≈ 0) mode among the returned ones.

use antinode_mesh::BoundaryTag;
use antinode_solver::fem::assembly::assemble;
use antinode_solver::linalg::sparse::SparseMatrix;
use antinode_solver::NedelecOrder;
use antinode_solver::{RegionMaterial, Space};
use antinode_tests::*;
use faer::{Mat, Side};
use std::f64::consts::PI;

fn dense(a: &SparseMatrix) -> Mat<f64> {
    let n = a.rows();
    let mut m = Mat::<f64>::zeros(n, n);
    for (r, row) in a.outer_iterator().enumerate() {
        for (c, &v) in row.iter() {
            m[(r, c)] = v;
        }
    }
    m
}

fn on_surface(p: [f64; 3], size: f64) -> bool {
    let eps = 1e-9 * size;
    p.iter().any(|&x| x.abs() < eps || (x - size).abs() < eps)
}

fn dense_case(order: NedelecOrder, n: usize) {
    let size = PI;
    let mesh = box_mesh([size; 3], [n; 3]);
    let space = Space::new(&mesh, order, |t| matches!(t, BoundaryTag::Wall));
    let (topo, dofs) = (&space.topology, &space.dofs);
    let sys = assemble(&space, &[RegionMaterial::VACUUM]);
    let k = dense(&sys.stiffness);
    let m = dense(&sys.mass_real);
    let nd = dofs.n_dofs;
    // Symmetry of the assembled matrices (exact up to round-off of the same sums).
    for i in 0..nd {
        for j in 0..i {
            assert!((k[(i, j)] - k[(j, i)]).abs() <= 1e-12 * k[(i, i)].abs().max(1.0));
            assert!((m[(i, j)] - m[(j, i)]).abs() <= 1e-12 * m[(i, i)].abs().max(1e-30));
        }
    }
    let llt = m.llt(Side::Lower).expect("M must be positive definite");
    let l = llt.L();
    // A = L⁻¹ K L⁻ᵀ: X = L⁻¹ K, then A = L⁻¹ Xᵀ (A is symmetric).
    let mut x = k.clone();
    l.solve_lower_triangular_in_place(x.as_mut());
    let mut a = x.transpose().to_owned();
    l.solve_lower_triangular_in_place(a.as_mut());
    let lam = a
        .self_adjoint_eigenvalues(Side::Lower)
        .expect("eigenvalues");
    let lam_max = lam.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    // Zero threshold: round-off zeros are O(ε·λ_max·cond(M)) ≲ 1e-8·λ_max; the smallest
    // physical eigenvalue (≈ 2) is far above, and the largest discrete ones are O(h⁻²).
    let thr = 1e-7 * lam_max;
    let zeros = lam.iter().filter(|v| v.abs() < thr).count();
    let negative = lam.iter().filter(|&&v| v <= -thr).count();
    let n_int_vertices = mesh.nodes.iter().filter(|&&p| !on_surface(p, size)).count();
    let n_int_edges = topo
        .edges
        .iter()
        .filter(|&&[a, b]| {
            let (pa, pb) = (mesh.nodes[a as usize], mesh.nodes[b as usize]);
            let mid = [0, 1, 2].map(|i| 0.5 * (pa[i] + pb[i]));
            !on_surface(mid, size)
        })
        .count();
    let n_int_faces = topo
        .faces
        .iter()
        .filter(|f| {
            let c = f.map(|v| mesh.nodes[v as usize]);
            let mid = [0, 1, 2].map(|i| (c[0][i] + c[1][i] + c[2][i]) / 3.0);
            !on_surface(mid, size)
        })
        .count();
    // The kernel of the curl on the order-p space is the gradient of the Lagrange space of
    // degree p vanishing on the walls (exact sequence; Monk, Finite Element Methods for
    // Maxwell's Equations, 2003, §5.5; from memory): one unknown per interior vertex, p − 1
    // per interior edge, (p − 1)(p − 2)/2 per interior face ((p−1)(p−2)(p−3)/6 per cell,
    // zero for p ≤ 3).
    let expected = match order {
        NedelecOrder::One => n_int_vertices,
        NedelecOrder::Two => n_int_vertices + n_int_edges,
        NedelecOrder::Three => n_int_vertices + 2 * n_int_edges + n_int_faces,
    };
    let nonzero: Vec<f64> = lam.iter().copied().filter(|v| v.abs() >= thr).collect();
    println!(
        "dense reference, cube n = {n}, order {}: {nd} unknowns, {zeros} zero eigenvalues \
         (gradient space: {n_int_vertices} interior vertices{}), smallest non-zero {:.6}, \
         gap ratio {:.1e}",
        order.as_int(),
        match order {
            NedelecOrder::One => String::new(),
            NedelecOrder::Two => format!(" + {n_int_edges} interior edges"),
            NedelecOrder::Three =>
                format!(" + 2 × {n_int_edges} interior edges + {n_int_faces} interior faces"),
        },
        nonzero[0],
        nonzero[0]
            / lam
                .iter()
                .filter(|v| v.abs() < thr)
                .fold(1e-300f64, |s, v| s.max(v.abs()))
    );
    assert_eq!(negative, 0, "negative eigenvalues in a PSD/PD pencil");
    assert_eq!(zeros, expected, "kernel dimension");

    // The sparse solver: 10 modes nearest k² = 4, "nearest" measured on the frequency
    // axis (|k − k_target|, k ∝ f), as the solver selects them.
    let target = 4.0;
    let (set, secs) = solve_nearest(&mesh, &[RegionMaterial::VACUUM], order, target, 10);
    let got: Vec<f64> = set.modes.iter().map(|m| m.k0_squared).collect();
    assert!(got.len() >= 10, "asked 10 modes, got {}", got.len());
    let dist = |v: f64| (v.sqrt() - target.sqrt()).abs();
    let reach = got.iter().map(|&v| dist(v)).fold(0.0, f64::max);
    // Dense eigenvalues as near the target as the farthest returned one (1e-9 slack for
    // a degenerate group split by round-off at the edge).
    let mut want: Vec<f64> = nonzero
        .iter()
        .copied()
        .filter(|&v| dist(v) <= reach * (1.0 + 1e-9))
        .collect();
    want.sort_by(f64::total_cmp);
    println!(
        "  {:>3} {:>18} {:>18} {:>9} {:>9} {:>9}",
        "#", "dense", "sparse", "rel diff", "residual", "div"
    );
    assert_eq!(got.len(), want.len(), "sparse {got:?} vs dense {want:?}");
    for (i, (g, w)) in got.iter().zip(&want).enumerate() {
        let md = &set.modes[i];
        println!(
            "  {:>3} {:>18.12} {:>18.12} {:>9.1e} {:>9.1e} {:>9.1e}",
            i,
            w,
            g,
            (g - w).abs() / w,
            md.residual,
            md.divergence
        );
        // 1e-9 relative: far above the round-off of both solves (dense ≈ 1e-13·λ_max/λ,
        // shift-invert converged to 1e-8 in θ, whose eigenvalue error is quadratic in
        // the residual), far below any discretisation difference (common practice,
        // no source).
        assert!((g - w).abs() <= 1e-9 * w, "sparse {g} vs dense {w}");
        // With T y − θ y = r, ‖K y − λ M y‖ = ‖(K − σM) r‖/|θ| ≤ ‖K − σM‖·tol·‖y‖: the
        // normalised residual is bounded by about the iteration's tolerance 1e-8 (the
        // default of `EigenOptions`); the modes reach 1e-15…2e-9 in practice.
        assert!(md.residual < 1e-8, "residual {}", md.residual);
        assert!(md.divergence < 1e-8, "divergence {}", md.divergence);
        assert!(*g > 0.1 * nonzero[0], "spurious near-zero mode {g}");
    }
    println!("  sparse solve {secs:.2} s");
}

#[test]
fn dense_reference_order1() {
    dense_case(NedelecOrder::One, 4);
}

#[test]
fn dense_reference_order2() {
    dense_case(NedelecOrder::Two, 3);
}

#[test]
fn dense_reference_order3() {
    dense_case(NedelecOrder::Three, 2);
}

/// A target inside the gradient-kernel region (σ small): the solver must still return
/// only physical modes (no λ ≈ 0 gradient fields), the lowest ones of the dense spectrum,
/// and as many as asked. The kernel (θ = −1/σ) is then nearer the shift than the modes;
/// the eigen iteration orders kernel Ritz values last and never counts them as wanted.
#[test]
fn low_target_returns_no_gradients() {
    let mesh = box_mesh([PI; 3], [3; 3]);
    let (set, _) = solve_nearest(&mesh, &[RegionMaterial::VACUUM], NedelecOrder::Two, 0.05, 5);
    println!(
        "target k² = 0.05: {} modes, {} dropped as spurious",
        set.modes.len(),
        set.stats.spurious_dropped
    );
    for m in &set.modes {
        println!(
            "  k² = {:.6}, residual {:.1e}, divergence {:.1e}",
            m.k0_squared, m.residual, m.divergence
        );
        // The lowest cube eigenvalue is 2 (Pozar §6.3); the coarse mesh is within 1 %.
        assert!(m.k0_squared > 1.9, "spurious mode k² = {}", m.k0_squared);
        assert!(m.divergence < 1e-8);
    }
    assert!(
        set.modes.len() >= 5,
        "asked 5 modes, got {}",
        set.modes.len()
    );
}
