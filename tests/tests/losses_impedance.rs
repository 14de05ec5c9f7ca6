//! Wall losses from the surface-impedance (Leontovich) wall term of the mode solve
//! (`WallLosses::Impedance`, solver `fem::impedance`) against the perturbation path
//! (`WallLosses::Perturbation`) and closed forms.
//!
//! * Pozar, Microwave Engineering, 4th ed., Example 6.3 (data from memory): copper WR-187
//!   (a = 4.755 cm, b = 2.215 cm, σ = 5.813e7 S/m) filled with polyethylene (εr = 2.25,
//!   tan δ = 4e-4), TE101 at 5 GHz; Q_c from the closed form Pozar eq. (6.46) recomputed
//!   here (the book prints Q_c ≈ 8403 for l = 1, from memory; printed only).
//! * TM010 pillbox: Q_c = p01 η / (2 Rs (1 + a/d)) (Pozar 4th ed. §6.4; Jackson, Classical
//!   Electrodynamics, 3rd ed., §8.8), p01 = 2.404825557695773 (Abramowitz & Stegun Table
//!   9.5). The built-in mesher's side wall is an inscribed polygon (no curved elements
//!   here), so the closed form at the equal-area radius bounds the geometric error.
//! * Frequency shift: a wall of surface impedance Zs = (1 + j)Rs moves the complex k0² of
//!   a perfectly conducting mode by δ(k0²) = jωμ0 Zs ∮|H_t|²/∫|E|² to first order (derived
//!   in the solver's `fem::impedance` docs the way Pozar 4th ed. §6.7 derives the cavity
//!   perturbation formulas; section from memory), so Δf/f = −1/(2Q_c) against the solve
//!   with perfectly conducting walls. On the discrete problem the first-order coefficient
//!   is real (the PEC problem is real), so the ratio Re δλ / Im δλ = −1 holds up to the
//!   second-order terms, O(1/Q_c) relative.

use antinode_mesh::mesher::mesh_geometry;
use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{Geometry, RegionInfo, TetMesh};
use antinode_solver::constants::{C0, MU0};
use antinode_solver::fem::impedance::WallLosses;
use antinode_solver::RegionMaterial;
use antinode_solver::{solve_modes, Mode, ModeSettings};
use std::f64::consts::PI;
use std::time::Instant;

const A: f64 = 0.04755;
const B: f64 = 0.02215;
const EPS_R: f64 = 2.25;
const TAN_D: f64 = 4e-4;
const SIGMA_CU: f64 = 5.813e7;
const F0: f64 = 5.0e9;
const P01: f64 = 2.404_825_557_695_773;

fn rs(f: f64) -> f64 {
    (2.0 * PI * f * MU0 / (2.0 * SIGMA_CU)).sqrt()
}

/// Length d of the TE101 cavity resonant at F0.
fn length() -> f64 {
    let k = 2.0 * PI * F0 * EPS_R.sqrt() / C0;
    PI / (k * k - (PI / A).powi(2)).sqrt()
}

/// Pozar eq. (6.46), l = 1.
fn q_c_te101(d: f64) -> f64 {
    let k = 2.0 * PI * F0 * EPS_R.sqrt() / C0;
    let eta = MU0 * C0 / EPS_R.sqrt();
    (k * A * d).powi(3) * B * eta
        / (2.0 * PI * PI * rs(F0))
        / (2.0 * A.powi(3) * B + 2.0 * B * d.powi(3) + A.powi(3) * d + A * d.powi(3))
}

fn q_tm010(a: f64, d: f64) -> f64 {
    let f = P01 * C0 / (2.0 * PI * a);
    P01 * MU0 * C0 / (2.0 * rs(f) * (1.0 + a / d))
}

fn nearest(modes: &[Mode], f: f64) -> &Mode {
    modes
        .iter()
        .min_by(|x, y| {
            (x.frequency_hz - f)
                .abs()
                .total_cmp(&(y.frequency_hz - f).abs())
        })
        .expect("a mode")
}

fn solve(
    mesh: &TetMesh,
    mat: RegionMaterial,
    target: f64,
    count: usize,
    losses: WallLosses,
) -> (Vec<Mode>, f64) {
    let mut s = ModeSettings::new(target);
    s.count = count;
    s.wall_conductivity = Some(SIGMA_CU);
    s.wall_losses = losses;
    let t = Instant::now();
    let set = solve_modes(mesh, &[mat], &s, &mut |_| {}).expect("solve_modes");
    let secs = t.elapsed().as_secs_f64();
    (set.modes, secs)
}

