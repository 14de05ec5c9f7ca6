//! Turntable sweeps: each variant's heating sampled on its loads' frame grids
//! (`plate_samples.json`), and, when collecting, the figures averaged over the plate
//! angles of each parameter combination: `turntable.csv`, `turntable.json` and
//! `turntable_gNNN_fKK.vtu` (the averaged heating on the load-frame grid at each `--at`
//! frequency), and the figures `sweep.svg` draws against the angle. The mathematics is in
//! `antinode_solver::driven::rotation`.

use super::tables::{self, write_atomic, AtLine, DriveLine};
use super::variant::write_json;
use super::variant_dir;
use antinode_mesh::sweep::{value_text, PlateVariant, SweepFile, Variant};
use antinode_mesh::vtk::{self, CellBlock, DataArray, VtuPiece};
use antinode_mesh::TetMesh;
use antinode_solver::driven::response::point_heating;
use antinode_solver::driven::rotation::{
    load_grid, points_at_angle, rotation_average, sample_uniformity, LoadGrid,
};
use antinode_solver::driven::system::MaterialsAt;
use antinode_solver::driven::DrivenResponse;
use antinode_solver::post::probes;
use antinode_solver::problem::mm_to_m;
use anyhow::{anyhow, Context, Result};
use serde::{Deserialize, Serialize};
use std::path::Path;

/// One load at one field frequency: the grid points held at every angle, and each
/// angle's samples at them.
type KeptSamples = (Vec<usize>, Vec<Vec<f64>>);

/// The sampling of `plate_samples.json` (part of a turntable variant's content hash).
pub const SAMPLING: &str = "field density at the load-frame grid points";

/// `plate_samples.json` of one variant.
#[derive(Serialize, Deserialize)]
pub struct PlateSamplesDoc {
    pub angle_deg: f64,
    /// The field (`--at`) frequencies, GHz.
    pub frequencies_ghz: Vec<f64>,
    pub loads: Vec<PlateLoadSamples>,
}

#[derive(Serialize, Deserialize)]
pub struct PlateLoadSamples {
    pub name: String,
    /// Per field frequency, per grid point (the load-frame grid's order): the heating
    /// density (W/m³) of the field at the point at this angle; null where the point is in
    /// no tetrahedron of this load.
    pub heating_w_per_m3: Vec<Vec<Option<f64>>>,
}

/// The load-frame grid of each riding load (the same in every variant of a combination).
fn grids(plate: &PlateVariant) -> Vec<(String, LoadGrid)> {
    plate
        .loads
        .iter()
        .map(|(n, s)| (n.clone(), load_grid(s, plate.turntable.grid_mm)))
        .collect()
}

/// Samples a solved variant's heating on its loads' grids turned to its plate angle: the
/// density of the field at each point (the element functions of the tetrahedron holding
/// it, `point_heating`), where that tetrahedron belongs to the load.
pub fn samples(
    plate: &PlateVariant,
    load_names: &[String],
    mesh: &TetMesh,
    r: &DrivenResponse<'_>,
    materials: &MaterialsAt<'_>,
) -> Result<PlateSamplesDoc> {
    let space = &r.operator.space;
    let mats: Vec<_> = r.at.iter().map(|a| materials(a.frequency_hz)).collect();
    let mut loads = Vec::new();
    for (name, grid) in grids(plate) {
        let region = load_names
            .iter()
            .position(|n| *n == name)
            .ok_or_else(|| anyhow!("riding load \"{name}\" is not in the variant's geometry"))?
            as u32
            + 1;
        let pts: Vec<[f64; 3]> = points_at_angle(&grid, plate.turntable.center, plate.angle_deg)
            .into_iter()
            .map(|p| p.map(mm_to_m))
            .collect();
        // Points in another region's tetrahedron (the load's faceted rim) are dropped.
        let located: Vec<Option<(usize, [f64; 4])>> = probes::locate(space, &pts)
            .into_iter()
            .map(|l| l.filter(|&(t, _)| mesh.tet_region[t] == region))
            .collect();
        let heating =
            r.at.iter()
                .zip(&mats)
                .map(|(a, m)| {
                    let omega = 2.0 * std::f64::consts::PI * a.frequency_hz;
                    point_heating(space, omega, m, &a.field.re, &a.field.im, &located)
                })
                .collect();
        loads.push(PlateLoadSamples {
            name,
            heating_w_per_m3: heating,
        });
    }
    Ok(PlateSamplesDoc {
        angle_deg: plate.angle_deg,
        frequencies_ghz: r.at.iter().map(|a| a.frequency_hz / 1e9).collect(),
        loads,
    })
}

