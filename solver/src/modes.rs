//! Resonant modes of a cavity: the library entry point.
//!
//! Pipeline: topology → unknown numbering with PEC elimination → assembly of K, M′, M″ →
//! port constraints (TE10 apertures, [`crate::port`]) → factorisation of the shifted
//! operator at σ = k0²(target) → restarted block eigen iteration → checks → losses.
//!
//! * Lossless cavity without ports: K x = λ M′ x is real symmetric; the M-symmetric
//!   iteration of [`crate::eigen`] runs on (K − σM′)⁻¹M′.
//! * Lossy loads (ε″ > 0) or ports: (K + jβP) x = λ (M′ − jM″) x is complex symmetric;
//!   A = K + jβP − σ(M′ − jM″) is factorised through the equivalent real symmetric system
//!   [[Ar, −Ai], [−Ai, −Ar]] (A = Ar + jAi; x = xr + j xi ↔ [xr; xi], right-hand side
//!   [br; −bi]) and the iteration of [`crate::eigen`] runs on A⁻¹M in complex arithmetic
//!   with the Euclidean inner product. β is taken
//!   at the target and refined per mode by first-order perturbation,
//!   δλ = j Σ_p Δβ_p N_p c_p² / (xᵀ M x) (left eigenvector = x for a complex symmetric
//!   pencil), iterated to a fixed point.
//!
//! Each returned mode carries
//!
//! * k0² and f = c k0 / 2π,
//! * its relative residual ‖Kx − λMx‖ / (‖K‖‖x‖ + |λ|‖M‖‖x‖) (‖·‖ of a matrix: largest
//!   absolute row sum, an upper bound of the 2-norm of a symmetric matrix),
//! * its divergence figure ‖Gᵀ M x‖ / ‖M x‖ (G: gradients of the scalar space), which is
//!   zero for a true resonance and O(1) for a gradient (spurious, zero-frequency) field.
//!   Fields with a figure above [`SPURIOUS_DIVERGENCE`] are dropped and counted.

use crate::assembly::{
    assemble, assemble_alongside, spmm, spmv, RegionMaterial, SparseMatrix, SystemMatrices,
};
use crate::dofmap::DofMap;
use crate::eigen::{
    self, EigenOptions, EigenProgress, KrylovOperator, KrylovScalar, RitzPairs, Wanted,
};
use crate::element::NedelecOrder;
use crate::error::SolverError;
use crate::factor::{FactorKind, SymmetricFactor};
use crate::losses::{mode_integrals, mode_q, ModeIntegrals, ModeQ, PortPower};
use crate::ordering::{doubled, nested_dissection_of_pattern};
use crate::port::{port_constraint, PortConstraint, PortFrame, Reduction};
use crate::tall_skinny::column;
use crate::topology::Topology;
use antinode_mesh::{BoundaryTag, TetMesh};
use faer::{c64, Mat, MatMut, MatRef, Par};
use rayon::prelude::*;
use std::time::Instant;

/// Speed of light in vacuum, m/s (exact, SI).
pub const C0: f64 = 299_792_458.0;

/// Band searches reach this factor beyond the farther band edge (see [`solve_modes`]).
pub const BAND_MARGIN: f64 = 1.25;

/// Extra modes sought beyond the requested count (see [`solve_modes`]).
pub const COUNT_MARGIN: usize = 4;

/// Relative frequency difference below which two computed modes are one degenerate
/// eigenvalue. Members of a group that a symmetry makes exactly degenerate agree to
/// round-off (measured ~1e-14 on the cube); modes merely close in frequency differ by
/// their discretisation error or physics, ≥ ~1e-7 at any practical mesh (common
/// practice, no source).
pub const DEGENERATE_REL: f64 = 1e-9;

/// Divergence figure above which a computed field is treated as a gradient (spurious).
/// True modes reach round-off level (≈1e-10); gradients are O(1).
pub const SPURIOUS_DIVERGENCE: f64 = 1e-5;

/// k0² (m⁻²) of a frequency in Hz.
pub fn k0_squared(freq_hz: f64) -> f64 {
    let k0 = 2.0 * std::f64::consts::PI * freq_hz / C0;
    k0 * k0
}

/// Frequency (Hz) of k0² (m⁻²).
pub fn frequency_of(k0_squared: f64) -> f64 {
    k0_squared.max(0.0).sqrt() * C0 / (2.0 * std::f64::consts::PI)
}