fn fill_mesh(n: [usize; 3]) -> TetMesh {
    let grid = GridLines::uniform([0.0; 3], [A, B, length()], n);
    grid_mesh(
        &grid,
        vec![RegionInfo {
            name: "fill".into(),
        }],
        |_| Some(0),
    )
}

const FILL: RegionMaterial = RegionMaterial {
    eps_real: EPS_R,
    eps_imag: EPS_R * TAN_D,
    mu_r: 1.0,
};

/// One mesh of the Example 6.3 cavity solved both ways.
struct Row {
    h: f64,
    n_cells: [usize; 3],
    f_pert: f64,
    f_imp: f64,
    qc_pert: f64,
    qc_imp: f64,
    /// Q_c from the complex eigenvalue with Q_d known: 1/Q_c = 1/Q_eigen − 1/Q_d.
    qc_eig: f64,
    secs_pert: f64,
    secs_imp: f64,
}

fn pozar_row(m: usize) -> Row {
    // 2m × m × m cells (a ≈ 2b ≈ 2d): spacings scale as 1/m.
    let n = [2 * m, m, m];
    let mesh = fill_mesh(n);
    let (p, secs_pert) = solve(&mesh, FILL, F0, 3, WallLosses::Perturbation);
    let (i, secs_imp) = solve(&mesh, FILL, F0, 3, WallLosses::Impedance);
    let (p, i) = (nearest(&p, F0), nearest(&i, F0));
    let d = length();
    Row {
        h: (A / n[0] as f64).max(B / n[1] as f64).max(d / n[2] as f64),
        n_cells: n,
        f_pert: p.frequency_hz,
        f_imp: i.frequency_hz,
        qc_pert: p.q.q_walls,
        qc_imp: i.q.q_walls,
        qc_eig: 1.0 / (1.0 / i.q_eigen - 1.0 / i.q.q_dielectric),
        secs_pert,
        secs_imp,
    }
}

fn print_rows(rows: &[Row], qc: f64) {
    println!(
        "  {:>10} {:>6} {:>9} {:>10} {:>9} {:>10} {:>10} {:>11} {:>12} {:>6} {:>6}",
        "cells",
        "h mm",
        "Q_c pert",
        "err",
        "Q_c imp",
        "err",
        "imp − eig",
        "Δf/f",
        "2Q_c·Δf/f",
        "s pert",
        "s imp"
    );
    for r in rows {
        let shift = r.f_imp / r.f_pert - 1.0;
        println!(
            "  {:>10} {:>6.2} {:>9.1} {:>+10.2e} {:>9.1} {:>+10.2e} {:>+10.1e} {:>+11.3e} {:>12.5} {:>6.2} {:>6.2}",
            format!("{:?}", r.n_cells),
            r.h * 1e3,
            r.qc_pert,
            r.qc_pert / qc - 1.0,
            r.qc_imp,
            r.qc_imp / qc - 1.0,
            r.qc_imp / r.qc_eig - 1.0,
            shift,
            2.0 * r.qc_imp * shift,
            r.secs_pert,
            r.secs_imp
        );
    }
}

fn check_rows(rows: &[Row], qc: f64) {
    for r in rows {
        // The field formula ∮|E_t|²/(4Rs) is the wall's share of Im k0² on the discrete
        // problem exactly at the target (solver `fem::impedance` docs); left are the
        // eigenvalue's own error, relative 1e-9 (the residual bound `losses_pozar.rs`
        // asserts) of k0², which is Q_c · 1e-9 ≈ 8e-6 of the wall part, and terms below it
        // (Re f/(2 Im f) against Im λ/Re λ: 1/(4Q²); the target–mode offset, second order:
        // (Δf/2f)² < 1e-8 here).
        assert!(
            (r.qc_imp / r.qc_eig - 1.0).abs() < 1e-9 * qc,
            "Q_c from E_t {} vs from the eigenvalue {}",
            r.qc_imp,
            r.qc_eig
        );
        // Frequency shift against the perfectly conducting solve on the same mesh:
        // Δf/f = −1/(2Q_c) up to the second-order terms, O(1/Q_c) relative with an O(1)
        // constant; 20/Q_c ≈ 2.4e-3 allows a constant of 20 (common practice, no source;
        // the measured deviation is printed).
        let shift = r.f_imp / r.f_pert - 1.0;
        let ratio = 2.0 * r.qc_imp * shift;
        assert!(
            (ratio + 1.0).abs() < 20.0 / qc,
            "2 Q_c Δf/f = {ratio}, expected −1"
        );
    }
}

