//! Losses, quality factors and power split of a mode.
//!
//! With the field normalised to ∫ ε′|E|² dV = m′ (peak phasor amplitudes, SI units) and
//! ω, k0 the mode's real angular frequency and wavenumber (Pozar, Microwave Engineering,
//! 4th ed., §6.1–6.3 for the definitions; design notes §3):
//!
//! * stored energy W = 2 W_e = (ε0/2) ∫ ε′|E|² dV (electric and magnetic energies equal at
//!   resonance);
//! * dielectric loss P_d = (ω ε0/2) ∫ ε″|E|² dV, so Q_d = ωW/P_d = ∫ε′|E|² / ∫ε″|E|²;
//! * wall loss by perturbation with Rs = √(ωμ0/2σ): P_c = (Rs/2) ∮ |H_t|² dS with
//!   H = ∇×E/(−jωμ0), so Q_c = k0² ωμ0 ∫ε′|E|² / (Rs ∮|n×∇×E|² dS);
//! * wall loss of a solve with surface-impedance walls ([`crate::fem::impedance`]):
//!   the tangential H at the wall from the boundary condition the field was solved with,
//!   n×∇×E = c(ω_t) E_t weakly (ω_t the target, where the term was factorised), so
//!   |H_t| = |c(ω_t)| |E_t| / (ωμ0) and P_c = (Rs(ω)/2) ∮|H_t|² dS, i.e.
//!   Q_c = ωε0 ∫ε′|E|² (ωμ0)² / (Rs(ω) |c(ω_t)|² ∮|n×E|² dS). At ω = ω_t this is
//!   ∮|E_t|²/(4Rs), the wall's share of Im k0² of the discrete problem exactly; away
//!   from it the two agree to first order in ω − ω_t (the refined eigenvalue is first
//!   order too), and this one does not depend on the target at leading order;
//! * port p with amplitude c_p and TE10 constant β_p: P_p = (β_p/2ωμ0) N_p |c_p|², so
//!   Q_ext,p = k0² ∫ε′|E|² / (β_p N_p |c_p|²) (infinite below cutoff);
//! * 1/Q_L = 1/Q_d + 1/Q_c + Σ 1/Q_ext, 1/Q0 = 1/Q_d + 1/Q_c; coupling κ = Q0/Q_ext;
//!   reflection at resonance |Γ| = |1 − κ|/(1 + κ); share of the forward power that ends in
//!   the loads (1 − |Γ|²)(1/Q_d)/(1/Q0).
//!
//! With several ports, the other ports count as losses for port p (they are matched).

use crate::constants::{C0, EPS0, MU0};
use crate::fem::assembly::RegionMaterial;
use crate::fem::dofmap::FIXED;
use crate::fem::element::NedelecTet;
use crate::fem::impedance::{wall_coefficient, WallLosses};
use crate::fem::tet_geometry::face_normal_area;
use crate::fem::Space;
use antinode_mesh::BoundaryTag;
use rayon::prelude::*;

/// Field integrals of one mode.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ModeIntegrals {
    /// ∫ |E|² dV per region (m³·(V/m)²).
    pub region_e2: Vec<f64>,
    /// ∮_walls |n × ∇×E|² dS.
    pub wall_curl2: f64,
    /// ∮_walls |n × E|² dS (zero on perfectly conducting walls; the impedance walls'
    /// loss).
    pub wall_e2: f64,
}

fn quad_form(m: &[f64], n: usize, x: &[f64]) -> f64 {
    let mut s = 0.0;
    for a in 0..n {
        let mut r = 0.0;
        for b in 0..n {
            r += m[a * n + b] * x[b];
        }
        s += x[a] * r;
    }
    s
}

/// Local coefficients of one element from global real and imaginary parts (zero for
/// eliminated unknowns; an empty imaginary part means a real field).
fn gather(td: &[u32], re: &[f64], im: &[f64], xr: &mut [f64], xi: &mut [f64]) {
    for (a, &d) in td.iter().enumerate() {
        xr[a] = if d == FIXED { 0.0 } else { re[d as usize] };
        xi[a] = if d == FIXED || im.is_empty() {
            0.0
        } else {
            im[d as usize]
        };
    }
}

