//! `drive` with curved elements against `modes` on the same curved mesh, and the two
//! against their straight (polygon) counterparts.
//!
//! Case (invented): a pillbox a = 100 mm, d = 120 mm with perfectly conducting walls, a
//! coaxial lossy rod (b = 10 mm, full height, εr = 8, tan δ = 0.002) and a WR-340-sized
//! TE10 aperture (86.36 × 43.18 mm) on the top wall, centred 50 mm off the axis. The
//! mode of the 2.0–2.4 GHz band with the smallest |Γ| at the port among those the port
//! sees with a narrow dip (|Γ| < 0.99, Q_L ≥ 100: our thresholds) is driven over ±3
//! bandwidths around its frequency; on the straight mesh the coupled mode nearest it.
//!
//! Checks.
//! * The |S11| minimum of the driven sweep lies at the mode's resonance: for one
//!   isolated resonance fed by a matched line, with δ = f/f0 − 1,
//!   |Γ(f)| = |(κ − 1) − j2Q0δ| / |(κ + 1) + j2Q0δ|, smallest at δ = 0 (Pozar,
//!   Microwave Engineering, 4th ed., §6.8, coupling of a resonator; from memory), so
//!   |f_dip − f_mode| ≤ f/(2Q_L), half a bandwidth (our bound for the neighbouring
//!   modes' background, no source), curved and straight alike;
//! * curved against straight: the dip moves by what the mode moves, to the same half
//!   bandwidth, and that move (the polygon's error) is at least four half bandwidths,
//!   so the check tells the two meshes apart;
//! * the energy balance of the curved drive (forward = reflected + absorbed) to
//!   round-off (1e-9, as `driven_cavity.rs`).

use antinode_mesh::mesher::mesh_geometry_curved;
use antinode_mesh::Geometry;
use antinode_solver::driven::sweep::SweepOptions;
use antinode_solver::driven::{solve_driven, DriveSettings};
use antinode_solver::fem::curved::CurvedBoundary;
use antinode_solver::problem::{port_frames, region_materials, settings_from};
use antinode_solver::{solve_modes, NedelecOrder};
use antinode_tests::driven_guide::linspace;
use faer::c64;
use std::sync::Arc;
use std::time::Instant;

const GEOMETRY: &str = r#"
title = "curved drive validation (invented)"
[cavity]
shape = "cylinder"
radius = 100.0
height = 120.0
walls = "pec"
[[load]]
name = "rod"
shape = "cylinder"
center = [0.0, 0.0]
radius = 10.0
bottom = 0.0
height = 120.0
material = { permittivity = 8.0, loss_tangent = 0.002 }
[[port]]
wall = "top"
center = [50.0, 0.0]
width = 86.36
height = 43.18
[mesh]
order = 2
per_wavelength = 4.0
max_size = 30.0
[solve]
target = 2.2
band = [2.0, 2.4]
"#;

struct Found {
    f_mode: f64,
    q_loaded: f64,
    f_dip: f64,
    balance: f64,
}

