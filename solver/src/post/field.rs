//! The fields of a computed mode on the mesh: E = Σ x_a φ_a, H and the heating density.
//!
//! * E and ∇×E at a point of a tetrahedron from the element functions, mapped by the
//!   covariant Piola map in curved tetrahedra ([`crate::fem::curved`]: E = J⁻ᵀΣxφ_s,
//!   ∇×E = JΣx∇×φ_s/det J at F(l); the straight values differ from these by O(h) there);
//!   cell values at each centre F(¼, ¼, ¼, ¼); vertex values (a vertex is not moved by
//!   the map) averaged over the incident tetrahedra weighted by their (curved) volume (the tangential part of E is continuous between elements, the normal part
//!   is not, so vertex values are for display). A complex field is evaluated on its real
//!   and imaginary parts separately (linearity).
//! * Scaling to stored energy. Modes are normalised to ∫ ε′|E|² dV = 1 m³ (peak phasor
//!   amplitudes). At resonance the time-averaged electric and magnetic energies are
//!   equal, so W = 2 W_e = 2 · (ε0/4) ∫ ε′|E|² dV = (ε0/2) ∫ ε′|E|² dV; scaling E by
//!   α = √(2/ε0) (V/m per √J) gives W = 1 J ([`energy_scale`]).
//! * Magnetic field from Faraday's law with e^{jωt}: ∇×E = −jωμ0μr H, so
//!   H = ∇×E/(−jωμ0μr) = (j/ω) ∇×E/(μ0μr). With ∇×E = C_r + jC_i and complex ω
//!   (Im ω > 0 for a decaying mode), j/ω = (Im ω + j Re ω)/|ω|², hence with
//!   a = Im ω/|ω|², b = Re ω/|ω|²: Re H = (a C_r − b C_i)/(μ0μr),
//!   Im H = (a C_i + b C_r)/(μ0μr). For a real E and real ω, Re H = 0 and
//!   Im H = C_r/(ωμ0μr): H is 90° out of phase with E.
//! * Absorbed power density q = ½ ω ε0 ε″ |E|² (W/m³), ω the real angular frequency and
//!   ε″ the cell region's loss at the solve frequency (design notes §3, §8); zero in air.

use crate::constants::{EPS0, MU0};
use crate::fem::assembly::RegionMaterial;
use crate::fem::dofmap::FIXED;
use crate::fem::element::{NedelecTet, MAX_LOCAL};
use crate::fem::Space;
use antinode_mesh::tet_mesh::dot;
use rayon::prelude::*;

/// E and ∇×E at one point.
pub type FieldAndCurl = ([f64; 3], [f64; 3]);

/// E and curl E at barycentric point `l` of tetrahedron `t`.
pub fn at_point(
    space: &Space<'_>,
    element: &NedelecTet,
    coeffs: &[f64],
    t: usize,
    l: [f64; 4],
) -> FieldAndCurl {
    let geo = space.tet_geometry(t);
    let n = element.len();
    let mut phi = [[0.0; 3]; MAX_LOCAL];
    let mut curl = [[0.0; 3]; MAX_LOCAL];
    element.eval(&geo, l, &mut phi[..n]);
    element.eval_curl(&geo, l, &mut curl[..n]);
    if let (Some(g), Some(c)) = (&space.curved, space.curved_tet(t)) {
        // Curved tetrahedron: the mapped functions at F(l) (covariant Piola map).
        g.map_values(&geo, c, l, &mut phi[..n], &mut curl[..n]);
    }
    let mut e = [0.0; 3];
    let mut c = [0.0; 3];
    for (a, &d) in space.dofs.of_tet(t).iter().enumerate() {
        if d == FIXED {
            continue;
        }
        let xa = coeffs[d as usize];
        for k in 0..3 {
            e[k] += xa * phi[a][k];
            c[k] += xa * curl[a][k];
        }
    }
    (e, c)
}

/// E and curl E at every tetrahedron's centroid.
pub fn cell_values(space: &Space<'_>, coeffs: &[f64]) -> Vec<FieldAndCurl> {
    let element = NedelecTet::new(space.order());
    (0..space.n_tets())
        .into_par_iter()
        .map(|t| at_point(space, &element, coeffs, t, [0.25; 4]))
        .collect()
}

