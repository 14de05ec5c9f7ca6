//! `antinode drive`: the cavity fed through its ports: S-parameters over the band by the
//! solver's fast sweep, the power split, and at the field frequencies the heating map,
//! its uniformity and the temperature rise. All physics comes from
//! `antinode_solver::driven`; this module sets it up from the command line and writes
//! what it returns.

use crate::budget::available_bytes;
use crate::output::response_doc::{
    self, AtDoc, FieldDoc, PowerFractions, ResponseDoc, SpreadDoc, SweepDoc, TemperatureDoc,
    UniformityDoc,
};
use crate::output::response_svg::{self, ResponsePlot};
use crate::output::{touchstone, vtk_heating};
use crate::progress::Spinner;
use crate::units;
use antinode_mesh::Geometry;
use antinode_solver::budget::plan_driven;
use antinode_solver::driven::loads::{cell_temperature_rise, load_figures, LoadFigures, Thermal};
use antinode_solver::driven::response::PowerSplit;
use antinode_solver::driven::sweep::SweepOptions;
use antinode_solver::driven::{solve_driven, DriveSettings, DrivenField, DrivenResponse};
use antinode_solver::post::band::ISM_BAND_HZ;
use antinode_solver::problem::{
    drive_amplitudes, ghz_to_hz, order_of, port_frames, region_materials, region_permeabilities,
    region_thermal,
};
use antinode_solver::{RegionMaterial, SolverError};
use anyhow::{anyhow, bail, Context, Result};
use clap::Args;
use faer::{c64, Mat};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Share of the available memory a run may plan to use before it is refused.
const MEMORY_SHARE: f64 = 0.9;

/// Samples of a source spectrum (`--spread`): midpoints of equal sub-intervals.
const SPREAD_SAMPLES: usize = 11;

/// Points of the response picture's curves per computed frequency (the reduced model is
/// cheap to evaluate between them).
const PLOT_DENSITY: usize = 10;

/// Safety caution printed beside power and temperature figures (design notes §7).
pub const CAUTION: &str = "caution: computed for an idealised closed cavity; it does not \
     measure or certify leakage, and door seals, chokes and interlocks are outside the model. \
     Microwave energy can cause deep burns: only qualified people should build or open \
     high-power equipment; follow local codes, the applicable product-safety standards and \
     licensed practice.";

#[derive(Args)]
pub struct DriveArgs {
    /// Geometry file (TOML; lengths in mm, frequencies in GHz; see the README). Needs at
    /// least one [[port]].
    pub geometry: PathBuf,
    /// Output folder [default: out/<geometry file name without .toml>].
    #[arg(short = 'o', long = "out", value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Band of the S-parameter sweep, GHz [default: the file's [solve] band, else
    /// 2.40–2.50].
    #[arg(long, num_args = 2, value_names = ["LO", "HI"])]
    pub band: Option<Vec<f64>>,
    /// Number of equally spaced sweep frequencies, band edges included [default: 101].
    #[arg(long, value_name = "N", conflicts_with = "step")]
    pub points: Option<usize>,
    /// Spacing of the sweep frequencies instead, MHz.
    #[arg(long, value_name = "MHZ")]
    pub step: Option<f64>,
    /// Frequencies of the full field, heating map and uniformity, GHz [default: the
    /// file's [solve] target, 2.45 unless given].
    #[arg(long, value_name = "GHZ", num_args = 1..)]
    pub at: Option<Vec<f64>>,
    /// Forward power of port 1 when no [[port]] gives `power`, W.
    #[arg(long, value_name = "W", default_value_t = 1000.0)]
    pub power: f64,
    /// Heating time for the first-order temperature rise ΔT = q t/(ρ c_p), s.
    #[arg(long, value_name = "S")]
    pub time: Option<f64>,
    /// Average the field figures over a source spectrum this wide around each --at
    /// frequency (uniform weighting), MHz.
    #[arg(long, value_name = "MHZ")]
    pub spread: Option<f64>,
    /// Nédélec element order: 1 (fast, error ~h²) or 2 (accurate, error ~h⁴).
    #[arg(long, value_name = "1|2")]
    pub order: Option<u8>,
    /// Elements per local wavelength (overrides [mesh] per_wavelength).
    #[arg(long, value_name = "X")]
    pub per_wavelength: Option<f64>,
    /// Largest element edge anywhere, mm (overrides [mesh] max_size).
    #[arg(long, value_name = "MM")]
    pub max_size: Option<f64>,
    /// Largest change of any S-parameter between successive reduced models at which the
    /// sweep stops.
    #[arg(long, value_name = "DS", default_value_t = SweepOptions::default().tolerance)]
    pub tolerance: f64,
    /// Solve even when the memory estimate exceeds the memory available.
    #[arg(long)]
    pub allow_large: bool,
}

