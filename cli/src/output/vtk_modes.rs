//! One `.vtu` per mode with E, H and the heating density on the mesh, and a `.pvd`
//! collection listing them.
//!
//! Field scaling. The solver normalises each mode's coefficients to ∫ ε′ |E|² dV = 1 m³
//! (|E|² = |Re E|² + |Im E|², peak phasor amplitudes). At resonance the time-averaged
//! electric and magnetic energies are equal, so the stored energy is
//!
//!   W = W_e + W_m = 2 W_e = 2 · (ε0/4) ∫ ε′ |E|² dV = (ε0/2) ∫ ε′ |E|² dV.
//!
//! Scaling E by α gives W = (ε0/2) α² · 1 m³, so α = √(2/ε0) (in V/m per √J) makes
//! W = 1 J. Every written field is for 1 J of stored energy.
//!
//! Magnetic field. Faraday's law with e^{jωt}: ∇×E = −jωμ0μr H, so
//!
//!   H = ∇×E / (−jωμ0μr) = (j/ω) ∇×E / (μ0μr).
//!
//! With ∇×E = C_r + jC_i and complex ω (Im ω > 0 for a decaying mode),
//! j/ω = j ω̄/|ω|² = (Im ω + j Re ω)/|ω|², hence with a = Im ω/|ω|², b = Re ω/|ω|²:
//!
//!   Re H = (a C_r − b C_i)/(μ0μr),   Im H = (a C_i + b C_r)/(μ0μr).
//!
//! For a real E (C_i = 0) and real ω this is Re H = 0, Im H = C_r/(ωμ0μr): the field
//! 90° out of phase with E written as `H_imag` before complex modes existed.
//!
//! Heating. Absorbed power density q = (ω ε0 ε″ / 2)|E|² (W/m³) with ε″ of the cell's
//! region at the target frequency, at cell centroids; zero in air. With the 1 J scaling
//! the array is in W/m³ per joule of stored energy, hence its name.

use antinode_mesh::vtk::{self, CellBlock, DataArray, VtuPiece};
use antinode_mesh::TetMesh;
use antinode_solver::assembly::RegionMaterial;
use antinode_solver::field;
use antinode_solver::modes::{Mode, ModeSet};
use anyhow::{Context, Result};
use std::path::Path;

use crate::units::{EPS0, MU0};

/// Name of the heating array (cell data).
pub const HEATING: &str = "heating_W_per_m3_per_J";

/// Scale factor from the solver's normalisation to 1 J of stored energy (see module docs).
pub fn energy_scale() -> f64 {
    (2.0 / EPS0).sqrt()
}

/// File name of mode `index` (1-based).
pub fn file_name(index: usize) -> String {
    format!("mode_{index:03}.vtu")
}

/// Writes `mode_NNN.vtu` for every mode and `modes.pvd` (timestep = frequency in GHz).
/// `materials` holds the constants of each region id.
pub fn write_all(
    dir: &Path,
    mesh: &TetMesh,
    set: &ModeSet,
    materials: &[RegionMaterial],
) -> Result<()> {
    let mut entries = Vec::with_capacity(set.modes.len());
    for (i, mode) in set.modes.iter().enumerate() {
        let name = file_name(i + 1);
        write_one(&dir.join(&name), mesh, set, mode, materials)?;
        entries.push((mode.frequency_hz * 1e-9, name));
    }
    let pvd = dir.join("modes.pvd");
    vtk::write_pvd(&pvd, &entries)
        .with_context(|| format!("writing the mode collection {}", pvd.display()))?;
    Ok(())
}

fn scaled(v: [f64; 3], s: f64) -> [f64; 3] {
    v.map(|x| x * s)
}

fn norm2(v: [f64; 3]) -> f64 {
    v[0] * v[0] + v[1] * v[1] + v[2] * v[2]
}

fn write_one(
    path: &Path,
    mesh: &TetMesh,
    set: &ModeSet,
    mode: &Mode,
    materials: &[RegionMaterial],
) -> Result<()> {
    let topo = &set.disc.topology;
    let dofs = &set.disc.dofs;
    let alpha = energy_scale();
    let two_pi = 2.0 * std::f64::consts::PI;
    let (w_re, w_im) = (two_pi * mode.frequency_hz, two_pi * mode.frequency_imag_hz);
    let w2 = w_re * w_re + w_im * w_im;
    let (a, b) = (w_im / w2, w_re / w2);
    let complex = !mode.coefficients_imag.is_empty();

    // Point data: E (volume-weighted vertex averages).
    let nodes_re = field::node_values(mesh, topo, dofs, &mode.coefficients);
    let e_real: Vec<[f64; 3]> = nodes_re.iter().map(|(e, _)| scaled(*e, alpha)).collect();
    let e_imag: Vec<[f64; 3]> = if complex {
        field::node_values(mesh, topo, dofs, &mode.coefficients_imag)
            .iter()
            .map(|(e, _)| scaled(*e, alpha))
            .collect()
    } else {
        Vec::new()
    };
    let e_mag: Vec<f64> = (0..e_real.len())
        .map(|i| (norm2(e_real[i]) + e_imag.get(i).map_or(0.0, |e| norm2(*e))).sqrt())
        .collect();

    // Cell data at centroids: H from curl E, heating from |E|².
    let cells_re = field::cell_values(mesh, topo, dofs, &mode.coefficients);
    let cells_im = if complex {
        field::cell_values(mesh, topo, dofs, &mode.coefficients_imag)
    } else {
        Vec::new()
    };
    let zero = ([0.0; 3], [0.0; 3]);
    let n_cells = cells_re.len();
    let mut h_real = Vec::with_capacity(n_cells);
    let mut h_imag = Vec::with_capacity(n_cells);
    let mut heating = Vec::with_capacity(n_cells);
    for (t, &(er, cr)) in cells_re.iter().enumerate() {
        let region = mesh.tet_region[t] as usize;
        let mat = materials
            .get(region)
            .copied()
            .unwrap_or(RegionMaterial::VACUUM);
        let (ei, ci) = cells_im.get(t).copied().unwrap_or(zero);
        let s = alpha / (MU0 * mat.mu_r);
        h_real.push([0, 1, 2].map(|k| (a * cr[k] - b * ci[k]) * s));
        h_imag.push([0, 1, 2].map(|k| (a * ci[k] + b * cr[k]) * s));
        let e2 = alpha * alpha * (norm2(er) + norm2(ei));
        heating.push(0.5 * w_re * EPS0 * mat.eps_imag * e2);
    }

    let mut point_data = vec![DataArray::Vectors {
        name: "E_real",
        values: &e_real,
    }];
    if complex {
        point_data.push(DataArray::Vectors {
            name: "E_imag",
            values: &e_imag,
        });
    }
    point_data.push(DataArray::Scalars {
        name: "E_magnitude",
        values: &e_mag,
    });
    vtk::write_vtu(
        path,
        &VtuPiece {
            points: &mesh.nodes,
            cells: CellBlock::Tets(&mesh.tets),
            point_data,
            cell_data: vec![
                DataArray::UInts {
                    name: "region",
                    values: &mesh.tet_region,
                },
                DataArray::Vectors {
                    name: "H_real",
                    values: &h_real,
                },
                DataArray::Vectors {
                    name: "H_imag",
                    values: &h_imag,
                },
                DataArray::Scalars {
                    name: HEATING,
                    values: &heating,
                },
            ],
        },
    )
    .with_context(|| format!("writing mode field {}", path.display()))
}
