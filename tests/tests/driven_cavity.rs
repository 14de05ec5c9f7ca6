//! Driven response of a small fed box cavity with a lossy block and copper walls
//! (`antinode_tests::driven_cavity`, invented): the fast sweep against independent direct
//! solves, the energy balance at every frequency, reciprocity and passivity with two
//! ports.

use antinode_solver::driven::sweep::SweepOptions;
use antinode_solver::driven::{solve_direct, solve_driven, DriveSettings, DrivenResponse};
use antinode_solver::NedelecOrder;
use antinode_solver::RegionMaterial;
use antinode_tests::driven_cavity::{fed_box, fed_box_materials};
use antinode_tests::driven_guide::linspace;
use faer::c64;
use std::time::Instant;

/// Copper, as in the built-in list (5.8e7 S/m; Pozar 4th ed. appendix, from memory).
const COPPER: f64 = 5.8e7;

/// Round-off level of quantities the discrete model conserves exactly (see
/// `tests/driven_guide.rs`).
const CONSERVED: f64 = 1e-9;

fn settings(frames: &[antinode_solver::fem::port::PortFrame], band: Vec<f64>) -> DriveSettings {
    let mut drive = vec![c64::new(0.0, 0.0); frames.len()];
    drive[0] = c64::new(1.0, 0.0);
    DriveSettings {
        order: NedelecOrder::Two,
        frequencies_hz: band,
        at_hz: Vec::new(),
        spread_hz: None,
        spread_samples: 11,
        wall_conductivity: Some(COPPER),
        ports: frames.to_vec(),
        drive,
        sweep: SweepOptions::default(),
        curved: Default::default(),
    }
}

fn materials() -> impl Fn(f64) -> Vec<RegionMaterial> + Send + Sync {
    let m = fed_box_materials();
    move |_f: f64| m.clone()
}

fn print_sweep(r: &DrivenResponse<'_>, seconds: f64) {
    let rep = &r.report;
    println!(
        "{} unknowns; sweep of {} frequencies in {seconds:.2} s: {} expansion points at {:?} GHz, \
         basis {}, converged {} (max η {:.1e}, last |ΔS| {:.1e}); factorisations {:.2} s, \
         Krylov {:.2} s, checks {:.2} s",
        r.operator.n(),
        r.frequencies_hz.len(),
        rep.expansion_hz.len(),
        rep.expansion_hz
            .iter()
            .map(|f| (f / 1e6).round() / 1e3)
            .collect::<Vec<_>>(),
        rep.basis,
        rep.converged,
        rep.max_residual,
        rep.max_change,
        rep.factor_s,
        rep.krylov_s,
        rep.check_s
    );
}

/// Sweep over 2.2–2.7 GHz (ten resonances, Q_L from ~30 to ~3000) and compare with
/// direct solves at `checks` frequencies between the sweep's points. Returns the sweep
/// time and the mean direct-solve time.
fn sweep_against_direct(points: usize, checks: &[f64]) -> (f64, f64) {
    let (mesh, frames) = fed_box(1, false);
    let mats = materials();
    let s = settings(&frames, linspace(2.2e9, 2.7e9, points));
    let t = Instant::now();
    let r = solve_driven(&mesh, &[1.0, 1.0], &mats, &s, &mut |_| {}).expect("sweep");
    let sweep_s = t.elapsed().as_secs_f64();
    print_sweep(&r, sweep_s);
    assert!(r.report.converged, "sweep did not converge");
    let worst_balance = r
        .power
        .iter()
        .map(|p| p.balance_error().abs())
        .fold(0.0, f64::max);
    println!("energy balance (loads + walls + reflected = forward): worst {worst_balance:.1e}");
    assert!(worst_balance < CONSERVED);
    let t = Instant::now();
    let mut worst: f64 = 0.0;
    for &f in checks {
        let (direct, field) = solve_direct(&r.operator, &mats, &s, f).expect("direct");
        let (model, _) = r.model_at(&mats, &s, f).expect("model");
        let d = (direct[(0, 0)] - model[(0, 0)]).norm();
        worst = worst.max(d);
        assert!(field.power.balance_error().abs() < CONSERVED);
    }
    let direct_s = t.elapsed().as_secs_f64() / checks.len() as f64;
    println!(
        "max |ΔS| sweep vs {} direct solves: {worst:.1e} (tolerance {:.0e}); one direct solve \
         {direct_s:.2} s",
        checks.len(),
        s.sweep.tolerance
    );
    // The stated tolerance is on |ΔS| between successive reduced models, an estimate of
    // the error; the result is held to it.
    assert!(worst <= s.sweep.tolerance);
    (sweep_s, direct_s)
}

#[test]
fn sweep_agrees_with_direct_solves_in_a_fed_box() {
    // Seven check frequencies, none on the sweep's grid of 101 points (5 MHz steps).
    let checks = linspace(2.2125e9, 2.6875e9, 7);
    sweep_against_direct(101, &checks);
}

