//! Collect: read every variant folder, track the modes between neighbouring variants
//! and write `sweep.csv`, `sweep.json` and `sweep.svg`.
//!
//! Neighbours form a tree over the variants: a variant continues the tracks of the
//! variant whose value indices are its own with the last non-zero one lowered by one
//! (the previous value of the last parameter, or, at a row's first value, the previous
//! value of the parameter before it), so over a grid of several parameters the same mode
//! keeps one track id in every variant, following the fields along each parameter
//! (`antinode_solver::post::tracking::track_tree`). With `combine = "zip"` (no
//! turntable) each variant continues the one before it. Tracks start again where the
//! neighbour has no result.

use super::tables::{self, AtLine, DriveLine, ModeLine};
use super::variant::{is_complete, ProbesDoc};
use super::{plot, variant_dir};
use antinode_mesh::sweep::{value_text, Combine, RunKind, SweepFile, Variant};
use antinode_solver::post::tracking::{track_tree, ProbedMode, TrackOptions};
use anyhow::{Context, Result};
use faer::c64;
use serde::Serialize;
use std::collections::HashMap;
use std::path::Path;

#[derive(Serialize)]
struct VariantEntry {
    variant: usize,
    values: Vec<String>,
    /// "done", "rejected" (geometry error) or "missing" (not run, failed or interrupted).
    status: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    error: Option<String>,
    folder: String,
}

#[derive(Serialize)]
struct SweepDoc<'a> {
    sweep: String,
    title: Option<String>,
    geometry: String,
    parameters: Vec<String>,
    run: Vec<&'static str>,
    tracking: &'static str,
    variants: Vec<VariantEntry>,
    modes: &'a [ModeLine],
    drive: &'a [DriveLine],
    drive_at: &'a [AtLine],
}

/// Everything read back from one complete variant.
#[derive(Default)]
struct Results {
    modes: Vec<tables::ModeFigures>,
    probed: Vec<ProbedMode>,
    drive: Vec<DriveLine>,
    at: Option<AtLine>,
}

fn read_results(sweep: &SweepFile, dir: &Path, v: &Variant) -> Result<Results> {
    let vd = variant_dir(dir, v.index);
    let values: Vec<String> = v.values.iter().map(value_text).collect();
    let mut r = Results::default();
    if sweep.run.contains(&RunKind::Modes) {
        r.modes = tables::mode_figures(&tables::read_json(&vd.join("modes/modes.json"))?);
        let probes: ProbesDoc = serde_json::from_value(tables::read_json(&vd.join("probes.json"))?)
            .with_context(|| format!("{}: unexpected probes.json", vd.display()))?;
        r.probed = probes
            .modes
            .into_iter()
            .map(|m| ProbedMode {
                frequency_hz: m.frequency_ghz * 1e9,
                field: m
                    .e
                    .into_iter()
                    .map(|p| p.map(|e| e.map(|[re, im]| c64::new(re, im))))
                    .collect(),
            })
            .collect();
    }
    if sweep.run.contains(&RunKind::Drive) {
        let doc = tables::read_json(&vd.join("drive/response.json"))?;
        (r.drive, r.at) = tables::drive_lines(&doc, v.index + 1, &values);
    }
    Ok(r)
}

/// The neighbour each variant continues its tracks from (see the module docs), None
/// where tracks start; `has_result(k)` says whether variant k has modes to match.
fn tracking_parents(
    sweep: &SweepFile,
    n: usize,
    has_result: impl Fn(usize) -> bool,
) -> Vec<Option<usize>> {
    let chain = sweep.combine == Combine::Zip && sweep.plate_angles.is_none();
    let index: HashMap<Vec<usize>, usize> = (0..n).map(|k| (sweep.value_indices(k), k)).collect();
    (0..n)
        .map(|k| {
            let parent = if chain {
                k.checked_sub(1)
            } else {
                let mut idx = sweep.value_indices(k);
                let p = idx.iter().rposition(|&i| i > 0)?;
                idx[p] -= 1;
                index.get(&idx).copied()
            };
            parent.filter(|&p| p < k && has_result(p))
        })
        .collect()
}

