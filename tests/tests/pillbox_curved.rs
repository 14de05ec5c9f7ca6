//! Pillbox with curved elements: the tetrahedra along the cylinder wall get the
//! polynomial geometry map of `antinode_solver::fem::curved` from the true surface the
//! mesher hands over, so the computed eigenvalues converge at the element's rate instead
//! of stalling at the inscribed polygon's O(h²) error (`tests/pillbox.rs`).
//!
//! Reference (Pozar, Microwave Engineering, 4th ed., §6.4): k² = (x/a)² + (pπ/d)² with
//! x = p_nm for TM_nmp and x = p′_nm for TE_nmp. Bessel zeros (Abramowitz & Stegun,
//! Table 9.5): p01 = 2.404825557695773, p′11 = 1.841183781340659,
//! p′01 = p11 = 3.831705970207512 (so TE011 and TM111 coincide and are compared as one
//! group of three).
//!
//! Expected rate: eigenvalue error O(h^{2p}) on smooth modes for order p (Boffi, Acta
//! Numerica 19 (2010) 1, §§ on Maxwell eigenvalues), i.e. 4 at order 2 and 6 at order 3,
//! where the polygon gives 2. The meshes are not nested and h is the mean element size
//! (volume per tetrahedron)^(1/3), so an observed rate is asserted to be at least
//! 2p − 1 (one order of slack for non-nested unstructured meshes: common practice, no
//! source) — above the polygon's 2 in every case.

use antinode_mesh::mesher::{mesh_geometry_curved, CurvedMesh};
use antinode_mesh::Geometry;
use antinode_solver::constants::frequency_of;
use antinode_solver::fem::curved::CurvedBoundary;
use antinode_solver::fem::impedance::WallLosses;
use antinode_solver::{solve_modes, ModeSettings, NedelecOrder, RegionMaterial};

use antinode_tests::{k2_in, observed_order};
use std::sync::Arc;

const P01: f64 = 2.404825557695773;
const PP11: f64 = 1.841183781340659;
const PP01: f64 = 3.831705970207512;
const A_MM: f64 = 100.0;
const D_MM: f64 = 120.0;

/// Reference k² (m⁻²) with labels: TM010, TE111 (×2), TE011 + TM111 (×3).
fn reference() -> Vec<(&'static str, f64, usize)> {
    let (a, d) = (A_MM * 1e-3, D_MM * 1e-3);
    let kz = std::f64::consts::PI / d;
    vec![
        ("TM010", (P01 / a).powi(2), 1),
        ("TE111", (PP11 / a).powi(2) + kz * kz, 2),
        ("TE011+TM111", (PP01 / a).powi(2) + kz * kz, 3),
    ]
}

struct Run {
    h: f64,
    n_dofs: usize,
    /// Worst |relative k² error| per reference group.
    errors: Vec<f64>,
    curved_tets: usize,
}

/// The pillbox through the built-in mesher with its curved sides: element `order`, at most
/// `max_size_mm` elements (per_wavelength 1 so that the size cap decides).
fn pillbox_mesh(title: &str, order: u8, max_size_mm: f64) -> CurvedMesh {
    let toml = format!(
        r#"
title = "{title}"
[cavity]
shape = "cylinder"
radius = {A_MM}
height = {D_MM}
walls = "pec"
[mesh]
order = {order}
per_wavelength = 1.0
max_size = {max_size_mm}
[solve]
target = 2.45
"#
    );
    let geom = Geometry::from_toml_str(&toml, None).expect("geometry");
    mesh_geometry_curved(&geom).expect("mesh")
}

