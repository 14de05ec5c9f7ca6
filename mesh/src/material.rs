//! Dielectric and metal materials, and the built-in material list.
//!
//! Relative permittivity follows the e^{jωt} convention εr = ε′ − jε″ with ε″ ≥ 0
//! for a lossy medium; a conductivity σ adds σ/(ω ε0) to ε″.
//!
//! Every built-in entry carries a `source` string that says where its numbers come from:
//! a named publication, or "from memory" when the value was recalled rather than read
//! from the cited table, or "common practice, no source".

use crate::constants::EPS0;
pub use crate::water::{
    water_debye, water_debye_params, water_double_debye, WaterDebyeParams,
    WATER_DEFAULT_TEMPERATURE_C, WATER_TEMPERATURE_RANGE_C,
};

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

    /// Liquid water at `temperature_c` (°C), single-Debye model ([`crate::water`]).
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
    /// Frequency and temperature the values hold at, and which dependence is modelled.
    pub valid_at: &'static str,
}

/// `valid_at` of the entries with constant values measured near 2.45 GHz.
const AT_2_45_CONSTANT: &str = "2.45 GHz, room temperature; no frequency or temperature \
    dependence modelled (the same values at every frequency)";

/// The built-in material list, dielectrics first, then metals.
///
/// Dielectric values are constants measured near 2.45 GHz unless `valid_at` says
/// otherwise (water has its frequency and temperature model); food values vary widely
/// with composition and temperature.
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
        valid_at: AT_2_45_CONSTANT,
    };
    let metal = |name: &'static str, conductivity: f64, source: &'static str| MaterialEntry {
        name,
        kind: MaterialKind::Metal,
        values: MaterialValues::Metal { conductivity },
        source,
        valid_at: "DC conductivity at 20 °C, used at every frequency (Rs = √(ωμ0/2σ))",
    };
    vec![
        MaterialEntry {
            name: "water",
            kind: MaterialKind::Dielectric,
            values: MaterialValues::Dielectric(Material::water(WATER_DEFAULT_TEMPERATURE_C)),
            source: "single-Debye model with temperature-dependent parameters, Kaatze, \
                     J. Chem. Eng. Data 34 (1989) 371 (coefficients from memory); checked \
                     against the double-Debye model of Liebe, Hufford & Manabe, Int. J. \
                     Infrared Millim. Waves 12 (1991) 659 (from memory): within 0.2 at \
                     2.45 GHz, 20-25 °C; load key `temperature` in °C, 0-100, default 20",
            valid_at: "any frequency (Debye relaxation) and 0-100 °C (fitted over 0-60 °C); \
                       pure water, no ionic conduction",
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
            52.5,
            17.5,
            "eps' 52.5, eps'' 17.5 (raw beef at +5 °C, 2450 MHz): To et al. (1974), as \
             tabulated in a review of food dielectric data, Table 4 (J. Food Sci. Technol. 48 (2011) 387, doi:10.1007/s13197-011-0263-x, \
             read 2026-12-03; the same row gives 56 and 21 at 915 MHz); real meat \
             varies by +-20 % with fat and water content",
            (1050.0, 3500.0, "ρ 1050 kg/m³, c_p 3500 J/(kg K) (lean raw meat): food property tables, from memory; varies with fat and water content"),
        ),
        diel(
            "potato",
            57.0,
            17.0,
            "eps' 57, eps'' 17 (potato, 79 % moisture, 2.45 GHz; temperature not stated): \
             Table 1.2 of the book Introduction to Advanced Food Process Engineering (ch. 1), \
             citing Datta & Ramaswamy in Microwave Technology for Food Applications \
             (Marcel Dekker, 2001), i.e. the Datta & Anantheswaran (eds.) handbook (read \
             2026-12-03 in that secondary table; the handbook itself not seen); varies \
             with variety and moisture",
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
            "soda lime glass",
            6.0,
            6.0 * 0.01,
            "eps' 6.0, tan d 0.01 (soda-lime window and container glass, GHz range): \
             from memory, not checked against a table (von Hippel, Dielectric Materials \
             and Applications, 1954, lists soda-lime glasses with eps' about 6-7 and tan d \
             of order 0.01 at 3 GHz, from memory); real glasses vary with composition",
            (2500.0, 840.0, "ρ 2500 kg/m³, c_p 840 J/(kg K) (soda-lime glass): typical data-sheet values, from memory"),
        ),
        diel(
            "mica",
            5.4,
            5.4 * 3e-4,
            "eps' 5.4, tan d 0.0003 (ruby muscovite mica, 3 GHz): von Hippel, Dielectric \
             Materials and Applications (1954), tables; from memory (the waveguide cover \
             sheet of ovens is often a mica composite with a binder, which is lossier)",
            (2800.0, 880.0, "ρ 2800 kg/m³, c_p 880 J/(kg K) (muscovite): typical data-sheet values, from memory"),
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
    fn builtin_lookup_and_list() {
        let list = builtin_list();
        for e in &list {
            assert!(!e.source.is_empty());
            assert!(!e.valid_at.is_empty());
            assert_eq!(builtin(e.name).map(|b| b.name), Some(e.name));
        }
        assert_eq!(builtin("Aluminum").map(|e| e.name), Some("aluminium"));
        assert_eq!(builtin("raw_beef").map(|e| e.name), Some("raw beef"));
        assert!(builtin("unobtainium").is_none());
        assert!(builtin_names(MaterialKind::Metal).contains(&"copper"));
        assert_eq!(
            builtin("Soda_lime glass").map(|e| e.name),
            Some("soda lime glass")
        );
        assert_eq!(builtin("mica").map(|e| e.name), Some("mica"));
    }
}
