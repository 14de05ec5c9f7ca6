//! `antinode modes`: mesh, memory check, eigen solve, table and files.

use crate::budget;
use crate::output::json::{ModesDoc, SolveFigures};
use crate::output::summary::{self, BandSummary, ModeRow, WeylEstimate, GROUP_TOLERANCE};
use crate::output::{csv, json, table, vtk_modes};
use crate::progress::Spinner;
use crate::units;
use antinode_mesh::geometry::CavityShape;
use antinode_solver::dofmap::DofMap;
use antinode_solver::modes::k0_squared;
use antinode_solver::problem::{region_materials, settings_from, solve_geometry};
use antinode_solver::topology::Topology;
use anyhow::{bail, Context, Result};
use clap::{Args, ValueEnum};
use std::path::PathBuf;

/// The ISM band used for the summary when neither the file nor `--band` gives one
/// (ITU Radio Regulations No. 5.150: 2400–2500 MHz).
const DEFAULT_BAND_GHZ: [f64; 2] = [2.40, 2.50];

/// Share of the available memory a run may plan to use before it is refused.
const MEMORY_SHARE: f64 = 0.9;

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned table and band summary for reading.
    Table,
    /// The modes.json document on stdout (for scripts).
    Json,
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
    /// Nédélec element order: 1 (fast, error ~h²) or 2 (accurate, error ~h⁴).
    #[arg(long, value_name = "1|2", value_parser = clap::value_parser!(u8).range(1..=2))]
    pub order: Option<u8>,
    /// Elements per local wavelength (overrides [mesh] per_wavelength).
    #[arg(long, value_name = "X")]
    pub per_wavelength: Option<f64>,
    /// Largest element edge anywhere, mm (overrides [mesh] max_size).
    #[arg(long, value_name = "MM")]
    pub max_size: Option<f64>,
    /// Solve even when the memory estimate exceeds the memory available.
    #[arg(long)]
    pub allow_large: bool,
    /// Skip the per-mode field files (mode_NNN.vtu, modes.pvd).
    #[arg(long)]
    pub no_fields: bool,
    /// What to print on stdout.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

fn positive(name: &str, v: f64) -> Result<f64> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        bail!("{name} {v} must be a positive number")
    }
}

