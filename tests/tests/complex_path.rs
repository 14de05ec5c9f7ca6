//! Consistency of the complex eigen path with the real one.
//!
//! A lossless problem run through the complex path (complex symmetric factor, complex
//! Krylov–Schur in the Euclidean inner product) must give the real path's eigenvalues
//! (real symmetric factor, Krylov–Schur in the M′-inner product): the same discrete
//! pencil K x = λ M′ x, two independent iterations. The complex path is forced by
//! listing a lossy material for a region id no element carries, so that M″ exists but
//! is zero (`assemble` adds M″ whenever a listed material is lossy).
//!
//! Reference: the real path's eigenvalues. They are Ritz values of an M′-self-adjoint
//! operator converged to a residual of 1e-8 in T, so accurate to about its square; the
//! complex path's Ritz values are accurate to first order in its residual: |δθ| ≲
//! 1e-8 |θ|, i.e. |δλ| ≲ 1e-8 |λ − σ| (λ = σ + 1/θ). That bound, plus 1e-12 λ for the
//! round-off of two factorisations of condition ~1e4–1e6 (the shifted matrix near σ), is
//! the tolerance of each eigenvalue.

use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{RegionInfo, TetMesh};
use antinode_solver::constants::k0_squared;
use antinode_solver::{solve_modes, ModeSettings, NedelecOrder, RegionMaterial};

/// 300 × 300 × 200 mm box with a 30 mm slab (εr = 4, invented) over the floor:
/// the benchmark's geometry (`benches/complex_modes.rs`) on a coarse grid.
fn slab_box() -> TetMesh {
    let grid = GridLines::uniform([0.0; 3], [0.30, 0.30, 0.20], [8, 8, 6]);
    let regions = vec![
        RegionInfo { name: "air".into() },
        RegionInfo {
            name: "slab".into(),
        },
    ];
    grid_mesh(&grid, regions, |c| Some(u32::from(c[2] < 0.03)))
}

#[test]
fn complex_path_on_a_lossless_problem_gives_the_real_modes() {
    let mesh = slab_box();
    let mut s = ModeSettings::new(2.45e9);
    s.order = NedelecOrder::Two;
    s.count = 12;
    let slab = RegionMaterial {
        eps_real: 4.0,
        eps_imag: 0.0,
        mu_r: 1.0,
    };
    let unused_lossy = RegionMaterial {
        eps_real: 4.0,
        eps_imag: 0.4,
        mu_r: 1.0,
    };
    let real =
        solve_modes(&mesh, &[RegionMaterial::VACUUM, slab], &s, &mut |_| {}).expect("real path");
    let complex = solve_modes(
        &mesh,
        &[RegionMaterial::VACUUM, slab, unused_lossy],
        &s,
        &mut |_| {},
    )
    .expect("complex path");
    assert!(
        !real.stats.complex && complex.stats.complex,
        "paths not as intended"
    );
    println!(
        "solves: real path {}, complex path {} (restarts {} / {})",
        real.stats.applications,
        complex.stats.applications,
        real.stats.restarts,
        complex.stats.restarts
    );
    assert_eq!(real.modes.len(), complex.modes.len(), "mode counts differ");
    let sigma = k0_squared(s.target_hz);
    for (r, c) in real.modes.iter().zip(&complex.modes) {
        let lr = r.k0_squared;
        let tol = 1e-8 * (lr - sigma).abs() + 1e-12 * lr;
        let d = ((c.k0_squared - lr).powi(2) + c.k0_squared_imag.powi(2)).sqrt();
        println!(
            "  λ real {lr:.12e}, complex {:.12e}{:+.1e}j, |Δ|/λ = {:.1e} (tolerance {:.1e})",
            c.k0_squared,
            c.k0_squared_imag,
            d / lr,
            tol / lr
        );
        assert!(
            d <= tol,
            "λ {lr} vs {} + {}j",
            c.k0_squared,
            c.k0_squared_imag
        );
    }
}