fn positive(name: &str, v: f64) -> Result<f64> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        bail!("{name} {v} must be a positive number")
    }
}

/// The sweep frequencies (GHz) from --band, --points, --step and the file.
fn band_frequencies(args: &DriveArgs, geom: &Geometry) -> Result<([f64; 2], Vec<f64>)> {
    let band = match &args.band {
        Some(b) => match b.as_slice() {
            [lo, hi] => [positive("--band LO", *lo)?, positive("--band HI", *hi)?],
            _ => bail!("--band needs two frequencies, LO and HI (GHz)"),
        },
        None => geom.solve.band.unwrap_or(ISM_BAND_HZ.map(|f| f / 1e9)),
    };
    if band[0] >= band[1] {
        bail!("--band {} {}: LO must be below HI", band[0], band[1]);
    }
    let n = match (args.points, args.step) {
        (Some(n), _) if n < 2 => bail!("--points must be at least 2"),
        (Some(n), _) => n,
        (None, Some(s)) => {
            let s = positive("--step", s)? * 1e-3;
            ((band[1] - band[0]) / s).round() as usize + 1
        }
        (None, None) => 101,
    };
    if n > 100_001 {
        bail!("{n} sweep frequencies is more than this tool evaluates (100001)");
    }
    let f = (0..n)
        .map(|i| band[0] + (band[1] - band[0]) * i as f64 / (n - 1) as f64)
        .collect();
    Ok((band, f))
}

/// Checks the solver's plan against the memory available.
fn check_plan(args: &DriveArgs, mesh: &antinode_mesh::TetMesh, geom: &Geometry) -> Result<()> {
    let order = order_of(geom).map_err(|e| anyhow!("{e} (--order)"))?;
    let plan = plan_driven(mesh, order, geom.ports.len());
    let avail = available_bytes();
    if let Some(a) = avail {
        if plan.memory_bytes > MEMORY_SHARE * a && !args.allow_large {
            bail!(
                "this solve would need an estimated {} ({} unknowns at order {}, complex: \
                 solved as a real system of twice the size), but only {} is available \
                 (MemAvailable); use --order 1, a smaller --per-wavelength or a larger \
                 --max-size, or pass --allow-large to try anyway",
                units::bytes(plan.memory_bytes),
                plan.n_dofs,
                order.as_int(),
                units::bytes(a)
            );
        }
    }
    println!(
        "plan: {} unknowns (complex), estimated peak memory {} (solver's estimate){}",
        plan.n_dofs,
        units::bytes(plan.memory_bytes),
        avail.map_or(String::new(), |a| format!(
            ", {} available",
            units::bytes(a)
        ))
    );
    Ok(())
}

