//! `antinode modes`: mesh, memory check, eigen solve, table and files.

use super::{fit, plan, positive};
use crate::output::json::{
    MeshSizeFigures, ModesDoc, PlanFigures, RefinementFigures, RegionInfo, SizeAttemptFigures,
    SolveFigures,
};
use crate::output::review;
use crate::output::spectrum::{self, Spectrum, SpectrumMode};
use crate::output::summary::{
    self, BandSummary, GoodCoupling, ModeRow, WeylEstimate, GOOD_COUPLING_REFLECTION,
};
use crate::output::{csv, folder, json, table, vtk_modes};
use crate::progress::Spinner;
use crate::units;
use antinode_mesh::{Geometry, TetMesh};
use antinode_solver::budget::{self, Plan};
use antinode_solver::fem::impedance::WallLosses;
use antinode_solver::linalg::mixed::FactorPrecision;
use antinode_solver::modes::SolveStats;
use antinode_solver::post::band::{band_figures, BandFigures, SearchFacts, ISM_BAND_HZ};
use antinode_solver::post::warnings::{review_run, RunReview};
use antinode_solver::problem::{region_materials, settings_from, weyl_cavity};
use antinode_solver::{
    solve_modes, ModeSet, ModeSettings, NedelecOrder, RegionMaterial, SolverError,
};
use anyhow::{anyhow, bail, Result};
use clap::{Args, ValueEnum};
use std::path::PathBuf;

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned table and band summary for reading.
    Table,
    /// The modes.json document on stdout (for scripts).
    Json,
}

/// How walls of finite conductivity enter (`--wall-losses`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum WallLossArg {
    /// A surface-impedance wall term in the solve; Q_c from E at the wall (complex
    /// solve even for an empty cavity; the wall Q converges like the eigenvalue).
    Impedance,
    /// After a solve with perfectly conducting walls, from H = ∇×E at the wall (real
    /// solve for an empty cavity; the wall Q converges like h²).
    Perturbation,
}

impl From<WallLossArg> for WallLosses {
    fn from(a: WallLossArg) -> Self {
        match a {
            WallLossArg::Impedance => WallLosses::Impedance,
            WallLossArg::Perturbation => WallLosses::Perturbation,
        }
    }
}

/// Precision of the shifted operator's factor (`--factor-precision`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum PrecisionArg {
    /// Double when its memory plan fits the memory this run may use, single otherwise.
    Auto,
    /// Double-precision factor (8 / 16 bytes per real / complex entry).
    Double,
    /// Single-precision factor (half the memory), every solve refined in double to the
    /// same residual; eigen iteration slower (several solves per application).
    Single,
}

