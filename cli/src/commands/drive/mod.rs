//! `antinode drive`: the cavity fed through its ports: S-parameters over the band by the
//! solver's fast sweep, the power split, and at the field frequencies the heating map,
//! its uniformity and the temperature rise. All physics comes from
//! `antinode_solver::driven`; this module sets it up from the command line and writes
//! what it returns.

mod document;
mod report;

use super::positive;
use crate::budget::available;
use crate::output::response_doc;
use crate::output::response_svg;
use crate::output::{folder, touchstone, vtk_heating};
use crate::progress::Spinner;
use crate::units;
use antinode_mesh::Geometry;
use antinode_solver::budget::{plan_driven_counted, Plan};
use antinode_solver::driven::loads::Thermal;
use antinode_solver::driven::sweep::SweepOptions;
use antinode_solver::driven::{solve_driven, DriveSettings, DrivenResponse};
use antinode_solver::post::band::ISM_BAND_HZ;
use antinode_solver::problem::{
    drive_amplitudes, ghz_to_hz, order_of, port_frames, region_materials, region_permeabilities,
    region_thermal,
};
use antinode_solver::{NedelecOrder, SolverError};
use anyhow::{anyhow, bail, Result};
use clap::Args;
use std::path::PathBuf;

/// Samples of a source spectrum (`--spread`): midpoints of equal sub-intervals.
const SPREAD_SAMPLES: usize = 11;

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
    #[command(flatten)]
    pub mesh: super::MeshOptions,
    /// Largest change of any S-parameter between successive reduced models at which the
    /// sweep stops.
    #[arg(long, value_name = "DS", default_value_t = SweepOptions::default().tolerance)]
    pub tolerance: f64,
    /// Solve even when the memory estimate exceeds the memory available (and mesh at the
    /// default size instead of relaxing it to fit).
    #[arg(long)]
    pub allow_large: bool,
    /// Mesh at the asked or default size, never relaxing it to fit the memory (set by
    /// `sweep`, whose variants compare at equal sizes).
    #[arg(skip)]
    pub fixed_size: bool,
    /// Keep every tetrahedron straight (cylinder sides as the meshed polygon) instead of
    /// curving the elements on them; for comparison.
    #[arg(long)]
    pub straight: bool,
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
fn check_plan(
    args: &DriveArgs,
    mesh: &antinode_mesh::TetMesh,
    geom: &Geometry,
    counted: Option<Plan>,
) -> Result<()> {
    let order = order_of(geom).map_err(|e| anyhow!("{e} (--order)"))?;
    let plan = match counted {
        Some(p) => p,
        None => plan_driven_counted(mesh, order, geom.ports.len())?,
    };
    let avail = available();
    super::plan::check_solve(&plan, order, avail, None, args.allow_large)?;
    println!(
        "plan: {} unknowns (complex){}, {:.3e} factor entries (counted), estimated peak \
         memory {} (solver's plan){}",
        plan.n_dofs,
        super::plan::port_note(geom.ports.len()),
        plan.factor_entries,
        units::bytes(plan.memory_bytes),
        avail.map_or(String::new(), |a| format!(
            ", {} available ({})",
            units::bytes(a.bytes),
            a.source
        ))
    );
    Ok(())
}

pub fn run(args: &DriveArgs) -> Result<()> {
    run_with(args, &mut |_, _, _| Ok(()))
}

