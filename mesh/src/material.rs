//! Dielectric and metal materials, and the built-in material list.
//!
//! Relative permittivity follows the e^{jωt} convention εr = ε′ − jε″ with ε″ ≥ 0
//! for a lossy medium; a conductivity σ adds σ/(ω ε0) to ε″.
//!
//! Every built-in entry carries a `source` string that says where its numbers come from:
//! a named publication, or "from memory" when the value was recalled rather than read
//! from the cited table, or "common practice, no source".

use crate::constants::EPS0;
pub use crate::ice::{ice_maetzler, ICE_DEFAULT_TEMPERATURE_C, ICE_TEMPERATURE_RANGE_C};
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
    /// Pure ice, Mätzler's 1998 model with temperature ([`crate::ice`]).
    IceMaetzler { temperature_c: f64 },
    /// ε′ and ε″ read from a published table at a few frequencies (one temperature),
    /// interpolated linearly in frequency between the rows and held at the end rows
    /// outside them ([`table_permittivity`]).
    Tabulated { rows: Vec<TableRow> },
}

/// One row of a published permittivity table: frequency (Hz), ε′, ε″.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TableRow {
    pub freq_hz: f64,
    pub eps_real: f64,
    pub eps_imag: f64,
}

/// (ε′, ε″) at `freq_hz` from table rows sorted by frequency: linear interpolation in
/// frequency between neighbouring rows; below the first row or above the last, that
/// row's values (no extrapolation: a table says nothing outside its range).
pub fn table_permittivity(rows: &[TableRow], freq_hz: f64) -> (f64, f64) {
    let (Some(first), Some(last)) = (rows.first(), rows.last()) else {
        return (1.0, 0.0);
    };
    if freq_hz.is_nan() || freq_hz <= first.freq_hz {
        return (first.eps_real, first.eps_imag);
    }
    if freq_hz >= last.freq_hz {
        return (last.eps_real, last.eps_imag);
    }
    for w in rows.windows(2) {
        let (a, b) = (w[0], w[1]);
        if freq_hz <= b.freq_hz {
            let s = (freq_hz - a.freq_hz) / (b.freq_hz - a.freq_hz);
            return (
                a.eps_real + s * (b.eps_real - a.eps_real),
                a.eps_imag + s * (b.eps_imag - a.eps_imag),
            );
        }
    }
    (last.eps_real, last.eps_imag)
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
            Dielectric::IceMaetzler { temperature_c } => ice_maetzler(*temperature_c, freq_hz),
            Dielectric::Tabulated { rows } => table_permittivity(rows, freq_hz),
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
            4184.0,
            "ρ 998.2 kg/m³, c_p 75.38 J/(mol K) = 4184 J/(kg K) with M = 18.01527 g/mol \
             (liquid water at 20 °C): table of water's physical properties against \
             temperature, M. Chaplin, Water Structure and Science, \
             http://www1.lsbu.ac.uk/water/data1.html (read 2026-12-04; M from the \
             Engineering ToolBox page \"Water - Thermophysical Properties\"). Changed \
             from c_p 4182 (from memory). Taken constant: by the same table ρ c_p is \
             0.9 % higher at 0 °C and 2.3 % lower at 80 °C",
        )
    }

    /// Pure ice at `temperature_c` (°C), Mätzler's model ([`crate::ice`]).
    pub fn ice(temperature_c: f64) -> Material {
        Material {
            name: "ice".to_string(),
            dielectric: Dielectric::IceMaetzler { temperature_c },
            permeability: 1.0,
            thermal: None,
        }
        .with_thermal(917.0, 2050.0, ICE_THERMAL_SOURCE)
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
    /// Frequency span (Hz) the source covers (one frequency: both ends equal); None
    /// when the value holds at every frequency (vacuum, DC conductivity).
    pub range_hz: Option<[f64; 2]>,
}

