//! `antinode sweep`: expand a sweep file into variants, run `modes` and/or `drive` on
//! each (in separate processes, several at a time within the memory plan), then collect
//! the per-variant results into `sweep.csv`, `sweep.json` and `sweep.svg` with mode
//! tracks.
//!
//! Layout of DIR: `variants/vNNN/` per variant (NNN = 1-based variant number) holding
//! `geometry.toml` (the geometry it ran), `modes/` and `drive/` (the commands' usual
//! outputs), `probes.json` (E of each mode at the probe points, for tracking) and
//! `done.json` (the variant's content hash, written last). A variant is run in
//! `variants/vNNN.partial/` and renamed to `vNNN/` when complete, so a folder without the
//! suffix is always a complete result; `logs/vNNN.log` holds its terminal output.
//!
//! With a `[turntable]` in the base geometry every parameter combination runs at each
//! plate angle (one variant per angle); a variant's folder then also holds
//! `plate_samples.json` (its heating on the load-frame grids), and collect writes
//! `turntable.csv`, `turntable.json` and `turntable_gNNN_fKK.vtu` beside the sweep tables
//! (`plate.rs`).

mod collect;
mod plate;
mod plot;
mod schedule;
mod slurm;
mod tables;
mod variant;

use antinode_mesh::sweep::{SweepFile, Variant};
use anyhow::{bail, Result};
use clap::Args;
use std::path::{Path, PathBuf};

#[derive(Args)]
pub struct SweepArgs {
    /// Sweep file (TOML: base geometry, commands, parameters; see the README).
    pub sweep: PathBuf,
    /// Output folder [default: out/<sweep file name without .toml>].
    #[arg(short = 'o', long = "out", value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Most variants run at once [default: the number of cores]; fewer when the
    /// largest variant's memory plan allows fewer.
    #[arg(long, value_name = "N")]
    pub jobs: Option<usize>,
    /// Keep variants whose complete results exist with the same content hash.
    #[arg(long)]
    pub resume: bool,
    /// Run variant K alone (1-based, as numbered in the tables), without collecting.
    #[arg(long, value_name = "K", conflicts_with = "collect")]
    pub only: Option<usize>,
    /// Only build the tables and the plot from the variant folders already in DIR.
    #[arg(long)]
    pub collect: bool,
    /// Write Slurm batch scripts (a job array of `--only K` tasks and a `--collect` job)
    /// into DIR/slurm instead of running.
    #[arg(long, conflicts_with_all = ["only", "collect", "resume"])]
    pub slurm: bool,
    /// Slurm partition for the batch scripts.
    #[arg(long, value_name = "P", requires = "slurm")]
    pub partition: Option<String>,
    /// Slurm time limit per task (Slurm's format, e.g. 0:30:00).
    #[arg(long, value_name = "T", requires = "slurm")]
    pub time: Option<String>,
}

/// The folder of variant `k` (0-based) in `dir`.
pub fn variant_dir(dir: &Path, k: usize) -> PathBuf {
    dir.join("variants").join(format!("v{:03}", k + 1))
}

/// Where variant `k`'s geometry file is written (named in its error messages).
fn geometry_file(dir: &Path, k: usize) -> PathBuf {
    variant_dir(dir, k).join("geometry.toml")
}

pub fn run(args: &SweepArgs) -> Result<()> {
    let sweep = SweepFile::from_file(&args.sweep).map_err(anyhow::Error::new)?;
    let dir = super::output_dir(args.out.as_deref(), &args.sweep);
    variant::check_options(&sweep)?;
    if let Some(k) = args.only {
        let n = sweep.variant_count();
        if k == 0 || k > n {
            bail!("--only {k}: the sweep has variants 1 to {n}");
        }
        let v = sweep.variant(k - 1, &geometry_file(&dir, k - 1));
        return variant::run_one(&sweep, &dir, &v);
    }
    let variants: Vec<Variant> = sweep.variants(|k| geometry_file(&dir, k));
    report_invalid(&sweep, &variants);
    if args.slurm {
        return slurm::write(&sweep, &dir, &variants, args);
    }
    if !args.collect {
        schedule::run_all(&sweep, &dir, &variants, args)?;
    }
    collect::collect(&sweep, &dir, &variants)
}

/// Prints each rejected variant with its parameter values and the geometry error.
fn report_invalid(sweep: &SweepFile, variants: &[Variant]) {
    let bad: Vec<&Variant> = variants.iter().filter(|v| v.geometry.is_err()).collect();
    if bad.is_empty() {
        println!("{} variants, all valid", variants.len());
        return;
    }
    println!(
        "{} variants, {} rejected (the others run):",
        variants.len(),
        bad.len()
    );
    for v in bad {
        if let Err(e) = &v.geometry {
            println!("  variant {}: {}: {e}", v.index + 1, values_text(sweep, v));
        }
    }
}

/// `key = value, …` of a variant.
pub fn values_text(sweep: &SweepFile, v: &Variant) -> String {
    sweep
        .column_keys()
        .iter()
        .zip(&v.values)
        .map(|(k, x)| format!("{k} = {}", antinode_mesh::sweep::value_text(x)))
        .collect::<Vec<_>>()
        .join(", ")
}
