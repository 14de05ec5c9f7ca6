//! Resonant modes of a (lossless) cavity: the library entry point.
//!
//! Pipeline: topology → unknown numbering with PEC elimination → assembly of K and M′ →
//! factorisation of K − σM′ with σ = k0²(target) → restarted block eigen iteration on
//! (K − σM′)⁻¹M′ → checks. Each returned mode carries
//!
//! * k0² and f = c k0 / 2π,
//! * its relative residual ‖Kx − λMx‖ / (‖K‖‖x‖ + |λ|‖M‖‖x‖) (‖·‖ of a matrix: largest
//!   absolute row sum, an upper bound of the 2-norm of a symmetric matrix),
//! * its divergence figure ‖Gᵀ M x‖ / ‖M x‖ (G: gradients of the scalar space), which is
//!   zero for a true resonance and O(1) for a gradient (spurious, zero-frequency) field.
//!   Fields with a figure above [`SPURIOUS_DIVERGENCE`] are dropped and counted.

use crate::assembly::{assemble, spmv, RegionMaterial, SparseMatrix, SystemMatrices};
use crate::dofmap::DofMap;
use crate::eigen::{self, EigenOptions, EigenProgress, ShiftInvertOperator, Wanted};
use crate::element::NedelecOrder;
use crate::error::SolverError;
use crate::factor::{FactorKind, SymmetricFactor};
use crate::topology::Topology;
use antinode_mesh::{BoundaryTag, TetMesh};
use faer::{MatMut, MatRef, Par};
use std::time::Instant;

/// Speed of light in vacuum, m/s (exact, SI).
pub const C0: f64 = 299_792_458.0;

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
    /// At least this many modes nearest the target are wanted.
    pub count: usize,
    pub factor: FactorKind,
    /// Iterative refinement steps per solve (0 or 1).
    pub refine: usize,
    pub eigen: EigenOptions,
    /// Largest number of modes a band solve may return.
    pub max_modes: usize,
}

