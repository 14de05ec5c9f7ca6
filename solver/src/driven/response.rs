//! From solutions of the driven system to S-parameters, the power split and the heating
//! density.
//!
//! Normalisation. A TE10 wave of aperture amplitude a carries P = (β N/2ωμ0)|a|²
//! ([`crate::fem::port`]), so the power wave ã = s a with s = √(βN/(2ωμ0)) has
//! |ã|² = P: Σ|ã|² is the forward power. The solution for unit incident amplitude at
//! port p (a = e_p) has aperture amplitudes c_q = y_qp, outgoing b_q = c_q − δ_qp, hence
//!
//!   S_qp = b̃_q / ã_p = (y_qp − δ_qp) s_q / s_p.
//!
//! A drive of power waves ã (√W, with phase) is the superposition x = Σ_p X_p ã_p / s_p
//! of the unit solutions X_p, and the outgoing waves are b̃ = S ã.
//!
//! Powers of a solution x (time averages, peak phasors): load region r absorbs
//! (ωε0/2) ε″_r xᴴM_r x, the walls Rs/(2ω²μ0²) xᴴWx ([`super::system`]). The absorbed
//! density of a cell is the cell average q_T = (ωε0ε″/2) ∫_T |E|² dV / V_T (exact
//! element integrals), so the densities times the cell volumes sum to the absorbed power
//! of the quadratic forms. At a point x of cell T the density is the field's own value
//! q(x) = (ωε0ε″/2) |E(x)|², E(x) = Σ_a x_a φ_a(x) with the element functions of T at x
//! ([`point_heating`]); its mean over T is q_T.

use super::system::{MaterialsAt, TermLayout};
use crate::constants::{C0, EPS0, MU0};
use crate::error::SolverError;
use crate::fem::dofmap::FIXED;
use crate::fem::element::NedelecTet;
use crate::fem::port::PortFrame;
use crate::fem::Space;
use crate::post::losses::surface_resistance;
use faer::{c64, Mat};
use rayon::prelude::*;

/// s_p = √(β_p N_p/(2ωμ0)) of every port at wavenumber k (m⁻¹), or the first port below
/// its cutoff.
pub fn wave_scales(frames: &[PortFrame], norms: &[f64], k: f64) -> Result<Vec<f64>, SolverError> {
    let omega = k * C0;
    frames
        .iter()
        .zip(norms)
        .enumerate()
        .map(|(p, (f, &n))| {
            let beta = f.beta(k);
            if beta.re > 0.0 {
                Ok((beta.re * n / (2.0 * omega * MU0)).sqrt())
            } else {
                Err(SolverError::PortBelowCutoff {
                    port: p,
                    freq_hz: omega / (2.0 * std::f64::consts::PI),
                    cutoff_hz: f.cutoff_k() * C0 / (2.0 * std::f64::consts::PI),
                })
            }
        })
        .collect()
}

/// S from the raw outputs y (P × P, aperture amplitudes for unit incident amplitudes).
pub fn s_matrix(y: &Mat<c64>, scales: &[f64]) -> Mat<c64> {
    Mat::from_fn(y.nrows(), y.ncols(), |q, p| {
        let d = if q == p { 1.0 } else { 0.0 };
        (y[(q, p)] - d) * (scales[q] / scales[p])
    })
}

/// Physical incident amplitudes a_p = ã_p / s_p of a drive of power waves ã.
pub fn incident_amplitudes(drive: &[c64], scales: &[f64]) -> Vec<c64> {
    drive.iter().zip(scales).map(|(a, s)| *a / *s).collect()
}

/// Where a drive's forward power goes (W).
#[derive(Clone, Debug, PartialEq)]
pub struct PowerSplit {
    pub forward_w: f64,
    /// |b̃_q|² per port.
    pub reflected_w: Vec<f64>,
    /// Per region (0 = air, i + 1 = load i).
    pub regions_w: Vec<f64>,
    pub walls_w: f64,
}

impl PowerSplit {
    /// Forward − reflected − absorbed, relative to the forward power: zero for an exact
    /// solution of the discrete system (energy identity of [`super::system`]).
    pub fn balance_error(&self) -> f64 {
        let out: f64 = self.reflected_w.iter().sum::<f64>()
            + self.regions_w.iter().sum::<f64>()
            + self.walls_w;
        (self.forward_w - out) / self.forward_w
    }

