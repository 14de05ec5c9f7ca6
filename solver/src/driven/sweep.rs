//! Fast frequency sweep by projection onto Krylov subspaces of the shifted operator
//! (model-order reduction), with expansion points added until the outputs converge.
//!
//! Method (the Padé-via-Krylov family: Feldmann & Freund, IEEE Trans. CAD 14 (1995) 639,
//! for moment matching by Krylov projection; the multipoint Galerkin form of Slone, Lee &
//! Lee, IEEE Trans. Antennas Propag. 49 (2001) 1504, for several expansion points in FEM;
//! both from memory, not read):
//!
//! 1. At an expansion point k_e, factorise A_e = A(k_e). With s = k², the operator's
//!    derivative D_e = −dA/ds (k_e) = −(1/2k_e) Σ_i α_i′(k_e) A_i. The block Krylov space
//!    span{R_0, A_e⁻¹D_e R_0, (A_e⁻¹D_e)² R_0, …}, R_0 = A_e⁻¹ B (B = (b_1 … b_P)), holds the
//!    Taylor moments of x(s) = A(s)⁻¹F(s) at s_e for the part of A linear in s
//!    (K − s M) and, exactly, for rank-one terms on the source unknowns (the ports:
//!    their k-dependence only adds multiples of A_e⁻¹ b_p, already in R_0); the remaining
//!    k-dependence (dispersive ε, wall resistance ∝ √ω) is matched to first order.
//!    Blocks are orthonormalised as they are generated (block Arnoldi).
//! 2. The real basis V spans Re and Im of all Krylov vectors of all points
//!    ([`super::basis::RealBasis`]); the reduced model is
//!    A_r(k) = Σ α_i(k) Vᵀ A_i V, F_r(k) = Vᵀ F(k), with the exact coefficients α_i(k)
//!    (β(k) of the ports, εr(f), Rs(f)) evaluated at every frequency. Projecting with Vᵀ
//!    (not Vᴴ) keeps A_r complex symmetric; because the outputs b_qᵀ x use the source
//!    vectors, this one-sided projection matches twice as many moments as the number of
//!    blocks (Freund, J. Comput. Appl. Math. 123 (2000) 395, from memory), and a real V
//!    keeps reciprocity and passivity.
//! 3. Error estimate over the check grid: the relative residual of the reduced solution
//!    in the full system, η(k) = max_p ‖A(k) V y_p − F_p(k)‖ / ‖F_p(k)‖ (at up to
//!    [`RESIDUAL_SAMPLES`] evenly spread grid points: each costs a pass over the
//!    matrices), and at every grid point the change of the outputs (mapped by the caller, e.g. to S-parameters) since the
//!    previous model, δ(k) = max |out_j(k) − out_{j−1}(k)|. Blocks are added at the current
//!    point in chunks while max η keeps falling by at least [`CHUNK_GAIN`]; otherwise a
//!    new expansion point is placed at the grid frequency of the largest η. The sweep
//!    stops when max δ ≤ `tolerance` and max η ≤ `residual_tolerance`. δ measures the
//!    error of the previous (smaller) model, so it is a conservative estimate for the
//!    final one; it is an estimate, not a bound.

use super::affine::{AffineSystem, ShiftedSolver};
use super::basis::{orthonormalise, RealBasis};
use faer::linalg::solvers::Solve;
use faer::{c64, Mat, MatRef};
use rayon::prelude::*;
use std::time::Instant;

/// A chunk of Krylov blocks must cut the largest residual over the grid at least by this
/// factor, or the next chunk goes to a new expansion point instead (a point's space
/// converges geometrically near it and stalls far from it; common practice, no source).
pub const CHUNK_GAIN: f64 = 2.0;

/// Settings of the adaptive sweep.
#[derive(Clone, Debug)]
pub struct SweepOptions {
    /// Largest change of any mapped output between successive models at which the sweep
    /// counts as converged (absolute; for S-parameters, whose magnitude is at most 1).
    pub tolerance: f64,
    /// Largest relative residual η accepted.
    pub residual_tolerance: f64,
    /// Krylov blocks added per step at one expansion point.
    pub chunk_blocks: usize,
    /// Most blocks generated at one expansion point.
    pub max_blocks_per_point: usize,
    /// Most expansion points (factorisations).
    pub max_points: usize,
}