/// Pozar 4th ed. Example 6.3, TE101, both wall-loss methods on the default-size meshes
/// (h ≈ 7.9 and 5.9 mm; the geometry default is 6 elements per wavelength in the fill,
/// λ = 40 mm → 6.7 mm).
#[test]
fn pozar_example_6_3_impedance() {
    let qc = q_c_te101(length());
    println!(
        "Pozar 4th ed. Example 6.3 TE101: closed-form Q_c {qc:.1} (eq. (6.46), recomputed); \
         book from memory 8403"
    );
    let rows: Vec<Row> = [3, 4].into_iter().map(pozar_row).collect();
    print_rows(&rows, qc);
    check_rows(&rows, qc);
    // The impedance path's Q_c within 1 % of the closed form at h ≈ 5.9 mm (the issue's
    // goal for the default mesh; the eigenvalue-based error is O(h⁴), see the
    // convergence run).
    let last = &rows[rows.len() - 1];
    let err = last.qc_imp / qc - 1.0;
    assert!(err.abs() < 0.01, "impedance Q_c error {err:+.3e} at 5.9 mm");
    // Perturbation and impedance agree to their discretisation errors; the impedance
    // one must be the closer (it is why the path exists).
    assert!((last.qc_imp - qc).abs() < (last.qc_pert - qc).abs());
}

/// Convergence of both methods on Example 6.3 (slow): observed orders printed; the
/// impedance path's order asserted ≥ 3 (nominal 4 = 2p for order 2, Boffi, Acta Numerica
/// 19, 2010, for eigenvalues; the Im part is part of the eigenvalue here).
#[test]
#[ignore = "convergence study, about 30 s"]
fn pozar_example_6_3_impedance_convergence() {
    let qc = q_c_te101(length());
    let rows: Vec<Row> = [2, 3, 4, 6].into_iter().map(pozar_row).collect();
    print_rows(&rows, qc);
    check_rows(&rows, qc);
    println!("  observed orders (perturbation, impedance):");
    let order =
        |a: f64, b: f64, ha: f64, hb: f64| ((a - qc) / (b - qc)).abs().ln() / (ha / hb).ln();
    let mut last = 0.0;
    for w in rows.windows(2) {
        let pp = order(w[0].qc_pert, w[1].qc_pert, w[0].h, w[1].h);
        let pi = order(w[0].qc_imp, w[1].qc_imp, w[0].h, w[1].h);
        println!(
            "    h {:.2} → {:.2} mm: {pp:.2}, {pi:.2}",
            w[0].h * 1e3,
            w[1].h * 1e3
        );
        last = pi;
    }
    assert!(last >= 3.0, "impedance Q_c order {last}");
}

/// The wall coefficient c(ω) ∝ √ω is factorised at the target and refined per mode: a
/// target 4 % below the mode must give the same frequency and Q as a target at the
/// mode, up to the remainder of the first-order update. The wall part of k0² goes as
/// 1/c (solver `fem::impedance` docs), so that remainder is (Δc/c)² = (Δω/2ω)² = 4e-4
/// of the wall part: relative 4e-4 on Q_c, 4e-4 · Q_eigen/Q_c on Q_eigen, and
/// 4e-4/(2Q_c) ≈ 3e-8 on f; twice these are asserted (the factor: common practice, no
/// source).
#[test]
fn impedance_refined_per_mode() {
    let mesh = fill_mesh([6, 3, 3]);
    let (at, _) = solve(&mesh, FILL, F0, 2, WallLosses::Impedance);
    let at = nearest(&at, F0);
    let (off, _) = solve(&mesh, FILL, 0.96 * F0, 4, WallLosses::Impedance);
    // The same mode, found from a target below it.
    let off = nearest(&off, at.frequency_hz);
    println!(
        "target at the mode: f {:.9} GHz Q_c {:.3} Q_eigen {:.4}; target 4 % below: f {:.9} \
         GHz Q_c {:.3} Q_eigen {:.4}",
        at.frequency_hz / 1e9,
        at.q.q_walls,
        at.q_eigen,
        off.frequency_hz / 1e9,
        off.q.q_walls,
        off.q_eigen
    );
    let rem = (0.04f64 / 2.0).powi(2);
    assert!((off.frequency_hz / at.frequency_hz - 1.0).abs() < 2.0 * rem / (2.0 * at.q.q_walls));
    assert!((off.q.q_walls / at.q.q_walls - 1.0).abs() < 2.0 * rem);
    assert!((off.q_eigen / at.q_eigen - 1.0).abs() < 2.0 * rem * at.q_eigen / at.q.q_walls);
}