    /// Sum of weighted splits (for averages over a source spectrum).
    pub fn weighted_sum(parts: &[(f64, PowerSplit)]) -> Option<PowerSplit> {
        let (_, first) = parts.first()?;
        let mut acc = PowerSplit {
            forward_w: 0.0,
            reflected_w: vec![0.0; first.reflected_w.len()],
            regions_w: vec![0.0; first.regions_w.len()],
            walls_w: 0.0,
        };
        for (w, p) in parts {
            acc.forward_w += w * p.forward_w;
            acc.walls_w += w * p.walls_w;
            for (a, b) in acc.reflected_w.iter_mut().zip(&p.reflected_w) {
                *a += w * b;
            }
            for (a, b) in acc.regions_w.iter_mut().zip(&p.regions_w) {
                *a += w * b;
            }
        }
        Some(acc)
    }
}

/// What turns quadratic forms into powers: where the terms sit, how many regions, their
/// materials and the wall conductivity.
pub struct LossModel<'a> {
    pub layout: TermLayout,
    pub n_regions: usize,
    pub materials: &'a MaterialsAt<'a>,
    pub wall_conductivity: Option<f64>,
}

impl LossModel<'_> {
    /// The power split at wavenumber k of a solution whose quadratic forms xᴴA_t x are
    /// `quad(t)` (t: term index in the layout), for the drive `drive` with outgoing
    /// power waves `outgoing`.
    pub fn power_split(
        &self,
        k: f64,
        quad: &dyn Fn(usize) -> f64,
        drive: &[c64],
        outgoing: &[c64],
    ) -> PowerSplit {
        let omega = k * C0;
        let f = omega / (2.0 * std::f64::consts::PI);
        let mats = (self.materials)(f);
        let regions_w = (0..self.n_regions)
            .map(|r| {
                let eps_imag = mats.get(r).map_or(0.0, |m| m.eps_imag);
                0.5 * omega * EPS0 * eps_imag * quad(self.layout.region_mass + r)
            })
            .collect();
        let walls_w = match (self.layout.wall, self.wall_conductivity) {
            (Some(t), Some(sigma)) => {
                surface_resistance(f, sigma) / (2.0 * omega * omega * MU0 * MU0) * quad(t)
            }
            _ => 0.0,
        };
        PowerSplit {
            forward_w: drive.iter().map(|a| a.norm_sqr()).sum(),
            reflected_w: outgoing.iter().map(|b| b.norm_sqr()).collect(),
            regions_w,
            walls_w,
        }
    }
}

/// Cell-averaged absorbed density q_T (W/m³) of the field with coefficients xr + j xi on
/// the space's free unknowns, at angular frequency ω with the region materials `mats`.
pub fn cell_heating(
    space: &Space<'_>,
    omega: f64,
    mats: &[crate::fem::assembly::RegionMaterial],
    xr: &[f64],
    xi: &[f64],
) -> Vec<f64> {
    let element = NedelecTet::new(space.order());
    let nl = element.len();
    (0..space.n_tets())
        .into_par_iter()
        .map_init(
            || (vec![0.0; nl * nl], vec![0.0; nl * nl], vec![0.0; 2 * nl]),
            |(kc, mm, xl), t| {
                let region = space.mesh.tet_region[t] as usize;
                let eps_imag = mats.get(region).map_or(0.0, |m| m.eps_imag);
                if eps_imag == 0.0 {
                    return 0.0;
                }
                space.element_matrices(&element, t, kc, mm);
                let td = space.dofs.of_tet(t);
                let (lr, li) = xl.split_at_mut(nl);
                for (a, &d) in td.iter().enumerate() {
                    let free = d != FIXED;
                    lr[a] = if free { xr[d as usize] } else { 0.0 };
                    li[a] = if free { xi[d as usize] } else { 0.0 };
                }
                let mut e2 = 0.0;
                for a in 0..nl {
                    for b in 0..nl {
                        e2 += mm[a * nl + b] * (lr[a] * lr[b] + li[a] * li[b]);
                    }
                }
                0.5 * omega * EPS0 * eps_imag * e2 / space.tet_volume(t)
            },
        )
        .collect()
}