pub fn run(args: &DriveArgs) -> Result<()> {
    let mut geom = super::load_geometry(&args.geometry)?;
    if geom.ports.is_empty() {
        bail!(
            "{}: a driven response needs at least one [[port]] to feed the cavity",
            args.geometry.display()
        );
    }
    if let Some(o) = args.order {
        geom.mesh.order = o;
    }
    if let Some(p) = args.per_wavelength {
        geom.mesh.per_wavelength = positive("--per-wavelength", p)?;
    }
    if let Some(m) = args.max_size {
        geom.mesh.max_size = positive("--max-size", m)?;
    }
    let power = positive("--power", args.power)?;
    let time = args.time.map(|t| positive("--time", t)).transpose()?;
    let spread = args.spread.map(|s| positive("--spread", s)).transpose()?;
    let tolerance = positive("--tolerance", args.tolerance)?;
    let (band, freqs_ghz) = band_frequencies(args, &geom)?;
    let at_ghz = match &args.at {
        Some(v) => v
            .iter()
            .map(|&f| positive("--at", f))
            .collect::<Result<Vec<_>>>()?,
        None => vec![geom.solve.target],
    };
    let order = order_of(&geom).map_err(|e| anyhow!("{e} (--order)"))?;
    let (mesh, mesh_s) = super::mesh::make(&geom)?;
    check_plan(args, &mesh, &geom)?;

    let settings = DriveSettings {
        order,
        frequencies_hz: freqs_ghz.iter().map(|&f| ghz_to_hz(f)).collect(),
        at_hz: at_ghz.iter().map(|&f| ghz_to_hz(f)).collect(),
        spread_hz: spread.map(|s| s * 1e6),
        spread_samples: SPREAD_SAMPLES,
        wall_conductivity: antinode_solver::problem::settings_from(&geom)?.wall_conductivity,
        ports: port_frames(&geom),
        drive: drive_amplitudes(&geom, power),
        sweep: SweepOptions {
            tolerance,
            ..SweepOptions::default()
        },
    };
    let materials = |f: f64| region_materials(&geom, f);
    let spinner = Spinner::start("driven solve");
    let result = solve_driven(
        &mesh,
        &region_permeabilities(&geom),
        &materials,
        &settings,
        &mut |s| spinner.drive_stage(s),
    );
    spinner.finish();
    let r = result.map_err(with_hint)?;

    let ctx = DriveContext {
        geom: &geom,
        settings: &settings,
        thermal: region_thermal(&geom),
        time,
    };
    let dir = super::output_dir(args.out.as_deref(), &args.geometry);
    let spinner = Spinner::start("field files and figures");
    let doc = document(args, &ctx, &r, band, mesh_s, &materials);
    let fields = field_arrays(&ctx, &r);
    let plot = plot(&ctx, &r, band, &materials, &dir)?;
    spinner.finish();

    super::create_dir(&dir)?;
    response_doc::write_json(&dir.join("response.json"), &doc)?;
    response_doc::write_csv(&dir.join("response.csv"), &doc)?;
    let sname = format!("response.s{}p", geom.ports.len());
    let comments = vec![
        format!("antinode drive {}", args.geometry.display()),
        geom.title.clone(),
    ];
    std::fs::write(
        dir.join(&sname),
        touchstone::format(&doc.ports, &doc.frequencies_ghz, &doc.s, &comments),
    )
    .with_context(|| format!("cannot write {}", dir.join(&sname).display()))?;
    let svg_path = dir.join("response.svg");
    std::fs::write(&svg_path, response_svg::svg(&plot))
        .with_context(|| format!("cannot write {}", svg_path.display()))?;
    for f in &fields {
        vtk_heating::write_one(&dir, &mesh, &f.borrowed())?;
    }
    vtk_heating::write_pvd(&dir, &at_ghz)?;
    print_summary(&doc, &r);
    println!(
        "wrote {}/response.json, response.csv, {sname}, response.svg, {} heating file(s) \
         (heating_<f>GHz.vtu) and heating.pvd",
        dir.display(),
        fields.len()
    );
    Ok(())
}

/// What the document and the files need besides the response.
struct DriveContext<'a> {
    geom: &'a Geometry,
    settings: &'a DriveSettings,
    thermal: Vec<Option<Thermal>>,
    time: Option<f64>,
}

/// The solver's error with what to change on this command line.
fn with_hint(e: SolverError) -> anyhow::Error {
    let hint = match &e {
        SolverError::PortBelowCutoff { .. } => "raise --band or --at above the cutoff",
        SolverError::FactorFailed { .. } => "move the --at frequencies slightly",
        SolverError::OutOfMemory { .. } => {
            "try --order 1, a smaller --per-wavelength or a larger --max-size"
        }
        SolverError::NoUnknowns => "try a larger --per-wavelength or a smaller --max-size",
        _ => "",
    };
    if hint.is_empty() {
        anyhow!("driven solve failed: {e}")
    } else {
        anyhow!("driven solve failed: {e} ({hint})")
    }
}

fn pairs(m: &Mat<c64>) -> Vec<Vec<[f64; 2]>> {
    (0..m.nrows())
        .map(|q| {
            (0..m.ncols())
                .map(|p| [m[(q, p)].re, m[(q, p)].im])
                .collect()
        })
        .collect()
}

fn names(ctx: &DriveContext<'_>) -> (Vec<String>, Vec<String>) {
    (
        ctx.geom.ports.iter().map(|p| p.name.clone()).collect(),
        ctx.geom.loads.iter().map(|l| l.name.clone()).collect(),
    )
}