/// Cylinder mesh from the built-in mesher (mm in the geometry text); the rim's vertex
/// count N gives the polygon.
fn cylinder(radius_mm: f64, height_mm: f64, target_ghz: f64, per_wl: f64) -> (TetMesh, usize) {
    let text = format!(
        "title = \"validation cylinder\"\n[cavity]\nshape = \"cylinder\"\nradius = {radius_mm}\n\
         height = {height_mm}\nwalls = \"pec\"\n[mesh]\norder = 2\nper_wavelength = {per_wl}\n\
         max_size = 100.0\n[solve]\ntarget = {target_ghz}\n"
    );
    let geom = Geometry::from_toml_str(&text, None).expect("geometry");
    let mesh = mesh_geometry(&geom).expect("mesh");
    let a = radius_mm * 1e-3;
    let n_rim = mesh
        .nodes
        .iter()
        .filter(|p| p[2].abs() < 1e-9 && ((p[0] * p[0] + p[1] * p[1]).sqrt() - a).abs() < 1e-9 * a)
        .count();
    (mesh, n_rim)
}

fn equal_area_radius(a: f64, n: usize) -> f64 {
    let t = 2.0 * PI / n as f64;
    a * (n as f64 * t.sin() / (2.0 * PI)).sqrt()
}

/// TM010 pillbox, both methods, against the closed form. Tolerance: the polygon's
/// effect (closed form at the equal-area radius against the true radius) plus the
/// discretisation error; for the perturbation path the budget of `losses_cylinder.rs`
/// (0.06 (k h)², factor 2 for unstructured meshes; common practice, no source), for the
/// impedance path the same bound (it converges faster, so the bound is loose).
#[test]
fn pillbox_tm010_both_methods() {
    let (a, d) = (0.05, 0.04);
    let f_ref = P01 * C0 / (2.0 * PI * a);
    let q_ref = q_tm010(a, d);
    let k = 2.0 * PI * f_ref / C0;
    println!(
        "TM010 pillbox a = {a} m, d = {d} m: f {:.6} GHz, Q_c closed form {q_ref:.1} \
         (Pozar 4th ed. §6.4)",
        f_ref / 1e9
    );
    println!(
        "  {:>6} {:>5} {:>7} {:>9} {:>10} {:>9} {:>10} {:>9} {:>10} {:>12}",
        "per λ", "N", "h mm", "Q(a_eq)", "tol", "Q_c pert", "err", "Q_c imp", "err", "2Q_c·Δf/f"
    );
    let air = RegionMaterial::VACUUM;
    for per_wl in [8.0, 12.0] {
        let (mesh, n) = cylinder(a * 1e3, d * 1e3, f_ref / 1e9, per_wl);
        let (p, _) = solve(&mesh, air, f_ref, 2, WallLosses::Perturbation);
        let (i, _) = solve(&mesh, air, f_ref, 2, WallLosses::Impedance);
        let (p, i) = (nearest(&p, f_ref), nearest(&i, f_ref));
        println!(
            "    f pert {:.7} GHz, f imp {:.7} GHz, Q_eigen {:.2}, Q_c imp {:.2}",
            p.frequency_hz / 1e9,
            i.frequency_hz / 1e9,
            i.q_eigen,
            i.q.q_walls
        );
        let h = C0 / f_ref / per_wl;
        let q_eq = q_tm010(equal_area_radius(a, n), d);
        let tol = 2.0 * 0.06 * (k * h).powi(2) + (q_eq / q_ref - 1.0).abs();
        let (ep, ei) = (p.q.q_walls / q_ref - 1.0, i.q.q_walls / q_ref - 1.0);
        let shift = i.frequency_hz / p.frequency_hz - 1.0;
        println!(
            "  {per_wl:>6} {n:>5} {:>7.2} {q_eq:>9.1} {tol:>10.2e} {:>9.1} {ep:>+10.2e} {:>9.1} \
             {ei:>+10.2e} {:>12.5}",
            h * 1e3,
            p.q.q_walls,
            i.q.q_walls,
            2.0 * i.q.q_walls * shift
        );
        assert!(ep.abs() <= tol, "perturbation TM010 Q_c error {ep}");
        assert!(ei.abs() <= tol, "impedance TM010 Q_c error {ei}");
        // The two methods differ by their discretisation errors only: both within the
        // tolerance of each other (same budget).
        assert!((i.q.q_walls / p.q.q_walls - 1.0).abs() <= tol);
        // Air-filled and without ports: Q_eigen is the wall Q itself (same discrete
        // quantity at the target, see the Example 6.3 test); the mode lies Δf = 0.4–0.9 %
        // from the target, so the first-order refinement leaves (Δf/2f)² (the
        // `impedance_refined_per_mode` budget, twice it asserted) plus the eigenvalue's
        // relative 1e-9 times Q_c.
        let rem = ((i.frequency_hz - f_ref) / (2.0 * f_ref)).powi(2);
        assert!((i.q_eigen / i.q.q_walls - 1.0).abs() < 2.0 * rem + 1e-9 * q_ref);
        // Δf/f = −1/(2Q_c) up to O(1/Q_c) relative, as in the Example 6.3 test.
        assert!((2.0 * i.q.q_walls * shift + 1.0).abs() < 20.0 / q_ref);
    }
}

