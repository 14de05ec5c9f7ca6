//! Dielectric and metal materials, and the built-in material list.
//!
//! Relative permittivity follows the e^{jωt} convention εr = ε′ − jε″ with ε″ ≥ 0
//! for a lossy medium; a conductivity σ adds σ/(ω ε0) to ε″.
//!
//! Every built-in entry carries a `source` string that says where its numbers come from:
//! a named publication, or "from memory" when the value was recalled rather than read
//! from the cited table, or "common practice, no source".

use crate::constants::EPS0;

/// Temperature range (°C) accepted for the water model; outside it `water_debye` clamps.
pub const WATER_TEMPERATURE_RANGE_C: [f64; 2] = [0.0, 100.0];

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

/// Thermal properties for the first-order temperature rise of a driven solve.
#[derive(Clone, Debug, PartialEq)]
pub struct Thermal {
    /// Density ρ (kg/m³).
    pub density: f64,
    /// Specific heat c_p (J/(kg·K)).
    pub specific_heat: f64,
    /// Where the two numbers come from.
    pub source: String,
}

/// A load material.
#[derive(Clone, Debug, PartialEq)]
pub struct Material {
    /// Built-in name, or "custom".
    pub name: String,
    pub dielectric: Dielectric,
    /// Relative permeability (real).
    pub permeability: f64,
    /// Density and specific heat (None: not known; no temperature rise then).
    pub thermal: Option<Thermal>,
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

    /// Lossless, non-magnetic dielectric with constant ε′.
    pub fn lossless(name: &str, eps_real: f64) -> Material {
        Material::constant(name, eps_real, 0.0)
    }

    /// Non-magnetic dielectric with constant ε′ and ε″ (no conductivity).
    pub fn constant(name: &str, eps_real: f64, eps_imag: f64) -> Material {
        Material {
            name: name.to_string(),
            dielectric: Dielectric::Constant {
                eps_real,
                eps_imag,
                conductivity: 0.0,
            },
            permeability: 1.0,
            thermal: None,
        }
    }

    /// The material with density ρ (kg/m³) and specific heat c_p (J/(kg·K)).
    pub fn with_thermal(mut self, density: f64, specific_heat: f64, source: &str) -> Material {
        self.thermal = Some(Thermal {
            density,
            specific_heat,
            source: source.to_string(),
        });
        self
    }

    /// Liquid water at `temperature_c` (°C), single-Debye model (see [`water_debye`]).
    pub fn water(temperature_c: f64) -> Material {
        Material {
            name: "water".to_string(),
            dielectric: Dielectric::WaterDebye { temperature_c },
            permeability: 1.0,
            thermal: None,
        }
        .with_thermal(
            998.2,
            4182.0,
            "ρ 998.2 kg/m³, c_p 4182 J/(kg K) (liquid water at 20 °C; CRC Handbook of \
             Chemistry and Physics, from memory); taken constant, the load's temperature \
             changes them by < 2 % over 0-80 °C",
        )
    }
}

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

/// Single-Debye parameters of liquid water at `temperature_c` (°C), after the
/// parameterisation of Kaatze, J. Chem. Eng. Data 34 (1989) 371 (coefficients from
/// memory):
///
/// - ε_s(T) = 10^(1.94404 − 1.991·10⁻³ T)
/// - ε_∞(T) = 5.77 − 2.74·10⁻² T
/// - τ(T) = 3.745·10⁻¹⁵ (1 + 7·10⁻⁵ (T − 27.5)²) exp(2295.7 / (T + 273.15)) s
///
/// with T in °C. The temperature is clamped to [`WATER_TEMPERATURE_RANGE_C`]; Kaatze's
/// measurements cover roughly 0–60 °C (from memory), so values above are an extrapolation.
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

/// Relative permittivity (ε′, ε″) of liquid water at `temperature_c` (°C) and
/// `freq_hz`: the Debye form ε = ε_∞ + (ε_s − ε_∞)/(1 + jωτ) with the parameters of
/// [`water_debye_params`]. Ionic conduction is not included (pure water).
/// The temperature is clamped to [`WATER_TEMPERATURE_RANGE_C`]; the geometry parser
/// rejects temperatures outside it before they get here.
pub fn water_debye(temperature_c: f64, freq_hz: f64) -> (f64, f64) {
    let p = water_debye_params(temperature_c);
    let wt = 2.0 * std::f64::consts::PI * freq_hz * p.tau_s;
    let d = 1.0 + wt * wt;
    let delta = p.eps_static - p.eps_inf;
    (p.eps_inf + delta / d, delta * wt / d)
}