pub fn run(args: &ModesArgs) -> Result<()> {
    let mut geom = super::load_geometry(&args.geometry)?;

    // Command-line overrides, applied before meshing (target and sizes shape the mesh).
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
    if let Some(o) = args.order {
        geom.mesh.order = o;
    }
    if let Some(p) = args.per_wavelength {
        geom.mesh.per_wavelength = positive("--per-wavelength", p)?;
    }
    if let Some(m) = args.max_size {
        geom.mesh.max_size = positive("--max-size", m)?;
    }
    let settings = settings_from(&geom);
    let order = settings.order;

    let (mesh, mesh_s) = super::mesh::make(&geom)?;

    // Exact unknown count, then the memory estimate, before any assembly.
    let topo = Topology::new(&mesh);
    let n = DofMap::new(&topo, mesh.nodes.len(), order, |_| true).n_dofs;
    drop(topo);
    let wanted = settings.count.max(1);
    let est = budget::estimate(n, order, wanted);
    match budget::available_bytes() {
        Some(avail) if est.peak_bytes > MEMORY_SHARE * avail && !args.allow_large => bail!(
            "this solve would need an estimated {} ({} unknowns at order {}: ~{:.2e} matrix \
             non-zeros, ~{:.2e} factor entries by a rough fit), but only {} is available \
             (MemAvailable); use --order 1, a smaller --per-wavelength or a larger \
             --max-size, or pass --allow-large to try anyway",
            units::bytes(est.peak_bytes),
            n,
            order.as_int(),
            est.matrix_nnz,
            est.factor_entries,
            units::bytes(avail)
        ),
        Some(_) => {}
        None => eprintln!(
            "note: available memory unknown (/proc/meminfo unreadable); estimated need {}",
            units::bytes(est.peak_bytes)
        ),
    }

    let spinner = Spinner::start("solving");
    let result = solve_geometry(&geom, &mesh, &settings, &mut |s| spinner.stage(s));
    spinner.finish();
    let set = result.context("eigen solve failed")?;

    // Rows and band summary.
    let target_ghz = geom.solve.target;
    let band = geom.solve.band.unwrap_or(DEFAULT_BAND_GHZ);
    let band_from = band_from.unwrap_or_else(|| {
        "default ISM band, ITU Radio Regulations No. 5.150; not used to choose modes".into()
    });
    let rows: Vec<ModeRow> = set
        .modes
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let f = m.frequency_hz * 1e-9;
            ModeRow {
                index: i + 1,
                frequency_ghz: f,
                delta_mhz: (f - target_ghz) * 1e3,
                residual: m.residual,
                divergence: m.divergence,
                in_band: f >= band[0] && f <= band[1],
            }
        })
        .collect();
    let sigma = k0_squared(target_ghz * 1e9);
    let reach = set
        .modes
        .iter()
        .map(|m| (m.k0_squared - sigma).abs())
        .fold(0.0, f64::max);
    let complete = settings.band_hz.is_some()
        || ((k0_squared(band[1] * 1e9) - sigma) < reach
            && (sigma - k0_squared(band[0] * 1e9)) < reach);

    let mats = region_materials(&geom, settings.target_hz);
    let vols = mesh.region_volumes();
    let weyl = if let (CavityShape::Box { size }, true) = (geom.cavity.shape, geom.loads.is_empty())
    {
        let v = size.iter().product::<f64>() * 1e-9;
        let edges = size.iter().sum::<f64>() * 1e-3;
        WeylEstimate {
            modes: summary::weyl_count(band[1] * 1e9, v, Some(edges))
                - summary::weyl_count(band[0] * 1e9, v, Some(edges)),
            formula: "empty box: N(f) = 8πVf³/(3c³) − (a+b+c)f/c + 1/2".into(),
            volume_m3: v,
            source: "Weyl's law, e.g. Balian & Bloch, Ann. Phys. 64 (1971) 271, from memory".into(),
        }
    } else {
        let v: f64 = vols
            .iter()
            .zip(&mats)
            .map(|(v, m)| v * (m.eps_real * m.mu_r).powf(1.5))
            .sum();
        WeylEstimate {
            modes: summary::weyl_count(band[1] * 1e9, v, None)
                - summary::weyl_count(band[0] * 1e9, v, None),
            formula: if geom.loads.is_empty() {
                "N(f) ≈ 8πVf³/(3c³) (leading term)".into()
            } else {
                "N(f) ≈ 8πVf³/(3c³) with optical volume V = Σ V_i (ε′μr)^1.5 (leading term)".into()
            },
            volume_m3: v,
            source: "Weyl's law, e.g. Balian & Bloch, Ann. Phys. 64 (1971) 271, from memory".into(),
        }
    };
    let in_band_hz: Vec<f64> = set
        .modes
        .iter()
        .map(|m| m.frequency_hz)
        .filter(|f| *f >= band[0] * 1e9 && *f <= band[1] * 1e9)
        .collect();
    let groups = summary::groups(&in_band_hz);
    let mean_spacing_mhz = match (groups.first(), groups.last()) {
        (Some(a), Some(b)) if groups.len() > 1 => Some((b - a) * 1e-6 / (groups.len() - 1) as f64),
        _ => None,
    };
    let st = &set.stats;
    let doc = ModesDoc {
        geometry: args.geometry.display().to_string(),
        title: geom.title.clone(),
        target_ghz,
        band_ghz: band,
        order: order.as_int(),
        unknowns: st.n_dofs,
        field_scaling: if args.no_fields {
            "no field files written".into()
        } else {
            "E in V/m and H in A/m for 1 J of stored energy per mode".into()
        },
        modes: rows,
        band_summary: BandSummary {
            band_ghz: band,
            band_from,
            modes_in_band: in_band_hz.len(),
            complete,
            weyl_estimate: weyl,
            distinct_frequencies: groups.len(),
            group_tolerance_relative: GROUP_TOLERANCE,
            mean_spacing_mhz,
        },
        solve: SolveFigures {
            nodes: mesh.nodes.len(),
            tets: mesh.tets.len(),
            matrix_nnz: st.matrix_nnz,
            factor_nnz: st.factor_nnz,
            mesh_s,
            assembly_s: st.assembly_s,
            factor_s: st.factor_s,
            eigen_s: st.eigen_s,
            operator_applications: st.applications,
            restarts: st.restarts,
            spurious_dropped: st.spurious_dropped,
            memory_estimate: est,
        },
    };

    // Files, only now that the results exist.
    let dir = super::output_dir(args.out.as_deref(), &args.geometry);
    super::create_dir(&dir)?;
    json::write(&dir.join("modes.json"), &doc)?;
    csv::write(&dir.join("modes.csv"), &doc.modes)?;
    if !args.no_fields {
        let spinner = Spinner::start("writing mode fields");
        let mu: Vec<f64> = mats.iter().map(|m| m.mu_r).collect();
        let r = vtk_modes::write_all(&dir, &mesh, &set, &mu);
        spinner.finish();
        r?;
    }

    match args.format {
        Format::Json => println!("{}", json::to_string(&doc)?),
        Format::Table => {
            table::print(&doc);
            println!();
            if args.no_fields {
                println!("wrote {}/modes.json and modes.csv", dir.display());
            } else {
                println!(
                    "wrote {}/modes.json, modes.csv, {} mode files (mode_001.vtu …) and \
                     modes.pvd; fields scaled to 1 J stored energy",
                    dir.display(),
                    set.modes.len()
                );
            }
        }
    }
    Ok(())
}
