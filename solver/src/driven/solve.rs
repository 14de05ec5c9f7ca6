//! The driven pipeline: assemble, sweep the band with the reduced model, and solve the
//! full field at the requested frequencies.
//!
//! Stages: [`DrivenOperator::assemble`] (space, ports, per-region masses, walls,
//! ordering) → [`super::sweep::sweep`] over the band with the `at` frequencies as the
//! first expansion points (so their fields are direct solves, free with the first Krylov
//! block) → S and the power split of the drive at every band frequency from the reduced
//! model → at each `at` frequency: S, powers and the cell heating from the direct
//! solution, the sweep's |ΔS| against it, and optionally averages over a source
//! spectrum (uniform weighting over ±spread/2, sampled at `spread_samples` midpoints,
//! fields from the reduced model).

use super::affine::{AffineSystem, ShiftedSolver};
use super::response::{cell_heating, incident_amplitudes, s_matrix, wave_scales, PowerSplit};
use super::sweep::{sweep, Sweep, SweepOptions, SweepStep};
use super::system::{DrivenOperator, MaterialsAt};
use crate::constants::{wavenumber, C0};
use crate::error::SolverError;
use crate::fem::curved::CurvedBoundary;
use crate::fem::port::PortFrame;
use crate::fem::NedelecOrder;
use crate::linalg::sparse::spmv;
use crate::modes::operator::{ComplexFactor, ComplexForm, ComplexParts};
use antinode_mesh::TetMesh;
use faer::{c64, Mat};
use std::sync::Arc;
use std::time::Instant;

/// What to solve.
#[derive(Clone, Debug)]
pub struct DriveSettings {
    pub order: NedelecOrder,
    /// Frequencies of the S-matrix and power split (Hz).
    pub frequencies_hz: Vec<f64>,
    /// Frequencies of the full field (Hz).
    pub at_hz: Vec<f64>,
    /// Full width of the source spectrum around each `at` frequency (Hz), if averaged.
    pub spread_hz: Option<f64>,
    /// Samples of the source spectrum (midpoints of equal sub-intervals).
    pub spread_samples: usize,
    /// Wall conductivity (S/m); None: perfectly conducting.
    pub wall_conductivity: Option<f64>,
    pub ports: Vec<PortFrame>,
    /// Incident power waves per port, √W with phase (|ã|² = forward power).
    pub drive: Vec<c64>,
    pub sweep: SweepOptions,
    /// Curved surfaces and the faces on them (empty: every tetrahedron straight), as
    /// [`crate::ModeSettings::curved`].
    pub curved: Arc<CurvedBoundary>,
}

/// Long-running stages, for a progress display.
#[derive(Clone, Copy, Debug)]
pub enum DriveStage {
    Assembly,
    Factorization { freq_hz: f64, n_dofs: usize },
    Fields { freq_hz: f64 },
}

/// A field of the drive and what it does.
#[derive(Clone, Debug)]
pub struct DrivenField {
    /// Real and imaginary coefficients on the space's free unknowns.
    pub re: Vec<f64>,
    pub im: Vec<f64>,
    /// Cell-averaged absorbed density (W/m³).
    pub cell_heating: Vec<f64>,
    pub power: PowerSplit,
}

/// Results at one `at` frequency.
#[derive(Clone, Debug)]
pub struct AtFrequency {
    pub frequency_hz: f64,
    /// S from the direct solve.
    pub s: Mat<c64>,
    /// The drive's field from the direct solve.
    pub field: DrivenField,
    /// max |S_sweep − S_direct| at this frequency.
    pub sweep_vs_direct: f64,
    /// Average over the source spectrum: (sample frequencies, mean heating, mean power).
    pub spread: Option<SpreadAverage>,
}

/// Uniformly weighted average over a source spectrum.
#[derive(Clone, Debug)]
pub struct SpreadAverage {
    pub samples_hz: Vec<f64>,
    pub cell_heating: Vec<f64>,
    pub power: PowerSplit,
}

