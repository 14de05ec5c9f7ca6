//! One `.vtu` per mode with E, H and the heating density on the mesh, and a `.pvd`
//! collection listing them.
//!
//! The fields come from the solver (`antinode_solver::post::field`: E at the vertices,
//! H = ∇×E/(−jωμ0μr) and q = ½ωε0ε″|E|² at the cell centroids), scaled to 1 J of stored
//! energy; this module only lays them out as VTK arrays. VTK has no complex type, so
//! real and imaginary parts are separate arrays; `H_imag` of a lossless mode is the field
//! 90° out of phase with E. The heating array is in W/m³ per joule of stored energy,
//! hence its name.

use antinode_mesh::vtk::{self, CellBlock, DataArray, VtuPiece};
use antinode_solver::{Mode, ModeSet, RegionMaterial};
use anyhow::{Context, Result};
use std::path::Path;

/// Name of the heating array (cell data).
pub const HEATING: &str = "heating_W_per_m3_per_J";

/// File name of mode `index` (1-based).
pub fn file_name(index: usize) -> String {
    format!("mode_{index:03}.vtu")
}

/// Writes `mode_NNN.vtu` for every mode and `modes.pvd` (timestep = frequency in GHz).
/// `materials` holds the constants of each region id.
pub fn write_all(dir: &Path, set: &ModeSet<'_>, materials: &[RegionMaterial]) -> Result<()> {
    let mut entries = Vec::with_capacity(set.modes.len());
    for (i, mode) in set.modes.iter().enumerate() {
        let name = file_name(i + 1);
        write_one(&dir.join(&name), set, mode, materials)?;
        entries.push((mode.frequency_hz * 1e-9, name));
    }
    let pvd = dir.join("modes.pvd");
    vtk::write_pvd(&pvd, &entries)
        .with_context(|| format!("writing the mode collection {}", pvd.display()))?;
    Ok(())
}

fn write_one(
    path: &Path,
    set: &ModeSet<'_>,
    mode: &Mode,
    materials: &[RegionMaterial],
) -> Result<()> {
    let mesh = set.space.mesh;
    let fields = mode.fields(&set.space, materials);
    let mut point_data = vec![DataArray::Vectors {
        name: "E_real",
        values: &fields.vertex_e_real,
    }];
    if !fields.vertex_e_imag.is_empty() {
        point_data.push(DataArray::Vectors {
            name: "E_imag",
            values: &fields.vertex_e_imag,
        });
    }
    point_data.push(DataArray::Scalars {
        name: "E_magnitude",
        values: &fields.vertex_e_magnitude,
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
                    values: &fields.cell_h_real,
                },
                DataArray::Vectors {
                    name: "H_imag",
                    values: &fields.cell_h_imag,
                },
                DataArray::Scalars {
                    name: HEATING,
                    values: &fields.cell_heating,
                },
            ],
        },
    )
    .with_context(|| format!("writing mode field {}", path.display()))
}
