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
//! integral ∮ |n × ∇×E|² dS of the loss perturbation (and of `drive`'s wall term) is
//! ∫_{F_s} |n × J∇×E_s/det J|² |det J J⁻ᵀ n_s| dA_s, and the impedance walls' trace
//! ∮ |n × E|² dS is ∫_{F_s} |n × J⁻ᵀE_s|² |det J J⁻ᵀ n_s| dA_s, both by the collapsed
//! triangle rule with the same n ([`CurvedGeometry::face_matrices`]). The straight face
//! in their place leaves an O(h²) metric error in the wall integrals (the TM010 wall Q
//! by impedance walls moved from +0.12 % to −9.5e-6 against the closed form at 15 mm,
//! `tests/tests/pillbox_curved.rs`).
//!
//! Geometry degree. The eigenvalue error from the boundary is, to first order
//! (Hadamard's domain variation), ∮ g δn ds with δn the normal gap between Ω_h and Ω.
//! Interpolating the surface at equispaced nodes leaves δn = O(h^{q+1}); for q = 2 its
//! profile is odd about each chord's centre and integrates to O(h⁴), matching order 2's
//! O(h⁴), but for q = 3 it does not cancel and the eigenvalues stall at O(h⁴) (measured:
//! TM010 at order 3 went 1.1e-4 → 3.3e-5 from h = 23 to 17 mm). So the edge curves
//! interpolate at Gauss–Lobatto points and a curved face's centre node is set for zero
//! mean gap (function `tet_nodes`); with that the mapped pillbox volume converges like h⁶ and the
//! order-3 eigenvalues at rate ≈ 6. Equispaced interior nodes left at zero displacement
//! (no blending) were worse still: q = 4 that way gave TM010 errors of 3e-4 at
//! h = 17 mm. The degree is q = 2 for orders 1–2 and q = 3 for order 3
//! ([`geometry_degree`]).

// Index loops over 3- and 4-vectors read closer to the formulas here.
#![allow(clippy::needless_range_loop)]

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

