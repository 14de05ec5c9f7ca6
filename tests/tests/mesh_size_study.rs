//! Mesh-size study behind the per-order defaults of `[mesh] per_wavelength` and
//! `max_size` (README, "Accuracy by order and mesh size"). Heavy: run with
//!
//! `flock /tmp/antinode-heavy.lock cargo test --release -p antinode-tests --test mesh_size_study -- --ignored --nocapture`
//!
//! (about 5 minutes on the 2-core development machine). Every case goes the way a user's
//! geometry file goes: TOML → `Geometry` → the built-in mesher with its curved surfaces
//! (`make_mesh_curved`, as `antinode modes` calls it) → `settings_from` → `solve_modes`,
//! so `per_wavelength` means what it means in a file. `max_size` follows the size
//! (λ0/per_wavelength at the target), so the air is not capped below the asked size.
//!
//! References (outside values):
//! * box: the empty 300 × 300 × 200 mm PEC box, the 20 modes nearest 2.45 GHz against the
//!   analytic TE/TM_mnp list (Pozar, Microwave Engineering, 4th ed., §6.3); worst relative
//!   frequency error against the nearest analytic frequency, as the box benchmark;
//! * loaded: Pozar 4th ed. Example 6.3 (data from memory): copper (σ = 5.813e7 S/m)
//!   WR-187 cavity a = 47.55 mm, b = 22.15 mm, filled with polyethylene (εr = 2.25,
//!   tan δ = 4e-4), d chosen so that TE101 is at 5 GHz; conductor Q from Pozar eq. (6.46)
//!   and Q_d = 1/tan δ, 1/Q0 = 1/Q_c + 1/Q_d. The walls are the default surface impedance,
//!   which lowers the frequency by f/(2Q_c) to first order (the perturbation result for a
//!   wall of equal surface resistance and reactance; measured to 3e-4 of itself in
//!   `losses_impedance.rs`), so the reference frequency is 5 GHz · (1 − 1/(2Q_c));
//! * cylinder: a PEC pillbox a = 100 mm, d = 120 mm, TM010, TE111 (×2) and TE011 + TM111
//!   (×3) against the Bessel zeros (Abramowitz & Stegun Table 9.5; Pozar 4th ed. §6.4),
//!   with curved elements along the side.
//!
//! The figures are the study (printed); the defaults in `mesh/src/geometry/model.rs` are
//! chosen from them. The one check: at orders 2 and 3 on the box and the cylinder the
//! finest size's worst error is at least 10× below the coarsest's. The eigenvalue error
//! falls like h^{2p} on smooth modes (Boffi, Acta Numerica 19 (2010), from memory), i.e.
//! by 4⁴ = 256 (order 2, sizes 2 → 8) and 3.3⁶ ≈ 1400 (order 3, 1.5 → 5) over the series;
//! 10× leaves room for non-nested meshes and pre-asymptotic coarse ends (our own margin).

use antinode_mesh::{make_mesh_curved, Geometry};
use antinode_solver::constants::{C0, MU0};
use antinode_solver::fem::curved::CurvedBoundary;
use antinode_solver::post::accuracy;
use antinode_solver::problem::{region_materials, settings_from};
use antinode_solver::{solve_modes, Mode};
use std::f64::consts::PI;
use std::sync::Arc;
use std::time::Instant;

/// Bessel zeros (Abramowitz & Stegun, Table 9.5): p01, p′11, p′01 = p11.
const P01: f64 = 2.404825557695773;
const PP11: f64 = 1.841183781340659;
const PP01: f64 = 3.831705970207512;

/// Pozar Example 6.3 (from memory).
const WR187_A: f64 = 0.04755;
const WR187_B: f64 = 0.02215;
const PE_EPS: f64 = 2.25;
const PE_TAN_D: f64 = 4e-4;
const SIGMA_CU: f64 = 5.813e7;
const F_EX63: f64 = 5.0e9;