/// How the sweep went.
#[derive(Clone, Debug)]
pub struct SweepReport {
    pub expansion_hz: Vec<f64>,
    pub blocks: Vec<usize>,
    pub basis: usize,
    pub converged: bool,
    pub tolerance: f64,
    pub residual_tolerance: f64,
    /// Largest η and |ΔS| between the last two models over the check grid.
    pub max_residual: f64,
    pub max_change: f64,
    pub steps: Vec<SweepStep>,
    pub factor_s: f64,
    pub krylov_s: f64,
    pub check_s: f64,
    pub factor_nnz: usize,
}

/// The driven response.
pub struct DrivenResponse<'m> {
    pub operator: DrivenOperator<'m>,
    pub frequencies_hz: Vec<f64>,
    /// S per frequency (P × P, row = out, column = in).
    pub s: Vec<Mat<c64>>,
    /// The drive's power split per frequency (reduced model).
    pub power: Vec<PowerSplit>,
    pub at: Vec<AtFrequency>,
    pub report: SweepReport,
    /// The reduced model (evaluate it anywhere with [`DrivenResponse::model_at`]).
    pub model: Sweep,
    /// Total wall time of the solve (s).
    pub total_s: f64,
}

impl DrivenResponse<'_> {
    /// S and the drive's power split at `f` (Hz) from the reduced model, with the same
    /// `materials` and `settings` the response was solved with.
    pub fn model_at(
        &self,
        materials: &MaterialsAt<'_>,
        settings: &DriveSettings,
        f: f64,
    ) -> Result<(Mat<c64>, PowerSplit), SolverError> {
        let system = self.operator.affine(materials, settings.wall_conductivity);
        reduced_response(
            &self.operator,
            &system,
            &self.model,
            materials,
            settings,
            wavenumber(f),
        )
    }
}

fn hz_of(k: f64) -> f64 {
    k * C0 / (2.0 * std::f64::consts::PI)
}

/// xᴴ A x of a complex x for real symmetric A.
fn quad_sparse(a: &crate::linalg::sparse::SparseMatrix, xr: &[f64], xi: &[f64]) -> f64 {
    let mut t = vec![0.0; xr.len()];
    let mut s = 0.0;
    for x in [xr, xi] {
        spmv(a, x, &mut t);
        s += x.iter().zip(&t).map(|(p, q)| p * q).sum::<f64>();
    }
    s
}

/// Sample points of a uniform source spectrum of full width `w` around `f`.
fn spread_points(f: f64, w: f64, n: usize) -> Vec<f64> {
    (0..n.max(1))
        .map(|i| f - 0.5 * w + w * (i as f64 + 0.5) / n.max(1) as f64)
        .collect()
}

