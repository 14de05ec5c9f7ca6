//! Dielectric and metal materials.
//!
//! Relative permittivity follows the e^{jωt} convention εr = ε′ − jε″ with ε″ ≥ 0
//! for a lossy medium; a conductivity σ adds σ/(ω ε0) to ε″.

/// Vacuum permittivity, F/m (CODATA 2018).
pub const EPS0: f64 = 8.854_187_8128e-12;

/// How a dielectric's permittivity depends on frequency.
#[derive(Clone, Debug, PartialEq)]
pub enum Dielectric {
    /// Frequency-independent ε′ and ε″ plus an ohmic conductivity σ (S/m).
    Constant {
        eps_real: f64,
        eps_imag: f64,
        conductivity: f64,
    },
    /// Liquid water, single Debye relaxation with temperature-dependent parameters.
    WaterDebye { temperature_c: f64 },
}

/// A load material.
#[derive(Clone, Debug, PartialEq)]
pub struct Material {
    /// Built-in name, or "custom".
    pub name: String,
    pub dielectric: Dielectric,
    /// Relative permeability (real).
    pub permeability: f64,
}

impl Material {
    /// Relative permittivity (ε′, ε″) at `freq_hz`; ε″ ≥ 0 includes σ/(ω ε0).
    pub fn permittivity(&self, freq_hz: f64) -> (f64, f64) {
        let omega = 2.0 * std::f64::consts::PI * freq_hz;
        match &self.dielectric {
            Dielectric::Constant {
                eps_real,
                eps_imag,
                conductivity,
            } => (*eps_real, eps_imag + conductivity / (omega * EPS0)),
            Dielectric::WaterDebye { temperature_c } => water_debye(*temperature_c, freq_hz),
        }
    }
}

/// Placeholder replaced by the material database work (see `issues`).
fn water_debye(_temperature_c: f64, _freq_hz: f64) -> (f64, f64) {
    (78.0, 10.0)
}
