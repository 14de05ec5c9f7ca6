//! Resonant modes of a cavity: the library entry point [`solve_modes`].
//!
//! The pipeline is a short list of stages, each callable on its own (a driven response
//! reuses the first four with its own right-hand side):
//!
//! 1. space: topology and unknowns with the PEC walls eliminated ([`Space`]);
//! 2. assembly: K, M′, M″, the port constraints and the reduced system
//!    ([`system::PortedSystem`]), with the fill-reducing ordering;
//! 3. operator: the shifted matrix at σ = k0²(target), factorised
//!    ([`operator::RefinedFactor`], [`operator::ComplexFactor`]);
//! 4. iteration: block Krylov–Schur on the shift-invert operator
//!    ([`crate::linalg::eigen`]);
//! 5. checks: residual, per-mode β refinement, divergence, normalisation
//!    ([`checks`]);
//! 6. losses: field integrals, Q parts and power split ([`crate::post::losses`]);
//! 7. selection: band, count and degenerate groups ([`mod@select`]).
//!
//! * Lossless cavity without ports: K x = λ M′ x is real symmetric; the M-symmetric
//!   iteration runs on (K − σM′)⁻¹M′.
//! * Lossy loads (ε″ > 0) or ports: (K + jβP) x = λ (M′ − jM″) x is complex symmetric;
//!   the iteration runs on A⁻¹M with A = K + jβP − σ(M′ − jM″) factorised natively
//!   (complex symmetric LDLᵀ), in complex arithmetic with the Euclidean inner product. β is taken at
//!   the target and refined per mode ([`checks`]).
//! * Walls of finite conductivity as a surface impedance
//!   ([`crate::fem::impedance`], [`ModeSettings::wall_losses`]): the term c(ω) W_E joins
//!   K, making the problem complex even for an empty cavity; c is taken at the target and
//!   refined per mode like β.
//!
//! Each returned mode carries k0² and f = c k0 / 2π, its relative residual, its
//! divergence figure (fields above [`SPURIOUS_DIVERGENCE`] are dropped and counted),
//! normalised coefficients, field integrals and Q parts.

pub mod checks;
pub mod operator;
pub mod select;
pub mod settings;
pub mod system;

pub use checks::{CheckedMode, SPURIOUS_DIVERGENCE};
pub use select::{BAND_MARGIN, COUNT_MARGIN, DEGENERATE_REL};
pub use settings::{ModeSettings, Stage};

use crate::constants::wavenumber;
use crate::error::SolverError;
use crate::fem::assembly::{RegionMaterial, SystemMatrices};
use crate::fem::impedance::ImpedanceWalls;
use crate::fem::port::{PortConstraint, PortTerms};
use crate::fem::Space;
use crate::linalg::eigen::{self, KrylovOperator, KrylovScalar, RitzPairs};
use crate::linalg::mixed::{FactorPrecision, MixedSummary};
use crate::post::field::{mode_fields, ModeFields};
use crate::post::losses::{
    eigen_matched_q, mode_integrals, ModeIntegrals, ModeQ, PortPower, WallLoss,
};
use antinode_mesh::TetMesh;
use checks::{check_all, complex_raw_modes, real_raw_modes, CheckContext, RawMode, ResidualScale};
use faer::Par;
use operator::{
    shifted_complex, shifted_real, ComplexFactor, ComplexShiftInvert, RealShiftInvert,
    RefinedFactor,
};
use select::{select, Search};
use std::time::Instant;
use system::{order_matrix, PortedSystem, TimedOrdering};

