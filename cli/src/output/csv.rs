//! `modes.csv`: one line per mode.

use super::summary::ModeRow;
use anyhow::{Context, Result};
use std::fmt::Write as _;
use std::path::Path;

pub fn write(path: &Path, rows: &[ModeRow]) -> Result<()> {
    let mut s = String::from("index,frequency_ghz,delta_mhz,residual,divergence,in_band\n");
    for r in rows {
        let _ = writeln!(
            s,
            "{},{:.9},{:.4},{:.3e},{:.3e},{}",
            r.index, r.frequency_ghz, r.delta_mhz, r.residual, r.divergence, r.in_band
        );
    }
    std::fs::write(path, s).with_context(|| format!("cannot write {}", path.display()))
}
