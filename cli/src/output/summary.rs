//! Per-mode rows and the band summary shared by the table, JSON and CSV outputs.
//!
//! Infinite quality factors (a loss the model does not have, e.g. PEC walls or no port)
//! are written as JSON `null`, as `inf` in CSV and as `∞` in the table.

use crate::units::C0;
use serde::{Serialize, Serializer};
use std::collections::BTreeMap;

/// Modes whose frequencies differ by at most this fraction count as one group.
pub const GROUP_TOLERANCE: f64 = 1e-4;

/// Reflection at resonance at or below which the feed is said to couple well
/// (|Γ| = 0.5 ↔ 75 % of the forward power enters the cavity; common practice, no source).
pub const GOOD_COUPLING_REFLECTION: f64 = 0.5;

/// `null` for a non-finite number.
pub fn finite_or_null<S: Serializer>(v: &f64, s: S) -> Result<S::Ok, S::Error> {
    if v.is_finite() {
        s.serialize_f64(*v)
    } else {
        s.serialize_none()
    }
}

/// A list with `null` for each non-finite entry.
pub fn finite_list<S: Serializer>(v: &[f64], s: S) -> Result<S::Ok, S::Error> {
    let items: Vec<Option<f64>> = v.iter().map(|x| x.is_finite().then_some(*x)).collect();
    items.serialize(s)
}

/// One row of the mode list.
#[derive(Clone, Debug, Serialize)]
pub struct ModeRow {
    pub index: usize,
    /// Re f, GHz.
    pub frequency_ghz: f64,
    /// Im f, GHz (decay rate / 2π; 0 for a lossless mode).
    pub frequency_imag_ghz: f64,
    pub delta_mhz: f64,
    pub residual: f64,
    pub divergence: f64,
    pub in_band: bool,
    /// Q from the complex eigenvalue, Re f / (2 Im f): loads and ports (walls not included).
    #[serde(serialize_with = "finite_or_null")]
    pub q_eigen: f64,
    /// Loaded Q: 1/Q_L = 1/Q_d + 1/Q_c + Σ 1/Q_ext.
    #[serde(serialize_with = "finite_or_null")]
    pub q_loaded: f64,
    /// Unloaded Q: 1/Q0 = 1/Q_d + 1/Q_c.
    #[serde(serialize_with = "finite_or_null")]
    pub q_unloaded: f64,
    /// Q of the loads' dielectric loss.
    #[serde(serialize_with = "finite_or_null")]
    pub q_dielectric: f64,
    /// Q of the wall loss (surface-resistance perturbation).
    #[serde(serialize_with = "finite_or_null")]
    pub q_walls: f64,
    /// External Q of each port (port order).
    #[serde(serialize_with = "finite_list")]
    pub q_ports: Vec<f64>,
    /// Coupling κ = Q0/Q_ext of each port (other ports counted as losses).
    #[serde(serialize_with = "finite_list")]
    pub coupling: Vec<f64>,
    /// |Γ| at resonance seen from each port.
    pub reflection: Vec<f64>,
    /// Share of each port's forward power absorbed in the loads at resonance.
    pub load_power_fraction: Vec<f64>,
    /// Share of the stored electric energy inside each load (load name → fraction).
    pub load_energy_fraction: BTreeMap<String, f64>,
    /// Bandwidth f/Q_L, MHz (0 when Q_L is infinite).
    pub bandwidth_mhz: f64,
    /// Consistency check: Q from power balance without walls, 1/Q = 1/Q_d + Σ 1/Q_ext,
    /// which the complex eigenvalue must reproduce (walls enter by perturbation only).
    #[serde(serialize_with = "finite_or_null")]
    pub q_balance: f64,
    /// q_eigen / q_balance − 1 (null when both are infinite).
    pub q_check_relative: Option<f64>,
}

/// q_eigen / q_balance − 1 when either is finite (both infinite: nothing to check).
pub fn q_check(q_eigen: f64, q_balance: f64) -> Option<f64> {
    match (q_eigen.is_finite(), q_balance.is_finite()) {
        (false, false) => None,
        (true, true) => Some(q_eigen / q_balance - 1.0),
        _ => Some(f64::INFINITY),
    }
}

