//! Checks and normalisation of computed eigenpairs.
//!
//! For each Ritz pair (θ, y) of T, λ = σ + 1/θ and x = y, then:
//!
//! * relative residual ‖Kx − λMx‖ / (‖K‖‖x‖ + |λ|‖M‖‖x‖) of the linear problem (β at
//!   the target; ‖·‖ of a matrix its largest absolute row sum, an upper bound of the
//!   2-norm of a symmetric matrix; the ports add max_p |jβ_p| N_p to ‖K‖);
//! * with ports, β refined per mode by first-order perturbation,
//!   δλ = j Σ_p Δβ_p N_p c_p² / (xᵀ M x) (left eigenvector = x for a complex symmetric
//!   pencil, c_p the aperture amplitudes), iterated to a fixed point; with impedance
//!   walls the wall coefficient likewise, δλ += Δc xᵀW_E x / (xᵀ M x)
//!   ([`crate::fem::impedance`]);
//! * divergence figure ‖Gᵀ M x‖ / ‖M x‖ (G: gradients of the scalar space; zero for a
//!   true resonance, O(1) for a gradient field): above [`SPURIOUS_DIVERGENCE`], or with
//!   Re λ ≤ 0, the pair is dropped as spurious;
//! * normalisation ∫ ε′|E|² dV = xᴴ M′ x = 1 m³ with the phase chosen so that the
//!   largest coefficient is real; f = c0 √λ / 2π and Q = Re f / (2 Im f).

use super::system::PortedSystem;
use crate::constants::C0;
use crate::fem::assembly::SystemMatrices;
use crate::fem::impedance::ImpedanceWalls;
use crate::fem::port::{PortFrame, PortTerms};
use crate::fem::Space;
use crate::linalg::eigen::RitzPairs;
use crate::linalg::norm;
use crate::linalg::sparse::{quadratic_form, row_sum_norm, spmv, SparseMatrix};
use crate::linalg::tall_skinny::column;
use faer::c64;
use rayon::prelude::*;

/// Divergence figure above which a computed field is treated as a gradient (spurious).
/// True modes reach round-off level (≈1e-10); gradients are O(1).
pub const SPURIOUS_DIVERGENCE: f64 = 1e-5;

/// An eigenpair of the eigenproblem's unknowns before the checks.
pub struct RawMode {
    pub lambda: c64,
    /// Real and imaginary part of x (the imaginary part empty on the real path).
    pub re: Vec<f64>,
    pub im: Vec<f64>,
    /// Relative residual of the linear problem.
    pub residual: f64,
}

/// A mode that passed the checks, normalised, on the space's free unknowns.
#[derive(Clone, Debug)]
pub struct CheckedMode {
    /// k0² (with β refined per mode when there are ports).
    pub lambda: c64,
    /// Complex frequency f = c0 √λ / 2π, Hz.
    pub freq: c64,
    /// Re f / (2 Im f), infinite when Im f ≤ 0.
    pub q_eigen: f64,
    pub residual: f64,
    pub divergence: f64,
    /// Coefficients of E (∫ ε′|E|² = 1 m³); `im` empty for a real mode.
    pub re: Vec<f64>,
    pub im: Vec<f64>,
    /// TE10 amplitude c_p of each port, with the same normalisation and phase.
    pub amplitudes: Vec<c64>,
}

/// ‖K‖ and ‖M‖ (largest absolute row sums) for the residual's normalisation.
#[derive(Clone, Copy, Debug)]
pub struct ResidualScale {
    pub k_norm: f64,
    pub m_norm: f64,
}

impl ResidualScale {
    pub fn new(sys: &SystemMatrices) -> Self {
        Self {
            k_norm: row_sum_norm(&sys.stiffness),
            m_norm: row_sum_norm(&sys.mass_real) + sys.mass_imag.as_ref().map_or(0.0, row_sum_norm),
        }
    }
}

/// Eigenpairs of the real path, with their residuals against K and M′.
pub fn real_raw_modes(
    ritz: &RitzPairs<f64>,
    sigma: f64,
    sys: &SystemMatrices,
    scale: ResidualScale,
) -> Vec<RawMode> {
    let n = sys.n();
    let mut kx = vec![0.0; n];
    let mut mx = vec![0.0; n];
    ritz.theta
        .iter()
        .enumerate()
        .map(|(j, &theta)| {
            let lambda = sigma + 1.0 / theta;
            let x = column(ritz.vectors.as_ref(), j);
            spmv(&sys.stiffness, x, &mut kx);
            spmv(&sys.mass_real, x, &mut mx);
            let r = kx
                .iter()
                .zip(&mx)
                .map(|(k, m)| (k - lambda * m).powi(2))
                .sum::<f64>()
                .sqrt();
            let residual = r / ((scale.k_norm + lambda.abs() * scale.m_norm) * norm(x));
            RawMode {
                lambda: c64::new(lambda, 0.0),
                re: x.to_vec(),
                im: Vec::new(),
                residual,
            }
        })
        .collect()
}

