//! Element count of a geometry before any meshing: the mesher refuses a geometry whose
//! estimate exceeds its limits before it allocates anything.
//!
//! The mesher extrudes a cross-section triangulation through z-layers, so
//! tets = 3 · triangles · layers. Both factors follow from the size fields:
//! - triangles: a triangular lattice of spacing a = SPACING_FACTOR·h has 2/(√3 a²) points
//!   and twice as many triangles per unit area, so triangles ≈ Σ 4 A_r / (√3 a_r²) over
//!   the air's cross-section (at h_air) and each load footprint (at the load's size);
//! - layers: ∫ dz / (LAYER_FACTOR · h_z(z)) over the height, the count the layer placement
//!   rounds to (`graded_params_nearest`).
//!
//! The fine shell the grading puts around each load is left out and the lattice is
//! rounded at the section's boundary: on the test geometries (`mesh/tests/limits.rs`) the
//! mesher made 0.87–1.09 times the estimate. A geometry is refused when the estimate
//! exceeds the tet limit by more than [`ESTIMATE_MARGIN`], so no mesh the mesher could
//! make is refused by it; the mesher's exact counts catch the rest. Every step is
//! O(loads) work, whatever the sizes.

use super::sizing::{cavity_height, RegionSize, SizeField};
use super::{MesherError, MAX_TETS};
use crate::geometry::bounds::{
    out_of_range, MAX_FREQUENCY_GHZ, MAX_LENGTH_MM, MAX_PER_WAVELENGTH, MIN_FREQUENCY_GHZ,
    MIN_LENGTH_MM,
};
use crate::geometry::{CavityShape, Geometry, LoadShape};

/// Samples of the layer integral: h_z is GRADING_Z-Lipschitz, so the midpoint rule on
/// this many intervals is far more accurate than the estimate's other approximations.
const LAYER_SAMPLES: usize = 4096;

/// How far the estimate may be off the mesher's count (1/0.87 observed, rounded up).
pub const ESTIMATE_MARGIN: f64 = 1.25;

/// Element count expected for a geometry, before meshing.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MeshEstimate {
    /// Cross-section triangles.
    pub triangles: f64,
    /// z-layers.
    pub layers: f64,
    /// Tetrahedra (3 per prism).
    pub tets: f64,
    /// Target size of the air (mm).
    pub h_air_mm: f64,
    /// Smallest target size of any region (mm).
    pub h_min_mm: f64,
}

/// Checks the settings against [`crate::geometry::bounds`] (they may come from the
/// command line) and estimates the element count from the sizes and the size field.
pub fn estimate(geom: &Geometry, sizes: &[RegionSize]) -> Result<MeshEstimate, MesherError> {
    check_bounds(geom)?;
    let field = SizeField::new(geom, sizes)?;
    let a = |h: f64| super::planar::SPACING_FACTOR * h;
    let per_area = |h: f64| 4.0 / (3f64.sqrt() * a(h) * a(h));
    let footprints: Vec<(f64, f64)> = field
        .loads
        .iter()
        .map(|l| (footprint_area(&l.shape), l.h))
        .collect();
    let section = section_area(&geom.cavity.shape);
    let loads_area: f64 = footprints.iter().map(|f| f.0).sum();
    let triangles = (section - loads_area).max(0.0) * per_area(field.h_air)
        + footprints
            .iter()
            .map(|&(area, h)| area * per_area(h))
            .sum::<f64>();
    let height = cavity_height(&geom.cavity.shape);
    let dz = height / LAYER_SAMPLES as f64;
    let layers = (0..LAYER_SAMPLES)
        .map(|k| dz / (super::extrude::LAYER_FACTOR * field.h_z((k as f64 + 0.5) * dz)))
        .sum::<f64>()
        .max(1.0);
    let tets = 3.0 * triangles.max(1.0) * layers;
    let est = MeshEstimate {
        triangles,
        layers,
        tets,
        h_air_mm: field.h_air,
        h_min_mm: field.h_min(),
    };
    if tets.is_nan() || tets > ESTIMATE_MARGIN * MAX_TETS as f64 {
        return Err(MesherError::EstimateTooLarge {
            tets,
            triangles,
            layers,
            h_air_mm: est.h_air_mm,
            h_min_mm: est.h_min_mm,
            limit: MAX_TETS,
        });
    }
    Ok(est)
}

/// The cavity and the settings a command line can override, against the bounds the file
/// reader uses (a geometry built in code bypasses the reader).
fn check_bounds(geom: &Geometry) -> Result<(), MesherError> {
    let checks = [
        (
            "solve.target (--target)",
            geom.solve.target,
            [MIN_FREQUENCY_GHZ, MAX_FREQUENCY_GHZ],
            "GHz",
        ),
        (
            "mesh.max_size (--max-size)",
            geom.mesh.max_size,
            [MIN_LENGTH_MM, MAX_LENGTH_MM],
            "mm",
        ),
        (
            "mesh.per_wavelength (--per-wavelength)",
            geom.mesh.per_wavelength,
            [1.0, MAX_PER_WAVELENGTH],
            "elements per wavelength",
        ),
    ];
    let lengths = match geom.cavity.shape {
        CavityShape::Box { size } => vec![
            ("cavity.size", size[0]),
            ("cavity.size", size[1]),
            ("cavity.size", size[2]),
        ],
        CavityShape::Cylinder { radius, height } => {
            vec![("cavity.radius", radius), ("cavity.height", height)]
        }
    };
    for (name, v) in lengths {
        if let Some(allowed) = out_of_range(v, MIN_LENGTH_MM, MAX_LENGTH_MM, "mm") {
            return Err(MesherError::Settings(format!("{name}: {v} {allowed}")));
        }
    }
    for (name, v, [lo, hi], unit) in checks {
        if let Some(allowed) = out_of_range(v, lo, hi, unit) {
            return Err(MesherError::Settings(format!("{name} = {v} {allowed}")));
        }
    }
    Ok(())
}

fn section_area(shape: &CavityShape) -> f64 {
    match *shape {
        CavityShape::Box { size } => size[0] * size[1],
        CavityShape::Cylinder { radius, .. } => std::f64::consts::PI * radius * radius,
    }
}

fn footprint_area(shape: &LoadShape) -> f64 {
    match *shape {
        LoadShape::Cylinder { radius, .. } => std::f64::consts::PI * radius * radius,
        LoadShape::Box { min, max, .. } => (max[0] - min[0]) * (max[1] - min[1]),
    }
}
