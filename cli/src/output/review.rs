//! The solver's review of a run (`antinode_solver::post::warnings`) for the documents and
//! the terminal: the accuracy estimate and the warnings.

use antinode_solver::post::accuracy::AccuracyEstimate;
use antinode_solver::post::warnings::{RunReview, RunWarning};
use serde::Serialize;

/// Where the accuracy estimate comes from, for the documents.
pub const ACCURACY_BASIS: &str =
    "interpolated from the mesh-size study (box, loaded cavity and pillbox; order, \
    elements per local wavelength by mean edge length; README, Accuracy): an estimate for \
    well-shaped meshes and smooth fields, not a bound";

/// The run's expected frequency accuracy (`modes.json` `accuracy`).
#[derive(Clone, Debug, Serialize)]
pub struct AccuracyFigures {
    /// Smallest λ_local / mean edge length over the regions.
    pub elements_per_wavelength: f64,
    /// The region where that is ("air" or the load name).
    pub coarsest_region: String,
    /// Expected worst relative frequency error (null: no estimate for this order).
    pub expected_relative_error: Option<f64>,
    pub basis: &'static str,
}

/// One warning (`modes.json` `warnings[]`).
#[derive(Clone, Debug, Serialize)]
pub struct WarningDoc {
    pub kind: &'static str,
    pub message: String,
}

pub fn accuracy_figures(a: &AccuracyEstimate, region_names: &[String]) -> AccuracyFigures {
    AccuracyFigures {
        elements_per_wavelength: a.per_wavelength,
        coarsest_region: region_names
            .get(a.region)
            .cloned()
            .unwrap_or_else(|| format!("region {}", a.region)),
        expected_relative_error: a.relative_error,
        basis: ACCURACY_BASIS,
    }
}

pub fn warning_docs(review: &RunReview) -> Vec<WarningDoc> {
    review.warnings.iter().map(warning_doc).collect()
}

pub fn warning_doc(w: &RunWarning) -> WarningDoc {
    WarningDoc {
        kind: w.kind(),
        message: w.to_string(),
    }
}

/// Prints each warning on stderr, one `warning: …` line each.
pub fn print_warnings(warnings: &[WarningDoc]) {
    for w in warnings {
        eprintln!("warning: {}", w.message);
    }
}
