//! Driven solves of a layered rectangular waveguide against the exact transmission-line
//! solution (`antinode_tests::layered_guide`; Pozar, Microwave Engineering, 4th ed.,
//! §2.3–2.4 and §3.3, from memory).
//!
//! The guide's field is exactly TE10 everywhere (every layer fills the cross-section),
//! so the only error is the discretisation's. Order-2 Nédélec elements converge like
//! h⁴ in eigenvalues (Boffi, Acta Numerica 19 (2010), from memory); the S-parameters
//! and absorbed powers here are quadratic outputs of the same symmetric problem and
//! showed the same rate where the field error dominates (measured: 17–21× per halving of
//! h on three single-layer cases while this test was written). Below |ΔS| ≈ 1e-4 a
//! second, O(h²) error appears (measured on an air + εr = 4 short: 3.6e-5 → 1.4e-5 from
//! 7 to 4.7 mm cells, rate 2.3, about the same at every frequency); the likely source is
//! the port model, whose TE10 constraint uses the aperture trace space of order-2
//! first-kind elements (complete linear polynomials: L2 error O(h²); see
//! `antinode_solver::fem::port`). The default tests, whose coarse-mesh errors are
//! 1e-3–1e-2, assert an observed rate of at least 3 between two meshes (a margin below 4;
//! rule of thumb, no source); the slow several-case test, whose errors reach 1e-5,
//! asserts at least 1.5 (below that second term's 2). All errors are printed. Quantities the discrete model conserves
//! exactly are held to round-off: the energy identity of `antinode_solver::driven::system`
//! (forward = reflected + absorbed, PEC walls) and the sum of the cell heating against
//! the absorbed power of the quadratic forms.

use antinode_solver::driven::uniformity::uniformity;
use antinode_solver::driven::{solve_direct, solve_driven, DrivenResponse};
use antinode_solver::NedelecOrder;
use antinode_tests::driven_guide::{
    box_powers, guide_materials, guide_model, guide_settings, linspace, GuideModel,
};
use antinode_tests::layered_guide::{Layer, LayeredGuide, Termination};
use antinode_tests::observed_order;
use std::f64::consts::PI;
use std::time::Instant;

/// WR-340 (86.36 × 43.18 mm, EIA standard dimensions).
const A: f64 = 0.08636;
const B: f64 = 0.04318;

/// Round-off level of quantities the discrete model conserves exactly: sums over
/// ~10⁴–10⁵ terms of solutions accurate to ~1e-12 (common practice, no source).
const CONSERVED: f64 = 1e-9;

/// Lowest acceptable observed convergence rate where the h⁴ field error dominates (see
/// the module docs).
const MIN_RATE: f64 = 3.0;

/// Lowest acceptable rate once the O(h²) port term shows (see the module docs).
const MIN_RATE_FLOOR: f64 = 1.5;

fn guide(layers: Vec<Layer>, termination: Termination) -> LayeredGuide {
    LayeredGuide {
        width: A,
        height: B,
        layers,
        termination,
    }
}

/// A 5 mm εr = 9 window at the port (a partial reflector), a 70 mm air gap, 15 mm of a
/// slightly lossy εr = 2.1 − 0.01j layer and 6 mm of a water-like εr = 60 − 15j layer on
/// the short: the gap resonates near 2.54 GHz (|S11| ≈ 0.13 there, 0.96 at 2.3 GHz).
/// Invented test case.
fn window_case() -> LayeredGuide {
    guide(
        vec![
            Layer::new(0.005, 9.0, 0.0),
            Layer::new(0.070, 1.0, 0.0),
            Layer::new(0.015, 2.1, 0.01),
            Layer::new(0.006, 60.0, 15.0),
        ],
        Termination::Short,
    )
}

/// Cells through each layer of [`window_case`] at refinement 1 (≈ 2–10 mm, finest in
/// the water-like layer, where λ ≈ 16 mm); across: 6 × 3 cells (≈ 14 mm).
const WINDOW_CELLS: [usize; 4] = [2, 7, 3, 3];

