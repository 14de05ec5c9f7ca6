//! Checks of the exact layered-waveguide reference (`antinode_tests::layered_guide`)
//! against textbook closed forms, before it is used to judge the driven solver.
//!
//! Sources: Pozar, Microwave Engineering, 4th ed.: §2.3 (terminated lossless line:
//! Γ_L = (Z_L − Z0)/(Z_L + Z0), Γ(l) = Γ_L e^{−2jβl}; the shorted line, Γ_L = −1; a
//! λ/4 shorted line looks like an open circuit), §3.3 (TE10 of a rectangular guide,
//! β = √(k² − (π/a)²), Z_TE = ωμ/β), §1.6 (Poynting's theorem: the power entering a
//! closed region equals the power it absorbs). Section and equation numbers from memory.

use antinode_tests::layered_guide::{beta, gauss_legendre, Layer, LayeredGuide, Termination, C0};
use faer::c64;
use std::f64::consts::PI;

/// WR-340 (86.36 × 43.18 mm, EIA standard dimensions).
const A: f64 = 0.08636;
const B: f64 = 0.04318;

fn guide(layers: Vec<Layer>) -> LayeredGuide {
    LayeredGuide {
        width: A,
        height: B,
        layers,
        termination: Termination::Short,
    }
}

fn k0(f: f64) -> f64 {
    2.0 * PI * f / C0
}

/// Round-off of the line solution: a handful of complex products per layer, each good
/// to ~1e-16 relative; 1e-12 leaves room for cancellation near |Γ| ≈ 1 (common
/// practice, no source).
const EXACT: f64 = 1e-12;

#[test]
fn empty_short_reflects_everything_with_the_line_phase() {
    // Pozar §2.3: shorted line of length l, Γ(l) = −e^{−2jβl}.
    let l = 0.137;
    let g = guide(vec![Layer::new(l, 1.0, 0.0)]);
    for f in [2.0e9, 2.45e9, 3.1e9] {
        let r = g.solve(f);
        let b0 = beta(k0(f), c64::new(1.0, 0.0), A);
        let expect = -(c64::new(0.0, -2.0) * b0 * l).exp();
        println!(
            "f = {:.3} GHz: Γ = {:.12}, −e^(−2jβl) = {:.12}",
            f / 1e9,
            r.gamma,
            expect
        );
        assert!((r.gamma - expect).norm() < EXACT);
        assert!((r.gamma.norm() - 1.0).abs() < EXACT);
    }
}

#[test]
fn quarter_wave_dielectric_on_a_short_looks_open() {
    // Pozar §2.3: a shorted line λ/4 long has Z_in → ∞, so Γ = +1 seen from a line of
    // the same impedance; here the feed sees the layer's infinite input impedance: Γ = 1.
    let f = 2.45e9;
    let eps = 4.0;
    let bl = beta(k0(f), c64::new(eps, 0.0), A).re;
    let d = 0.5 * PI / bl;
    let r = guide(vec![Layer::new(d, eps, 0.0)]).solve(f);
    println!(
        "λg/4 layer εr = {eps}, d = {:.3} mm: Γ = {:.3e}",
        d * 1e3,
        r.gamma
    );
    assert!((r.gamma - c64::new(1.0, 0.0)).norm() < 1e-10);
}

#[test]
fn thick_lossy_layer_reflects_like_a_matched_interface() {
    // Pozar §2.3 with §3.3: a layer so lossy and thick that the wave reflected by the
    // short returns attenuated below round-off acts as a semi-infinite guide of
    // impedance Z1 = ωμ0/β1: Γ = (Z1 − Z0)/(Z1 + Z0) = (β0 − β1)/(β0 + β1).
    let f = 2.45e9;
    let eps = c64::new(20.0, -8.0);
    let b1 = beta(k0(f), eps, A);
    let d = 40.0 / (-b1.im); // e^{−2αd} = e^{−80}
    let r = guide(vec![Layer::new(d, eps.re, -eps.im)]).solve(f);
    let b0 = beta(k0(f), c64::new(1.0, 0.0), A);
    let expect = (b0 - b1) / (b0 + b1);
    println!(
        "thick lossy layer: Γ = {:.12}, interface formula {:.12}",
        r.gamma, expect
    );
    assert!((r.gamma - expect).norm() < EXACT);
}