fn clamp_temperature(t: f64) -> f64 {
    if t.is_nan() {
        // A NaN cannot be placed in the range; fall back to room temperature.
        return 20.0;
    }
    t.clamp(WATER_TEMPERATURE_RANGE_C[0], WATER_TEMPERATURE_RANGE_C[1])
}

/// Whether a built-in material is a dielectric (load) or a metal (walls).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MaterialKind {
    Dielectric,
    Metal,
}

impl std::fmt::Display for MaterialKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            MaterialKind::Dielectric => "dielectric",
            MaterialKind::Metal => "metal",
        })
    }
}

/// Values of a built-in material.
#[derive(Clone, Debug, PartialEq)]
pub enum MaterialValues {
    /// A load material (water at 20 °C for the water entry; set the temperature with
    /// [`Material::water`]).
    Dielectric(Material),
    /// A wall metal with its DC conductivity, S/m.
    Metal { conductivity: f64 },
}

/// One entry of the built-in material list.
#[derive(Clone, Debug, PartialEq)]
pub struct MaterialEntry {
    pub name: &'static str,
    pub kind: MaterialKind,
    pub values: MaterialValues,
    /// Where the numbers come from (publication, "from memory", or "common practice").
    pub source: &'static str,
}

/// Default water temperature when a load gives none, °C.
pub const WATER_DEFAULT_TEMPERATURE_C: f64 = 20.0;