impl MaterialEntry {
    /// Whether `freq_hz` lies outside the frequency span the entry's source covers
    /// (constants: more than 5 % away from their one frequency, a spread below which
    /// the permittivity of these materials changes little; common practice, no source).
    pub fn outside_source_range(&self, freq_hz: f64) -> bool {
        match self.range_hz {
            None => false,
            Some([lo, hi]) => freq_hz < lo * 0.95 || freq_hz > hi * 1.05,
        }
    }
}

/// Where the ice entry's density and specific heat come from.
const ICE_THERMAL_SOURCE: &str = "ρ 917 kg/m³ (ice at 0 °C), as read 2026-12-04 on the data \
    page https://wfrjr.com/data/formula/data/water.html; c_p 2050 J/(kg K): from memory, \
    not verified against a table (the pages read give 2.06 kJ/(kg K) there and 2.108 on the \
    Engineering ToolBox page \"Water - Thermophysical Properties\", neither with a \
    temperature)";

/// Phrase for the `valid_at` of entries whose source gives one frequency.
const CONSTANT_NO_DEPENDENCE: &str = "no frequency or temperature dependence modelled: the \
    same values at every frequency and temperature";

/// 915 MHz and 2450 MHz rows of raw beef at +5 °C, To et al. (1974) as tabulated in
/// Table 4 of the review cited in the entry.
const RAW_BEEF_ROWS: [TableRow; 2] = [
    TableRow {
        freq_hz: 915e6,
        eps_real: 56.0,
        eps_imag: 21.0,
    },
    TableRow {
        freq_hz: 2450e6,
        eps_real: 52.5,
        eps_imag: 17.5,
    },
];

