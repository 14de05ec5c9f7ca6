//! Permittivity of liquid (pure) water against frequency and temperature: the
//! single-Debye model of Kaatze (the built-in `water`) and, as an independent check, the
//! double-Debye model of Liebe, Hufford & Manabe. Convention εr = ε′ − jε″ (e^{jωt}).
//!
//! * Single Debye, ε = ε_∞ + (ε_s − ε_∞)/(1 + jωτ), with Kaatze's temperature fits
//!   (U. Kaatze, J. Chem. Eng. Data 34 (1989) 371):
//!   ε_s(T) = 10^(1.94404 − 1.991·10⁻³ T), ε_∞(T) = 5.77 − 2.74·10⁻² T,
//!   τ(T) = 3.745·10⁻¹⁵ (1 + 7·10⁻⁵ (T − 27.5)²) exp(2295.7/(T + 273.15)) s, T in °C.
//!   The coefficients are from memory, not verified against the paper (the same numbers
//!   appear in independent public transcriptions, which is no check of the paper). The
//!   ranges are read from the paper's abstract: measurements at nine temperatures
//!   0–50 °C and 1.1–57 GHz, analysed with literature data over −4.1–60 °C; above 60 °C
//!   the fits are an extrapolation.
//! * Double Debye (H. J. Liebe, G. A. Hufford, T. Manabe, Int. J. Infrared Millim.
//!   Waves 12 (1991) 659), with θ = 300/(T + 273.15) and f in GHz:
//!   ε(f) = ε0 − f[(ε0 − ε1)/(f + jγ1) + (ε1 − ε2)/(f + jγ2)],
//!   ε0 = 77.66 + 103.3(θ − 1), ε1 = 0.0671 ε0, ε2 = 3.52 − 7.52(θ − 1),
//!   γ1 = 20.20 − 146.4(θ − 1) + 316(θ − 1)² GHz, γ2 = 39.8 γ1.
//!   Read from public transcriptions of the 1991 paper (C. Mätzler's `epswater.m`,
//!   2002, and the Fortran `eps_swd_l91.f90` of P. W. Rosenkranz's version, both with
//!   the variable 1 − 300/T = −(θ − 1), whence the signs above); the paper itself not
//!   seen. Its 1993 revision (the MPM93 model) drops the temperature term of ε2
//!   (ε2 = 3.52) and rounds 146.4 to 146. Range stated in Mätzler's transcription:
//!   1–1000 GHz, 270–310 K, extended to 250–330 K (−23–57 °C).
//!   Its second relaxation lies above 600 GHz, so at 2.45 GHz the two models differ only
//!   by their fits: ~0.1 in ε′ and ε″ at 20–25 °C (see the tests).
//!
//! Neither includes ionic conduction (tap water or brine absorb more: add a
//! conductivity in a custom material).

/// Temperature range (°C) accepted for the water models; outside it they clamp.
pub const WATER_TEMPERATURE_RANGE_C: [f64; 2] = [0.0, 100.0];

/// Default water temperature when a load gives none, °C.
pub const WATER_DEFAULT_TEMPERATURE_C: f64 = 20.0;

/// Parameters of the single-Debye water model at one temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WaterDebyeParams {
    /// Static permittivity ε_s.
    pub eps_static: f64,
    /// High-frequency permittivity ε_∞.
    pub eps_inf: f64,
    /// Relaxation time τ, seconds.
    pub tau_s: f64,
}

/// Single-Debye parameters of liquid water at `temperature_c` (°C), Kaatze's fits
/// (module docs). The temperature is clamped to [`WATER_TEMPERATURE_RANGE_C`].
pub fn water_debye_params(temperature_c: f64) -> WaterDebyeParams {
    let t = clamp_temperature(temperature_c);
    let eps_static = 10f64.powf(1.94404 - 1.991e-3 * t);
    let eps_inf = 5.77 - 2.74e-2 * t;
    let tau_s = 3.745e-15 * (1.0 + 7.0e-5 * (t - 27.5).powi(2)) * (2295.7 / (t + 273.15)).exp();
    WaterDebyeParams {
        eps_static,
        eps_inf,
        tau_s,
    }
}

