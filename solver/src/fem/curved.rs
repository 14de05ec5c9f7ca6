//! Curved (isoparametric-type) tetrahedra along the cylinder sides the mesher hands over.
//!
//! Geometry. A tetrahedron with an edge or face on a curved surface gets the polynomial
//! map F(y) = y + Σ_a N_a(λ(y)) d_a from its straight tetrahedron T_s (vertices x_v,
//! barycentric λ) onto the curved one, with N_a the degree-q Lagrange functions on the
//! nodes α/q (|α| = q) of T_s and d_a the displacement of node a: for a node on an edge
//! or face lying on a surface, d_a = P(y_a) − y_a with P the radial projection onto the
//! cylinder at fixed height (so a rim edge's nodes land on the rim circle); d_a = 0 at the
//! vertices (already on the surface) and everywhere else. Nodes belong to global edges
//! and faces, so two tetrahedra sharing an edge or face see the same displaced nodes and
//! the map is continuous across them: the curved mesh tiles the curved domain Ω_h.
//! Tetrahedra without displaced nodes keep F = identity and the exact matrices of
//! [`crate::fem::element`].
//!
//! Fields (covariant Piola map, Monk, Finite Element Methods for Maxwell's Equations,
//! 2003, §3.9; from memory): with J = DF,
//!   φ(x) = J⁻ᵀ φ_s(y),   ∇×φ(x) = J ∇×φ_s(y) / det J,
//! where φ_s are the straight element's functions, so tangential continuity carries over
//! from the straight elements. Element matrices
//!   K_ab = ∫_{T_s} (J ∇×φ_a,s)·(J ∇×φ_b,s) / det J dy,
//!   M_ab = ∫_{T_s} (J⁻ᵀ φ_a,s)·(J⁻ᵀ φ_b,s) det J dy
//! are rational in y and are integrated with the collapsed Gauss rule of
//! [`crate::fem::quadrature`] with n = p + q + 1 points per direction: exact to degree
//! 2p + 2q − 1, which covers the straight integrands (degree 2p) and the polynomial
//! parts J and det J add (det J has degree 3(q − 1), but its variation over an element is
//! O(h), so the rule's error on the rational remainder is far below the discretisation
//! error; the order-3 pillbox rates in `tests/tests/pillbox_curved.rs` check that).
//!
//! Faces. On a curved face, n dS = det J J⁻ᵀ n_s dA_s (Nanson's formula), so the wall
//! integral ∮ |n × ∇×E|² dS of the loss perturbation is ∫_{F_s} |n × J∇×E_s/det J|²
//! |det J J⁻ᵀ n_s| dA_s, by the collapsed triangle rule with the same n.
//!
//! Geometry degree. The eigenvalue error from the boundary is, to first order
//! (Hadamard's domain variation), ∮ g δn ds with δn the normal gap between Ω_h and Ω;
//! interpolating a circle at equispaced nodes leaves δn = O(h^{q+1}) with a sign-changing
//! profile (q = 2: odd about the chord's centre, so it integrates to O(h^{q+2}) = O(h⁴)),
//! which matches order 2's O(h⁴). The degree is q = 2 for orders 1–2 and q = 3 for
//! order 3 (see [`geometry_degree`]).

use crate::error::SolverError;
use crate::fem::element::{NedelecTet, EDGES, FACES, MAX_LOCAL};
use crate::fem::quadrature::{tet_rule, triangle_rule, SimplexRule};
use crate::fem::tet_geometry::{face_normal_area, TetGeometry};
use crate::fem::topology::Topology;
use crate::fem::NedelecOrder;
use antinode_mesh::refine::CurvedSurface;
use antinode_mesh::tet_mesh::{cross, dot};
use antinode_mesh::TetMesh;
use std::collections::HashMap;

/// The true curved surfaces of a mesh and its faces on them, as the mesher hands them
/// over (`antinode_mesh::mesher::CurvedMesh`).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct CurvedBoundary {
    /// The cylinder sides (metres).
    pub surfaces: Vec<CurvedSurface>,
    /// Faces on them: ascending vertex numbers and index into `surfaces`.
    pub faces: Vec<([u32; 3], u32)>,
}

/// Geometry-map degree q for element order p: 2 for orders 1 and 2, 3 for order 3.
pub fn geometry_degree(order: NedelecOrder) -> u8 {
    match order {
        NedelecOrder::One | NedelecOrder::Two => 2,
        NedelecOrder::Three => 3,
    }
}