impl ModeSettings {
    /// Defaults for a target frequency: order 2, 20 modes, LDLᵀ with one refinement step.
    pub fn new(target_hz: f64) -> Self {
        Self {
            order: NedelecOrder::Two,
            target_hz,
            band_hz: None,
            count: 20,
            factor: FactorKind::Ldlt,
            refine: 1,
            eigen: EigenOptions::default(),
            max_modes: 400,
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
    /// k0² = (ω/c)², m⁻².
    pub k0_squared: f64,
    /// Resonant frequency, Hz.
    pub frequency_hz: f64,
    /// Relative residual of K x = λ M x.
    pub residual: f64,
    /// Divergence figure ‖Gᵀ M x‖ / ‖M x‖.
    pub divergence: f64,
    /// Coefficients of E in the Nédélec basis, normalised to xᵀ M′ x = 1 m³
    /// (i.e. ∫ ε′ |E|² dV = 1 with E in V/m and lengths in m).
    pub coefficients: Vec<f64>,
}

/// The discrete problem a mode set was computed on (needed to evaluate fields).
pub struct Discretization {
    pub topology: Topology,
    pub dofs: DofMap,
    pub matrices: SystemMatrices,
}

/// Figures of one solve.
#[derive(Clone, Debug, Default)]
pub struct SolveStats {
    pub n_dofs: usize,
    pub matrix_nnz: usize,
    pub factor_nnz: usize,
    pub assembly_s: f64,
    pub factor_s: f64,
    pub eigen_s: f64,
    pub applications: usize,
    pub restarts: usize,
    pub spurious_dropped: usize,
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

fn col(x: MatRef<'_, f64>, j: usize) -> &[f64] {
    x.col(j)
        .try_as_col_major()
        .expect("contiguous column")
        .as_slice()
}

impl ShiftInvertOperator for RealShiftInvert<'_> {
    fn dim(&self) -> usize {
        self.mass.rows()
    }
    fn apply(&self, x: MatRef<'_, f64>, mut y: MatMut<'_, f64>) {
        self.mass(x, y.as_mut());
        self.factor.solve_refined(&self.shifted, y, self.refine);
    }
    fn mass(&self, x: MatRef<'_, f64>, mut y: MatMut<'_, f64>) {
        for j in 0..x.ncols() {
            let out = y
                .as_mut()
                .col_mut(j)
                .try_as_col_major_mut()
                .expect("contiguous column")
                .as_slice_mut();
            spmv(self.mass, col(x, j), out);
        }
    }
}

/// A − σB for two matrices with the same pattern.
fn shifted(a: &SparseMatrix, b: &SparseMatrix, sigma: f64) -> SparseMatrix {
    debug_assert_eq!(a.indices(), b.indices());
    let data: Vec<f64> = a
        .data()
        .iter()
        .zip(b.data())
        .map(|(x, y)| x - sigma * y)
        .collect();
    SparseMatrix::new(
        a.shape(),
        a.indptr().into_raw_storage().to_vec(),
        a.indices().to_vec(),
        data,
    )
}

/// Discretise `mesh` (PEC on walls and, for now, on ports) with region `materials`.
pub fn discretize(
    mesh: &TetMesh,
    materials: &[RegionMaterial],
    order: NedelecOrder,
) -> Discretization {
    let topology = Topology::new(mesh);
    let dofs = DofMap::new(&topology, mesh.nodes.len(), order, |tag| {
        matches!(tag, BoundaryTag::Wall | BoundaryTag::Port(_))
    });
    let matrices = assemble(mesh, &topology, &dofs, materials);
    Discretization {
        topology,
        dofs,
        matrices,
    }
}

/// Find the resonant modes of a lossless cavity (ε″ is ignored here).
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
    let dofs = DofMap::new(&topology, mesh.nodes.len(), settings.order, |tag| {
        matches!(tag, BoundaryTag::Wall | BoundaryTag::Port(_))
    });
    if dofs.n_dofs == 0 {
        return Err(SolverError::NoUnknowns);
    }
    progress(Stage::Assembly {
        n_dofs: dofs.n_dofs,
    });
    let matrices = assemble(mesh, &topology, &dofs, materials);
    let assembly_s = t0.elapsed().as_secs_f64();
    let sigma = k0_squared(settings.target_hz);
    let nnz = matrices.stiffness.nnz();
    progress(Stage::Factorization {
        n_dofs: dofs.n_dofs,
        nnz,
    });
    let t1 = Instant::now();
    let a = shifted(&matrices.stiffness, &matrices.mass_real, sigma);
    let par = Par::rayon(0);
    let factor = SymmetricFactor::new(&a, settings.factor, par)?;
    let factor_s = t1.elapsed().as_secs_f64();
    let factor_nnz = factor.factor_nnz();
    let op = RealShiftInvert {
        shifted: a,
        factor,
        mass: &matrices.mass_real,
        refine: settings.refine,
    };

    let theta_min = settings.band_hz.map(|[lo, hi]| {
        let r = (k0_squared(hi) - sigma)
            .abs()
            .max((sigma - k0_squared(lo)).abs());
        1.0 / r
    });
    let wanted = Wanted {
        nearest: settings.count,
        theta_min,
        max: settings.max_modes,
    };
    let t2 = Instant::now();
    let ritz = eigen::solve(&op, wanted, &settings.eigen, &mut |p| {
        progress(Stage::Eigen(p))
    })?;
    let eigen_s = t2.elapsed().as_secs_f64();

    progress(Stage::Checks);
    let k_norm = row_sum_norm(&matrices.stiffness);
    let m_norm = row_sum_norm(&matrices.mass_real);
    let n = dofs.n_dofs;
    let mut modes = Vec::new();
    let mut spurious = 0;
    let mut kx = vec![0.0; n];
    let mut mx = vec![0.0; n];
    for (j, &theta) in ritz.theta.iter().enumerate() {
        let lambda = sigma + 1.0 / theta;
        let x = col(ritz.vectors.as_ref(), j);
        spmv(&matrices.stiffness, x, &mut kx);
        spmv(&matrices.mass_real, x, &mut mx);
        let xn = norm(x);
        let r: f64 = kx
            .iter()
            .zip(&mx)
            .map(|(k, m)| (k - lambda * m).powi(2))
            .sum::<f64>()
            .sqrt();
        let residual = r / ((k_norm + lambda.abs() * m_norm) * xn);
        let divergence = dofs.gradient_residual(&topology, &mx) / norm(&mx);
        if divergence > SPURIOUS_DIVERGENCE || lambda <= 0.0 {
            spurious += 1;
            continue;
        }
        modes.push(Mode {
            k0_squared: lambda,
            frequency_hz: frequency_of(lambda),
            residual,
            divergence,
            coefficients: x.to_vec(),
        });
    }
    modes.sort_by(|a, b| a.k0_squared.total_cmp(&b.k0_squared));
    let stats = SolveStats {
        n_dofs: n,
        matrix_nnz: nnz,
        factor_nnz,
        assembly_s,
        factor_s,
        eigen_s,
        applications: ritz.applications,
        restarts: ritz.restarts,
        spurious_dropped: spurious,
    };
    Ok(ModeSet {
        modes,
        stats,
        disc: Discretization {
            topology,
            dofs,
            matrices,
        },
    })
}

fn norm(x: &[f64]) -> f64 {
    x.iter().map(|v| v * v).sum::<f64>().sqrt()
}
