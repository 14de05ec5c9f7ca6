//! What a mode solve is asked for ([`ModeSettings`]), their checks before any work, and
//! the stages reported to a progress display ([`Stage`]).

use crate::error::SolverError;
use crate::fem::assembly::RegionMaterial;
use crate::fem::curved::CurvedBoundary;
use crate::fem::impedance::WallLosses;
use crate::fem::port::PortFrame;
use crate::fem::{NedelecOrder, Space};
use crate::linalg::eigen::{EigenOptions, EigenProgress};
use crate::linalg::factor::FactorKind;
use crate::linalg::mixed::FactorPrecision;
use crate::modes::operator::ComplexForm;
use antinode_mesh::TetMesh;
use std::sync::Arc;

/// What to solve for.
#[derive(Clone, Debug)]
pub struct ModeSettings {
    pub order: NedelecOrder,
    /// Target frequency (Hz): the shift.
    pub target_hz: f64,
    /// Every mode in this band (Hz) is wanted.
    pub band_hz: Option<[f64; 2]>,
    /// This many modes nearest the target are wanted; when the last of them belongs to a
    /// degenerate group (within [`super::DEGENERATE_REL`]), the whole group is returned.
    pub count: usize,
    /// Factorisation of the real shifted operator (lossless, no ports).
    pub factor: FactorKind,
    /// Factorisation of the complex one (lossy loads or ports): native complex symmetric
    /// LDLᵀ; the real 2n form only as a reference in tests.
    pub complex_form: ComplexForm,
    /// Iterative refinement steps per solve (0 or 1) of a double-precision factor.
    pub refine: usize,
    /// Precision of the factor, real and complex paths: double, or single with every
    /// solve refined in double ([`crate::linalg::mixed`]).
    pub precision: FactorPrecision,
    pub eigen: EigenOptions,
    /// Largest number of modes a band solve may return.
    pub max_modes: usize,
    /// Wall conductivity (S/m) for the wall Q; None = PEC (no wall loss).
    pub wall_conductivity: Option<f64>,
    /// How walls of finite conductivity enter: after the solve by perturbation, or in it
    /// as a surface impedance ([`crate::fem::impedance`]).
    pub wall_losses: WallLosses,
    /// Feed ports (matched TE10 apertures); their faces are PEC when this is empty.
    pub ports: Vec<PortFrame>,
    /// Curved surfaces and the faces on them: tetrahedra there get curved geometry maps
    /// ([`crate::fem::curved`]); empty = every tetrahedron straight.
    pub curved: Arc<CurvedBoundary>,
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
            complex_form: ComplexForm::Native,
            refine: 1,
            precision: FactorPrecision::Double,
            eigen: EigenOptions::default(),
            max_modes: 400,
            wall_conductivity: None,
            wall_losses: WallLosses::default(),
            ports: Vec::new(),
            curved: Arc::default(),
        }
    }

    /// Whether the problem is complex: lossy regions, ports, or impedance walls.
    pub fn is_complex(&self, materials: &[RegionMaterial]) -> bool {
        !self.ports.is_empty()
            || materials.iter().any(|m| m.eps_imag != 0.0)
            || self.impedance_walls().is_some()
    }

    /// The finite-element space of the solve on `mesh`: wall unknowns eliminated
    /// (perfectly conducting, or walls by perturbation), or kept for impedance walls.
    pub fn space<'m>(&self, mesh: &'m TetMesh) -> Space<'m> {
        match self.impedance_walls() {
            Some(_) => Space::with_impedance_walls(mesh, self.order, self.ports.len()),
            None => Space::with_ports(mesh, self.order, self.ports.len()),
        }
    }

    /// The wall conductivity when the walls enter the solve as a surface impedance.
    pub fn impedance_walls(&self) -> Option<f64> {
        match self.wall_losses {
            WallLosses::Impedance => self.wall_conductivity,
            WallLosses::Perturbation => None,
        }
    }

    /// The checks made before any work: a positive finite target and one material per
    /// mesh region.
    pub fn validate(
        &self,
        mesh: &TetMesh,
        materials: &[RegionMaterial],
    ) -> Result<(), SolverError> {
        if !(self.target_hz > 0.0 && self.target_hz.is_finite()) {
            return Err(SolverError::InvalidTarget {
                target_hz: self.target_hz,
            });
        }
        if materials.len() < mesh.regions.len() {
            return Err(SolverError::MaterialsMissing {
                given: materials.len(),
                regions: mesh.regions.len(),
            });
        }
        Ok(())
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
