//! Permittivity of pure ice against frequency and temperature: the model of C. Mätzler,
//! "Microwave properties of ice and snow", in B. Schmitt et al. (eds.), Solar System Ices,
//! Astrophys. Space Sci. Library 227 (Kluwer, 1998) 241-257. Convention εr = ε′ − jε″.
//!
//! With T in K, f in GHz and θ = 300/T − 1:
//! ε′ = 3.1884 + 9.1·10⁻⁴ (T − 273), ε″ = α/f + β f,
//! α = (0.00504 + 0.0062 θ) e^(−22.1 θ),
//! β = (B1/T) e^(b/T)/(e^(b/T) − 1)² + B2 f² + e^(−10.02 + 0.0364 (T − 273)),
//! B1 = 0.0207, B2 = 1.16·10⁻¹¹, b = 335.
//! Read in the transcription of the atmlab library's `epsice.m` (2026-12-04; the chapter
//! itself not seen), which states the range 0.01-3000 GHz and 20-273.15 K.
//!
//! Pure ice only: frozen food holds unfrozen brine and is far lossier (give such a load
//! its own values). The loss of pure ice is uncertain by about 1.5× near 2.45 GHz: the
//! 1993 ice model of Liebe, Hufford & Manabe gives 2.0e-4 where this one gives 2.9e-4 at
//! −10 °C (`material.rs`, the ice entry).

/// Temperature range (°C) accepted for ice loads; the model itself clamps to it.
pub const ICE_TEMPERATURE_RANGE_C: [f64; 2] = [-60.0, 0.0];

/// Ice temperature when a load gives none, °C.
pub const ICE_DEFAULT_TEMPERATURE_C: f64 = -10.0;

/// Frequency range (Hz) of the model as stated in its transcription; outside it the
/// frequency is clamped (α/f grows without bound towards DC).
pub const ICE_FREQUENCY_RANGE_HZ: [f64; 2] = [0.01e9, 3000e9];

/// Relative permittivity (ε′, ε″) of pure ice at `temperature_c` (°C) and `freq_hz`,
/// Mätzler's 1998 model (module docs). Temperature and frequency are clamped to
/// [`ICE_TEMPERATURE_RANGE_C`] and [`ICE_FREQUENCY_RANGE_HZ`].
pub fn ice_maetzler(temperature_c: f64, freq_hz: f64) -> (f64, f64) {
    let t = if temperature_c.is_nan() {
        ICE_DEFAULT_TEMPERATURE_C
    } else {
        temperature_c.clamp(ICE_TEMPERATURE_RANGE_C[0], ICE_TEMPERATURE_RANGE_C[1])
    };
    let f_hz = if freq_hz.is_nan() {
        ICE_FREQUENCY_RANGE_HZ[0]
    } else {
        freq_hz.clamp(ICE_FREQUENCY_RANGE_HZ[0], ICE_FREQUENCY_RANGE_HZ[1])
    };
    let tk = t + 273.15;
    let f = f_hz * 1e-9;
    let theta = 300.0 / tk - 1.0;
    let alpha = (0.00504 + 0.0062 * theta) * (-22.1 * theta).exp();
    let x = (335.0 / tk).exp();
    let beta = (0.0207 / tk) * x / ((x - 1.0) * (x - 1.0))
        + 1.16e-11 * f * f
        + (-10.02 + 0.0364 * (tk - 273.0)).exp();
    (3.1884 + 9.1e-4 * (tk - 273.0), alpha / f + beta * f)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// ε′ against an independent figure: 3.17 ± 0.07, independent of frequency, the
    /// value of the reviews of Evans and of Warren as quoted by Matsuoka, Fujita & Mae,
    /// J. Appl. Phys. (1996), S0021-8979(96)01322-9 (read in its introduction), over the
    /// accepted temperatures at 0.915, 2.45 and 5.8 GHz.
    #[test]
    fn real_part_within_the_reviews_band() {
        for t in [-60.0, -40.0, -20.0, -10.0, 0.0] {
            for f in [0.915e9, 2.45e9, 5.8e9] {
                let (er, _) = ice_maetzler(t, f);
                assert!((er - 3.17).abs() <= 0.07, "T={t} f={f}: {er}");
            }
        }
    }

    /// Points of the model worked by hand from the formulas above (module docs) at
    /// 2.45 GHz: ε″ 1.943e-4 at −20 °C, 2.895e-4 at −10 °C, 4.813e-4 at 0 °C; tolerance
    /// half a unit of the last digit quoted (5e-8). The loss rises towards the melting
    /// point (the model's defect term), as the reviews describe (common practice, no
    /// source).
    #[test]
    fn loss_factor_at_2_45_ghz() {
        for (t, ei) in [(-20.0, 1.943e-4), (-10.0, 2.895e-4), (0.0, 4.813e-4)] {
            let (_, e) = ice_maetzler(t, 2.45e9);
            assert!((e - ei).abs() <= 5e-8, "T={t}: {e} vs {ei}");
        }
    }

    #[test]
    fn inputs_are_clamped() {
        assert_eq!(ice_maetzler(-100.0, 2.45e9), ice_maetzler(-60.0, 2.45e9));
        assert_eq!(ice_maetzler(5.0, 2.45e9), ice_maetzler(0.0, 2.45e9));
        assert_eq!(ice_maetzler(-10.0, 1.0), ice_maetzler(-10.0, 0.01e9));
        assert!(ice_maetzler(f64::NAN, 2.45e9).1.is_finite());
    }
}
