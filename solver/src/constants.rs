//! Physical constants and the k0² ↔ f conversions of the eigenproblem.
//!
//! The constants are defined once, in the mesh crate (`antinode_mesh::constants`: the
//! mesher needs c0 for element sizes and the material model ε0 for σ/(ωε0), and that
//! crate cannot depend on this one); they are re-exported here so that solver users and
//! the front end have one place to take them from.
//!
//! The eigenvalue is λ = k0² with k0 = ω/c0 = 2πf/c0 (m⁻²).

pub use antinode_mesh::constants::{C0, EPS0, ETA0, MU0};

/// k0² (m⁻²) of a frequency in Hz.
pub fn k0_squared(freq_hz: f64) -> f64 {
    let k0 = 2.0 * std::f64::consts::PI * freq_hz / C0;
    k0 * k0
}

/// Frequency (Hz) of k0² (m⁻²); negative k0² (below the kernel) maps to 0.
pub fn frequency_of(k0_squared: f64) -> f64 {
    k0_squared.max(0.0).sqrt() * C0 / (2.0 * std::f64::consts::PI)
}

/// Free-space wavenumber k0 = 2πf/c0 (m⁻¹) of a frequency in Hz.
pub fn wavenumber(freq_hz: f64) -> f64 {
    freq_hz * 2.0 * std::f64::consts::PI / C0
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The two conversions are inverse to each other (consistency, no source needed
    /// beyond k0 = 2πf/c0); 2.45 GHz has k0 ≈ 51.3 m⁻¹ (λ0 ≈ 122.4 mm, from c0/f).
    #[test]
    fn k0_squared_and_frequency_are_inverse() {
        let f = 2.45e9;
        let k2 = k0_squared(f);
        assert!((k2.sqrt() - 51.3).abs() < 0.05, "k0 = {}", k2.sqrt());
        // Two roundings in each direction: a few ulps.
        assert!((frequency_of(k2) - f).abs() <= 4.0 * f64::EPSILON * f);
        assert!((wavenumber(f) - k2.sqrt()).abs() <= 4.0 * f64::EPSILON * k2.sqrt());
    }
}