/// Gauss points per collapsed direction for order p and map degree q: p + q + 1.
pub fn points_per_direction(order: NedelecOrder, degree: u8) -> usize {
    order.as_int() as usize + degree as usize + 1
}

/// One curved tetrahedron: its displaced Lagrange nodes (multi-index over the local
/// vertices, |α| = q) and their displacements (m).
#[derive(Clone, Debug, PartialEq)]
pub struct CurvedTet {
    pub nodes: Vec<([u8; 4], [f64; 3])>,
}

/// The curved tetrahedra of a space and the quadrature rules for them.
#[derive(Clone, Debug)]
pub struct CurvedGeometry {
    degree: u8,
    /// Per tetrahedron: index into `tets`, or u32::MAX for a straight one.
    index: Vec<u32>,
    tets: Vec<CurvedTet>,
    rule: SimplexRule<4>,
    face_rule: SimplexRule<3>,
}

/// Whether `p` lies on the side of `s` (radius to 1e-6 relative, height in range): a
/// face handed over whose vertex was left on its chord (graded mesher, see
/// `antinode_mesh::refine::surface`) is not curved at that vertex's edges.
fn on_surface(s: &CurvedSurface, p: [f64; 3]) -> bool {
    let r = (p[0] - s.center[0]).hypot(p[1] - s.center[1]);
    let tol = 1e-6 * s.radius;
    (r - s.radius).abs() <= tol && p[2] >= s.z[0] - tol && p[2] <= s.z[1] + tol
}

/// ℓ_k(t) = Π_{i<k} (q t − i)/(i + 1) and its derivative.
fn lagrange_1d(q: f64, k: u8, t: f64) -> (f64, f64) {
    let mut v = 1.0;
    let mut d = 0.0;
    for i in 0..k {
        let f = (q * t - i as f64) / (i as f64 + 1.0);
        let df = q / (i as f64 + 1.0);
        d = d * f + v * df;
        v *= f;
    }
    (v, d)
}

/// N_α(λ) and ∂N_α/∂λm of the degree-q Lagrange function of node α.
fn lagrange(q: u8, alpha: [u8; 4], l: [f64; 4]) -> (f64, [f64; 4]) {
    let q = q as f64;
    let f: [(f64, f64); 4] = std::array::from_fn(|m| lagrange_1d(q, alpha[m], l[m]));
    let n = f.iter().map(|x| x.0).product();
    let dn = std::array::from_fn(|m| {
        (0..4)
            .map(|k| if k == m { f[k].1 } else { f[k].0 })
            .product()
    });
    (n, dn)
}

/// 3 × 3 determinant and inverse (row-major).
fn det_inv(j: [[f64; 3]; 3]) -> (f64, [[f64; 3]; 3]) {
    let c0 = cross(j[1], j[2]);
    let c1 = cross(j[2], j[0]);
    let c2 = cross(j[0], j[1]);
    let det = dot(j[0], c0);
    // inverse = [c0 c1 c2] (columns) / det
    let mut inv = [[0.0; 3]; 3];
    for r in 0..3 {
        inv[r] = [c0[r] / det, c1[r] / det, c2[r] / det];
    }
    (det, inv)
}

fn mat_vec(a: &[[f64; 3]; 3], x: [f64; 3]) -> [f64; 3] {
    [dot(a[0], x), dot(a[1], x), dot(a[2], x)]
}

fn mat_t_vec(a: &[[f64; 3]; 3], x: [f64; 3]) -> [f64; 3] {
    std::array::from_fn(|c| a[0][c] * x[0] + a[1][c] * x[1] + a[2][c] * x[2])
}

impl CurvedTet {
    /// J = DF = I + Σ_a d_a ⊗ ∇N_a at barycentric `l` (rows: components of x).
    pub fn jacobian(&self, degree: u8, geo: &TetGeometry, l: [f64; 4]) -> [[f64; 3]; 3] {
        let mut j = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
        for &(alpha, d) in &self.nodes {
            let (_, dn) = lagrange(degree, alpha, l);
            let mut g = [0.0; 3];
            for m in 0..4 {
                for c in 0..3 {
                    g[c] += dn[m] * geo.grad[m][c];
                }
            }
            for r in 0..3 {
                for c in 0..3 {
                    j[r][c] += d[r] * g[c];
                }
            }
        }
        j
    }

