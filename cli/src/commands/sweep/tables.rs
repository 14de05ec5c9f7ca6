//! The sweep's tables: one row per mode and one per drive frequency, the parameter
//! values as columns, read from each variant's `modes.json` and `response.json`, and
//! written as `sweep.csv` and `sweep.json`.

use anyhow::{Context, Result};
use serde::Serialize;
use serde_json::Value;
use std::path::Path;

/// One mode of one variant.
#[derive(Clone, Debug, Serialize)]
pub struct ModeLine {
    pub variant: usize,
    pub values: Vec<String>,
    /// Track id (0-based; the same id in neighbouring variants is the same mode).
    pub track: usize,
    /// Overlap (MAC or subspace overlap) that continued the track; null where it starts.
    pub track_overlap: Option<f64>,
    /// Mode number within the variant (1-based, as in its modes.json).
    pub mode: usize,
    pub frequency_ghz: f64,
    /// Null for an infinite Q.
    pub q_loaded: Option<f64>,
    pub q_unloaded: Option<f64>,
    pub in_band: bool,
    /// |Γ| at resonance seen from the first port (null without ports).
    pub reflection_port1: Option<f64>,
}

/// One frequency of one variant's driven response.
#[derive(Clone, Debug, Serialize)]
pub struct DriveLine {
    pub variant: usize,
    pub values: Vec<String>,
    pub frequency_ghz: f64,
    /// |S11| (first port), from the swept model.
    pub s11_abs: f64,
    /// Share of the total forward power absorbed in all loads.
    pub absorbed_fraction: f64,
    pub walls_fraction: f64,
}

/// The drive figures at the operating (first field) frequency of one variant.
#[derive(Clone, Debug, Serialize)]
pub struct AtLine {
    pub variant: usize,
    pub frequency_ghz: f64,
    pub s11_abs: f64,
    pub absorbed_fraction: f64,
}

pub fn read_json(path: &Path) -> Result<Value> {
    let text =
        std::fs::read_to_string(path).with_context(|| format!("cannot read {}", path.display()))?;
    serde_json::from_str(&text).with_context(|| format!("{} is not valid JSON", path.display()))
}

fn num(v: &Value) -> Option<f64> {
    v.as_f64()
}

fn abs_pair(v: &Value) -> Option<f64> {
    Some(num(&v[0])?.hypot(num(&v[1])?))
}

/// The modes of a `modes.json` document: (frequency, Q_L, Q0, in band, |Γ| port 1).
pub type ModeFigures = (f64, Option<f64>, Option<f64>, bool, Option<f64>);

pub fn mode_figures(doc: &Value) -> Vec<ModeFigures> {
    doc["modes"]
        .as_array()
        .map(|a| {
            a.iter()
                .map(|m| {
                    (
                        num(&m["frequency_ghz"]).unwrap_or(f64::NAN),
                        num(&m["q_loaded"]),
                        num(&m["q_unloaded"]),
                        m["in_band"].as_bool().unwrap_or(false),
                        num(&m["reflection"][0]),
                    )
                })
                .collect()
        })
        .unwrap_or_default()
}

/// Per-frequency rows and the operating-frequency figures of a `response.json`.
pub fn drive_lines(
    doc: &Value,
    variant: usize,
    values: &[String],
) -> (Vec<DriveLine>, Option<AtLine>) {
    let freqs = doc["frequencies_ghz"]
        .as_array()
        .cloned()
        .unwrap_or_default();
    let sum_loads = |p: &Value| -> f64 {
        p["loads"]
            .as_object()
            .map(|o| o.values().filter_map(num).sum())
            .unwrap_or(0.0)
    };
    let lines = freqs
        .iter()
        .enumerate()
        .map(|(i, f)| {
            let p = &doc["power"][i];
            DriveLine {
                variant,
                values: values.to_vec(),
                frequency_ghz: num(f).unwrap_or(f64::NAN),
                s11_abs: abs_pair(&doc["s"][i][0][0]).unwrap_or(f64::NAN),
                absorbed_fraction: sum_loads(p),
                walls_fraction: num(&p["walls"]).unwrap_or(f64::NAN),
            }
        })
        .collect();
    let at = &doc["at"][0];
    let at_line = (|| {
        let fw = num(&at["forward_w"])?;
        let absorbed: f64 = at["absorbed_w"].as_object()?.values().filter_map(num).sum();
        Some(AtLine {
            variant,
            frequency_ghz: num(&at["frequency_ghz"])?,
            s11_abs: abs_pair(&at["s"][0][0])?,
            absorbed_fraction: absorbed / fw,
        })
    })();
    (lines, at_line)
}

