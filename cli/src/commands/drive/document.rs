//! The response document of `antinode drive` from the solver's results: S as [re, im]
//! pairs, power fractions, and per field frequency the powers, uniformity and
//! temperature figures of each load, plus the arrays of the heating files.

use super::{DriveContext, CAUTION};
use crate::output::response_doc::{
    AtDoc, FieldDoc, PowerFractions, ResponseDoc, SpreadDoc, SweepDoc, TemperatureDoc,
    UniformityDoc,
};
use crate::output::vtk_heating;
use antinode_solver::driven::loads::{cell_temperature_rise, load_figures, LoadFigures};
use antinode_solver::driven::response::PowerSplit;
use antinode_solver::driven::{DrivenField, DrivenResponse};
use faer::{c64, Mat};
use std::collections::BTreeMap;

fn pairs(m: &Mat<c64>) -> Vec<Vec<[f64; 2]>> {
    (0..m.nrows())
        .map(|q| {
            (0..m.ncols())
                .map(|p| [m[(q, p)].re, m[(q, p)].im])
                .collect()
        })
        .collect()
}

pub(super) fn names(ctx: &DriveContext<'_>) -> (Vec<String>, Vec<String>) {
    (
        ctx.geom.ports.iter().map(|p| p.name.clone()).collect(),
        ctx.geom.loads.iter().map(|l| l.name.clone()).collect(),
    )
}

fn fractions(p: &PowerSplit, ports: &[String], loads: &[String]) -> PowerFractions {
    let fw = p.forward_w;
    PowerFractions {
        reflected: p.reflected_w.iter().sum::<f64>() / fw,
        reflected_by_port: ports
            .iter()
            .cloned()
            .zip(p.reflected_w.iter().map(|w| w / fw))
            .collect(),
        walls: p.walls_w / fw,
        loads: loads
            .iter()
            .cloned()
            .zip(p.regions_w.iter().skip(1).map(|w| w / fw))
            .collect(),
        balance_error: p.balance_error(),
    }
}

/// Powers, uniformity and temperature of one field.
fn field_doc(
    ctx: &DriveContext<'_>,
    r: &DrivenResponse<'_>,
    power: &PowerSplit,
    heating: &[f64],
) -> FieldDoc {
    let (ports, loads) = names(ctx);
    let figs: Vec<LoadFigures> = load_figures(&r.operator.space, heating, &ctx.thermal, ctx.time);
    let by_load = |f: &dyn Fn(&LoadFigures) -> Option<f64>| -> BTreeMap<String, f64> {
        loads
            .iter()
            .zip(&figs)
            .filter_map(|(n, l)| f(l).map(|v| (n.clone(), v)))
            .collect()
    };
    let uniformity = loads
        .iter()
        .zip(&figs)
        .filter_map(|(n, l)| {
            l.uniformity.map(|u| {
                (
                    n.clone(),
                    UniformityDoc {
                        cov: u.cov,
                        max_over_mean: u.max_over_mean,
                        min_over_mean: u.min_over_mean,
                        hot_fraction: u.hot_fraction,
                        cold_fraction: u.cold_fraction,
                        mean_w_per_m3: u.mean,
                    },
                )
            })
        })
        .collect();
    let temperature: Option<BTreeMap<String, TemperatureDoc>> = ctx.time.map(|_| {
        loads
            .iter()
            .zip(&figs)
            .filter_map(|(n, l)| {
                l.temperature.map(|t| {
                    (
                        n.clone(),
                        TemperatureDoc {
                            mean_rise_k: t.mean_rise_k,
                            max_rise_k: t.max_rise_k,
                            mass_kg: t.mass_kg,
                            calorimetric_power_w: t.calorimetric_power_w,
                        },
                    )
                })
            })
            .collect()
    });
    FieldDoc {
        forward_w: power.forward_w,
        absorbed_w: loads
            .iter()
            .cloned()
            .zip(power.regions_w.iter().skip(1).copied())
            .collect(),
        walls_w: power.walls_w,
        reflected_w: power.reflected_w.iter().sum(),
        reflected_w_by_port: ports
            .iter()
            .cloned()
            .zip(power.reflected_w.clone())
            .collect(),
        uniformity,
        temperature_rise_k: ctx
            .time
            .map(|_| by_load(&|l| l.temperature.map(|t| t.mean_rise_k))),
        temperature,
    }
}

