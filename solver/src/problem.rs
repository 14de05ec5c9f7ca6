//! From a validated geometry (the file model of `antinode_mesh::geometry`, in mm and
//! GHz) to solver inputs in SI units: region materials at the target frequency, the
//! solve settings, the port frames and what the band figures need of the cavity. Every
//! unit conversion of the geometry file's numbers (mm → m, GHz → Hz) happens here, so
//! the discretisation ([`crate::fem`]) never sees the file model.
//!
//! The scripting entry point is [`solve_geometry`]: geometry in, modes out (see the
//! `modes_from_geometry` example).

use crate::error::SolverError;
use crate::fem::assembly::RegionMaterial;
use crate::fem::port::PortFrame;
use crate::fem::NedelecOrder;
use crate::modes::{solve_modes, ModeSet, ModeSettings, Stage};
use crate::post::band::{optical_volume, WeylCavity};
use antinode_mesh::geometry::{CavityShape, PortWall, WallMetal};
use antinode_mesh::{Geometry, TetMesh};

/// Metres of a length in mm (geometry files).
pub fn mm_to_m(mm: f64) -> f64 {
    mm * 1e-3
}

/// Hz of a frequency in GHz (geometry files).
pub fn ghz_to_hz(ghz: f64) -> f64 {
    ghz * 1e9
}

/// The solver's inputs for one geometry.
#[derive(Clone, Debug)]
pub struct Problem {
    pub settings: ModeSettings,
    /// Constants of every mesh region at the target frequency (0 = air, i + 1 = load i).
    pub materials: Vec<RegionMaterial>,
}

impl Problem {
    /// Settings and materials of `geom` (see [`settings_from`], [`region_materials`]).
    pub fn from_geometry(geom: &Geometry) -> Result<Self, SolverError> {
        let settings = settings_from(geom)?;
        let materials = region_materials(geom, settings.target_hz);
        Ok(Self {
            settings,
            materials,
        })
    }
}

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

/// The element order of the geometry's `[mesh]` table; an order the solver does not
/// implement is an error (never replaced by a default).
pub fn order_of(geom: &Geometry) -> Result<NedelecOrder, SolverError> {
    NedelecOrder::from_int(geom.mesh.order).ok_or(SolverError::UnsupportedOrder {
        order: geom.mesh.order,
    })
}

/// The `[solve]` band in Hz.
pub fn band_hz(geom: &Geometry) -> Option<[f64; 2]> {
    geom.solve.band.map(|b| b.map(ghz_to_hz))
}

/// Solve settings from the geometry's `[mesh]` and `[solve]` tables: order, target,
/// band, count (20 without a band, 1 beside a band unless given), wall conductivity and
/// port frames.
pub fn settings_from(geom: &Geometry) -> Result<ModeSettings, SolverError> {
    let mut s = ModeSettings::new(ghz_to_hz(geom.solve.target));
    s.order = order_of(geom)?;
    s.band_hz = band_hz(geom);
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
    Ok(s)
}

/// What Weyl's estimate needs of the cavity: the empty box's volume and side sum, or
/// the optical volume of the meshed regions (`region_volumes_m3`, region order).
pub fn weyl_cavity(
    geom: &Geometry,
    region_volumes_m3: &[f64],
    materials: &[RegionMaterial],
) -> WeylCavity {
    match (geom.cavity.shape, geom.loads.is_empty()) {
        (CavityShape::Box { size }, true) => WeylCavity::EmptyBox {
            // mm³ → m³ and mm → m.
            volume_m3: size.iter().product::<f64>() * 1e-9,
            edge_sum_m: mm_to_m(size.iter().sum::<f64>()),
        },
        _ => WeylCavity::General {
            optical_volume_m3: optical_volume(region_volumes_m3, materials),
            volume_m3: region_volumes_m3.iter().sum(),
            loaded: !geom.loads.is_empty(),
        },
    }
}

