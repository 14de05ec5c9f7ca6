//! One `.vtu` per mode with E and H on the mesh, and a `.pvd` collection listing them.
//!
//! Field scaling. The solver normalises each mode's coefficients to ∫ ε′ |E|² dV = 1 m³.
//! For a lossless resonance with peak phasor amplitudes the time-averaged electric and
//! magnetic energies are equal, so the stored energy is
//!
//!   W = W_e + W_m = 2 W_e = 2 · (ε0/4) ∫ ε′ |E|² dV = (ε0/2) ∫ ε′ |E|² dV.
//!
//! Scaling E by α gives W = (ε0/2) α² · 1 m³, so α = √(2/ε0) (in V/m per √J) makes
//! W = 1 J. H follows from Faraday's law with e^{jωt}: ∇×E = −jωμ0μr H, so
//! H = j ∇×E / (ω μ0 μr): for a real E the magnetic field is purely imaginary (90° out of
//! phase), written as `H_imag`.

use antinode_mesh::vtk::{self, CellBlock, DataArray, VtuPiece};
use antinode_mesh::TetMesh;
use antinode_solver::field;
use antinode_solver::modes::{Mode, ModeSet};
use anyhow::{Context, Result};
use std::path::Path;

use crate::units::{EPS0, MU0};

/// Scale factor from the solver's normalisation to 1 J of stored energy (see module docs).
pub fn energy_scale() -> f64 {
    (2.0 / EPS0).sqrt()
}

/// File name of mode `index` (1-based).
pub fn file_name(index: usize) -> String {
    format!("mode_{index:03}.vtu")
}

/// Writes `mode_NNN.vtu` for every mode and `modes.pvd` (timestep = frequency in GHz).
/// `mu_r` is the relative permeability of each region id.
pub fn write_all(dir: &Path, mesh: &TetMesh, set: &ModeSet, mu_r: &[f64]) -> Result<()> {
    let mut entries = Vec::with_capacity(set.modes.len());
    for (i, mode) in set.modes.iter().enumerate() {
        let name = file_name(i + 1);
        write_one(&dir.join(&name), mesh, set, mode, mu_r)?;
        entries.push((mode.frequency_hz * 1e-9, name));
    }
    let pvd = dir.join("modes.pvd");
    vtk::write_pvd(&pvd, &entries)
        .with_context(|| format!("writing the mode collection {}", pvd.display()))?;
    Ok(())
}

fn write_one(path: &Path, mesh: &TetMesh, set: &ModeSet, mode: &Mode, mu_r: &[f64]) -> Result<()> {
    let topo = &set.disc.topology;
    let dofs = &set.disc.dofs;
    let alpha = energy_scale();
    let omega = 2.0 * std::f64::consts::PI * mode.frequency_hz;
    let nodes = field::node_values(mesh, topo, dofs, &mode.coefficients);
    let e_real: Vec<[f64; 3]> = nodes.iter().map(|(e, _)| e.map(|v| v * alpha)).collect();
    let e_mag: Vec<f64> = e_real
        .iter()
        .map(|e| (e[0] * e[0] + e[1] * e[1] + e[2] * e[2]).sqrt())
        .collect();
    let cells = field::cell_values(mesh, topo, dofs, &mode.coefficients);
    let h_imag: Vec<[f64; 3]> = cells
        .iter()
        .enumerate()
        .map(|(t, (_, curl))| {
            let mu = mu_r
                .get(mesh.tet_region[t] as usize)
                .copied()
                .unwrap_or(1.0);
            curl.map(|c| c * alpha / (omega * MU0 * mu))
        })
        .collect();
    vtk::write_vtu(
        path,
        &VtuPiece {
            points: &mesh.nodes,
            cells: CellBlock::Tets(&mesh.tets),
            point_data: vec![
                DataArray::Vectors {
                    name: "E_real",
                    values: &e_real,
                },
                DataArray::Scalars {
                    name: "E_magnitude",
                    values: &e_mag,
                },
            ],
            cell_data: vec![
                DataArray::UInts {
                    name: "region",
                    values: &mesh.tet_region,
                },
                DataArray::Vectors {
                    name: "H_imag",
                    values: &h_imag,
                },
            ],
        },
    )
    .with_context(|| format!("writing mode field {}", path.display()))
}
