//! Per-mode rows and the band summary shared by the table, JSON and CSV outputs.

use crate::units::C0;
use serde::Serialize;

/// Modes whose frequencies differ by at most this fraction count as one group.
pub const GROUP_TOLERANCE: f64 = 1e-4;

/// One row of the mode list.
#[derive(Clone, Debug, Serialize)]
pub struct ModeRow {
    pub index: usize,
    pub frequency_ghz: f64,
    pub delta_mhz: f64,
    pub residual: f64,
    pub divergence: f64,
    pub in_band: bool,
}

/// Weyl's-law estimate of the number of modes in a band.
#[derive(Clone, Debug, Serialize)]
pub struct WeylEstimate {
    /// Estimated number of modes between the band edges (smoothed count, not an integer).
    pub modes: f64,
    /// Which formula was used.
    pub formula: String,
    /// Volume entering the formula, m³.
    pub volume_m3: f64,
    pub source: String,
}

/// Summary of the modes inside the band.
#[derive(Clone, Debug, Serialize)]
pub struct BandSummary {
    pub band_ghz: [f64; 2],
    /// Where the band came from ("--band", "geometry file", or the ISM default).
    pub band_from: String,
    pub modes_in_band: usize,
    /// True when the solve searched far enough around the target that no mode inside
    /// the band can have been missed.
    pub complete: bool,
    pub weyl_estimate: WeylEstimate,
    pub distinct_frequencies: usize,
    pub group_tolerance_relative: f64,
    /// Mean spacing between adjacent distinct frequencies in the band, MHz (None with
    /// fewer than two).
    pub mean_spacing_mhz: Option<f64>,
}

/// Smoothed mode count below `f_hz` (Weyl's law).
///
/// N(f) ≈ 8πV f³/(3c³) for any cavity; for an empty box with sides a, b, c the
/// next terms give N(f) = 8πV f³/(3c³) − (a + b + c) f/c + 1/2. Source: Weyl's law
/// with its boundary terms, e.g. Balian & Bloch, Ann. Phys. 64 (1971) 271 (from memory).
/// With loads, V is the optical volume Σ V_i (ε′_i μr_i)^{3/2}, since the local density
/// of modes scales with the cube of the local refractive index.
pub fn weyl_count(f_hz: f64, volume_m3: f64, box_edges_m: Option<f64>) -> f64 {
    let lead = 8.0 * std::f64::consts::PI * volume_m3 * f_hz.powi(3) / (3.0 * C0.powi(3));
    match box_edges_m {
        Some(sum) => lead - sum * f_hz / C0 + 0.5,
        None => lead,
    }
}

/// Number of distinct frequencies (groups within [`GROUP_TOLERANCE`]) among sorted
/// frequencies, and the group frequencies (means of their members).
pub fn groups(sorted_hz: &[f64]) -> Vec<f64> {
    let mut out: Vec<(f64, usize)> = Vec::new();
    let mut last = f64::NAN;
    for &f in sorted_hz {
        match out.last_mut() {
            Some((sum, n)) if (f - last).abs() <= GROUP_TOLERANCE * last.abs() => {
                *sum += f;
                *n += 1;
            }
            _ => out.push((f, 1)),
        }
        last = f;
    }
    out.into_iter().map(|(s, n)| s / n as f64).collect()
}