fn fractions(p: &PowerSplit, ports: &[String], loads: &[String]) -> PowerFractions {
    let fw = p.forward_w;
    PowerFractions {
        reflected: p.reflected_w.iter().sum::<f64>() / fw,
        reflected_by_port: ports
            .iter()
            .cloned()
            .zip(p.reflected_w.iter().map(|w| w / fw))
            .collect(),
        walls: p.walls_w / fw,
        loads: loads
            .iter()
            .cloned()
            .zip(p.regions_w.iter().skip(1).map(|w| w / fw))
            .collect(),
        balance_error: p.balance_error(),
    }
}

/// Powers, uniformity and temperature of one field.
fn field_doc(
    ctx: &DriveContext<'_>,
    r: &DrivenResponse<'_>,
    power: &PowerSplit,
    heating: &[f64],
) -> FieldDoc {
    let (ports, loads) = names(ctx);
    let figs: Vec<LoadFigures> = load_figures(&r.operator.space, heating, &ctx.thermal, ctx.time);
    let by_load = |f: &dyn Fn(&LoadFigures) -> Option<f64>| -> BTreeMap<String, f64> {
        loads
            .iter()
            .zip(&figs)
            .filter_map(|(n, l)| f(l).map(|v| (n.clone(), v)))
            .collect()
    };
    let uniformity = loads
        .iter()
        .zip(&figs)
        .filter_map(|(n, l)| {
            l.uniformity.map(|u| {
                (
                    n.clone(),
                    UniformityDoc {
                        cov: u.cov,
                        max_over_mean: u.max_over_mean,
                        min_over_mean: u.min_over_mean,
                        hot_fraction: u.hot_fraction,
                        cold_fraction: u.cold_fraction,
                        mean_w_per_m3: u.mean,
                    },
                )
            })
        })
        .collect();
    let temperature: Option<BTreeMap<String, TemperatureDoc>> = ctx.time.map(|_| {
        loads
            .iter()
            .zip(&figs)
            .filter_map(|(n, l)| {
                l.temperature.map(|t| {
                    (
                        n.clone(),
                        TemperatureDoc {
                            mean_rise_k: t.mean_rise_k,
                            max_rise_k: t.max_rise_k,
                            mass_kg: t.mass_kg,
                            calorimetric_power_w: t.calorimetric_power_w,
                        },
                    )
                })
            })
            .collect()
    });
    FieldDoc {
        forward_w: power.forward_w,
        absorbed_w: loads
            .iter()
            .cloned()
            .zip(power.regions_w.iter().skip(1).copied())
            .collect(),
        walls_w: power.walls_w,
        reflected_w: power.reflected_w.iter().sum(),
        reflected_w_by_port: ports
            .iter()
            .cloned()
            .zip(power.reflected_w.clone())
            .collect(),
        uniformity,
        temperature_rise_k: ctx
            .time
            .map(|_| by_load(&|l| l.temperature.map(|t| t.mean_rise_k))),
        temperature,
    }
}