/// One resonant mode.
#[derive(Clone, Debug)]
pub struct Mode {
    /// Re k0², m⁻² (k0 = ω/c).
    pub k0_squared: f64,
    /// Im k0² (> 0 for a decaying mode with the e^{jωt} convention; 0 when lossless).
    pub k0_squared_imag: f64,
    /// Resonant frequency Re f, Hz.
    pub frequency_hz: f64,
    /// Im f, Hz (decay rate / 2π).
    pub frequency_imag_hz: f64,
    /// Q from the complex eigenvalue, Re f/(2 Im f) (loads, ports and impedance walls;
    /// infinite when lossless). Walls by perturbation are added in `q` only.
    pub q_eigen: f64,
    /// Relative residual of the (linear, β at target) discrete eigenproblem.
    pub residual: f64,
    /// Divergence figure ‖Gᵀ M x‖ / ‖M x‖.
    pub divergence: f64,
    /// Real part of the coefficients of E over the free unknowns, normalised to
    /// ∫ ε′ |E|² dV = 1 m³ (E in V/m, lengths in m), phase chosen so that the largest
    /// coefficient is real.
    pub coefficients: Vec<f64>,
    /// Imaginary part of the coefficients (empty when the mode is real).
    pub coefficients_imag: Vec<f64>,
    /// Field integrals (per-region ∫|E|², wall ∮|n×∇×E|²).
    pub integrals: ModeIntegrals,
    /// Q parts and power split.
    pub q: ModeQ,
    /// External Q of each port from the power balance with the eigenvector's own aperture
    /// amplitudes, before they are matched to the refined eigenvalue (see
    /// [`crate::post::losses::eigen_matched_q`]); with the target at the mode's frequency these equal `q.q_ports`.
    /// Kept as an independent consistency check.
    pub q_ports_balance: Vec<f64>,
}

/// Figures of one solve.
#[derive(Clone, Debug, Default)]
pub struct SolveStats {
    /// Unknowns of the eigenproblem (after port constraints).
    pub n_dofs: usize,
    /// Whether the complex (lossy or fed) path was used.
    pub complex: bool,
    pub matrix_nnz: usize,
    pub factor_nnz: usize,
    /// Assembly (topology, unknown numbering, matrices, port reduction), wall time.
    pub assembly_s: f64,
    /// Fill-reducing ordering (nested dissection) of the shifted matrix. Without ports it
    /// runs on one core during assembly, so it overlaps `assembly_s`.
    pub ordering_s: f64,
    pub factor_s: f64,
    pub eigen_s: f64,
    /// Post-processing: residuals, divergence checks, normalisation, Q and power split.
    pub checks_s: f64,
    pub applications: usize,
    pub restarts: usize,
    pub spurious_dropped: usize,
    /// Precision of the factor (double, or single with refined solves).
    pub precision: FactorPrecision,
    /// Refinement and GMRES counts of the single-precision solves (None in double).
    pub mixed: Option<MixedSummary>,
    /// Radius (m⁻², in k0² = λ) of the disc around σ in the complex λ plane inside which
    /// every eigenvalue was found: the band radius for a band search, else the distance of
    /// the farthest converged mode. A mode with Re f in a band but strong damping
    /// (Im λ ≈ Re λ / Q) lies outside the disc when Q is small; callers can turn this
    /// into the Q above which a band listing is complete.
    pub search_radius: f64,
}

impl Mode {
    /// E at the vertices, H and the heating density at the cells, for 1 J of stored
    /// energy ([`crate::post::field::mode_fields`]).
    pub fn fields(&self, space: &Space<'_>, materials: &[RegionMaterial]) -> ModeFields {
        mode_fields(
            space,
            &self.coefficients,
            &self.coefficients_imag,
            [self.frequency_hz, self.frequency_imag_hz],
            materials,
        )
    }
}

/// Modes sorted by frequency, with the space they live on and the solve figures.
pub struct ModeSet<'m> {
    pub modes: Vec<Mode>,
    pub stats: SolveStats,
    /// The finite-element space of the coefficients (mesh, topology, unknowns).
    pub space: Space<'m>,
    /// K, M′, M″ on the space's free unknowns.
    pub matrices: SystemMatrices,
    /// TE10 constraints of the ports (None without ports).
    pub ports: Option<PortConstraint>,
}