/// What to solve for.
#[derive(Clone, Debug)]
pub struct ModeSettings {
    pub order: NedelecOrder,
    /// Target frequency (Hz): the shift.
    pub target_hz: f64,
    /// Every mode in this band (Hz) is wanted.
    pub band_hz: Option<[f64; 2]>,
    /// This many modes nearest the target are wanted; when the last of them belongs to a
    /// degenerate group (within [`DEGENERATE_REL`]), the whole group is returned.
    pub count: usize,
    pub factor: FactorKind,
    /// Iterative refinement steps per solve (0 or 1).
    pub refine: usize,
    pub eigen: EigenOptions,
    /// Largest number of modes a band solve may return.
    pub max_modes: usize,
    /// Wall conductivity (S/m) for the wall Q; None = PEC (no wall loss).
    pub wall_conductivity: Option<f64>,
    /// Feed ports (matched TE10 apertures); their faces are PEC when this is empty.
    pub ports: Vec<PortFrame>,
}

impl ModeSettings {
    /// Defaults for a target frequency: order 2, 20 modes, the pivoted LBLᵀ factorisation
    /// (its solves are accurate to ~1e-14 here, so the one allowed refinement step is
    /// skipped after the first check; unpivoted LDLᵀ factorises ~15 % faster but its
    /// solves on these indefinite matrices often miss the 1e-10 accuracy and then cost
    /// two solves each), PEC walls, no ports.
    pub fn new(target_hz: f64) -> Self {
        Self {
            order: NedelecOrder::Two,
            target_hz,
            band_hz: None,
            count: 20,
            factor: FactorKind::Lblt,
            refine: 1,
            eigen: EigenOptions::default(),
            max_modes: 400,
            wall_conductivity: None,
            ports: Vec::new(),
        }
    }
}

/// Long-running stages, reported to a progress display.
#[derive(Clone, Copy, Debug)]
pub enum Stage {
    Topology,
    Assembly { n_dofs: usize },
    Factorization { n_dofs: usize, nnz: usize },
    Eigen(EigenProgress),
    Checks,
}

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
    /// Q from the complex eigenvalue, Re f/(2 Im f) (loads and ports; infinite when
    /// lossless). Wall losses are added by perturbation in `q`.
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
    /// [`solve_modes`]); with the target at the mode's frequency these equal `q.q_ports`.
    /// Kept as an independent consistency check.
    pub q_ports_balance: Vec<f64>,
}

/// The discrete problem a mode set was computed on (needed to evaluate fields).
pub struct Discretization {
    pub topology: Topology,
    pub dofs: DofMap,
    pub matrices: SystemMatrices,
    /// TE10 constraints of the ports (None without ports).
    pub ports: Option<PortConstraint>,
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
    /// Radius (m⁻², in k0² = λ) of the disc around σ in the complex λ plane inside which
    /// every eigenvalue was found: the band radius for a band search, else the distance of
    /// the farthest converged mode. A mode with Re f in a band but strong damping
    /// (Im λ ≈ Re λ / Q) lies outside the disc when Q is small; callers can turn this
    /// into the Q above which a band listing is complete.
    pub search_radius: f64,
}

/// Modes sorted by frequency, with the discretisation and solve figures.
pub struct ModeSet {
    pub modes: Vec<Mode>,
    pub stats: SolveStats,
    pub disc: Discretization,
}

/// Largest absolute row sum.
pub fn row_sum_norm(a: &SparseMatrix) -> f64 {
    a.outer_iterator()
        .map(|row| row.data().iter().map(|v| v.abs()).sum::<f64>())
        .fold(0.0, f64::max)
}

struct RealShiftInvert<'a> {
    shifted: SparseMatrix,
    factor: SymmetricFactor,
    mass: &'a SparseMatrix,
    refine: usize,
}

impl KrylovOperator<f64> for RealShiftInvert<'_> {
    fn dim(&self) -> usize {
        self.mass.rows()
    }
    fn euclidean(&self) -> bool {
        false
    }
    fn metric(&self, x: MatRef<'_, f64>, y: MatMut<'_, f64>) {
        spmm(self.mass, x, y);
    }
    /// T V = (K − σM)⁻¹ (M V): the stored M V saves the mass product.
    fn apply(&self, _v: MatRef<'_, f64>, mv: MatRef<'_, f64>, mut y: MatMut<'_, f64>) {
        y.copy_from(mv);
        self.factor.solve_refined(&self.shifted, y, self.refine);
    }
}