fn document(
    args: &DriveArgs,
    ctx: &DriveContext<'_>,
    r: &DrivenResponse<'_>,
    band: [f64; 2],
    mesh_s: f64,
    _materials: &(dyn Fn(f64) -> Vec<RegionMaterial> + Send + Sync),
) -> ResponseDoc {
    let (ports, loads) = names(ctx);
    let at =
        r.at.iter()
            .map(|a| AtDoc {
                frequency_ghz: a.frequency_hz * 1e-9,
                file: vtk_heating::file_name(a.frequency_hz * 1e-9),
                s: pairs(&a.s),
                sweep_vs_direct: a.sweep_vs_direct,
                field: field_doc(ctx, r, &a.field.power, &a.field.cell_heating),
                spread: a.spread.as_ref().map(|s| SpreadDoc {
                    width_mhz: ctx.settings.spread_hz.unwrap_or(0.0) * 1e-6,
                    weighting: format!(
                    "uniform over the width, {} samples at the midpoints of equal sub-intervals; \
                     fields from the reduced model",
                    s.samples_hz.len()
                ),
                    samples_ghz: s.samples_hz.iter().map(|f| f * 1e-9).collect(),
                    field: field_doc(ctx, r, &s.power, &s.cell_heating),
                }),
            })
            .collect();
    let rep = &r.report;
    ResponseDoc {
        geometry: args.geometry.display().to_string(),
        title: ctx.geom.title.clone(),
        order: ctx.settings.order.as_int(),
        unknowns: r.operator.n(),
        band_ghz: band,
        ports: ports.clone(),
        loads: loads.clone(),
        drive_w: ports
            .iter()
            .cloned()
            .zip(ctx.settings.drive.iter().map(|a| a.norm_sqr()))
            .collect(),
        drive_phase_deg: ports
            .iter()
            .cloned()
            .zip(ctx.settings.drive.iter().map(|a| a.arg().to_degrees()))
            .collect(),
        wall_conductivity: ctx.settings.wall_conductivity,
        conventions: "time convention e^{jωt}; S normalised to each port's TE10 power wave \
                      (Σ|a|² = forward power), reference plane at the aperture; s[f][out][in] \
                      = [re, im]; peak phasor fields; powers are time averages"
            .into(),
        frequencies_ghz: r.frequencies_hz.iter().map(|f| f * 1e-9).collect(),
        s: r.s.iter().map(pairs).collect(),
        power: r
            .power
            .iter()
            .map(|p| fractions(p, &ports, &loads))
            .collect(),
        at,
        sweep: SweepDoc {
            method: "Krylov projection of the shifted operator (Padé-via-Krylov family), \
                     symmetric real-basis projection, adaptive expansion points"
                .into(),
            expansion_points_ghz: rep.expansion_hz.iter().map(|f| f * 1e-9).collect(),
            krylov_blocks: rep.blocks.clone(),
            basis: rep.basis,
            converged: rep.converged,
            tolerance_s: rep.tolerance,
            tolerance_residual: rep.residual_tolerance,
            max_change_s: rep.max_change,
            max_residual: rep.max_residual,
            factor_s: rep.factor_s,
            krylov_s: rep.krylov_s,
            check_s: rep.check_s,
            factor_entries: rep.factor_nnz,
        },
        mesh_s,
        total_s: r.total_s,
        safety: CAUTION.into(),
    }
}

/// Arrays of one heating file, owned.
struct FieldArrays {
    freq_ghz: f64,
    e: antinode_solver::driven::solve::VertexField,
    heating: Vec<f64>,
    spread: Option<Vec<f64>>,
    rise: Option<Vec<f64>>,
}

impl FieldArrays {
    fn borrowed(&self) -> vtk_heating::HeatingField<'_> {
        vtk_heating::HeatingField {
            freq_ghz: self.freq_ghz,
            e: &self.e,
            heating: &self.heating,
            heating_spread: self.spread.as_deref(),
            temperature_rise: self.rise.as_deref(),
        }
    }
}

fn field_arrays(ctx: &DriveContext<'_>, r: &DrivenResponse<'_>) -> Vec<FieldArrays> {
    let space = &r.operator.space;
    r.at.iter()
        .map(|a| {
            let f: &DrivenField = &a.field;
            FieldArrays {
                freq_ghz: a.frequency_hz * 1e-9,
                e: f.vertex_e(space),
                heating: f.cell_heating.clone(),
                spread: a.spread.as_ref().map(|s| s.cell_heating.clone()),
                rise: ctx
                    .time
                    .map(|t| cell_temperature_rise(space, &f.cell_heating, &ctx.thermal, t)),
            }
        })
        .collect()
}

/// Mode frequencies of an earlier `modes` run in the output folder, when there is one.
fn modes_at_hand(dir: &Path) -> Option<(Vec<(usize, f64)>, String)> {
    let path = dir.join("modes.json");
    let text = std::fs::read_to_string(&path).ok()?;
    let v: serde_json::Value = serde_json::from_str(&text).ok()?;
    let modes = v
        .get("modes")?
        .as_array()?
        .iter()
        .filter_map(|m| {
            Some((
                m.get("index")?.as_u64()? as usize,
                m.get("frequency_ghz")?.as_f64()?,
            ))
        })
        .collect();
    Some((
        modes,
        format!("{} (an earlier `modes` run)", path.display()),
    ))
}