struct Solved {
    model: GuideModel,
    response: DrivenResponse<'static>,
    settings: antinode_solver::driven::DriveSettings,
    materials: Vec<antinode_solver::RegionMaterial>,
    seconds: f64,
}

/// The sweep against independent direct solves (own factorisation each) at `n`
/// frequencies between the sweep's points, spread over the band: max |ΔS| printed and
/// held to the sweep's stated tolerance (an estimate of the error between successive
/// reduced models).
fn check_sweep(s: &Solved, n: usize) -> f64 {
    let f = &s.response.frequencies_hz;
    let mats = s.materials.clone();
    let materials = move |_f: f64| mats.clone();
    let mut worst: f64 = 0.0;
    for i in 0..n {
        let j = (i * (f.len() - 1)) / n;
        let fc = 0.5 * (f[j] + f[j + 1]);
        let (direct, _) =
            solve_direct(&s.response.operator, &materials, &s.settings, fc).expect("direct");
        let (model, _) = s
            .response
            .model_at(&materials, &s.settings, fc)
            .expect("model");
        for q in 0..direct.nrows() {
            for p in 0..direct.ncols() {
                worst = worst.max((direct[(q, p)] - model[(q, p)]).norm());
            }
        }
    }
    println!("  sweep vs {n} direct solves between its points: max |ΔS| {worst:.1e}");
    assert!(
        worst <= s.settings.sweep.tolerance,
        "sweep off by {worst:e}"
    );
    worst
}

/// Solve `g` at refinement `r` (every cell count × r) over `band`, with the field at
/// `at` (Hz). The mesh is leaked so the response can outlive this function (tests only).
fn solve(g: &LayeredGuide, cells: &[usize], r: usize, band: &[f64], at: &[f64]) -> Solved {
    let nz: Vec<usize> = cells.iter().map(|n| n * r).collect();
    let model = guide_model(g, 6 * r, 3 * r, &nz);
    let mesh: &'static _ = Box::leak(Box::new(model.mesh.clone()));
    let mats = guide_materials(g);
    let materials = move |_f: f64| mats.clone();
    let mut settings = guide_settings(&model, NedelecOrder::Two, band.to_vec());
    settings.at_hz = at.to_vec();
    let t = Instant::now();
    let mu = vec![1.0; g.layers.len()];
    let response =
        solve_driven(mesh, &mu, &materials, &settings, &mut |_| {}).expect("driven solve");
    Solved {
        model,
        response,
        settings,
        materials: guide_materials(g),
        seconds: t.elapsed().as_secs_f64(),
    }
}

/// Largest |ΔS11|, |Δ absorbed fraction| over the band, and the energy balance.
fn band_errors(g: &LayeredGuide, r: &DrivenResponse<'_>, print: bool) -> (f64, f64, f64) {
    let (mut e_s, mut e_abs, mut e_bal) = (0.0f64, 0.0f64, 0.0f64);
    for (i, &f) in r.frequencies_hz.iter().enumerate() {
        let exact = g.solve(f);
        let s11 = r.s[i][(0, 0)];
        let p = &r.power[i];
        let fem: Vec<f64> = p.regions_w.iter().map(|w| w / p.forward_w).collect();
        let reference = exact.absorbed_fractions();
        let d_abs = fem
            .iter()
            .zip(&reference)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        e_s = e_s.max((s11 - exact.gamma).norm());
        e_abs = e_abs.max(d_abs);
        e_bal = e_bal.max(p.balance_error().abs());
        if print && i % 5 == 0 {
            println!(
                "    {:.3} GHz |S11| {:.5} (exact {:.5}), absorbed in the lossy layers {:.5} (exact {:.5})",
                f / 1e9,
                s11.norm(),
                exact.gamma.norm(),
                fem.iter().sum::<f64>(),
                reference.iter().sum::<f64>()
            );
        }
    }
    (e_s, e_abs, e_bal)
}