impl Default for SweepOptions {
    /// |ΔS| ≤ 1e-4 (−80 dB: far below what a feed measurement resolves), η ≤ 1e-3,
    /// chunks of 6 blocks, at most 60 blocks per point and 8 points (common practice,
    /// no source).
    fn default() -> Self {
        Self {
            tolerance: 1e-4,
            residual_tolerance: 1e-3,
            chunk_blocks: 6,
            max_blocks_per_point: 60,
            max_points: 8,
        }
    }
}

/// One expansion point.
pub struct ExpansionPoint {
    pub k: f64,
    /// Krylov blocks generated here.
    pub blocks: usize,
    /// The direct solution X = A(k)⁻¹F(k) (n × P), free with the first block.
    pub direct: Mat<c64>,
    /// Factorisation wall time (s), as returned by the caller's closure.
    pub factor_s: f64,
    /// Krylov generation and orthogonalisation time (s).
    pub krylov_s: f64,
}

/// One step of the adaptive loop (after each chunk).
#[derive(Clone, Debug)]
pub struct SweepStep {
    pub points: usize,
    pub basis: usize,
    /// Largest η over the grid and where (k).
    pub max_residual: f64,
    pub max_residual_k: f64,
    /// Largest output change since the previous step (None for the first).
    pub max_change: Option<f64>,
    /// Time of the model evaluation and residual check (s).
    pub check_s: f64,
}

/// The reduced model and how it was built.
pub struct Sweep {
    pub basis: RealBasis,
    pub points: Vec<ExpansionPoint>,
    pub steps: Vec<SweepStep>,
    pub converged: bool,
    /// Check grid (k) with η and the final change δ at each grid point.
    pub grid: Vec<f64>,
    pub residual: Vec<f64>,
    pub change: Vec<f64>,
}

impl Sweep {
    /// Reduced solution Y (m × P) at k.
    pub fn reduced_solution(&self, system: &AffineSystem, k: f64) -> Mat<c64> {
        reduced_solve(&self.basis, system, k)
    }

    /// Full-space solution X = V Y (n × P) at k.
    pub fn solution(&self, system: &AffineSystem, k: f64) -> Mat<c64> {
        expand(&self.basis, self.reduced_solution(system, k).as_ref())
    }

    /// Raw outputs b_qᵀ x_p (P × P) at k.
    pub fn outputs(&self, system: &AffineSystem, k: f64) -> Mat<c64> {
        let y = self.reduced_solution(system, k);
        outputs_of(&self.basis, y.as_ref())
    }
}

/// A_r(k) y = F_r(k) by dense LU with partial pivoting.
fn reduced_solve(basis: &RealBasis, system: &AffineSystem, k: f64) -> Mat<c64> {
    let m = basis.dim();
    let alpha = system.coefficients(k);
    let mut a = Mat::<c64>::zeros(m, m);
    for (r, w) in basis.reduced.iter().zip(&alpha) {
        for j in 0..m {
            for i in 0..m {
                a[(i, j)] += *w * r[(i, j)];
            }
        }
    }
    let g = system.source_coefficients(k);
    let f = Mat::<c64>::from_fn(m, g.len(), |i, p| g[p] * basis.sources[(i, p)]);
    a.partial_piv_lu().solve(&f)
}

fn expand(basis: &RealBasis, y: MatRef<'_, c64>) -> Mat<c64> {
    let v = &basis.v;
    let (n, m) = (v.nrows(), v.ncols());
    let yr = Mat::<f64>::from_fn(m, y.ncols(), |i, j| y[(i, j)].re);
    let yi = Mat::<f64>::from_fn(m, y.ncols(), |i, j| y[(i, j)].im);
    let xr = crate::linalg::tall_skinny::times(v.as_ref(), yr.as_ref());
    let xi = crate::linalg::tall_skinny::times(v.as_ref(), yi.as_ref());
    Mat::from_fn(n, y.ncols(), |i, j| c64::new(xr[(i, j)], xi[(i, j)]))
}

fn outputs_of(basis: &RealBasis, y: MatRef<'_, c64>) -> Mat<c64> {
    let s = &basis.sources;
    Mat::from_fn(s.ncols(), y.ncols(), |q, p| {
        (0..s.nrows()).map(|i| y[(i, p)] * s[(i, q)]).sum()
    })
}

/// Most grid points whose residual η is evaluated per check (evenly spread; the output
/// change δ is evaluated at every grid point). 40 resolve a band with tens of resonances
/// well enough to place the next expansion point (common practice, no source).
pub const RESIDUAL_SAMPLES: usize = 40;

