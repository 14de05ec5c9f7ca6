//! From a validated geometry to solver inputs: region materials at the target
//! frequency and the solve settings. The scripting entry point is [`solve_geometry`]:
//! geometry in, modes out.

use crate::assembly::RegionMaterial;
use crate::element::NedelecOrder;
use crate::error::SolverError;
use crate::modes::{solve_modes, ModeSet, ModeSettings, Stage};
use crate::port::port_frames;
use antinode_mesh::geometry::WallMetal;
use antinode_mesh::{Geometry, TetMesh};

/// Material constants of every mesh region (0 = air, i + 1 = load i) at `freq_hz`.
pub fn region_materials(geom: &Geometry, freq_hz: f64) -> Vec<RegionMaterial> {
    let mut out = vec![RegionMaterial::VACUUM];
    for load in &geom.loads {
        let (eps_real, eps_imag) = load.material.permittivity(freq_hz);
        out.push(RegionMaterial {
            eps_real,
            eps_imag,
            mu_r: load.material.permeability,
        });
    }
    out
}

/// Solve settings from the geometry's `[mesh]` and `[solve]` tables.
pub fn settings_from(geom: &Geometry) -> ModeSettings {
    let mut s = ModeSettings::new(geom.solve.target * 1e9);
    s.order = NedelecOrder::from_int(geom.mesh.order).unwrap_or(NedelecOrder::Two);
    s.band_hz = geom.solve.band.map(|[lo, hi]| [lo * 1e9, hi * 1e9]);
    s.count = match (geom.solve.count, geom.solve.band) {
        (Some(c), _) => c,
        (None, Some(_)) => 1,
        (None, None) => 20,
    };
    s.wall_conductivity = match &geom.cavity.walls {
        WallMetal::Pec => None,
        WallMetal::Metal { conductivity, .. } => Some(*conductivity),
    };
    s.ports = port_frames(geom);
    s
}

/// Solve the modes of `geom` on `mesh` with `settings`.
pub fn solve_geometry(
    geom: &Geometry,
    mesh: &TetMesh,
    settings: &ModeSettings,
    progress: &mut dyn FnMut(Stage),
) -> Result<ModeSet, SolverError> {
    let materials = region_materials(geom, settings.target_hz);
    solve_modes(mesh, &materials, settings, progress)
}