/// A fed box with a lossy block (the invented test cavity of `antinode_tests::
/// driven_cavity`, 20 mm cells) solved both ways: the port's Q_ext must not depend on
/// the wall model beyond O(1/Q_c) and the field's change, and the two Q_c agree within
/// the perturbation path's discretisation budget 2 · 0.06 (k h)² (`losses_cylinder.rs`;
/// common practice, no source). The aperture rim is perfectly conducting in both (the
/// solver's `Space::with_impedance_walls`), so a free rim cannot leak the aperture's
/// field into the walls: without that the impedance Q_c of a strongly coupled mode fell
/// to half.
#[test]
fn fed_box_both_methods() {
    let (mesh, frames) = antinode_tests::driven_cavity::fed_box(1, false);
    let mats = antinode_tests::driven_cavity::fed_box_materials();
    let target = 2.5e9;
    let run = |losses: WallLosses| {
        let mut s = ModeSettings::new(target);
        s.count = 4;
        s.wall_conductivity = Some(SIGMA_CU);
        s.wall_losses = losses;
        s.ports = frames.clone();
        solve_modes(&mesh, &mats, &s, &mut |_| {})
            .expect("solve_modes")
            .modes
    };
    let (pert, imp) = (run(WallLosses::Perturbation), run(WallLosses::Impedance));
    let h = 0.02;
    println!(
        "fed box (invented test cavity), 20 mm cells, target {} GHz",
        target / 1e9
    );
    println!(
        "  {:>10} {:>10} {:>10} {:>10} {:>10} {:>10} {:>10}",
        "f GHz", "Q_c pert", "Q_c imp", "rel", "tol", "Q_ext pert", "Q_ext imp"
    );
    for p in &pert {
        let i = nearest(&imp, p.frequency_hz);
        let k = 2.0 * PI * p.frequency_hz / C0;
        let tol = 2.0 * 0.06 * (k * h).powi(2);
        let rel = i.q.q_walls / p.q.q_walls - 1.0;
        println!(
            "  {:>10.6} {:>10.1} {:>10.1} {rel:>+10.2e} {tol:>10.2e} {:>10.1} {:>10.1}",
            p.frequency_hz / 1e9,
            p.q.q_walls,
            i.q.q_walls,
            p.q.q_ports[0],
            i.q.q_ports[0]
        );
        assert!(
            (i.frequency_hz / p.frequency_hz - 1.0).abs() < 1e-3,
            "no matching mode"
        );
        assert!(rel.abs() <= tol, "Q_c differ by {rel}");
        // Q_ext: the wall model changes the field by O(1/Q_c) and the wall unknowns'
        // freedom by the discretisation error of the tangential field, bounded by the
        // same budget.
        if p.q.q_ports[0].is_finite() {
            let e = i.q.q_ports[0] / p.q.q_ports[0] - 1.0;
            assert!(e.abs() <= tol, "Q_ext differ by {e}");
        }
    }
}