impl CurvedBoundary {
    /// The surfaces and faces a curved mesh from the built-in mesher carries.
    pub fn from_mesh(cm: &antinode_mesh::mesher::CurvedMesh) -> Self {
        Self {
            surfaces: cm.surfaces.clone(),
            faces: cm.surface_faces.clone(),
        }
    }
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

/// Interior Gauss–Lobatto points on [0, 1] for q + 1 points (A&S 25.4.32; on [−1, 1]:
/// 0 for three points, ±1/√5 for four).
fn lobatto_interior(q: u8) -> Vec<f64> {
    match q {
        2 => vec![0.5],
        3 => {
            let h = 0.5 / 5f64.sqrt();
            vec![0.5 - h, 0.5 + h]
        }
        _ => unreachable!("degree checked by the caller"),
    }
}

/// L_m(t) of the 1-D Lagrange basis on the equispaced nodes 0, 1/q, …, 1.
fn lagrange_equispaced(q: u8, m: u8, t: f64) -> f64 {
    let qf = q as f64;
    (0..=q)
        .filter(|&n| n != m)
        .map(|n| (t - n as f64 / qf) / ((m as f64 - n as f64) / qf))
        .product()
}

/// Solves the small dense system a x = b (Gaussian elimination with partial pivoting;
/// at most 2 × 2 here, well conditioned: Lagrange values at Lobatto points).
fn solve_small(mut a: Vec<Vec<f64>>, mut b: Vec<[f64; 3]>) -> Vec<[f64; 3]> {
    let n = b.len();
    for c in 0..n {
        let p = (c..n)
            .max_by(|&i, &j| a[i][c].abs().total_cmp(&a[j][c].abs()))
            .unwrap_or(c);
        a.swap(c, p);
        b.swap(c, p);
        for r in c + 1..n {
            let f = a[r][c] / a[c][c];
            for k in c..n {
                a[r][k] -= f * a[c][k];
            }
            let bc = b[c];
            for k in 0..3 {
                b[r][k] -= f * bc[k];
            }
        }
    }
    let mut x = vec![[0.0; 3]; n];
    for r in (0..n).rev() {
        let mut v = b[r];
        for k in r + 1..n {
            for c in 0..3 {
                v[c] -= a[r][k] * x[k][c];
            }
        }
        x[r] = v.map(|e| e / a[r][r]);
    }
    x
}

/// The displaced nodes of one tetrahedron (straight vertices `x`, global vertex numbers
/// `verts` ascending) for map degree q.
///
/// * Curved edge (i, j), parameter t = λj: the displacement δ(t) is the degree-q
///   polynomial, zero at the ends, equal to P(y) − y at the interior Gauss–Lobatto
///   points of the edge; its values at the equispaced nodes t = m/q are the nodes'
///   displacements. (Lobatto points: the gap to the true curve is then orthogonal to the
///   polynomials of degree q − 2 on the edge, so its first-order effect on an eigenvalue,
///   ∮ g δn ds, is O(h^{2q}) rather than the O(h^{q+1}) of equispaced interpolation at
///   odd q.)
/// * Other face and interior nodes take the edge blend
///   D(λ) = Σ_e λiλj ψ_e((1 + λj − λi)/2), ψ_e(t) = δ_e(t)/(t(1 − t))
///   (the polynomial edge blending of Szabó & Babuška, Finite Element Analysis, 1991,
///   from memory), which is δ_e on edge e, vanishes on every face without a curved edge
///   and depends on a face only through its own edges, so shared faces agree.
/// * The centre node of a curved face (q = 3) is D plus a radial offset s n̂ that makes
///   the mean normal gap between the mapped face and the surface zero:
///   s = ∫_F (P(y) − y − D(y))·n̂ dA / ∫_F 27λiλjλk dA.
fn tet_nodes(
    x: &[[f64; 3]; 4],
    verts: &[u32; 4],
    edges: &HashMap<(u32, u32), u32>,
    faces: &HashMap<[u32; 3], u32>,
    surfaces: &[CurvedSurface],
    q: u8,
) -> Vec<([u8; 4], [f64; 3])> {
    let point = |l: [f64; 4]| -> [f64; 3] {
        std::array::from_fn(|c| (0..4).map(|v| l[v] * x[v][c]).sum::<f64>())
    };
    let true_disp = |s: u32, y: [f64; 3]| -> [f64; 3] {
        let p = surfaces[s as usize].project(y);
        std::array::from_fn(|c| p[c] - y[c])
    };
    let tau = lobatto_interior(q);
    // Per curved local edge: (i, j, displacements at t = m/q for m = 1..q−1).
    let mut curved_edges: Vec<(usize, usize, Vec<[f64; 3]>)> = Vec::new();
    for &(i, j) in &EDGES {
        if let Some(&s) = edges.get(&(verts[i], verts[j])) {
            let a: Vec<Vec<f64>> = tau
                .iter()
                .map(|&t| (1..q).map(|m| lagrange_equispaced(q, m, t)).collect())
                .collect();
            let b: Vec<[f64; 3]> = tau
                .iter()
                .map(|&t| {
                    let mut l = [0.0; 4];
                    l[i] = 1.0 - t;
                    l[j] = t;
                    true_disp(s, point(l))
                })
                .collect();
            curved_edges.push((i, j, solve_small(a, b)));
        }
    }
    if curved_edges.is_empty() {
        return Vec::new();
    }
    let delta = |e: &Vec<[f64; 3]>, t: f64| -> [f64; 3] {
        let mut d = [0.0; 3];
        for (m, dm) in e.iter().enumerate() {
            let lm = lagrange_equispaced(q, m as u8 + 1, t);
            for c in 0..3 {
                d[c] += lm * dm[c];
            }
        }
        d
    };
    let blend = |l: [f64; 4]| -> [f64; 3] {
        let mut d = [0.0; 3];
        for (i, j, e) in &curved_edges {
            let w = l[*i] * l[*j];
            if w == 0.0 {
                continue;
            }
            let t = 0.5 * (1.0 + l[*j] - l[*i]);
            let de = delta(e, t);
            let f = w / (t * (1.0 - t));
            for c in 0..3 {
                d[c] += f * de[c];
            }
        }
        d
    };
    let mut nodes = Vec::new();
    let qf = q as f64;
    for a0 in 0..=q {
        for a1 in 0..=q - a0 {
            for a2 in 0..=q - a0 - a1 {
                let alpha = [a0, a1, a2, q - a0 - a1 - a2];
                let support: Vec<usize> = (0..4).filter(|&v| alpha[v] > 0).collect();
                let l = alpha.map(|v| v as f64 / qf);
                let d = match support.len() {
                    1 => continue,
                    2 => {
                        let (i, j) = (support[0], support[1]);
                        match curved_edges.iter().find(|e| e.0 == i && e.1 == j) {
                            Some(e) => delta(&e.2, l[j]),
                            None => continue,
                        }
                    }
                    3 => {
                        let key = [verts[support[0]], verts[support[1]], verts[support[2]]];
                        match faces.get(&key) {
                            Some(&s) => {
                                let f = [support[0], support[1], support[2]];
                                face_centre(&point, &blend, &true_disp, surfaces, s, f, l)
                            }
                            None => blend(l),
                        }
                    }
                    _ => blend(l),
                };
                if d.iter().any(|&v| v != 0.0) {
                    nodes.push((alpha, d));
                }
            }
        }
    }
    nodes
}

/// Displacement of the centre node (barycentric `l`) of curved face `f` on surface `s`:
/// the edge blend plus the radial offset of zero mean normal gap (see [`tet_nodes`]).
fn face_centre(
    point: &dyn Fn([f64; 4]) -> [f64; 3],
    blend: &dyn Fn([f64; 4]) -> [f64; 3],
    true_disp: &dyn Fn(u32, [f64; 3]) -> [f64; 3],
    surfaces: &[CurvedSurface],
    s: u32,
    f: [usize; 3],
    l: [f64; 4],
) -> [f64; 3] {
    let base = blend(l);
    let yc = point(l);
    let sf = &surfaces[s as usize];
    let (dx, dy) = (yc[0] - sf.center[0], yc[1] - sf.center[1]);
    let r = dx.hypot(dy);
    let n = [dx / r, dy / r, 0.0];
    // Mean gap over the face by the collapsed rule (6 × 6 points: exact to degree 10 for
    // the polynomial part; the rest is smooth); the bubble's mean is 27/60.
    let rule = triangle_rule(6);
    let mut gap = 0.0;
    for (b, &w) in rule.points.iter().zip(&rule.weights) {
        let mut lq = [0.0; 4];
        lq[f[0]] = b[0];
        lq[f[1]] = b[1];
        lq[f[2]] = b[2];
        let dt = true_disp(s, point(lq));
        let db = blend(lq);
        gap += w * ((dt[0] - db[0]) * n[0] + (dt[1] - db[1]) * n[1]);
    }
    let off = gap / (27.0 / 60.0);
    [base[0] + off * n[0], base[1] + off * n[1], base[2]]
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
        Self::with_degree(mesh, topology, order, boundary, geometry_degree(order))
    }