/// The imaginary part's quadratic form; zero without computing it for real modes.
fn quad_if(m: &[f64], n: usize, im: &[f64], xi: &[f64]) -> f64 {
    if im.is_empty() {
        0.0
    } else {
        quad_form(m, n, xi)
    }
}

/// Integrals of several modes (each given by real and imaginary coefficient vectors
/// over the free unknowns). One pass over the mesh for all modes.
pub fn mode_integrals(space: &Space<'_>, modes: &[(&[f64], &[f64])]) -> Vec<ModeIntegrals> {
    let (mesh, topo, dofs) = (space.mesh, &space.topology, &space.dofs);
    let element = NedelecTet::new(dofs.order);
    let nl = element.len();
    let nreg = mesh.regions.len().max(1);
    let empty = || {
        vec![
            ModeIntegrals {
                region_e2: vec![0.0; nreg],
                wall_curl2: 0.0,
                wall_e2: 0.0,
            };
            modes.len()
        ]
    };
    (0..topo.n_tets())
        .into_par_iter()
        .fold(
            || {
                (
                    empty(),
                    vec![0.0; nl * nl],
                    vec![0.0; nl * nl],
                    vec![0.0; 2 * nl],
                )
            },
            |(mut acc, mut kc, mut mm, mut xl), t| {
                let x = space.tet_vertices(t);
                let geo = space.tet_geometry(t);
                space.element_matrices(&element, t, &mut kc, &mut mm);
                let td = dofs.of_tet(t);
                let region = mesh.tet_region[t] as usize;
                let wall_faces: Vec<usize> = (0..4)
                    .filter(|&lf| {
                        topo.face_tag[topo.tet_faces[t][lf] as usize] == Some(BoundaryTag::Wall)
                    })
                    .collect();
                for (mi, &(re, im)) in modes.iter().enumerate() {
                    let (xr, xi) = xl.split_at_mut(nl);
                    gather(td, re, im, xr, xi);
                    acc[mi].region_e2[region] += quad_form(&mm, nl, xr) + quad_if(&mm, nl, im, xi);
                }
                for &lf in &wall_faces {
                    match (&space.curved, space.curved_tet(t)) {
                        (Some(g), Some(c)) => {
                            // Both on the curved face, as the impedance walls' term in the
                            // solve (`fem::impedance::wall_face_matrix`).
                            g.face_matrices(&element, &geo, &x, c, lf, &mut mm, &mut kc)
                        }
                        _ => {
                            let (normal, area) = face_normal_area(&x, lf);
                            element.face_matrices(&geo, lf, area, normal, &mut mm, &mut kc);
                        }
                    }
                    for (mi, &(re, im)) in modes.iter().enumerate() {
                        let (xr, xi) = xl.split_at_mut(nl);
                        gather(td, re, im, xr, xi);
                        acc[mi].wall_curl2 += quad_form(&kc, nl, xr) + quad_if(&kc, nl, im, xi);
                        acc[mi].wall_e2 += quad_form(&mm, nl, xr) + quad_if(&mm, nl, im, xi);
                    }
                }
                (acc, kc, mm, xl)
            },
        )
        .map(|(acc, _, _, _)| acc)
        .reduce(empty, |mut a, b| {
            for (x, y) in a.iter_mut().zip(b) {
                for (r, s) in x.region_e2.iter_mut().zip(y.region_e2) {
                    *r += s;
                }
                x.wall_curl2 += y.wall_curl2;
                x.wall_e2 += y.wall_e2;
            }
            a
        })
}

/// Surface resistance Rs = √(ωμ0/2σ) (Ω) of a metal with conductivity σ (S/m).
pub fn surface_resistance(freq_hz: f64, conductivity: f64) -> f64 {
    let omega = 2.0 * std::f64::consts::PI * freq_hz;
    (omega * MU0 / (2.0 * conductivity)).sqrt()
}

/// The wall model of a mode's Q_c.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum WallLoss {
    /// Perfectly conducting walls: no loss.
    Pec,
    /// Q_c by perturbation from ∮|n×∇×E|² (walls of conductivity σ, S/m).
    Perturbation { conductivity: f64 },
    /// Q_c from ∮|n×E|² of a solve with surface-impedance walls of conductivity σ
    /// whose term was evaluated at `target_hz`.
    Impedance { conductivity: f64, target_hz: f64 },
}

