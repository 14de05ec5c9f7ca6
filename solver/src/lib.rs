//! Nédélec edge elements and a shift-invert eigen solver for the resonant modes of
//! metal cavities with dielectric loads.
//!
//! Time-harmonic fields (e^{jωt}) satisfy, with k0 = ω/c,
//!
//!   ∇ × (μr⁻¹ ∇ × E) − k0² εr E = 0 in Ω,   n × E = 0 on PEC walls.
//!
//! The weak form ∫ μr⁻¹ (∇×E)·(∇×v) dV = k0² ∫ εr E·v dV for all v in H0(curl),
//! discretised with first-kind Nédélec elements (order 1 or 2, [`element`]), gives the
//! generalised eigenproblem K x = k0² M x ([`assembly`]). Gradients of scalar functions
//! span the kernel of K; they are kept away by a shift-invert spectral transformation
//! around σ = k0²(target) ([`eigen`]), and every reported mode is checked to be
//! divergence-free (Gᵀ M x ≈ 0) and to have a small residual.
//!
//! This crate knows nothing of files or terminals.

pub mod assembly;
pub mod barycentric;
pub mod budget;
pub mod dofmap;
pub mod eigen;
pub mod element;
pub mod error;
pub mod factor;
pub mod field;
pub mod topology;
pub mod triangular;

pub use error::SolverError;
pub mod losses;
pub mod modes;
pub mod ordering;
pub mod port;
pub mod problem;
pub mod tall_skinny;

pub use element::NedelecOrder;
pub use modes::{solve_modes, Mode, ModeSet, ModeSettings};
