//! Nédélec edge elements and a shift-invert eigen solver for the resonant modes of
//! metal cavities with dielectric loads.
//!
//! Time-harmonic fields (e^{jωt}) satisfy, with k0 = ω/c,
//!
//!   ∇ × (μr⁻¹ ∇ × E) − k0² εr E = 0 in Ω,   n × E = 0 on PEC walls.
//!
//! The weak form ∫ μr⁻¹ (∇×E)·(∇×v) dV = k0² ∫ εr E·v dV for all v in H0(curl),
//! discretised with first-kind Nédélec elements (order 1, 2 or 3, [`fem::element`]), gives
//! the generalised eigenproblem K x = k0² M x ([`fem::assembly`]). Gradients of scalar
//! functions span the kernel of K; they are kept away by a shift-invert spectral
//! transformation around σ = k0²(target) ([`linalg::eigen`]), and every reported mode is
//! checked to be divergence-free (Gᵀ M x ≈ 0) and to have a small residual
//! ([`modes::checks`]).
//!
//! Metal walls of finite conductivity enter either as a surface-impedance boundary term
//! (jωμ0/Zs) ∮ (n×E)·(n×v) dS in the eigenproblem (the default,
//! [`fem::impedance::WallLosses::Impedance`]: its wall Q converges like the eigenvalue,
//! h⁴ at order 2, against h² by perturbation; it makes an empty cavity's problem complex,
//! about 2.7× the time of the real solve) or by perturbation after a solve with perfectly
//! conducting walls ([`post::losses`]).
//!
//! Modules in pipeline order: [`problem`] (geometry → inputs in SI units), [`fem`] (the
//! discretisation), [`linalg`] (sparse algebra, factorisation, eigen iteration),
//! [`modes`] (the mode solve as named stages), [`post`] (losses, fields, band figures);
//! beside them [`constants`], [`budget`] (size before a solve) and [`error`].
//!
//! This crate knows nothing of files or terminals.

pub mod budget;
pub mod constants;
pub mod driven;
pub mod error;
pub mod fem;
pub mod linalg;
pub mod modes;
pub mod post;
pub mod problem;

pub use error::SolverError;
pub use fem::assembly::RegionMaterial;
pub use fem::{NedelecOrder, Space};
pub use modes::{solve_modes, Mode, ModeSet, ModeSettings};
