//! Metal walls of finite conductivity as a surface-impedance (Leontovich) boundary term.
//!
//! A good conductor (σ ≫ ωε0) with outward normal n̂ (pointing into the metal) relates
//! the tangential fields at its surface by E_t = Zs H × n̂, i.e. n̂ × H = −E_t / Zs, with
//! the surface impedance of the e^{jωt} convention
//!
//!   Zs = (1 + j) Rs,   Rs = √(ωμ0 / 2σ)
//!
//! (Pozar, Microwave Engineering, 4th ed., §1.7, good conductors; section from memory:
//! the surface reactance equals the resistance). The boundary term of the weak form (the one the port
//! term of [`crate::fem::port`] also comes from, with ∇×E = −jωμ0 H) becomes
//!
//!   ∮ v·(n̂ × ∇×E) dS = −jωμ0 ∮ v·(n̂ × H) dS = (jωμ0 / Zs) ∮ (n̂×E)·(n̂×v) dS,
//!
//! so the discrete problem gains c(ω) W_E with W_E,ab = ∮_walls (n̂×φa)·(n̂×φb) dS and
//!
//!   c(ω) = jωμ0 / Zs = (1 + j) ωμ0 / (2Rs)   (m⁻¹; ∝ √ω).
//!
//! The eigenproblem (K + c W_E + jβP) x = k0² M x is complex symmetric like the ported
//! one. Sign check (the first-order perturbation of a perfectly conducting mode E0, H0,
//! from the reciprocity of E and E0): δ(k0²) = jωμ0 Zs ∮|H0,t|² dS / ∫|E0|² dV
//! = (−1 + j) ωμ0 Rs ∮|H0,t|² / ∫|E0|² (derived here the way the cavity-perturbation
//! formulas of Pozar 4th ed. §6.7 are, from the fields before and after; section from
//! memory). Im δ(k0²) > 0: the mode decays (Im ω > 0 with e^{jωt}), with
//! Im δ(k0²)/k0² = Rs∮|H_t|²/(ωε0∫|E|²) = 1/Q_c, the perturbation result of
//! [`crate::post::losses`]; Re δ(k0²) = −Im δ(k0²): the frequency falls by f/(2Q_c).
//!
//! Power into the walls: with E_t of the solution, P_c = ½ Re ∮ (E × H*)·n̂ dS
//! = ½ Re(1/Zs*) ∮|E_t|² = ∮|E_t|² / (4Rs) = Im c · xᴴ W_E x / (2ωμ0), the same split of
//! Im xᴴAx as the port's (see [`crate::driven::system`] for the energy identity). For an
//! eigenvector, xᴴ(K + cW_E)x = λ xᴴ M′ x exactly, so this P_c is also the wall's share of
//! Im λ: the field formula and the complex eigenvalue give the same Q_c on the discrete
//! problem (the field formula without a subtraction of the other losses).
//!
//! ω dependence: c is evaluated at the target and refined per mode like the port's β
//! ([`crate::modes::checks`]): δλ = (c(ω) − c(ω_t)) xᵀW_E x / xᵀMx at the mode's own
//! Re ω, iterated to its fixed point. The whole wall term moves λ by O(λ/Q_c), its change
//! between target and mode by O(λ Δf/(f Q_c)); the first-order update leaves an error of
//! the square of that, far below the discretisation error, where a fixed-point iteration
//! of the nonlinear problem would need a new factorisation per mode.

use super::dofmap::{DofMap, FIXED};
use super::element::NedelecTet;
use super::port::Reduction;
use super::tet_geometry::face_normal_area;
use super::topology::Topology;
use super::{NedelecOrder, Space};
use crate::constants::{C0, MU0};
use crate::linalg::sparse::{combine, row_sum_norm, spmv, SparseMatrix};
use crate::modes::operator::ComplexParts;
use antinode_mesh::{BoundaryTag, TetMesh};
use faer::c64;

/// How the loss of metal walls of finite conductivity enters a mode solve.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum WallLosses {
    /// After the solve with perfectly conducting walls: P_c = (Rs/2)∮|H_t|² with H from
    /// the element curl ([`crate::post::losses`]). The problem stays real for an empty
    /// cavity; the wall Q converges like h² (order 2).
    Perturbation,
    /// In the solve: the surface-impedance term of this module; Q_c from E_t at the wall.
    /// The problem is complex even for an empty cavity. The default: its wall Q
    /// converges like the eigenvalue (h⁴ at order 2; Pozar Example 6.3 at 5.9 mm:
    /// −0.09 % against −3.6 % by perturbation, `tests/tests/losses_impedance.rs`), at
    /// about 2.7× the time and 1.8× the memory of the real solve of an empty cavity and
    /// ~10 % more unknowns (the wall's) where the problem is complex anyway (loads,
    /// ports; README, Wall losses).
    #[default]
    Impedance,
}