pub fn write_samples(dir: &Path, doc: &PlateSamplesDoc) -> Result<()> {
    write_json(&dir.join("plate_samples.json"), doc)
}

/// One angle's figures at one field frequency.
#[derive(Clone, Serialize)]
struct AtFigures {
    frequency_ghz: f64,
    s11_abs: f64,
    absorbed_fraction: f64,
    heating: Vec<LoadHeating>,
}

#[derive(Clone, Serialize)]
struct LoadHeating {
    load: String,
    /// σ/μ over the load-frame grid.
    cov: f64,
    /// μ over the grid (W/m³).
    mean_w_per_m3: f64,
    /// Grid points used (those in the load's cells at every angle).
    samples: usize,
    /// Grid points dropped (outside the load's cells at some angle).
    dropped: usize,
}

#[derive(Serialize)]
struct AngleEntry {
    variant: usize,
    angle_deg: f64,
    at: Vec<AtFigures>,
}

#[derive(Serialize)]
struct MeanLoadHeating {
    #[serde(flatten)]
    averaged: LoadHeating,
    /// The mean over the angles of each fixed angle's COV (the same grid and samples).
    fixed_angle_cov_mean: f64,
    fixed_angle_cov_min: f64,
    fixed_angle_cov_max: f64,
    /// rms over angles and points of (q_θ − q̄), over the mean of q̄: how much the angles'
    /// patterns differ in the load's frame (0 when every angle heats it alike).
    angle_spread: f64,
}

#[derive(Serialize)]
struct MeanAt {
    frequency_ghz: f64,
    s11_abs: f64,
    absorbed_fraction: f64,
    heating: Vec<MeanLoadHeating>,
    /// The averaged heating at this frequency on the load-frame grid.
    vtu: String,
}

#[derive(Serialize)]
struct BandMean {
    frequency_ghz: f64,
    s11_abs: f64,
    absorbed_fraction: f64,
}

#[derive(Serialize)]
struct GroupEntry {
    /// Parameter combination (1-based).
    group: usize,
    values: Vec<String>,
    /// "done", or "incomplete" (some angle has no result: no averages).
    status: &'static str,
    angles: Vec<AngleEntry>,
    #[serde(skip_serializing_if = "Option::is_none")]
    mean_at: Option<Vec<MeanAt>>,
    /// |S11| and absorbed fraction averaged over the angles at each band frequency.
    #[serde(skip_serializing_if = "Option::is_none")]
    mean_band: Option<Vec<BandMean>>,
}

#[derive(Serialize)]
struct TurntableDoc {
    center_mm: [f64; 2],
    loads: Vec<String>,
    angles_deg: Vec<f64>,
    grid_mm: f64,
    averaging: &'static str,
    groups: Vec<GroupEntry>,
}

/// What collect needs of one complete variant.
pub struct AngleResult {
    pub variant: usize,
    pub drive: Vec<DriveLine>,
    pub at: Vec<AtLine>,
    pub samples: PlateSamplesDoc,
}

