//! One variant: write its geometry, run the commands into a `.partial` folder, sample
//! the modes at the probe points, write `done.json` with the content hash last, and
//! rename the folder into place.

use super::variant_dir;
use crate::commands::drive::{self, DriveArgs};
use crate::commands::modes::{self, ModesArgs};
use antinode_mesh::sweep::{RunKind, SweepFile, Variant};
use antinode_solver::post::probes::{self, PROBE_COUNT};
use anyhow::{anyhow, Context, Result};
use clap::Parser;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::path::Path;

#[derive(Parser)]
#[command(name = "modes")]
struct ModesLine {
    #[command(flatten)]
    args: ModesArgs,
}

#[derive(Parser)]
#[command(name = "drive")]
struct DriveLine {
    #[command(flatten)]
    args: DriveArgs,
}

/// The command line of one command for a geometry file and output folder.
fn line(sweep: &SweepFile, kind: RunKind, geometry: &Path, out: &Path) -> Vec<String> {
    let mut l = vec![
        kind.name().to_string(),
        geometry.display().to_string(),
        "-o".into(),
        out.display().to_string(),
    ];
    l.extend(sweep.options.get(&kind).into_iter().flatten().cloned());
    l
}

/// A variant's geometry and solver settings as a command of the sweep will run them: its
/// `[options]` applied as the command applies them (`modes`: `--target`, `--band`,
/// `--count`, the mesh options and `--wall-losses`; `drive`: the mesh options), for the
/// memory plan.
pub fn planned(
    sweep: &SweepFile,
    kind: RunKind,
    geometry: &antinode_mesh::Geometry,
) -> Result<(antinode_mesh::Geometry, antinode_solver::ModeSettings)> {
    let l = line(sweep, kind, Path::new("geometry.toml"), Path::new("out"));
    let mut g = geometry.clone();
    let settings = match kind {
        RunKind::Modes => {
            let args = ModesLine::try_parse_from(&l)?.args;
            modes::apply_overrides(&args, &mut g)?;
            let mut s = antinode_solver::problem::settings_from(&g)?;
            s.wall_losses = args.wall_losses.into();
            s
        }
        RunKind::Drive => {
            DriveLine::try_parse_from(&l)?.args.mesh.apply(&mut g)?;
            antinode_solver::problem::settings_from(&g)?
        }
    };
    Ok((g, settings))
}

/// Parses every command's options once, before anything runs.
pub fn check_options(sweep: &SweepFile) -> Result<()> {
    for &kind in &sweep.run {
        let l = line(sweep, kind, Path::new("geometry.toml"), Path::new("out"));
        let r = match kind {
            RunKind::Modes => ModesLine::try_parse_from(&l).map(drop),
            RunKind::Drive => DriveLine::try_parse_from(&l).map(drop),
        };
        r.map_err(|e| {
            anyhow!(
                "{}: [options] {}: {}",
                sweep.path.display(),
                kind.name(),
                e.render()
                    .to_string()
                    .lines()
                    .next()
                    .unwrap_or("invalid option")
            )
        })?;
    }
    Ok(())
}

/// What `done.json` records.
#[derive(Serialize, Deserialize)]
pub struct Done {
    pub variant: usize,
    pub hash: String,
    pub values: Vec<String>,
}

/// SHA-256 of what determines a variant's results: the program version, the geometry
/// text, the turntable sampling, the commands and their options.
pub fn content_hash(sweep: &SweepFile, v: &Variant) -> String {
    let mut h = Sha256::new();
    h.update(env!("CARGO_PKG_VERSION"));
    h.update([0]);
    h.update(&v.text);
    if v.plate.is_some() {
        // How a turntable variant samples its heating (results of another sampling are
        // not reused by --resume).
        h.update([0]);
        h.update(super::plate::SAMPLING);
    }
    for kind in &sweep.run {
        h.update([0]);
        h.update(kind.name());
        for o in sweep.options.get(kind).into_iter().flatten() {
            h.update([0]);
            h.update(o);
        }
    }
    h.finalize().iter().map(|b| format!("{b:02x}")).collect()
}

/// Whether variant `v` has a complete result with a matching hash in `dir`.
pub fn is_complete(sweep: &SweepFile, dir: &Path, v: &Variant) -> bool {
    let done = variant_dir(dir, v.index).join("done.json");
    std::fs::read_to_string(done)
        .ok()
        .and_then(|t| serde_json::from_str::<Done>(&t).ok())
        .is_some_and(|d| d.hash == content_hash(sweep, v))
}