#[derive(Args)]
pub struct ModesArgs {
    /// Geometry file (TOML; lengths in mm, frequencies in GHz; see the README).
    pub geometry: PathBuf,
    /// Output folder [default: out/<geometry file name without .toml>].
    #[arg(short = 'o', long = "out", value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Frequency to search around, GHz (overrides [solve] target; also sets the local
    /// wavelength the mesh is sized by).
    #[arg(long, value_name = "GHZ")]
    pub target: Option<f64>,
    /// Find every mode between LO and HI GHz (overrides [solve] band).
    #[arg(long, num_args = 2, value_names = ["LO", "HI"])]
    pub band: Option<Vec<f64>>,
    /// Find at least N modes nearest the target (overrides [solve] count).
    #[arg(long, value_name = "N")]
    pub count: Option<usize>,
    #[command(flatten)]
    pub mesh: super::MeshOptions,
    /// Solve even when the memory estimate exceeds the memory available (and mesh at the
    /// default size instead of relaxing it to fit).
    #[arg(long)]
    pub allow_large: bool,
    /// Plan against this much memory (GB) instead of what the machine has available
    /// (MemAvailable or the container's limit), e.g. to leave room for other work.
    #[arg(long, value_name = "GB")]
    pub memory: Option<f64>,
    /// Mesh at the asked or default size, never relaxing it to fit the memory (set by
    /// `sweep`, whose variants compare at equal sizes).
    #[arg(skip)]
    pub fixed_size: bool,
    /// Keep every tetrahedron straight (cylinder sides as the meshed polygon) instead of
    /// curving the elements on them; for comparison.
    #[arg(long)]
    pub straight: bool,
    /// Plan only: mesh, count the unknowns, estimate memory and time, then stop (writes
    /// nothing).
    #[arg(long)]
    pub plan: bool,
    /// Skip the per-mode field files (mode_NNN.vtu, modes.pvd).
    #[arg(long)]
    pub no_fields: bool,
    /// Precision of the factor of the shifted operator.
    #[arg(long, value_enum, value_name = "P", default_value_t = PrecisionArg::Auto)]
    pub factor_precision: PrecisionArg,
    /// How metal walls of finite conductivity enter the wall Q (PEC walls: no effect).
    #[arg(long, value_enum, value_name = "METHOD", default_value_t = WallLossArg::Impedance)]
    pub wall_losses: WallLossArg,
    /// What to print on stdout.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

pub fn run(args: &ModesArgs) -> Result<()> {
    run_with(args, &mut |_, _| Ok(()))
}

/// [`run`], with `inspect` called on the solved modes before any file is written (the
/// sweep samples their fields there).
pub fn run_with(
    args: &ModesArgs,
    inspect: &mut dyn FnMut(&ModeSet<'_>, &[RegionMaterial]) -> Result<()>,
) -> Result<()> {
    let mut geom = super::load_geometry(&args.geometry)?;
    let band_from = apply_overrides(args, &mut geom)?;
    // The file's order was checked by its parser; an unavailable one here came from --order.
    let mut settings = settings_from(&geom).map_err(|e| anyhow!("{e} (--order)"))?;
    settings.wall_losses = args.wall_losses.into();
    let order = settings.order;

    let mats = region_materials(&geom, settings.target_hz);
    let basis = budget::basis_size(&settings);
    let complex = settings.is_complex(&mats);
    let count = plan::CountBasis {
        count: settings.count,
        usual: settings.eigen.basis,
    };
    let lowest = match args.factor_precision {
        PrecisionArg::Double => FactorPrecision::Double,
        PrecisionArg::Auto | PrecisionArg::Single => FactorPrecision::Single,
    };
    let avail = memory_available(args)?;
    // Automatic size: no per_wavelength given, the built-in mesher, and no request to
    // solve as asked whatever the memory.
    let auto_size = !geom.mesh.per_wavelength_given
        && geom.mesh.import.is_none()
        && !args.allow_large
        && !args.fixed_size;
    let pre = if auto_size {
        // Refused before meshing only when even the coarsest automatic size would not fit.
        let mut floor = geom.clone();
        fit::set_size(&mut floor, fit::floor_per_wavelength(order));
        plan::before_meshing(
            &floor,
            order,
            complex,
            basis,
            Some(count),
            false,
            lowest,
            avail,
        )?;
        None
    } else {
        plan::before_meshing(
            &geom,
            order,
            complex,
            basis,
            Some(count),
            args.allow_large,
            lowest,
            avail,
        )?
    };
    // The output folder is checked (and its staging folder made) before meshing.
    let out = match args.plan {
        true => None,
        false => Some(folder::prepare(&super::output_dir(
            args.out.as_deref(),
            &args.geometry,
        ))?),
    };
    let (curved_mesh, mesh_s, fitted) = match avail {
        Some(a) if auto_size => {
            let planner = fit::ModesPlanner::new(&settings, &mats, lowest);
            let f = fit::mesh_to_fit(&mut geom, order, &planner, a.bytes)?;
            if args.format == Format::Table {
                println!("{}", f.summary());
            }
            let (mesh, mesh_s) = (f.mesh, f.mesh_s);
            let fit = Some((f.plan.factor_entries, f.asked, f.used, f.attempts));
            (mesh, mesh_s, fit)
        }
        _ => {
            let (mesh, mesh_s) = super::mesh::make_curved(&geom)?;
            (mesh, mesh_s, None)
        }
    };
    // What --plan prints before the mesh: the estimate at the size used.
    let pre = match (pre, &fitted) {
        (None, Some(_)) => plan::estimate_before_meshing(&geom, order, complex, basis, lowest)?,
        (p, _) => p,
    };
    if !args.straight {
        settings.curved = std::sync::Arc::new(
            antinode_solver::fem::curved::CurvedBoundary::from_mesh(&curved_mesh),
        );
    }
    let mesh = curved_mesh.mesh;

    let counted = match &fitted {
        Some((entries, ..)) => *entries,
        None => budget::plan_counted(&mesh, &mats, &settings)?.factor_entries,
    };
    let sizing = fitted.map(|(_, asked, used, attempts)| SizeFit {
        asked,
        used,
        attempts,
    });
    // An automatic size was planned within fit::FIT_SHARE; the precision keeps to it.
    let share = match sizing {
        Some(_) => fit::FIT_SHARE,
        None => plan::MEMORY_SHARE,
    };
    let (plan, avail, precision_reason) =
        check_plan(args, &mesh, &mats, &mut settings, counted, avail, share)?;
    let Some(out) = out else {
        plan::print_plan_only(&plan, pre.as_ref(), mesh.tets.len(), mesh_s);
        return Ok(());
    };

    let spinner = Spinner::start("solving");
    let result = solve_modes(&mesh, &mats, &settings, &mut |s| spinner.stage(s));
    spinner.finish();
    let set = result.map_err(|e| with_hint(e, order))?;
    inspect(&set, &mats)?;

    // Rows and band summary. The band is shown in the file's GHz; figures use Hz.
    let target_ghz = geom.solve.target;
    let band_explicit = geom.solve.band.is_some();
    let band = geom.solve.band.unwrap_or(ISM_BAND_HZ.map(|f| f / 1e9));
    let band_from = band_from.unwrap_or_else(|| {
        "default ISM band, ITU Radio Regulations No. 5.150; not used to choose modes".into()
    });
    let freq_q: Vec<(f64, f64)> = set
        .modes
        .iter()
        .map(|m| (m.frequency_hz, m.q.q_loaded))
        .collect();
    let summary_band_hz = settings.band_hz.unwrap_or(ISM_BAND_HZ);
    let run_review = review_run(&geom, &mesh, &mats, &settings, &set.modes, summary_band_hz);
    let figures = band_figures(
        &freq_q,
        summary_band_hz,
        SearchFacts {
            target_hz: settings.target_hz,
            search_radius: set.stats.search_radius,
            lossless: !set.stats.complex,
            group_tolerance: run_review.group_tolerance,
        },
        weyl_cavity(&geom, &mesh.region_volumes(), &mats),
    );
    let load_names: Vec<String> = geom.loads.iter().map(|l| l.name.clone()).collect();
    let port_names: Vec<String> = geom.ports.iter().map(|p| p.name.clone()).collect();
    let walls_in_eigen = settings.impedance_walls().is_some();
    let rows = mode_rows(&set, target_ghz, &figures, &load_names, walls_in_eigen);
    let in_band_idx = &figures.in_band;
    let good_coupling = good_couplings(&rows, in_band_idx, &port_names);
    let q_check_max_relative = rows
        .iter()
        .filter_map(|r| r.q_check_relative)
        .map(f64::abs)
        .reduce(f64::max);
    let st = &set.stats;
    let doc = ModesDoc {
        geometry: args.geometry.display().to_string(),
        title: geom.title.clone(),
        target_ghz,
        band_ghz: band,
        order: order.as_int(),
        unknowns: st.n_dofs,
        ports: port_names.clone(),
        regions: region_infos(&mats, &load_names),
        wall_conductivity: settings.wall_conductivity,
        wall_losses: settings
            .wall_conductivity
            .map(|_| settings.wall_losses.name().to_string()),
        field_scaling: if args.no_fields {
            "no field files written".into()
        } else {
            format!(
                "E in V/m, H in A/m and {} in W/m³, all for 1 J of stored energy per mode \
                 (peak phasor amplitudes)",
                vtk_modes::HEATING
            )
        },
        infinite_q: "an infinite Q (no such loss) is written as null".into(),
        modes: rows,
        band_summary: band_summary(
            &figures,
            &run_review,
            band,
            band_from,
            good_coupling,
            q_check_max_relative,
        ),
        solve: solve_figures(
            &mesh,
            mesh_s,
            st,
            &plan,
            avail,
            precision_reason,
            mesh_size_figures(&geom, sizing.as_ref()),
        ),
        accuracy: review::accuracy_figures(
            &run_review.accuracy,
            &mesh
                .regions
                .iter()
                .map(|r| r.name.clone())
                .collect::<Vec<_>>(),
        ),
        warnings: review::warning_docs(&run_review),
    };

    // Files, only now that the results exist.
    let dir = out.dir();
    json::write(&dir.join("modes.json"), &doc)?;
    csv::write(&dir.join("modes.csv"), &doc.modes, &port_names, &load_names)?;
    let svg = spectrum_svg(&doc, band_explicit);
    let svg_path = dir.join("spectrum.svg");
    folder::write_atomic(&svg_path, svg)?;
    if !args.no_fields {
        let spinner = Spinner::start("writing mode fields");
        let r = vtk_modes::write_all(dir, &set, &mats);
        spinner.finish();
        r?;
    }
    let dir = out.target().to_path_buf();
    out.commit("modes", &args.geometry)?;

    match args.format {
        Format::Json => println!("{}", json::to_string(&doc)?),
        Format::Table => {
            table::print(&doc);
            println!();
            if args.no_fields {
                println!(
                    "wrote {}/modes.json, modes.csv and spectrum.svg",
                    dir.display()
                );
            } else {
                println!(
                    "wrote {}/modes.json, modes.csv, spectrum.svg, {} mode files \
                     (mode_001.vtu …) and modes.pvd; fields scaled to 1 J stored energy",
                    dir.display(),
                    set.modes.len()
                );
            }
        }
    }
    review::print_warnings(&doc.warnings);
    Ok(())
}

/// Command-line overrides, applied before meshing (target and sizes shape the mesh).
/// Returns where the band came from, when there is one.
pub(crate) fn apply_overrides(args: &ModesArgs, geom: &mut Geometry) -> Result<Option<String>> {
    if let Some(t) = args.target {
        geom.solve.target = positive("--target", t)?;
    }
    let mut band_from = geom
        .solve
        .band
        .map(|_| "from the geometry file".to_string());
    if let Some(b) = &args.band {
        let (lo, hi) = match b.as_slice() {
            [lo, hi] => (positive("--band LO", *lo)?, positive("--band HI", *hi)?),
            _ => bail!("--band needs two frequencies, LO and HI (GHz)"),
        };
        if lo >= hi {
            bail!("--band {lo} {hi}: LO must be below HI");
        }
        geom.solve.band = Some([lo, hi]);
        band_from = Some("--band".into());
    }
    if let Some(c) = args.count {
        if c == 0 {
            bail!("--count must be at least 1");
        }
        geom.solve.count = Some(c);
    }
    args.mesh.apply(geom)?;
    Ok(band_from)
}

/// The memory this run may use: `--memory` when given, else what the machine has
/// available ([`crate::budget::available`]).
fn memory_available(args: &ModesArgs) -> Result<Option<crate::budget::Available>> {
    Ok(match args.memory {
        Some(gb) => Some(crate::budget::Available {
            bytes: positive("--memory", gb)? * 1e9,
            source: "--memory",
        }),
        None => crate::budget::available(),
    })
}

/// The solver's plan (unknowns, memory, with the factor's `factor_entries` as counted by
/// the symbolic factorisation) against the memory this run may use (`avail`): chooses the
/// factor's precision (`--factor-precision`; sets `settings.precision`), refuses a run
/// that would not fit unless --allow-large; prints the plan for the table format.
/// `auto` precision takes double when its plan fits `precision_share` of `avail`.
/// Returns the plan, the memory available and why the precision was chosen.
fn check_plan(
    args: &ModesArgs,
    mesh: &TetMesh,
    mats: &[RegionMaterial],
    settings: &mut ModeSettings,
    factor_entries: f64,
    avail: Option<crate::budget::Available>,
    precision_share: f64,
) -> Result<(Plan, Option<f64>, String)> {
    let order = settings.order;
    let n = settings.space(mesh).n_dofs();
    let complex = settings.is_complex(mats);
    let basis = budget::basis_size(settings);
    let plan_at = |precision| {
        budget::with_factor_entries(n, complex, order, basis, precision, factor_entries)
    };
    let double = plan_at(FactorPrecision::Double);
    let limit = avail.map(|a| precision_share * a.bytes);
    let (precision, reason) = match (args.factor_precision, limit) {
        (PrecisionArg::Double, _) => (FactorPrecision::Double, "--factor-precision double".into()),
        (PrecisionArg::Single, _) => (FactorPrecision::Single, "--factor-precision single".into()),
        (PrecisionArg::Auto, None) => (
            FactorPrecision::Double,
            "auto: available memory unknown, double".into(),
        ),
        (PrecisionArg::Auto, Some(l)) if double.memory_bytes <= l => (
            FactorPrecision::Double,
            format!(
                "auto: the double plan {} fits the {} this run may use",
                units::bytes(double.memory_bytes),
                units::bytes(l)
            ),
        ),
        (PrecisionArg::Auto, Some(l)) => (
            FactorPrecision::Single,
            format!(
                "auto: the double plan {} exceeds the {} this run may use",
                units::bytes(double.memory_bytes),
                units::bytes(l)
            ),
        ),
    };
    settings.precision = precision;
    let plan = plan_at(precision);
    if settings.count > plan.n_dofs {
        bail!(
            "--count {} asks for more modes than this problem has unknowns ({} at order {}): \
             use a smaller --count, or refine the mesh (--per-wavelength, --max-size)",
            settings.count,
            plan.n_dofs,
            order.as_int()
        );
    }
    // When the eigen basis for a large --count dominates, say so.
    let usual = budget::with_factor_entries(
        n,
        complex,
        order,
        settings.eigen.basis,
        precision,
        factor_entries,
    );
    let basis_note = (plan.memory_bytes > 2.0 * usual.memory_bytes).then(|| {
        format!(
            "; most of it the eigen basis of {} vectors for --count {} (use a smaller \
             --count)",
            budget::basis_size(settings),
            settings.count
        )
    });
    plan::check_solve(&plan, order, avail, basis_note, args.allow_large)?;
    if args.format == Format::Table {
        println!(
            "plan: {} unknowns{}{}, {:.3e} factor entries (counted), estimated peak memory \
             {} (solver's plan){}",
            plan.n_dofs,
            if plan.complex { " (complex)" } else { "" },
            plan::port_note(settings.ports.len()),
            plan.factor_entries,
            units::bytes(plan.memory_bytes),
            match avail {
                Some(a) => format!(", {} available ({})", units::bytes(a.bytes), a.source),
                None => String::new(),
            }
        );
        println!("factor precision: {} ({reason})", precision.name());
    }

    Ok((plan, avail.map(|a| a.bytes), reason))
}

/// One row per mode for the table and the documents.
fn mode_rows(
    set: &ModeSet<'_>,
    target_ghz: f64,
    figures: &BandFigures,
    load_names: &[String],
    walls_in_eigen: bool,
) -> Vec<ModeRow> {
    set.modes
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let f = m.frequency_hz * 1e-9;
            let q = &m.q;
            // The power balance with the eigenvector's own port amplitudes (before the
            // solver matches them to the refined eigenvalue): an independent check.
            // Impedance walls are part of the eigenvalue, so of the balance too.
            let mut balance = vec![q.q_dielectric];
            if walls_in_eigen {
                balance.push(q.q_walls);
            }
            balance.extend_from_slice(&m.q_ports_balance);
            let q_balance = summary::combine_q(&balance);
            ModeRow {
                index: i + 1,
                frequency_ghz: f,
                frequency_imag_ghz: m.frequency_imag_hz * 1e-9,
                delta_mhz: (f - target_ghz) * 1e3,
                residual: m.residual,
                divergence: m.divergence,
                in_band: figures.in_band.contains(&i),
                q_eigen: m.q_eigen,
                q_loaded: q.q_loaded,
                q_unloaded: q.q_unloaded,
                q_dielectric: q.q_dielectric,
                q_walls: q.q_walls,
                q_ports: q.q_ports.clone(),
                coupling: q.coupling.clone(),
                reflection: q.reflection.clone(),
                load_power_fraction: q.load_power_fraction.clone(),
                load_energy_fraction: load_names
                    .iter()
                    .cloned()
                    .zip(q.load_energy_fraction.iter().copied())
                    .collect(),
                bandwidth_mhz: if q.q_loaded.is_finite() {
                    f * 1e3 / q.q_loaded
                } else {
                    0.0
                },
                q_balance,
                q_check_relative: summary::q_check(m.q_eigen, q_balance),
            }
        })
        .collect()
}