/// E and curl E at every mesh vertex: volume-weighted average of the incident
/// tetrahedra's values at that vertex.
pub fn node_values(space: &Space<'_>, coeffs: &[f64]) -> Vec<FieldAndCurl> {
    let element = NedelecTet::new(space.order());
    let per_tet: Vec<[FieldAndCurl; 4]> = (0..space.n_tets())
        .into_par_iter()
        .map(|t| {
            let mut out = [([0.0; 3], [0.0; 3]); 4];
            for (i, o) in out.iter_mut().enumerate() {
                let mut l = [0.0; 4];
                l[i] = 1.0;
                *o = at_point(space, &element, coeffs, t, l);
            }
            out
        })
        .collect();
    let n_nodes = space.mesh.nodes.len();
    let mut sum = vec![([0.0; 3], [0.0; 3]); n_nodes];
    let mut weight = vec![0.0; n_nodes];
    for (t, vals) in per_tet.iter().enumerate() {
        let w = space.tet_volume(t);
        for (i, &v) in space.topology.tets[t].iter().enumerate() {
            let s = &mut sum[v as usize];
            for k in 0..3 {
                s.0[k] += w * vals[i].0[k];
                s.1[k] += w * vals[i].1[k];
            }
            weight[v as usize] += w;
        }
    }
    for (s, w) in sum.iter_mut().zip(&weight) {
        if *w > 0.0 {
            for k in 0..3 {
                s.0[k] /= w;
                s.1[k] /= w;
            }
        }
    }
    sum
}

/// Scale factor α = √(2/ε0) from the modes' normalisation ∫ ε′|E|² dV = 1 m³ to 1 J of
/// stored energy (see the module docs).
pub fn energy_scale() -> f64 {
    (2.0 / EPS0).sqrt()
}

/// H = ∇×E/(−jωμ0μr) (real and imaginary parts, times `scale`) from the curl's parts
/// `cr`, `ci` and the complex angular frequency ω = `omega_re` + j `omega_im` (rad/s).
pub fn magnetic_field(
    cr: [f64; 3],
    ci: [f64; 3],
    omega_re: f64,
    omega_im: f64,
    mu_r: f64,
    scale: f64,
) -> ([f64; 3], [f64; 3]) {
    let s = scale / (MU0 * mu_r);
    let w2 = omega_re * omega_re + omega_im * omega_im;
    let (a, b) = (omega_im / w2, omega_re / w2);
    (
        [0, 1, 2].map(|k| (a * cr[k] - b * ci[k]) * s),
        [0, 1, 2].map(|k| (a * ci[k] + b * cr[k]) * s),
    )
}

/// Absorbed power density q = ½ ω ε0 ε″ |E|² (W/m³) for |E|² = `e2` ((V/m)²).
pub fn heating_density(omega: f64, eps_imag: f64, e2: f64) -> f64 {
    0.5 * omega * EPS0 * eps_imag * e2
}

/// A mode's fields on the mesh for 1 J of stored energy (peak phasor amplitudes).
#[derive(Clone, Debug, Default)]
pub struct ModeFields {
    /// Re E at the vertices (V/m), volume-weighted averages.
    pub vertex_e_real: Vec<[f64; 3]>,
    /// Im E at the vertices (empty for a real mode).
    pub vertex_e_imag: Vec<[f64; 3]>,
    /// |E| = √(|Re E|² + |Im E|²) at the vertices.
    pub vertex_e_magnitude: Vec<f64>,
    /// Re H at the cell centroids (A/m).
    pub cell_h_real: Vec<[f64; 3]>,
    /// Im H at the cell centroids.
    pub cell_h_imag: Vec<[f64; 3]>,
    /// Absorbed power density q at the cell centroids (W/m³ per joule stored).
    pub cell_heating: Vec<f64>,
}

