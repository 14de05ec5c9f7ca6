//! Errors of the solver library.
//!
//! Messages say what went wrong and what to change in terms of the problem (target
//! frequency, number of modes, mesh size, element order), never in terms of one front
//! end's options: a command-line or script front end adds its own hints.

use thiserror::Error;

/// Which step of the sparse factorisation failed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FactorStep {
    /// Symbolic analysis (elimination tree, supernodes) of the pattern.
    Symbolic,
    /// Numeric LDLᵀ without pivoting (a zero pivot: the shifted matrix is singular or
    /// nearly so).
    NumericLdlt,
    /// Numeric complex symmetric LDLᵀ with Bunch–Kaufman pivoting (a zero column inside a
    /// supernode: the shifted matrix is singular or nearly so).
    NumericComplexLdlt,
}

impl std::fmt::Display for FactorStep {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Self::Symbolic => "symbolic analysis",
            Self::NumericLdlt => "numeric LDLᵀ factorisation",
            Self::NumericComplexLdlt => "numeric complex symmetric LDLᵀ factorisation",
        })
    }
}

/// What can go wrong while setting up or solving the eigenproblem.
#[derive(Debug, Error)]
pub enum SolverError {
    /// The sparse factorisation of the shifted matrix K − σM failed.
    #[error(
        "the {step} of the shifted matrix ({n} unknowns) failed ({detail}); the shift may \
         sit exactly on a resonance: move the target frequency slightly"
    )]
    FactorFailed {
        step: FactorStep,
        /// Order of the factorised matrix.
        n: usize,
        /// The factorisation library's own description.
        detail: String,
    },
    /// Not enough memory for a workspace.
    #[error(
        "not enough memory for the {workspace} ({bytes} bytes: more than this run may use \
         or the system would give; refused before allocating)"
    )]
    OutOfMemory {
        /// Which workspace.
        workspace: &'static str,
        /// Its size in bytes.
        bytes: usize,
    },
    /// The mesh has no free unknowns (everything constrained).
    #[error(
        "the mesh has no interior unknowns: it is too coarse to hold any field; refine it \
         (more elements per wavelength or a smaller largest element)"
    )]
    NoUnknowns,
    /// The eigen iteration did not converge.
    #[error(
        "the eigen solver found only {found} of {wanted} modes to tolerance {tol:e} after \
         {restarts} restarts; ask for fewer modes or a narrower band; if the target lies \
         below the cavity's lowest resonances, raise it (static fields then crowd the \
         search)"
    )]
    NotConverged {
        found: usize,
        wanted: usize,
        tol: f64,
        restarts: usize,
    },
    /// The shift lies so far below the lowest resonance that static (gradient) fields
    /// fill the search space.
    #[error(
        "the target frequency lies far below the cavity's lowest resonance, so the search \
         finds only static (zero-frequency) fields; raise the target towards the band of \
         interest"
    )]
    TargetBelowModes,
    /// The dense eigenproblem of the projected (Rayleigh–Ritz) matrix failed to converge.
    #[error(
        "the projected {dim} × {dim} eigenproblem of the Krylov iteration did not converge; \
         change the target frequency slightly or the number of modes"
    )]
    Projection { dim: usize },
    /// The target frequency is not a positive finite number.
    #[error("target frequency {target_hz} Hz must be a positive finite number")]
    InvalidTarget { target_hz: f64 },
    /// Fewer region materials than mesh regions.
    #[error("{given} region materials given for a mesh with {regions} regions")]
    MaterialsMissing { given: usize, regions: usize },
    /// Neither a number of modes nor a band was asked for.
    #[error("no modes were asked for: give a number of modes (at least 1) or a band")]
    NoModesWanted,
    /// An element order this solver does not implement.
    #[error("Nédélec element order {order} is not available: use 1, 2 or 3")]
    UnsupportedOrder { order: u8 },
    /// A driven solve needs at least one port to feed the cavity.
    #[error("a driven response needs at least one feed port")]
    NoPorts,
    /// A port carries no power at a frequency of the driven solve.
    #[error(
        "port {port} is below its TE10 cutoff ({cutoff_hz:.6e} Hz) at {freq_hz:.6e} Hz and \
         carries no power there; keep every frequency above the cutoff (broad side \
         wider than half a wavelength)"
    )]
    PortBelowCutoff {
        port: usize,
        freq_hz: f64,
        cutoff_hz: f64,
    },
    /// A frequency of a driven solve is not a positive finite number.
    #[error("frequency {freq_hz} Hz must be a positive finite number")]
    InvalidFrequency { freq_hz: f64 },
    /// The drive lists a different number of port amplitudes than there are ports.
    #[error("the drive gives {given} port amplitudes for {ports} ports")]
    DriveMismatch { given: usize, ports: usize },
    /// A curved tetrahedron's geometry map is not invertible everywhere.
    #[error(
        "curved tetrahedron {tet}: its geometry map folds (det J = {min_det:e} at a \
         quadrature point) because the mesh is too coarse for the curvature of a cylinder \
         side; use a smaller mesh size near the cylinder, or turn curved elements off"
    )]
    CurvedElementInverted { tet: usize, min_det: f64 },
    /// A face handed over as curved names a surface that is not in the list.
    #[error(
        "a curved face names surface {surface} but only {surfaces} surfaces were handed \
         over; pass the mesher's surfaces together with its faces"
    )]
    CurvedSurfaceMissing { surface: usize, surfaces: usize },
}