    /// F(y) at barycentric `l` of the straight tetrahedron with vertices `x`.
    pub fn position(&self, degree: u8, x: &[[f64; 3]; 4], l: [f64; 4]) -> [f64; 3] {
        let mut p: [f64; 3] = std::array::from_fn(|c| (0..4).map(|v| l[v] * x[v][c]).sum());
        for &(alpha, d) in &self.nodes {
            let (n, _) = lagrange(degree, alpha, l);
            for c in 0..3 {
                p[c] += n * d[c];
            }
        }
        p
    }
}

impl CurvedGeometry {
    /// The curved tetrahedra of `mesh` (vertices in `topology`'s ascending order) for
    /// element `order`: edges of the handed-over faces whose two vertices lie on the
    /// face's surface are curved, and so are (for q ≥ 3) the faces themselves. Fails when
    /// the map of some tetrahedron is not invertible at a quadrature point (a node moved
    /// across the opposite side: the mesh is too coarse for the surface's curvature).
    pub fn new(
        mesh: &TetMesh,
        topology: &Topology,
        order: NedelecOrder,
        boundary: &CurvedBoundary,
    ) -> Result<Self, SolverError> {
        let degree = geometry_degree(order);
        let n = points_per_direction(order, degree);
        let mut edges: HashMap<(u32, u32), u32> = HashMap::new();
        let mut faces: HashMap<[u32; 3], u32> = HashMap::new();
        for &(key, s) in &boundary.faces {
            let surface = boundary.surfaces.get(s as usize).ok_or(
                SolverError::CurvedSurfaceMissing {
                    surface: s as usize,
                    surfaces: boundary.surfaces.len(),
                },
            )?;
            let on: [bool; 3] = key.map(|v| on_surface(surface, mesh.nodes[v as usize]));
            if on.iter().all(|&b| b) {
                let mut k = key;
                k.sort_unstable();
                faces.insert(k, s);
            }
            for (a, b) in [(0, 1), (0, 2), (1, 2)] {
                if on[a] && on[b] {
                    let (u, v) = (key[a].min(key[b]), key[a].max(key[b]));
                    edges.insert((u, v), s);
                }
            }
        }
        let mut index = vec![u32::MAX; topology.n_tets()];
        let mut tets = Vec::new();
        if !edges.is_empty() {
            let q = degree;
            for (t, verts) in topology.tets.iter().enumerate() {
                let x = verts.map(|v| mesh.nodes[v as usize]);
                let mut nodes = Vec::new();
                let mut push = |alpha: [u8; 4], s: u32| {
                    let y: [f64; 3] = std::array::from_fn(|c| {
                        (0..4).map(|v| alpha[v] as f64 * x[v][c]).sum::<f64>() / q as f64
                    });
                    let p = boundary.surfaces[s as usize].project(y);
                    nodes.push((alpha, std::array::from_fn(|c| p[c] - y[c])));
                };
                for &(i, j) in &EDGES {
                    if let Some(&s) = edges.get(&(verts[i], verts[j])) {
                        for k in 1..q {
                            let mut alpha = [0u8; 4];
                            alpha[i] = k;
                            alpha[j] = q - k;
                            push(alpha, s);
                        }
                    }
                }
                for &(i, j, k) in &FACES {
                    if let Some(&s) = faces.get(&[verts[i], verts[j], verts[k]]) {
                        for a in 1..q {
                            for b in 1..q - a {
                                let mut alpha = [0u8; 4];
                                alpha[i] = a;
                                alpha[j] = b;
                                alpha[k] = q - a - b;
                                push(alpha, s);
                            }
                        }
                    }
                }
                if !nodes.is_empty() {
                    index[t] = tets.len() as u32;
                    tets.push(CurvedTet { nodes });
                }
            }
        }
        let out = Self {
            degree,
            index,
            tets,
            rule: tet_rule(n),
            face_rule: triangle_rule(n),
        };
        out.check_invertible(mesh, topology)?;
        Ok(out)
    }

    fn check_invertible(&self, mesh: &TetMesh, topology: &Topology) -> Result<(), SolverError> {
        for (t, &i) in self.index.iter().enumerate() {
            if i == u32::MAX {
                continue;
            }
            let geo = TetGeometry::new(topology.tets[t].map(|v| mesh.nodes[v as usize]));
            let c = &self.tets[i as usize];
            let min = self
                .rule
                .points
                .iter()
                .map(|&l| det_inv(c.jacobian(self.degree, &geo, l)).0)
                .fold(f64::INFINITY, f64::min);
            if min <= 0.0 {
                return Err(SolverError::CurvedElementInverted {
                    tet: t,
                    min_det: min,
                });
            }
        }
        Ok(())
    }