/// E at the vertices, H and the heating density at the cell centroids of a mode with
/// coefficients `re` + j`im` (an empty `im`: a real mode) and complex frequency
/// `frequency_hz` = [Re f, Im f], scaled to 1 J of stored energy. `materials` holds the
/// constants of each region id (regions without an entry count as vacuum).
pub fn mode_fields(
    space: &Space<'_>,
    re: &[f64],
    im: &[f64],
    frequency_hz: [f64; 2],
    materials: &[RegionMaterial],
) -> ModeFields {
    let alpha = energy_scale();
    let two_pi = 2.0 * std::f64::consts::PI;
    let (w_re, w_im) = (two_pi * frequency_hz[0], two_pi * frequency_hz[1]);
    let complex = !im.is_empty();
    let scaled = |v: [f64; 3]| v.map(|x| x * alpha);
    let norm2 = |v: [f64; 3]| dot(v, v);

    let vertex_e_real: Vec<[f64; 3]> = node_values(space, re)
        .iter()
        .map(|(e, _)| scaled(*e))
        .collect();
    let vertex_e_imag: Vec<[f64; 3]> = if complex {
        node_values(space, im)
            .iter()
            .map(|(e, _)| scaled(*e))
            .collect()
    } else {
        Vec::new()
    };
    let vertex_e_magnitude = (0..vertex_e_real.len())
        .map(|i| (norm2(vertex_e_real[i]) + vertex_e_imag.get(i).map_or(0.0, |e| norm2(*e))).sqrt())
        .collect();

    let cells_re = cell_values(space, re);
    let cells_im = if complex {
        cell_values(space, im)
    } else {
        Vec::new()
    };
    let n_cells = cells_re.len();
    let mut out = ModeFields {
        vertex_e_real,
        vertex_e_imag,
        vertex_e_magnitude,
        cell_h_real: Vec::with_capacity(n_cells),
        cell_h_imag: Vec::with_capacity(n_cells),
        cell_heating: Vec::with_capacity(n_cells),
    };
    for (t, &(er, cr)) in cells_re.iter().enumerate() {
        let region = space.mesh.tet_region[t] as usize;
        let mat = materials
            .get(region)
            .copied()
            .unwrap_or(RegionMaterial::VACUUM);
        let (ei, ci) = cells_im.get(t).copied().unwrap_or(([0.0; 3], [0.0; 3]));
        let (h_re, h_im) = magnetic_field(cr, ci, w_re, w_im, mat.mu_r, alpha);
        out.cell_h_real.push(h_re);
        out.cell_h_imag.push(h_im);
        let e2 = alpha * alpha * (norm2(er) + norm2(ei));
        out.cell_heating
            .push(heating_density(w_re, mat.eps_imag, e2));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::C0;

    /// A plane wave E = x̂ e^{−jk0z} in vacuum has H = ŷ E/η0 with η0 = μ0c0 (Pozar,
    /// Microwave Engineering, 4th ed., §1.4, eq. 1.77, from memory). At z = 0:
    /// ∇×E = ŷ ∂Ex/∂z = −jk0 ŷ, so C_r = 0, C_i = −k0 ŷ; with real ω = c0k0 the formula
    /// must give Re H = ŷ/η0, Im H = 0 (to round-off).
    #[test]
    fn plane_wave_h_is_e_over_eta0() {
        let k0 = 51.3;
        let omega = C0 * k0;
        let (h_re, h_im) = magnetic_field([0.0; 3], [0.0, -k0, 0.0], omega, 0.0, 1.0, 1.0);
        let eta0 = MU0 * C0;
        assert!(
            (h_re[1] * eta0 - 1.0).abs() < 1e-12,
            "Re Hy η0 = {}",
            h_re[1] * eta0
        );
        assert!(h_re[0] == 0.0 && h_re[2] == 0.0);
        assert!(h_im.iter().all(|v| v.abs() < 1e-15), "Im H = {h_im:?}");
    }

    /// q = ½ωε0ε″|E|² (design notes §8): ε″ = 10 at 2.45 GHz and |E| = 1 kV/m give
    /// ½ · 2π·2.45e9 s⁻¹ · 8.8541878128e-12 F/m · 10 · 1e6 V²/m² = 681,498 W/m³ (worked
    /// by hand to six digits; the tolerance is that rounding).
    #[test]
    fn heating_density_formula() {
        let omega = 2.0 * std::f64::consts::PI * 2.45e9;
        let q = heating_density(omega, 10.0, 1e6);
        assert!((q / 681_498.0 - 1.0).abs() < 2e-6, "q = {q}");
    }
}