impl WallLoss {
    /// The model of walls with `conductivity` (None: PEC) entering as `losses` says
    /// (impedance walls evaluated at `target_hz`).
    pub fn of(conductivity: Option<f64>, losses: WallLosses, target_hz: f64) -> Self {
        match (conductivity, losses) {
            (None, _) => WallLoss::Pec,
            (Some(conductivity), WallLosses::Perturbation) => {
                WallLoss::Perturbation { conductivity }
            }
            (Some(conductivity), WallLosses::Impedance) => WallLoss::Impedance {
                conductivity,
                target_hz,
            },
        }
    }

    /// Whether the wall loss is part of the complex eigenvalue.
    pub fn in_eigenvalue(self) -> bool {
        matches!(self, WallLoss::Impedance { .. })
    }
}

/// Port quantities of one mode.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PortPower {
    /// |c_p|² N_p (amplitude squared times aperture norm).
    pub amplitude2_norm: f64,
    /// Re β_p at the mode frequency (0 below cutoff).
    pub beta: f64,
}

/// Quality factors and power split of one mode.
#[derive(Clone, Debug, PartialEq)]
pub struct ModeQ {
    /// Loaded Q: 1/Q_L = 1/Q_d + 1/Q_c + Σ 1/Q_ext.
    pub q_loaded: f64,
    /// Unloaded Q0: 1/Q0 = 1/Q_d + 1/Q_c.
    pub q_unloaded: f64,
    /// Dielectric Q (loads).
    pub q_dielectric: f64,
    /// Wall Q.
    pub q_walls: f64,
    /// External Q of each port.
    pub q_ports: Vec<f64>,
    /// Coupling κ_p = Q0,p/Q_ext,p (other ports counted as losses).
    pub coupling: Vec<f64>,
    /// |Γ| at resonance seen from each port.
    pub reflection: Vec<f64>,
    /// Share of port p's forward power absorbed in the loads at resonance.
    pub load_power_fraction: Vec<f64>,
    /// Share of the stored electric energy inside each load (load order).
    pub load_energy_fraction: Vec<f64>,
}

fn inv(q: f64) -> f64 {
    if q.is_finite() {
        1.0 / q
    } else {
        0.0
    }
}

fn q_of(num: f64, den: f64) -> f64 {
    if den > 0.0 {
        num / den
    } else {
        f64::INFINITY
    }
}

/// Q parts of a mode at real frequency `freq_hz` from its integrals, walls of
/// `wall_conductivity` by perturbation.
pub fn mode_q(
    freq_hz: f64,
    integrals: &ModeIntegrals,
    materials: &[RegionMaterial],
    wall_conductivity: Option<f64>,
    ports: &[PortPower],
) -> ModeQ {
    let walls = WallLoss::of(wall_conductivity, WallLosses::Perturbation, freq_hz);
    mode_q_with(freq_hz, integrals, materials, walls, ports)
}

