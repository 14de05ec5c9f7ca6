//! `heating_<f>GHz.vtu` per field frequency of `antinode drive`, and `heating.pvd`
//! listing them (timestep = frequency in GHz).
//!
//! Point data: `E_real`, `E_imag` (V/m, peak phasor of the actual drive, e^{jωt}) and
//! `E_magnitude`, vertex averages of the incident cells. Cell data: `region`,
//! `heating_W_per_m3` (the cell average of q = ½ωε0ε″|E|², so Σ q V is the absorbed
//! power), with `--spread` `heating_W_per_m3_spread` (the average over the source
//! spectrum) and with `--time` `temperature_rise_K` (ΔT = q t/(ρ c_p), no conduction).
//! All values come from the solver; this module only lays them out.

use antinode_mesh::vtk::{self, CellBlock, DataArray, VtuPiece};
use antinode_mesh::TetMesh;
use antinode_solver::driven::solve::VertexField;
use anyhow::{Context, Result};
use std::path::Path;

/// File name of the field at `freq_ghz`.
pub fn file_name(freq_ghz: f64) -> String {
    format!("heating_{freq_ghz:.4}GHz.vtu")
}

/// One field frequency's arrays.
pub struct HeatingField<'a> {
    pub freq_ghz: f64,
    pub e: &'a VertexField,
    pub heating: &'a [f64],
    pub heating_spread: Option<&'a [f64]>,
    pub temperature_rise: Option<&'a [f64]>,
}

pub fn write_one(dir: &Path, mesh: &TetMesh, f: &HeatingField<'_>) -> Result<()> {
    let path = dir.join(file_name(f.freq_ghz));
    let mut cell_data = vec![
        DataArray::UInts {
            name: "region",
            values: &mesh.tet_region,
        },
        DataArray::Scalars {
            name: "heating_W_per_m3",
            values: f.heating,
        },
    ];
    if let Some(h) = f.heating_spread {
        cell_data.push(DataArray::Scalars {
            name: "heating_W_per_m3_spread",
            values: h,
        });
    }
    if let Some(t) = f.temperature_rise {
        cell_data.push(DataArray::Scalars {
            name: "temperature_rise_K",
            values: t,
        });
    }
    vtk::write_vtu(
        &path,
        &VtuPiece {
            points: &mesh.nodes,
            cells: CellBlock::Tets(&mesh.tets),
            point_data: vec![
                DataArray::Vectors {
                    name: "E_real",
                    values: &f.e.re,
                },
                DataArray::Vectors {
                    name: "E_imag",
                    values: &f.e.im,
                },
                DataArray::Scalars {
                    name: "E_magnitude",
                    values: &f.e.magnitude,
                },
            ],
            cell_data,
        },
    )
    .with_context(|| format!("writing heating field {}", path.display()))
}

/// `heating.pvd` over the written files.
pub fn write_pvd(dir: &Path, freqs_ghz: &[f64]) -> Result<()> {
    let entries: Vec<(f64, String)> = freqs_ghz.iter().map(|&f| (f, file_name(f))).collect();
    let pvd = dir.join("heating.pvd");
    vtk::write_pvd(&pvd, &entries)
        .with_context(|| format!("writing the heating collection {}", pvd.display()))
}