#[test]
#[ignore = "about 90 s: 101 direct solves"]
fn sweep_of_101_points_against_101_direct_solves() {
    // The same band at the 101 sweep frequencies themselves: every one solved directly.
    let band = linspace(2.2e9, 2.7e9, 101);
    let (sweep_s, direct_s) = sweep_against_direct(101, &band);
    println!(
        "101 points: sweep {sweep_s:.1} s against 101 direct solves {:.1} s ({:.1}× faster; \
         timings on a shared machine, noisy)",
        101.0 * direct_s,
        101.0 * direct_s / sweep_s
    );
}

#[test]
fn two_ports_are_reciprocal_and_passive() {
    // Complex-symmetric system and a real, symmetric projection: S12 = S21 to round-off;
    // |S11|² + |S21|² = 1 − (absorbed)/forward ≤ 1 at every frequency (energy balance
    // with the walls' and the block's losses).
    let (mesh, frames) = fed_box(1, true);
    let mats = materials();
    let mut s = settings(&frames, linspace(2.3e9, 2.6e9, 61));
    // Both ports fed (1 W and 0.5 W, 60° apart): the power split of the superposed field
    // must balance too (quadratic forms of x = Σ X_p a_p against |S ã|²).
    s.drive = vec![
        c64::new(1.0, 0.0),
        c64::from_polar(0.5f64.sqrt(), 60f64.to_radians()),
    ];
    let t = Instant::now();
    let r = solve_driven(&mesh, &[1.0, 1.0], &mats, &s, &mut |_| {}).expect("sweep");
    print_sweep(&r, t.elapsed().as_secs_f64());
    let (mut recip, mut bal, mut max_out) = (0.0f64, 0.0f64, 0.0f64);
    let drive_balance = r
        .power
        .iter()
        .map(|p| p.balance_error().abs())
        .fold(0.0, f64::max);
    println!("two ports fed at once: worst energy balance {drive_balance:.1e}");
    assert!(drive_balance < CONSERVED);
    for (m, _) in r.s.iter().zip(&r.power) {
        let scale = m[(0, 1)].norm().max(m[(1, 0)].norm()).max(1e-300);
        recip = recip.max((m[(0, 1)] - m[(1, 0)]).norm() / scale);
        let out = m[(0, 0)].norm_sqr() + m[(1, 0)].norm_sqr();
        max_out = max_out.max(out);
    }
    // Port 1 fed alone: 1 − |S11|² − |S21|² against its absorbed fraction.
    let mut single = s.clone();
    single.drive = vec![c64::new(1.0, 0.0), c64::new(0.0, 0.0)];
    for (i, &f) in s.frequencies_hz.iter().enumerate().step_by(10) {
        let (_, p) = r.model_at(&mats, &single, f).expect("model");
        let m = &r.s[i];
        let out = m[(0, 0)].norm_sqr() + m[(1, 0)].norm_sqr();
        let absorbed = (p.regions_w.iter().sum::<f64>() + p.walls_w) / p.forward_w;
        bal = bal.max((1.0 - out - absorbed).abs());
    }
    println!(
        "max |S12 − S21|/|S21| {recip:.1e}, max |1 − |S11|² − |S21|² − absorbed| {bal:.1e}, \
         max |S11|² + |S21|² {max_out:.6}"
    );
    assert!(recip < 1e-8, "reciprocity {recip:e}");
    assert!(bal < CONSERVED && max_out <= 1.0);
}

#[test]
fn sweep_agrees_with_direct_solves_at_the_resonances() {
    // The check grid of a sweep is coarser than the narrowest resonances (Q_L up to ~3000
    // here: 0.8 MHz bandwidth against 2.5 MHz grid spacing), so the model is also checked
    // at the resonant frequencies of the mode solve, where S changes fastest.
    use antinode_solver::modes::{solve_modes, ModeSettings};
    let (mesh, frames) = fed_box(1, false);
    let mats = materials();
    let s = settings(&frames, linspace(2.3e9, 2.6e9, 121));
    let r = solve_driven(&mesh, &[1.0, 1.0], &mats, &s, &mut |_| {}).expect("sweep");
    let mut ms = ModeSettings::new(2.45e9);
    ms.band_hz = Some([2.3e9, 2.6e9]);
    ms.ports = frames.clone();
    ms.wall_conductivity = Some(COPPER);
    let set = solve_modes(&mesh, &fed_box_materials(), &ms, &mut |_| {}).expect("modes");
    let mut worst: f64 = 0.0;
    let in_band: Vec<_> = set
        .modes
        .iter()
        .filter(|m| m.frequency_hz > 2.3e9 && m.frequency_hz < 2.6e9)
        .collect();
    for m in &in_band {
        let f = m.frequency_hz;
        let (direct, _) = solve_direct(&r.operator, &mats, &s, f).expect("direct");
        let (model, _) = r.model_at(&mats, &s, f).expect("model");
        let d = (direct[(0, 0)] - model[(0, 0)]).norm();
        println!(
            "  mode at {:.5} GHz (Q_L {:.0}): |S11| direct {:.6}, sweep {:.6}, |ΔS| {d:.1e}",
            f / 1e9,
            m.q.q_loaded,
            direct[(0, 0)].norm(),
            model[(0, 0)].norm()
        );
        worst = worst.max(d);
    }
    println!("max |ΔS| at {} resonances: {worst:.1e}", in_band.len());
    assert!(worst <= s.sweep.tolerance);
}