pub fn read_angle(dir: &Path, v: &Variant, values: &[String]) -> Result<AngleResult> {
    let vd = variant_dir(dir, v.index);
    let doc = tables::read_json(&vd.join("drive/response.json"))?;
    let (drive, _) = tables::drive_lines(&doc, v.index + 1, values);
    let at = tables::at_lines(&doc, v.index + 1);
    let text = std::fs::read_to_string(vd.join("plate_samples.json"))
        .with_context(|| format!("cannot read {}/plate_samples.json", vd.display()))?;
    let samples: PlateSamplesDoc = serde_json::from_str(&text)
        .with_context(|| format!("{}: unexpected plate_samples.json", vd.display()))?;
    Ok(AngleResult {
        variant: v.index + 1,
        drive,
        at,
        samples,
    })
}

fn mean(x: impl Iterator<Item = f64>) -> f64 {
    let v: Vec<f64> = x.collect();
    v.iter().sum::<f64>() / v.len() as f64
}

/// What `sweep.svg` shows of one complete parameter combination: the figures at the
/// first field (`--at`) frequency against the plate angle.
pub struct PlotGroup {
    /// The combination's parameter values (empty without parameters).
    pub label: String,
    pub frequency_ghz: f64,
    pub angles_deg: Vec<f64>,
    pub s11_abs: Vec<f64>,
    pub absorbed_fraction: Vec<f64>,
    /// Means over the angles.
    pub s11_mean: f64,
    pub absorbed_mean: f64,
    pub loads: Vec<PlotLoad>,
}

/// One riding load's heating COV at each fixed angle and of the averaged pattern.
pub struct PlotLoad {
    pub name: String,
    pub fixed_cov: Vec<f64>,
    pub averaged_cov: f64,
}

/// The averaged-heating VTU of combination `g` (0-based) at field frequency `fi`.
fn vtu_name(g: usize, fi: usize) -> String {
    format!("turntable_g{:03}_f{:02}.vtu", g + 1, fi + 1)
}

