//! `modes.json`: the whole result of `antinode modes` as one JSON document.
//!
//! Infinite quality factors are written as `null` (JSON has no infinity).

use super::review::{AccuracyFigures, WarningDoc};
use super::summary::{BandSummary, ModeRow};
use anyhow::{Context, Result};
use serde::Serialize;
use std::path::Path;

/// Size of the solve as planned before assembly (`antinode_solver::budget::plan_counted`).
#[derive(Clone, Debug, Serialize)]
pub struct PlanFigures {
    /// Free unknowns counted before assembly (before the port constraints).
    pub unknowns: usize,
    /// Whether losses or ports make the problem complex (complex symmetric LDLᵀ).
    pub complex: bool,
    /// Entries of the sparse factor, counted by the symbolic factorisation of the
    /// unknowns before the port constraint (`budget::plan_counted`; the solve's own count,
    /// after the constraint, is `factor_nnz`).
    pub factor_entries_estimate: f64,
    /// Estimated peak memory, bytes.
    pub memory_estimate_bytes: f64,
    /// MemAvailable from /proc/meminfo when the run started, bytes (None if unreadable).
    pub memory_available_bytes: Option<f64>,
}

/// How the mesh size was chosen.
#[derive(Clone, Debug, Serialize)]
pub struct MeshSizeFigures {
    /// "automatic" (no per_wavelength given: the order's default, relaxed to fit the
    /// memory when needed) or "given" (file or command line; also sweeps, imports and
    /// --allow-large).
    pub sizing: String,
    /// Elements per local wavelength the mesh was made with (None for an import).
    pub per_wavelength: Option<f64>,
    /// The order's default the automatic size started from.
    pub default_per_wavelength: Option<f64>,
    /// The meshes the automatic size tried, in order.
    pub tried: Vec<SizeAttemptFigures>,
}

/// One mesh the automatic size tried.
#[derive(Clone, Debug, Serialize)]
pub struct SizeAttemptFigures {
    pub per_wavelength: f64,
    pub tets: usize,
    pub unknowns: usize,
    /// Planned peak memory, bytes: counted, or a lower bound when `counted` is false.
    pub memory_bytes: f64,
    pub counted: bool,
}

/// Figures of the solve (measured, except the `plan`).
#[derive(Clone, Debug, Serialize)]
pub struct SolveFigures {
    pub mesh_size: MeshSizeFigures,
    pub nodes: usize,
    pub tets: usize,
    /// Whether the complex (lossy or fed) path was used.
    pub complex: bool,
    pub matrix_nnz: usize,
    pub factor_nnz: usize,
    pub mesh_s: f64,
    pub assembly_s: f64,
    pub factor_s: f64,
    pub eigen_s: f64,
    pub operator_applications: usize,
    pub restarts: usize,
    pub spurious_dropped: usize,
    /// "double" or "single" (single: every solve refined in double, see `refinement`).
    pub factor_precision: String,
    /// Why: the option given, or what `auto` compared.
    pub factor_precision_reason: String,
    /// Counts of the single-precision solves (null in double).
    pub refinement: Option<RefinementFigures>,
    pub plan: PlanFigures,
}

/// The mixed-precision solves of a run: right-hand sides solved, refinement steps and
/// GMRES iterations summed over them, and the residual reached.
#[derive(Clone, Debug, Serialize)]
pub struct RefinementFigures {
    /// The relative residual ‖b − A x‖/‖b‖ every solve is refined to.
    pub tolerance: f64,
    pub columns: usize,
    pub refinement_steps: usize,
    pub gmres_columns: usize,
    pub gmres_iterations: usize,
    /// Solves that missed the tolerance even after GMRES.
    pub unconverged: usize,
    pub worst_residual: f64,
}

/// One mesh region: its id in the `.vtu` files (`region` cell data) and its material
/// constants at the target frequency.
#[derive(Clone, Debug, Serialize)]
pub struct RegionInfo {
    pub id: u32,
    /// "air" or the load's name.
    pub name: String,
    pub eps_real: f64,
    /// ε″ (loss factor); heating is (ω ε0 ε″ / 2)|E|².
    pub eps_imag: f64,
    pub mu_r: f64,
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
    /// Unknowns of the eigenproblem (after the port constraints).
    pub unknowns: usize,
    /// Port names, in the order of the per-port arrays (`q_ext`, `coupling`, …).
    pub ports: Vec<String>,
    /// Region ids of the `.vtu` files with their names and materials.
    pub regions: Vec<RegionInfo>,
    /// Wall conductivity, S/m (None: perfect conductor, no wall loss).
    pub wall_conductivity: Option<f64>,
    /// How the finite conductivity entered: "impedance" (a surface-impedance wall term in
    /// the solve) or "perturbation" (after a solve with perfectly conducting walls); None
    /// with PEC walls.
    pub wall_losses: Option<String>,
    /// Scaling of the written fields.
    pub field_scaling: String,
    /// How infinite values are written.
    pub infinite_q: String,
    pub modes: Vec<ModeRow>,
    pub band_summary: BandSummary,
    pub solve: SolveFigures,
    /// The run's expected frequency accuracy (estimate, with its basis).
    pub accuracy: AccuracyFigures,
    /// Reasons to distrust this run's figures (empty when none).
    pub warnings: Vec<WarningDoc>,
}

pub fn to_string(doc: &ModesDoc) -> Result<String> {
    serde_json::to_string_pretty(doc).context("encoding the results as JSON")
}

pub fn write(path: &Path, doc: &ModesDoc) -> Result<()> {
    let mut text = to_string(doc)?;
    text.push('\n');
    super::folder::write_atomic(path, text)
}
