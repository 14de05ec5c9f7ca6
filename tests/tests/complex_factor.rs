//! The native complex symmetric factorisation against the real 2n form it replaced.
//!
//! A lossy, fed cavity (box 200 × 150 × 120 mm with a matched TE10 port on the x = a
//! wall and a lossy slab over the floor: an invented test scenario) is solved twice, once
//! with the native complex LDLᵀ of the n × n operator and once with the real symmetric
//! LBLᵀ of its 2n form [[Ar, −Ai], [−Ai, −Ar]]. The two factorisations are different
//! algorithms for the same linear operator, each with solve residuals ~1e-13
//! (`linalg::complex_ldlt` tests against faer's dense LU), so the shift-inverted operators
//! agree to ~1e-13 and the seeded Krylov–Schur iteration takes the same path; the
//! converged eigenvalues then agree far below the iteration's own tolerance (1e-8
//! relative on the residual, whose effect on a well-separated eigenvalue is second order).
//! Tolerance 1e-10 relative on k0² and on Q (the figure issue 11 asks for; it leaves three
//! orders over the operators' agreement for round-off amplified through the restarts).

use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{RegionInfo, TetMesh};
use antinode_solver::linalg::factor::FactorKind;
use antinode_solver::linalg::mixed::FactorPrecision;
use antinode_solver::modes::operator::ComplexForm;
use antinode_solver::{solve_modes, Mode, ModeSettings, NedelecOrder, RegionMaterial};
use antinode_tests::port_wall;
use std::time::Instant;

const SIZE: [f64; 3] = [0.2, 0.15, 0.12];
const Y: [f64; 2] = [0.0375, 0.1125];
const Z: [f64; 2] = [0.04, 0.08];

fn fed_lossy_mesh() -> TetMesh {
    let grid = GridLines::uniform([0.0; 3], SIZE, [10, 8, 6]);
    let regions = vec![
        RegionInfo { name: "air".into() },
        RegionInfo {
            name: "slab".into(),
        },
    ];
    let mut mesh = grid_mesh(&grid, regions, |c| Some(u32::from(c[2] < 0.02)));
    port_wall::tag_x_wall_port(&mut mesh, SIZE[0], Y, Z, 0);
    mesh
}

/// (complex?, unknowns, factor entries, factor s, eigen s, total s).
type Figures = (bool, usize, usize, f64, f64, f64);

fn solve(form: ComplexForm) -> (Vec<Mode>, Figures) {
    solve_in(form, FactorPrecision::Double)
}

fn solve_in(form: ComplexForm, precision: FactorPrecision) -> (Vec<Mode>, Figures) {
    let mesh = fed_lossy_mesh();
    // A moderately lossy dielectric (invented values, εr = 4 − j0.4).
    let slab = RegionMaterial {
        eps_real: 4.0,
        eps_imag: 0.4,
        mu_r: 1.0,
    };
    let mut s = ModeSettings::new(2.45e9);
    s.order = NedelecOrder::Two;
    s.count = 8;
    s.ports = vec![port_wall::x_wall_frame(SIZE[0], Y, Z)];
    s.complex_form = form;
    s.precision = precision;
    let t = Instant::now();
    let set = solve_modes(&mesh, &[RegionMaterial::VACUUM, slab], &s, &mut |_| {}).expect("solve");
    let st = &set.stats;
    let figures = (
        st.complex,
        st.n_dofs,
        st.factor_nnz,
        st.factor_s,
        st.eigen_s,
        t.elapsed().as_secs_f64(),
    );
    (set.modes, figures)
}

#[test]
fn native_factor_gives_the_modes_of_the_real_form() {
    let (native, sn) = solve(ComplexForm::Native);
    let (reference, sr) = solve(ComplexForm::RealForm(FactorKind::Lblt));
    assert!(sn.0 && sr.0, "the lossy, fed case is complex");
    compare(&native, &reference, &sn, &sr);
}