/// In-band modes whose feed reflection at resonance is at most the threshold.
fn good_couplings(rows: &[ModeRow], in_band: &[usize], port_names: &[String]) -> Vec<GoodCoupling> {
    in_band
        .iter()
        .flat_map(|&i| {
            let r = &rows[i];
            port_names.iter().enumerate().filter_map(move |(p, name)| {
                let g = *r.reflection.get(p)?;
                (g <= GOOD_COUPLING_REFLECTION).then(|| GoodCoupling {
                    index: r.index,
                    frequency_ghz: r.frequency_ghz,
                    port: name.clone(),
                    reflection: g,
                    load_power_fraction: r.load_power_fraction.get(p).copied().unwrap_or(0.0),
                })
            })
        })
        .collect()
}

/// The solver's error with what to change on this command line.
fn with_hint(e: SolverError, order: NedelecOrder) -> anyhow::Error {
    let shrink = plan::shrink_hint(order);
    let hint = match &e {
        SolverError::TargetBelowModes => "try a higher --target",
        SolverError::NotConverged { .. } => {
            "try a smaller --count or a narrower --band, or a higher --target"
        }
        SolverError::FactorFailed { .. } | SolverError::Projection { .. } => {
            "try a slightly different --target"
        }
        SolverError::OutOfMemory { .. } => shrink.as_str(),
        SolverError::NoUnknowns => "try a larger --per-wavelength or a smaller --max-size",
        _ => "",
    };
    if hint.is_empty() {
        anyhow!("eigen solve failed: {e}")
    } else {
        anyhow!("eigen solve failed: {e} ({hint})")
    }
}