/// Q from 1/Q = Σ 1/Q_i (infinite terms contribute nothing).
pub fn combine_q(parts: &[f64]) -> f64 {
    let inv: f64 = parts
        .iter()
        .filter(|q| q.is_finite() && **q > 0.0)
        .map(|q| 1.0 / q)
        .sum();
    if inv > 0.0 {
        1.0 / inv
    } else {
        f64::INFINITY
    }
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

/// A mode in the band whose feed reflection at resonance is at most the threshold.
#[derive(Clone, Debug, Serialize)]
pub struct GoodCoupling {
    pub index: usize,
    pub frequency_ghz: f64,
    pub port: String,
    pub reflection: f64,
    pub load_power_fraction: f64,
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
    /// The listing is complete for modes whose Q from loads and ports is at least this
    /// (modes more damped may lie outside the search disc; null when incomplete).
    pub complete_above_q: Option<f64>,
    pub weyl_estimate: WeylEstimate,
    pub distinct_frequencies: usize,
    pub group_tolerance_relative: f64,
    /// Mean spacing between adjacent distinct frequencies in the band, MHz (None with
    /// fewer than two).
    pub mean_spacing_mhz: Option<f64>,
    /// Modal overlap: mean, over the in-band modes with finite Q_L, of the number of
    /// other modes found within ±(f_i/Q_L,i)/2 of f_i (a window one bandwidth wide).
    /// None when no in-band mode has a finite Q_L.
    pub modal_overlap: Option<f64>,
    /// In-band modes with |Γ| ≤ `good_coupling_reflection` at some port.
    pub good_coupling: Vec<GoodCoupling>,
    pub good_coupling_reflection: f64,
    /// Largest |q_eigen / q_balance − 1| over the modes (None when all Q are infinite).
    pub q_check_max_relative: Option<f64>,
}

/// Modal overlap as defined in [`BandSummary::modal_overlap`]; `all` = (f, Q_L) of every
/// mode found, `in_band` = indices into `all`.
pub fn modal_overlap(all: &[(f64, f64)], in_band: &[usize]) -> Option<f64> {
    let counts: Vec<usize> = in_band
        .iter()
        .filter(|&&i| all[i].1.is_finite())
        .map(|&i| {
            let (f, q) = all[i];
            let half = 0.5 * f / q;
            all.iter()
                .enumerate()
                .filter(|&(j, &(g, _))| j != i && (g - f).abs() <= half)
                .count()
        })
        .collect();
    (!counts.is_empty()).then(|| counts.iter().sum::<usize>() as f64 / counts.len() as f64)
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Weyl's smoothed count against the exact mode count of an empty 300 × 300 × 200 mm
    /// box, whose modes are the analytic TE/TM_mnp (Pozar, Microwave Engineering, 4th ed.,
    /// §6.3: f = c/2·√((m/a)² + (n/b)² + (p/d)²), two polarisations when no index is 0,
    /// one when exactly one is). The exact staircase fluctuates about the smooth count
    /// with zero mean, so the mean difference over 400 frequencies in 5–10 GHz (where the
    /// box has ~1,000–5,600 modes) must be small: within 3 modes. The boundary term alone
    /// is worth ~20 modes on average there, so the check also pins its sign and size.
    #[test]
    fn weyl_count_follows_the_exact_box_count() {
        let (a, b, d) = (0.3, 0.3, 0.2);
        let f_max = 10.5e9;
        let mut exact = Vec::new();
        let lim = |len: f64| (2.0 * len * f_max / C0).ceil() as usize + 1;
        for m in 0..lim(a) {
            for n in 0..lim(b) {
                for p in 0..lim(d) {
                    let zeros = (m == 0) as u8 + (n == 0) as u8 + (p == 0) as u8;
                    if zeros > 1 {
                        continue;
                    }
                    let f = C0 / 2.0
                        * ((m as f64 / a).powi(2)
                            + (n as f64 / b).powi(2)
                            + (p as f64 / d).powi(2))
                        .sqrt();
                    if f <= f_max {
                        exact.extend(std::iter::repeat_n(f, if zeros == 0 { 2 } else { 1 }));
                    }
                }
            }
        }
        exact.sort_by(f64::total_cmp);
        let samples = 400;
        let mean_difference = (0..samples)
            .map(|i| {
                let f = 5e9 + 5e9 * (i as f64 + 0.5) / samples as f64;
                let n_exact = exact.partition_point(|&x| x <= f) as f64;
                n_exact - weyl_count(f, a * b * d, Some(a + b + d))
            })
            .sum::<f64>()
            / samples as f64;
        assert!(
            mean_difference.abs() <= 3.0,
            "mean exact − Weyl count over 5–10 GHz: {mean_difference:.2} modes"
        );
    }
}