/// [`run`], handing the mesh, the response and the region materials (by frequency, Hz)
/// to `inspect` before the folder is committed (the sweep samples a turntable variant's
/// heating there).
pub fn run_with(
    args: &DriveArgs,
    inspect: &mut dyn FnMut(
        &antinode_mesh::TetMesh,
        &DrivenResponse<'_>,
        &antinode_solver::driven::system::MaterialsAt<'_>,
    ) -> Result<()>,
) -> Result<()> {
    let mut geom = super::load_geometry(&args.geometry)?;
    if geom.turntable.is_some() {
        bail!(
            "{}: this geometry has a [turntable]; `drive` runs one placement, and the \
             rotation runs through `antinode sweep`: write a sweep file with\n  \
             geometry = \"{}\"\n  run = [\"drive\"]\nand run `antinode sweep FILE` \
             (one variant per plate angle, the averages in turntable.csv/json; README, \
             Turntable)",
            args.geometry.display(),
            args.geometry
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default()
        );
    }
    if geom.ports.is_empty() {
        bail!(
            "{}: a driven response needs at least one [[port]] to feed the cavity",
            args.geometry.display()
        );
    }
    args.mesh.apply(&mut geom)?;
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
    // Automatic size as in `modes` (super::fit): no per_wavelength given, the built-in
    // mesher, no request to solve as asked whatever the memory.
    let auto_size = !geom.mesh.per_wavelength_given
        && geom.mesh.import.is_none()
        && !args.allow_large
        && !args.fixed_size;
    let mut planned = geom.clone();
    if auto_size {
        // Refused before meshing only when even the coarsest automatic size would not fit.
        super::fit::set_size(&mut planned, super::fit::floor_per_wavelength(order));
    }
    super::plan::before_meshing(
        &planned,
        order,
        true,
        antinode_solver::budget::DRIVEN_BASIS_COMPLEX,
        None,
        args.allow_large,
        antinode_solver::linalg::mixed::FactorPrecision::Double,
        available(),
    )?;
    let out = folder::prepare(&super::output_dir(args.out.as_deref(), &args.geometry))?;
    let (curved_mesh, mesh_s, counted) = match available() {
        Some(a) if auto_size => {
            let planner = super::fit::DrivePlanner {
                order,
                ports: geom.ports.len(),
            };
            let f = super::fit::mesh_to_fit(&mut geom, order, &planner, a.bytes)?;
            println!("{}", f.summary());
            (f.mesh, f.mesh_s, Some(f.plan))
        }
        _ => {
            let (m, s) = super::mesh::make_curved(&geom)?;
            (m, s, None)
        }
    };
    let curved = match args.straight {
        true => Default::default(),
        false => std::sync::Arc::new(antinode_solver::fem::curved::CurvedBoundary::from_mesh(
            &curved_mesh,
        )),
    };
    let mesh = curved_mesh.mesh;
    check_plan(args, &mesh, &geom, counted)?;

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
        curved,
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
    let r = result.map_err(|e| with_hint(e, order))?;

    let ctx = DriveContext {
        geom: &geom,
        settings: &settings,
        thermal: region_thermal(&geom),
        time,
    };
    let spinner = Spinner::start("field files and figures");
    let doc = document::document(args, &ctx, &r, band, mesh_s);
    let fields = document::field_arrays(&ctx, &r);
    // The modes of an earlier `modes` run into the same folder, if any, mark the picture.
    let plot = report::plot(&ctx, &r, band, &materials, out.target())?;
    spinner.finish();

    let dir = out.dir();
    response_doc::write_json(&dir.join("response.json"), &doc)?;
    response_doc::write_csv(&dir.join("response.csv"), &doc)?;
    let sname = format!("response.s{}p", geom.ports.len());
    let comments = vec![
        format!("antinode drive {}", args.geometry.display()),
        geom.title.clone(),
    ];
    folder::write_atomic(
        &dir.join(&sname),
        touchstone::format(&doc.ports, &doc.frequencies_ghz, &doc.s, &comments),
    )?;
    folder::write_atomic(&dir.join("response.svg"), response_svg::svg(&plot))?;
    for f in &fields {
        vtk_heating::write_one(dir, &mesh, &f.borrowed())?;
    }
    vtk_heating::write_pvd(dir, &at_ghz)?;
    inspect(&mesh, &r, &materials)?;
    let dir = out.target().to_path_buf();
    out.commit("drive", &args.geometry)?;
    report::print_summary(&doc, &r);
    println!(
        "wrote {}/response.json, response.csv, {sname}, response.svg, {} heating file(s) \
         (heating_<f>GHz.vtu) and heating.pvd",
        dir.display(),
        fields.len()
    );
    Ok(())
}

/// What the document and the files need besides the response.
pub(super) struct DriveContext<'a> {
    geom: &'a Geometry,
    settings: &'a DriveSettings,
    thermal: Vec<Option<Thermal>>,
    time: Option<f64>,
}

/// The solver's error with what to change on this command line.
fn with_hint(e: SolverError, order: NedelecOrder) -> anyhow::Error {
    let shrink = super::plan::shrink_hint(order);
    let hint = match &e {
        SolverError::PortBelowCutoff { .. } => "raise --band or --at above the cutoff",
        SolverError::FactorFailed { .. } => "move the --at frequencies slightly",
        SolverError::OutOfMemory { .. } => shrink.as_str(),
        SolverError::NoUnknowns => "try a larger --per-wavelength or a smaller --max-size",
        _ => "",
    };
    if hint.is_empty() {
        anyhow!("driven solve failed: {e}")
    } else {
        anyhow!("driven solve failed: {e} ({hint})")
    }
}