fn layered_cases() -> Vec<(&'static str, Vec<Layer>)> {
    vec![
        ("one lossy layer", vec![Layer::new(0.03, 10.0, 2.0)]),
        (
            "air gap, lossless, lossy",
            vec![
                Layer::new(0.02, 1.0, 0.0),
                Layer::new(0.015, 4.0, 0.0),
                Layer::new(0.01, 30.0, 12.0),
            ],
        ),
        (
            "water-like and low-loss layers",
            vec![Layer::new(0.007, 78.0, 10.0), Layer::new(0.02, 2.5, 0.05)],
        ),
    ]
}

#[test]
fn energy_balance_of_the_line_solution() {
    // Pozar §1.6: 1 − |Γ|² = Σ P_layer / P_fwd. Γ comes from the interface (V, I) at the
    // port plane, the absorbed powers from the closed-form ∫|V|² dz inside the layers: two
    // independent parts of the solution.
    for (name, layers) in layered_cases() {
        let g = guide(layers);
        for f in [2.30e9, 2.45e9, 2.60e9] {
            let r = g.solve(f);
            let absorbed: f64 = r.absorbed_fractions().iter().sum();
            let balance = 1.0 - r.gamma.norm_sqr() - absorbed;
            assert_eq!(r.transmission.norm(), 0.0);
            println!(
                "{name}, {:.2} GHz: |Γ| = {:.6}, absorbed {:?}, 1 − |Γ|² − Σ = {balance:.1e}",
                f / 1e9,
                r.gamma.norm(),
                r.absorbed_fractions()
            );
            assert!(balance.abs() < EXACT, "{name} at {f} Hz: {balance:e}");
        }
    }
}

#[test]
fn closed_form_integrals_match_quadrature() {
    // Two paths: the closed-form ∫|V|² against composite Gauss–Legendre (exponentially
    // convergent for this smooth integrand; 64 panels of 8 points resolve several
    // wavelengths per layer to round-off). And the COV formula, which factorises the
    // x-dependence, against a direct 2-D quadrature of q over the layer.
    for (name, layers) in layered_cases() {
        let r = guide(layers).solve(2.45e9);
        for (i, l) in r.layers.iter().enumerate() {
            let closed = l.v2_integral();
            let quad = l.v2_quadrature(64);
            assert!(
                (closed - quad).abs() <= 1e-12 * closed,
                "{name} layer {i}: {closed} vs {quad}"
            );
            if -l.eps.im <= 0.0 {
                continue;
            }
            let cov = r.layer_cov(i, 64);
            let (z0, z1) = (l.z0, l.z0 + l.thickness);
            let q = |x: f64, z: f64| r.heating_per_watt(x, z);
            let mean = gauss_legendre(|x| gauss_legendre(|z| q(x, z), z0, z1, 32), 0.0, A, 16)
                / (A * l.thickness);
            let m2 = gauss_legendre(
                |x| gauss_legendre(|z| q(x, z).powi(2), z0, z1, 32),
                0.0,
                A,
                16,
            ) / (A * l.thickness);
            let cov2d = (m2 / (mean * mean) - 1.0).sqrt();
            println!("{name} layer {i}: COV {cov:.12} (2-D quadrature {cov2d:.12})");
            assert!((cov - cov2d).abs() < 1e-10, "{name} layer {i}");
        }
    }
}

#[test]
fn matched_end_transmits_and_balances() {
    // An empty matched section transmits everything with the line phase (Pozar §2.3:
    // T = e^{−jβl}); with lossy layers, 1 − |Γ|² − |T|² = Σ P_layer/P_fwd (Pozar §1.6).
    let f = 2.45e9;
    let mut g = guide(vec![Layer::new(0.1, 1.0, 0.0)]);
    g.termination = Termination::Matched;
    let r = g.solve(f);
    let b0 = beta(k0(f), c64::new(1.0, 0.0), A);
    let expect = (c64::new(0.0, -1.0) * b0 * 0.1).exp();
    assert!(r.gamma.norm() < EXACT);
    assert!((r.transmission - expect).norm() < EXACT);
    for (name, layers) in layered_cases() {
        let mut g = guide(layers);
        g.termination = Termination::Matched;
        let r = g.solve(f);
        let absorbed: f64 = r.absorbed_fractions().iter().sum();
        let balance = 1.0 - r.gamma.norm_sqr() - r.transmission.norm_sqr() - absorbed;
        println!(
            "{name}, matched end: |Γ| = {:.6}, |T| = {:.6}, balance {balance:.1e}",
            r.gamma.norm(),
            r.transmission.norm()
        );
        assert!(balance.abs() < EXACT, "{name}: {balance:e}");
    }
}
