//! Isolated-resonance curves of one mode, from its eigen-solve figures.
//!
//! With δ = (f − f0)/f0 (single-mode, high-Q resonator; Pozar, Microwave Engineering,
//! 4th ed., §6.1 and §6.7):
//!
//! * stored-energy response, peak normalised to 1: L(f) = 1 / (1 + (2 Q_L δ)²), half-power
//!   width f0/Q_L;
//! * the fraction of a port's forward power that enters through that port when this mode
//!   alone is present: 4κ / ((1 + κ)² + (2 Q0 δ)²) = (1 − |Γ(f0)|²) L(f), with κ = Q0/Q_ext
//!   the port's coupling (the other ports counted as losses) and Q_L = Q0/(1 + κ).
//!
//! These describe one mode on its own; where modes overlap their coupling phases matter
//! and the driven response ([`crate::driven`]) is the answer.

/// Normalised stored-energy response L(f) of a mode at `f0` with loaded Q `q_loaded`
/// (any frequency unit, the same for `f` and `f0`); 0 for a lossless mode, which is a
/// line, not a curve.
pub fn energy_response(f: f64, f0: f64, q_loaded: f64) -> f64 {
    if !q_loaded.is_finite() {
        return 0.0;
    }
    let d = 2.0 * q_loaded * (f - f0) / f0;
    1.0 / (1.0 + d * d)
}

/// Fraction of a port's forward power this mode alone takes in at `f`, given its coupling
/// κ to the port and the port's external Q; `None` when the mode does not couple.
pub fn coupled_fraction(f: f64, f0: f64, kappa: f64, q_ext: f64) -> Option<f64> {
    if !(kappa.is_finite() && kappa > 0.0 && q_ext.is_finite()) {
        return None;
    }
    let q0 = kappa * q_ext;
    let x = 2.0 * q0 * (f - f0) / f0;
    Some(4.0 * kappa / ((1.0 + kappa).powi(2) + x * x))
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// At resonance the coupled fraction is 1 − |Γ|² with Γ = (1 − κ)/(1 + κ) (Pozar,
    /// Microwave Engineering 4th ed., §6.7, coupling coefficient g; section number from memory).
    #[test]
    fn coupled_fraction_at_resonance_is_one_minus_gamma_squared() {
        for kappa in [0.1, 0.5, 1.0, 2.0, 7.0] {
            let gamma = (1.0 - kappa) / (1.0 + kappa);
            let got = coupled_fraction(2.45, 2.45, kappa, 1000.0).unwrap();
            assert_relative_eq!(got, 1.0 - gamma * gamma, max_relative = 1e-14);
        }
    }

    /// Half-power points of L at f0 (1 ± 1/(2 Q_L)) — the definition of Q_L.
    #[test]
    fn energy_response_half_power_width() {
        let (f0, q) = (2.45, 800.0);
        for s in [-1.0, 1.0] {
            let f = f0 * (1.0 + s / (2.0 * q));
            assert_relative_eq!(energy_response(f, f0, q), 0.5, max_relative = 1e-12);
        }
        assert_eq!(energy_response(2.4, f0, f64::INFINITY), 0.0);
        assert!(coupled_fraction(f0, f0, 0.0, 100.0).is_none());
    }
}