/// The figures at every field (`--at`) frequency of a `response.json`.
pub fn at_lines(doc: &Value, variant: usize) -> Vec<AtLine> {
    doc["at"]
        .as_array()
        .map(|a| {
            a.iter()
                .filter_map(|at| {
                    let fw = num(&at["forward_w"])?;
                    let absorbed: f64 =
                        at["absorbed_w"].as_object()?.values().filter_map(num).sum();
                    Some(AtLine {
                        variant,
                        frequency_ghz: num(&at["frequency_ghz"])?,
                        s11_abs: abs_pair(&at["s"][0][0])?,
                        absorbed_fraction: absorbed / fw,
                    })
                })
                .collect()
        })
        .unwrap_or_default()
}

fn opt(v: Option<f64>) -> String {
    v.map(|x| x.to_string()).unwrap_or_default()
}

/// `sweep.csv`: a `kind` column ("mode" or "frequency"), the variant, one column per
/// parameter, then the mode columns and the frequency columns (empty where they do not
/// apply).
pub fn write_csv(
    path: &Path,
    keys: &[String],
    modes: &[ModeLine],
    drive: &[DriveLine],
) -> Result<()> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut head: Vec<String> = vec!["kind".into(), "variant".into()];
    head.extend(keys.iter().cloned());
    head.extend(
        [
            "track",
            "track_overlap",
            "mode",
            "frequency_ghz",
            "q_loaded",
            "q_unloaded",
            "in_band",
            "reflection_port1",
            "s11_abs",
            "absorbed_fraction",
            "walls_fraction",
        ]
        .map(String::from),
    );
    w.write_record(&head)?;
    for m in modes {
        let mut r = vec!["mode".to_string(), m.variant.to_string()];
        r.extend(m.values.iter().cloned());
        r.extend([
            m.track.to_string(),
            opt(m.track_overlap),
            m.mode.to_string(),
            m.frequency_ghz.to_string(),
            opt(m.q_loaded),
            opt(m.q_unloaded),
            m.in_band.to_string(),
            opt(m.reflection_port1),
            String::new(),
            String::new(),
            String::new(),
        ]);
        w.write_record(&r)?;
    }
    for d in drive {
        let mut r = vec!["frequency".to_string(), d.variant.to_string()];
        r.extend(d.values.iter().cloned());
        r.extend(std::iter::repeat_n(String::new(), 3));
        r.push(d.frequency_ghz.to_string());
        r.extend(std::iter::repeat_n(String::new(), 4));
        r.extend([
            d.s11_abs.to_string(),
            d.absorbed_fraction.to_string(),
            d.walls_fraction.to_string(),
        ]);
        w.write_record(&r)?;
    }
    let bytes = w.into_inner().map_err(|e| anyhow::anyhow!("{e}"))?;
    write_atomic(path, &bytes)
}

/// Writes to `path.tmp` and renames, so a reader never sees half a table.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let tmp = path.with_extension("tmp");
    std::fs::write(&tmp, bytes).with_context(|| format!("cannot write {}", tmp.display()))?;
    std::fs::rename(&tmp, path).with_context(|| format!("cannot write {}", path.display()))
}