/// The spectrum picture: the band when one was given or when it holds the target,
/// otherwise the found modes with three bandwidths either side (and the target).
fn spectrum_svg(doc: &ModesDoc, band_explicit: bool) -> String {
    let band = doc.band_summary.band_ghz;
    let t = doc.target_ghz;
    let (range, note) = if band_explicit || (t >= band[0] && t <= band[1]) {
        (
            band,
            format!(
                "range: band {:.3}–{:.3} GHz ({})",
                band[0], band[1], doc.band_summary.band_from
            ),
        )
    } else {
        let mut lo = t;
        let mut hi = t;
        for r in &doc.modes {
            let bw = if r.q_loaded.is_finite() {
                r.frequency_ghz / r.q_loaded
            } else {
                0.0
            };
            lo = lo.min(r.frequency_ghz - 3.0 * bw);
            hi = hi.max(r.frequency_ghz + 3.0 * bw);
        }
        let pad = ((hi - lo) * 0.05).max(t * 1e-3);
        (
            [lo - pad, hi + pad],
            "range: the target and the modes found, three bandwidths either side".to_string(),
        )
    };
    let modes: Vec<SpectrumMode> = doc
        .modes
        .iter()
        .map(|r| SpectrumMode {
            index: r.index,
            frequency_ghz: r.frequency_ghz,
            q_loaded: r.q_loaded,
            coupling: r.coupling.clone(),
            q_ports: r.q_ports.clone(),
        })
        .collect();
    spectrum::svg(&Spectrum {
        title: &doc.title,
        range_ghz: range,
        range_note: &note,
        modes: &modes,
        ports: &doc.ports,
    })
}