/// Solve the driven response of the cavity on `mesh` (regions' permeabilities `mu_r`,
/// permittivities from `materials` at each frequency).
pub fn solve_driven<'m>(
    mesh: &'m TetMesh,
    mu_r: &[f64],
    materials: &MaterialsAt<'_>,
    settings: &DriveSettings,
    progress: &mut dyn FnMut(DriveStage),
) -> Result<DrivenResponse<'m>, SolverError> {
    let t_total = Instant::now();
    let all_hz = settings.frequencies_hz.iter().chain(&settings.at_hz);
    for &f in all_hz {
        if !(f > 0.0 && f.is_finite()) {
            return Err(SolverError::InvalidFrequency { freq_hz: f });
        }
    }
    if settings.drive.len() != settings.ports.len() {
        return Err(SolverError::DriveMismatch {
            given: settings.drive.len(),
            ports: settings.ports.len(),
        });
    }
    if let Some(&f) = settings.frequencies_hz.first().or(settings.at_hz.first()) {
        let given = materials(f).len();
        if given < mesh.regions.len().max(1) {
            return Err(SolverError::MaterialsMissing {
                given,
                regions: mesh.regions.len(),
            });
        }
    }
    progress(DriveStage::Assembly);
    let op = DrivenOperator::assemble(
        mesh,
        settings.order,
        mu_r,
        &settings.ports,
        settings.wall_conductivity.is_some(),
        &settings.curved,
    )?;
    let system = op.affine(materials, settings.wall_conductivity);
    let norms = op.constraint.norm.clone();
    let spread_of = |f: f64| {
        settings
            .spread_hz
            .map(|w| spread_points(f, w, settings.spread_samples))
            .unwrap_or_default()
    };
    // Check grid: the band frequencies, the midpoints between them (so the model is
    // checked between the output points too) and the spread samples.
    let mut grid_hz: Vec<f64> = settings.frequencies_hz.clone();
    let mut sorted = settings.frequencies_hz.clone();
    sorted.sort_by(f64::total_cmp);
    grid_hz.extend(sorted.windows(2).map(|w| 0.5 * (w[0] + w[1])));
    for &f in &settings.at_hz {
        grid_hz.extend(spread_of(f));
    }
    grid_hz.sort_by(f64::total_cmp);
    grid_hz.dedup();
    if let Some(&lowest) = grid_hz
        .iter()
        .chain(&settings.at_hz)
        .min_by(|a, b| a.total_cmp(b))
    {
        wave_scales(&settings.ports, &norms, wavenumber(lowest))?;
    }
    let grid: Vec<f64> = grid_hz.iter().map(|&f| wavenumber(f)).collect();
    let first: Vec<f64> = settings.at_hz.iter().map(|&f| wavenumber(f)).collect();
    let map = |k: f64, y: &Mat<c64>| match wave_scales(&settings.ports, &norms, k) {
        Ok(s) => s_matrix(y, &s),
        Err(_) => Mat::from_fn(y.nrows(), y.ncols(), |_, _| c64::new(f64::NAN, 0.0)),
    };
    let n = op.n();
    let mut factor_nnz = 0;
    let ordering = op.ordering.permutation.clone();
    let sw = {
        let mut factorize = |k: f64| -> Result<(Box<dyn ShiftedSolver + '_>, f64), SolverError> {
            progress(DriveStage::Factorization {
                freq_hz: hz_of(k),
                n_dofs: n,
            });
            let t = Instant::now();
            let (re, im) = system.matrix_at(k);
            let f = ComplexFactor::new(
                ComplexParts { re, im },
                ComplexForm::Native,
                ordering.as_ref(),
                1,
            )?;
            factor_nnz = factor_nnz.max(f.factor_nnz());
            Ok((Box::new(f), t.elapsed().as_secs_f64()))
        };
        let mut options = settings.sweep.clone();
        options.max_points = options.max_points.max(first.len());
        sweep(&system, &grid, &first, &mut factorize, &map, &options)?
    };
    let report = report_of(&sw, &settings.sweep, factor_nnz);
    let (s, power): (Vec<Mat<c64>>, Vec<PowerSplit>) = settings
        .frequencies_hz
        .iter()
        .map(|&f| reduced_response(&op, &system, &sw, materials, settings, wavenumber(f)))
        .collect::<Result<Vec<_>, _>>()?
        .into_iter()
        .unzip();
    let mut at = Vec::with_capacity(settings.at_hz.len());
    for &f in &settings.at_hz {
        progress(DriveStage::Fields { freq_hz: f });
        at.push(at_frequency(&op, &system, &sw, materials, settings, f)?);
    }
    drop(system);
    Ok(DrivenResponse {
        operator: op,
        frequencies_hz: settings.frequencies_hz.clone(),
        s,
        power,
        at,
        report,
        model: sw,
        total_s: t_total.elapsed().as_secs_f64(),
    })
}

fn report_of(sw: &Sweep, options: &SweepOptions, factor_nnz: usize) -> SweepReport {
    SweepReport {
        expansion_hz: sw.points.iter().map(|p| hz_of(p.k)).collect(),
        blocks: sw.points.iter().map(|p| p.blocks).collect(),
        basis: sw.basis.dim(),
        converged: sw.converged,
        tolerance: options.tolerance,
        residual_tolerance: options.residual_tolerance,
        max_residual: sw.residual.iter().copied().fold(0.0, f64::max),
        max_change: sw.change.iter().copied().fold(0.0, f64::max),
        steps: sw.steps.clone(),
        factor_s: sw.points.iter().map(|p| p.factor_s).sum(),
        krylov_s: sw.points.iter().map(|p| p.krylov_s).sum(),
        check_s: sw.steps.iter().map(|s| s.check_s).sum(),
        factor_nnz,
    }
}

