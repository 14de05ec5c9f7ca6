//! A box a × b × d (PEC walls) with a lossy dielectric slab 0 < z < t across the floor.
//!
//! Reference: the transverse-resonance equation of the modes transverse-electric to z
//! (LSE / TE^z family; Collin, Foundations for Microwave Engineering, 2nd ed., chapter on
//! cavities and partially filled waveguides; Harrington, Time-Harmonic Electromagnetic
//! Fields, §4 on partially filled guides — both from memory; derived here). With
//! E = ŷ sin(mπx/a) f(z) (n = 0: no y variation), E_y must vanish at z = 0 and z = d, so
//! f = sin(kz1 z) in the slab and f = A sin(kz2 (d − z)) in the air; continuity of E_y and
//! of H_x ∝ ∂f/∂z at z = t gives
//!
//!   kz1 cot(kz1 t) = −kz2 cot(kz2 (d − t)),   kz1² = εr k0² − kt²,  kz2² = k0² − kt²,
//!
//! kt = mπ/a, εr = ε′ − jε″ complex. Both sides are even in kz, so the square-root branch
//! does not matter. The complex root k0 is found by the secant method in the complex
//! plane, started from the lossless root (found by bisection on the real axis).
//! With b small no n = 0 mode with E_z ≠ 0 exists (it would need E_x, E_z ≠ 0 on the
//! y-walls), and modes with n ≥ 1 need k0 ≥ π/(b√ε′) (kt ≥ π/b, and no field can vary
//! faster than the slab wavenumber allows), above the compared window (asserted), so the
//! window holds exactly this family.
//!
//! Also check 6 (consistency): for the exact discrete eigenpair K x = λ (M′ − jM″) x,
//! x^H K x is real, so λ = R (a + jb)/(a² + b²) with a = x^H M′ x, b = x^H M″ x, i.e.
//! tan(arg λ) = b/a = 1/Q_d (the power-balance Q, P_d = (ωε0/2)∫ε″|E|²). With k = √λ,
//! Q_eigen = Re k/(2 Im k) = 1/(2 tan(arg λ / 2)) = (Q_d + √(Q_d² + 1))/2, i.e.
//! Q_eigen = Q_d (1 + 1/(4Q_d²) + …): they agree to O(1/Q²), and exactly after this
//! correction. Energy fractions: the slab's share of ∫ε′|E|² against the same integral of
//! the transverse-resonance field.

use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::RegionInfo;
use antinode_solver::constants::C0;
use antinode_solver::NedelecOrder;
use antinode_solver::RegionMaterial;
use antinode_solver::{solve_modes, Mode, ModeSettings};
use antinode_tests::grid_tolerance;
use std::f64::consts::PI;
use std::ops::{Add, Div, Mul, Sub};
use std::time::Instant;

#[derive(Clone, Copy, Debug, PartialEq)]
struct Cx(f64, f64);

impl Add for Cx {
    type Output = Cx;
    fn add(self, o: Cx) -> Cx {
        Cx(self.0 + o.0, self.1 + o.1)
    }
}
impl Sub for Cx {
    type Output = Cx;
    fn sub(self, o: Cx) -> Cx {
        Cx(self.0 - o.0, self.1 - o.1)
    }
}
impl Mul for Cx {
    type Output = Cx;
    fn mul(self, o: Cx) -> Cx {
        Cx(self.0 * o.0 - self.1 * o.1, self.0 * o.1 + self.1 * o.0)
    }
}
impl Div for Cx {
    type Output = Cx;
    fn div(self, o: Cx) -> Cx {
        let d = o.0 * o.0 + o.1 * o.1;
        Cx(
            (self.0 * o.0 + self.1 * o.1) / d,
            (self.1 * o.0 - self.0 * o.1) / d,
        )
    }
}
impl Cx {
    fn r(x: f64) -> Cx {
        Cx(x, 0.0)
    }
    fn abs(self) -> f64 {
        self.0.hypot(self.1)
    }
    fn sqrt(self) -> Cx {
        let r = self.abs();
        let re = (0.5 * (r + self.0)).sqrt();
        let im = (0.5 * (r - self.0)).sqrt().copysign(self.1);
        Cx(re, im)
    }
    fn sin(self) -> Cx {
        Cx(self.0.sin() * self.1.cosh(), self.0.cos() * self.1.sinh())
    }
    fn cos(self) -> Cx {
        Cx(self.0.cos() * self.1.cosh(), -self.0.sin() * self.1.sinh())
    }
}