/// Q parts of a mode at real frequency `freq_hz` from its integrals, with the wall
/// model `walls`.
pub fn mode_q_with(
    freq_hz: f64,
    integrals: &ModeIntegrals,
    materials: &[RegionMaterial],
    walls: WallLoss,
    ports: &[PortPower],
) -> ModeQ {
    let omega = 2.0 * std::f64::consts::PI * freq_hz;
    let k0 = omega / C0;
    let m_real: f64 = integrals
        .region_e2
        .iter()
        .zip(materials)
        .map(|(e, m)| m.eps_real * e)
        .sum();
    let m_imag: f64 = integrals
        .region_e2
        .iter()
        .zip(materials)
        .map(|(e, m)| m.eps_imag * e)
        .sum();
    let q_dielectric = q_of(m_real, m_imag);
    let q_walls = match walls {
        WallLoss::Perturbation { conductivity } => {
            let rs = surface_resistance(freq_hz, conductivity);
            q_of(k0 * k0 * omega * MU0 * m_real, rs * integrals.wall_curl2)
        }
        WallLoss::Impedance {
            conductivity,
            target_hz,
        } => {
            let rs = surface_resistance(freq_hz, conductivity);
            let c_t = wall_coefficient(2.0 * std::f64::consts::PI * target_hz / C0, conductivity);
            let h2 = c_t.norm_sqr() * integrals.wall_e2 / (omega * MU0).powi(2);
            q_of(omega * EPS0 * m_real, rs * h2)
        }
        WallLoss::Pec => f64::INFINITY,
    };
    let q_ports: Vec<f64> = ports
        .iter()
        .map(|p| q_of(k0 * k0 * m_real, p.beta * p.amplitude2_norm))
        .collect();
    let inv_q0 = inv(q_dielectric) + inv(q_walls);
    let inv_ext: f64 = q_ports.iter().map(|&q| inv(q)).sum();
    let q_loaded = q_of(1.0, inv_q0 + inv_ext);
    let q_unloaded = q_of(1.0, inv_q0);
    let mut coupling = Vec::new();
    let mut reflection = Vec::new();
    let mut load_power_fraction = Vec::new();
    for &qe in &q_ports {
        let inv_q0p = inv_q0 + inv_ext - inv(qe);
        let kappa = if inv_q0p > 0.0 {
            inv(qe) / inv_q0p
        } else {
            f64::INFINITY
        };
        let gamma = if kappa.is_finite() {
            (1.0 - kappa).abs() / (1.0 + kappa)
        } else {
            1.0
        };
        coupling.push(kappa);
        reflection.push(gamma);
        let to_load = if inv_q0p > 0.0 {
            inv(q_dielectric) / inv_q0p
        } else {
            0.0
        };
        load_power_fraction.push((1.0 - gamma * gamma) * to_load);
    }
    let load_energy_fraction = materials
        .iter()
        .zip(&integrals.region_e2)
        .skip(1)
        .map(|(m, e)| {
            if m_real > 0.0 {
                m.eps_real * e / m_real
            } else {
                0.0
            }
        })
        .collect();
    ModeQ {
        q_loaded,
        q_unloaded,
        q_dielectric,
        q_walls,
        q_ports,
        coupling,
        reflection,
        load_power_fraction,
        load_energy_fraction,
    }
}

/// Q parts of an eigenmode whose port amplitudes come from the eigenvector computed
/// with β at the target, matched to its refined eigenvalue; returns the matched Q parts
/// and the external Q of each port from the unmatched power balance (a consistency
/// figure: with the target at the mode's frequency the two agree).
///
/// The refined eigenvalue is accurate to second order, the amplitudes only to first.
/// So the total port damping is taken from the eigenvalue (1/Q_ext = 1/Q_eigen − 1/Q_d,
/// less 1/Q_c with impedance walls; exact for the linear problem) and shared among the ports as the power balance shares
/// it. The matching is skipped when the subtraction is not meaningful (port damping lost
/// in the dielectric one, or a factor outside [1/2, 2]).
pub fn eigen_matched_q(
    freq_hz: f64,
    integrals: &ModeIntegrals,
    materials: &[RegionMaterial],
    walls: WallLoss,
    ports: &mut [PortPower],
    q_eigen: f64,
) -> (ModeQ, Vec<f64>) {
    let mut q = mode_q_with(freq_hz, integrals, materials, walls, ports);
    let q_ports_balance = q.q_ports.clone();
    let inv_ext_balance: f64 = q
        .q_ports
        .iter()
        .map(|&x| 1.0 / x)
        .filter(|x| x.is_finite())
        .sum();
    if !ports.is_empty() && q_eigen.is_finite() && inv_ext_balance > 0.0 {
        let inv_d = inv(q.q_dielectric)
            + if walls.in_eigenvalue() {
                inv(q.q_walls)
            } else {
                0.0
            };
        let scale = (1.0 / q_eigen - inv_d) / inv_ext_balance;
        if (0.5..=2.0).contains(&scale) {
            for p in ports.iter_mut() {
                p.amplitude2_norm *= scale;
            }
            q = mode_q_with(freq_hz, integrals, materials, walls, ports);
        }
    }
    (q, q_ports_balance)
}