#[test]
fn layered_short_converges_to_the_transmission_line() {
    let g = window_case();
    let band = linspace(2.3e9, 2.6e9, 31);
    let f_res = 2.54e9;
    let mut errs = Vec::new();
    let mut hs = Vec::new();
    for r in [1, 2] {
        let s = solve(&g, &WINDOW_CELLS, r, &band, &[f_res]);
        if r == 1 {
            check_sweep(&s, 5);
        }
        let (e_s, e_abs, e_bal) = band_errors(&g, &s.response, true);
        println!(
            "refinement {r}: {} unknowns, {:.2} s (sweep: {} expansion points, basis {}); \
             max |ΔS11| {e_s:.2e}, max |Δ absorbed fraction| {e_abs:.2e}, energy balance {e_bal:.1e}",
            s.response.operator.n(),
            s.seconds,
            s.response.report.expansion_hz.len(),
            s.response.report.basis
        );
        assert!(e_bal < CONSERVED, "energy balance {e_bal:e}");
        let at = &s.response.at[0];
        assert!(at.field.power.balance_error().abs() < CONSERVED);
        // Heating integral = absorbed power (two paths: element-level integrals of |E|²
        // against the global quadratic forms).
        let cells: f64 = (0..s.model.mesh.tets.len())
            .map(|t| at.field.cell_heating[t] * s.model.mesh.signed_volume(t).abs())
            .sum();
        let absorbed: f64 = at.field.power.regions_w.iter().sum();
        let d = (cells - absorbed).abs() / absorbed;
        println!(
            "  at {:.2} GHz: Σ q V = {cells:.6e} W, absorbed {absorbed:.6e} W (rel. diff {d:.1e})",
            f_res / 1e9
        );
        assert!(d < CONSERVED);
        errs.push((e_s, e_abs, heating_profile(&g, &s, f_res)));
        hs.push(1.0 / r as f64);
    }
    let rate = |a: f64, b: f64| observed_order(a, hs[0], b, hs[1]);
    let (r_s, r_abs) = (rate(errs[0].0, errs[1].0), rate(errs[0].1, errs[1].1));
    let (r_prof, r_cov) = (
        rate(errs[0].2 .0, errs[1].2 .0),
        rate(errs[0].2 .1, errs[1].2 .1),
    );
    println!(
        "observed rates: S11 {r_s:.2}, absorbed fractions {r_abs:.2}, heating profile {r_prof:.2}, COV {r_cov:.2}"
    );
    assert!(r_s >= MIN_RATE, "S11 rate {r_s:.2}");
    assert!(r_abs >= MIN_RATE, "absorbed-fraction rate {r_abs:.2}");
    assert!(r_prof >= MIN_RATE, "heating-profile rate {r_prof:.2}");
    assert!(r_cov >= MIN_RATE, "COV rate {r_cov:.2}");
}