/// Eigenpairs of the complex path, with their residuals against K + jβP and M′ − jM″
/// (`ar`, `ai`: the parts of the shifted matrix A = K + jβP − σM).
#[allow(clippy::too_many_arguments)]
pub fn complex_raw_modes(
    ritz: &RitzPairs<c64>,
    sigma: f64,
    ar: &SparseMatrix,
    ai: &SparseMatrix,
    sys: &SystemMatrices,
    ports: &PortTerms,
    scale: ResidualScale,
) -> Vec<RawMode> {
    let n = sys.n();
    ritz.theta
        .iter()
        .enumerate()
        .map(|(j, &theta)| {
            let lambda = c64::new(sigma, 0.0) + c64::new(1.0, 0.0) / theta;
            let re: Vec<f64> = (0..n).map(|i| ritz.vectors[(i, j)].re).collect();
            let im: Vec<f64> = (0..n).map(|i| ritz.vectors[(i, j)].im).collect();
            let residual = complex_residual(ar, ai, sys, sigma, lambda, &re, &im)
                / ((scale.k_norm + ports.largest() + lambda.norm() * scale.m_norm)
                    * (norm(&re).powi(2) + norm(&im).powi(2)).sqrt());
            RawMode {
                lambda,
                re,
                im,
                residual,
            }
        })
        .collect()
}

/// ‖(Ar + jAi + σ(M′ − jM″)) x − λ(M′ − jM″) x‖ = ‖(K + jβP) x − λ M x‖.
fn complex_residual(
    ar: &SparseMatrix,
    ai: &SparseMatrix,
    sys: &SystemMatrices,
    sigma: f64,
    lambda: c64,
    xr: &[f64],
    xi: &[f64],
) -> f64 {
    let n = xr.len();
    let mut t = vec![0.0; n];
    let apply = |a: &SparseMatrix, x: &[f64], t: &mut Vec<f64>| {
        spmv(a, x, t);
        t.clone()
    };
    // A x with A = Ar + jAi.
    let ar_xr = apply(ar, xr, &mut t);
    let ar_xi = apply(ar, xi, &mut t);
    let ai_xr = apply(ai, xr, &mut t);
    let ai_xi = apply(ai, xi, &mut t);
    // M x with M = M′ − jM″.
    let mut m_r = apply(&sys.mass_real, xr, &mut t);
    let mut m_i = apply(&sys.mass_real, xi, &mut t);
    if let Some(mi) = &sys.mass_imag {
        let a = apply(mi, xi, &mut t);
        let b = apply(mi, xr, &mut t);
        for i in 0..n {
            m_r[i] += a[i];
            m_i[i] -= b[i];
        }
    }
    // (A + σM − λM) x = A x − (λ − σ) M x.
    let mu = lambda - c64::new(sigma, 0.0);
    let mut s = 0.0;
    for i in 0..n {
        let ax = c64::new(ar_xr[i] - ai_xi[i], ar_xi[i] + ai_xr[i]);
        let mx = c64::new(m_r[i], m_i[i]);
        s += (ax - mu * mx).norm_sqr();
    }
    s.sqrt()
}

/// What the checks need besides the modes.
pub struct CheckContext<'a> {
    pub space: &'a Space<'a>,
    pub system: &'a PortedSystem,
    pub frames: &'a [PortFrame],
    /// Port terms at the target (β at the target, N_p, the amplitude index).
    pub ports: &'a PortTerms,
    /// Surface-impedance walls (None: PEC or walls by perturbation).
    pub walls: Option<&'a ImpedanceWalls>,
    /// Target wavenumber k0 = √σ (m⁻¹).
    pub k_target: f64,
}

/// Check every eigenpair (one per thread); None for a spurious one.
pub fn check_all(raw: Vec<RawMode>, ctx: &CheckContext<'_>) -> Vec<Option<CheckedMode>> {
    raw.into_par_iter().map(|m| check(m, ctx)).collect()
}