/// Σ c_i A_i on the union of the patterns (rows merged in sorted order).
pub fn combine(terms: &[(f64, &SparseMatrix)]) -> SparseMatrix {
    let (rows, cols) = terms[0].1.shape();
    let mut indptr = Vec::with_capacity(rows + 1);
    indptr.push(0u32);
    let mut indices: Vec<u32> = Vec::new();
    let mut data: Vec<f64> = Vec::new();
    let mut row: Vec<(u32, f64)> = Vec::new();
    for r in 0..rows {
        row.clear();
        for &(c, a) in terms {
            if let Some(v) = a.outer_view(r) {
                row.extend(v.iter().map(|(j, &x)| (j as u32, c * x)));
            }
        }
        row.sort_unstable_by_key(|e| e.0);
        let mut k = 0;
        while k < row.len() {
            let (j, mut v) = row[k];
            k += 1;
            while k < row.len() && row[k].0 == j {
                v += row[k].1;
                k += 1;
            }
            indices.push(j);
            data.push(v);
        }
        indptr.push(indices.len() as u32);
    }
    SparseMatrix::new((rows, cols), indptr, indices, data)
}

/// Diagonal matrix with the given (index, value) entries.
fn diagonal(n: usize, entries: &[(usize, f64)]) -> SparseMatrix {
    let mut tri = sprs::TriMatI::<f64, u32>::new((n, n));
    for &(i, v) in entries {
        tri.add_triplet(i, i, v);
    }
    tri.to_csr()
}

/// The real symmetric 2n × 2n form [[Ar, −Ai], [−Ai, −Ar]] of A = Ar + jAi
/// (Ar and Ai on one pattern).
fn real_form(ar: &SparseMatrix, ai: &SparseMatrix) -> SparseMatrix {
    let n = ar.rows();
    let mut indptr = Vec::with_capacity(2 * n + 1);
    indptr.push(0u32);
    let mut indices = Vec::with_capacity(4 * ar.nnz());
    let mut data = Vec::with_capacity(4 * ar.nnz());
    for half in 0..2 {
        for r in 0..n {
            let (first, second, s1, s2) = if half == 0 {
                (ar, ai, 1.0, -1.0)
            } else {
                (ai, ar, -1.0, -1.0)
            };
            if let Some(v) = first.outer_view(r) {
                for (j, &x) in v.iter() {
                    indices.push(j as u32);
                    data.push(s1 * x);
                }
            }
            if let Some(v) = second.outer_view(r) {
                for (j, &x) in v.iter() {
                    indices.push((n + j) as u32);
                    data.push(s2 * x);
                }
            }
            indptr.push(indices.len() as u32);
        }
    }
    SparseMatrix::new((2 * n, 2 * n), indptr, indices, data)
}

/// (K + jβP − σ(M′ − jM″))⁻¹ (M′ − jM″) through the real 2n form.
struct ComplexShiftInvert<'a> {
    big: SparseMatrix,
    factor: SymmetricFactor,
    m_re: &'a SparseMatrix,
    m_im: Option<&'a SparseMatrix>,
    refine: usize,
}

impl KrylovOperator<c64> for ComplexShiftInvert<'_> {
    fn dim(&self) -> usize {
        self.m_re.rows()
    }
    fn euclidean(&self) -> bool {
        true
    }
    fn metric(&self, x: MatRef<'_, c64>, mut y: MatMut<'_, c64>) {
        y.copy_from(x);
    }
    fn apply(&self, x: MatRef<'_, c64>, _metric_x: MatRef<'_, c64>, mut y: MatMut<'_, c64>) {
        let (n, k) = (self.dim(), x.ncols());
        let xr = Mat::<f64>::from_fn(n, k, |i, j| x[(i, j)].re);
        let xi = Mat::<f64>::from_fn(n, k, |i, j| x[(i, j)].im);
        // b = (M′ − jM″)(xr + j xi): br = M′xr + M″xi, bi = M′xi − M″xr; rhs [br; −bi].
        let mut rhs = Mat::<f64>::zeros(2 * n, k);
        let (mut top, mut bottom) = rhs.as_mut().split_at_row_mut(n);
        spmm(self.m_re, xr.as_ref(), top.as_mut());
        spmm(self.m_re, xi.as_ref(), bottom.as_mut());
        bottom *= faer::Scale(-1.0);
        if let Some(mi) = self.m_im {
            let mut t = Mat::<f64>::zeros(n, k);
            spmm(mi, xi.as_ref(), t.as_mut());
            top += &t;
            spmm(mi, xr.as_ref(), t.as_mut());
            bottom += &t;
        }
        self.factor
            .solve_refined(&self.big, rhs.as_mut(), self.refine);
        for j in 0..k {
            for i in 0..n {
                y[(i, j)] = c64::new(rhs[(i, j)], rhs[(n + i, j)]);
            }
        }
    }
}