/// Heating along z in the water-like layer at `f` against the exact profile, per slab of
/// grid cells (largest relative error), and the COV of the box-averaged density against
/// the exact box averages' COV (like for like; the continuous profile's COV is
/// printed). Returns (profile error, |ΔCOV|).
fn heating_profile(g: &LayeredGuide, s: &Solved, f: f64) -> (f64, f64) {
    let exact = g.solve(f);
    let at = &s.response.at[0];
    let forward = at.field.power.forward_w;
    let boxes = box_powers(&s.model, &at.field.cell_heating);
    let grid = &s.model.grid;
    let water = g.layers.len() - 1;
    let z_water = g.length() - g.layers[water].thickness;
    let mut worst: f64 = 0.0;
    let mut fem_boxes = Vec::new();
    let mut ref_boxes = Vec::new();
    for k in 0..grid.z.len() - 1 {
        let (z0, z1) = (grid.z[k], grid.z[k + 1]);
        if z0 < z_water - 1e-12 {
            continue;
        }
        let slab: f64 = boxes.iter().filter(|b| b.0 .2 == k).map(|b| b.1).sum();
        let reference = exact.slab_fraction(z0, z1, 8);
        worst = worst.max((slab / forward - reference).abs() / reference);
        // Box averages: q ∝ sin²(πx/a)|V(z)|² factorises; ∫ sin² = x/2 − a sin(2πx/a)/(4π).
        let sin2 = |x: f64| x / 2.0 - A * (2.0 * PI * x / A).sin() / (4.0 * PI);
        for &((i, j, kk), p) in &boxes {
            if kk != k {
                continue;
            }
            let (x0, x1) = (grid.x[i], grid.x[i + 1]);
            let vol = (x1 - x0) * (grid.y[j + 1] - grid.y[j]) * (z1 - z0);
            // The slab's exact power split across x in proportion to ∫ sin² over the box,
            // and equally across y.
            let share = (sin2(x1) - sin2(x0)) / (A / 2.0) * (grid.y[j + 1] - grid.y[j]) / B;
            fem_boxes.push((p / vol, vol));
            ref_boxes.push((reference * forward * share / vol, vol));
        }
    }
    let u_fem = uniformity(&fem_boxes).expect("heated");
    let u_ref = uniformity(&ref_boxes).expect("heated");
    let cov_continuous = exact.layer_cov(water, 64);
    let u_cells = {
        let cells = antinode_solver::driven::response::region_cells(
            &s.response.operator.space,
            &at.field.cell_heating,
            water,
        );
        uniformity(&cells).expect("heated")
    };
    println!(
        "  heating in the water-like layer at {:.2} GHz: worst slab error {worst:.2e}; COV of box averages {:.5} \
         (exact box averages {:.5}), of the tetrahedra {:.5}, of the continuous profile {:.5}; \
         cold fraction {:.3}, hot {:.3}",
        f / 1e9,
        u_fem.cov,
        u_ref.cov,
        u_cells.cov,
        cov_continuous,
        u_cells.cold_fraction,
        u_cells.hot_fraction
    );
    (worst, (u_fem.cov - u_ref.cov).abs())
}

#[test]
fn empty_short_reflects_everything() {
    // PEC walls, no loss: the energy identity makes |S11| = 1 exactly (to round-off), and
    // the phase −e^{−2jβL} (Pozar §2.3) converges at the discretisation's rate.
    let g = guide(vec![Layer::new(0.1, 1.0, 0.0)], Termination::Short);
    let band = linspace(2.3e9, 2.6e9, 7);
    let mut errs = Vec::new();
    for r in [1, 2] {
        let s = solve(&g, &[7], r, &band, &[]);
        if r == 1 {
            check_sweep(&s, 5);
        }
        let worst_mag = s
            .response
            .s
            .iter()
            .map(|m| (m[(0, 0)].norm() - 1.0).abs())
            .fold(0.0, f64::max);
        let (e_s, _, _) = band_errors(&g, &s.response, false);
        println!("refinement {r}: ||S11| − 1| ≤ {worst_mag:.1e}, max |ΔS11| {e_s:.2e}");
        assert!(worst_mag < CONSERVED);
        errs.push(e_s);
    }
    let rate = observed_order(errs[0], 1.0, errs[1], 0.5);
    println!("observed rate {rate:.2}");
    assert!(rate >= MIN_RATE, "rate {rate:.2}");
}