/// Modes, then drive around the chosen mode (or, with `near`, the mode nearest it).
fn run(curved: bool, near: Option<f64>) -> Found {
    let geom = Geometry::from_toml_str(GEOMETRY, None).expect("geometry");
    let cm = mesh_geometry_curved(&geom).expect("mesh");
    let boundary = match curved {
        true => Arc::new(CurvedBoundary::from_mesh(&cm)),
        false => Arc::default(),
    };
    let mut ms = settings_from(&geom).expect("settings");
    ms.ports = port_frames(&geom);
    ms.curved = boundary.clone();
    let mats = region_materials(&geom, ms.target_hz);
    let t = Instant::now();
    let set = solve_modes(&cm.mesh, &mats, &ms, &mut |_| {}).expect("modes");
    let modes_s = t.elapsed().as_secs_f64();
    let band: Vec<_> = set
        .modes
        .iter()
        .filter(|m| m.frequency_hz > 2.0e9 && m.frequency_hz < 2.4e9)
        .collect();
    for m in &band {
        println!(
            "    mode {:.6} GHz Q_L {:.0} Q_d {:.0} Q_ext {:.0} |Γ| {:.3}",
            m.frequency_hz / 1e9,
            m.q.q_loaded,
            m.q.q_dielectric,
            m.q.q_ports[0],
            m.q.reflection[0]
        );
    }
    // Modes the port sees with a narrow dip: |Γ| < 0.99 and Q_L ≥ 100 (our thresholds).
    let coupled: Vec<usize> = (0..band.len())
        .filter(|&i| band[i].q.reflection[0] < 0.99 && band[i].q.q_loaded >= 100.0)
        .collect();
    let pick = match near {
        None => coupled
            .iter()
            .copied()
            .min_by(|&i, &j| band[i].q.reflection[0].total_cmp(&band[j].q.reflection[0])),
        Some(f) => coupled.iter().copied().min_by(|&i, &j| {
            (band[i].frequency_hz - f)
                .abs()
                .total_cmp(&(band[j].frequency_hz - f).abs())
        }),
    }
    .expect("a coupled mode in the band");
    let m = band[pick];
    let (f_mode, q_loaded) = (m.frequency_hz, m.q.q_loaded);
    let bw = f_mode / q_loaded;
    println!(
        "  {} modes ({:.1} s, {} unknowns): {} in band; driven mode {:.6} GHz, Q_L {:.0}, \
         |Γ| {:.3}",
        if curved { "curved" } else { "straight" },
        modes_s,
        set.stats.n_dofs,
        band.len(),
        f_mode / 1e9,
        q_loaded,
        m.q.reflection[0]
    );
    let settings = DriveSettings {
        order: NedelecOrder::Two,
        frequencies_hz: linspace(f_mode - 3.0 * bw, f_mode + 3.0 * bw, 241),
        at_hz: Vec::new(),
        spread_hz: None,
        spread_samples: 11,
        wall_conductivity: None,
        ports: ms.ports.clone(),
        drive: vec![c64::new(1.0, 0.0)],
        sweep: SweepOptions::default(),
        curved: boundary,
    };
    let materials = |f: f64| region_materials(&geom, f);
    let mu: Vec<f64> = mats.iter().map(|m| m.mu_r).collect();
    let t = Instant::now();
    let r = solve_driven(&cm.mesh, &mu, &materials, &settings, &mut |_| {}).expect("drive");
    assert!(r.report.converged, "sweep did not converge");
    let s11: Vec<f64> = r.s.iter().map(|s| s[(0, 0)].norm()).collect();
    let i = (1..s11.len() - 1)
        .min_by(|&i, &j| s11[i].total_cmp(&s11[j]))
        .expect("points");
    // Parabola through the three points around the smallest sample.
    let fs = &r.frequencies_hz;
    let (y0, y1, y2) = (s11[i - 1], s11[i], s11[i + 1]);
    let step = fs[i + 1] - fs[i];
    let f_dip = fs[i] + 0.5 * step * (y0 - y2) / (y0 - 2.0 * y1 + y2);
    let balance = r
        .power
        .iter()
        .map(|p| p.balance_error().abs())
        .fold(0.0, f64::max);
    println!(
        "    drive ({:.1} s, {} unknowns): |S11| min {:.4} at {:.6} GHz (mode − dip {:+.2e} \
         of f, half bandwidth {:.2e}); energy balance {balance:.1e}",
        t.elapsed().as_secs_f64(),
        r.operator.n(),
        y1,
        f_dip / 1e9,
        (f_mode - f_dip) / f_mode,
        0.5 / q_loaded
    );
    assert!(
        r.operator.space.curved.is_some() == curved,
        "curved elements in drive: expected {curved}"
    );
    Found {
        f_mode,
        q_loaded,
        f_dip,
        balance,
    }
}

#[test]
fn drive_dip_follows_modes_curved_and_straight() {
    let c = run(true, None);
    let s = run(false, Some(c.f_mode));
    for (label, x) in [("curved", &c), ("straight", &s)] {
        let half = 0.5 * x.f_mode / x.q_loaded;
        assert!(
            (x.f_dip - x.f_mode).abs() <= half,
            "{label}: dip {} Hz from the mode (half bandwidth {half} Hz)",
            x.f_dip - x.f_mode
        );
    }
    assert!(c.balance < 1e-9, "energy balance {}", c.balance);
    let (dm, dd) = (c.f_mode - s.f_mode, c.f_dip - s.f_dip);
    let half = 0.5 * c.f_mode / c.q_loaded;
    println!(
        "  curved − straight: modes {:+.3e}, drive {:+.3e} of f (half bandwidth {:.2e})",
        dm / c.f_mode,
        dd / c.f_mode,
        half / c.f_mode
    );
    assert!(
        dm.abs() >= 4.0 * half,
        "polygon shift {dm} Hz too small to tell"
    );
    assert!(
        (dm - dd).abs() <= half,
        "drive moved {dd} Hz, modes {dm} Hz"
    );
}