/// The built-in material list, dielectrics first, then metals.
///
/// Each dielectric's `valid_at` says at which frequency and temperature its source gives
/// it and how values at other frequencies follow: water has its model, raw beef is
/// interpolated in its table, the others are constants (the same numbers at every
/// frequency). `range_hz` is the frequency span the source covers. Food values vary
/// widely with composition and temperature.
pub fn builtin_list() -> Vec<MaterialEntry> {
    // Dielectrics are stored as ε′ and ε″ (ε″ = ε′ tan δ where the source gives tan δ).
    // Thermal values (ρ kg/m³, c_p J/(kg K)) with their own source after the dielectric
    // one.
    let diel = |name: &'static str,
                (eps_real, eps_imag, at_hz): (f64, f64, f64),
                source: &'static str,
                valid_at: &'static str,
                (rho, cp, thermal): (f64, f64, &'static str)| MaterialEntry {
        name,
        kind: MaterialKind::Dielectric,
        values: MaterialValues::Dielectric(
            Material::constant(name, eps_real, eps_imag).with_thermal(rho, cp, thermal),
        ),
        source,
        valid_at,
        range_hz: Some([at_hz, at_hz]),
    };
    let metal = |name: &'static str, conductivity: f64, source: &'static str| MaterialEntry {
        name,
        kind: MaterialKind::Metal,
        values: MaterialValues::Metal { conductivity },
        source,
        valid_at: "DC conductivity at 20 °C, used at every frequency (Rs = √(ωμ0/2σ))",
        range_hz: None,
    };
    let beef = Material {
        name: "raw beef".to_string(),
        dielectric: Dielectric::Tabulated {
            rows: RAW_BEEF_ROWS.to_vec(),
        },
        permeability: 1.0,
        thermal: None,
    }
    .with_thermal(
        1050.0,
        3500.0,
        "ρ 1050 kg/m³, c_p 3500 J/(kg K) (lean raw meat): from memory, not verified \
         against a table; varies with fat and water content",
    );
    vec![
        MaterialEntry {
            name: "water",
            kind: MaterialKind::Dielectric,
            values: MaterialValues::Dielectric(Material::water(WATER_DEFAULT_TEMPERATURE_C)),
            source: "single-Debye model of Kaatze, J. Chem. Eng. Data 34 (1989) 371 \
                     (measured range read from the paper's abstract; the temperature \
                     fits' coefficients from memory, not verified against the paper); \
                     checked at 2.45 GHz against three independent published fits, read \
                     from public transcriptions (2026-12-04): Ellison, J. Phys. Chem. \
                     Ref. Data 36 (2007) 1, Table 2 and eq. 17 (0-100 °C): within 0.5 % \
                     in ε′ over 0-100 °C and 2.3 % in ε″ over 0-60 °C (7.8 % at 100 °C); \
                     Meissner & Wentz, IEEE Trans. Geosci. Remote Sens. 42 (2004) 1836, \
                     Table III and eqs. 6-8 (-20-40 °C): within 0.2 % and 2.4 % over \
                     0-40 °C; Liebe, Hufford & Manabe, Int. J. Infrared Millim. Waves 12 \
                     (1991) 659: within 1 % and 4 % over 0-40 °C; load key `temperature` \
                     in °C, 0-100, default 20",
            valid_at: "any frequency (Debye relaxation; Kaatze measured 1.1-57 GHz) and \
                       the load's temperature (Kaatze measured 0-50 °C and fitted \
                       -4.1-60 °C; 60-100 °C is an extrapolation); pure water, no ionic \
                       conduction",
            range_hz: Some([1.1e9, 57e9]),
        },
        MaterialEntry {
            name: "ice",
            kind: MaterialKind::Dielectric,
            values: MaterialValues::Dielectric(Material::ice(ICE_DEFAULT_TEMPERATURE_C)),
            source: "model of C. Mätzler, Microwave properties of ice and snow, in B. \
                     Schmitt et al. (eds.), Solar System Ices (Kluwer, 1998) 241: eps' = \
                     3.1884 + 9.1e-4 (T - 273 K), eps'' = alpha/f + beta f, as transcribed \
                     in the routine epsice.m of the atmlab library (read 2026-12-04; the \
                     chapter itself not seen); at 2.45 GHz, -10 °C: 3.179 - j2.89e-4 (tan d \
                     9.1e-5). eps' agrees with 3.17 +- 0.07, independent of frequency, that \
                     Matsuoka, Fujita & Mae, J. Appl. Phys. (1996), S0021-8979(96)01322-9, \
                     give from the reviews of Evans and of Warren (read in that paper's \
                     introduction). The ice model of Liebe, Hufford & Manabe (1993), as \
                     transcribed in atmlab's eps_ice_liebe93.m (read 2026-12-04), gives \
                     3.15 - j2.0e-4 at the same point: the loss of pure ice is uncertain by \
                     about 1.5x. Changed from the constant eps' 3.2, tan d 9e-4 (recalled as \
                     von Hippel, from memory): pure ice is 5-10 times less lossy than that; \
                     frozen food, with unfrozen brine in it, is far lossier than either",
            valid_at: "any frequency in the model's 10 MHz-3 THz and the load's \
                       temperature (key `temperature`, -60-0 °C, default -10 °C; by the \
                       model eps'' at 2.45 GHz is 1.9e-4 at -20 °C and 4.8e-4 at 0 °C); \
                       pure ice, no brine",
            range_hz: Some(crate::ice::ICE_FREQUENCY_RANGE_HZ),
        },
        MaterialEntry {
            name: "raw beef",
            kind: MaterialKind::Dielectric,
            values: MaterialValues::Dielectric(beef),
            source: "eps' 56, eps'' 21 at 915 MHz and 52.5, 17.5 at 2450 MHz (raw beef at \
                     +5 °C): To et al. (1974), as tabulated in Table 4 (dielectric \
                     property data for red meat) of a review of food dielectric data, \
                     J. Food Sci. Technol. 48 (2011) 387, doi:10.1007/s13197-011-0263-x \
                     (read 2026-12-03); real meat varies by +-20 % with fat and water \
                     content",
            valid_at: "915-2450 MHz, interpolated linearly in frequency between the two \
                       table rows, held at the end rows outside them; +5 °C only (the \
                       table row has one temperature), no temperature dependence modelled",
            range_hz: Some([915e6, 2450e6]),
        },
        diel(
            "potato",
            (57.0, 17.0, 2.45e9),
            "eps' 57, eps'' 17 (potato, 79 % moisture, 2.45 GHz; temperature not stated): \
             Table 1.2 of the book Introduction to Advanced Food Process Engineering (ch. 1), \
             citing Datta & Ramaswamy in Microwave Technology for Food Applications \
             (Marcel Dekker, 2001), i.e. the Datta & Anantheswaran (eds.) handbook (read \
             2026-12-03 in that secondary table; the handbook itself not seen); varies \
             with variety and moisture",
            "2.45 GHz, temperature not stated by the table; no frequency or temperature \
             dependence modelled: the only table read gives one frequency, so the same \
             values at every frequency and temperature",
            (1080.0, 3600.0, "ρ 1080 kg/m³, c_p 3600 J/(kg K) (raw potato): from memory, not verified against a table"),
        ),
        diel(
            "ptfe",
            (2.1, 2.1 * 3e-4, 2.45e9),
            "eps' 2.1, tan d 0.0003 (PTFE, 2.45 GHz): Rohde & Schwarz application note \
             RAC0607-0019 as listed in the compilation \"Permittivity Data - Plastic \
             Materials\", http://ael.chungbuk.ac.kr/ael/ref/permittivity_data/1.htm (read \
             2026-12-04; the note itself not seen), which also lists 2.05, 0.0002 at \
             10 GHz from Riddle et al., IEEE Trans. Microw. Theory Tech. 51(3) (2003) \
             727. Changed from eps' 2.08, tan d 0.0004 at 10 GHz (from memory)",
            "2.45 GHz, room temperature; no frequency or temperature dependence modelled: \
             the same values at every frequency and temperature",
            (2200.0, 1000.0, "ρ 2200 kg/m³, c_p 1000 J/(kg K): from memory, not verified against a table"),
        ),
        diel(
            "polyethylene",
            (2.37, 2.37 * 2e-4, 11.3e9),
            "eps' 2.37, tan d 0.0002 (high-density polyethylene, 11.3 GHz): Riddle et \
             al., IEEE Trans. Microw. Theory Tech. 51(3) (2003) 727, as listed in the \
             compilation \"Permittivity Data - Plastic Materials\", \
             http://ael.chungbuk.ac.kr/ael/ref/permittivity_data/1.htm (read 2026-12-04; \
             the paper itself not seen), which also lists eps' 2.34 for HDPE with no \
             dispersion from 1 MHz to 40 GHz (Seeger); low-density grades are lower",
            "11.3 GHz, room temperature; no frequency or temperature dependence \
             modelled: the same values at every frequency and temperature",
            (950.0, 1900.0, "ρ 950 kg/m³, c_p 1900 J/(kg K) (HDPE): from memory, not verified against a table"),
        ),
        diel(
            "polypropylene",
            (2.27, 2.27 * 1e-4, 9.4e9),
            "eps' 2.27, tan d 0.0001 (polypropylene, 9.4 GHz): Riddle et al., IEEE \
             Trans. Microw. Theory Tech. 51(3) (2003) 727, as listed in the compilation \
             \"Permittivity Data - Plastic Materials\", \
             http://ael.chungbuk.ac.kr/ael/ref/permittivity_data/1.htm (read 2026-12-04; \
             the paper itself not seen). Changed from eps' 2.25, tan d 0.0005 (from \
             memory); filled or coloured food-container grades can be lossier",
            "9.4 GHz, room temperature; no frequency or temperature dependence modelled: \
             the same values at every frequency and temperature",
            (905.0, 1900.0, "ρ 905 kg/m³, c_p 1900 J/(kg K): from memory, not verified against a table"),
        ),
        diel(
            "borosilicate glass",
            (4.6, 4.6 * 5e-3, 2.45e9),
            "eps' 4.6, tan d 0.005 (borosilicate 3.3 glass, GHz range): from memory, not \
             verified against a table; the pages read give only ranges for borosilicate \
             glasses in general, eps' 4.1-6.7 and tan d 6e-5-0.01 at 1 MHz (matmatch.com, \
             \"General Borosilicate Glass\", read 2026-12-04), no 2.45 GHz value",
            CONSTANT_NO_DEPENDENCE,
            (2230.0, 830.0, "ρ 2230 kg/m³ (borosilicate 3.3): from memory, not verified against a table; c_p 830 J/(kg K): as read 2026-12-04 in the compilation makeitfrom.com, \"Borosilicate Glass\" (which gives ρ only as 2.2-2.6 g/cm³)"),
        ),
        diel(
            "soda lime glass",
            (6.0, 6.0 * 0.01, 3e9),
            "eps' 6.0, tan d 0.01 (soda-lime window and container glass, near 3 GHz): from \
             memory, not verified against a table (recalled as von Hippel, Dielectric \
             Materials and Applications, 1954, listing soda-lime glasses at eps' about \
             6-7, tan d of order 0.01 at 3 GHz); no published table of a soda-lime glass \
             at microwave frequencies was found; real glasses vary with composition",
            "about 3 GHz, room temperature; no frequency or temperature dependence \
             modelled: the same values at every frequency and temperature",
            (2500.0, 840.0, "ρ 2500 kg/m³, c_p 840 J/(kg K) (soda-lime glass): from memory, not verified against a table"),
        ),
        diel(
            "mica",
            (5.4, 5.4 * 3e-4, 3e9),
            "eps' 5.4, tan d 0.0003 (ruby muscovite mica, 3 GHz): from memory, not \
             verified against a table (recalled as von Hippel, Dielectric Materials and \
             Applications, 1954; no table of mica at microwave frequencies was found); \
             the waveguide cover sheet of ovens is often a mica composite with a binder, \
             which is lossier",
            "3 GHz, room temperature; no frequency or temperature dependence modelled: \
             the same values at every frequency and temperature",
            (2800.0, 880.0, "ρ 2800 kg/m³, c_p 880 J/(kg K) (muscovite): from memory, not verified against a table"),
        ),
        diel(
            "alumina",
            (9.8, 9.8 * 1e-4, 10e9),
            "eps' 9.8, tan d 0.0001 (99.5 % alumina ceramic at 10 GHz): from memory, not \
             verified against a table (recalled as Pozar, Microwave Engineering, 4th ed., \
             appendix table); single-crystal Al2O3 has eps' 9.34 across and 11.54 along \
             the c axis at 298 K, 100 Hz-8 GHz (table \"Permittivity (dielectric \
             constant) of inorganic solids\", H. P. R. Frederikse, CRC Handbook of \
             Chemistry and Physics, read 2026-12-04 in a public copy), between which a \
             ceramic's eps' lies",
            "10 GHz, room temperature; no frequency or temperature dependence modelled: \
             the same values at every frequency and temperature",
            (3900.0, 880.0, "ρ 3900 kg/m³, c_p 880 J/(kg K) (99.5 % alumina): from memory, not verified against a table"),
        ),
        MaterialEntry {
            range_hz: None,
            ..diel(
                "air",
                (1.0, 0.0, 2.45e9),
                "eps' 1, lossless: common practice, no source (dry air is about 1.0006)",
                "every frequency and temperature (vacuum value)",
                (1.204, 1005.0, "ρ 1.204 kg/m³, c_p 1005 J/(kg K) (dry air, 20 °C, 1 atm): from memory, not verified against a table"),
            )
        },
        metal(
            "copper",
            5.8e7,
            "5.80e7 S/m (annealed copper, 1.72e-8 Ohm m at 20 °C): \"Table of Resistivity \
             and Conductivity at 20°C\", https://kutayzorlu.com (a copy of the table of \
             the encyclopedia article \"Electrical resistivity and conductivity\"; read \
             2026-12-04), which gives 5.96e7 for pure copper; the annealed value is the \
             one for sheet and machined walls (unchanged; it was 5.8e7 from memory)",
        ),
        metal(
            "aluminium",
            3.5e7,
            "3.5e7 S/m (aluminium, 2.82e-8 Ohm m at 20 °C): \"Table of Resistivity and \
             Conductivity at 20°C\", https://kutayzorlu.com (a copy of the table of the \
             encyclopedia article \"Electrical resistivity and conductivity\"; read \
             2026-12-04). Changed from 3.816e7 (recalled as Pozar, from memory): Rs is \
             4 % higher; wrought alloys are lower still, give { conductivity = .. } for \
             a known alloy",
        ),
        metal(
            "stainless steel 304",
            1.39e6,
            "1.39e6 S/m = 1 / (7.2e-5 Ohm cm): AISI Type 304 material data sheet (ASM), \
             https://www.scribd.com/document/416534641/304-Stainless-Steel-pdf (read \
             2026-12-04): electrical resistivity 7.2e-5 Ohm cm at 20 °C, magnetic \
             permeability 1.008 at room temperature (taken as 1 here; cold work makes \
             304 slightly magnetic)",
        ),
    ]
}

