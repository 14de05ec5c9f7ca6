//! `--slurm`: the batch scripts that run a sweep on a Slurm cluster as a job array, one
//! array task per valid variant (`antinode sweep FILE -o DIR --only K`), and a collect
//! job that builds the tables once every task has ended (`--collect`). Paths are
//! absolute so the scripts run from any folder of the shared storage.
//!
//! Written into DIR/slurm/: `variants.json` (number, parameter values, valid or the
//! geometry error), `array.sbatch`, `collect.sbatch` and `submit.sh`, which submits the
//! array and the collect job with `--dependency=afterany:<array job id>`.

use super::variant::write_json;
use super::{values_text, SweepArgs};
use antinode_mesh::sweep::{SweepFile, Variant};
use anyhow::{bail, Context, Result};
use serde::Serialize;
use std::path::{Path, PathBuf};

#[derive(Serialize)]
struct VariantLine {
    variant: usize,
    values: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    rejected: Option<String>,
}

fn absolute(p: &Path) -> Result<PathBuf> {
    std::path::absolute(p).with_context(|| format!("cannot resolve {}", p.display()))
}

/// Single-quoted for the shell.
fn quoted(p: &Path) -> String {
    format!("'{}'", p.display().to_string().replace('\'', "'\\''"))
}

fn header(name: &str, log: &Path, args: &SweepArgs) -> String {
    let mut h = format!(
        "#!/bin/bash\n#SBATCH --job-name={name}\n#SBATCH --output={}\n",
        log.display()
    );
    if let Some(p) = &args.partition {
        h.push_str(&format!("#SBATCH --partition={p}\n"));
    }
    if let Some(t) = &args.time {
        h.push_str(&format!("#SBATCH --time={t}\n"));
    }
    h
}

pub fn write(sweep: &SweepFile, dir: &Path, variants: &[Variant], args: &SweepArgs) -> Result<()> {
    let valid: Vec<usize> = variants
        .iter()
        .filter(|v| v.geometry.is_ok())
        .map(|v| v.index + 1)
        .collect();
    if valid.is_empty() {
        bail!("no valid variant to submit");
    }
    let dir = absolute(dir)?;
    let sdir = dir.join("slurm");
    std::fs::create_dir_all(&sdir).with_context(|| format!("cannot create {}", sdir.display()))?;
    std::fs::create_dir_all(dir.join("logs"))?;
    let lines: Vec<VariantLine> = variants
        .iter()
        .map(|v| VariantLine {
            variant: v.index + 1,
            values: values_text(sweep, v),
            rejected: v.geometry.as_ref().err().map(|e| e.to_string()),
        })
        .collect();
    write_json(&sdir.join("variants.json"), &lines)?;
    let exe = std::env::current_exe().context("cannot find the antinode executable")?;
    let file = absolute(&sweep.path)?;
    let list: Vec<String> = valid.iter().map(|k| k.to_string()).collect();
    let array = format!(
        "{}#SBATCH --array={}\n#SBATCH --ntasks=1\n\nexec {} sweep {} -o {} --only \"$SLURM_ARRAY_TASK_ID\"\n",
        header("antinode-sweep", &dir.join("logs/slurm-%A_%a.log"), args),
        list.join(","),
        quoted(&exe),
        quoted(&file),
        quoted(&dir)
    );
    let collect = format!(
        "{}#SBATCH --ntasks=1\n\nexec {} sweep {} -o {} --collect\n",
        header(
            "antinode-collect",
            &dir.join("logs/slurm-collect-%j.log"),
            args
        ),
        quoted(&exe),
        quoted(&file),
        quoted(&dir)
    );
    let submit = format!(
        "#!/bin/bash\n# Submits the variant array and the collect job that waits for it.\nset -euo pipefail\n\
         array=$(sbatch --parsable {})\narray=${{array%%;*}}\n\
         collect=$(sbatch --parsable --dependency=afterany:\"$array\" {})\n\
         echo \"array job $array, collect job ${{collect%%;*}}\"\n",
        quoted(&sdir.join("array.sbatch")),
        quoted(&sdir.join("collect.sbatch"))
    );
    for (name, text) in [
        ("array.sbatch", array),
        ("collect.sbatch", collect),
        ("submit.sh", submit),
    ] {
        let p = sdir.join(name);
        std::fs::write(&p, text).with_context(|| format!("cannot write {}", p.display()))?;
    }
    println!(
        "wrote {}/array.sbatch ({} array tasks), collect.sbatch, submit.sh and variants.json; \
         submit with: bash {}/submit.sh",
        sdir.display(),
        valid.len(),
        sdir.display()
    );
    Ok(())
}