/// Region ids of the `.vtu` files with their names and materials.
fn region_infos(mats: &[RegionMaterial], load_names: &[String]) -> Vec<RegionInfo> {
    mats.iter()
        .enumerate()
        .map(|(i, m)| RegionInfo {
            id: i as u32,
            name: if i == 0 {
                "air".into()
            } else {
                load_names.get(i - 1).cloned().unwrap_or_default()
            },
            eps_real: m.eps_real,
            eps_imag: m.eps_imag,
            mu_r: m.mu_r,
        })
        .collect()
}

/// The band summary of the documents from the solver's band figures.
fn band_summary(
    figures: &BandFigures,
    run_review: &RunReview,
    band: [f64; 2],
    band_from: String,
    good_coupling: Vec<GoodCoupling>,
    q_check_max_relative: Option<f64>,
) -> BandSummary {
    BandSummary {
        band_ghz: band,
        band_from,
        modes_in_band: figures.in_band.len(),
        complete: figures.completeness.complete,
        complete_above_q: figures.completeness.above_q,
        weyl_estimate: WeylEstimate::from(&figures.weyl),
        weyl_estimate_air_only: figures.weyl_air_only.as_ref().map(WeylEstimate::from),
        distinct_frequencies: figures.groups_hz.len(),
        group_tolerance_relative: figures.group_tolerance,
        group_tolerance_basis: match run_review.accuracy.relative_error {
            Some(e) => format!(
                "twice the run's expected frequency error {e:.1e} (accuracy estimate): modes \
                 closer than that cannot be told apart"
            ),
            None => "fixed fallback (no accuracy estimate for this order)".into(),
        },
        mean_spacing_mhz: figures.mean_spacing_hz.map(|s| s * 1e-6),
        modal_overlap: figures.modal_overlap,
        good_coupling,
        good_coupling_reflection: GOOD_COUPLING_REFLECTION,
        q_check_max_relative,
    }
}