/// Factorise the shifted matrix (timed from `started`, which includes building it), wrap
/// it in the operator `make_op` builds, and run the eigen iteration. Returns the Ritz
/// pairs, factorisation and iteration seconds, and the factor's entry count.
#[allow(clippy::too_many_arguments)]
fn factor_and_iterate<T: KrylovScalar, O: KrylovOperator<T>>(
    shifted: SparseMatrix,
    ordering: Option<(Vec<u32>, Vec<u32>)>,
    started: Instant,
    settings: &ModeSettings,
    wanted: Wanted,
    progress: &mut dyn FnMut(Stage),
    make_op: impl FnOnce(SparseMatrix, SymmetricFactor) -> O,
) -> Result<(RitzPairs<T>, f64, f64, usize), SolverError> {
    let factor = SymmetricFactor::new(
        &shifted,
        settings.factor,
        Par::Seq,
        ordering.as_ref().map(|(f, i)| (&f[..], &i[..])),
    )?;
    let factor_s = started.elapsed().as_secs_f64();
    let factor_nnz = factor.factor_nnz();
    let op = make_op(shifted, factor);
    let t = Instant::now();
    let ritz = eigen::solve(&op, wanted, &settings.eigen, &mut |p| {
        progress(Stage::Eigen(p))
    })?;
    Ok((ritz, factor_s, t.elapsed().as_secs_f64(), factor_nnz))
}

/// A computed eigenpair before post-processing (reduced unknowns).
struct RawMode {
    lambda: c64,
    re: Vec<f64>,
    im: Vec<f64>,
    residual: f64,
}

