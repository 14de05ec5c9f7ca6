//! Per-load figures of a heating pattern: absorbed power, uniformity and the first-order
//! temperature rise ([`super::uniformity`] for the formulas).

use super::response::region_cells;
use super::uniformity::{calorimetric_power, temperature_rise, uniformity, Uniformity};
use crate::fem::Space;

/// Density ρ (kg/m³) and specific heat c_p (J/(kg·K)) of a region.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Thermal {
    pub density: f64,
    pub specific_heat: f64,
}

/// Temperature figures of one load after a heating time.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TemperatureFigures {
    pub seconds: f64,
    /// Volume-weighted mean ΔT (K).
    pub mean_rise_k: f64,
    /// Largest cell ΔT (K).
    pub max_rise_k: f64,
    pub mass_kg: f64,
    /// m c_p ΔT̄ / t (W): what a calorimetric test of this load would read.
    pub calorimetric_power_w: f64,
}

/// Figures of one load region.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LoadFigures {
    /// Region id (i + 1 for load i).
    pub region: usize,
    pub volume_m3: f64,
    /// Σ q V over the load's cells (W).
    pub absorbed_w: f64,
    /// None when the load absorbs nothing.
    pub uniformity: Option<Uniformity>,
    /// With a heating time and thermal data.
    pub temperature: Option<TemperatureFigures>,
}

/// Figures of every load region (1 ..) of the cell densities `heating` (W/m³);
/// `thermal[region]` gives the region's thermal data, `seconds` the heating time.
pub fn load_figures(
    space: &Space<'_>,
    heating: &[f64],
    thermal: &[Option<Thermal>],
    seconds: Option<f64>,
) -> Vec<LoadFigures> {
    (1..space.mesh.regions.len())
        .map(|region| {
            let cells = region_cells(space, heating, region);
            let volume_m3: f64 = cells.iter().map(|c| c.1).sum();
            let absorbed_w: f64 = cells.iter().map(|(q, v)| q * v).sum();
            let u = uniformity(&cells);
            let temperature = match (seconds, thermal.get(region).copied().flatten()) {
                (Some(t), Some(th)) => {
                    let rise = |q: f64| temperature_rise(q, t, th.density, th.specific_heat);
                    let mean = if volume_m3 > 0.0 {
                        rise(absorbed_w / volume_m3)
                    } else {
                        0.0
                    };
                    let max = cells.iter().map(|c| rise(c.0)).fold(0.0, f64::max);
                    let mass = th.density * volume_m3;
                    Some(TemperatureFigures {
                        seconds: t,
                        mean_rise_k: mean,
                        max_rise_k: max,
                        mass_kg: mass,
                        calorimetric_power_w: calorimetric_power(mass, th.specific_heat, mean, t),
                    })
                }
                _ => None,
            };
            LoadFigures {
                region,
                volume_m3,
                absorbed_w,
                uniformity: u,
                temperature,
            }
        })
        .collect()
}

/// ΔT per cell (K) after `seconds`; zero in regions without thermal data.
pub fn cell_temperature_rise(
    space: &Space<'_>,
    heating: &[f64],
    thermal: &[Option<Thermal>],
    seconds: f64,
) -> Vec<f64> {
    (0..space.n_tets())
        .map(|t| {
            let region = space.mesh.tet_region[t] as usize;
            match thermal.get(region).copied().flatten() {
                Some(th) if region > 0 => {
                    temperature_rise(heating[t], seconds, th.density, th.specific_heat)
                }
                _ => 0.0,
            }
        })
        .collect()
}