pub fn collect(sweep: &SweepFile, dir: &Path, variants: &[Variant]) -> Result<()> {
    let mut entries = Vec::with_capacity(variants.len());
    let mut results: Vec<Option<Results>> = Vec::with_capacity(variants.len());
    for v in variants {
        let values: Vec<String> = v.values.iter().map(value_text).collect();
        let folder = variant_dir(dir, v.index).display().to_string();
        let (status, error, res) = match &v.geometry {
            Err(e) => ("rejected", Some(e.to_string()), None),
            Ok(_) if !is_complete(sweep, dir, v) => ("missing", None, None),
            Ok(_) => match read_results(sweep, dir, v) {
                Ok(r) => ("done", None, Some(r)),
                Err(e) => ("missing", Some(format!("{e:#}")), None),
            },
        };
        entries.push(VariantEntry {
            variant: v.index + 1,
            values,
            status,
            error,
            folder,
        });
        results.push(res);
    }
    let parents = tracking_parents(sweep, variants.len(), |k| results[k].is_some());
    let chain: Vec<Vec<ProbedMode>> = results
        .iter()
        .map(|r| r.as_ref().map(|r| r.probed.clone()).unwrap_or_default())
        .collect();
    let ids = track_tree(&chain, &parents, &TrackOptions::default());
    let mut modes = Vec::new();
    let mut drive = Vec::new();
    let mut at = Vec::new();
    for (k, r) in results.iter().enumerate() {
        let Some(r) = r else { continue };
        for (i, &(f, ql, q0, in_band, refl)) in r.modes.iter().enumerate() {
            let (track, overlap) = ids[k].get(i).copied().unwrap_or((usize::MAX, None));
            modes.push(ModeLine {
                variant: k + 1,
                values: entries[k].values.clone(),
                track,
                track_overlap: overlap,
                mode: i + 1,
                frequency_ghz: f,
                q_loaded: ql,
                q_unloaded: q0,
                in_band,
                reflection_port1: refl,
            });
        }
        drive.extend(r.drive.iter().cloned());
        at.extend(r.at.clone());
    }
    let keys: Vec<String> = sweep.column_keys();
    std::fs::create_dir_all(dir).with_context(|| format!("cannot create {}", dir.display()))?;
    tables::write_csv(&dir.join("sweep.csv"), &keys, &modes, &drive)?;
    let doc = SweepDoc {
        sweep: sweep.path.display().to_string(),
        title: sweep.title.clone(),
        geometry: sweep.geometry.display().to_string(),
        parameters: keys,
        run: sweep.run.iter().map(|k| k.name()).collect(),
        tracking: "modes of neighbouring variants (one parameter one value apart: the \
                   previous value of the last parameter, at a row's first value the \
                   previous value of the parameter before it) matched by the MAC of E at \
                   common probe points, degenerate groups as subspaces (principal \
                   angles); track_overlap is the overlap that continued the track",
        variants: entries,
        modes: &modes,
        drive: &drive,
        drive_at: &at,
    };
    let json = serde_json::to_string_pretty(&doc)?;
    tables::write_atomic(&dir.join("sweep.json"), json.as_bytes())?;
    let mut plate_plot = Vec::new();
    if sweep.plate_angles.is_some() && sweep.run.contains(&RunKind::Drive) {
        let plate: Vec<Option<super::plate::AngleResult>> = variants
            .iter()
            .zip(&doc.variants)
            .map(|(v, e)| {
                (e.status == "done")
                    .then(|| super::plate::read_angle(dir, v, &e.values).ok())
                    .flatten()
            })
            .collect();
        plate_plot = super::plate::collect(sweep, dir, variants, &plate)?;
    }
    let svg = plot::svg(sweep, variants, &modes, &at, &plate_plot);
    tables::write_atomic(&dir.join("sweep.svg"), svg.as_bytes())?;
    let done = doc.variants.iter().filter(|e| e.status == "done").count();
    println!(
        "{done} of {} variants done; wrote {}/sweep.csv, sweep.json and sweep.svg",
        doc.variants.len(),
        dir.display()
    );
    for e in doc.variants.iter().filter(|e| e.status == "missing") {
        println!(
            "  variant {} has no complete result{}",
            e.variant,
            e.error
                .as_deref()
                .map(|x| format!(": {x}"))
                .unwrap_or_default()
        );
    }
    Ok(())
}