/// Length of the TE101 cavity resonant at 5 GHz (Pozar eq. (6.40) solved for d).
fn ex63_length() -> f64 {
    let k = 2.0 * PI * F_EX63 * PE_EPS.sqrt() / C0;
    PI / (k * k - (PI / WR187_A).powi(2)).sqrt()
}

/// Pozar eq. (6.46), l = 1.
fn ex63_q_c() -> f64 {
    let (a, b, d) = (WR187_A, WR187_B, ex63_length());
    let k = 2.0 * PI * F_EX63 * PE_EPS.sqrt() / C0;
    let eta = MU0 * C0 / PE_EPS.sqrt();
    let rs = (2.0 * PI * F_EX63 * MU0 / (2.0 * SIGMA_CU)).sqrt();
    (k * a * d).powi(3) * b * eta
        / (2.0 * PI * PI * rs)
        / (2.0 * a.powi(3) * b + 2.0 * b * d.powi(3) + a.powi(3) * d + a * d.powi(3))
}

#[derive(Clone, Copy, Debug, PartialEq)]
enum Reference {
    Box,
    Loaded,
    Cylinder,
}

impl Reference {
    fn name(self) -> &'static str {
        match self {
            Reference::Box => "box",
            Reference::Loaded => "loaded (Pozar Ex. 6.3)",
            Reference::Cylinder => "cylinder (pillbox)",
        }
    }

    /// Target frequency, Hz.
    fn target_hz(self) -> f64 {
        match self {
            Reference::Box => 2.45e9,
            Reference::Loaded => F_EX63,
            Reference::Cylinder => 2.45e9,
        }
    }

    fn toml(self, order: u8, per_wavelength: f64, max_size_mm: f64) -> String {
        let mesh = format!(
            "[mesh]\norder = {order}\nper_wavelength = {per_wavelength}\nmax_size = {max_size_mm}\n"
        );
        match self {
            Reference::Box => format!(
                "title = \"study box\"\n[cavity]\nshape = \"box\"\nsize = [300.0, 300.0, 200.0]\n\
                 walls = \"pec\"\n{mesh}[solve]\ntarget = 2.45\ncount = 20\n"
            ),
            Reference::Loaded => {
                let (a, b, d) = (WR187_A * 1e3, WR187_B * 1e3, ex63_length() * 1e3);
                format!(
                    "title = \"study Pozar 6.3\"\n[cavity]\nshape = \"box\"\nsize = [{a}, {b}, {d}]\n\
                     walls = {{ conductivity = {SIGMA_CU} }}\n[[load]]\nname = \"fill\"\n\
                     shape = \"box\"\nmin = [0.0, 0.0, 0.0]\nmax = [{a}, {b}, {d}]\n\
                     material = {{ permittivity = {PE_EPS}, loss_tangent = {PE_TAN_D} }}\n\
                     {mesh}[solve]\ntarget = 5.0\ncount = 2\n"
                )
            }
            Reference::Cylinder => {
                // Band from 0.9 × TM010 to 1.05 × TE011 (GHz): holds exactly the six modes.
                let [lo, hi] = [0.9 * cyl_refs()[0].1, 1.05 * cyl_refs()[2].1].map(|f| f * 1e-9);
                format!(
                    "title = \"study pillbox\"\n[cavity]\nshape = \"cylinder\"\nradius = 100.0\n\
                     height = 120.0\nwalls = \"pec\"\n{mesh}[solve]\ntarget = 2.45\n\
                     band = [{lo}, {hi}]\n"
                )
            }
        }
    }
}

/// Box analytic frequencies up to `fmax` (Pozar 4th ed. §6.3), with multiplicity.
fn box_analytic(fmax: f64) -> Vec<f64> {
    let k2_max = (2.0 * std::f64::consts::PI * fmax / C0).powi(2);
    antinode_tests::box_modes([0.3, 0.3, 0.2], k2_max)
        .iter()
        .map(|r| antinode_solver::constants::frequency_of(r.k2))
        .collect()
}

