//! Global numbering of Nédélec degrees of freedom and the PEC constraint.
//!
//! On a perfect electric conductor n × E = 0. A basis function has a non-zero
//! tangential trace on a boundary face only if it belongs to that face or to one of its
//! edges, so PEC is imposed exactly by dropping the unknowns of boundary edges and faces.
//! Interior functions (order 3) have no trace on any face and are never eliminated.
//! Unknowns are numbered edge by edge (kinds of one edge consecutive), then face by face,
//! then tetrahedron by tetrahedron (interior functions).

use crate::fem::element::{Entity, NedelecOrder, NedelecTet};
use crate::fem::topology::Topology;
use antinode_mesh::BoundaryTag;

/// Marker for a local function whose unknown was eliminated (PEC).
pub const FIXED: u32 = u32::MAX;

/// Degree-of-freedom map of one element order on one mesh.
#[derive(Clone, Debug)]
pub struct DofMap {
    pub order: NedelecOrder,
    /// Number of free unknowns.
    pub n_dofs: usize,
    /// Local functions per tetrahedron.
    pub n_local: usize,
    /// Global unknown of local function a of tet t at `t * n_local + a`, or [`FIXED`].
    pub tet_dofs: Vec<u32>,
    /// First unknown of each edge (its kinds follow), or [`FIXED`].
    pub edge_dof: Vec<u32>,
    /// First unknown of each face (its kinds follow), or [`FIXED`].
    pub face_dof: Vec<u32>,
    /// First interior unknown of each tetrahedron (its kinds follow), or [`FIXED`] when
    /// the order has no interior functions.
    pub interior_dof: Vec<u32>,
    /// Vertices not on the constrained boundary (their hat functions' gradients are in
    /// the discrete kernel of the curl).
    pub vertex_free: Vec<bool>,
    /// Edges lying on a boundary face that is not PEC (a port aperture).
    pub edge_open: Vec<bool>,
}

impl DofMap {
    /// Number unknowns, eliminating those on boundary faces whose tag satisfies `is_pec`.
    pub fn new(
        topo: &Topology,
        n_nodes: usize,
        order: NedelecOrder,
        is_pec: impl Fn(BoundaryTag) -> bool,
    ) -> Self {
        Self::with_fixed_edges(topo, n_nodes, order, is_pec, |_| false)
    }