impl WallLosses {
    /// The plain name used by the front ends.
    pub fn name(self) -> &'static str {
        match self {
            WallLosses::Perturbation => "perturbation",
            WallLosses::Impedance => "impedance",
        }
    }
}

/// Surface resistance Rs = √(ωμ0/2σ) (Ω) at angular frequency `omega` (rad/s).
fn resistance(omega: f64, conductivity: f64) -> f64 {
    (omega * MU0 / (2.0 * conductivity)).sqrt()
}

/// Surface impedance Zs = (1 + j)√(ωμ0/2σ) (Ω) at `freq_hz` of a metal of conductivity σ
/// (S/m), e^{jωt} convention.
pub fn surface_impedance(freq_hz: f64, conductivity: f64) -> c64 {
    let rs = resistance(2.0 * std::f64::consts::PI * freq_hz, conductivity);
    c64::new(rs, rs)
}

/// c = jωμ0/Zs = (1 + j) ωμ0/(2Rs) (m⁻¹) at wavenumber `k0` (m⁻¹).
pub fn wall_coefficient(k0: f64, conductivity: f64) -> c64 {
    let omega = k0 * C0;
    let g = omega * MU0 / (2.0 * resistance(omega, conductivity));
    c64::new(g, g)
}

/// Which wall-face integral [`wall_face_matrix`] assembles.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WallIntegral {
    /// W_E,ab = ∮_walls (n̂×φa)·(n̂×φb) dS (the impedance term).
    Trace,
    /// W_ab = ∮_walls (n̂×∇×φa)·(n̂×∇×φb) dS (the surface-resistance term of `drive`).
    CurlTrace,
}

/// The wall-face matrix `which` on the space's free unknowns: exact face integrals
/// ([`NedelecTet::face_matrices`]) on straight tetrahedra, quadrature over the curved
/// face ([`crate::fem::curved::CurvedGeometry::face_matrices`]) on curved ones, so the
/// wall term sees the same curved wall as the volume matrices.
pub fn wall_face_matrix(space: &Space<'_>, which: WallIntegral) -> SparseMatrix {
    let element = NedelecTet::new(space.order());
    let nl = element.len();
    let topo = &space.topology;
    let (mut mass, mut curl) = (vec![0.0; nl * nl], vec![0.0; nl * nl]);
    let n = space.n_dofs();
    let mut tri = sprs::TriMatI::<f64, u32>::new((n, n));
    for t in 0..space.n_tets() {
        for lf in 0..4 {
            if topo.face_tag[topo.tet_faces[t][lf] as usize] != Some(BoundaryTag::Wall) {
                continue;
            }
            let x = space.tet_vertices(t);
            let geo = space.tet_geometry(t);
            match (&space.curved, space.curved_tet(t)) {
                (Some(g), Some(c)) => {
                    g.face_matrices(&element, &geo, &x, c, lf, &mut mass, &mut curl)
                }
                _ => {
                    let (normal, area) = face_normal_area(&x, lf);
                    element.face_matrices(&geo, lf, area, normal, &mut mass, &mut curl);
                }
            }
            let m = match which {
                WallIntegral::Trace => &mass,
                WallIntegral::CurlTrace => &curl,
            };
            let td = space.dofs.of_tet(t);
            for a in 0..nl {
                for b in 0..nl {
                    let v = m[a * nl + b];
                    if td[a] != FIXED && td[b] != FIXED && v != 0.0 {
                        tri.add_triplet(td[a] as usize, td[b] as usize, v);
                    }
                }
            }
        }
    }
    tri.to_csr()
}

impl<'m> Space<'m> {
    /// The space with the metal walls' unknowns kept (their tangential field is set by
    /// the impedance term, not eliminated) and the first `n_ports` port apertures open;
    /// faces tagged with a port beyond those stay perfectly conducting. The rim of each
    /// open aperture (edges shared by a wall face and an aperture face) stays perfectly
    /// conducting: there the TE10 field is normal to the guide's walls or zero, and a
    /// free rim would carry the aperture's projected field onto the neighbouring wall
    /// faces, where 1/Rs turns it into a large spurious loss.
    pub fn with_impedance_walls(mesh: &'m TetMesh, order: NedelecOrder, n_ports: usize) -> Self {
        let topology = Topology::new(mesh);
        let (mut on_wall, mut on_port) = (
            vec![false; topology.edges.len()],
            vec![false; topology.edges.len()],
        );
        for (fi, tag) in topology.face_tag.iter().enumerate() {
            let mark = match tag {
                Some(BoundaryTag::Wall) => &mut on_wall,
                Some(BoundaryTag::Port(p)) if *p < n_ports => &mut on_port,
                _ => continue,
            };
            let [a, b, c] = topology.faces[fi];
            for (p, q) in [(a, b), (a, c), (b, c)] {
                if let Ok(e) = topology.edges.binary_search(&[p, q]) {
                    mark[e] = true;
                }
            }
        }
        let dofs = DofMap::with_fixed_edges(
            &topology,
            mesh.nodes.len(),
            order,
            |tag| match tag {
                BoundaryTag::Wall => false,
                BoundaryTag::Port(p) => p >= n_ports,
            },
            |e| on_wall[e] && on_port[e],
        );
        Self {
            mesh,
            topology,
            dofs,
            curved: None,
        }
    }
}

