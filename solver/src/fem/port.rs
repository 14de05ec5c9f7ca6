//! Matched rectangular-waveguide feed ports carrying the TE10 mode.
//!
//! A port is an aperture of width a (broad side, along û) and height b (along v̂) in a
//! wall with outward normal n̂. Its transverse TE10 field is e(x) = sin(π s / a) v̂ with
//! s ∈ [0, a] the position across the broad side (Pozar, Microwave Engineering, 4th ed.,
//! §3.3). The propagation constant is β = √(k0² − (π/a)²) (−j√((π/a)² − k0²) below
//! cutoff, an evanescent, loss-free port).
//!
//! Model: the tangential field on the aperture is constrained to a multiple of the TE10
//! pattern, E_t = c·e, so higher waveguide modes are taken as negligible at the
//! aperture. The port unknowns of the aperture's edges and faces are replaced by one
//! amplitude c per port: x_port = c·t, with t the L2 projection of e onto the trace
//! space (exact integrals of the degree-max(p, 2) Lagrange interpolant of e at order p,
//! so the load is exact for any field of the order-p trace space). For an outgoing wave
//! n̂ × H = −(β/ωμ0) E_t, so the boundary term of the weak form is
//!
//!   ∮_port v·(n̂ × ∇×E) dS = jβ ∮_port v_t·E_t dS  →  jβ N c (with N = ∮|Σ t φ_t|² dS),
//!
//! a single complex diagonal entry per port. The time-average power carried away is
//! P = (β / 2ωμ0) N |c|² (propagating case).

use crate::fem::assembly::SystemMatrices;
use crate::fem::dofmap::FIXED;
use crate::fem::element::{lagrange_nodes, NedelecTet, FACES};
use crate::fem::tet_geometry::face_normal_area;
use crate::fem::topology::Topology;
use crate::fem::Space;
use crate::linalg::sparse::{spmv, SparseMatrix};
use antinode_mesh::tet_mesh::dot as dot3;
use antinode_mesh::BoundaryTag;
use faer::c64;
use faer::linalg::solvers::Solve;

/// Position and orientation of one port aperture (metres).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PortFrame {
    /// Centre of the aperture.
    pub center: [f64; 3],
    /// Unit vector along the broad side.
    pub u: [f64; 3],
    /// Unit vector along the narrow side (direction of the TE10 electric field).
    pub v: [f64; 3],
    /// Outward unit normal of the wall.
    pub n: [f64; 3],
    /// Broad side a (m).
    pub width: f64,
    /// Narrow side b (m).
    pub height: f64,
}

impl PortFrame {
    /// TE10 transverse field pattern at `x` (unit amplitude at the centre line).
    pub fn te10(&self, x: [f64; 3]) -> [f64; 3] {
        let d = [
            x[0] - self.center[0],
            x[1] - self.center[1],
            x[2] - self.center[2],
        ];
        let s = dot3(d, self.u) + 0.5 * self.width;
        let amp = (std::f64::consts::PI * s / self.width).sin();
        [amp * self.v[0], amp * self.v[1], amp * self.v[2]]
    }

    /// Cutoff wavenumber π/a of TE10 (m⁻¹).
    pub fn cutoff_k(&self) -> f64 {
        std::f64::consts::PI / self.width
    }

    /// Propagation constant β(k0) (complex: −jα below cutoff).
    pub fn beta(&self, k0: f64) -> c64 {
        let d = k0 * k0 - self.cutoff_k().powi(2);
        if d >= 0.0 {
            c64::new(d.sqrt(), 0.0)
        } else {
            c64::new(0.0, -(-d).sqrt())
        }
    }
}

/// The TE10 constraint of every port: which free unknowns lie on the aperture and the
/// coefficients t of the TE10 pattern in them.
#[derive(Clone, Debug)]
pub struct PortConstraint {
    /// Per port: (free unknown, coefficient t) pairs.
    pub entries: Vec<Vec<(u32, f64)>>,
    /// Per port: N = ∮ |Σ t φ_t|² dS (m²·(V/m)² per unit amplitude²).
    pub norm: Vec<f64>,
    /// Per port: ∮ |e|² dS of the exact pattern (for the projection-quality check).
    pub exact_norm: Vec<f64>,
}

/// Tetrahedron and local face of every boundary face with a port tag.
fn port_faces(topo: &Topology, port: usize) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    for (t, faces) in topo.tet_faces.iter().enumerate() {
        for (lf, &f) in faces.iter().enumerate() {
            if topo.face_tag[f as usize] == Some(BoundaryTag::Port(port)) {
                out.push((t, lf));
            }
        }
    }
    out
}