/// The single-precision c32 factor with refinement in double (`linalg::mixed`, solves to
/// a relative residual of 1e-12) against the double c64 factor (~1e-13) on the lossy,
/// fed case: the shift-inverted operators agree to ~1e-12, so the same 1e-10 holds
/// (issue 11's figure, reasoning as in the module docs).
#[test]
fn single_factor_gives_the_modes_of_the_double_factor() {
    let (single, ss) = solve_in(ComplexForm::Native, FactorPrecision::Single);
    let (double, sd) = solve(ComplexForm::Native);
    assert!(ss.0 && sd.0, "the lossy, fed case is complex");
    assert_eq!(ss.2, sd.2, "same structure, same entry count");
    compare(&single, &double, &ss, &sd);
}

/// As above on the real path: the empty box 200 × 150 × 120 mm (lossless, PEC, no
/// port), f32 factor against f64.
#[test]
fn single_factor_gives_the_modes_of_the_double_factor_lossless() {
    let run = |precision| {
        let grid = GridLines::uniform([0.0; 3], SIZE, [10, 8, 6]);
        let mesh = grid_mesh(&grid, vec![RegionInfo { name: "air".into() }], |_| Some(0));
        let mut s = ModeSettings::new(2.45e9);
        s.count = 8;
        s.precision = precision;
        let t = Instant::now();
        let set = solve_modes(&mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {}).expect("solve");
        let st = &set.stats;
        assert_eq!(st.precision, precision);
        assert_eq!(st.mixed.is_some(), precision == FactorPrecision::Single);
        if let Some(m) = st.mixed {
            println!("single-precision solves: {m:?}");
            assert_eq!(m.unconverged, 0, "every solve met the bar");
        }
        let f = (
            st.complex,
            st.n_dofs,
            st.factor_nnz,
            st.factor_s,
            st.eigen_s,
            t.elapsed().as_secs_f64(),
        );
        (set.modes, f)
    };
    let (single, ss) = run(FactorPrecision::Single);
    let (double, sd) = run(FactorPrecision::Double);
    assert!(!ss.0 && !sd.0, "the empty box is real");
    compare(&single, &double, &ss, &sd);
}

/// Both mode lists agree to 1e-10 relative in k0² and Q (finite Q only).
fn compare(native: &[Mode], reference: &[Mode], sn: &Figures, sr: &Figures) {
    println!(
        "compared: {} unknowns, {} factor entries, factor {:.3} s, eigen {:.3} s, total {:.2} s",
        sn.1, sn.2, sn.3, sn.4, sn.5
    );
    println!(
        "reference: {} factor entries, factor {:.3} s, eigen {:.3} s, total {:.2} s",
        sr.2, sr.3, sr.4, sr.5
    );
    assert_eq!(native.len(), reference.len(), "mode counts");
    assert!(!native.is_empty(), "modes found");
    let mut worst = (0.0f64, 0.0f64);
    for (a, b) in native.iter().zip(reference) {
        let dk = (a.k0_squared - b.k0_squared).hypot(a.k0_squared_imag - b.k0_squared_imag)
            / b.k0_squared.hypot(b.k0_squared_imag);
        let dq = if b.q_eigen.is_finite() {
            (a.q_eigen - b.q_eigen).abs() / b.q_eigen
        } else {
            assert!(!a.q_eigen.is_finite(), "both lossless");
            0.0
        };
        println!(
            "f = {:.6} GHz, Q = {:.2}: |Δk²|/|k²| = {dk:.1e}, |ΔQ|/Q = {dq:.1e}",
            b.frequency_hz * 1e-9,
            b.q_eigen
        );
        worst = (worst.0.max(dk), worst.1.max(dq));
    }
    assert!(worst.0 < 1e-10, "eigenvalues differ by {:.2e}", worst.0);
    assert!(worst.1 < 1e-10, "Q differ by {:.2e}", worst.1);
}
