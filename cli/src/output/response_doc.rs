//! `response.json` and `response.csv`: the driven response of `antinode drive`.
//!
//! JSON keys scripts rely on (issue 13): `ports`, `frequencies_ghz`, `s` (per frequency,
//! [out][in] of [re, im]), `power` (per frequency: `reflected`, `walls`, `loads` {name:
//! fraction of the total forward power}), `at` (per field frequency: `frequency_ghz`,
//! `absorbed_w` {load: W}, `walls_w`, `reflected_w`, `uniformity` {load: {`cov`,
//! `max_over_mean`, `min_over_mean`, `hot_fraction`, `cold_fraction`}},
//! `temperature_rise_k` {load: mean ΔT} with `--time`). Everything else is extra.

use anyhow::{Context, Result};
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::Path;

/// Where the forward power goes at one frequency, as fractions of the total forward
/// power.
#[derive(Clone, Debug, Serialize)]
pub struct PowerFractions {
    /// Σ over ports of the outgoing power.
    pub reflected: f64,
    /// Per port.
    pub reflected_by_port: BTreeMap<String, f64>,
    pub walls: f64,
    pub loads: BTreeMap<String, f64>,
    /// 1 − reflected − walls − loads (zero for the discrete model: a check).
    pub balance_error: f64,
}

/// Uniformity figures of one load.
#[derive(Clone, Debug, Serialize)]
pub struct UniformityDoc {
    pub cov: f64,
    pub max_over_mean: f64,
    pub min_over_mean: f64,
    pub hot_fraction: f64,
    pub cold_fraction: f64,
    /// Volume-weighted mean density, W/m³.
    pub mean_w_per_m3: f64,
}

/// Temperature figures of one load.
#[derive(Clone, Debug, Serialize)]
pub struct TemperatureDoc {
    pub mean_rise_k: f64,
    pub max_rise_k: f64,
    pub mass_kg: f64,
    /// m c_p ΔT̄ / t: what a calorimetric power test of this load would read (equal to
    /// the absorbed power in this model: no conduction, no losses to the surroundings).
    pub calorimetric_power_w: f64,
}

/// Powers and heating figures of one field (single frequency or spectrum average).
#[derive(Clone, Debug, Serialize)]
pub struct FieldDoc {
    pub forward_w: f64,
    pub absorbed_w: BTreeMap<String, f64>,
    pub walls_w: f64,
    pub reflected_w: f64,
    pub reflected_w_by_port: BTreeMap<String, f64>,
    pub uniformity: BTreeMap<String, UniformityDoc>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature_rise_k: Option<BTreeMap<String, f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature: Option<BTreeMap<String, TemperatureDoc>>,
}

/// One field frequency.
#[derive(Clone, Debug, Serialize)]
pub struct AtDoc {
    pub frequency_ghz: f64,
    /// The VTU file with this field.
    pub file: String,
    /// S from the direct solve at this frequency, [out][in] of [re, im].
    pub s: Vec<Vec<[f64; 2]>>,
    /// max |S_sweep − S_direct| here.
    pub sweep_vs_direct: f64,
    #[serde(flatten)]
    pub field: FieldDoc,
    /// With `--spread`: the same figures averaged over the source spectrum.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spread: Option<SpreadDoc>,
}

/// Averages over a source spectrum.
#[derive(Clone, Debug, Serialize)]
pub struct SpreadDoc {
    pub width_mhz: f64,
    pub weighting: String,
    pub samples_ghz: Vec<f64>,
    #[serde(flatten)]
    pub field: FieldDoc,
}

/// How the sweep went.
#[derive(Clone, Debug, Serialize)]
pub struct SweepDoc {
    pub method: String,
    pub expansion_points_ghz: Vec<f64>,
    pub krylov_blocks: Vec<usize>,
    pub basis: usize,
    pub converged: bool,
    pub tolerance_s: f64,
    pub tolerance_residual: f64,
    pub max_change_s: f64,
    pub max_residual: f64,
    pub factor_s: f64,
    pub krylov_s: f64,
    pub check_s: f64,
    pub factor_entries: usize,
}

/// The whole document.
#[derive(Clone, Debug, Serialize)]
pub struct ResponseDoc {
    pub geometry: String,
    pub title: String,
    pub order: u8,
    pub unknowns: usize,
    pub band_ghz: [f64; 2],
    pub ports: Vec<String>,
    pub loads: Vec<String>,
    /// Incident power per port (W) and phase (degrees).
    pub drive_w: BTreeMap<String, f64>,
    pub drive_phase_deg: BTreeMap<String, f64>,
    pub wall_conductivity: Option<f64>,
    pub conventions: String,
    pub frequencies_ghz: Vec<f64>,
    pub s: Vec<Vec<Vec<[f64; 2]>>>,
    pub power: Vec<PowerFractions>,
    pub at: Vec<AtDoc>,
    pub sweep: SweepDoc,
    pub mesh_s: f64,
    pub total_s: f64,
    pub safety: String,
}

pub fn write_json(path: &Path, doc: &ResponseDoc) -> Result<()> {
    let mut text = serde_json::to_string_pretty(doc).context("encoding the response as JSON")?;
    text.push('\n');
    super::folder::write_atomic(path, text)
}

/// `response.csv`: one line per frequency: S entries as re, im and dB (20 log10 |S|),
/// then the power fractions (reflected, walls, each load).
pub fn write_csv(path: &Path, doc: &ResponseDoc) -> Result<()> {
    let mut w =
        csv::Writer::from_path(path).with_context(|| format!("cannot write {}", path.display()))?;
    let mut header = vec!["frequency_ghz".to_string()];
    for q in &doc.ports {
        for p in &doc.ports {
            for part in ["re", "im", "db"] {
                header.push(format!("s_{q}_{p}_{part}"));
            }
        }
    }
    header.push("reflected".into());
    header.push("walls".into());
    for l in &doc.loads {
        header.push(format!("load_{l}"));
    }
    w.write_record(&header)?;
    for (i, f) in doc.frequencies_ghz.iter().enumerate() {
        let mut rec = vec![format!("{f:.9}")];
        for row in &doc.s[i] {
            for &[re, im] in row {
                rec.push(format!("{re:.9e}"));
                rec.push(format!("{im:.9e}"));
                rec.push(format!("{:.6}", 20.0 * re.hypot(im).log10()));
            }
        }
        let p = &doc.power[i];
        rec.push(format!("{:.9e}", p.reflected));
        rec.push(format!("{:.9e}", p.walls));
        for l in &doc.loads {
            rec.push(format!("{:.9e}", p.loads.get(l).copied().unwrap_or(0.0)));
        }
        w.write_record(&rec)?;
    }
    w.flush()
        .with_context(|| format!("cannot write {}", path.display()))
}