/// Find the resonant modes of a cavity with its loads, walls and ports.
pub fn solve_modes(
    mesh: &TetMesh,
    materials: &[RegionMaterial],
    settings: &ModeSettings,
    progress: &mut dyn FnMut(Stage),
) -> Result<ModeSet, SolverError> {
    if !(settings.target_hz > 0.0 && settings.target_hz.is_finite()) {
        return Err(SolverError::InvalidSetting(format!(
            "target frequency {} Hz must be positive",
            settings.target_hz
        )));
    }
    if materials.len() < mesh.regions.len() {
        return Err(SolverError::InvalidSetting(format!(
            "{} materials given for {} regions",
            materials.len(),
            mesh.regions.len()
        )));
    }
    progress(Stage::Topology);
    let t0 = Instant::now();
    let topology = Topology::new(mesh);
    let n_ports = settings.ports.len();
    let dofs = DofMap::new(
        &topology,
        mesh.nodes.len(),
        settings.order,
        |tag| match tag {
            BoundaryTag::Wall => true,
            BoundaryTag::Port(p) => p >= n_ports,
        },
    );
    if dofs.n_dofs == 0 {
        return Err(SolverError::NoUnknowns);
    }
    progress(Stage::Assembly {
        n_dofs: dofs.n_dofs,
    });
    // Without ports the factorised matrix has the assembled pattern, so the ordering
    // runs alongside the element loop; port constraints change the pattern, and then it
    // follows the reduction.
    let timed_ordering = |indptr: &[u32], indices: &[u32]| {
        let t = Instant::now();
        let ordering = nested_dissection_of_pattern(indptr, indices);
        (ordering, t.elapsed().as_secs_f64())
    };
    let (matrices, early_ordering) = if n_ports == 0 {
        let (m, o) = assemble_alongside(mesh, &topology, &dofs, materials, timed_ordering);
        (m, Some(o))
    } else {
        (assemble(mesh, &topology, &dofs, materials), None)
    };
    let constraint =
        (n_ports > 0).then(|| port_constraint(mesh, &topology, &dofs, &settings.ports));
    let reduction = constraint.as_ref().map(|c| Reduction::new(dofs.n_dofs, c));
    let reduced = reduction.as_ref().map(|r| SystemMatrices {
        stiffness: r.reduce(&matrices.stiffness),
        mass_real: r.reduce(&matrices.mass_real),
        mass_imag: matrices.mass_imag.as_ref().map(|m| r.reduce(m)),
    });
    let sys = reduced.as_ref().unwrap_or(&matrices);
    let assembly_s = t0.elapsed().as_secs_f64();
    let sigma = k0_squared(settings.target_hz);
    let k_target = sigma.sqrt();
    let n = sys.stiffness.rows();
    let nnz = sys.stiffness.nnz();
    let complex = sys.mass_imag.is_some() || n_ports > 0;
    // Port terms jβ_p N_p on the amplitude unknowns (β at the target).
    let port_base = reduction.as_ref().map_or(n, |r| r.port_base);
    let port_norm: Vec<f64> = constraint.as_ref().map_or(Vec::new(), |c| c.norm.clone());
    let jbeta: Vec<c64> = settings
        .ports
        .iter()
        .map(|f| c64::new(0.0, 1.0) * f.beta(k_target))
        .collect();

    // Band: every eigenvalue within BAND_MARGIN × the distance to the farther band edge
    // (complex plane), so damped modes near the edges are caught too; see
    // `SolveStats::search_radius`.
    let band_radius = settings.band_hz.map(|[lo, hi]| {
        BAND_MARGIN
            * (k0_squared(hi) - sigma)
                .abs()
                .max((sigma - k0_squared(lo)).abs())
    });
    let theta_min = band_radius.map(|r| 1.0 / r);
    // A few more than asked: spurious fields are dropped after the iteration, and the
    // final choice of the `count` nearest is made on the real frequency axis, where
    // strongly damped modes sit nearer than in the complex λ plane.
    let wanted = Wanted {
        nearest: settings.count + COUNT_MARGIN,
        theta_min,
        max: settings.max_modes,
        kernel_theta: Some(-1.0 / sigma),
    };
    // Measured on 2 cores: the sequential supernodal kernels beat the threaded ones here,
    // and the tall-skinny dense products of the eigen iteration lose more to thread
    // barriers than they gain (~30 % of the iteration time in synchronisation), so faer
    // runs sequentially; rayon parallelises assembly, sparse products, the block solves
    // (over subtrees) and the dense products (over rows).
    faer::set_global_parallelism(Par::Seq);
    progress(Stage::Factorization { n_dofs: n, nnz });
    let (ordering, ordering_s) = early_ordering.unwrap_or_else(|| {
        timed_ordering(
            sys.stiffness.indptr().raw_storage(),
            sys.stiffness.indices(),
        )
    });
    let k_norm = row_sum_norm(&sys.stiffness);
    let m_norm = row_sum_norm(&sys.mass_real) + sys.mass_imag.as_ref().map_or(0.0, row_sum_norm);

    let (raw, factor_s, eigen_s, factor_nnz, applications, restarts) = if !complex {
        let t1 = Instant::now();
        let a = combine(&[(1.0, &sys.stiffness), (-sigma, &sys.mass_real)]);
        let solved = factor_and_iterate(
            a,
            ordering,
            t1,
            settings,
            wanted,
            progress,
            |shifted, factor| RealShiftInvert {
                shifted,
                factor,
                mass: &sys.mass_real,
                refine: settings.refine,
            },
        )?;
        let (ritz, factor_s, eigen_s, factor_nnz) = solved;
        let mut kx = vec![0.0; n];
        let mut mx = vec![0.0; n];
        let raw: Vec<RawMode> = ritz
            .theta
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
                let residual = r / ((k_norm + lambda.abs() * m_norm) * norm(x));
                RawMode {
                    lambda: c64::new(lambda, 0.0),
                    re: x.to_vec(),
                    im: Vec::new(),
                    residual,
                }
            })
            .collect();
        (
            raw,
            factor_s,
            eigen_s,
            factor_nnz,
            ritz.applications,
            ritz.restarts,
        )
    } else {
        let t1 = Instant::now();
        let port_diag = |part: fn(c64) -> f64| -> SparseMatrix {
            let entries: Vec<(usize, f64)> = (0..n_ports)
                .map(|p| (port_base + p, part(jbeta[p]) * port_norm[p]))
                .collect();
            diagonal(n, &entries)
        };
        let p_re = port_diag(|z| z.re);
        let p_im = port_diag(|z| z.im);
        let mut re_terms = vec![
            (1.0, &sys.stiffness),
            (-sigma, &sys.mass_real),
            (1.0, &p_re),
        ];
        let mut im_terms = vec![(0.0, &sys.stiffness), (1.0, &p_im)];
        if let Some(mi) = &sys.mass_imag {
            im_terms.push((sigma, mi));
            re_terms.push((0.0, mi));
        }
        // Both parts on one pattern (the union), as the real 2n form requires.
        let all: Vec<(f64, &SparseMatrix)> = re_terms
            .iter()
            .chain(&im_terms)
            .map(|&(_, m)| (0.0, m))
            .collect();
        let pattern = combine(&all);
        let with_pattern = |terms: &[(f64, &SparseMatrix)]| {
            let mut t = terms.to_vec();
            t.push((0.0, &pattern));
            combine(&t)
        };
        let ar = with_pattern(&re_terms);
        let ai = with_pattern(&im_terms);
        let big = real_form(&ar, &ai);
        let ordering2 = ordering.as_ref().map(|(f, _)| doubled(f));
        let solved = factor_and_iterate(
            big,
            ordering2,
            t1,
            settings,
            wanted,
            progress,
            |big, factor| ComplexShiftInvert {
                big,
                factor,
                m_re: &sys.mass_real,
                m_im: sys.mass_imag.as_ref(),
                refine: settings.refine,
            },
        )?;
        let (ritz, factor_s, eigen_s, factor_nnz) = solved;
        let raw: Vec<RawMode> = ritz
            .theta
            .iter()
            .enumerate()
            .map(|(j, &theta)| {
                let lambda = c64::new(sigma, 0.0) + c64::new(1.0, 0.0) / theta;
                let re: Vec<f64> = (0..n).map(|i| ritz.vectors[(i, j)].re).collect();
                let im: Vec<f64> = (0..n).map(|i| ritz.vectors[(i, j)].im).collect();
                let residual = complex_residual(
                    &ar,
                    &ai,
                    &sys.mass_real,
                    sys.mass_imag.as_ref(),
                    sigma,
                    lambda,
                    &re,
                    &im,
                ) / ((k_norm
                    + jbeta
                        .iter()
                        .zip(&port_norm)
                        .map(|(b, nn)| b.norm() * nn)
                        .fold(0.0, f64::max)
                    + lambda.norm() * m_norm)
                    * (norm(&re).powi(2) + norm(&im).powi(2)).sqrt());
                RawMode {
                    lambda,
                    re,
                    im,
                    residual,
                }
            })
            .collect();
        (
            raw,
            factor_s,
            eigen_s,
            factor_nnz,
            ritz.applications,
            ritz.restarts,
        )
    };

    progress(Stage::Checks);
    let t_checks = Instant::now();
    let nf = dofs.n_dofs;
    // Modes are checked independently, one per thread.
    let checked: Vec<Option<_>> = raw
        .into_par_iter()
        .map(|mut m| {
            let mut t = vec![0.0; nf];
            // β refinement per mode (first-order perturbation, iterated).
            let mut amp: Vec<c64> = (0..n_ports)
                .map(|p| {
                    c64::new(
                        m.re[port_base + p],
                        m.im.get(port_base + p).copied().unwrap_or(0.0),
                    )
                })
                .collect();
            let (mut xr, mut xi) = match &reduction {
                Some(r) => (
                    r.expand(&m.re),
                    if m.im.is_empty() {
                        Vec::new()
                    } else {
                        r.expand(&m.im)
                    },
                ),
                None => (std::mem::take(&mut m.re), std::mem::take(&mut m.im)),
            };
            if n_ports > 0 {
                let xmx = bilinear_mass(&matrices, &xr, &xi);
                let lambda0 = m.lambda;
                let mut lambda = lambda0;
                for _ in 0..6 {
                    let k = lambda.sqrt().re;
                    let mut d = c64::new(0.0, 0.0);
                    for (p, f) in settings.ports.iter().enumerate() {
                        let dbeta = f.beta(k) - f.beta(k_target);
                        d += c64::new(0.0, 1.0) * dbeta * port_norm[p] * amp[p] * amp[p];
                    }
                    lambda = lambda0 + d / xmx;
                }
                m.lambda = lambda;
            }
            // Divergence: Gᵀ M x with M = M′ − jM″ on the full unknowns.
            let (yr, yi) = mass_apply(&matrices, &xr, &xi, &mut t);
            let div = (dofs.gradient_residual(&topology, &yr).powi(2)
                + if yi.is_empty() {
                    0.0
                } else {
                    dofs.gradient_residual(&topology, &yi).powi(2)
                })
            .sqrt()
                / (norm(&yr).powi(2) + norm(&yi).powi(2)).sqrt();
            if div > SPURIOUS_DIVERGENCE || m.lambda.re <= 0.0 {
                return None;
            }
            // Normalise ∫ε′|E|² = 1 and make the largest coefficient real.
            let mut e2 = quad(&matrices.mass_real, &xr, &mut t);
            if !xi.is_empty() {
                e2 += quad(&matrices.mass_real, &xi, &mut t);
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
            let k = m.lambda.sqrt();
            let f = k * (C0 / (2.0 * std::f64::consts::PI));
            let q_eigen = if f.im > 0.0 {
                f.re / (2.0 * f.im)
            } else {
                f64::INFINITY
            };
            Some((m.lambda, f, q_eigen, m.residual, div, xr, xi, amp))
        })
        .collect();
    let spurious = checked.iter().filter(|c| c.is_none()).count();
    let kept: Vec<_> = checked.into_iter().flatten().collect();
    let inputs: Vec<(&[f64], &[f64])> = kept
        .iter()
        .map(|k| (k.5.as_slice(), k.6.as_slice()))
        .collect();
    let integrals = mode_integrals(mesh, &topology, &dofs, &inputs);
    let mut modes: Vec<Mode> = kept
        .into_iter()
        .zip(integrals)
        .map(
            |((lambda, f, q_eigen, residual, divergence, xr, xi, amp), integrals)| {
                let mut ports: Vec<PortPower> = settings
                    .ports
                    .iter()
                    .enumerate()
                    .map(|(p, fr)| PortPower {
                        amplitude2_norm: amp[p].norm_sqr() * port_norm[p],
                        beta: fr.beta(f.re * 2.0 * std::f64::consts::PI / C0).re,
                    })
                    .collect();
                let mut q = mode_q(
                    f.re,
                    &integrals,
                    materials,
                    settings.wall_conductivity,
                    &ports,
                );
                let q_ports_balance = q.q_ports.clone();
                // The aperture amplitudes come from the eigenvector computed with β at the
                // target; the refined eigenvalue is accurate to second order, the amplitudes
                // only to first. So the total port damping is taken from the refined
                // eigenvalue (1/Q_ext = 1/Q_eigen − 1/Q_d, exact for the linear problem)
                // and shared among ports as the power balance shares it. The correction
                // is skipped when the subtraction is not meaningful (port damping lost in
                // the dielectric one, or a factor outside [1/2, 2]).
                let inv_ext_balance: f64 = q
                    .q_ports
                    .iter()
                    .map(|&x| 1.0 / x)
                    .filter(|x| x.is_finite())
                    .sum();
                if n_ports > 0 && q_eigen.is_finite() && inv_ext_balance > 0.0 {
                    let inv_d = if q.q_dielectric.is_finite() {
                        1.0 / q.q_dielectric
                    } else {
                        0.0
                    };
                    let scale = (1.0 / q_eigen - inv_d) / inv_ext_balance;
                    if (0.5..=2.0).contains(&scale) {
                        for p in ports.iter_mut() {
                            p.amplitude2_norm *= scale;
                        }
                        q = mode_q(
                            f.re,
                            &integrals,
                            materials,
                            settings.wall_conductivity,
                            &ports,
                        );
                    }
                }
                Mode {
                    k0_squared: lambda.re,
                    k0_squared_imag: lambda.im,
                    frequency_hz: f.re,
                    frequency_imag_hz: f.im,
                    q_eigen,
                    residual,
                    divergence,
                    coefficients: xr,
                    coefficients_imag: xi,
                    integrals,
                    q,
                    q_ports_balance,
                }
            },
        )
        .collect();
    let reach = modes
        .iter()
        .map(|m| c64::new(m.k0_squared - sigma, m.k0_squared_imag).norm())
        .fold(0.0, f64::max);
    let search_radius = band_radius.map_or(reach, |r| r.max(reach));
    // Keep every mode in the band and the `count` nearest the target.
    modes.sort_by(|a, b| {
        (a.frequency_hz - settings.target_hz)
            .abs()
            .total_cmp(&(b.frequency_hz - settings.target_hz).abs())
    });
    let in_band = |m: &Mode| {
        settings
            .band_hz
            .is_some_and(|[lo, hi]| m.frequency_hz >= lo && m.frequency_hz <= hi)
    };
    // The `count`-th nearest mode may belong to a degenerate group (symmetric cavities
    // and meshes): its other members are kept too, never half a group.
    let cut = modes
        .get(settings.count.max(1) - 1)
        .map(|m| m.frequency_hz)
        .filter(|_| settings.count > 0);
    let mut rank = 0;
    modes.retain(|m| {
        rank += 1;
        rank <= settings.count
            || in_band(m)
            || cut.is_some_and(|f| (m.frequency_hz - f).abs() <= DEGENERATE_REL * f)
    });
    modes.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
    let stats = SolveStats {
        n_dofs: n,
        complex,
        matrix_nnz: nnz,
        factor_nnz,
        assembly_s,
        ordering_s,
        factor_s,
        eigen_s,
        checks_s: t_checks.elapsed().as_secs_f64(),
        applications,
        restarts,
        spurious_dropped: spurious,
        search_radius,
    };
    drop(reduced);
    Ok(ModeSet {
        modes,
        stats,
        disc: Discretization {
            topology,
            dofs,
            matrices,
            ports: constraint,
        },
    })
}