/// S and the drive's power split at k from the reduced model.
fn reduced_response(
    op: &DrivenOperator<'_>,
    system: &AffineSystem<'_>,
    sw: &Sweep,
    materials: &MaterialsAt<'_>,
    settings: &DriveSettings,
    k: f64,
) -> Result<(Mat<c64>, PowerSplit), SolverError> {
    let scales = wave_scales(&settings.ports, &op.constraint.norm, k)?;
    let y = sw.reduced_solution(system, k);
    let s = s_matrix(&sw.outputs(system, k), &scales);
    let a = incident_amplitudes(&settings.drive, &scales);
    let m = y.nrows();
    let yd: Vec<c64> = (0..m)
        .map(|i| (0..a.len()).map(|p| y[(i, p)] * a[p]).sum())
        .collect();
    let quad = |t: usize| {
        let r = &sw.basis.reduced[t];
        let mut q = 0.0;
        for j in 0..m {
            let mut col = c64::new(0.0, 0.0);
            for i in 0..m {
                col += yd[i].conj() * r[(i, j)];
            }
            q += (col * yd[j]).re;
        }
        q
    };
    let out = outgoing(&s, &settings.drive);
    let power = op
        .loss_model(materials, settings.wall_conductivity)
        .power_split(k, &quad, &settings.drive, &out);
    Ok((s, power))
}

/// b̃ = S ã.
fn outgoing(s: &Mat<c64>, drive: &[c64]) -> Vec<c64> {
    (0..s.nrows())
        .map(|q| (0..s.ncols()).map(|p| s[(q, p)] * drive[p]).sum())
        .collect()
}

/// The drive's field on the space's unknowns from reduced-unknown solutions X (n × P),
/// with its heating and power split.
fn drive_field(
    op: &DrivenOperator<'_>,
    x: &Mat<c64>,
    s: &Mat<c64>,
    materials: &MaterialsAt<'_>,
    settings: &DriveSettings,
    k: f64,
) -> Result<DrivenField, SolverError> {
    let scales = wave_scales(&settings.ports, &op.constraint.norm, k)?;
    let a = incident_amplitudes(&settings.drive, &scales);
    let n = x.nrows();
    let xd: Vec<c64> = (0..n)
        .map(|i| (0..a.len()).map(|p| x[(i, p)] * a[p]).sum())
        .collect();
    let xr: Vec<f64> = xd.iter().map(|z| z.re).collect();
    let xi: Vec<f64> = xd.iter().map(|z| z.im).collect();
    let layout = op.layout();
    let matrix_of = |t: usize| {
        if t == layout.stiffness {
            &op.stiffness
        } else if t >= layout.ports {
            &op.port_diag[t - layout.ports]
        } else if Some(t) == layout.wall {
            op.wall.as_ref().unwrap_or(&op.stiffness)
        } else {
            &op.region_mass[t - layout.region_mass]
        }
    };
    let quad = |t: usize| quad_sparse(matrix_of(t), &xr, &xi);
    let power = op
        .loss_model(materials, settings.wall_conductivity)
        .power_split(k, &quad, &settings.drive, &outgoing(s, &settings.drive));
    let re = op.reduction.expand(&xr);
    let im = op.reduction.expand(&xi);
    let omega = k * C0;
    let cell = cell_heating(&op.space, omega, &materials(hz_of(k)), &re, &im);
    Ok(DrivenField {
        re,
        im,
        cell_heating: cell,
        power,
    })
}