/// (ε′, ε″) of a single Debye relaxation with parameters `p` at `freq_hz`.
pub fn debye(p: WaterDebyeParams, freq_hz: f64) -> (f64, f64) {
    let wt = 2.0 * std::f64::consts::PI * freq_hz * p.tau_s;
    let d = 1.0 + wt * wt;
    let delta = p.eps_static - p.eps_inf;
    (p.eps_inf + delta / d, delta * wt / d)
}

/// Relative permittivity (ε′, ε″) of liquid water at `temperature_c` (°C) and
/// `freq_hz`, single-Debye model (module docs). The geometry parser rejects temperatures
/// outside [`WATER_TEMPERATURE_RANGE_C`] before they get here; this clamps.
pub fn water_debye(temperature_c: f64, freq_hz: f64) -> (f64, f64) {
    debye(water_debye_params(temperature_c), freq_hz)
}

/// Relative permittivity (ε′, ε″) of liquid water at `temperature_c` (°C) and
/// `freq_hz`, double-Debye model of Liebe, Hufford & Manabe (module docs).
pub fn water_double_debye(temperature_c: f64, freq_hz: f64) -> (f64, f64) {
    let theta = 300.0 / (clamp_temperature(temperature_c) + 273.15) - 1.0;
    let e0 = 77.66 + 103.3 * theta;
    let e1 = 0.0671 * e0;
    // The 1991 paper's ε2 (the 1993 revision keeps only the constant 3.52).
    let e2 = 3.52 - 7.52 * theta;
    let g1 = 20.20 - 146.4 * theta + 316.0 * theta * theta;
    let g2 = 39.8 * g1;
    let f = freq_hz * 1e-9;
    // f/(f + jγ) = f(f − jγ)/(f² + γ²): real f²/(f² + γ²), imaginary −fγ/(f² + γ²).
    let term = |de: f64, g: f64| {
        let d = f * f + g * g;
        (de * f * f / d, de * f * g / d)
    };
    let (r1, i1) = term(e0 - e1, g1);
    let (r2, i2) = term(e1 - e2, g2);
    // The model's form gives ε0 − (r1 + r2) + j(i1 + i2): it is written for e^{−iωt}
    // (ε′ + jε″), so in our εr = ε′ − jε″ the loss factor is ε″ = i1 + i2 > 0 as well.
    (e0 - r1 - r2, i1 + i2)
}