/// Pillbox a = 100 mm, d = 120 mm (Pozar 4th ed. §6.4): label, frequency (Hz),
/// multiplicity.
fn cyl_refs() -> [(&'static str, f64, usize); 3] {
    let (a, d) = (0.1, 0.12);
    let kz = PI / d;
    let f = |k2: f64| C0 * k2.sqrt() / (2.0 * PI);
    [
        ("TM010", f((P01 / a).powi(2)), 1),
        ("TE111", f((PP11 / a).powi(2) + kz * kz), 2),
        ("TE011+TM111", f((PP01 / a).powi(2) + kz * kz), 3),
    ]
}

struct Row {
    unknowns: usize,
    complex: bool,
    mean_edge_per_wavelength: f64,
    seconds: f64,
    freq_error: f64,
    q_error: Option<f64>,
}

fn rel(x: f64, r: f64) -> f64 {
    ((x - r) / r).abs()
}

fn worst_frequency_error(reference: Reference, modes: &[Mode]) -> (f64, Option<f64>) {
    match reference {
        Reference::Box => {
            let analytic = box_analytic(4.0e9);
            let (worst, at) = modes
                .iter()
                .map(|m| {
                    analytic
                        .iter()
                        .map(|&r| (rel(m.frequency_hz, r), r))
                        .fold((f64::INFINITY, 0.0), |a, b| if b.0 < a.0 { b } else { a })
                })
                .fold((0.0, 0.0), |a, b| if b.0 > a.0 { b } else { a });
            println!("    (box: worst at the analytic {:.4} GHz)", at * 1e-9);
            (worst, None)
        }
        Reference::Loaded => {
            let q_c = ex63_q_c();
            let f_ref = F_EX63 * (1.0 - 1.0 / (2.0 * q_c));
            let q0 = 1.0 / (1.0 / q_c + PE_TAN_D);
            let m = modes
                .iter()
                .min_by(|x, y| rel(x.frequency_hz, f_ref).total_cmp(&rel(y.frequency_hz, f_ref)))
                .expect("a mode near 5 GHz");
            (
                rel(m.frequency_hz, f_ref),
                Some(rel(m.q.q_unloaded, q0).max(rel(m.q.q_walls, q_c))),
            )
        }
        Reference::Cylinder => {
            let worst = cyl_refs()
                .iter()
                .map(|&(label, f, mult)| {
                    let mut near: Vec<f64> = modes.iter().map(|m| m.frequency_hz).collect();
                    near.sort_by(|x, y| rel(*x, f).total_cmp(&rel(*y, f)));
                    assert!(near.len() >= mult, "{label}: too few modes");
                    near[..mult].iter().map(|&x| rel(x, f)).fold(0.0, f64::max)
                })
                .fold(0.0, f64::max);
            (worst, None)
        }
    }
}

fn run(reference: Reference, order: u8, per_wavelength: f64) -> Row {
    let lambda0_mm = C0 / reference.target_hz() * 1e3;
    let max_size = lambda0_mm / per_wavelength;
    let toml = reference.toml(order, per_wavelength, max_size);
    let geom = Geometry::from_toml_str(&toml, None).expect("study geometry");
    let t0 = Instant::now();
    let cm = make_mesh_curved(&geom).expect("mesh");
    let mut settings = settings_from(&geom).expect("settings");
    settings.curved = Arc::new(CurvedBoundary::from_mesh(&cm));
    let mats = region_materials(&geom, settings.target_hz);
    let set = solve_modes(&cm.mesh, &mats, &settings, &mut |_| {}).expect("solve");
    let seconds = t0.elapsed().as_secs_f64();
    let est = accuracy::estimate(&cm.mesh, &mats, settings.order, settings.target_hz);
    let (freq_error, q_error) = worst_frequency_error(reference, &set.modes);
    Row {
        unknowns: set.stats.n_dofs,
        complex: set.stats.complex,
        mean_edge_per_wavelength: est.per_wavelength,
        seconds,
        freq_error,
        q_error,
    }
}

/// Sizes per order: from below the `coarse_region` threshold of the order to the finest
/// that stays within ~1 min per box case. `ANTINODE_STUDY_MAX_PW=X` keeps the sizes ≤ X
/// (a quick look at the coarse end).
fn sizes(order: u8) -> Vec<f64> {
    let all: &[f64] = match order {
        1 => &[3.0, 4.0, 6.0, 8.0, 10.0, 12.0],
        2 => &[2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0],
        _ => &[1.5, 2.0, 2.5, 3.0, 4.0, 5.0],
    };
    let max = std::env::var("ANTINODE_STUDY_MAX_PW")
        .ok()
        .and_then(|v| v.parse::<f64>().ok())
        .unwrap_or(f64::INFINITY);
    all.iter().copied().filter(|&p| p <= max).collect()
}

#[test]
#[ignore = "heavy study (~10 min): run with --ignored --nocapture"]
fn mesh_size_study() {
    println!(
        "reference                order  per_wl  mean-edge/λ  max_size_mm  unknowns       time_s  freq_err   Q_err"
    );
    let mut summary = Vec::new();
    for reference in [Reference::Loaded, Reference::Cylinder, Reference::Box] {
        for order in 1..=3u8 {
            let mut rows = Vec::new();
            for pw in sizes(order) {
                let r = run(reference, order, pw);
                println!(
                    "{:<24} {order:>5}  {pw:>6.1}  {:>11.2}  {:>11.1}  {:>8}{}  {:>8.2}  {:>8.2e}  {}",
                    reference.name(),
                    r.mean_edge_per_wavelength,
                    C0 / reference.target_hz() * 1e3 / pw,
                    r.unknowns,
                    if r.complex { "c" } else { " " },
                    r.seconds,
                    r.freq_error,
                    r.q_error.map_or("—".into(), |q| format!("{q:.2e}"))
                );
                rows.push((pw, r));
            }
            summary.push((reference, order, rows));
        }
    }
    let mut failures = Vec::new();
    for (reference, order, rows) in &summary {
        // Only over the whole series (not with ANTINODE_STUDY_MAX_PW's coarse end).
        let whole = std::env::var("ANTINODE_STUDY_MAX_PW").is_err();
        if whole && *order >= 2 && *reference != Reference::Loaded && rows.len() >= 2 {
            let (first, last) = (&rows[0].1, &rows[rows.len() - 1].1);
            if last.freq_error > first.freq_error / 10.0 {
                failures.push(format!(
                    "{} order {order}: {:.2e} → {:.2e}",
                    reference.name(),
                    first.freq_error,
                    last.freq_error
                ));
            }
        }
    }
    println!("\ncheapest setting per order and reference (smallest per_wavelength of the series):");
    for (reference, order, rows) in &summary {
        let first = |ok: &dyn Fn(&Row) -> bool| {
            rows.iter()
                .find(|(_, r)| ok(r))
                .map_or("not reached".to_string(), |(pw, r)| {
                    format!("{pw} ({} unknowns, {:.2} s)", r.unknowns, r.seconds)
                })
        };
        println!(
            "{:<24} order {order}: 1e-3 at {}; 1e-4 at {}; Q within 2 % at {}",
            reference.name(),
            first(&|r| r.freq_error <= 1e-3),
            first(&|r| r.freq_error <= 1e-4),
            if *reference == Reference::Loaded {
                first(&|r| r.q_error.is_some_and(|q| q <= 0.02))
            } else {
                "—".into()
            }
        );
    }
    assert!(
        failures.is_empty(),
        "errors did not fall 10× over the series: {failures:?}"
    );
}