/// Build the TE10 constraint of each port by L2 projection on its aperture.
pub fn port_constraint(space: &Space<'_>, frames: &[PortFrame]) -> PortConstraint {
    let (topo, dofs) = (&space.topology, &space.dofs);
    let element = NedelecTet::new(dofs.order);
    let nl = element.len();
    let degree = dofs.order.as_int().max(2);
    let nodes = lagrange_nodes(degree);
    let mut entries = Vec::new();
    let mut norms = Vec::new();
    let mut exact = Vec::new();
    for (p, frame) in frames.iter().enumerate() {
        let faces = port_faces(topo, p);
        // Local numbering of the aperture unknowns.
        let mut local: Vec<u32> = faces
            .iter()
            .flat_map(|&(t, _)| dofs.of_tet(t).iter().copied())
            .filter(|&d| d != FIXED)
            .collect();
        local.sort_unstable();
        local.dedup();
        let m = local.len();
        let mut b = faer::Mat::<f64>::zeros(m, m);
        let mut rhs = faer::Mat::<f64>::zeros(m, 1);
        let mut fm = vec![0.0; nl * nl];
        let mut fc = vec![0.0; nl * nl];
        let mut fl = vec![0.0; nl];
        let mut exact_norm = 0.0;
        for &(t, lf) in &faces {
            let x = space.tet_vertices(t);
            let geo = space.tet_geometry(t);
            let (i, j, k) = FACES[lf];
            let (normal, area) = face_normal_area(&x, lf);
            element.face_matrices(&geo, lf, area, normal, &mut fm, &mut fc);
            // e at the nodes of its Lagrange interpolant of degree max(p, 2): exact
            // integrals of that interpolant make the load exact for any field of the
            // order-p trace space (polynomials of degree ≤ p on the face).
            let pts: Vec<[f64; 3]> = nodes
                .iter()
                .map(|nd| {
                    let w = nd.map(|v| f64::from(v) / f64::from(degree));
                    std::array::from_fn(|c| w[0] * x[i][c] + w[1] * x[j][c] + w[2] * x[k][c])
                })
                .collect();
            let u: Vec<[f64; 3]> = pts.iter().map(|&q| frame.te10(q)).collect();
            element.face_load_lagrange(&geo, lf, area, normal, degree, &u, &mut fl);
            // ∫|e|² by the 7-point degree-5 Radon rule (a quality figure only).
            exact_norm += area * face_quadrature_sq(frame, [x[i], x[j], x[k]]);
            let td = dofs.of_tet(t);
            for a in 0..nl {
                if td[a] == FIXED {
                    continue;
                }
                let ra = local.binary_search(&td[a]).expect("aperture unknown");
                rhs[(ra, 0)] += fl[a];
                for bb in 0..nl {
                    if td[bb] == FIXED {
                        continue;
                    }
                    let rb = local.binary_search(&td[bb]).expect("aperture unknown");
                    b[(ra, rb)] += fm[a * nl + bb];
                }
            }
        }
        // Unknowns of tetrahedra touching the aperture only through an edge or face
        // interior to the volume have zero trace; they get t = 0 and are not constrained.
        // Round-off leaves ~1e-16 relative traces on them, hence the relative threshold.
        let max_diag = (0..m).map(|r| b[(r, r)]).fold(0.0, f64::max);
        let keep: Vec<usize> = (0..m).filter(|&r| b[(r, r)] > 1e-10 * max_diag).collect();
        let bk = faer::Mat::from_fn(keep.len(), keep.len(), |r, c| b[(keep[r], keep[c])]);
        let rk = faer::Mat::from_fn(keep.len(), 1, |r, _| rhs[(keep[r], 0)]);
        let sol = match bk.llt(faer::Side::Lower) {
            Ok(llt) => llt.solve(&rk),
            Err(_) => faer::Mat::zeros(keep.len(), 1),
        };
        let bt = &bk * &sol;
        let nrm: f64 = (0..keep.len()).map(|r| sol[(r, 0)] * bt[(r, 0)]).sum();
        entries.push(
            keep.iter()
                .enumerate()
                .map(|(r, &lr)| (local[lr], sol[(r, 0)]))
                .collect(),
        );
        norms.push(nrm);
        exact.push(exact_norm);
    }
    PortConstraint {
        entries,
        norm: norms,
        exact_norm: exact,
    }
}

/// ∫_F |e|² dS / |F| on triangle `x` by the 7-point degree-5 rule (Radon 1948; as
/// tabulated by Stroud, Approximate Calculation of Multiple Integrals, 1971, T2:5-1;
/// from memory).
fn face_quadrature_sq(frame: &PortFrame, x: [[f64; 3]; 3]) -> f64 {
    let r = 15f64.sqrt();
    let (a1, b1) = ((6.0 - r) / 21.0, (9.0 + 2.0 * r) / 21.0);
    let (a2, b2) = ((6.0 + r) / 21.0, (9.0 - 2.0 * r) / 21.0);
    let (w1, w2) = ((155.0 - r) / 1200.0, (155.0 + r) / 1200.0);
    let mut pts = vec![([1.0 / 3.0; 3], 9.0 / 40.0)];
    for (a, b, w) in [(a1, b1, w1), (a2, b2, w2)] {
        pts.extend([([b, a, a], w), ([a, b, a], w), ([a, a, b], w)]);
    }
    pts.iter()
        .map(|(l, w)| {
            let q = std::array::from_fn(|c| l[0] * x[0][c] + l[1] * x[1][c] + l[2] * x[2][c]);
            let e = frame.te10(q);
            w * dot3(e, e)
        })
        .sum()
}