/// Grid frequencies whose residual is checked per pass over the operator (bounds the
/// memory of the block product to 4 n P × this many doubles).
const CHECK_CHUNK: usize = 16;

/// Outputs (mapped) and η at every grid point.
fn check(
    basis: &RealBasis,
    system: &AffineSystem,
    grid: &[f64],
    map: &(dyn Fn(f64, &Mat<c64>) -> Mat<c64> + Sync),
) -> (Vec<Mat<c64>>, Vec<f64>) {
    let p = system.n_sources();
    let ys: Vec<Mat<c64>> = grid
        .par_iter()
        .map(|&k| reduced_solve(basis, system, k))
        .collect();
    let mapped: Vec<Mat<c64>> = grid
        .iter()
        .zip(&ys)
        .map(|(&k, y)| map(k, &outputs_of(basis, y.as_ref())))
        .collect();
    // The residual costs a pass over every matrix per frequency; it is evaluated on at
    // most RESIDUAL_SAMPLES evenly spread grid points (the output change, cheap, on all).
    let stride = grid.len().div_ceil(RESIDUAL_SAMPLES).max(1);
    let mut sampled: Vec<usize> = (0..grid.len()).step_by(stride).collect();
    if sampled.last() != Some(&(grid.len() - 1)) {
        sampled.push(grid.len() - 1);
    }
    let mut eta = vec![0.0; grid.len()];
    for chunk in sampled.chunks(CHECK_CHUNK) {
        let m = basis.dim();
        let y = Mat::<c64>::from_fn(m, p * chunk.len(), |i, c| ys[chunk[c / p]][(i, c % p)]);
        let x = expand(basis, y.as_ref());
        let weights: Vec<Vec<c64>> = (0..p * chunk.len())
            .map(|c| system.coefficients(grid[chunk[c / p]]))
            .collect();
        let mut ax = Mat::<c64>::zeros(x.nrows(), x.ncols());
        system.apply_columnwise(x.as_ref(), &weights, ax.as_mut());
        for (ci, &gi) in chunk.iter().enumerate() {
            let f = system.rhs(grid[gi]);
            for q in 0..p {
                let c = ci * p + q;
                let r = (0..x.nrows())
                    .map(|i| (ax[(i, c)] - f[(i, q)]).norm_sqr())
                    .sum::<f64>()
                    .sqrt();
                let fn_ = f.col(q).norm_l2();
                let rel = if fn_ > 0.0 { r / fn_ } else { r };
                let rel = if rel.is_finite() { rel } else { f64::INFINITY };
                eta[gi] = f64::max(eta[gi], rel);
            }
        }
    }
    // A singular or overflowing reduced solve shows as a non-finite output.
    for (e, y) in eta.iter_mut().zip(&mapped) {
        if !(0..y.nrows()).all(|i| (0..y.ncols()).all(|j| y[(i, j)].is_finite())) {
            *e = f64::INFINITY;
        }
    }
    (mapped, eta)
}

fn max_change(a: &[Mat<c64>], b: &[Mat<c64>]) -> Vec<f64> {
    a.iter()
        .zip(b)
        .map(|(x, y)| {
            let mut d: f64 = 0.0;
            for j in 0..x.ncols() {
                for i in 0..x.nrows() {
                    d = d.max((x[(i, j)] - y[(i, j)]).norm());
                }
            }
            if d.is_finite() {
                d
            } else {
                f64::INFINITY
            }
        })
        .collect()
}

fn argmax(v: &[f64]) -> usize {
    (0..v.len())
        .max_by(|&a, &b| v[a].total_cmp(&v[b]))
        .unwrap_or(0)
}