/// Sizes and times of the solve, with the plan made before it.
/// What the automatic size did (`fit::mesh_to_fit`).
struct SizeFit {
    asked: f64,
    used: f64,
    attempts: Vec<fit::Attempt>,
}

fn mesh_size_figures(geom: &Geometry, sizing: Option<&SizeFit>) -> MeshSizeFigures {
    let pw = geom
        .mesh
        .import
        .is_none()
        .then_some(geom.mesh.per_wavelength);
    match sizing {
        Some(f) => MeshSizeFigures {
            sizing: "automatic".into(),
            per_wavelength: Some(f.used),
            default_per_wavelength: Some(f.asked),
            tried: f
                .attempts
                .iter()
                .map(|a| SizeAttemptFigures {
                    per_wavelength: a.per_wavelength,
                    tets: a.tets,
                    unknowns: a.unknowns,
                    memory_bytes: a.bytes,
                    counted: a.counted,
                })
                .collect(),
        },
        None => MeshSizeFigures {
            sizing: "given".into(),
            per_wavelength: pw,
            default_per_wavelength: None,
            tried: Vec::new(),
        },
    }
}

#[allow(clippy::too_many_arguments)]
fn solve_figures(
    mesh: &TetMesh,
    mesh_s: f64,
    st: &SolveStats,
    plan: &Plan,
    avail: Option<f64>,
    precision_reason: String,
    mesh_size: MeshSizeFigures,
) -> SolveFigures {
    SolveFigures {
        mesh_size,
        factor_precision: st.precision.name().to_string(),
        factor_precision_reason: precision_reason,
        refinement: st.mixed.map(|m| RefinementFigures {
            tolerance: antinode_solver::linalg::mixed::TOLERANCE,
            columns: m.columns,
            refinement_steps: m.refinement_steps,
            gmres_columns: m.gmres_columns,
            gmres_iterations: m.gmres_iterations,
            unconverged: m.unconverged,
            worst_residual: m.worst_residual,
        }),
        nodes: mesh.nodes.len(),
        tets: mesh.tets.len(),
        complex: st.complex,
        matrix_nnz: st.matrix_nnz,
        factor_nnz: st.factor_nnz,
        mesh_s,
        assembly_s: st.assembly_s,
        factor_s: st.factor_s,
        eigen_s: st.eigen_s,
        operator_applications: st.applications,
        restarts: st.restarts,
        spurious_dropped: st.spurious_dropped,
        plan: PlanFigures {
            unknowns: plan.n_dofs,
            complex: plan.complex,
            factor_entries_estimate: plan.factor_entries,
            memory_estimate_bytes: plan.memory_bytes,
            memory_available_bytes: avail,
        },
    }
}
