//! The response picture and the terminal summary of `antinode drive`.

use super::{DriveContext, CAUTION};
use crate::output::response_doc::ResponseDoc;
use crate::output::response_svg::ResponsePlot;
use antinode_solver::driven::DrivenResponse;
use antinode_solver::problem::ghz_to_hz;
use antinode_solver::RegionMaterial;
use anyhow::Result;
use std::path::Path;

/// Points of the response picture's curves per computed frequency (the reduced model is
/// cheap to evaluate between them), before refinement.
const PLOT_DENSITY: usize = 10;

/// Bisection passes over intervals where a curve jumps by more than [`JUMP_DB`] or
/// [`JUMP_FRACTION`], and the most points the picture gets (resolution choices of the
/// picture only).
const REFINE_PASSES: usize = 8;
const MAX_PLOT_POINTS: usize = 12_000;
const JUMP_DB: f64 = 0.5;
const JUMP_FRACTION: f64 = 0.01;

/// The curves at one frequency.
struct Sample {
    f: f64,
    db: Vec<f64>,
    loads: f64,
    walls: f64,
}

impl Sample {
    fn jumps_to(&self, o: &Sample) -> bool {
        self.db
            .iter()
            .zip(&o.db)
            .any(|(a, b)| (a - b).abs() > JUMP_DB)
            || (self.loads - o.loads).abs() > JUMP_FRACTION
            || (self.walls - o.walls).abs() > JUMP_FRACTION
    }
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

pub(super) fn plot<'a>(
    ctx: &'a DriveContext<'_>,
    r: &DrivenResponse<'_>,
    band: [f64; 2],
    materials: &(dyn Fn(f64) -> Vec<RegionMaterial> + Send + Sync),
    dir: &Path,
) -> Result<ResponsePlot<'a>> {
    let n0 = (r.frequencies_hz.len() * PLOT_DENSITY).clamp(201, 4001);
    let eval = |f: f64| -> Result<Sample> {
        let (s, p) = r.model_at(materials, ctx.settings, ghz_to_hz(f))?;
        Ok(Sample {
            f,
            db: (0..s.nrows())
                .map(|q| 20.0 * s[(q, q)].norm().log10())
                .collect(),
            loads: p.regions_w.iter().skip(1).sum::<f64>() / p.forward_w,
            walls: p.walls_w / p.forward_w,
        })
    };
    let mut samples: Vec<Sample> = (0..n0)
        .map(|i| eval(band[0] + (band[1] - band[0]) * i as f64 / (n0 - 1) as f64))
        .collect::<Result<_>>()?;
    // Resonances narrower than the spacing: bisect intervals where a curve jumps.
    for _ in 0..REFINE_PASSES {
        let mids: Vec<f64> = samples
            .windows(2)
            .filter(|w| w[0].jumps_to(&w[1]))
            .map(|w| 0.5 * (w[0].f + w[1].f))
            .collect();
        if mids.is_empty() || samples.len() + mids.len() > MAX_PLOT_POINTS {
            break;
        }
        for f in mids {
            samples.push(eval(f)?);
        }
        samples.sort_by(|a, b| a.f.total_cmp(&b.f));
    }
    let n = samples.len();
    let f_ghz: Vec<f64> = samples.iter().map(|s| s.f).collect();
    let refl: Vec<Vec<f64>> = (0..ctx.geom.ports.len())
        .map(|q| samples.iter().map(|s| s.db[q]).collect())
        .collect();
    let loads: Vec<f64> = samples.iter().map(|s| s.loads).collect();
    let walls: Vec<f64> = samples.iter().map(|s| s.walls).collect();
    let (ports, _) = super::document::names(ctx);
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

pub(super) fn print_summary(doc: &ResponseDoc, r: &DrivenResponse<'_>) {
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
    if doc.at.iter().any(|a| a.field.temperature.is_some()) {
        println!(
            "temperature rise: first order (no conduction, constant properties, no phase \
             change): a rise that would boil water or melt a load is outside the model"
        );
    }
    println!("{CAUTION}");
}
