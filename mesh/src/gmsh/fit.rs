//! An imported mesh against the geometry's `[cavity]`: the same size and the same place.
//!
//! The solver takes the port frames, the wall metal and the cavity volume of the band
//! figures from `[cavity]`, so the mesh must fill that cavity in its frame (box: corner at
//! the origin; cylinder: axis on z through x = y = 0, base at z = 0). Two checks, both
//! common practice, no source:
//! - the meshed volume (the sum of the tetrahedra's volumes) lies within a factor 1.5 of
//!   the cavity's: a wrong `unit_mm` is off by 10³ (mm for m) or 25.4³ (inch), while a
//!   faceted round wall or a mesh of a cavity with an inner obstacle stays well inside;
//! - each side of the mesh's bounding box lies within 10 % of the cavity's largest extent
//!   of the cavity's (a polygon of 8 sides inscribed in the circle falls short by 7.6 % of
//!   the radius, 3.8 % of the diameter).

use super::conformity::bounding_box;
use super::ImportError;
use crate::geometry::CavityShape;
use crate::tet_mesh::TetMesh;
use std::path::Path;

/// Largest ratio between the meshed and the nominal volume, either way.
const VOLUME_RATIO: f64 = 1.5;
/// Largest offset of a bounding-box side, relative to the cavity's largest extent.
const BOX_OFFSET: f64 = 0.10;

/// Checks that `mesh` (metres) fills `cavity` (mm) in size and place; `path` names the
/// file in the message.
pub fn check_fit(mesh: &TetMesh, cavity: &CavityShape, path: &Path) -> Result<(), ImportError> {
    let err = |message: String| ImportError::Mesh {
        path: path.to_path_buf(),
        message,
    };
    let meshed_l: f64 = (0..mesh.tets.len())
        .map(|t| mesh.signed_volume(t).abs())
        .sum::<f64>()
        * 1e3;
    let nominal_l = cavity.volume() * 1e-6;
    let ratio = meshed_l / nominal_l;
    if !(ratio.is_finite() && (1.0 / VOLUME_RATIO..=VOLUME_RATIO).contains(&ratio)) {
        return Err(err(format!(
            "the meshed volume is {} L but [cavity] holds {} L (ratio {ratio:.3e}); the mesh \
             must fill the cavity, within a factor {VOLUME_RATIO}: check unit_mm (mm per \
             file unit: 1 for mm, 1000 for m, 25.4 for inches) and [cavity]",
            litres(meshed_l),
            litres(nominal_l)
        )));
    }
    let (lo, hi) = bounding_box(&mesh.nodes);
    let (lo, hi) = (lo.map(|x| x * 1e3), hi.map(|x| x * 1e3));
    let (clo, chi) = match *cavity {
        CavityShape::Box { size } => ([0.0; 3], size),
        CavityShape::Cylinder { radius, height } => {
            ([-radius, -radius, 0.0], [radius, radius, height])
        }
    };
    let tol = BOX_OFFSET * cavity.scale();
    for i in 0..3 {
        if (lo[i] - clo[i]).abs() > tol || (hi[i] - chi[i]).abs() > tol {
            let ax = ["x", "y", "z"][i];
            return Err(err(format!(
                "the mesh spans {ax} = {:.4} .. {:.4} mm but [cavity] spans {ax} = {} .. {} mm \
                 (allowed offset {tol:.4} mm); ports and walls are placed from [cavity], so \
                 the mesh must lie in its frame (box: corner at the origin; cylinder: axis \
                 on z through x = y = 0, base at z = 0)",
                lo[i], hi[i], clo[i], chi[i]
            )));
        }
    }
    Ok(())
}

/// A volume in litres for a message: four significant digits, exponent when large.
fn litres(v: f64) -> String {
    if v.abs() >= 1e5 || (v != 0.0 && v.abs() < 1e-3) {
        format!("{v:.3e}")
    } else {
        format!("{v:.4}")
    }
}
