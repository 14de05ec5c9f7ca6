//! `antinode materials`: the built-in material list at a frequency and temperature.

use antinode_mesh::material::{self, Material, MaterialValues};
use antinode_solver::post::losses::surface_resistance;
use antinode_solver::problem::ghz_to_hz;
use anyhow::{bail, Result};
use clap::Args;

#[derive(Args)]
pub struct MaterialsArgs {
    /// Frequency at which to evaluate permittivity and surface resistance, GHz.
    #[arg(short = 'f', long, value_name = "GHZ", default_value_t = 2.45)]
    pub frequency: f64,
    /// Temperature of water, °C (0–100); ice is shown at −10 °C, the other entries at the
    /// temperature their source names (a load's `temperature` sets water's or ice's).
    #[arg(short = 't', long, value_name = "C", default_value_t = material::WATER_DEFAULT_TEMPERATURE_C)]
    pub temperature: f64,
}

pub fn run(args: &MaterialsArgs) -> Result<()> {
    if !(args.frequency.is_finite() && args.frequency > 0.0) {
        bail!(
            "--frequency {} GHz must be a positive number",
            args.frequency
        );
    }
    let [tlo, thi] = material::WATER_TEMPERATURE_RANGE_C;
    if !(args.temperature.is_finite() && (tlo..=thi).contains(&args.temperature)) {
        bail!(
            "--temperature {} °C is outside the water model's range {tlo}–{thi} °C",
            args.temperature
        );
    }
    let f_hz = ghz_to_hz(args.frequency);
    println!(
        "Built-in materials at {} GHz (water at {} °C, ice at its default {} °C). Each \
         dielectric's \"how\" line says how its value at this frequency follows from its \
         source: water from its Debye model, ice from its model, raw beef by linear \
         interpolation in its table, soda lime glass from its power law in frequency \
         (ITU-R P.2040), the others are constants \
         printed as their source gives them at the frequency it names, whatever \
         --frequency says; \"outside the source's range\" marks a value the source does \
         not give at this frequency. Load materials use ε′, ε″ (εr = ε′ − jε″); wall \
         metals use conductivity σ and surface resistance Rs = √(ωμ0/2σ).",
        args.frequency,
        args.temperature,
        material::ICE_DEFAULT_TEMPERATURE_C
    );
    println!();
    println!(
        "{:<22} {:>10} {:>10} {:>10}   at {} GHz",
        "dielectric", "ε′", "ε″", "tan δ", args.frequency
    );
    let list = material::builtin_list();
    for e in &list {
        if let MaterialValues::Dielectric(m) = &e.values {
            let m = if e.name == "water" {
                Material::water(args.temperature)
            } else {
                m.clone()
            };
            let (er, ei) = m.permittivity(f_hz);
            let tand = if er != 0.0 { ei / er } else { f64::NAN };
            let range = if e.outside_source_range(f_hz) {
                " — outside the source's range at this frequency"
            } else {
                ""
            };
            // Small loss factors (ice, plastics) in three significant digits, not as
            // 0.0003.
            let ei_text = if ei > 0.0 && ei < 0.01 {
                format!("{ei:.3e}")
            } else {
                format!("{ei:.4}")
            };
            let tand_text = if tand > 0.0 && tand < 0.001 {
                format!("{tand:.2e}")
            } else {
                format!("{tand:.5}")
            };
            println!(
                "{:<22} {:>10.3} {:>10} {:>10}",
                e.name, er, ei_text, tand_text
            );
            println!("{:<22} how: {}{range}", "", e.valid_at);
            println!("{:<22} source: {}", "", e.source);
        }
    }
    println!();
    println!(
        "{:<22} {:>12} {:>14}   source (for the temperature rise of `drive --time`)",
        "dielectric", "ρ (kg/m³)", "c_p (J/kg K)"
    );
    for e in &list {
        if let MaterialValues::Dielectric(m) = &e.values {
            if let Some(th) = &m.thermal {
                // Air's 1.2041 kg/m³ keeps its digits (one decimal would print 1.2).
                let rho = if th.density < 10.0 {
                    format!("{:.4}", th.density)
                } else {
                    format!("{:.1}", th.density)
                };
                println!(
                    "{:<22} {:>12} {:>14.0}   {}",
                    e.name, rho, th.specific_heat, th.source
                );
            }
        }
    }
    println!();
    println!(
        "{:<22} {:>12} {:>12}   source",
        "metal", "σ (S/m)", "Rs (mΩ)"
    );
    for e in &list {
        if let MaterialValues::Metal { conductivity } = e.values {
            let rs = surface_resistance(f_hz, conductivity);
            println!(
                "{:<22} {:>12.4e} {:>12.3}   {}",
                e.name,
                conductivity,
                rs * 1e3,
                e.source
            );
        }
    }
    println!();
    println!(
        "Use a name in a geometry file (`material = \"water\"`, `walls = \"copper\"`), or give \
         values: material = {{ permittivity = 4.0, loss_tangent = 0.01 }} (add density and \
         specific_heat for a temperature rise), \
         walls = {{ conductivity = 3.5e7 }}, walls = \"pec\"."
    );
    Ok(())
}
