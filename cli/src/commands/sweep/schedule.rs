//! Running the variants on this machine: each in its own process
//! (`antinode sweep FILE -o DIR --only K`, the same step a cluster array task runs), as
//! many at once as `--jobs` and the memory allow.
//!
//! Concurrency: J = min(--jobs or the core count, ⌊0.9 · MemAvailable / M⌋, pending),
//! at least 1, with M the largest peak memory of the solver's plan with the factor's
//! entries counted (`antinode_solver::budget::plan_counted`) over the variants to run, for the heaviest command each
//! runs with its `[options]` (mesh options, and for `modes` also `--target`, `--band`,
//! `--count` and `--wall-losses`). Each process gets ⌈cores / J⌉ threads (RAYON_NUM_THREADS), so the cores are
//! shared rather than oversubscribed.

use super::variant::{self, is_complete};
use super::SweepArgs;
use crate::budget::available;
use crate::units;
use antinode_mesh::sweep::{RunKind, SweepFile, Variant};
use antinode_solver::budget;
use antinode_solver::problem::region_materials;
use anyhow::{Context, Result};
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// Share of the available memory the concurrent runs may plan to use (as `modes`).
const MEMORY_SHARE: f64 = 0.9;

/// The largest plan (bytes) of variant `v` over the commands it runs, each with its
/// sweep options applied ([`variant::planned`]).
pub(super) fn plan_bytes(sweep: &SweepFile, v: &Variant) -> Result<f64> {
    let Ok(geom) = &v.geometry else {
        return Ok(0.0);
    };
    let mut worst: f64 = 0.0;
    for &kind in &sweep.run {
        let (g, settings) = variant::planned(sweep, kind, geom)?;
        let (mesh, _) = crate::commands::mesh::make(&g)?;
        let plan = match kind {
            RunKind::Modes => {
                budget::plan_counted(&mesh, &region_materials(&g, settings.target_hz), &settings)?
            }
            RunKind::Drive => budget::plan_driven_counted(&mesh, settings.order, g.ports.len())?,
        };
        worst = worst.max(plan.memory_bytes);
    }
    Ok(worst)
}