/// The impedance wall term of one mode solve.
pub struct ImpedanceWalls {
    /// Wall conductivity σ (S/m).
    pub conductivity: f64,
    /// W_E on the space's free unknowns (for the per-mode refinement).
    pub full: SparseMatrix,
    /// W_E on the eigenproblem's unknowns (Tᵀ W_E T with ports).
    pub reduced: SparseMatrix,
    /// Wavenumber the term is evaluated at in the factorised matrix (m⁻¹).
    pub k_target: f64,
}

impl ImpedanceWalls {
    /// The term on `space` for walls of conductivity σ, reduced by the port constraint
    /// when there is one, evaluated at `k_target`.
    pub fn new(
        space: &Space<'_>,
        reduction: Option<&Reduction>,
        conductivity: f64,
        k_target: f64,
    ) -> Self {
        let full = wall_face_matrix(space, WallIntegral::Trace);
        let reduced = match reduction {
            Some(r) => r.reduce(&full),
            None => full.clone(),
        };
        Self {
            conductivity,
            full,
            reduced,
            k_target,
        }
    }

    /// c(k0) = jωμ0/Zs at wavenumber `k0`.
    pub fn coefficient(&self, k0: f64) -> c64 {
        wall_coefficient(k0, self.conductivity)
    }

    /// |c(k_target)| ‖W_E‖ (largest absolute row sum), for the residual's scale.
    pub fn norm_at_target(&self) -> f64 {
        self.coefficient(self.k_target).norm() * row_sum_norm(&self.reduced)
    }

    /// The shifted matrix with c(k_target) W_E added, both parts on one pattern.
    pub fn add_to(&self, parts: ComplexParts) -> ComplexParts {
        let c = self.coefficient(self.k_target);
        let w = &self.reduced;
        // Both parts keep the union pattern (the real 2n form needs it).
        ComplexParts {
            re: combine(&[(1.0, &parts.re), (c.re, w), (0.0, &parts.im)]),
            im: combine(&[(1.0, &parts.im), (c.im, w), (0.0, &parts.re)]),
        }
    }

    /// xᵀ W_E x (no conjugate) for x = xr + j xi on the free unknowns.
    pub fn bilinear(&self, xr: &[f64], xi: &[f64]) -> c64 {
        let n = xr.len();
        let mut wr = vec![0.0; n];
        spmv(&self.full, xr, &mut wr);
        let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(p, q)| p * q).sum::<f64>();
        if xi.is_empty() {
            return c64::new(dot(xr, &wr), 0.0);
        }
        let mut wi = vec![0.0; n];
        spmv(&self.full, xi, &mut wi);
        c64::new(dot(xr, &wr) - dot(xi, &wi), 2.0 * dot(xr, &wi))
    }

    /// The numerator of the first-order eigenvalue update when the term moves from the
    /// target to wavenumber `k0`: (c(k0) − c(k_target)) xᵀ W_E x.
    pub fn shift(&self, k0: f64, xwx: c64) -> c64 {
        (self.coefficient(k0) - self.coefficient(self.k_target)) * xwx
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Zs of copper (σ = 5.813e7 S/m) at 5 GHz: Rs = 1.84e-2 Ω (Pozar 4th ed. Example 6.3
    /// uses this conductivity and prints Rs = 1.84e-2 Ω; from memory). The coefficient is
    /// jωμ0/Zs, checked against its definition.
    #[test]
    fn copper_at_5_ghz() {
        let zs = surface_impedance(5e9, 5.813e7);
        assert!((zs.re - 1.84e-2).abs() < 5e-5, "Rs {}", zs.re);
        assert_eq!(zs.re, zs.im);
        let k0 = 2.0 * std::f64::consts::PI * 5e9 / C0;
        let c = wall_coefficient(k0, 5.813e7);
        let expect = c64::new(0.0, k0 * C0 * MU0) / zs;
        assert!((c - expect).norm() < 1e-12 * expect.norm());
    }
}
