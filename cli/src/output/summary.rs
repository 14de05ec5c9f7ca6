//! Per-mode rows and the band summary shared by the table, JSON and CSV outputs.
//!
//! The figures themselves come from the solver (`antinode_solver::post::band`); this
//! module only shapes them for the documents and combines Q parts for display.
//!
//! Infinite quality factors (a loss the model does not have, e.g. PEC walls or no port)
//! are written as JSON `null`, as `inf` in CSV and as `∞` in the table.

use serde::{Serialize, Serializer};
use std::collections::BTreeMap;

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
    /// External Q of each port (port order). Written as `q_ext` in JSON, the same name
    /// as the CSV columns `q_ext_<port>` (one name per quantity in every document).
    #[serde(rename = "q_ext", serialize_with = "finite_list")]
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
    /// Consistency check: Q from the power balance, 1/Q = 1/Q_d + Σ 1/Q_ext (+ 1/Q_c with
    /// impedance walls, which are part of the eigenvalue), which the complex eigenvalue
    /// must reproduce (walls by perturbation are not in it).
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

impl From<&antinode_solver::post::band::WeylEstimate> for WeylEstimate {
    fn from(w: &antinode_solver::post::band::WeylEstimate) -> Self {
        Self {
            modes: w.modes,
            formula: w.formula.into(),
            volume_m3: w.volume_m3,
            source: w.source.into(),
        }
    }
}

/// Weyl's-law estimate of the number of modes in a band
/// (`antinode_solver::post::band::WeylEstimate`, for the documents).
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
    /// The listing is complete for modes whose Q from loads, ports and impedance walls (the
    /// eigenvalue's) is at least this
    /// (modes more damped may lie outside the search disc; null when incomplete).
    pub complete_above_q: Option<f64>,
    pub weyl_estimate: WeylEstimate,
    /// Weyl's leading term with the loads counted as air (null for an empty cavity).
    pub weyl_estimate_air_only: Option<WeylEstimate>,
    pub distinct_frequencies: usize,
    /// Relative tolerance the distinct frequencies were grouped with.
    pub group_tolerance_relative: f64,
    /// Where that tolerance comes from.
    pub group_tolerance_basis: String,
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