    /// Map degree q.
    pub fn degree(&self) -> u8 {
        self.degree
    }

    /// Number of curved tetrahedra.
    pub fn n_curved(&self) -> usize {
        self.tets.len()
    }

    /// The curved data of tetrahedron `t`, None when it is straight.
    pub fn tet(&self, t: usize) -> Option<&CurvedTet> {
        match self.index.get(t) {
            Some(&i) if i != u32::MAX => Some(&self.tets[i as usize]),
            _ => None,
        }
    }

    /// Volume of curved tetrahedron `c` on straight geometry `geo`: |T_s| Σ w det J.
    pub fn volume(&self, c: &CurvedTet, geo: &TetGeometry) -> f64 {
        self.rule
            .points
            .iter()
            .zip(&self.rule.weights)
            .map(|(&l, &w)| w * det_inv(c.jacobian(self.degree, geo, l)).0)
            .sum::<f64>()
            * geo.volume
    }

    /// Element matrices (∫ ∇×φa·∇×φb, ∫ φa·φb) of curved tetrahedron `c` over straight
    /// geometry `geo`, row-major n × n as [`NedelecTet::matrices`].
    pub fn matrices(
        &self,
        element: &NedelecTet,
        geo: &TetGeometry,
        c: &CurvedTet,
        curl_out: &mut [f64],
        mass_out: &mut [f64],
    ) {
        let n = element.len();
        curl_out[..n * n].fill(0.0);
        mass_out[..n * n].fill(0.0);
        let mut v = [[0.0; 3]; MAX_LOCAL];
        let mut w = [[0.0; 3]; MAX_LOCAL];
        for (&l, &wq) in self.rule.points.iter().zip(&self.rule.weights) {
            let j = c.jacobian(self.degree, geo, l);
            let (det, inv) = det_inv(j);
            element.eval(geo, l, &mut v);
            element.eval_curl(geo, l, &mut w);
            for a in 0..n {
                // J⁻ᵀ φ: (J⁻ᵀ)_{rc} = inv[c][r]
                v[a] = mat_t_vec(&inv, v[a]);
                w[a] = mat_vec(&j, w[a]);
            }
            let wm = wq * geo.volume * det;
            let wk = wq * geo.volume / det;
            for a in 0..n {
                for b in a..n {
                    mass_out[a * n + b] += wm * dot(v[a], v[b]);
                    curl_out[a * n + b] += wk * dot(w[a], w[b]);
                }
            }
        }
        for a in 0..n {
            for b in 0..a {
                mass_out[a * n + b] = mass_out[b * n + a];
                curl_out[a * n + b] = curl_out[b * n + a];
            }
        }
    }

    /// ∫_F (n×∇×φa)·(n×∇×φb) dS on local face `face` of curved tetrahedron `c`
    /// (straight vertices `x`), row-major n × n; the curved counterpart of the curl
    /// matrix of [`NedelecTet::face_matrices`].
    pub fn face_curl_matrix(
        &self,
        element: &NedelecTet,
        geo: &TetGeometry,
        x: &[[f64; 3]; 4],
        c: &CurvedTet,
        face: usize,
        out: &mut [f64],
    ) {
        let n = element.len();
        out[..n * n].fill(0.0);
        let (ns, area) = face_normal_area(x, face);
        let (i, j, k) = FACES[face];
        let mut w = [[0.0; 3]; MAX_LOCAL];
        for (b, &wq) in self.face_rule.points.iter().zip(&self.face_rule.weights) {
            let mut l = [0.0; 4];
            l[i] = b[0];
            l[j] = b[1];
            l[k] = b[2];
            let jac = c.jacobian(self.degree, geo, l);
            let (det, inv) = det_inv(jac);
            // Nanson: n dS = det J J⁻ᵀ n_s dA_s.
            let big_n = mat_t_vec(&inv, ns).map(|v| v * det);
            let ds = dot(big_n, big_n).sqrt();
            let nn = big_n.map(|v| v / ds);
            element.eval_curl(geo, l, &mut w);
            for wa in w.iter_mut().take(n) {
                let cv = mat_vec(&jac, *wa).map(|v| v / det);
                *wa = cross(nn, cv);
            }
            let wt = wq * area * ds;
            for a in 0..n {
                for bb in a..n {
                    out[a * n + bb] += wt * dot(w[a], w[bb]);
                }
            }
        }
        for a in 0..n {
            for bb in 0..a {
                out[a * n + bb] = out[bb * n + a];
            }
        }
    }
}