/// The absorbed density q(x) = (ωε0ε″/2)|E(x)|² (W/m³) of the field xr + j xi at located
/// points (`(tet, barycentric coordinates)` from [`crate::post::probes::locate`]), E from
/// the element functions of the tetrahedron holding the point; None where a point is in
/// no tetrahedron.
pub fn point_heating(
    space: &Space<'_>,
    omega: f64,
    mats: &[crate::fem::assembly::RegionMaterial],
    xr: &[f64],
    xi: &[f64],
    located: &[Option<(usize, [f64; 4])>],
) -> Vec<Option<f64>> {
    let fields = crate::post::probes::sample(space, xr, xi, located);
    located
        .iter()
        .zip(fields)
        .map(|(loc, e)| {
            let (t, _) = (*loc)?;
            let e = e?;
            let region = space.mesh.tet_region[t] as usize;
            let eps_imag = mats.get(region).map_or(0.0, |m| m.eps_imag);
            let e2: f64 = e.iter().map(|c| c.norm_sqr()).sum();
            Some(0.5 * omega * EPS0 * eps_imag * e2)
        })
        .collect()
}

/// (q, volume) of the cells of region `region`.
pub fn region_cells(space: &Space<'_>, heating: &[f64], region: usize) -> Vec<(f64, f64)> {
    (0..space.n_tets())
        .filter(|&t| space.mesh.tet_region[t] as usize == region)
        .map(|t| (heating[t], space.tet_volume(t)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fem::assembly::RegionMaterial;
    use crate::fem::quadrature::tet_rule;
    use crate::NedelecOrder;
    use antinode_mesh::structured::{grid_mesh, GridLines};
    use antinode_mesh::RegionInfo;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// The point density integrated over each cell by a quadrature rule exact for its
    /// degree gives back the cell average (the definition of q_T: an identity, so the
    /// tolerance is rounding, 1e-12 relative, our bound).
    #[test]
    fn point_heating_integrates_to_the_cell_average() {
        let mesh = grid_mesh(
            &GridLines::uniform([0.0; 3], [0.1, 0.08, 0.06], [2, 2, 2]),
            vec![
                RegionInfo { name: "air".into() },
                RegionInfo {
                    name: "load".into(),
                },
            ],
            |c| Some(if c[2] < 0.03 { 1 } else { 0 }),
        );
        let mats = [
            RegionMaterial::VACUUM,
            RegionMaterial {
                eps_real: 4.0,
                eps_imag: 0.4,
                mu_r: 1.0,
            },
        ];
        for order in [NedelecOrder::One, NedelecOrder::Two, NedelecOrder::Three] {
            // No wall eliminated: every unknown carries a random coefficient.
            let space = Space::new(&mesh, order, |_| false);
            let mut rng = ChaCha8Rng::seed_from_u64(7);
            let n = space.n_dofs();
            let xr: Vec<f64> = (0..n).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let xi: Vec<f64> = (0..n).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let omega = 2.0 * std::f64::consts::PI * 2.45e9;
            let cells = cell_heating(&space, omega, &mats, &xr, &xi);
            // |E|² has degree 2(p − 1) in the cell; the 5³-point rule is exact to degree 7.
            let rule = tet_rule(5);
            for (t, &qc) in cells.iter().enumerate() {
                let located: Vec<Option<(usize, [f64; 4])>> =
                    rule.points.iter().map(|&l| Some((t, l))).collect();
                let q = point_heating(&space, omega, &mats, &xr, &xi, &located);
                let mean: f64 = q
                    .iter()
                    .zip(&rule.weights)
                    .map(|(q, w)| q.expect("located") * w)
                    .sum();
                let scale = cells.iter().copied().fold(0.0, f64::max);
                assert!(
                    (mean - qc).abs() <= 1e-12 * scale,
                    "order {order:?} cell {t}: {mean} against {qc}"
                );
            }
            assert!(cells.iter().any(|&q| q > 0.0));
        }
    }
}