/// The built-in material list, dielectrics first, then metals.
///
/// Dielectric values are for about 2.45 GHz and room temperature unless the source says
/// otherwise; food values vary widely with composition and temperature.
pub fn builtin_list() -> Vec<MaterialEntry> {
    // Dielectrics are stored as ε′ and ε″ (ε″ = ε′ tan δ where the source gives tan δ).
    // Thermal values (ρ kg/m³, c_p J/(kg K)) with their own source after the dielectric
    // one.
    let diel = |name: &'static str,
                eps_real: f64,
                eps_imag: f64,
                source: &'static str,
                (rho, cp, thermal): (f64, f64, &'static str)| MaterialEntry {
        name,
        kind: MaterialKind::Dielectric,
        values: MaterialValues::Dielectric(
            Material::constant(name, eps_real, eps_imag).with_thermal(rho, cp, thermal),
        ),
        source,
    };
    let metal = |name: &'static str, conductivity: f64, source: &'static str| MaterialEntry {
        name,
        kind: MaterialKind::Metal,
        values: MaterialValues::Metal { conductivity },
        source,
    };
    vec![
        MaterialEntry {
            name: "water",
            kind: MaterialKind::Dielectric,
            values: MaterialValues::Dielectric(Material::water(WATER_DEFAULT_TEMPERATURE_C)),
            source: "single-Debye model with temperature-dependent parameters, Kaatze, \
                     J. Chem. Eng. Data 34 (1989) 371 (coefficients from memory); \
                     load key `temperature` in °C, 0-100, default 20",
        },
        diel(
            "ice",
            3.2,
            3.2 * 9e-4,
            "eps' 3.2, tan d 0.0009 (ice near -12 °C, 3 GHz): von Hippel, Dielectric \
             Materials and Applications (1954), tables; from memory",
            (917.0, 2050.0, "ρ 917 kg/m³, c_p 2050 J/(kg K) (ice near 0 °C): CRC Handbook, from memory"),
        ),
        diel(
            "raw beef",
            52.4,
            17.4,
            "eps' 52.4, eps'' 17.4 (lean raw beef, ~25 °C, 2.45 GHz): food dielectric \
             tables; from memory; real meat varies by +-20 % with fat and water content",
            (1050.0, 3500.0, "ρ 1050 kg/m³, c_p 3500 J/(kg K) (lean raw meat): food property tables, from memory; varies with fat and water content"),
        ),
        diel(
            "potato",
            57.0,
            17.0,
            "eps' 57, eps'' 17 (raw potato, ~25 °C, 2.45 GHz): food dielectric tables; \
             from memory; varies with variety and moisture",
            (1080.0, 3600.0, "ρ 1080 kg/m³, c_p 3600 J/(kg K) (raw potato): food property tables, from memory"),
        ),
        diel(
            "ptfe",
            2.08,
            2.08 * 4e-4,
            "eps' 2.08, tan d 0.0004 (Teflon at 10 GHz): Pozar, Microwave Engineering, \
             4th ed., appendix table of dielectric constants and loss tangents; from memory",
            (2200.0, 1000.0, "ρ 2200 kg/m³, c_p 1000 J/(kg K): typical data-sheet values, from memory"),
        ),
        diel(
            "polypropylene",
            2.25,
            2.25 * 5e-4,
            "eps' 2.25, tan d 0.0005: typical data-sheet values; from memory",
            (905.0, 1900.0, "ρ 905 kg/m³, c_p 1900 J/(kg K): typical data-sheet values, from memory"),
        ),
        diel(
            "borosilicate glass",
            4.6,
            4.6 * 5e-3,
            "eps' 4.6, tan d 0.005 (borosilicate 3.3 glass, GHz range): typical \
             data-sheet values; from memory",
            (2230.0, 830.0, "ρ 2230 kg/m³, c_p 830 J/(kg K) (borosilicate 3.3): typical data-sheet values, from memory"),
        ),
        diel(
            "alumina",
            9.8,
            9.8 * 1e-4,
            "eps' 9.8, tan d 0.0001 (99.5 % alumina at 10 GHz): Pozar, Microwave \
             Engineering, 4th ed., appendix table of dielectric constants and loss \
             tangents; from memory",
            (3900.0, 880.0, "ρ 3900 kg/m³, c_p 880 J/(kg K) (99.5 % alumina): typical data-sheet values, from memory"),
        ),
        diel(
            "air",
            1.0,
            0.0,
            "eps' 1, lossless: common practice, no source (dry air is about 1.0006)",
            (1.204, 1005.0, "ρ 1.204 kg/m³, c_p 1005 J/(kg K) (dry air, 20 °C, 1 atm): CRC Handbook, from memory"),
        ),
        metal(
            "copper",
            5.8e7,
            "5.8e7 S/m: Pozar, Microwave Engineering, 4th ed., appendix table of \
             conductivities lists 5.813e7 (from memory), rounded",
        ),
        metal(
            "aluminium",
            3.816e7,
            "3.816e7 S/m: Pozar, Microwave Engineering, 4th ed., appendix table of \
             conductivities; from memory",
        ),
        metal(
            "stainless steel 304",
            1.39e6,
            "1.39e6 S/m = 1 / (72 uOhm cm), typical data-sheet resistivity of AISI 304 \
             at 20 °C; from memory",
        ),
    ]
}

/// Looks up a built-in material by name (case-insensitive; `_` and `-` match a space;
/// "aluminum" and "teflon" are accepted as spellings of "aluminium" and "ptfe").
pub fn builtin(name: &str) -> Option<MaterialEntry> {
    let key = normalise(name);
    let key = match key.as_str() {
        "aluminum" => "aluminium".to_string(),
        "teflon" => "ptfe".to_string(),
        "stainless steel" | "ss304" | "stainless 304" => "stainless steel 304".to_string(),
        _ => key,
    };
    builtin_list().into_iter().find(|e| e.name == key)
}

/// Names of the built-in materials of one kind, in list order.
pub fn builtin_names(kind: MaterialKind) -> Vec<&'static str> {
    builtin_list()
        .into_iter()
        .filter(|e| e.kind == kind)
        .map(|e| e.name)
        .collect()
}

fn normalise(name: &str) -> String {
    name.trim()
        .to_lowercase()
        .replace(['_', '-'], " ")
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
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

    #[test]
    fn builtin_lookup_and_list() {
        let list = builtin_list();
        for e in &list {
            assert!(!e.source.is_empty());
            assert_eq!(builtin(e.name).map(|b| b.name), Some(e.name));
        }
        assert_eq!(builtin("Aluminum").map(|e| e.name), Some("aluminium"));
        assert_eq!(builtin("raw_beef").map(|e| e.name), Some("raw beef"));
        assert!(builtin("unobtainium").is_none());
        assert!(builtin_names(MaterialKind::Metal).contains(&"copper"));
    }
}