fn run(max_size_mm: f64, order: NedelecOrder, curved: bool) -> Run {
    let cm = pillbox_mesh("pillbox validation", order.as_int(), max_size_mm);
    let reference = reference();
    let lo = 0.8 * reference[0].1;
    let hi = 1.1 * reference[2].1;
    let mut s = ModeSettings::new(frequency_of(0.5 * (lo + hi)));
    s.order = order;
    s.band_hz = Some([frequency_of(lo), frequency_of(hi)]);
    s.count = 1;
    if curved {
        s.curved = Arc::new(CurvedBoundary::from_mesh(&cm));
    }
    let set = solve_modes(&cm.mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {}).expect("solve");
    let curved_tets = set.space.curved.as_ref().map_or(0, |c| c.n_curved());
    let computed = k2_in(&set, [lo, hi]);
    let volume: f64 = cm.mesh.region_volumes().iter().sum();
    let h = (volume / cm.mesh.tets.len() as f64).cbrt();
    // Each reference group takes the computed values nearest to it.
    let errors = reference
        .iter()
        .map(|&(label, k2, mult)| {
            let mut near: Vec<f64> = computed.clone();
            near.sort_by(|x, y| (x - k2).abs().total_cmp(&(y - k2).abs()));
            assert!(
                near.len() >= mult,
                "{label}: too few modes computed {computed:?}"
            );
            near[..mult]
                .iter()
                .map(|c| ((c - k2) / k2).abs())
                .fold(0.0, f64::max)
        })
        .collect();
    Run {
        h,
        n_dofs: set.stats.n_dofs,
        errors,
        curved_tets,
    }
}

/// Runs the sizes, prints the errors and observed rates, and checks each group's rate
/// between consecutive meshes against `min_rate`.
fn sweep(order: NedelecOrder, sizes: &[f64], min_rate: f64) {
    let labels: Vec<&str> = reference().iter().map(|r| r.0).collect();
    let mut all = Vec::new();
    for &size in sizes {
        let c = run(size, order, true);
        let p = run(size, order, false);
        println!(
            "order {} max_size {size} mm: h {:.2} mm, {} unknowns, {} curved tets",
            order.as_int(),
            c.h * 1e3,
            c.n_dofs,
            c.curved_tets
        );
        for (i, l) in labels.iter().enumerate() {
            println!(
                "  {l:<12} curved {:.3e}   polygon {:.3e}",
                c.errors[i], p.errors[i]
            );
        }
        all.push((c, p));
    }
    let mut failures = Vec::new();
    for w in all.windows(2) {
        let ((c1, p1), (c2, p2)) = (&w[0], &w[1]);
        for (i, l) in labels.iter().enumerate() {
            let rc = observed_order(c1.errors[i], c1.h, c2.errors[i], c2.h);
            let rp = observed_order(p1.errors[i], p1.h, p2.errors[i], p2.h);
            println!(
                "  rate {l:<12} h {:.2} → {:.2} mm: curved {rc:.2}, polygon {rp:.2}",
                c1.h * 1e3,
                c2.h * 1e3
            );
            if rc < min_rate {
                failures.push(format!("{l}: curved rate {rc:.2} < {min_rate}"));
            }
        }
    }
    assert!(failures.is_empty(), "observed rates too low: {failures:?}");
}

/// Order 2 on three meshes: rate ≥ 3 (expected 4; see the module docs).
#[test]
fn pillbox_curved_order2_rate() {
    sweep(NedelecOrder::Two, &[60.0, 42.0, 30.0], 3.0);
}

/// Order 3 on two meshes: rate ≥ 5 (expected 6; see the module docs). (The 60 mm mesh
/// is not yet asymptotic for TM010: 60 → 45 mm gave 4.7; see the ignored sweep.)
#[test]
fn pillbox_curved_order3_rate() {
    sweep(NedelecOrder::Three, &[45.0, 34.0], 5.0);
}

/// Heavier sweeps: order 2 to 15 mm, order 3 to 25 mm.
#[test]
#[ignore]
fn pillbox_curved_rates_fine() {
    sweep(NedelecOrder::Two, &[30.0, 21.0, 15.0], 3.0);
    sweep(NedelecOrder::Three, &[34.0, 25.0], 5.0);
}