/// The change of unknowns x = T y that applies the port constraints: unconstrained
/// unknowns keep their values (renumbered consecutively), and the aperture unknowns of
/// port p are t_p times the amplitude y[port_base + p].
#[derive(Clone, Debug)]
pub struct Reduction {
    pub n_full: usize,
    pub n_reduced: usize,
    /// Index of the first port amplitude in the reduced unknowns.
    pub port_base: usize,
    t: SparseMatrix,
}

impl Reduction {
    /// Build T from the constraints on `n_full` free unknowns.
    pub fn new(n_full: usize, constraint: &PortConstraint) -> Self {
        let mut port_of = vec![None; n_full];
        for (p, list) in constraint.entries.iter().enumerate() {
            for &(d, coef) in list {
                port_of[d as usize] = Some((p, coef));
            }
        }
        let mut next = 0u32;
        let map: Vec<u32> = port_of
            .iter()
            .map(|p| {
                if p.is_some() {
                    FIXED
                } else {
                    next += 1;
                    next - 1
                }
            })
            .collect();
        let port_base = next as usize;
        let n_reduced = port_base + constraint.entries.len();
        let mut tri = sprs::TriMatI::<f64, u32>::new((n_full, n_reduced));
        for d in 0..n_full {
            match port_of[d] {
                None => tri.add_triplet(d, map[d] as usize, 1.0),
                Some((p, coef)) => tri.add_triplet(d, port_base + p, coef),
            }
        }
        Self {
            n_full,
            n_reduced,
            port_base,
            t: tri.to_csr(),
        }
    }

    /// Tᵀ A T.
    pub fn reduce(&self, a: &SparseMatrix) -> SparseMatrix {
        let tt: SparseMatrix = self.t.transpose_view().to_csr();
        let at: SparseMatrix = a * &self.t;
        &tt * &at
    }

    /// x = T y.
    pub fn expand(&self, y: &[f64]) -> Vec<f64> {
        let mut x = vec![0.0; self.n_full];
        spmv(&self.t, y, &mut x);
        x
    }

    /// Tᵀ K T, Tᵀ M′ T and Tᵀ M″ T.
    pub fn reduce_system(&self, m: &SystemMatrices) -> SystemMatrices {
        SystemMatrices {
            stiffness: self.reduce(&m.stiffness),
            mass_real: self.reduce(&m.mass_real),
            mass_imag: m.mass_imag.as_ref().map(|mi| self.reduce(mi)),
        }
    }
}

/// The port boundary terms jβ_p(k0) N_p of the weak form on the amplitude unknowns
/// `base + p` of the reduced system (see the module docs), at wavenumber k0.
#[derive(Clone, Debug, PartialEq)]
pub struct PortTerms {
    /// Index of the first port amplitude among the reduced unknowns.
    pub base: usize,
    /// jβ_p at the wavenumber the terms were built for.
    pub jbeta: Vec<c64>,
    /// N_p, the aperture norm of each port's TE10 trace.
    pub norm: Vec<f64>,
}

impl PortTerms {
    /// The terms of `frames` with the aperture norms of `constraint` at `k0` (m⁻¹); the
    /// amplitudes start at unknown `base` (see [`Reduction::port_base`]).
    pub fn new(frames: &[PortFrame], constraint: &PortConstraint, base: usize, k0: f64) -> Self {
        Self {
            base,
            jbeta: frames
                .iter()
                .map(|f| c64::new(0.0, 1.0) * f.beta(k0))
                .collect(),
            norm: constraint.norm.clone(),
        }
    }

    /// No ports: no terms (`base` = the order of the system).
    pub fn none(base: usize) -> Self {
        Self {
            base,
            jbeta: Vec::new(),
            norm: Vec::new(),
        }
    }

    /// Number of ports.
    pub fn len(&self) -> usize {
        self.jbeta.len()
    }

    /// Whether there are no ports.
    pub fn is_empty(&self) -> bool {
        self.jbeta.is_empty()
    }

    /// Largest |jβ_p| N_p: the ports' share of ‖K + jβP‖ in the residual normalisation.
    pub fn largest(&self) -> f64 {
        self.jbeta
            .iter()
            .zip(&self.norm)
            .map(|(b, nn)| b.norm() * nn)
            .fold(0.0, f64::max)
    }
}