/// The fields of the modes at the probe points, as written to `probes.json`.
#[derive(Serialize, Deserialize)]
pub struct ProbesDoc {
    /// Probe positions as fractions of the cavity's bounding box.
    pub fractions: Vec<[f64; 3]>,
    pub modes: Vec<ProbedModeDoc>,
}

#[derive(Serialize, Deserialize)]
pub struct ProbedModeDoc {
    pub frequency_ghz: f64,
    /// Per point: E as [[re, im]; 3] (V/m, modes normalised as in the solver), or null
    /// outside the mesh.
    pub e: Vec<Option<[[f64; 2]; 3]>>,
}

/// Runs variant `v` into `dir/variants/vNNN` (see the module docs).
pub fn run_one(sweep: &SweepFile, dir: &Path, v: &Variant) -> Result<()> {
    if let Err(e) = &v.geometry {
        return Err(anyhow!("variant {} is rejected: {e}", v.index + 1));
    }
    let done_dir = variant_dir(dir, v.index);
    let partial = done_dir.with_extension("partial");
    for d in [&partial, &done_dir] {
        if d.exists() {
            std::fs::remove_dir_all(d).with_context(|| format!("cannot clear {}", d.display()))?;
        }
    }
    std::fs::create_dir_all(&partial)
        .with_context(|| format!("cannot create {}", partial.display()))?;
    let geometry = partial.join("geometry.toml");
    std::fs::write(&geometry, &v.text)
        .with_context(|| format!("cannot write {}", geometry.display()))?;
    for &kind in &sweep.run {
        let out = partial.join(kind.name());
        let l = line(sweep, kind, &geometry, &out);
        match kind {
            RunKind::Modes => {
                let mut args = ModesLine::try_parse_from(&l)?.args;
                // Variants compare at equal sizes: no automatic relaxation per variant.
                args.fixed_size = true;
                let mut doc = None;
                modes::run_with(&args, &mut |set, _| {
                    doc = Some(probe_doc(set));
                    Ok(())
                })?;
                let doc = doc.ok_or_else(|| anyhow!("modes returned no modes"))?;
                write_json(&partial.join("probes.json"), &doc)?;
            }
            RunKind::Drive => {
                let mut args = DriveLine::try_parse_from(&l)?.args;
                // Variants compare at equal sizes: no automatic relaxation per variant.
                args.fixed_size = true;
                match (&v.plate, &v.geometry) {
                    (Some(plate), Ok(g)) => {
                        let names: Vec<String> = g.loads.iter().map(|l| l.name.clone()).collect();
                        let mut doc = None;
                        drive::run_with(&args, &mut |mesh, r, materials| {
                            doc = Some(super::plate::samples(plate, &names, mesh, r, materials)?);
                            Ok(())
                        })?;
                        let doc = doc.ok_or_else(|| anyhow!("drive returned no response"))?;
                        super::plate::write_samples(&partial, &doc)?;
                    }
                    _ => drive::run(&args)?,
                }
            }
        }
    }
    let done = Done {
        variant: v.index + 1,
        hash: content_hash(sweep, v),
        values: v
            .values
            .iter()
            .map(antinode_mesh::sweep::value_text)
            .collect(),
    };
    write_json(&partial.join("done.json"), &done)?;
    std::fs::rename(&partial, &done_dir).with_context(|| {
        format!(
            "cannot rename {} to {}",
            partial.display(),
            done_dir.display()
        )
    })
}

fn probe_doc(set: &antinode_solver::ModeSet<'_>) -> ProbesDoc {
    let fractions = probes::probe_fractions(PROBE_COUNT);
    let (lo, hi) = probes::bounding_box(&set.space);
    let located = probes::locate(&set.space, &probes::probe_points(&fractions, lo, hi));
    let modes = set
        .modes
        .iter()
        .map(|m| ProbedModeDoc {
            frequency_ghz: m.frequency_hz / 1e9,
            e: probes::sample(&set.space, &m.coefficients, &m.coefficients_imag, &located)
                .into_iter()
                .map(|p| p.map(|e| e.map(|c| [c.re, c.im])))
                .collect(),
        })
        .collect();
    ProbesDoc { fractions, modes }
}

pub fn write_json<T: Serialize>(path: &Path, value: &T) -> Result<()> {
    let text = serde_json::to_string(value)?;
    std::fs::write(path, text).with_context(|| format!("cannot write {}", path.display()))
}