fn clamp_temperature(t: f64) -> f64 {
    if t.is_nan() {
        // A NaN cannot be placed in the range; fall back to room temperature.
        return WATER_DEFAULT_TEMPERATURE_C;
    }
    t.clamp(WATER_TEMPERATURE_RANGE_C[0], WATER_TEMPERATURE_RANGE_C[1])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn debye_static_limit_is_eps_static() {
        // Debye form: ε(ω→0) = ε_s, ε″ → 0 (P. Debye, Polar Molecules, 1929; standard result).
        for t in [0.0, 20.0, 50.0, 90.0] {
            let p = water_debye_params(t);
            let (er, ei) = water_debye(t, 1.0);
            assert!(
                (er - p.eps_static).abs() < 1e-9 * p.eps_static,
                "T={t}: {er}"
            );
            assert!(ei.abs() < 1e-6, "T={t}: {ei}");
        }
    }

    #[test]
    fn debye_loss_peak_at_omega_tau_one() {
        // Debye form: ε″ peaks at ωτ = 1 with value (ε_s − ε_∞)/2 (standard result).
        let p = water_debye_params(25.0);
        let f = 1.0 / (2.0 * std::f64::consts::PI * p.tau_s);
        let (er, ei) = water_debye(25.0, f);
        let half = (p.eps_static - p.eps_inf) / 2.0;
        assert!((ei - half).abs() < 1e-9 * half);
        assert!((er - (p.eps_inf + half)).abs() < 1e-9 * half);
    }

    #[test]
    fn static_permittivity_matches_independent_data() {
        // Static permittivity of water from Malmberg & Maryott, J. Res. NBS 56 (1956) 1:
        // ε = 87.740 − 0.40008 t + 9.398e-4 t² − 1.410e-6 t³ (coefficients from memory).
        // Tolerance 0.5 %: a few times the usual spread between independent static
        // permittivity data sets (common practice, no source).
        for t in [0.0f64, 25.0, 50.0, 75.0, 100.0] {
            let mm = 87.740 - 0.40008 * t + 9.398e-4 * t * t - 1.410e-6 * t.powi(3);
            let p = water_debye_params(t);
            assert!(
                (p.eps_static - mm).abs() <= 5e-3 * mm,
                "T={t}: {} vs {mm}",
                p.eps_static
            );
        }
    }

    #[test]
    fn relaxation_time_at_25c() {
        // Kaatze 1989: τ(25 °C) = 8.27 ps (from memory); tolerance = half a unit of the
        // last quoted digit.
        let p = water_debye_params(25.0);
        assert!((p.tau_s * 1e12 - 8.27).abs() <= 0.005, "{}", p.tau_s);
    }

    #[test]
    fn water_at_2_45_ghz_room_temperature() {
        // Commonly quoted room-temperature values of water at 2.45 GHz: ε′ ≈ 78, ε″ ≈ 10
        // (from memory, e.g. microwave-heating texts; the exact table and its temperature
        // were not checked). The quoted numbers are rounded to whole units (±0.5) and
        // "room temperature" means 20–25 °C, so the check asks that each quoted value lie
        // within the model's range over 20–25 °C widened by ±0.5. No tuned tolerance.
        let f = 2.45e9;
        let (er20, ei20) = water_debye(20.0, f);
        let (er25, ei25) = water_debye(25.0, f);
        let within = |q: f64, a: f64, b: f64| q >= a.min(b) - 0.5 && q <= a.max(b) + 0.5;
        assert!(within(78.0, er20, er25), "eps' {er20} .. {er25}");
        assert!(within(10.0, ei20, ei25), "eps'' {ei20} .. {ei25}");
        // Warmer water absorbs less at 2.45 GHz (τ shrinks): a known qualitative trend
        // (common practice, no source).
        assert!(ei25 < ei20);
    }

    #[test]
    fn water_temperature_is_clamped() {
        assert_eq!(water_debye(-10.0, 2.45e9), water_debye(0.0, 2.45e9));
        assert_eq!(water_debye(150.0, 2.45e9), water_debye(100.0, 2.45e9));
    }

    /// Kaatze 1989's tabulated single-Debye parameters (from memory: 20 °C ε_s 80.21,
    /// τ 9.36 ps; 25 °C ε_s 78.36, τ 8.27 ps; ε_∞ ≈ 5.2 at both, uncertain), put into the
    /// Debye form at 2.45 GHz: 20 °C ε′ 78.69, ε″ 10.59; 25 °C ε′ 77.23, ε″ 9.17 (worked
    /// here). Tolerances: Kaatze quotes about ±0.5 % on ε_s and ±2 % on τ (from memory);
    /// a 2 % error in τ moves ε″ by 2 % and ε′ by < 0.1 %, ε_∞ ± 0.5 moves ε′ by 0.5 %:
    /// ε′ within 1 %, ε″ within 3 %.
    #[test]
    fn model_matches_kaatze_table_at_2_45_ghz() {
        let f = 2.45e9;
        for (t, eps_s, tau_ps) in [(20.0, 80.21, 9.36), (25.0, 78.36, 8.27)] {
            let table = debye(
                WaterDebyeParams {
                    eps_static: eps_s,
                    eps_inf: 5.2,
                    tau_s: tau_ps * 1e-12,
                },
                f,
            );
            let model = water_debye(t, f);
            assert!(
                (model.0 / table.0 - 1.0).abs() <= 0.01,
                "T={t}: {model:?} vs {table:?}"
            );
            assert!(
                (model.1 / table.1 - 1.0).abs() <= 0.03,
                "T={t}: {model:?} vs {table:?}"
            );
        }
    }

    /// The two independent fits (Kaatze single Debye, Liebe double Debye) at 2.45 GHz
    /// over 0-40 °C: ε′ within 1 % and ε″ within 4 % of each other (each fit's τ is
    /// uncertain by about 2 %, from memory, and ε″ ∝ τ here: 2 × 2 %). At 60 °C they
    /// differ by 6 % in ε″ (3.80 against 4.05), so warm water is the less certain case.
    #[test]
    fn single_and_double_debye_agree() {
        for t in [0.0, 10.0, 20.0, 25.0, 40.0] {
            let (a, b) = (water_debye(t, 2.45e9), water_double_debye(t, 2.45e9));
            assert!((a.0 / b.0 - 1.0).abs() <= 0.01, "T={t}: {a:?} vs {b:?}");
            assert!((a.1 / b.1 - 1.0).abs() <= 0.04, "T={t}: {a:?} vs {b:?}");
        }
        // Liebe's ε0 at 300 K is 77.66 by construction (θ = 1).
        let (er, _) = water_double_debye(300.0 - 273.15, 1.0);
        assert!((er - 77.66).abs() < 1e-6, "{er}");
    }

    /// W. J. Ellison, "Permittivity of pure water, at standard atmospheric pressure, over
    /// the frequency range 0-25 THz and the temperature range 0-100 °C", J. Phys. Chem.
    /// Ref. Data 36 (2007) 1: three Debye relaxations plus two resonances, parameters of
    /// its Table 2, ε′ and ε″ from its eqs. 17a, 17b. Coefficients as transcribed by
    /// D. F. Crouse (U.S. Naval Research Laboratory, 2021, `freshwaterRelPermittivity.m`,
    /// read 2026-12-04; the paper itself not seen). Returns (ε′, ε″ ≥ 0).
    fn ellison_2007(t: f64, freq_hz: f64) -> (f64, f64) {
        use std::f64::consts::PI;
        let (a, b) = (
            [79.23882, 3.815866, 1.634967],
            [0.004300598, 0.01117295, 0.006841548],
        );
        let (c, d) = (
            [1.382264e-13, 3.510354e-16, 6.30035e-15],
            [652.7648, 1249.533, 405.5169],
        );
        let tc = 133.1383;
        let p = [
            0.8379692,
            -0.006118594,
            -0.000012936798,
            4235901000000.0,
            -14260880000.0,
            273815700.0,
            -1246943.0,
            9.618642e-14,
            1.795786e-16,
            -9.310017e-18,
            1.655473e-19,
            0.6165532,
            0.007238532,
            -0.00009523366,
            15983170000000.0,
            -74413570000.0,
            497448000.0,
            2.882476e-14,
            -3.142118e-16,
            3.528051e-18,
        ];
        let es = 87.9144 - 0.404399 * t + 9.58726e-4 * t * t - 1.32802e-6 * t.powi(3);
        let v = freq_hz;
        let w = 2.0 * PI * v;
        let (mut ep, mut epp) = (es, 0.0);
        for k in 0..3 {
            let delta = a[k] * (-b[k] * t).exp();
            let tau = c[k] * (d[k] / (t + tc)).exp();
            let den = 1.0 + (w * tau).powi(2);
            ep -= w * w * tau * tau * delta / den;
            epp += w * tau * delta / den;
        }
        let resonance = |delta: f64, f0: f64, tau: f64| {
            let lp = 1.0 + (2.0 * PI * tau * (f0 + v)).powi(2);
            let lm = 1.0 + (2.0 * PI * tau * (f0 - v)).powi(2);
            (
                -(2.0 * PI * tau).powi(2) * (delta / 2.0) * (v * (f0 + v) / lp - v * (f0 - v) / lm),
                PI * v * tau * delta * (1.0 / lp + 1.0 / lm),
            )
        };
        let (r4, i4) = resonance(
            p[0] + p[1] * t + p[2] * t * t,
            p[3] + p[4] * t + p[5] * t * t + p[6] * t.powi(3),
            p[7] + p[8] * t + p[9] * t * t + p[10] * t.powi(3),
        );
        let (r5, i5) = resonance(
            p[11] + p[12] * t + p[13] * t * t,
            p[14] + p[15] * t + p[16] * t * t,
            p[17] + p[18] * t + p[19] * t * t,
        );
        (ep + r4 + r5, epp + i4 + i5)
    }

    /// T. Meissner and F. J. Wentz, "The complex dielectric constant of pure and sea
    /// water from microwave satellite observations", IEEE Trans. Geosci. Remote Sens. 42
    /// (2004) 1836: double Debye, eq. 6 with σ = 0, ε_s from eq. 7, coefficients a0-a10 of
    /// Table III in eq. 8; stated for pure water over −20-40 °C, up to 500 GHz. Read in two
    /// public transcriptions that agree digit for digit (the same Crouse file, and
    /// `Dielectric constant of Pure water.py` of github.com/lixiang19971017, 2026-12-04;
    /// the paper itself not seen). Returns (ε′, ε″ ≥ 0).
    fn meissner_wentz_2004(t: f64, freq_hz: f64) -> (f64, f64) {
        let a = [
            5.7230, 2.2379e-2, -7.1237e-4, 5.0478, -7.0315e-2, 6.0059e-4, 3.6143, 2.8841e-2,
            1.3652e-1, 1.4825e-3, 2.4166e-4,
        ];
        let e1 = a[0] + a[1] * t + a[2] * t * t;
        let v1 = (45.0 + t) / (a[3] + a[4] * t + a[5] * t * t);
        let einf = a[6] + a[7] * t;
        let v2 = (45.0 + t) / (a[8] + a[9] * t + a[10] * t * t);
        let es = (3.70886e4 - 8.2168e1 * t) / (4.21854e2 + t);
        let f = freq_hz * 1e-9;
        // (Δ)/(1 + j f/ν) = Δ(1 − j f/ν)/(1 + (f/ν)²): ε″ is the magnitude of the
        // imaginary part.
        let term = |de: f64, nu: f64| {
            let x = f / nu;
            (de / (1.0 + x * x), de * x / (1.0 + x * x))
        };
        let (r1, i1) = term(es - e1, v1);
        let (r2, i2) = term(e1 - einf, v2);
        (einf + r1 + r2, i1 + i2)
    }

    /// Ellison's 2007 fit at its own reference points: ε(0 Hz) is its static
    /// permittivity 87.9144 − 0.404399 t + … (Table 2 transcription), a check that the
    /// transcription above is wired as the paper's form (ε″ → 0, ε′ → ε_s at low
    /// frequency; worked here: 87.9144 at 0 °C, 78.3829 at 25 °C).
    #[test]
    fn ellison_transcription_static_limit() {
        for (t, es) in [(0.0, 87.9144), (25.0, 78.3829)] {
            let (er, ei) = ellison_2007(t, 1.0e3);
            assert!((er - es).abs() < 1e-3, "T={t}: {er}");
            assert!(ei.abs() < 1e-3, "T={t}: {ei}");
        }
    }

    /// The built-in (Kaatze single Debye) against Ellison 2007 at 2.45 GHz, 0-100 °C, and
    /// against Meissner & Wentz 2004 over 0-40 °C (their stated range). Tolerances: ε′
    /// within 1 %, ε″ within 3 % over Kaatze's measured 0-50 °C, the size of the spread
    /// between independent measured data sets of water in the low GHz range (common
    /// practice, no source); the differences found are at most 0.5 % and 2.3 % (Ellison),
    /// 0.2 % and 2.4 % (Meissner & Wentz), printed below. Above 50 °C, where Kaatze's
    /// fit is extrapolated, ε′ keeps within 1 % of Ellison and ε″ is printed, not
    /// asserted: it drifts from −0.5 % at 60 °C to +7.8 % at 100 °C, the README's
    /// figure for hot water.
    #[test]
    fn kaatze_matches_ellison_and_meissner_wentz_at_2_45_ghz() {
        let f = 2.45e9;
        let rel = |a: f64, b: f64| a / b - 1.0;
        for t in [
            0.0, 10.0, 20.0, 25.0, 30.0, 40.0, 50.0, 60.0, 70.0, 80.0, 90.0, 100.0,
        ] {
            let k = water_debye(t, f);
            let e = ellison_2007(t, f);
            println!(
                "T={t:5.1} °C  Kaatze {:.3} − j{:.3}  Ellison {:.3} − j{:.3}  ({:+.2} %, {:+.2} %)",
                k.0,
                k.1,
                e.0,
                e.1,
                100.0 * rel(k.0, e.0),
                100.0 * rel(k.1, e.1)
            );
            assert!(rel(k.0, e.0).abs() <= 0.01, "T={t}: {k:?} vs Ellison {e:?}");
            if t <= 50.0 {
                assert!(rel(k.1, e.1).abs() <= 0.03, "T={t}: {k:?} vs Ellison {e:?}");
            }
            if t <= 40.0 {
                let m = meissner_wentz_2004(t, f);
                println!(
                    "           Meissner & Wentz {:.3} − j{:.3}  ({:+.2} %, {:+.2} %)",
                    m.0,
                    m.1,
                    100.0 * rel(k.0, m.0),
                    100.0 * rel(k.1, m.1)
                );
                assert!(rel(k.0, m.0).abs() <= 0.01, "T={t}: {k:?} vs MW {m:?}");
                assert!(rel(k.1, m.1).abs() <= 0.03, "T={t}: {k:?} vs MW {m:?}");
            }
        }
    }
}