/// TM010 conductor Q with curved wall faces against the closed form
/// Q_c = p01 η0 / (2 Rs (1 + a/d)) (Pozar, Microwave Engineering, 4th ed., §6.4), copper
/// σ = 5.813e7 S/m (Pozar, Appendix F, from memory). Tolerance 1 % (the issue's target);
/// by perturbation the wall field is the element curl, whose error is O(h²) at order 2
/// (see `losses_cylinder.rs`), so the mesh is the finer of the rate meshes; the impedance
/// path takes n×E on the curved faces (measured 2026-12-04: −9.5e-6 impedance, −0.60 %
/// perturbation curved; −0.28 % and −1.24 % on the polygon; with n×E on the straight
/// faces, 2026-12-03, the impedance path gave +0.12 %).
#[test]
fn pillbox_curved_tm010_wall_q() {
    use antinode_solver::constants::{C0, MU0};
    let sigma = 5.813e7;
    let (a, d) = (A_MM * 1e-3, D_MM * 1e-3);
    let cm = pillbox_mesh("pillbox wall Q", 2, 15.0);
    let k2 = (P01 / a).powi(2);
    let f = frequency_of(k2);
    let eta = MU0 * C0;
    let rs = (2.0 * std::f64::consts::PI * f * MU0 / (2.0 * sigma)).sqrt();
    let exact = P01 * eta / (2.0 * rs * (1.0 + a / d));
    // Both wall-loss paths: the impedance term in the solve (the default) and the
    // perturbation integral after it.
    for losses in [WallLosses::Impedance, WallLosses::Perturbation] {
        let mut qs = Vec::new();
        for curved in [true, false] {
            let mut s = ModeSettings::new(f);
            s.count = 1;
            s.wall_conductivity = Some(sigma);
            s.wall_losses = losses;
            if curved {
                s.curved = Arc::new(CurvedBoundary::from_mesh(&cm));
            }
            let set =
                solve_modes(&cm.mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {}).expect("solve");
            let m = set
                .modes
                .iter()
                .min_by(|x, y| {
                    (x.k0_squared - k2)
                        .abs()
                        .total_cmp(&(y.k0_squared - k2).abs())
                })
                .expect("a mode");
            qs.push(m.q.q_walls);
        }
        let rel = |q: f64| (q - exact) / exact;
        println!(
            "TM010 Q_c ({losses:?} walls): closed form {exact:.1}, curved {:.1} ({:+.3e}), polygon {:.1} ({:+.3e})",
            qs[0],
            rel(qs[0]),
            qs[1],
            rel(qs[1])
        );
        assert!(
            rel(qs[0]).abs() < 0.01,
            "curved Q_c ({losses:?} walls) off by {:+.3e}",
            rel(qs[0])
        );
    }
}