fn at_frequency(
    op: &DrivenOperator<'_>,
    system: &AffineSystem<'_>,
    sw: &Sweep,
    materials: &MaterialsAt<'_>,
    settings: &DriveSettings,
    f: f64,
) -> Result<AtFrequency, SolverError> {
    let k = wavenumber(f);
    let scales = wave_scales(&settings.ports, &op.constraint.norm, k)?;
    // The `at` frequencies were the first expansion points: their direct solutions are
    // stored with them.
    let direct = sw
        .points
        .iter()
        .find(|p| p.k == k)
        .map(|p| p.direct.clone())
        .unwrap_or_else(|| sw.solution(system, k));
    let s = s_matrix(&system.outputs(direct.as_ref()), &scales);
    let s_model = s_matrix(&sw.outputs(system, k), &scales);
    let mut dev: f64 = 0.0;
    for j in 0..s.ncols() {
        for i in 0..s.nrows() {
            dev = dev.max((s[(i, j)] - s_model[(i, j)]).norm());
        }
    }
    let field = drive_field(op, &direct, &s, materials, settings, k)?;
    let spread = match settings.spread_hz {
        Some(w) => {
            let samples = spread_points(f, w, settings.spread_samples);
            let weight = 1.0 / samples.len() as f64;
            let mut heat = vec![0.0; field.cell_heating.len()];
            let mut parts = Vec::with_capacity(samples.len());
            for &fs in &samples {
                let ks = wavenumber(fs);
                let sc = wave_scales(&settings.ports, &op.constraint.norm, ks)?;
                let ss = s_matrix(&sw.outputs(system, ks), &sc);
                let x = sw.solution(system, ks);
                let fld = drive_field(op, &x, &ss, materials, settings, ks)?;
                for (h, q) in heat.iter_mut().zip(&fld.cell_heating) {
                    *h += weight * q;
                }
                parts.push((weight, fld.power));
            }
            PowerSplit::weighted_sum(&parts).map(|power| SpreadAverage {
                samples_hz: samples,
                cell_heating: heat,
                power,
            })
        }
        None => None,
    };
    Ok(AtFrequency {
        frequency_hz: f,
        s,
        field,
        sweep_vs_direct: dev,
        spread,
    })
}

/// S and the drive's field at `f` (Hz) by a direct solve with its own factorisation of
/// A(k): the reference the sweep is checked against, and the cost it saves (one
/// factorisation per frequency).
pub fn solve_direct(
    op: &DrivenOperator<'_>,
    materials: &MaterialsAt<'_>,
    settings: &DriveSettings,
    f: f64,
) -> Result<(Mat<c64>, DrivenField), SolverError> {
    let system = op.affine(materials, settings.wall_conductivity);
    let k = wavenumber(f);
    let scales = wave_scales(&settings.ports, &op.constraint.norm, k)?;
    let (re, im) = system.matrix_at(k);
    let factor = ComplexFactor::new(
        ComplexParts { re, im },
        ComplexForm::Native,
        op.ordering.permutation.as_ref(),
        1,
    )?;
    let x = factor.solve(system.rhs(k).as_ref());
    let s = s_matrix(&system.outputs(x.as_ref()), &scales);
    let field = drive_field(op, &x, &s, materials, settings, k)?;
    Ok((s, field))
}

impl DrivenField {
    /// E at the mesh vertices (volume-weighted averages of the incident cells, V/m): real
    /// and imaginary parts and the peak magnitude √(|Re E|² + |Im E|²).
    pub fn vertex_e(&self, space: &crate::fem::Space<'_>) -> VertexField {
        let re: Vec<[f64; 3]> = crate::post::field::node_values(space, &self.re)
            .into_iter()
            .map(|(e, _)| e)
            .collect();
        let im: Vec<[f64; 3]> = crate::post::field::node_values(space, &self.im)
            .into_iter()
            .map(|(e, _)| e)
            .collect();
        let magnitude = re
            .iter()
            .zip(&im)
            .map(|(a, b)| {
                (0..3)
                    .map(|k| a[k] * a[k] + b[k] * b[k])
                    .sum::<f64>()
                    .sqrt()
            })
            .collect();
        VertexField { re, im, magnitude }
    }
}

/// E at the mesh vertices.
#[derive(Clone, Debug)]
pub struct VertexField {
    pub re: Vec<[f64; 3]>,
    pub im: Vec<[f64; 3]>,
    pub magnitude: Vec<f64>,
}