/// Slab case: box a × b × d, slab thickness t, slab εr = ε′ − jε″.
#[derive(Clone, Copy)]
struct Case {
    a: f64,
    b: f64,
    d: f64,
    t: f64,
    eps: Cx,
}

impl Case {
    /// Transverse-resonance function written without poles:
    /// kz1 cos(kz1 t) sin(kz2 s) + kz2 cos(kz2 s) sin(kz1 t), s = d − t
    /// (the cot form times sin(kz1 t) sin(kz2 s); even in kz1 and kz2 up to the sign
    /// convention of both square roots, which multiplies it by ±1 only).
    fn f(&self, m: usize, k0: Cx) -> Cx {
        let kt = m as f64 * PI / self.a;
        let kz1 = (self.eps * k0 * k0 - Cx::r(kt * kt)).sqrt();
        let kz2 = (k0 * k0 - Cx::r(kt * kt)).sqrt();
        let s = self.d - self.t;
        kz1 * (kz1 * Cx::r(self.t)).cos() * (kz2 * Cx::r(s)).sin()
            + kz2 * (kz2 * Cx::r(s)).cos() * (kz1 * Cx::r(self.t)).sin()
    }

    /// Lossless roots k0 (ε″ set to 0) of family m in (kt, k_max], by sign changes.
    /// kz2 cot form has removable points where kz = 0 exactly; the pole-free form is
    /// real-valued for real k0 above kt/√ε′ (kz1 real) whether kz2 is real or imaginary
    /// (sin(jx)/j and cos(jx) are real), so a sign change brackets a simple root.
    fn lossless_roots(&self, m: usize, k_max: f64) -> Vec<f64> {
        let lossless = Case {
            eps: Cx::r(self.eps.0),
            ..*self
        };
        let g = |k: f64| {
            let v = lossless.f(m, Cx::r(k));
            // Real for kz2 real; purely imaginary times real for kz2 imaginary
            // (kz2 sin(kz2 s) and cos(kz2 s) are real then, kz1 real): take the
            // non-zero part.
            if v.0.abs() >= v.1.abs() {
                v.0
            } else {
                v.1
            }
        };
        let kt = m as f64 * PI / self.a;
        let lo = kt / self.eps.0.sqrt() * 1.0001;
        let steps = 4000;
        let mut out = Vec::new();
        let mut x0 = lo;
        let mut g0 = g(x0);
        for i in 1..=steps {
            let x1 = lo + (k_max - lo) * i as f64 / steps as f64;
            let g1 = g(x1);
            // Skip the sign flip at kz2 = 0 (k0 = kt), where the chosen part switches.
            let straddles_kt = (x0 - kt) * (x1 - kt) <= 0.0;
            if g0 * g1 < 0.0 && !straddles_kt {
                let (mut p, mut q, mut gp) = (x0, x1, g0);
                for _ in 0..200 {
                    let mid = 0.5 * (p + q);
                    let gm = g(mid);
                    if gp * gm <= 0.0 {
                        q = mid;
                    } else {
                        p = mid;
                        gp = gm;
                    }
                }
                out.push(0.5 * (p + q));
            }
            x0 = x1;
            g0 = g1;
        }
        out
    }

