//! Box a×b×d with a dielectric slab (ε′ = 4) filling 0 < z < t across the floor, PEC
//! walls. Semi-analytic reference: transverse resonance in z for each (m, n) with
//! kx = mπ/a, ky = nπ/b, kt² = kx² + ky², kz1² = ε k0² − kt² (slab), kz2² = k0² − kt² (air),
//! s = d − t.
//!
//! Derivation (modes TE and TM to z in a layered box; the partially filled guide / cavity
//! of Collin, Foundations for Microwave Engineering, 2nd ed., ch. 5–7, and Harrington,
//! Time-Harmonic Electromagnetic Fields, ch. 4 — chapter references from memory; the
//! derivation below is self-contained):
//!
//! TE to z (LSE, E_z = 0): H_z = ψ(z) cos kx x cos ky y, E_t ∝ ψ(z) ẑ×∇_t(cos cos), so
//! PEC at z = 0, d gives ψ(0) = ψ(d) = 0; μ is the same everywhere, so continuity of E_t
//! and H_t ∝ ψ′(z) ∇_t(cos cos) gives ψ and ψ′ continuous at z = t. With
//! ψ = sin(kz1 z)/kz1 in the slab and A sin(kz2 (d − z))/kz2 in the air:
//!   kz1 cot(kz1 t) = −kz2 cot(kz2 s), i.e. F_TE = S1 C2 + C1 S2 = 0,
//! with S_i = sin(kz_i L_i)/kz_i, C_i = cos(kz_i L_i), L1 = t, L2 = s (sinh/cosh for
//! kz² < 0, S = L at kz² = 0: entire functions of k0², no poles, no spurious roots).
//! Needs (m, n) ≠ (0, 0).
//!
//! TM to z (LSM, H_z = 0): E_z = φ(z) sin kx x sin ky y, E_t ∝ φ′(z) ∇_t(sin sin),
//! H_t ∝ ε φ(z) ẑ×∇_t(sin sin): PEC gives φ′(0) = φ′(d) = 0; continuity of E_t and H_t
//! gives φ′ and ε φ continuous (i.e. D_z continuous). With φ = cos(kz1 z) in the slab and
//! B cos(kz2 (d − z)) in the air: ε cos(kz1 t) = B cos(kz2 s),
//! −kz1 sin(kz1 t) = B kz2 sin(kz2 s), i.e. kz1 tan(kz1 t) = −ε kz2 tan(kz2 s), or
//!   F_TM = ε kz2² C1 S2 + kz1² S1 C2 = 0.
//! Needs m, n ≥ 1. For ε = 1 both reduce to the empty-box TE/TM_mnp (checked below).
//!
//! Roots: sign changes on a fine scan, refined by bisection (simple roots only: each
//! (m, n, kind) gives a Sturm–Liouville problem in z with simple eigenvalues).
//! Tolerance: `grid_tolerance` (order 2) at the slab wavenumber √ε k0 of the window top.

use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_solver::NedelecOrder;
use antinode_solver::RegionMaterial;
use antinode_tests::*;
use std::f64::consts::PI;

/// sin(kL)/k for k² = k2 (sinh for k2 < 0, L for k2 = 0).
fn s_fn(k2: f64, l: f64) -> f64 {
    if k2 > 0.0 {
        let k = k2.sqrt();
        (k * l).sin() / k
    } else if k2 < 0.0 {
        let k = (-k2).sqrt();
        (k * l).sinh() / k
    } else {
        l
    }
}

/// cos(kL) for k² = k2 (cosh for k2 < 0).
fn c_fn(k2: f64, l: f64) -> f64 {
    if k2 >= 0.0 {
        (k2.sqrt() * l).cos()
    } else {
        ((-k2).sqrt() * l).cosh()
    }
}