    /// As [`DofMap::new`], also eliminating the unknowns of every edge `e` with
    /// `fixed_edge(e)` (n × E = 0 along it; the rim of a port aperture in walls that are
    /// not eliminated, [`crate::fem::impedance`]).
    pub fn with_fixed_edges(
        topo: &Topology,
        n_nodes: usize,
        order: NedelecOrder,
        is_pec: impl Fn(BoundaryTag) -> bool,
        fixed_edge: impl Fn(usize) -> bool,
    ) -> Self {
        let mut edge_fixed = vec![false; topo.edges.len()];
        let mut face_fixed = vec![false; topo.faces.len()];
        let mut vertex_free = vec![true; n_nodes];
        let mut edge_open = vec![false; topo.edges.len()];
        for (fi, tag) in topo.face_tag.iter().enumerate() {
            if let Some(tag) = tag {
                // Vertices on any boundary carry scalar functions whose gradients are not
                // in the constrained space (PEC walls, or the port's TE10 constraint).
                for v in topo.faces[fi] {
                    vertex_free[v as usize] = false;
                }
                if !is_pec(*tag) {
                    let [a, b, c] = topo.faces[fi];
                    for (p, q) in [(a, b), (a, c), (b, c)] {
                        if let Ok(e) = topo.edges.binary_search(&[p, q]) {
                            edge_open[e] = true;
                        }
                    }
                }
                if is_pec(*tag) {
                    face_fixed[fi] = true;
                    let [a, b, c] = topo.faces[fi];
                    for (p, q) in [(a, b), (a, c), (b, c)] {
                        if let Ok(e) = topo.edges.binary_search(&[p, q]) {
                            edge_fixed[e] = true;
                        }
                    }
                }
            }
        }
        for (e, f) in edge_fixed.iter_mut().enumerate() {
            *f = *f || fixed_edge(e);
        }
        let (pe, pf) = (order.per_edge(), order.per_face());
        let mut next = 0u32;
        let edge_dof: Vec<u32> = edge_fixed
            .iter()
            .map(|&fixed| {
                if fixed {
                    FIXED
                } else {
                    let d = next;
                    next += pe as u32;
                    d
                }
            })
            .collect();
        let face_dof: Vec<u32> = face_fixed
            .iter()
            .map(|&fixed| {
                if fixed || pf == 0 {
                    FIXED
                } else {
                    let d = next;
                    next += pf as u32;
                    d
                }
            })
            .collect();
        let pi = order.per_interior();
        let interior_dof: Vec<u32> = (0..topo.n_tets())
            .map(|_| {
                if pi == 0 {
                    FIXED
                } else {
                    let d = next;
                    next += pi as u32;
                    d
                }
            })
            .collect();
        let element = NedelecTet::new(order);
        let n_local = element.len();
        let mut tet_dofs = vec![FIXED; topo.n_tets() * n_local];
        for t in 0..topo.n_tets() {
            for a in 0..n_local {
                let d = match element.entity(a) {
                    Entity::Edge { edge, kind } => {
                        let base = edge_dof[topo.tet_edges[t][edge] as usize];
                        if base == FIXED {
                            FIXED
                        } else {
                            base + kind as u32
                        }
                    }
                    Entity::Face { face, kind } => {
                        let base = face_dof[topo.tet_faces[t][face] as usize];
                        if base == FIXED {
                            FIXED
                        } else {
                            base + kind as u32
                        }
                    }
                    Entity::Interior { kind } => interior_dof[t] + kind as u32,
                };
                tet_dofs[t * n_local + a] = d;
            }
        }
        Self {
            order,
            n_dofs: next as usize,
            n_local,
            tet_dofs,
            edge_dof,
            face_dof,
            interior_dof,
            vertex_free,
            edge_open,
        }
    }

    /// Unknowns of tetrahedron `t` (with [`FIXED`] for eliminated ones).
    pub fn of_tet(&self, t: usize) -> &[u32] {
        &self.tet_dofs[t * self.n_local..(t + 1) * self.n_local]
    }

    /// Discrete divergence residual ‖Gᵀ y‖ where y = M x and G maps the scalar
    /// functions of degree ≤ p vanishing on the PEC boundary to their gradients in the
    /// edge space: ∇φ_v = Σ_{edges (a,b) ∋ v} ±w_ab (+ when v = b); the edge bubbles
    /// λaλb, λaλb(λb − λa) and the face bubble λaλbλc have their gradients as their own
    /// unknowns (edge kinds 1, 2, face kind 2 of [`crate::fem::element::basis`]), so those
    /// rows of G are unit vectors. With the vertex hats these span P_p vanishing on the
    /// boundary. For a true resonance (λ ≠ 0) Gᵀ M x = 0 exactly; a gradient field gives
    /// O(‖y‖). Only scalar functions vanishing on the whole boundary are used, so the check
    /// also holds with port apertures (whose tangential field is constrained).
    pub fn gradient_residual(&self, topo: &Topology, y: &[f64]) -> f64 {
        let mut node_sum = vec![0.0; self.vertex_free.len()];
        let mut sum2 = 0.0;
        let p = self.order.as_int() as usize;
        for (e, &[a, b]) in topo.edges.iter().enumerate() {
            let d = self.edge_dof[e];
            if d == FIXED {
                continue;
            }
            let w = y[d as usize];
            node_sum[a as usize] -= w;
            node_sum[b as usize] += w;
            if !self.edge_open[e] {
                for kind in 1..p {
                    let g = y[d as usize + kind];
                    sum2 += g * g;
                }
            }
        }
        if self.order == NedelecOrder::Three {
            for (f, &d) in self.face_dof.iter().enumerate() {
                // A boundary face's bubble does not vanish on the boundary.
                if d != FIXED && topo.face_tag[f].is_none() {
                    let g = y[d as usize + 2];
                    sum2 += g * g;
                }
            }
        }
        for (v, s) in node_sum.iter().enumerate() {
            if self.vertex_free[v] {
                sum2 += s * s;
            }
        }
        sum2.sqrt()
    }
}