    /// Complex root near `k_start` by the secant method (|Δk| < 1e-13 |k|).
    fn complex_root(&self, m: usize, k_start: f64) -> Cx {
        let mut x0 = Cx::r(k_start);
        let mut x1 = Cx(k_start * (1.0 + 1e-4), k_start * 1e-3);
        let mut f0 = self.f(m, x0);
        let mut f1 = self.f(m, x1);
        for _ in 0..100 {
            let x2 = x1 - f1 * (x1 - x0) / (f1 - f0);
            x0 = x1;
            f0 = f1;
            x1 = x2;
            f1 = self.f(m, x1);
            if (x1 - x0).abs() < 1e-13 * x1.abs() {
                return x1;
            }
        }
        panic!("secant did not converge from {k_start}");
    }

    /// Slab share of ∫ε′|E|² of the mode with wavenumber k0 (Simpson's rule in z; the
    /// x profile is common to both parts and cancels).
    fn slab_energy_fraction(&self, m: usize, k0: Cx) -> f64 {
        let kt = m as f64 * PI / self.a;
        let kz1 = (self.eps * k0 * k0 - Cx::r(kt * kt)).sqrt();
        let kz2 = (k0 * k0 - Cx::r(kt * kt)).sqrt();
        let s = self.d - self.t;
        let amp = (kz1 * Cx::r(self.t)).sin() / (kz2 * Cx::r(s)).sin();
        let simpson = |f: &dyn Fn(f64) -> f64, lo: f64, hi: f64| {
            let n = 2000;
            let h = (hi - lo) / n as f64;
            let mut acc = f(lo) + f(hi);
            for i in 1..n {
                acc += f(lo + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
            }
            acc * h / 3.0
        };
        let slab = self.eps.0 * simpson(&|z| (kz1 * Cx::r(z)).sin().abs().powi(2), 0.0, self.t);
        let air = simpson(
            &|z| (amp * (kz2 * Cx::r(self.d - z)).sin()).abs().powi(2),
            self.t,
            self.d,
        );
        slab / (slab + air)
    }
}

fn slab_mesh(c: &Case, h: f64) -> antinode_mesh::TetMesh {
    let n = |l: f64| ((l / h).ceil() as usize).max(1);
    let mut z: Vec<f64> = (0..=n(c.t))
        .map(|i| c.t * i as f64 / n(c.t) as f64)
        .collect();
    let s = c.d - c.t;
    z.extend((1..=n(s)).map(|i| c.t + s * i as f64 / n(s) as f64));
    let lines = |l: f64| (0..=n(l)).map(|i| l * i as f64 / n(l) as f64).collect();
    let grid = GridLines {
        x: lines(c.a),
        y: lines(c.b),
        z,
    };
    let t = c.t;
    grid_mesh(
        &grid,
        vec![
            RegionInfo { name: "air".into() },
            RegionInfo {
                name: "slab".into(),
            },
        ],
        move |p| Some(if p[2] < t { 1 } else { 0 }),
    )
}

/// Reference modes (k0 complex, label) with Re k0 ≤ k_max, sorted by Re k0.
fn references(c: &Case, k_max: f64) -> Vec<(Cx, String)> {
    let mut out = Vec::new();
    for m in 1..=4 {
        for (p, k) in c.lossless_roots(m, k_max).into_iter().enumerate() {
            out.push((c.complex_root(m, k), format!("LSE{m}0{}", p + 1)));
        }
    }
    out.sort_by(|x, y| x.0 .0.total_cmp(&y.0 .0));
    out
}

fn solve(c: &Case, h: f64, band: [f64; 2], count: usize) -> (Vec<Mode>, usize, f64) {
    let mesh = slab_mesh(c, h);
    let materials = [
        RegionMaterial::VACUUM,
        RegionMaterial {
            eps_real: c.eps.0,
            eps_imag: -c.eps.1,
            mu_r: 1.0,
        },
    ];
    let mut s = ModeSettings::new(0.5 * (band[0] + band[1]));
    s.order = NedelecOrder::Two;
    s.band_hz = Some(band);
    s.count = count.min(1);
    let t = Instant::now();
    let set = solve_modes(&mesh, &materials, &s, &mut |_| {}).expect("solve_modes");
    (set.modes, set.stats.n_dofs, t.elapsed().as_secs_f64())
}

const CASE: Case = Case {
    a: 0.1,
    b: 0.015,
    d: 0.08,
    t: 0.02,
    eps: Cx(4.0, -0.4),
};

/// Compare the lowest `n_modes` computed modes with the references on a mesh of
/// spacing h; returns (worst rel. error of Re k0², worst rel. error of Q, worst energy
/// fraction error) and prints the table.
fn compare(c: &Case, h: f64, n_modes: usize) -> (f64, f64, f64) {
    let k_ref_max = 2.0 * PI * 6.0e9 / C0;
    let refs = references(c, k_ref_max);
    assert!(refs.len() > n_modes, "reference list too short");
    // Band solve over the compared references (edges 2 % outside them; the next
    // reference is farther than that).
    let f_of = |k: f64| k * C0 / (2.0 * PI);
    let band = [
        0.98 * f_of(refs[0].0 .0),
        1.02 * f_of(refs[n_modes - 1].0 .0),
    ];
    assert!(f_of(refs[n_modes].0 .0) > band[1]);
    assert!(
        band[1] < f_of(PI / (c.b * c.eps.0.sqrt())),
        "n ≥ 1 modes inside the band"
    );
    let (modes, n_dofs, secs) = solve(c, h, band, n_modes);
    assert_eq!(
        modes.len(),
        n_modes,
        "one computed mode per reference in the band"
    );
    let mut modes = modes;
    modes.sort_by(|x, y| x.frequency_hz.total_cmp(&y.frequency_hz));
    println!(
        "slab box {} × {} × {} m, slab t = {} m, εr = {} − j{}; h = {:.1} mm, {n_dofs} unknowns, {secs:.2} s",
        c.a, c.b, c.d, c.t, c.eps.0, -c.eps.1, h * 1e3
    );
    println!(
        "  {:<7} {:>11} {:>11} {:>9} {:>9} {:>9} {:>9} {:>9} {:>8} {:>8} {:>9}",
        "mode",
        "ref f GHz",
        "f GHz",
        "err k²",
        "ref Q",
        "Q_eigen",
        "err Q",
        "Q_d",
        "ref W_s",
        "W_s",
        "err W_s"
    );
    let (mut ek, mut eq, mut ew) = (0.0f64, 0.0f64, 0.0f64);
    for (m, (k, label)) in modes.iter().take(n_modes).zip(&refs) {
        let f_ref = k.0 * C0 / (2.0 * PI);
        let q_ref = k.0 / (2.0 * k.1.abs());
        // e^{jωt}: a decaying mode has Im ω > 0; the root's sign depends on the
        // convention of εr = ε′ − jε″ (Im k0 > 0), compare magnitudes of Q only.
        let m_idx: usize = label[3..4].parse().unwrap();
        let w_ref = c.slab_energy_fraction(m_idx, *k);
        let e_k = (m.k0_squared / (k.0 * k.0 - k.1 * k.1) - 1.0).abs();
        let e_q = (m.q_eigen / q_ref - 1.0).abs();
        let w = m.q.load_energy_fraction[0];
        println!(
            "  {label:<7} {:>11.6} {:>11.6} {:>9.1e} {:>9.3} {:>9.3} {:>9.1e} {:>9.3} {:>8.5} {:>8.5} {:>9.1e}",
            f_ref / 1e9,
            m.frequency_hz / 1e9,
            e_k,
            q_ref,
            m.q_eigen,
            e_q,
            m.q.q_dielectric,
            w_ref,
            w,
            (w - w_ref).abs()
        );
        ek = ek.max(e_k);
        eq = eq.max(e_q);
        ew = ew.max((w - w_ref).abs());
        // Check 6: exact discrete relation between the two Q's (see the module docs).
        let qd = m.q.q_dielectric;
        let q_rel = 0.5 * (qd + (qd * qd + 1.0).sqrt());
        println!(
            "          Q_eigen − Q_d = {:+.3e} (1/(4Q_d) = {:.3e}); Q_eigen vs (Q_d + √(Q_d²+1))/2: {:+.2e}; residual {:.1e}",
            m.q_eigen - qd,
            0.25 / qd,
            m.q_eigen / q_rel - 1.0,
            m.residual
        );
        assert!(m.residual < 1e-9, "residual {}", m.residual);
        // Eigen solver accuracy: relative eigenvalue error ~ residual-level (≤ 1e-9);
        // Q = Re λ / Im λ roughly, Im λ/Re λ ≈ 1/Q ≥ 1/100 here, so 1e-9 · 100 = 1e-7,
        // times 10 for the norm bounds in the residual definition.
        assert!(
            (m.q_eigen / q_rel - 1.0).abs() < 1e-6,
            "Q_eigen {} vs power balance Q_d {} (relation {})",
            m.q_eigen,
            qd,
            q_rel
        );
        // Energy fractions: slab + air shares add to 1, each in [0, 1].
        let air = m.integrals.region_e2[0];
        let slab = c.eps.0 * m.integrals.region_e2[1];
        assert!((w - slab / (air + slab)).abs() < 1e-12);
        assert!((0.0..=1.0).contains(&w));
    }
    (ek, eq, ew)
}

/// Eigenvalue tolerance: the O(h^{2p}) law of the structured-mesh tests
/// (`grid_tolerance`, order 2, constant observed on the cube (0,π)³ in tests/cube.rs;
/// Boffi, Acta Numerica 19 (2010)), with k the slab wavenumber √|εr| k0 at the highest
/// compared mode.
fn eig_tol(c: &Case, k0: f64, h: f64) -> f64 {
    grid_tolerance(NedelecOrder::Two, c.eps.abs().sqrt() * k0, h)
}

#[test]
fn slab_transverse_resonance() {
    let c = CASE;
    let n_modes = 4;
    let refs = references(&c, 2.0 * PI * 6.0e9 / C0);
    let k_top = refs[n_modes - 1].0 .0;
    let mut errs = Vec::new();
    for h in [0.01, 0.02 / 3.0] {
        let (ek, eq, ew) = compare(&c, h, n_modes);
        let tol = eig_tol(&c, k_top, h);
        println!("  worst: k² {ek:.2e} (tol {tol:.2e}), Q {eq:.2e}, slab energy share {ew:.2e}");
        // Re k0²: the eigenvalue law above. Q = Re k/(2 Im k): the same relative error on
        // the complex λ moves Im λ by up to tol·|λ|, i.e. Q by up to tol·2Q relative;
        // Q ≤ 40 here, so 2·40·tol.
        assert!(ek <= tol, "k² error {ek} above {tol}");
        let q_max = refs[..n_modes]
            .iter()
            .map(|r| r.0 .0 / (2.0 * r.0 .1.abs()))
            .fold(0.0, f64::max);
        assert!(
            eq <= 2.0 * q_max * tol,
            "Q error {eq} above {}",
            2.0 * q_max * tol
        );
        errs.push(ew);
    }
    // Energy share: a ratio of quadratic forms of the field, whose L2 error is O(h²)
    // for second-order first-kind elements: h / 1.5 must divide the error by ≥ 1.5
    // (order ≥ 1) and the fine mesh must be within 1 % (absolute share).
    assert!(
        errs[1] <= errs[0] / 1.5 || errs[1] < 1e-4,
        "energy share errors {errs:?}"
    );
    assert!(errs[1] < 0.01);
}