/// Find the resonant modes of a cavity with its loads, walls and ports.
pub fn solve_modes<'m>(
    mesh: &'m TetMesh,
    materials: &[RegionMaterial],
    settings: &ModeSettings,
    progress: &mut dyn FnMut(Stage),
) -> Result<ModeSet<'m>, SolverError> {
    settings.validate(mesh, materials)?;
    progress(Stage::Topology);
    let t0 = Instant::now();
    let space = settings.space(mesh).with_curved(&settings.curved)?;
    if space.n_dofs() == 0 {
        return Err(SolverError::NoUnknowns);
    }
    progress(Stage::Assembly {
        n_dofs: space.n_dofs(),
    });
    let (system, early_ordering) = PortedSystem::assemble(&space, materials, &settings.ports);
    let assembly_s = t0.elapsed().as_secs_f64();
    let search = Search::new(settings);
    let sys = system.matrices();
    let walls = settings.impedance_walls().map(|sigma| {
        ImpedanceWalls::new(&space, system.reduction.as_ref(), sigma, search.k_target)
    });
    let complex = sys.is_lossy() || !settings.ports.is_empty() || walls.is_some();
    let ports = system.port_terms(&settings.ports, search.k_target);
    // Measured on 2 cores: the sequential supernodal kernels beat the threaded ones here,
    // and the tall-skinny dense products of the eigen iteration lose more to thread
    // barriers than they gain (~30 % of the iteration time in synchronisation), so faer
    // runs sequentially; rayon parallelises assembly, sparse products, the block solves
    // (over subtrees) and the dense products (over rows).
    faer::set_global_parallelism(Par::Seq);
    progress(Stage::Factorization {
        n_dofs: sys.n(),
        nnz: sys.stiffness.nnz(),
    });
    let ordering = early_ordering.unwrap_or_else(|| order_matrix(&sys.stiffness));
    let mut scale = ResidualScale::new(sys);
    if let Some(w) = &walls {
        scale.k_norm += w.norm_at_target();
    }
    let run = eigen_run(
        complex,
        sys,
        &ports,
        walls.as_ref(),
        &search,
        &ordering,
        settings,
        scale,
        progress,
    )?;

    progress(Stage::Checks);
    let t_checks = Instant::now();
    let ctx = CheckContext {
        space: &space,
        system: &system,
        frames: &settings.ports,
        ports: &ports,
        walls: walls.as_ref(),
        k_target: search.k_target,
    };
    let checked = check_all(run.raw, &ctx);
    let spurious_dropped = checked.iter().filter(|c| c.is_none()).count();
    let modes = with_losses(
        &space,
        checked.into_iter().flatten().collect(),
        materials,
        settings,
        &ports,
    );
    let search_radius = search.radius(&modes);
    let modes = select(modes, settings);
    let stats = SolveStats {
        n_dofs: system.matrices().n(),
        complex,
        matrix_nnz: system.matrices().stiffness.nnz(),
        factor_nnz: run.factor_nnz,
        assembly_s,
        ordering_s: ordering.seconds,
        factor_s: run.factor_s,
        eigen_s: run.eigen_s,
        checks_s: t_checks.elapsed().as_secs_f64(),
        applications: run.applications,
        restarts: run.restarts,
        spurious_dropped,
        precision: settings.precision,
        mixed: run.mixed,
        search_radius,
    };
    let (matrices, ports) = system.into_full();
    Ok(ModeSet {
        modes,
        stats,
        space,
        matrices,
        ports,
    })
}

/// What the factorisation and the iteration produced.
struct EigenRun {
    raw: Vec<RawMode>,
    /// Building and factorising the shifted matrix, seconds.
    factor_s: f64,
    eigen_s: f64,
    factor_nnz: usize,
    applications: usize,
    restarts: usize,
    mixed: Option<MixedSummary>,
}

/// Build and factorise the operator (`build` returns it with its factor's entry count),
/// then run the iteration on it; both timed. Returns the operator (for what the
/// residuals need of it) and the run without raw modes.
fn factor_and_iterate<T: KrylovScalar, O: KrylovOperator<T>>(
    build: impl FnOnce() -> Result<(O, usize), SolverError>,
    search: &Search,
    settings: &ModeSettings,
    progress: &mut dyn FnMut(Stage),
) -> Result<(O, RitzPairs<T>, EigenRun), SolverError> {
    let t1 = Instant::now();
    let (op, factor_nnz) = build()?;
    let factor_s = t1.elapsed().as_secs_f64();
    let t = Instant::now();
    let ritz = eigen::solve(&op, search.wanted, &settings.eigen, &mut |p| {
        progress(Stage::Eigen(p))
    })?;
    let run = EigenRun {
        raw: Vec::new(),
        factor_s,
        eigen_s: t.elapsed().as_secs_f64(),
        factor_nnz,
        applications: ritz.applications,
        restarts: ritz.restarts,
        mixed: None,
    };
    Ok((op, ritz, run))
}

