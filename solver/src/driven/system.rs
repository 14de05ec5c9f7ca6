//! The driven operator on a space: the matrices of A(k) and the port sources.
//!
//! With incident TE10 amplitude a_p and outgoing b_p at port p, the aperture field is
//! E_t = c_p e_p with c_p = a_p + b_p. In the feed guide (axis along the outward normal
//! n̂) the incident wave travels inwards, so n̂ × H_t = (1/Z)(a − b) e =
//! (β/ωμ0)(2a − c) e (Z = ωμ0/β, Pozar §3.3). The weak form's boundary term
//! −jωμ0 ∮ v·(n̂ × H) dS on the test amplitude d of the aperture then reads
//! jβN (c − 2a) d (N = ∮ |Σ t φ_t|² dS, [`crate::fem::port`]): the matched-port term
//! jβ_p N_p on the amplitude unknown, and the source 2jβ_p N_p a_p on the right-hand side.
//!
//! Metal walls of finite conductivity enter as the term j(Rs/ωμ0) W with
//! W_ab = ∮_walls (n̂ × ∇×φ_a)·(n̂ × ∇×φ_b) dS and Rs = √(ωμ0/2σ): its contribution to
//! Im xᴴAx is (Rs/ωμ0) xᴴWx, which the energy identity below turns into the wall loss
//! P_c = (Rs/2)∮|H_t|² = Rs/(2ω²μ0²) xᴴWx, the surface-resistance formula of
//! [`crate::post::losses`] applied self-consistently (the field is the one damped by the
//! walls). The walls' surface reactance (equal to Rs for a good conductor) is not
//! modelled: it shifts resonances by about −f/(2Q_c), which the mode solve neglects too.
//!
//! Energy identity (β real): xᴴAx = xᴴF gives, in its imaginary part,
//! (β_p N_p/2ωμ0)(|a_p|² − |b_p|²) summed over ports = (ωε0/2) Σ_r ε″_r xᴴM_r x + P_c:
//! the forward power minus the reflected equals the power absorbed by loads and walls,
//! exactly for the discrete system.
//!
//! The full operator, in the affine form of [`super::affine`] on the reduced unknowns
//! (x = T y, [`crate::fem::port::Reduction`]):
//!
//!   A(k) = K − k² Σ_r εr_r(f) M_r + j (Rs(f)/ωμ0) W + Σ_p jβ_p(k) N_p e_p e_pᵀ,
//!   F_p(k) = 2jβ_p(k) N_p e_p,
//!
//! with M_r the unit-permittivity mass matrix of region r, so dispersive loads (water)
//! are evaluated at every frequency.
//!
//! Curved elements: with a [`CurvedBoundary`] the space's tetrahedra along the cylinder
//! sides are curved ([`crate::fem::curved`]), so K, M_r and W are the curved element and
//! wall-face matrices the mode solve uses; the port apertures keep their straight-face
//! TE10 constraint (as in the mode solve).

use super::affine::{AffineSystem, Source, Term};
use crate::constants::{C0, MU0};
use crate::error::SolverError;
use crate::fem::assembly::{assemble, RegionMaterial};
use crate::fem::curved::CurvedBoundary;
use crate::fem::impedance::{wall_face_matrix, WallIntegral};
use crate::fem::port::{port_constraint, PortConstraint, PortFrame, Reduction};
use crate::fem::{NedelecOrder, Space};
use crate::linalg::sparse::{diagonal, SparseMatrix};
use crate::modes::system::{order_matrix, TimedOrdering};
use crate::post::losses::surface_resistance;
use antinode_mesh::TetMesh;
use faer::c64;
use std::time::Instant;

const J: c64 = c64 { re: 0.0, im: 1.0 };

/// Region materials (0 = air, i + 1 = load i) at a frequency in Hz.
pub type MaterialsAt<'a> = dyn Fn(f64) -> Vec<RegionMaterial> + Send + Sync + 'a;