/// Frames of the geometry's ports, in file order.
pub fn port_frames(geom: &Geometry) -> Vec<PortFrame> {
    geom.ports
        .iter()
        .map(|p| {
            let (center, e0, e1, n) = match (p.wall, geom.cavity.shape) {
                (PortWall::BoxWall { axis, positive }, CavityShape::Box { size }) => {
                    let [a0, a1] = PortWall::box_in_plane_axes(axis);
                    let mut c = [0.0; 3];
                    c[axis] = if positive { size[axis] } else { 0.0 };
                    c[a0] = p.center[0];
                    c[a1] = p.center[1];
                    let mut e0 = [0.0; 3];
                    e0[a0] = 1.0;
                    let mut e1 = [0.0; 3];
                    e1[a1] = 1.0;
                    let mut n = [0.0; 3];
                    n[axis] = if positive { 1.0 } else { -1.0 };
                    (c, e0, e1, n)
                }
                (PortWall::Top, CavityShape::Cylinder { height, .. }) => (
                    [p.center[0], p.center[1], height],
                    [1.0, 0.0, 0.0],
                    [0.0, 1.0, 0.0],
                    [0.0, 0.0, 1.0],
                ),
                (PortWall::Bottom, _) => (
                    [p.center[0], p.center[1], 0.0],
                    [1.0, 0.0, 0.0],
                    [0.0, 1.0, 0.0],
                    [0.0, 0.0, -1.0],
                ),
                (PortWall::Side { angle_deg }, CavityShape::Cylinder { radius, .. }) => {
                    let phi = angle_deg.to_radians() + p.center[0] / radius;
                    let (s, c) = phi.sin_cos();
                    (
                        [radius * c, radius * s, p.center[1]],
                        [-s, c, 0.0],
                        [0.0, 0.0, 1.0],
                        [c, s, 0.0],
                    )
                }
                // Validation rejects ports on walls of the other cavity shape.
                (_, _) => (
                    [p.center[0], p.center[1], 0.0],
                    [1.0, 0.0, 0.0],
                    [0.0, 1.0, 0.0],
                    [0.0, 0.0, -1.0],
                ),
            };
            let (u, v) = if p.rotated { (e1, e0) } else { (e0, e1) };
            PortFrame {
                center: center.map(mm_to_m),
                u,
                v,
                n,
                width: mm_to_m(p.width),
                height: mm_to_m(p.height),
            }
        })
        .collect()
}

/// Solve the modes of `geom` on `mesh` with `settings` (materials at the target).
pub fn solve_geometry<'m>(
    geom: &Geometry,
    mesh: &'m TetMesh,
    settings: &ModeSettings,
    progress: &mut dyn FnMut(Stage),
) -> Result<ModeSet<'m>, SolverError> {
    let materials = region_materials(geom, settings.target_hz);
    solve_modes(mesh, &materials, settings, progress)
}

/// Relative permeability of every mesh region (0 = air, i + 1 = load i).
pub fn region_permeabilities(geom: &Geometry) -> Vec<f64> {
    std::iter::once(1.0)
        .chain(geom.loads.iter().map(|l| l.material.permeability))
        .collect()
}

/// Incident power waves ã_p = √P_p e^{jφ_p} (√W) of a driven solve from the ports'
/// `power` and `phase_deg` keys. When no port gives a power, the first port is fed with
/// `default_power_w` and the others are matched and idle.
pub fn drive_amplitudes(geom: &Geometry, default_power_w: f64) -> Vec<faer::c64> {
    let any = geom.ports.iter().any(|p| p.power.is_some());
    geom.ports
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let power = match (any, p.power) {
                (true, Some(w)) => w,
                (true, None) => 0.0,
                (false, _) if i == 0 => default_power_w,
                (false, _) => 0.0,
            };
            faer::c64::from_polar(power.sqrt(), p.phase_deg.to_radians())
        })
        .collect()
}

/// Thermal data of every mesh region (0 = air: none, i + 1 = load i: from its material).
pub fn region_thermal(geom: &Geometry) -> Vec<Option<crate::driven::loads::Thermal>> {
    std::iter::once(None)
        .chain(geom.loads.iter().map(|l| {
            l.material
                .thermal
                .as_ref()
                .map(|t| crate::driven::loads::Thermal {
                    density: t.density,
                    specific_heat: t.specific_heat,
                })
        }))
        .collect()
}