/// Factorise the shifted operator and iterate: on the real path K − σM′ and
/// (K − σM′)⁻¹M′; on the complex path K + jβP − σ(M′ − jM″) in its 2n form and
/// A⁻¹(M′ − jM″). Then the raw eigenpairs with their residuals.
#[allow(clippy::too_many_arguments)]
fn eigen_run(
    complex: bool,
    sys: &SystemMatrices,
    ports: &PortTerms,
    walls: Option<&ImpedanceWalls>,
    search: &Search,
    ordering: &TimedOrdering,
    settings: &ModeSettings,
    scale: ResidualScale,
    progress: &mut dyn FnMut(Stage),
) -> Result<EigenRun, SolverError> {
    let (kind, perm, refine) = (
        settings.factor,
        ordering.permutation.as_ref(),
        settings.refine,
    );
    if !complex {
        let build = || {
            let factor = RefinedFactor::with_precision(
                shifted_real(sys, search.sigma),
                kind,
                perm,
                refine,
                settings.precision,
            )?;
            let nnz = factor.factor_nnz();
            let mass = &sys.mass_real;
            Ok((RealShiftInvert { factor, mass }, nnz))
        };
        let (op, ritz, mut run) = factor_and_iterate(build, search, settings, progress)?;
        run.mixed = op.factor.mixed_summary();
        drop(op);
        run.raw = real_raw_modes(&ritz, search.sigma, sys, scale);
        return Ok(run);
    }
    let build = || {
        let mut parts = shifted_complex(sys, search.sigma, ports);
        if let Some(w) = walls {
            parts = w.add_to(parts);
        }
        let factor = ComplexFactor::with_precision(
            parts,
            settings.complex_form,
            perm,
            refine,
            settings.precision,
        )?;
        let nnz = factor.factor_nnz();
        let (m_re, m_im) = (&sys.mass_real, sys.mass_imag.as_ref());
        Ok((ComplexShiftInvert { factor, m_re, m_im }, nnz))
    };
    let (op, ritz, mut run) = factor_and_iterate(build, search, settings, progress)?;
    run.mixed = op.factor.mixed_summary();
    let parts = op.factor.parts;
    run.raw = complex_raw_modes(&ritz, search.sigma, &parts.re, &parts.im, sys, ports, scale);
    Ok(run)
}

/// Field integrals, Q parts and power split of the checked modes (one pass over the
/// mesh for all of them).
fn with_losses(
    space: &Space<'_>,
    kept: Vec<CheckedMode>,
    materials: &[RegionMaterial],
    settings: &ModeSettings,
    ports: &PortTerms,
) -> Vec<Mode> {
    let inputs: Vec<(&[f64], &[f64])> = kept
        .iter()
        .map(|k| (k.re.as_slice(), k.im.as_slice()))
        .collect();
    let integrals = mode_integrals(space, &inputs);
    kept.into_iter()
        .zip(integrals)
        .map(|(c, integrals)| {
            let mut powers: Vec<PortPower> = settings
                .ports
                .iter()
                .enumerate()
                .map(|(p, fr)| PortPower {
                    amplitude2_norm: c.amplitudes[p].norm_sqr() * ports.norm[p],
                    beta: fr.beta(wavenumber(c.freq.re)).re,
                })
                .collect();
            let (q, q_ports_balance) = eigen_matched_q(
                c.freq.re,
                &integrals,
                materials,
                WallLoss::of(
                    settings.wall_conductivity,
                    settings.wall_losses,
                    settings.target_hz,
                ),
                &mut powers,
                c.q_eigen,
            );
            Mode {
                k0_squared: c.lambda.re,
                k0_squared_imag: c.lambda.im,
                frequency_hz: c.freq.re,
                frequency_imag_hz: c.freq.im,
                q_eigen: c.q_eigen,
                residual: c.residual,
                divergence: c.divergence,
                coefficients: c.re,
                coefficients_imag: c.im,
                integrals,
                q,
                q_ports_balance,
            }
        })
        .collect()
}
