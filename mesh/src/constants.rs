//! Physical constants, SI units: the one definition in the workspace.
//!
//! They live in this crate, the lowest one, because the mesher needs c0 (element sizes
//! from the local wavelength) and the material model needs ε0 (σ/(ωε0) in ε″), and this
//! crate cannot depend on the solver. The solver re-exports them, with the k0² ↔ f
//! helpers, as `antinode_solver::constants`; the command-line front end uses that.
//!
//! c0 is exact in the SI; μ0 and ε0 are the CODATA 2018 recommended values
//! (ε0 = 1/(μ0 c0²) to their 11 significant digits).

/// Speed of light in vacuum, m/s (exact, SI).
pub const C0: f64 = 299_792_458.0;

/// Vacuum permeability μ0, H/m (CODATA 2018).
pub const MU0: f64 = 1.256_637_062_12e-6;

/// Vacuum permittivity ε0, F/m (CODATA 2018).
pub const EPS0: f64 = 8.854_187_812_8e-12;

/// Wave impedance of free space η0 = μ0 c0, Ω (≈ 376.73).
pub const ETA0: f64 = MU0 * C0;