#[test]
fn graded_lossy_load_is_matched() {
    // Eight 30 mm layers of ε′ = 1 with ε″ = 0.05 · 1.6^i (0.05 … 1.34) in front of the
    // short: a graded absorber (invented). The exact line solution gives |S11| ≤ 0.023
    // over the band. Held to: |S11| < 0.05 (0.25 % of the power reflected: "matched",
    // rule of thumb, no source) and agreement with the line solution within 0.01 (the
    // order of the discretisation error at this cell size, 10 mm: the resonant window
    // case shows 2.5e-2 at its resonance and far less off it).
    let layers = (0..8)
        .map(|i| Layer::new(0.03, 1.0, 0.05 * 1.6f64.powi(i)))
        .collect();
    let g = guide(layers, Termination::Short);
    let band = linspace(2.3e9, 2.6e9, 7);
    let s = solve(&g, &[3; 8], 1, &band, &[]);
    check_sweep(&s, 5);
    let (e_s, e_abs, e_bal) = band_errors(&g, &s.response, false);
    let worst = s
        .response
        .s
        .iter()
        .map(|m| m[(0, 0)].norm())
        .fold(0.0, f64::max);
    let worst_exact = band
        .iter()
        .map(|&f| g.solve(f).gamma.norm())
        .fold(0.0, f64::max);
    println!(
        "graded absorber: max |S11| {worst:.4} (exact {worst_exact:.4}), max |ΔS11| {e_s:.1e}, \
         max |Δ absorbed| {e_abs:.1e}, balance {e_bal:.1e}"
    );
    assert!(worst < 0.05, "|S11| = {worst}");
    assert!(e_s < 0.01);
    assert!(e_bal < CONSERVED);
}

#[test]
fn two_port_section_is_reciprocal_and_passive() {
    // A guide section with a matched port at each end and a 12 mm lossy slab inside:
    // S12 = S21 (reciprocity of the complex-symmetric system), |S11|² + |S21|² ≤ 1 with
    // the difference equal to the absorbed fraction (passivity, energy balance), and S21
    // against the line solution's transmission (Pozar §2.3–2.4).
    let g = guide(
        vec![
            Layer::new(0.04, 1.0, 0.0),
            Layer::new(0.012, 12.0, 2.5),
            Layer::new(0.04, 1.0, 0.0),
        ],
        Termination::Matched,
    );
    let band = linspace(2.3e9, 2.6e9, 7);
    let mut errs = Vec::new();
    for r in [1, 2] {
        let s = solve(&g, &[4, 4, 4], r, &band, &[]);
        if r == 1 {
            check_sweep(&s, 5);
        }
        let mut worst = (0.0f64, 0.0f64, 0.0f64);
        for (i, &f) in band.iter().enumerate() {
            let m = &s.response.s[i];
            let exact = g.solve(f);
            let recip = (m[(0, 1)] - m[(1, 0)]).norm();
            let out = m[(0, 0)].norm_sqr() + m[(1, 0)].norm_sqr();
            let p = &s.response.power[i];
            let absorbed: f64 = p.regions_w.iter().sum::<f64>() / p.forward_w;
            worst.0 = worst.0.max(recip);
            worst.1 = worst.1.max((1.0 - out - absorbed).abs());
            worst.2 = worst
                .2
                .max((m[(1, 0)] - exact.transmission).norm())
                .max((m[(0, 0)] - exact.gamma).norm());
            assert!(out <= 1.0 + CONSERVED, "not passive at {f}: {out}");
        }
        println!(
            "refinement {r}: max |S12 − S21| {:.1e}, max |1 − |S11|² − |S21|² − absorbed| {:.1e}, \
             max |ΔS| vs line solution {:.2e}",
            worst.0, worst.1, worst.2
        );
        assert!(worst.0 < CONSERVED && worst.1 < CONSERVED);
        errs.push(worst.2);
    }
    let rate = observed_order(errs[0], 1.0, errs[1], 0.5);
    println!("observed rate {rate:.2}");
    assert!(rate >= MIN_RATE, "rate {rate:.2}");
}