/// The field files use the curved map. TM010 of the PEC pillbox has E = ẑ E0 J0(kρ) and
/// ∇×E = φ̂ E0 k J1(kρ), k = p01/a (Pozar 4th ed. §6.4), E0 from the solver's
/// normalisation ∫|E|² dV = 1 m³: E0² π a² d J1(p01)² = 1 (∫0^a J0(kρ)² ρ dρ =
/// a² J1(p01)²/2, A&S 11.4.5, from memory; J0, J1 from `libm`). In the curved
/// tetrahedra the mapped curl J∇×φ_s/det J at the mapped centre F(¼, ¼, ¼, ¼) (the
/// cell value H of the VTU files) must be closer to it than the same coefficients read
/// with the straight functions at the straight centroid (the output before 2026-12-04).
/// E at the vertices is printed too: for this mode the map hardly changes it (the
/// displacement is radial and E axial, so J⁻ᵀE = E to first order), which the printout
/// shows. Measured 2026-12-04 at 30 mm (order 2): curl 2.3e-2 mapped against 0.116
/// straight; E 8.43e-3 against 8.37e-3 (vertex averaging dominates both).
#[test]
fn tm010_fields_use_curved_map() {
    use antinode_solver::post::field::{cell_values, node_values};
    let (a, d) = (A_MM * 1e-3, D_MM * 1e-3);
    let cm = pillbox_mesh("pillbox field", 2, 30.0);
    let k2 = (P01 / a).powi(2);
    let mut s = ModeSettings::new(frequency_of(k2));
    s.count = 1;
    s.curved = Arc::new(CurvedBoundary::from_mesh(&cm));
    let set = solve_modes(&cm.mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {}).expect("solve");
    let m = set
        .modes
        .iter()
        .min_by(|x, y| {
            (x.k0_squared - k2)
                .abs()
                .total_cmp(&(y.k0_squared - k2).abs())
        })
        .expect("a mode");
    let k = P01 / a;
    let e0 = 1.0 / (std::f64::consts::PI * a * a * d * libm::j1(P01).powi(2)).sqrt();
    let curved = set.space.curved.clone().expect("curved tetrahedra");
    let mut straight = set.space.clone();
    straight.curved = None;
    // The sign of the computed mode from E at the vertex nearest the axis.
    let mapped_nodes = node_values(&set.space, &m.coefficients);
    let plain_nodes = node_values(&straight, &m.coefficients);
    let r = |p: [f64; 3]| p[0].hypot(p[1]);
    let centre = (0..cm.mesh.nodes.len())
        .min_by(|&i, &j| r(cm.mesh.nodes[i]).total_cmp(&r(cm.mesh.nodes[j])))
        .expect("nodes");
    let sign = mapped_nodes[centre].0[2].signum();
    let curl_exact = |p: [f64; 3]| {
        let rho = r(p);
        let h = sign * e0 * k * libm::j1(k * rho);
        [-h * p[1] / rho, h * p[0] / rho, 0.0]
    };
    let dist = |u: [f64; 3], v: [f64; 3]| {
        ((u[0] - v[0]).powi(2) + (u[1] - v[1]).powi(2) + (u[2] - v[2]).powi(2)).sqrt()
    };
    let mapped_cells = cell_values(&set.space, &m.coefficients);
    let plain_cells = cell_values(&straight, &m.coefficients);
    let scale = e0 * k * libm::j1(P01);
    let (mut wm, mut wp, mut n) = (0.0f64, 0.0f64, 0);
    for t in 0..set.space.n_tets() {
        let Some(c) = curved.tet(t) else { continue };
        let x = set.space.tet_vertices(t);
        let pm = c.position(curved.degree(), &x, [0.25; 4]);
        let ps: [f64; 3] = std::array::from_fn(|i| 0.25 * (x[0][i] + x[1][i] + x[2][i] + x[3][i]));
        wm = wm.max(dist(mapped_cells[t].1, curl_exact(pm)) / scale);
        wp = wp.max(dist(plain_cells[t].1, curl_exact(ps)) / scale);
        n += 1;
    }
    // E at the vertices of curved tetrahedra.
    let mut on = vec![false; cm.mesh.nodes.len()];
    for (t, verts) in set.space.topology.tets.iter().enumerate() {
        if curved.tet(t).is_some() {
            for &v in verts {
                on[v as usize] = true;
            }
        }
    }
    let e_err = |vals: &[([f64; 3], [f64; 3])]| {
        (0..cm.mesh.nodes.len())
            .filter(|&i| on[i])
            .map(|i| {
                let p = cm.mesh.nodes[i];
                let ez = sign * e0 * libm::j0(k * r(p));
                dist(vals[i].0, [0.0, 0.0, ez]) / e0
            })
            .fold(0.0, f64::max)
    };
    println!(
        "TM010, {n} curved tets: worst |∇×E − exact| / (E0 k J1(p01)) at the cell centres: \
         mapped {wm:.3e}, straight functions {wp:.3e}; worst |E − exact|/E0 at their \
         vertices: mapped {:.3e}, straight functions {:.3e}",
        e_err(&mapped_nodes),
        e_err(&plain_nodes)
    );
    assert!(wm < wp, "mapped curl {wm:.3e} not below straight {wp:.3e}");
}
