//! `modes.csv`: one line per mode, written with the `csv` crate (RFC 4180 quoting).
//! Per-port columns end in `_<port name>`, per-load columns in `_<load name>`, with the
//! names as written in the geometry file (a name with a comma or quote is quoted, not
//! altered); infinite Q is written `inf`.

use super::summary::ModeRow;
use anyhow::{Context, Result};
use std::path::Path;

fn num(v: f64) -> String {
    if v.is_finite() {
        format!("{v:.6e}")
    } else if v > 0.0 {
        "inf".into()
    } else {
        "nan".into()
    }
}

/// Columns every file has, in order.
const FIXED_COLUMNS: [&str; 15] = [
    "index",
    "frequency_ghz",
    "frequency_imag_ghz",
    "delta_mhz",
    "residual",
    "divergence",
    "in_band",
    "q_eigen",
    "q_loaded",
    "q_unloaded",
    "q_dielectric",
    "q_walls",
    "bandwidth_mhz",
    "q_balance",
    "q_check_relative",
];

/// The header: the fixed columns, four per port, one per load.
fn header(ports: &[String], loads: &[String]) -> Vec<String> {
    let mut h: Vec<String> = FIXED_COLUMNS.iter().map(|c| c.to_string()).collect();
    for p in ports {
        for c in ["q_ext", "coupling", "reflection", "load_power_fraction"] {
            h.push(format!("{c}_{p}"));
        }
    }
    for l in loads {
        h.push(format!("load_energy_fraction_{l}"));
    }
    h
}

/// One record in header order.
fn record(r: &ModeRow, ports: usize, loads: &[String]) -> Vec<String> {
    let mut v = vec![
        r.index.to_string(),
        format!("{:.9}", r.frequency_ghz),
        num(r.frequency_imag_ghz),
        format!("{:.4}", r.delta_mhz),
        format!("{:.3e}", r.residual),
        format!("{:.3e}", r.divergence),
        r.in_band.to_string(),
        num(r.q_eigen),
        num(r.q_loaded),
        num(r.q_unloaded),
        num(r.q_dielectric),
        num(r.q_walls),
        num(r.bandwidth_mhz),
        num(r.q_balance),
        r.q_check_relative.map(num).unwrap_or_default(),
    ];
    for p in 0..ports {
        let g = |x: &[f64]| x.get(p).copied().map(num).unwrap_or_default();
        v.extend([
            g(&r.q_ports),
            g(&r.coupling),
            g(&r.reflection),
            g(&r.load_power_fraction),
        ]);
    }
    for l in loads {
        v.push(
            r.load_energy_fraction
                .get(l)
                .copied()
                .map(num)
                .unwrap_or_default(),
        );
    }
    v
}

/// The whole file as text.
fn to_string(rows: &[ModeRow], ports: &[String], loads: &[String]) -> Result<String> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(header(ports, loads))?;
    for r in rows {
        w.write_record(record(r, ports.len(), loads))?;
    }
    let bytes = w.into_inner().context("finishing the CSV text")?;
    String::from_utf8(bytes).context("CSV text is not UTF-8")
}

pub fn write(path: &Path, rows: &[ModeRow], ports: &[String], loads: &[String]) -> Result<()> {
    let text = to_string(rows, ports, loads)?;
    super::folder::write_atomic(path, text)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A port name with a comma and a quote survives a round trip through a CSV reader
    /// (RFC 4180 quoting: the field in double quotes, inner quotes doubled), and every
    /// record has as many fields as the header.
    #[test]
    fn names_with_commas_and_quotes_round_trip() {
        let ports = vec!["feed, \"left\"".to_string()];
        let loads = vec!["water".to_string()];
        let row = ModeRow {
            index: 1,
            frequency_ghz: 2.45,
            frequency_imag_ghz: 0.0,
            delta_mhz: 0.0,
            residual: 1e-12,
            divergence: 1e-12,
            in_band: true,
            q_eigen: f64::INFINITY,
            q_loaded: 100.0,
            q_unloaded: 200.0,
            q_dielectric: 200.0,
            q_walls: f64::INFINITY,
            q_ports: vec![200.0],
            coupling: vec![1.0],
            reflection: vec![0.0],
            load_power_fraction: vec![1.0],
            load_energy_fraction: [("water".to_string(), 0.5)].into_iter().collect(),
            bandwidth_mhz: 24.5,
            q_balance: 100.0,
            q_check_relative: None,
        };
        let text = to_string(&[row], &ports, &loads).expect("csv");
        let mut rd = csv::Reader::from_reader(text.as_bytes());
        let head = rd.headers().expect("header").clone();
        assert_eq!(head.len(), FIXED_COLUMNS.len() + 4 + 1);
        assert_eq!(&head[FIXED_COLUMNS.len()], "q_ext_feed, \"left\"");
        let recs: Vec<csv::StringRecord> = rd.records().map(|r| r.expect("record")).collect();
        assert_eq!(recs.len(), 1);
        assert_eq!(recs[0].len(), head.len());
        assert_eq!(&recs[0][7], "inf");
    }
}