    /// [`CurvedGeometry::new`] with map degree `degree` (≥ 2) instead of the default.
    pub fn with_degree(
        mesh: &TetMesh,
        topology: &Topology,
        order: NedelecOrder,
        boundary: &CurvedBoundary,
        degree: u8,
    ) -> Result<Self, SolverError> {
        assert!(
            (2..=3).contains(&degree),
            "curved maps of degree 2 and 3 are implemented"
        );
        let n = points_per_direction(order, degree);
        let mut edges: HashMap<(u32, u32), u32> = HashMap::new();
        let mut faces: HashMap<[u32; 3], u32> = HashMap::new();
        for &(key, s) in &boundary.faces {
            let surface =
                boundary
                    .surfaces
                    .get(s as usize)
                    .ok_or(SolverError::CurvedSurfaceMissing {
                        surface: s as usize,
                        surfaces: boundary.surfaces.len(),
                    })?;
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
                let nodes = tet_nodes(&x, verts, &edges, &faces, &boundary.surfaces, q);
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

    /// The wall-face matrices of local face `face` of curved tetrahedron `c` (straight
    /// vertices `x`), row-major n × n: `trace_out` = ∫_F (n×φa)·(n×φb) dS and
    /// `curl_out` = ∫_F (n×∇×φa)·(n×∇×φb) dS over the curved face, with the mapped
    /// functions φ = J⁻ᵀφ_s, ∇×φ = J∇×φ_s/det J and n dS = det J J⁻ᵀ n_s dA_s (Nanson);
    /// the curved counterparts of [`NedelecTet::face_matrices`].
    #[allow(clippy::too_many_arguments)]
    pub fn face_matrices(
        &self,
        element: &NedelecTet,
        geo: &TetGeometry,
        x: &[[f64; 3]; 4],
        c: &CurvedTet,
        face: usize,
        trace_out: &mut [f64],
        curl_out: &mut [f64],
    ) {
        let n = element.len();
        trace_out[..n * n].fill(0.0);
        curl_out[..n * n].fill(0.0);
        let (ns, area) = face_normal_area(x, face);
        let (i, j, k) = FACES[face];
        let mut v = [[0.0; 3]; MAX_LOCAL];
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
            element.eval(geo, l, &mut v);
            element.eval_curl(geo, l, &mut w);
            for a in 0..n {
                v[a] = cross(nn, mat_t_vec(&inv, v[a]));
                let cv = mat_vec(&jac, w[a]).map(|e| e / det);
                w[a] = cross(nn, cv);
            }
            let wt = wq * area * ds;
            for a in 0..n {
                for bb in a..n {
                    trace_out[a * n + bb] += wt * dot(v[a], v[bb]);
                    curl_out[a * n + bb] += wt * dot(w[a], w[bb]);
                }
            }
        }
        for a in 0..n {
            for bb in 0..a {
                trace_out[a * n + bb] = trace_out[bb * n + a];
                curl_out[a * n + bb] = curl_out[bb * n + a];
            }
        }
    }

    /// The mapped functions and curls of curved tetrahedron `c` at barycentric `l` of
    /// its straight tetrahedron: on entry `phi` and `curl` hold the straight values
    /// φ_s, ∇×φ_s (n of them), on return φ = J⁻ᵀφ_s and ∇×φ = J∇×φ_s/det J at the
    /// point F(l) of the curved tetrahedron (the covariant Piola map of the module docs).
    pub fn map_values(
        &self,
        geo: &TetGeometry,
        c: &CurvedTet,
        l: [f64; 4],
        phi: &mut [[f64; 3]],
        curl: &mut [[f64; 3]],
    ) {
        let jac = c.jacobian(self.degree, geo, l);
        let (det, inv) = det_inv(jac);
        for p in phi.iter_mut() {
            *p = mat_t_vec(&inv, *p);
        }
        for w in curl.iter_mut() {
            *w = mat_vec(&jac, *w).map(|e| e / det);
        }
    }
}