fn plot<'a>(
    ctx: &'a DriveContext<'_>,
    r: &DrivenResponse<'_>,
    band: [f64; 2],
    materials: &(dyn Fn(f64) -> Vec<RegionMaterial> + Send + Sync),
    dir: &Path,
) -> Result<ResponsePlot<'a>> {
    let n = (r.frequencies_hz.len() * PLOT_DENSITY).clamp(201, 4001);
    let f_ghz: Vec<f64> = (0..n)
        .map(|i| band[0] + (band[1] - band[0]) * i as f64 / (n - 1) as f64)
        .collect();
    let mut refl = vec![Vec::with_capacity(n); ctx.geom.ports.len()];
    let (mut loads, mut walls) = (Vec::with_capacity(n), Vec::with_capacity(n));
    for &f in &f_ghz {
        let (s, p) = r.model_at(materials, ctx.settings, ghz_to_hz(f))?;
        for (q, v) in refl.iter_mut().enumerate() {
            v.push(20.0 * s[(q, q)].norm().log10());
        }
        loads.push(p.regions_w.iter().skip(1).sum::<f64>() / p.forward_w);
        walls.push(p.walls_w / p.forward_w);
    }
    let (ports, _) = names(ctx);
    let drive: Vec<String> = ports
        .iter()
        .zip(&ctx.settings.drive)
        .filter(|(_, a)| a.norm() > 0.0)
        .map(|(n, a)| format!("{n} {:.0} W at {:.0}°", a.norm_sqr(), a.arg().to_degrees()))
        .collect();
    Ok(ResponsePlot {
        title: &ctx.geom.title,
        band_ghz: band,
        frequencies_ghz: f_ghz,
        reflection_db: ports.into_iter().zip(refl).collect(),
        loads,
        walls,
        modes: modes_at_hand(dir),
        notes: vec![
            format!(
                "absorbed fractions for the drive: {} (other ports matched)",
                drive.join(", ")
            ),
            format!(
                "curves from the reduced model of the sweep (tolerance |ΔS| ≤ {:.0e}) at {n} \
                 frequencies",
                ctx.settings.sweep.tolerance
            ),
            "idealised closed cavity: no leakage figures; see the README's safety notes".into(),
        ],
    })
}

fn print_summary(doc: &ResponseDoc, r: &DrivenResponse<'_>) {
    let rep = &r.report;
    println!(
        "sweep: {} frequencies over {:.3}–{:.3} GHz, {} expansion point(s) at {} GHz, reduced \
         model of {} vectors, {} (last |ΔS| change {:.1e}, tolerance {:.0e}); {:.1} s in all",
        doc.frequencies_ghz.len(),
        doc.band_ghz[0],
        doc.band_ghz[1],
        rep.expansion_hz.len(),
        rep.expansion_hz
            .iter()
            .map(|f| format!("{:.4}", f * 1e-9))
            .collect::<Vec<_>>()
            .join(", "),
        rep.basis,
        if rep.converged {
            "converged"
        } else {
            "NOT converged"
        },
        rep.max_change,
        rep.tolerance,
        doc.total_s
    );
    for a in &doc.at {
        let f = &a.field;
        let pct = |w: f64| 100.0 * w / f.forward_w;
        println!(
            "at {:.4} GHz: forward {:.1} W; reflected {:.1} W ({:.1} %), walls {:.2} W ({:.2} %)",
            a.frequency_ghz,
            f.forward_w,
            f.reflected_w,
            pct(f.reflected_w),
            f.walls_w,
            pct(f.walls_w)
        );
        for (name, w) in &f.absorbed_w {
            let u = f.uniformity.get(name);
            println!(
                "  load {name}: {w:.1} W ({:.1} %){}{}",
                pct(*w),
                u.map_or(String::new(), |u| format!(
                    "; COV {:.2}, max/mean {:.2}, min/mean {:.3}, hot {:.1} %, cold {:.1} % of the volume",
                    u.cov,
                    u.max_over_mean,
                    u.min_over_mean,
                    100.0 * u.hot_fraction,
                    100.0 * u.cold_fraction
                )),
                f.temperature
                    .as_ref()
                    .and_then(|t| t.get(name))
                    .map_or(String::new(), |t| format!(
                        "; ΔT mean {:.1} K, max {:.1} K (no conduction)",
                        t.mean_rise_k, t.max_rise_k
                    ))
            );
        }
        if let Some(s) = &a.spread {
            let total: f64 = s.field.absorbed_w.values().sum();
            println!(
                "  averaged over {:.0} MHz: loads {:.1} W ({:.1} %), reflected {:.1} %",
                s.width_mhz,
                total,
                100.0 * total / s.field.forward_w,
                100.0 * s.field.reflected_w / s.field.forward_w
            );
        }
        println!(
            "  sweep vs direct solve here: max |ΔS| {:.1e}",
            a.sweep_vs_direct
        );
    }
    println!("{CAUTION}");
}