#[test]
fn sweep_agrees_with_direct_solves() {
    // The fast sweep's S against independent direct solves (own factorisation at each
    // frequency) at 7 frequencies between the sweep's check points, on the resonant
    // window case. The sweep's stated tolerance is on |ΔS| between successive reduced
    // models, an estimate of the error, and the result is held to it.
    let g = window_case();
    let band = linspace(2.3e9, 2.6e9, 31);
    let s = solve(&g, &WINDOW_CELLS, 1, &band, &[]);
    let mats = guide_materials(&g);
    let materials = move |_f: f64| mats.clone();
    let mut settings = guide_settings(&s.model, NedelecOrder::Two, band.clone());
    settings.at_hz.clear();
    let checks = linspace(2.305e9, 2.595e9, 7);
    let t = Instant::now();
    let mut worst: f64 = 0.0;
    for &f in &checks {
        let (direct, _) =
            solve_direct(&s.response.operator, &materials, &settings, f).expect("direct solve");
        let (sweep, _) = s
            .response
            .model_at(&materials, &settings, f)
            .expect("model");
        let d = (direct[(0, 0)] - sweep[(0, 0)]).norm();
        println!(
            "  {:.4} GHz: |S11| direct {:.6}, sweep {:.6}, |ΔS| {d:.1e}",
            f / 1e9,
            direct[(0, 0)].norm(),
            sweep[(0, 0)].norm()
        );
        worst = worst.max(d);
    }
    println!(
        "max |ΔS| sweep vs direct {worst:.1e} (tolerance {:.0e}); sweep {:.2} s for 31 points, \
         7 direct solves {:.2} s",
        settings.sweep.tolerance,
        s.seconds,
        t.elapsed().as_secs_f64()
    );
    assert!(worst <= settings.sweep.tolerance);
}

#[test]
fn copper_walls_absorb_the_standing_wave_wall_loss() {
    // An empty guide of length L shorted at z = L, all metal of copper (σ = 5.813e7 S/m,
    // the value of Pozar's Example 6.3, from memory). Reference: the perturbation formula
    // P_c = (Rs/2)∮|H_t|² dS (Pozar §1.7 and §3.3, from memory) with the lossless
    // standing wave E_y = A sin(πx/a) sin(β(L − z)), H = ∇×E/(−jωμ0):
    //   |H_x| = (Aβ/ωμ0) sin(πx/a)|cos β(L−z)|,  |H_z| = (Aπ/(aωμ0)) |cos(πx/a) sin β(L−z)|,
    // over the side walls x = 0, a (H_z), the broad walls y = 0, b (H_x and H_z) and the
    // short (H_x), against the forward power (A/2)² ab/(4Z), Z = ωμ0/β. It is first order
    // in Rs (relative error O(Rs/Z, α_c L) ≈ 1e-4). The traveling-wave estimate
    // 1 − e^{−4α_c L}(1 − 4Rs/Z) with α_c of Pozar eq. (3.96) is printed beside it: it
    // misses the standing wave's interference terms, a few % at this length.
    use antinode_solver::constants::{C0, MU0};
    use antinode_solver::post::losses::surface_resistance;
    let sigma = 5.813e7;
    let l = 0.1;
    let g = guide(vec![Layer::new(l, 1.0, 0.0)], Termination::Short);
    let f = 2.45e9;
    let omega = 2.0 * PI * f;
    let k = omega / C0;
    let beta = (k * k - (PI / A).powi(2)).sqrt();
    let rs = surface_resistance(f, sigma);
    let z = omega * MU0 / beta;
    // Unit A: ∫cos²(β(L−z)) dz and ∫sin² over [0, L].
    let c2 = l / 2.0 + (2.0 * beta * l).sin() / (4.0 * beta);
    let s2 = l / 2.0 - (2.0 * beta * l).sin() / (4.0 * beta);
    let hx = (beta / (omega * MU0)).powi(2);
    let hz = (PI / (A * omega * MU0)).powi(2);
    let side = 2.0 * B * hz * s2;
    let broad = 2.0 * (A / 2.0) * (hx * c2 + hz * s2);
    let short = hx * (A / 2.0) * B;
    let p_c = 0.5 * rs * (side + broad + short);
    let p_fwd = 0.25 * A * B / (4.0 * z);
    let expected = p_c / p_fwd;
    let alpha =
        rs * (2.0 * B * PI * PI + A.powi(3) * k * k) / (A.powi(3) * B * beta * k * MU0 * C0);
    let travelling = 1.0 - (-4.0 * alpha * l).exp() * (1.0 - 4.0 * rs / z);
    let mut errs = Vec::new();
    for r in [1, 2] {
        let model = guide_model(&g, 6 * r, 3 * r, &[7 * r]);
        let mesh: &'static _ = Box::leak(Box::new(model.mesh.clone()));
        let mats = guide_materials(&g);
        let materials = move |_f: f64| mats.clone();
        let mut settings = guide_settings(&model, NedelecOrder::Two, vec![f]);
        settings.wall_conductivity = Some(sigma);
        let resp = solve_driven(mesh, &[1.0], &materials, &settings, &mut |_| {}).expect("solve");
        let p = &resp.power[0];
        let lost = 1.0 - resp.s[0][(0, 0)].norm_sqr();
        let walls = p.walls_w / p.forward_w;
        let rel = walls / expected - 1.0;
        println!(
            "refinement {r}: 1 − |S11|² = {lost:.6e}, walls {walls:.6e}, perturbation formula \
             {expected:.6e} (travelling-wave estimate {travelling:.6e}); relative error {rel:+.2e}, \
             balance {:.1e}",
            p.balance_error()
        );
        assert!(p.balance_error().abs() < CONSERVED);
        assert!(
            ((lost - walls) / walls).abs() < 1e-6,
            "loss not all in the walls"
        );
        errs.push(rel.abs());
    }
    // The wall loss is a boundary integral of curl E, which order-2 first-kind elements
    // approximate by piecewise-linear functions: O(h²) (Monk, Finite Element Methods for
    // Maxwell's Equations, 2003, from memory), not the h⁴ of the volume quantities.
    let rate = observed_order(errs[0], 1.0, errs[1], 0.5);
    println!("observed rate {rate:.2} (expected 2)");
    assert!(rate >= 1.5, "rate {rate:.2}, errors {errs:?}");
}