/// Semi-analytic modes (k0²) of the slab-loaded box up to `k2_max`.
fn slab_modes(size: [f64; 3], t: f64, eps: f64, k2_max: f64) -> Vec<RefMode> {
    let [a, b, d] = size;
    let s = d - t;
    let mut out = Vec::new();
    let kmax_slab = (eps * k2_max).sqrt();
    let mmax = (kmax_slab * a / PI) as usize + 1;
    let nmax = (kmax_slab * b / PI) as usize + 1;
    for m in 0..=mmax {
        for n in 0..=nmax {
            let kt2 = (m as f64 * PI / a).powi(2) + (n as f64 * PI / b).powi(2);
            if kt2 > eps * k2_max {
                continue;
            }
            if (m, n) != (0, 0) {
                let f = |k02: f64| {
                    let (z1, z2) = (eps * k02 - kt2, k02 - kt2);
                    s_fn(z1, t) * c_fn(z2, s) + c_fn(z1, t) * s_fn(z2, s)
                };
                for (i, r) in roots_in(f, 0.0, k2_max, 40_000).into_iter().enumerate() {
                    out.push(RefMode {
                        k2: r,
                        label: format!("LSE{m}{n}.{}", i + 1),
                    });
                }
            }
            if m >= 1 && n >= 1 {
                let f = |k02: f64| {
                    let (z1, z2) = (eps * k02 - kt2, k02 - kt2);
                    eps * z2 * c_fn(z1, t) * s_fn(z2, s) + z1 * s_fn(z1, t) * c_fn(z2, s)
                };
                for (i, r) in roots_in(f, 0.0, k2_max, 40_000).into_iter().enumerate() {
                    out.push(RefMode {
                        k2: r,
                        label: format!("LSM{m}{n}.{}", i + 1),
                    });
                }
            }
        }
    }
    out.sort_by(|x, y| x.k2.total_cmp(&y.k2));
    out
}

/// With ε = 1 the transverse-resonance roots must be the empty-box list (Pozar §6.3).
#[test]
fn transverse_resonance_reduces_to_empty_box() {
    let size = [1.0, 0.8, 0.6];
    let k2_max = 150.0;
    let tr = slab_modes(size, 0.2, 1.0, k2_max);
    let bx = box_modes(size, k2_max);
    assert_eq!(tr.len(), bx.len(), "{} vs {}", tr.len(), bx.len());
    for (x, y) in tr.iter().zip(&bx) {
        // Bisection to 1e-13 relative; 1e-10 leaves room for the scan rounding.
        assert!((x.k2 - y.k2).abs() <= 1e-10 * y.k2, "{x:?} vs {y:?}");
    }
}

#[test]
fn dielectric_slab_order2() {
    let size = [1.0, 0.8, 0.6];
    let (t, eps) = (0.2, 4.0);
    let n = [10, 8, 6]; // h = 0.1: z-lines at 0.1 steps, so z = t is a grid plane.
    let h = grid_h(size, n);
    let all = slab_modes(size, t, eps, 80.0);
    // The lowest 10 semi-analytic modes.
    let top = all[9].k2;
    let mut tol = grid_tolerance(NedelecOrder::Two, (eps * top).sqrt(), h);
    let mut window = clear_window(&all, [0.5 * all[0].k2, top * (1.0 + 2.0 * tol)], tol);
    tol = tol.max(grid_tolerance(
        NedelecOrder::Two,
        (eps * window[1]).sqrt(),
        h,
    ));
    window = clear_window(&all, window, tol);
    let reference = inside(&all, window);
    let grid = GridLines::uniform([0.0; 3], size, n);
    let mesh = grid_mesh(&grid, vec![region("air"), region("slab")], |c| {
        Some(if c[2] < t { 1 } else { 0 })
    });
    let slab = RegionMaterial {
        eps_real: eps,
        eps_imag: 0.0,
        mu_r: 1.0,
    };
    let (set, secs) = solve_band(
        &mesh,
        &[RegionMaterial::VACUUM, slab],
        NedelecOrder::Two,
        window,
    );
    let computed = k2_in(&set, window);
    let cmp = compare(&reference, &computed, tol);
    cmp.print(
        &format!(
            "slab ε = {eps}, t = {t}, box {size:?}, order 2, h = {h}, {} unknowns, \
             tolerance {tol:.2e} on k², {secs:.1} s",
            set.stats.n_dofs
        ),
        "k0²",
        |k| k,
    );
    let worst = cmp.assert_complete("slab");
    println!("  worst relative k0² error {worst:.2e}");
    assert!(reference.len() >= 10);
    for m in &set.modes {
        assert!(m.residual < 1e-9, "residual {}", m.residual);
    }
}
