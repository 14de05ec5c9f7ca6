//! Convergence rates on smooth modes of the cube (0,π)³ (λ = 2: TE011/TE101/TM110;
//! λ = 3: TE111/TM111 — Pozar, Microwave Engineering, 4th ed., §6.3) with structured
//! meshes h, h/2, h/4. Theory: eigenvalue error O(h^{2p}) for Nédélec elements of order p
//! on smooth eigenfunctions (Boffi, Acta Numerica 19 (2010), from memory), so ≈ 2 for
//! order 1, ≈ 4 for order 2 and ≈ 6 for order 3.
//!
//! The error of a group is its largest member error (members split and may lie on either
//! side of the exact value). The asserted band for the finest pair — order 1: [1.7, 2.4],
//! order 2: [3.5, 4.6], order 3: [5.3, 6.7] — is the theoretical order with room for the pre-asymptotic regime
//! on these coarse meshes (common practice, no source); the rates of the coarser pair
//! are printed only.
//!
//! One exception, observed and stated rather than hidden: at order 1 the λ = 2 group,
//! whose fields vary along two coordinates only, converges at O(h⁴) on the mirror-
//! symmetric five-tetrahedra grid (the leading O(h²) error terms of neighbouring cells
//! cancel); the O(h²) law is an upper bound, so for that group only the lower end of the
//! band is asserted. The λ = 3 group varies along all three coordinates and shows the
//! generic rate.

use antinode_solver::NedelecOrder;
use antinode_solver::RegionMaterial;
use antinode_tests::*;
use std::f64::consts::PI;

/// `superconvergent`: reference values whose group is only held to the lower bound.
fn rates(order: NedelecOrder, ns: [usize; 3], superconvergent: &[f64]) {
    let groups = [(2.0, 3usize), (3.0, 2usize)];
    let mut errs = vec![Vec::new(); groups.len()];
    let mut hs = Vec::new();
    println!("cube (0,π)³, order {}:", order.as_int());
    for &n in &ns {
        let mesh = box_mesh([PI; 3], [n; 3]);
        let h = PI / n as f64;
        let (set, secs) = solve_band(&mesh, &[RegionMaterial::VACUUM], order, [1.0, 3.5]);
        let k2 = k2_in(&set, [1.0, 3.5]);
        assert_eq!(k2.len(), 5, "n = {n}: expected 3 + 2 modes, got {k2:?}");
        let mut at = 0;
        let mut line = format!(
            "  n = {n:>2} ({:>6} unknowns, {secs:.2} s):",
            set.stats.n_dofs
        );
        for (g, &(lam, mult)) in groups.iter().enumerate() {
            let e = k2[at..at + mult]
                .iter()
                .map(|v| ((v - lam) / lam).abs())
                .fold(0.0, f64::max);
            at += mult;
            line += &format!("  λ={lam}: rel err {e:.3e}");
            errs[g].push(e);
        }
        println!("{line}");
        hs.push(h);
    }
    for (g, &(lam, _)) in groups.iter().enumerate() {
        let r1 = observed_order(errs[g][0], hs[0], errs[g][1], hs[1]);
        let r2 = observed_order(errs[g][1], hs[1], errs[g][2], hs[2]);
        println!("  λ = {lam}: observed order {r1:.2} (h→h/2), {r2:.2} (h/2→h/4)");
        let (lo, hi) = match order {
            NedelecOrder::One => (1.7, 2.4),
            NedelecOrder::Two => (3.5, 4.6),
            NedelecOrder::Three => (5.3, 6.7),
        };
        let hi = if superconvergent.contains(&lam) {
            f64::INFINITY
        } else {
            hi
        };
        assert!(
            (lo..=hi).contains(&r2),
            "order {}, λ = {lam}: observed rate {r2} outside [{lo}, {hi}]",
            order.as_int()
        );
    }
}

#[test]
fn rate_order1() {
    rates(NedelecOrder::One, [4, 8, 16], &[2.0]);
}

#[test]
fn rate_order2() {
    rates(NedelecOrder::Two, [2, 4, 8], &[]);
}

#[test]
fn rate_order3() {
    rates(NedelecOrder::Three, [2, 4, 8], &[]);
}