/// ‖(Ar + jAi + σ(M′ − jM″)) x − λ(M′ − jM″) x‖ = ‖(K + jβP) x − λ M x‖.
#[allow(clippy::too_many_arguments)]
fn complex_residual(
    ar: &SparseMatrix,
    ai: &SparseMatrix,
    m_re: &SparseMatrix,
    m_im: Option<&SparseMatrix>,
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
    let mut m_r = apply(m_re, xr, &mut t);
    let mut m_i = apply(m_re, xi, &mut t);
    if let Some(mi) = m_im {
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

/// M x for M = M′ − jM″ on the full unknowns (real and imaginary parts).
fn mass_apply(m: &SystemMatrices, xr: &[f64], xi: &[f64], t: &mut [f64]) -> (Vec<f64>, Vec<f64>) {
    let n = xr.len();
    let mut yr = vec![0.0; n];
    spmv(&m.mass_real, xr, &mut yr);
    if xi.is_empty() && m.mass_imag.is_none() {
        return (yr, Vec::new());
    }
    let mut yi = vec![0.0; n];
    if !xi.is_empty() {
        spmv(&m.mass_real, xi, &mut yi);
    }
    if let Some(mi) = &m.mass_imag {
        if !xi.is_empty() {
            spmv(mi, xi, t);
            for i in 0..n {
                yr[i] += t[i];
            }
        }
        spmv(mi, xr, t);
        for i in 0..n {
            yi[i] -= t[i];
        }
    }
    (yr, yi)
}

/// Unconjugated xᵀ M x for M = M′ − jM″.
fn bilinear_mass(m: &SystemMatrices, xr: &[f64], xi: &[f64]) -> c64 {
    let mut t = vec![0.0; xr.len()];
    let (yr, yi) = mass_apply(m, xr, xi, &mut t);
    let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
    let re = dot(xr, &yr)
        - if xi.is_empty() || yi.is_empty() {
            0.0
        } else {
            dot(xi, &yi)
        };
    let im = (if yi.is_empty() { 0.0 } else { dot(xr, &yi) })
        + if xi.is_empty() { 0.0 } else { dot(xi, &yr) };
    c64::new(re, im)
}

/// xᵀ A x.
fn quad(a: &SparseMatrix, x: &[f64], t: &mut [f64]) -> f64 {
    spmv(a, x, t);
    x.iter().zip(t.iter()).map(|(p, q)| p * q).sum()
}

fn norm(x: &[f64]) -> f64 {
    x.iter().map(|v| v * v).sum::<f64>().sqrt()
}
