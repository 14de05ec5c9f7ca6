//! `modes.json`: the whole result of `antinode modes` as one JSON document.

use super::summary::{BandSummary, ModeRow};
use crate::budget::Estimate;
use anyhow::{Context, Result};
use serde::Serialize;
use std::path::Path;

/// Figures of the solve (measured, except `memory_estimate`).
#[derive(Clone, Debug, Serialize)]
pub struct SolveFigures {
    pub nodes: usize,
    pub tets: usize,
    pub matrix_nnz: usize,
    pub factor_nnz: usize,
    pub mesh_s: f64,
    pub assembly_s: f64,
    pub factor_s: f64,
    pub eigen_s: f64,
    pub operator_applications: usize,
    pub restarts: usize,
    pub spurious_dropped: usize,
    /// The estimate made before assembly (see `budget.rs` for its basis).
    pub memory_estimate: Estimate,
}

/// The document written to `modes.json` (and printed by `--format json`).
#[derive(Clone, Debug, Serialize)]
pub struct ModesDoc {
    pub geometry: String,
    pub title: String,
    pub target_ghz: f64,
    /// Band used for the in-band flags and the summary, GHz.
    pub band_ghz: [f64; 2],
    pub order: u8,
    pub unknowns: usize,
    /// Scaling of the written fields.
    pub field_scaling: String,
    pub modes: Vec<ModeRow>,
    pub band_summary: BandSummary,
    pub solve: SolveFigures,
}

pub fn to_string(doc: &ModesDoc) -> Result<String> {
    serde_json::to_string_pretty(doc).context("encoding the results as JSON")
}

pub fn write(path: &Path, doc: &ModesDoc) -> Result<()> {
    let mut text = to_string(doc)?;
    text.push('\n');
    std::fs::write(path, text).with_context(|| format!("cannot write {}", path.display()))
}