/// Assembled matrices of the driven problem on the reduced unknowns.
pub struct DrivenOperator<'m> {
    pub space: Space<'m>,
    pub constraint: PortConstraint,
    pub reduction: Reduction,
    pub frames: Vec<PortFrame>,
    /// Tᵀ K T (1/μr-weighted curl-curl).
    pub stiffness: SparseMatrix,
    /// Tᵀ M_r T, unit-permittivity mass of each region.
    pub region_mass: Vec<SparseMatrix>,
    /// Tᵀ W T (None for perfectly conducting walls).
    pub wall: Option<SparseMatrix>,
    /// N_p on the diagonal at the amplitude unknown of port p.
    pub port_diag: Vec<SparseMatrix>,
    /// Fill-reducing ordering of the reduced pattern.
    pub ordering: TimedOrdering,
    /// Assembly and reduction wall time (s).
    pub assembly_s: f64,
}

/// Positions of the operator's terms in its [`AffineSystem`].
#[derive(Clone, Debug)]
pub struct TermLayout {
    pub stiffness: usize,
    /// Region r's mass term is `region_mass + r`.
    pub region_mass: usize,
    pub wall: Option<usize>,
    /// Port p's term is `ports + p`.
    pub ports: usize,
}

/// A copy of `a` without its stored zeros (a region's mass matrix assembled on the
/// whole pattern is zero outside the region).
fn without_zeros(a: &SparseMatrix) -> SparseMatrix {
    let mut tri = sprs::TriMatI::<f64, u32>::new(a.shape());
    for (v, (i, j)) in a.iter() {
        if *v != 0.0 {
            tri.add_triplet(i as usize, j as usize, *v);
        }
    }
    tri.to_csr()
}

impl<'m> DrivenOperator<'m> {
    /// Assemble on `mesh` at `order` with the given ports (at least one) and the
    /// regions' permeabilities; `lossy_walls` adds the wall matrix. The tetrahedra along
    /// `curved`'s surfaces get curved geometry maps ([`crate::fem::curved`]; an empty
    /// boundary keeps every tetrahedron straight), as in the mode solve: the volume
    /// matrices, the wall term and the heating integrals then use the curved elements.
    pub fn assemble(
        mesh: &'m TetMesh,
        order: NedelecOrder,
        mu_r: &[f64],
        frames: &[PortFrame],
        lossy_walls: bool,
        curved: &CurvedBoundary,
    ) -> Result<Self, SolverError> {
        if frames.is_empty() {
            return Err(SolverError::NoPorts);
        }
        if mu_r.len() < mesh.regions.len().max(1) {
            return Err(SolverError::MaterialsMissing {
                given: mu_r.len(),
                regions: mesh.regions.len(),
            });
        }
        let t0 = Instant::now();
        let space = Space::with_ports(mesh, order, frames.len()).with_curved(curved)?;
        if space.n_dofs() == 0 {
            return Err(SolverError::NoUnknowns);
        }
        let constraint = port_constraint(&space, frames);
        let reduction = Reduction::new(space.n_dofs(), &constraint);
        // One assembly per region, each with unit ε′ in that region only: K from the
        // first, M_r from each.
        let mut stiffness = None;
        let n_regions = mesh.regions.len().max(1);
        let mut region_mass = Vec::with_capacity(n_regions);
        for r in 0..n_regions {
            let mats: Vec<RegionMaterial> = mu_r[..n_regions]
                .iter()
                .enumerate()
                .map(|(i, &m)| RegionMaterial {
                    eps_real: if i == r { 1.0 } else { 0.0 },
                    eps_imag: 0.0,
                    mu_r: m,
                })
                .collect();
            let sys = assemble(&space, &mats);
            if stiffness.is_none() {
                stiffness = Some(reduction.reduce(&sys.stiffness));
            }
            region_mass.push(reduction.reduce(&without_zeros(&sys.mass_real)));
        }
        let stiffness = stiffness.ok_or(SolverError::NoUnknowns)?;
        let wall = lossy_walls
            .then(|| reduction.reduce(&wall_face_matrix(&space, WallIntegral::CurlTrace)));
        let n = reduction.n_reduced;
        let port_diag = constraint
            .norm
            .iter()
            .enumerate()
            .map(|(p, &nn)| diagonal(n, &[(reduction.port_base + p, nn)]))
            .collect();
        let assembly_s = t0.elapsed().as_secs_f64();
        let ordering = order_matrix(&stiffness);
        Ok(Self {
            space,
            constraint,
            reduction,
            frames: frames.to_vec(),
            stiffness,
            region_mass,
            wall,
            port_diag,
            ordering,
            assembly_s,
        })
    }

