//! `modes.csv`: one line per mode. Per-port columns are suffixed with the port name,
//! per-load columns with the load name; infinite Q is written `inf`.

use super::summary::ModeRow;
use anyhow::{Context, Result};
use std::fmt::Write as _;
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

/// A name usable inside a CSV header (commas, quotes and spaces replaced).
fn col(name: &str) -> String {
    name.chars()
        .map(|c| if c.is_alphanumeric() { c } else { '_' })
        .collect()
}

pub fn write(path: &Path, rows: &[ModeRow], ports: &[String], loads: &[String]) -> Result<()> {
    let mut s = String::from(
        "index,frequency_ghz,frequency_imag_ghz,delta_mhz,residual,divergence,in_band,\
         q_eigen,q_loaded,q_unloaded,q_dielectric,q_walls,bandwidth_mhz,q_balance,q_check_relative",
    );
    for p in ports {
        let p = col(p);
        let _ = write!(
            s,
            ",q_ext_{p},coupling_{p},reflection_{p},load_power_fraction_{p}"
        );
    }
    for l in loads {
        let _ = write!(s, ",load_energy_fraction_{}", col(l));
    }
    s.push('\n');
    for r in rows {
        let _ = write!(
            s,
            "{},{:.9},{},{:.4},{:.3e},{:.3e},{},{},{},{},{},{},{},{},{}",
            r.index,
            r.frequency_ghz,
            num(r.frequency_imag_ghz),
            r.delta_mhz,
            r.residual,
            r.divergence,
            r.in_band,
            num(r.q_eigen),
            num(r.q_loaded),
            num(r.q_unloaded),
            num(r.q_dielectric),
            num(r.q_walls),
            num(r.bandwidth_mhz),
            num(r.q_balance),
            r.q_check_relative.map(num).unwrap_or_default()
        );
        for p in 0..ports.len() {
            let g = |v: &[f64]| v.get(p).copied().map(num).unwrap_or_default();
            let _ = write!(
                s,
                ",{},{},{},{}",
                g(&r.q_ports),
                g(&r.coupling),
                g(&r.reflection),
                g(&r.load_power_fraction)
            );
        }
        for l in loads {
            let v = r
                .load_energy_fraction
                .get(l)
                .copied()
                .map(num)
                .unwrap_or_default();
            let _ = write!(s, ",{v}");
        }
        s.push('\n');
    }
    std::fs::write(path, s).with_context(|| format!("cannot write {}", path.display()))
}