pub fn run_all(
    sweep: &SweepFile,
    dir: &Path,
    variants: &[Variant],
    args: &SweepArgs,
) -> Result<()> {
    let pending: Vec<&Variant> = variants
        .iter()
        .filter(|v| v.geometry.is_ok())
        .filter(|v| !(args.resume && is_complete(sweep, dir, v)))
        .collect();
    let kept = variants.iter().filter(|v| v.geometry.is_ok()).count() - pending.len();
    if args.resume {
        println!(
            "resume: {kept} variants complete with matching hash, {} to run",
            pending.len()
        );
    }
    if pending.is_empty() {
        return Ok(());
    }
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let mut largest: f64 = 0.0;
    for v in &pending {
        largest = largest.max(plan_bytes(sweep, v)?);
    }
    let by_memory = match available().map(|a| a.bytes) {
        Some(a) if largest > 0.0 => ((MEMORY_SHARE * a / largest).floor() as usize).max(1),
        _ => usize::MAX,
    };
    let jobs = args
        .jobs
        .unwrap_or(cores)
        .max(1)
        .min(by_memory)
        .min(pending.len());
    let threads = cores.div_ceil(jobs);
    println!(
        "running {} variants, {jobs} at a time ({threads} threads each; largest plan {}{})",
        pending.len(),
        units::bytes(largest),
        available().map_or(String::new(), |a| format!(
            ", {} available",
            units::bytes(a.bytes)
        ))
    );
    let logs = dir.join("logs");
    std::fs::create_dir_all(&logs).with_context(|| format!("cannot create {}", logs.display()))?;
    let exe = std::env::current_exe().context("cannot find the antinode executable")?;
    let t0 = Instant::now();
    let mut queue = pending.iter().rev().copied().collect::<Vec<_>>();
    let mut running: Vec<(usize, Child)> = Vec::new();
    let mut failed = Vec::new();
    while !queue.is_empty() || !running.is_empty() {
        while running.len() < jobs {
            let Some(v) = queue.pop() else { break };
            let log_path = logs.join(format!("v{:03}.log", v.index + 1));
            let log = std::fs::File::create(&log_path)
                .with_context(|| format!("cannot create {}", log_path.display()))?;
            let child = Command::new(&exe)
                .arg("sweep")
                .arg(&sweep.path)
                .arg("-o")
                .arg(dir)
                .arg("--only")
                .arg((v.index + 1).to_string())
                .env("RAYON_NUM_THREADS", threads.to_string())
                .stdin(Stdio::null())
                .stdout(log.try_clone()?)
                .stderr(log)
                .spawn()
                .context("cannot start a variant run")?;
            running.push((v.index, child));
        }
        std::thread::sleep(Duration::from_millis(100));
        let mut still = Vec::with_capacity(running.len());
        for (k, mut child) in running {
            match child.try_wait()? {
                None => still.push((k, child)),
                Some(status) => {
                    let mark = if status.success() { "done" } else { "FAILED" };
                    if !status.success() {
                        failed.push(k + 1);
                    }
                    println!(
                        "  variant {} {mark} ({:.1} s since start; log {}/v{:03}.log)",
                        k + 1,
                        t0.elapsed().as_secs_f64(),
                        logs.display(),
                        k + 1
                    );
                }
            }
        }
        running = still;
    }
    println!(
        "variants ran in {:.1} s wall time",
        t0.elapsed().as_secs_f64()
    );
    if !failed.is_empty() {
        println!("failed variants (see their logs): {failed:?}");
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    //! The memory plan of a variant takes the command options as the command would: a
    //! sweep whose `modes` options say `--target 3.1 --count 60` plans what a geometry
    //! file with that target and count in `[solve]` plans (the same counted plan,
    //! `antinode_solver::budget::plan_counted`, on the same mesh). Invented test geometry.
    use super::*;

    const BASE: &str = "[cavity]\nshape = \"box\"\nsize = [200.0, 150.0, 120.0]\nwalls = \"pec\"\n\
                        [mesh]\norder = 1\nper_wavelength = 4.0\n";

    fn plan_of_file(text: &str) -> f64 {
        let g = antinode_mesh::Geometry::from_toml_str(text, None).unwrap();
        let s = antinode_solver::problem::settings_from(&g).unwrap();
        let (mesh, _) = crate::commands::mesh::make(&g).unwrap();
        budget::plan_counted(&mesh, &region_materials(&g, s.target_hz), &s)
            .unwrap()
            .memory_bytes
    }

    fn sweep_plan(options: &str) -> f64 {
        let dir = std::env::temp_dir().join(format!(
            "antinode-plan-{}-{}",
            std::process::id(),
            options.len()
        ));
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("g.toml"), BASE).unwrap();
        let sweep = dir.join("s.toml");
        std::fs::write(
            &sweep,
            format!(
                "geometry = \"g.toml\"\nrun = [\"modes\"]\n[options]\nmodes = [{options}]\n\
                 [[parameter]]\nkey = \"cavity.size.2\"\nvalues = [120.0]\n"
            ),
        )
        .unwrap();
        let s = SweepFile::from_file(&sweep).unwrap();
        let v = s.variant(0, &dir.join("v.toml"));
        let bytes = plan_bytes(&s, &v).unwrap();
        let _ = std::fs::remove_dir_all(&dir);
        bytes
    }

    #[test]
    fn plan_applies_target_and_count() {
        let with = sweep_plan("\"--target\", \"3.1\", \"--count\", \"60\"");
        let by_hand = plan_of_file(&format!("{BASE}[solve]\ntarget = 3.1\ncount = 60\n"));
        assert_eq!(with, by_hand);
        // Without the options the plan is the file's own (target 2.45 GHz, 20 modes),
        // and smaller: a coarser mesh and a smaller eigen basis.
        let without = sweep_plan("\"--order\", \"1\"");
        assert_eq!(without, plan_of_file(BASE));
        assert!(without < with, "{without} {with}");
    }
}
