//! Errors of the solver library.

use thiserror::Error;

/// What can go wrong while setting up or solving the eigenproblem.
#[derive(Debug, Error)]
pub enum SolverError {
    /// The sparse factorisation of K − σM failed.
    #[error("sparse factorisation failed: {0}. Try a slightly different target frequency (the shift may sit exactly on a resonance).")]
    Factorization(String),
    /// Not enough memory for a workspace.
    #[error(
        "not enough memory for the {0}; use a coarser mesh (smaller per_wavelength) or order 1"
    )]
    OutOfMemory(String),
    /// The mesh has no free unknowns (everything constrained).
    #[error("the mesh has no interior unknowns: it is too coarse to hold any field; refine it (larger per_wavelength or smaller max_size)")]
    NoUnknowns,
    /// The eigen iteration did not converge.
    #[error("the eigen solver found only {found} of {wanted} modes to tolerance {tol:e} after {restarts} restarts; try fewer modes or a narrower band; if the target lies below the cavity's lowest resonances, raise it (static fields then crowd the search)")]
    NotConverged {
        found: usize,
        wanted: usize,
        tol: f64,
        restarts: usize,
    },
    /// The shift lies so far below the lowest resonance that static (gradient) fields
    /// fill the search space.
    #[error("the target frequency lies far below the cavity's lowest resonance, so the search finds only static (zero-frequency) fields; raise the target (--target) towards the band of interest")]
    TargetBelowModes,
    /// A parameter was out of range.
    #[error("invalid solver setting: {0}")]
    InvalidSetting(String),
}