/// β refinement, divergence check, normalisation and phase of one eigenpair.
pub fn check(mut m: RawMode, ctx: &CheckContext<'_>) -> Option<CheckedMode> {
    let full = &ctx.system.full;
    let nf = ctx.space.n_dofs();
    let mut t = vec![0.0; nf];
    let base = ctx.ports.base;
    let mut amp: Vec<c64> = (0..ctx.ports.len())
        .map(|p| c64::new(m.re[base + p], m.im.get(base + p).copied().unwrap_or(0.0)))
        .collect();
    let mut xr = ctx.system.expand(std::mem::take(&mut m.re));
    let mut xi = ctx.system.expand(std::mem::take(&mut m.im));
    if !ctx.ports.is_empty() || ctx.walls.is_some() {
        let xwx = ctx.walls.map(|w| w.bilinear(&xr, &xi));
        m.lambda = refine_beta(m.lambda, full.mass_bilinear(&xr, &xi), &amp, xwx, ctx);
    }
    // Divergence: Gᵀ M x with M = M′ − jM″ on the full unknowns.
    let (yr, yi) = full.mass_times(&xr, &xi, &mut t);
    let (topo, dofs) = (&ctx.space.topology, &ctx.space.dofs);
    let div = (dofs.gradient_residual(topo, &yr).powi(2)
        + if yi.is_empty() {
            0.0
        } else {
            dofs.gradient_residual(topo, &yi).powi(2)
        })
    .sqrt()
        / (norm(&yr).powi(2) + norm(&yi).powi(2)).sqrt();
    if div > SPURIOUS_DIVERGENCE || m.lambda.re <= 0.0 {
        return None;
    }
    normalise(&full.mass_real, &mut xr, &mut xi, &mut amp, &mut t);
    let k = m.lambda.sqrt();
    let freq = k * (C0 / (2.0 * std::f64::consts::PI));
    let q_eigen = if freq.im > 0.0 {
        freq.re / (2.0 * freq.im)
    } else {
        f64::INFINITY
    };
    Some(CheckedMode {
        lambda: m.lambda,
        freq,
        q_eigen,
        residual: m.residual,
        divergence: div,
        re: xr,
        im: xi,
        amplitudes: amp,
    })
}

/// λ with β_p (and the impedance walls' coefficient, `xwx` = xᵀW_E x) taken at the
/// mode's own wavenumber instead of the target's: first-order perturbation
/// δλ = (j Σ_p Δβ_p N_p c_p² + Δc xᵀW_E x) / (xᵀMx), iterated six times to its fixed point.
fn refine_beta(
    lambda0: c64,
    xmx: c64,
    amp: &[c64],
    xwx: Option<c64>,
    ctx: &CheckContext<'_>,
) -> c64 {
    let mut lambda = lambda0;
    for _ in 0..6 {
        let k = lambda.sqrt().re;
        let mut d = c64::new(0.0, 0.0);
        for (p, f) in ctx.frames.iter().enumerate() {
            let dbeta = f.beta(k) - f.beta(ctx.k_target);
            d += c64::new(0.0, 1.0) * dbeta * ctx.ports.norm[p] * amp[p] * amp[p];
        }
        if let (Some(w), Some(xwx)) = (ctx.walls, xwx) {
            d += w.shift(k, xwx);
        }
        lambda = lambda0 + d / xmx;
    }
    lambda
}

/// Scale x (and the port amplitudes) to xᴴM′x = 1 and make the largest coefficient real
/// and positive-signed (`t`: scratch).
fn normalise(
    mass_real: &SparseMatrix,
    xr: &mut [f64],
    xi: &mut [f64],
    amp: &mut [c64],
    t: &mut [f64],
) {
    let nf = xr.len();
    let mut e2 = quadratic_form(mass_real, xr, t);
    if !xi.is_empty() {
        e2 += quadratic_form(mass_real, xi, t);
    }
    let scale = 1.0 / e2.sqrt();
    let (imax, _) = (0..nf)
        .map(|i| (i, xr[i].hypot(xi.get(i).copied().unwrap_or(0.0))))
        .fold((0, -1.0), |a, b| if b.1 > a.1 { b } else { a });
    let phase = if xi.is_empty() {
        c64::new(scale.copysign(xr[imax]), 0.0)
    } else {
        let z = c64::new(xr[imax], xi[imax]);
        z.conj() / z.norm() * scale
    };
    if !xi.is_empty() {
        for i in 0..nf {
            let z = c64::new(xr[i], xi[i]) * phase;
            xr[i] = z.re;
            xi[i] = z.im;
        }
        for a in amp.iter_mut() {
            *a *= phase;
        }
    } else {
        for v in xr.iter_mut() {
            *v *= phase.re;
        }
        for a in amp.iter_mut() {
            *a *= phase.re;
        }
    }
}