/// Writes the turntable outputs; `results[k]` is variant k's, None when missing. Returns
/// the complete combinations' figures for `sweep.svg`.
pub fn collect(
    sweep: &SweepFile,
    dir: &Path,
    variants: &[Variant],
    results: &[Option<AngleResult>],
) -> Result<Vec<PlotGroup>> {
    let Some(angles) = &sweep.plate_angles else {
        return Ok(Vec::new());
    };
    let mut plot = Vec::new();
    let na = angles.len();
    let keys: Vec<String> = sweep.parameters.iter().map(|p| p.key.clone()).collect();
    let mut groups = Vec::new();
    let mut csv_rows: Vec<Vec<String>> = Vec::new();
    let mut plate_info = None;
    for g in 0..sweep.combination_count() {
        let vs = &variants[g * na..(g + 1) * na];
        let rs = &results[g * na..(g + 1) * na];
        let values: Vec<String> = vs[0].values[..keys.len()].iter().map(value_text).collect();
        if plate_info.is_none() {
            plate_info = vs
                .iter()
                .find_map(|v| v.plate.as_ref())
                .map(|p| p.turntable.clone());
        }
        let complete: Option<Vec<&AngleResult>> = rs.iter().map(Option::as_ref).collect();
        let Some(rs) = complete.filter(|_| vs.iter().all(|v| v.plate.is_some())) else {
            groups.push(GroupEntry {
                group: g + 1,
                values,
                status: "incomplete",
                angles: Vec::new(),
                mean_at: None,
                mean_band: None,
            });
            continue;
        };
        let plate = vs[0].plate.as_ref().expect("checked above");
        let grids = grids(plate);
        let n_at = rs[0].samples.frequencies_ghz.len();
        // Per load and field frequency: the grid points held at every angle, then each
        // angle's samples there.
        let mut heat: Vec<Vec<KeptSamples>> = Vec::new();
        for (li, (name, grid)) in grids.iter().enumerate() {
            let mut per_f = Vec::new();
            for fi in 0..n_at {
                let per_angle: Vec<&Vec<Option<f64>>> = rs
                    .iter()
                    .map(|r| {
                        r.samples
                            .loads
                            .get(li)
                            .filter(|l| l.name == *name)
                            .and_then(|l| l.heating_w_per_m3.get(fi))
                            .filter(|s| s.len() == grid.points.len())
                            .ok_or_else(|| {
                                anyhow!("plate samples of load \"{name}\" do not match its grid")
                            })
                    })
                    .collect::<Result<_>>()?;
                let kept: Vec<usize> = (0..grid.points.len())
                    .filter(|&i| per_angle.iter().all(|s| s[i].is_some()))
                    .collect();
                let samples: Vec<Vec<f64>> = per_angle
                    .iter()
                    .map(|s| kept.iter().map(|&i| s[i].unwrap_or_default()).collect())
                    .collect();
                per_f.push((kept, samples));
            }
            heat.push(per_f);
        }
        let figures = |kept: &[usize], s: &[f64], name: &str, total: usize| {
            let u = sample_uniformity(s);
            LoadHeating {
                load: name.to_string(),
                cov: u.map_or(f64::NAN, |u| u.cov),
                mean_w_per_m3: u.map_or(0.0, |u| u.mean),
                samples: kept.len(),
                dropped: total - kept.len(),
            }
        };
        let mut angle_entries = Vec::new();
        for (a, r) in rs.iter().enumerate() {
            let at = (0..n_at)
                .map(|fi| {
                    let line = r.at.get(fi);
                    AtFigures {
                        frequency_ghz: rs[a].samples.frequencies_ghz[fi],
                        s11_abs: line.map_or(f64::NAN, |l| l.s11_abs),
                        absorbed_fraction: line.map_or(f64::NAN, |l| l.absorbed_fraction),
                        heating: grids
                            .iter()
                            .enumerate()
                            .map(|(li, (name, grid))| {
                                let (kept, s) = &heat[li][fi];
                                figures(kept, &s[a], name, grid.points.len())
                            })
                            .collect(),
                    }
                })
                .collect();
            angle_entries.push(AngleEntry {
                variant: r.variant,
                angle_deg: angles[a],
                at,
            });
        }
        let mut averaged: Vec<Vec<Vec<f64>>> = Vec::new();
        let mean_at: Vec<MeanAt> = (0..n_at)
            .map(|fi| {
                let heating = grids
                    .iter()
                    .enumerate()
                    .map(|(li, (name, grid))| {
                        let (kept, s) = &heat[li][fi];
                        let avg = rotation_average(s).unwrap_or_default();
                        let each: Vec<f64> = angle_entries
                            .iter()
                            .map(|e| e.at[fi].heating[li].cov)
                            .collect();
                        let qm = mean(avg.iter().copied());
                        let spread = (s
                            .iter()
                            .flat_map(|sa| sa.iter().zip(&avg).map(|(q, m)| (q - m).powi(2)))
                            .sum::<f64>()
                            / (s.len() * avg.len()).max(1) as f64)
                            .sqrt()
                            / qm;
                        let h = MeanLoadHeating {
                            angle_spread: spread,
                            averaged: figures(kept, &avg, name, grid.points.len()),
                            fixed_angle_cov_mean: mean(each.iter().copied()),
                            fixed_angle_cov_min: each.iter().copied().fold(f64::INFINITY, f64::min),
                            fixed_angle_cov_max: each
                                .iter()
                                .copied()
                                .fold(f64::NEG_INFINITY, f64::max),
                        };
                        if averaged.len() <= li {
                            averaged.push(Vec::new());
                        }
                        averaged[li].push(avg);
                        h
                    })
                    .collect();
                MeanAt {
                    frequency_ghz: rs[0].samples.frequencies_ghz[fi],
                    s11_abs: mean(angle_entries.iter().map(|e| e.at[fi].s11_abs)),
                    absorbed_fraction: mean(
                        angle_entries.iter().map(|e| e.at[fi].absorbed_fraction),
                    ),
                    heating,
                    vtu: vtu_name(g, fi),
                }
            })
            .collect();
        let nf = rs[0].drive.len();
        let mean_band: Vec<BandMean> = (0..nf)
            .map(|i| BandMean {
                frequency_ghz: rs[0].drive[i].frequency_ghz,
                s11_abs: mean(
                    rs.iter()
                        .map(|r| r.drive.get(i).map_or(f64::NAN, |d| d.s11_abs)),
                ),
                absorbed_fraction: mean(
                    rs.iter()
                        .map(|r| r.drive.get(i).map_or(f64::NAN, |d| d.absorbed_fraction)),
                ),
            })
            .collect();
        for (fi, m) in mean_at.iter().enumerate() {
            write_vtu(&dir.join(&m.vtu), &grids, &heat, &averaged, angles, fi)?;
        }
        if let Some(m) = mean_at.first() {
            plot.push(PlotGroup {
                label: if keys.is_empty() {
                    String::new()
                } else {
                    format!(
                        "group {}: {}",
                        g + 1,
                        keys.iter()
                            .zip(&values)
                            .map(|(k, v)| format!("{k} = {v}"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    )
                },
                frequency_ghz: m.frequency_ghz,
                angles_deg: angles.clone(),
                s11_abs: angle_entries.iter().map(|e| e.at[0].s11_abs).collect(),
                absorbed_fraction: angle_entries
                    .iter()
                    .map(|e| e.at[0].absorbed_fraction)
                    .collect(),
                s11_mean: m.s11_abs,
                absorbed_mean: m.absorbed_fraction,
                loads: m
                    .heating
                    .iter()
                    .enumerate()
                    .map(|(li, h)| PlotLoad {
                        name: h.averaged.load.clone(),
                        fixed_cov: angle_entries
                            .iter()
                            .map(|e| e.at[0].heating[li].cov)
                            .collect(),
                        averaged_cov: h.averaged.cov,
                    })
                    .collect(),
            });
        }
        // CSV rows: per angle and the mean, at each field frequency per load, then the
        // band frequencies without heating.
        let head = |row: &str, angle: String| {
            let mut r = vec![(g + 1).to_string()];
            r.extend(values.iter().cloned());
            r.push(row.to_string());
            r.push(angle);
            r
        };
        for e in &angle_entries {
            for f in &e.at {
                for h in &f.heating {
                    let mut r = head("angle", e.angle_deg.to_string());
                    r.extend([
                        f.frequency_ghz.to_string(),
                        f.s11_abs.to_string(),
                        f.absorbed_fraction.to_string(),
                        h.load.clone(),
                        h.cov.to_string(),
                        h.mean_w_per_m3.to_string(),
                        String::new(),
                    ]);
                    csv_rows.push(r);
                }
            }
        }
        for m in &mean_at {
            for h in &m.heating {
                let mut r = head("mean", String::new());
                r.extend([
                    m.frequency_ghz.to_string(),
                    m.s11_abs.to_string(),
                    m.absorbed_fraction.to_string(),
                    h.averaged.load.clone(),
                    h.averaged.cov.to_string(),
                    h.averaged.mean_w_per_m3.to_string(),
                    h.fixed_angle_cov_mean.to_string(),
                ]);
                csv_rows.push(r);
            }
        }
        for b in &mean_band {
            let mut r = head("band_mean", String::new());
            r.extend([
                b.frequency_ghz.to_string(),
                b.s11_abs.to_string(),
                b.absorbed_fraction.to_string(),
                String::new(),
                String::new(),
                String::new(),
                String::new(),
            ]);
            csv_rows.push(r);
        }
        groups.push(GroupEntry {
            group: g + 1,
            values,
            status: "done",
            angles: angle_entries,
            mean_at: Some(mean_at),
            mean_band: Some(mean_band),
        });
    }
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut head = vec!["group".to_string()];
    head.extend(keys.iter().cloned());
    head.extend(
        [
            "row",
            "angle_deg",
            "frequency_ghz",
            "s11_abs",
            "absorbed_fraction",
            "load",
            "heating_cov",
            "heating_mean_w_per_m3",
            "fixed_angle_cov_mean",
        ]
        .map(String::from),
    );
    w.write_record(&head)?;
    for r in &csv_rows {
        w.write_record(r)?;
    }
    let bytes = w.into_inner().map_err(|e| anyhow!("{e}"))?;
    write_atomic(&dir.join("turntable.csv"), &bytes)?;
    let t = plate_info.unwrap_or(antinode_mesh::geometry::Turntable {
        center: [f64::NAN; 2],
        loads: Vec::new(),
        angles_deg: angles.clone(),
        grid_mm: f64::NAN,
    });
    let doc = TurntableDoc {
        center_mm: t.center,
        loads: t.loads,
        angles_deg: angles.clone(),
        grid_mm: t.grid_mm,
        averaging: "heating density of the field at the points of a grid fixed in the \
                    load's frame (points turned with the plate) at each angle, averaged over \
                    the angles; COV = \
                    std/mean over the grid points (equal cells); fixed_angle_cov_* the \
                    COVs of the single angles on the same points; s11_abs and \
                    absorbed_fraction averaged over the angles",
        groups,
    };
    write_atomic(
        &dir.join("turntable.json"),
        serde_json::to_string_pretty(&doc)?.as_bytes(),
    )?;
    println!(
        "wrote {}/turntable.csv, turntable.json and turntable_gNNN_fKK.vtu (averages over \
         {na} plate angles; one VTU per combination and --at frequency)",
        dir.display()
    );
    Ok(plot)
}

/// The averaged heating at field frequency `fi` on the load-frame grids (metres, plate
/// angle 0), one hexahedron per grid cell, with each angle's pattern beside it.
fn write_vtu(
    path: &Path,
    grids: &[(String, LoadGrid)],
    heat: &[Vec<KeptSamples>],
    averaged: &[Vec<Vec<f64>>],
    angles: &[f64],
    fi: usize,
) -> Result<()> {
    let mut points = Vec::new();
    let mut cells = Vec::new();
    let mut load_id = Vec::new();
    let mut mean = Vec::new();
    let mut per_angle: Vec<Vec<f64>> = vec![Vec::new(); angles.len()];
    for (li, (_, grid)) in grids.iter().enumerate() {
        let Some((kept, s)) = heat.get(li).and_then(|h| h.get(fi)) else {
            continue;
        };
        for (j, &i) in kept.iter().enumerate() {
            let base = points.len() as u32;
            points.extend(grid.cells[i].iter().map(|p| p.map(mm_to_m)));
            cells.push(std::array::from_fn::<u32, 8, _>(|k| base + k as u32));
            load_id.push(li as i32 + 1);
            mean.push(averaged[li][fi][j]);
            for (a, pa) in per_angle.iter_mut().enumerate() {
                pa.push(s[a][j]);
            }
        }
    }
    let names: Vec<String> = angles
        .iter()
        .enumerate()
        .map(|(k, a)| format!("heating_W_per_m3_angle{}_{a}deg", k + 1))
        .collect();
    let mut cell_data = vec![
        DataArray::Scalars {
            name: "heating_W_per_m3_rotation_mean",
            values: &mean,
        },
        DataArray::Ints {
            name: "load",
            values: &load_id,
        },
    ];
    for (n, v) in names.iter().zip(&per_angle) {
        cell_data.push(DataArray::Scalars { name: n, values: v });
    }
    vtk::write_vtu(
        path,
        &VtuPiece {
            points: &points,
            cells: CellBlock::Hexahedra(&cells),
            point_data: Vec::new(),
            cell_data,
        },
    )
    .map_err(anyhow::Error::new)
}