    /// Unknowns of the reduced system.
    pub fn n(&self) -> usize {
        self.reduction.n_reduced
    }

    /// Index of port p's amplitude is `port_base() + p`.
    pub fn port_base(&self) -> usize {
        self.reduction.port_base
    }

    pub fn n_ports(&self) -> usize {
        self.frames.len()
    }

    /// Where each term sits in [`Self::affine`].
    pub fn layout(&self) -> TermLayout {
        let region_mass = 1;
        let after = region_mass + self.region_mass.len();
        let wall = self.wall.as_ref().map(|_| after);
        TermLayout {
            stiffness: 0,
            region_mass,
            wall,
            ports: after + usize::from(wall.is_some()),
        }
    }

    /// The loss bookkeeping of [`super::response::LossModel`] for this operator.
    pub fn loss_model<'a>(
        &self,
        materials: &'a MaterialsAt<'a>,
        wall_conductivity: Option<f64>,
    ) -> super::response::LossModel<'a> {
        super::response::LossModel {
            layout: self.layout(),
            n_regions: self.region_mass.len(),
            materials,
            wall_conductivity,
        }
    }

    /// A(k) and F(k) in affine form, with region materials from `materials` (called
    /// with the frequency in Hz) and walls of conductivity `wall_conductivity` (S/m;
    /// used only when the operator has a wall matrix).
    pub fn affine<'a>(
        &'a self,
        materials: &'a MaterialsAt<'a>,
        wall_conductivity: Option<f64>,
    ) -> AffineSystem<'a> {
        let hz = |k: f64| k * C0 / (2.0 * std::f64::consts::PI);
        let mut terms = vec![Term {
            matrix: &self.stiffness,
            coefficient: Box::new(|_| c64::new(1.0, 0.0)),
            name: "stiffness".into(),
        }];
        for (r, m) in self.region_mass.iter().enumerate() {
            terms.push(Term {
                matrix: m,
                coefficient: Box::new(move |k| {
                    // Validated by the caller (`solve_driven`): one entry per region.
                    let mat = materials(hz(k))
                        .get(r)
                        .copied()
                        .unwrap_or(RegionMaterial::VACUUM);
                    -(k * k) * c64::new(mat.eps_real, -mat.eps_imag)
                }),
                name: format!("mass of region {r}"),
            });
        }
        if let (Some(w), Some(sigma)) = (&self.wall, wall_conductivity) {
            terms.push(Term {
                matrix: w,
                coefficient: Box::new(move |k| {
                    let omega = k * C0;
                    J * (surface_resistance(hz(k), sigma) / (omega * MU0))
                }),
                name: "walls".into(),
            });
        } else if let Some(w) = &self.wall {
            // A wall matrix without a conductivity: perfectly conducting, no loss.
            terms.push(Term {
                matrix: w,
                coefficient: Box::new(|_| c64::new(0.0, 0.0)),
                name: "walls".into(),
            });
        }
        for (p, d) in self.port_diag.iter().enumerate() {
            let frame = self.frames[p];
            terms.push(Term {
                matrix: d,
                coefficient: Box::new(move |k| J * frame.beta(k)),
                name: format!("port {p}"),
            });
        }
        let sources = (0..self.n_ports())
            .map(|p| {
                let (frame, norm) = (self.frames[p], self.constraint.norm[p]);
                Source {
                    entries: vec![(self.port_base() + p, 1.0)],
                    coefficient: Box::new(move |k| 2.0 * J * frame.beta(k) * norm),
                }
            })
            .collect();
        AffineSystem { terms, sources }
    }
}