/// Looks up a built-in material by name (case-insensitive; `_` and `-` match a space;
/// "aluminum", "teflon" and "hdpe" are accepted for "aluminium", "ptfe" and "polyethylene").
pub fn builtin(name: &str) -> Option<MaterialEntry> {
    let key = normalise(name);
    let key = match key.as_str() {
        "aluminum" => "aluminium".to_string(),
        "teflon" => "ptfe".to_string(),
        "stainless steel" | "ss304" | "stainless 304" => "stainless steel 304".to_string(),
        "hdpe" => "polyethylene".to_string(),
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

    /// Raw beef against the rows it was read from: To et al. (1974) in Table 4 of
    /// J. Food Sci. Technol. 48 (2011) 387 (915 MHz: 56, 21; 2450 MHz: 52.5, 17.5, at
    /// +5 °C). At the rows the values are the table's (exact: they are stored as read);
    /// between them linear interpolation, e.g. at 1682.5 MHz (midpoint) 54.25, 19.25
    /// (worked here); outside, the end rows.
    #[test]
    fn raw_beef_follows_its_table() {
        let Some(MaterialEntry {
            values: MaterialValues::Dielectric(m),
            ..
        }) = builtin("raw beef")
        else {
            panic!("raw beef is a built-in dielectric");
        };
        let close =
            |a: (f64, f64), b: (f64, f64)| (a.0 - b.0).abs() < 1e-12 && (a.1 - b.1).abs() < 1e-12;
        assert!(close(m.permittivity(915e6), (56.0, 21.0)));
        assert!(close(m.permittivity(2450e6), (52.5, 17.5)));
        assert!(close(m.permittivity(1682.5e6), (54.25, 19.25)));
        assert!(close(m.permittivity(100e6), (56.0, 21.0)));
        assert!(close(m.permittivity(10e9), (52.5, 17.5)));
    }

    /// Every entry's strings say where the numbers come from: a citation read, or "from
    /// memory, not verified against a table", or "common practice, no source"; and a
    /// constant says that it has no frequency or temperature dependence.
    #[test]
    fn every_source_is_read_or_marked_from_memory() {
        for e in builtin_list() {
            let read = e.source.contains("read ") || e.source.contains("read from");
            let memory = e
                .source
                .contains("from memory, not verified against a table");
            let practice = e.source.contains("common practice, no source");
            assert!(read || memory || practice, "{}: {}", e.name, e.source);
            if let MaterialValues::Dielectric(m) = &e.values {
                if matches!(m.dielectric, Dielectric::Constant { .. }) && e.name != "air" {
                    assert!(
                        e.valid_at
                            .contains("no frequency or temperature dependence"),
                        "{}: {}",
                        e.name,
                        e.valid_at
                    );
                }
                let th = m
                    .thermal
                    .as_ref()
                    .expect("every built-in dielectric has ρ, c_p");
                assert!(
                    th.source
                        .contains("from memory, not verified against a table")
                        || th.source.contains("read "),
                    "{}: {}",
                    e.name,
                    th.source
                );
            }
        }
    }

    /// The constants are the numbers of the rows their sources give (ε′ and tan δ as
    /// listed, ε″ = ε′ tan δ), so a changed value must change its source string too:
    /// PTFE 2.1/0.0003 at 2.45 GHz (R&S note RAC0607-0019), HDPE 2.37/0.0002 at 11.3 GHz
    /// and polypropylene 2.27/0.0001 at 9.4 GHz (Riddle et al. 2003), all three as listed
    /// in the compilation "Permittivity Data - Plastic Materials" (ael.chungbuk.ac.kr);
    /// copper 5.80e7 and aluminium 3.5e7 S/m ("Table of Resistivity and Conductivity at
    /// 20°C"); stainless 304 1/(7.2e-5 Ω cm) (ASM data sheet). Exact up to the product
    /// ε′ tan δ (1e-12 relative).
    #[test]
    fn constants_are_their_sources_rows() {
        let diel = |name: &str| match builtin(name).map(|e| e.values) {
            Some(MaterialValues::Dielectric(m)) => m.permittivity(2.45e9),
            _ => panic!("{name} is a built-in dielectric"),
        };
        let sigma = |name: &str| match builtin(name).map(|e| e.values) {
            Some(MaterialValues::Metal { conductivity }) => conductivity,
            _ => panic!("{name} is a built-in metal"),
        };
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs();
        for (name, er, tand) in [
            ("ptfe", 2.1, 3e-4),
            ("polyethylene", 2.37, 2e-4),
            ("polypropylene", 2.27, 1e-4),
        ] {
            let (r, i) = diel(name);
            assert!(close(r, er) && close(i, er * tand), "{name}: {r}, {i}");
        }
        assert!(close(sigma("copper"), 5.80e7));
        assert!(close(sigma("aluminium"), 3.5e7));
        // 7.2e-5 Ω cm = 7.2e-7 Ω m: σ = 1.3889e6 S/m, stored rounded to 1.39e6 (0.08 %).
        assert!((sigma("stainless steel 304") * 7.2e-7 - 1.0).abs() < 1e-3);
        assert_eq!(builtin("HDPE").map(|e| e.name), Some("polyethylene"));
    }

    /// The ice entry is Mätzler's model at −10 °C, and prints the values its source
    /// string quotes (3.179 − j2.89e-4 at 2.45 GHz; tolerance half a unit of the last
    /// quoted digit). The model itself is checked in `ice.rs`.
    #[test]
    fn ice_entry_is_the_model_at_minus_10_c() {
        let Some(MaterialValues::Dielectric(m)) = builtin("ice").map(|e| e.values) else {
            panic!("ice is a built-in dielectric");
        };
        assert_eq!(
            m.dielectric,
            Dielectric::IceMaetzler {
                temperature_c: -10.0
            }
        );
        let (r, i) = m.permittivity(2.45e9);
        assert!((r - 3.179).abs() <= 5e-4, "{r}");
        assert!((i - 2.89e-4).abs() <= 5e-7, "{i}");
        assert_eq!(
            Material::ice(-20.0).permittivity(2.45e9),
            ice_maetzler(-20.0, 2.45e9)
        );
    }

    #[test]
    fn source_range_flags_far_frequencies() {
        let potato = builtin("potato").unwrap();
        assert!(!potato.outside_source_range(2.45e9));
        assert!(potato.outside_source_range(0.915e9));
        let beef = builtin("raw beef").unwrap();
        assert!(!beef.outside_source_range(0.915e9));
        assert!(!beef.outside_source_range(2.45e9));
        assert!(beef.outside_source_range(5.8e9));
        assert!(!builtin("copper").unwrap().outside_source_range(10e9));
    }
}
