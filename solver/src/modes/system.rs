//! The assembled system with its port constraints: the first stage after the space.
//!
//! K, M′, M″ are assembled on the free unknowns x of the space ([`crate::fem::assembly`]).
//! With ports, the aperture unknowns are replaced by one TE10 amplitude per port,
//! x = T y ([`crate::fem::port`]), and the system becomes Tᵀ K T, Tᵀ M′ T, Tᵀ M″ T on y;
//! the port boundary terms jβ_p N_p then sit on the diagonal at the amplitude unknowns
//! ([`PortTerms`], built per wavenumber since β depends on k0).
//!
//! The fill-reducing ordering needs only the pattern of the matrix that will be
//! factorised: without ports that is the assembled pattern, so it runs on one core while
//! the other computes the values; with ports it follows the reduction.

use crate::fem::assembly::{assemble, assemble_alongside, RegionMaterial, SystemMatrices};
use crate::fem::port::{port_constraint, PortConstraint, PortFrame, PortTerms, Reduction};
use crate::fem::Space;
use crate::linalg::ordering::nested_dissection_of_pattern;
use crate::linalg::sparse::SparseMatrix;
use std::time::Instant;

/// A fill-reducing ordering (forward, inverse; None when METIS could not order the
/// pattern, and minimum degree is used instead) with the seconds it took.
#[derive(Clone, Debug)]
pub struct TimedOrdering {
    pub permutation: Option<(Vec<u32>, Vec<u32>)>,
    pub seconds: f64,
}

/// Nested dissection of a CSR pattern, timed.
pub fn order_pattern(indptr: &[u32], indices: &[u32]) -> TimedOrdering {
    let t = Instant::now();
    let permutation = nested_dissection_of_pattern(indptr, indices);
    TimedOrdering {
        permutation,
        seconds: t.elapsed().as_secs_f64(),
    }
}

/// Nested dissection of a matrix's pattern, timed.
pub fn order_matrix(a: &SparseMatrix) -> TimedOrdering {
    order_pattern(a.indptr().raw_storage(), a.indices())
}

/// The assembled matrices on the space's free unknowns and, with ports, the constraint
/// and the matrices on the reduced unknowns.
pub struct PortedSystem {
    /// K, M′, M″ on the space's free unknowns.
    pub full: SystemMatrices,
    /// TE10 constraint of each port (None without ports).
    pub constraint: Option<PortConstraint>,
    /// x = T y (None without ports).
    pub reduction: Option<Reduction>,
    reduced: Option<SystemMatrices>,
}

impl PortedSystem {
    /// Assemble on `space` (built with [`Space::with_ports`] for `frames.len()` ports)
    /// and apply the port constraints. Without ports the ordering of the assembled
    /// pattern runs alongside the element loop and is returned; with ports it is None
    /// (order [`PortedSystem::matrices`] afterwards).
    pub fn assemble(
        space: &Space<'_>,
        materials: &[RegionMaterial],
        frames: &[PortFrame],
    ) -> (Self, Option<TimedOrdering>) {
        let (full, early) = if frames.is_empty() {
            let (m, o) = assemble_alongside(space, materials, order_pattern);
            (m, Some(o))
        } else {
            (assemble(space, materials), None)
        };
        let constraint = (!frames.is_empty()).then(|| port_constraint(space, frames));
        let reduction = constraint
            .as_ref()
            .map(|c| Reduction::new(space.n_dofs(), c));
        let reduced = reduction.as_ref().map(|r| r.reduce_system(&full));
        (
            Self {
                full,
                constraint,
                reduction,
                reduced,
            },
            early,
        )
    }

    /// The matrices of the eigenproblem: reduced with ports, else the full ones.
    pub fn matrices(&self) -> &SystemMatrices {
        self.reduced.as_ref().unwrap_or(&self.full)
    }

    /// Index of the first port amplitude among the unknowns of [`Self::matrices`] (their
    /// order without ports).
    pub fn port_base(&self) -> usize {
        self.reduction
            .as_ref()
            .map_or(self.matrices().n(), |r| r.port_base)
    }

    /// Port terms jβ_p(k0) N_p of `frames` at wavenumber `k0` (m⁻¹).
    pub fn port_terms(&self, frames: &[PortFrame], k0: f64) -> PortTerms {
        match &self.constraint {
            Some(c) => PortTerms::new(frames, c, self.port_base(), k0),
            None => PortTerms::none(self.port_base()),
        }
    }

    /// A vector on the unknowns of [`Self::matrices`] expanded to the space's free
    /// unknowns (x = T y; a copy without ports). An empty vector stays empty.
    pub fn expand(&self, y: Vec<f64>) -> Vec<f64> {
        match &self.reduction {
            Some(r) if !y.is_empty() => r.expand(&y),
            _ => y,
        }
    }

    /// The full matrices and the port constraint, dropping the reduced matrices.
    pub fn into_full(self) -> (SystemMatrices, Option<PortConstraint>) {
        (self.full, self.constraint)
    }
}