/// Build the reduced model of `system` over the check `grid` (k values). `first` gives the
/// expansion points used before any adaptive choice (none: the grid's middle point).
/// `factorize(k)` returns a solver for A(k) and its wall time. `map(k, outputs)` turns the
/// raw outputs into the quantities whose convergence is tested.
pub fn sweep<'s, E>(
    system: &AffineSystem,
    grid: &[f64],
    first: &[f64],
    factorize: &mut dyn FnMut(f64) -> Result<(Box<dyn ShiftedSolver + 's>, f64), E>,
    map: &(dyn Fn(f64, &Mat<c64>) -> Mat<c64> + Sync),
    options: &SweepOptions,
) -> Result<Sweep, E> {
    assert!(!grid.is_empty(), "sweep: empty check grid");
    let n = system.dim();
    let p = system.n_sources();
    let b = system.source_vectors();
    let b = Mat::<c64>::from_fn(n, p, |i, j| c64::new(b[(i, j)], 0.0));
    let mut basis = RealBasis::new(n, system);
    let mut points: Vec<ExpansionPoint> = Vec::new();
    let mut steps: Vec<SweepStep> = Vec::new();
    let mut queue: Vec<f64> = first.iter().rev().copied().collect();
    if queue.is_empty() {
        queue.push(grid[grid.len() / 2]);
    }
    let mut previous: Option<Vec<Mat<c64>>> = None;
    let (mut residual, mut change) = (
        vec![f64::INFINITY; grid.len()],
        vec![f64::INFINITY; grid.len()],
    );
    let mut converged = false;
    while !converged && points.len() < options.max_points.max(1) {
        let k_e = match queue.pop() {
            Some(k) => k,
            None => grid[argmax(&residual)],
        };
        let (solver, factor_s) = factorize(k_e)?;
        let t_first = Instant::now();
        let alpha_d = system.coefficient_derivatives(k_e);
        let d_weights: Vec<c64> = alpha_d.iter().map(|a| -*a / (2.0 * k_e)).collect();
        let mut w = b.clone();
        solver.solve_in_place(w.as_mut());
        let g = system.source_coefficients(k_e);
        let direct = Mat::<c64>::from_fn(n, p, |i, j| w[(i, j)] * g[j]);
        let index = points.len();
        let mut q = Mat::<c64>::zeros(n, 0);
        let mut blocks = 0;
        let mut krylov_s = t_first.elapsed().as_secs_f64();
        let mut last_max = f64::INFINITY;
        loop {
            let t_chunk = Instant::now();
            let mut exhausted = false;
            for _ in 0..options.chunk_blocks.max(1) {
                let block = orthonormalise(q.as_ref(), w.as_ref());
                if block.ncols() == 0 {
                    exhausted = true;
                    break;
                }
                basis.extend(system, block.as_ref(), index);
                let mut grown = Mat::<c64>::zeros(n, q.ncols() + block.ncols());
                grown
                    .as_mut()
                    .get_mut(.., ..q.ncols())
                    .copy_from(q.as_ref());
                grown
                    .as_mut()
                    .get_mut(.., q.ncols()..)
                    .copy_from(block.as_ref());
                q = grown;
                blocks += 1;
                // Next block: A_e⁻¹ D_e (newest block).
                let weights = vec![d_weights.clone(); block.ncols()];
                let mut next = Mat::<c64>::zeros(n, block.ncols());
                system.apply_columnwise(block.as_ref(), &weights, next.as_mut());
                solver.solve_in_place(next.as_mut());
                w = next;
                if blocks >= options.max_blocks_per_point {
                    break;
                }
            }
            krylov_s += t_chunk.elapsed().as_secs_f64();
            let t_check = Instant::now();
            let (mapped, eta) = check(&basis, system, grid, map);
            let max_eta = eta.iter().copied().fold(0.0, f64::max);
            let step_change = previous.as_ref().map(|prev| max_change(&mapped, prev));
            change = step_change
                .clone()
                .unwrap_or_else(|| vec![f64::INFINITY; grid.len()]);
            let max_delta = step_change
                .as_ref()
                .map(|c| c.iter().copied().fold(0.0, f64::max));
            residual = eta;
            previous = Some(mapped);
            steps.push(SweepStep {
                points: index + 1,
                basis: basis.dim(),
                max_residual: max_eta,
                max_residual_k: grid[argmax(&residual)],
                max_change: max_delta,
                check_s: t_check.elapsed().as_secs_f64(),
            });
            converged = max_delta.is_some_and(|d| d <= options.tolerance)
                && max_eta <= options.residual_tolerance;
            let stalled = max_eta > last_max / CHUNK_GAIN;
            last_max = max_eta;
            if converged || exhausted || stalled || blocks >= options.max_blocks_per_point {
                break;
            }
        }
        points.push(ExpansionPoint {
            k: k_e,
            blocks,
            direct,
            factor_s,
            krylov_s,
        });
    }
    Ok(Sweep {
        basis,
        points,
        steps,
        converged,
        grid: grid.to_vec(),
        residual,
        change,
    })
}