#[test]
fn driven_resonance_matches_the_mode_figures() {
    // Modal consistency near an isolated resonance: the window case's gap resonance
    // (the next ones lie ~1 GHz away). The mode solve gives f, Q_L, κ and the
    // single-mode predictions |Γ| = |1 − κ|/(1 + κ) (Pozar 4th ed. §6.7, from memory)
    // and the absorbed share (1 − |Γ|²)(1/Q_d)/(1/Q0) (design notes §3); the driven
    // solve gives the |S11| minimum and the absorbed fraction there. The single-mode
    // model is first order in 1/Q_L (coupling, β and the other modes' background vary
    // across the bandwidth), so |S11|, the absorbed fraction and the frequency (in
    // bandwidths f/Q_L) are held to 1/Q_L (rule of thumb, no source).
    use antinode_solver::modes::{solve_modes, ModeSettings};
    let g = window_case();
    let model = guide_model(&g, 6, 3, &WINDOW_CELLS);
    let mats = guide_materials(&g);
    let mut ms = ModeSettings::new(2.54e9);
    ms.count = 3;
    ms.ports = model.frames.clone();
    let set = solve_modes(&model.mesh, &mats, &ms, &mut |_| {}).expect("modes");
    // The resonance fed by the port: the mode with the largest coupling.
    let mode = set
        .modes
        .iter()
        .max_by(|a, b| a.q.coupling[0].total_cmp(&b.q.coupling[0]))
        .expect("a mode");
    let (f0, ql) = (mode.frequency_hz, mode.q.q_loaded);
    let m2 = mats.clone();
    let materials = move |_f: f64| m2.clone();
    let settings = guide_settings(&model, NedelecOrder::Two, linspace(2.3e9, 2.8e9, 51));
    let r = solve_driven(&model.mesh, &[1.0; 4], &materials, &settings, &mut |_| {})
        .expect("driven solve");
    // The |S11| minimum on a fine grid of the reduced model (0.1 MHz steps).
    let mut best = (0.0, f64::INFINITY, 0.0);
    for f in linspace(f0 - 2.0 * f0 / ql, f0 + 2.0 * f0 / ql, 4001) {
        let (s, p) = r.model_at(&materials, &settings, f).expect("model");
        if s[(0, 0)].norm() < best.1 {
            best = (
                f,
                s[(0, 0)].norm(),
                p.regions_w.iter().sum::<f64>() / p.forward_w,
            );
        }
    }
    let shift = (best.0 - f0) / (f0 / ql);
    println!(
        "mode: f {:.5} GHz, Q_L {ql:.2}, κ {:.3}, |Γ| {:.4}, load share {:.4}\n\
         driven: |S11| minimum {:.4} at {:.5} GHz ({shift:+.3} bandwidths), absorbed {:.4}",
        f0 / 1e9,
        mode.q.coupling[0],
        mode.q.reflection[0],
        mode.q.load_power_fraction[0],
        best.1,
        best.0 / 1e9,
        best.2
    );
    let tol = 1.0 / ql;
    assert!(shift.abs() <= tol, "frequency off by {shift} bandwidths");
    assert!((best.1 - mode.q.reflection[0]).abs() <= tol);
    assert!((best.2 - mode.q.load_power_fraction[0]).abs() <= tol);
}

