//! Thick L-shape: the domain ((−1,1)² minus one quadrant) × (0,1) with PEC walls.
//! Reference: first five eigenvalues 9.63972384472, 11.3452262252, 13.4036357679,
//! 15.1972519265, 19.5093282458 (Dauge, "Benchmark computations for Maxwell equations
//! for the approximation of highly singular solutions", domain "thick L" — values as in
//! the project's design notes §5).
//!
//! The re-entrant edge makes the first eigenfunction singular (∼ r^{2/3}); the eigenvalue
//! then converges like h^{4/3} instead of h⁴ (Costabel & Dauge, from memory). Checks,
//! order 2 on structured meshes with h = 1/2, 1/4, 1/8: every error shrinks with
//! refinement, and the first eigenvalue's observed order lies in [1.0, 2.0] (4/3
//! expected; the band allows for the pre-asymptotic regime on such coarse meshes —
//! common practice, no source).

#![allow(clippy::needless_range_loop)] // index loops over the five reference values

use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_solver::NedelecOrder;
use antinode_solver::RegionMaterial;
use antinode_tests::*;

const DAUGE: [f64; 5] = [
    9.63972384472,
    11.3452262252,
    13.4036357679,
    15.1972519265,
    19.5093282458,
];

fn l_eigenvalues(n: usize) -> (Vec<f64>, usize, f64) {
    // n cells per unit length; drop the quadrant x > 0, y < 0.
    let grid = GridLines::uniform([-1.0, -1.0, 0.0], [1.0, 1.0, 1.0], [2 * n, 2 * n, n]);
    let mesh = grid_mesh(&grid, vec![region("air")], |c| {
        if c[0] > 0.0 && c[1] < 0.0 {
            None
        } else {
            Some(0)
        }
    });
    // Every mode with k² in [5, 21]: the first five of them are the lowest five (no
    // Maxwell eigenvalue of this domain lies below 9.6; zero is the gradient kernel).
    let (set, secs) = solve_band(
        &mesh,
        &[RegionMaterial::VACUUM],
        NedelecOrder::Two,
        [5.0, 21.0],
    );
    let k2 = k2_in(&set, [5.0, 21.0]);
    for m in &set.modes {
        assert!(m.residual < 1e-9, "residual {}", m.residual);
    }
    (k2, set.stats.n_dofs, secs)
}

#[test]
fn thick_l_order2() {
    let ns = [2usize, 4, 8];
    let mut errors = Vec::new();
    for &n in &ns {
        let (k2, dofs, secs) = l_eigenvalues(n);
        assert!(k2.len() >= 5, "only {} modes in [5, 21]", k2.len());
        let lowest: Vec<f64> = k2[..5].to_vec();
        println!("thick L, order 2, h = 1/{n}: {dofs} unknowns, {secs:.2} s");
        println!(
            "  {:>3} {:>16} {:>16} {:>10}",
            "#", "Dauge", "computed", "rel err"
        );
        let mut e = Vec::new();
        for i in 0..5 {
            let rel = (lowest[i] - DAUGE[i]) / DAUGE[i];
            println!(
                "  {:>3} {:>16.11} {:>16.11} {:>10.2e}",
                i + 1,
                DAUGE[i],
                lowest[i],
                rel
            );
            e.push(rel.abs());
        }
        errors.push(e);
    }
    for i in 0..5 {
        for l in 1..ns.len() {
            assert!(
                errors[l][i] < errors[l - 1][i],
                "eigenvalue {} error did not shrink from h = 1/{} to 1/{}: {:e} → {:e}",
                i + 1,
                ns[l - 1],
                ns[l],
                errors[l - 1][i],
                errors[l][i]
            );
        }
    }
    println!("  observed orders (h → h/2):");
    for i in 0..5 {
        let r: Vec<String> = (1..ns.len())
            .map(|l| {
                format!(
                    "{:.2}",
                    observed_order(errors[l - 1][i], 2.0, errors[l][i], 1.0)
                )
            })
            .collect();
        println!("  λ{}: {}", i + 1, r.join(", "));
    }
    let r1 = observed_order(errors[1][0], 2.0, errors[2][0], 1.0);
    assert!(
        (1.0..=2.0).contains(&r1),
        "first eigenvalue order {r1}, expected ≈ 4/3"
    );
}