pub(super) fn document(
    args: &super::DriveArgs,
    ctx: &DriveContext<'_>,
    r: &DrivenResponse<'_>,
    band: [f64; 2],
    mesh_s: f64,
) -> ResponseDoc {
    let (ports, loads) = names(ctx);
    let at =
        r.at.iter()
            .map(|a| AtDoc {
                frequency_ghz: a.frequency_hz * 1e-9,
                file: vtk_heating::file_name(a.frequency_hz * 1e-9),
                s: pairs(&a.s),
                sweep_vs_direct: a.sweep_vs_direct,
                field: field_doc(ctx, r, &a.field.power, &a.field.cell_heating),
                spread: a.spread.as_ref().map(|s| SpreadDoc {
                    width_mhz: ctx.settings.spread_hz.unwrap_or(0.0) * 1e-6,
                    weighting: format!(
                    "uniform over the width, {} samples at the midpoints of equal sub-intervals; \
                     fields from the reduced model",
                    s.samples_hz.len()
                ),
                    samples_ghz: s.samples_hz.iter().map(|f| f * 1e-9).collect(),
                    field: field_doc(ctx, r, &s.power, &s.cell_heating),
                }),
            })
            .collect();
    let rep = &r.report;
    ResponseDoc {
        geometry: args.geometry.display().to_string(),
        title: ctx.geom.title.clone(),
        order: ctx.settings.order.as_int(),
        unknowns: r.operator.n(),
        band_ghz: band,
        ports: ports.clone(),
        loads: loads.clone(),
        drive_w: ports
            .iter()
            .cloned()
            .zip(ctx.settings.drive.iter().map(|a| a.norm_sqr()))
            .collect(),
        drive_phase_deg: ports
            .iter()
            .cloned()
            .zip(ctx.settings.drive.iter().map(|a| a.arg().to_degrees()))
            .collect(),
        wall_conductivity: ctx.settings.wall_conductivity,
        conventions: "time convention e^{jωt}; S normalised to each port's TE10 power wave \
                      (Σ|a|² = forward power), reference plane at the aperture; s[f][out][in] \
                      = [re, im]; peak phasor fields; powers are time averages"
            .into(),
        frequencies_ghz: r.frequencies_hz.iter().map(|f| f * 1e-9).collect(),
        s: r.s.iter().map(pairs).collect(),
        power: r
            .power
            .iter()
            .map(|p| fractions(p, &ports, &loads))
            .collect(),
        at,
        sweep: SweepDoc {
            method: "Krylov projection of the shifted operator (Padé-via-Krylov family), \
                     symmetric real-basis projection, adaptive expansion points"
                .into(),
            expansion_points_ghz: rep.expansion_hz.iter().map(|f| f * 1e-9).collect(),
            krylov_blocks: rep.blocks.clone(),
            basis: rep.basis,
            converged: rep.converged,
            tolerance_s: rep.tolerance,
            tolerance_residual: rep.residual_tolerance,
            max_change_s: rep.max_change,
            max_residual: rep.max_residual,
            factor_s: rep.factor_s,
            krylov_s: rep.krylov_s,
            check_s: rep.check_s,
            factor_entries: rep.factor_nnz,
        },
        mesh_s,
        total_s: r.total_s,
        safety: CAUTION.into(),
    }
}

/// Arrays of one heating file, owned.
pub(super) struct FieldArrays {
    freq_ghz: f64,
    e: antinode_solver::driven::solve::VertexField,
    heating: Vec<f64>,
    spread: Option<Vec<f64>>,
    rise: Option<Vec<f64>>,
}

impl FieldArrays {
    pub(super) fn borrowed(&self) -> vtk_heating::HeatingField<'_> {
        vtk_heating::HeatingField {
            freq_ghz: self.freq_ghz,
            e: &self.e,
            heating: &self.heating,
            heating_spread: self.spread.as_deref(),
            temperature_rise: self.rise.as_deref(),
        }
    }
}

pub(super) fn field_arrays(ctx: &DriveContext<'_>, r: &DrivenResponse<'_>) -> Vec<FieldArrays> {
    let space = &r.operator.space;
    r.at.iter()
        .map(|a| {
            let f: &DrivenField = &a.field;
            FieldArrays {
                freq_ghz: a.frequency_hz * 1e-9,
                e: f.vertex_e(space),
                heating: f.cell_heating.clone(),
                spread: a.spread.as_ref().map(|s| s.cell_heating.clone()),
                rise: ctx
                    .time
                    .map(|t| cell_temperature_rise(space, &f.cell_heating, &ctx.thermal, t)),
            }
        })
        .collect()
}