#[test]
#[ignore = "about 1 min: four layered cases on two meshes"]
fn several_layered_shorts_converge() {
    // Lossless and lossy layers of several thicknesses on the short (invented cases);
    // cells through a layer: its optical thickness d√|εr| over 10 mm, at least 2.
    let cases: Vec<(&str, Vec<Layer>)> = vec![
        (
            "air 40 mm + lossless εr 4, 30 mm",
            vec![Layer::new(0.04, 1.0, 0.0), Layer::new(0.03, 4.0, 0.0)],
        ),
        (
            "air 60 mm + thin lossy εr 20 − 4j, 4 mm",
            vec![Layer::new(0.06, 1.0, 0.0), Layer::new(0.004, 20.0, 4.0)],
        ),
        (
            "thick lossy εr 10 − 3j, 25 mm",
            vec![Layer::new(0.025, 10.0, 3.0)],
        ),
        (
            "air 30 mm + εr 5 − 1j, 10 mm + εr 40 − 12j, 8 mm",
            vec![
                Layer::new(0.03, 1.0, 0.0),
                Layer::new(0.01, 5.0, 1.0),
                Layer::new(0.008, 40.0, 12.0),
            ],
        ),
    ];
    let band = linspace(2.3e9, 2.6e9, 13);
    for (name, layers) in cases {
        let g = guide(layers, Termination::Short);
        let cells: Vec<usize> = g
            .layers
            .iter()
            .map(|l| ((l.thickness * l.eps.norm().sqrt() / 0.01).ceil() as usize).max(2))
            .collect();
        let mut errs = Vec::new();
        for r in [1, 2] {
            let s = solve(&g, &cells, r, &band, &[]);
            if r == 1 {
                check_sweep(&s, 5);
            }
            let (e_s, e_abs, e_bal) = band_errors(&g, &s.response, false);
            println!(
                "{name}, refinement {r}: {} unknowns, max |ΔS11| {e_s:.2e}, max |Δ absorbed| \
                 {e_abs:.2e}, balance {e_bal:.1e}",
                s.response.operator.n()
            );
            assert!(e_bal < CONSERVED);
            errs.push(e_s);
        }
        let rate = observed_order(errs[0], 1.0, errs[1], 0.5);
        println!("  observed rate {rate:.2}");
        assert!(rate >= MIN_RATE_FLOOR, "{name}: rate {rate:.2}");
    }
}
