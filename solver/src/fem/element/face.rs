//! Face integrals of the element functions (port apertures, wall losses) and volume
//! loads, all exact: on face (i, j, k) the opposite vertex's coordinate vanishes and the
//! others are the face's barycentric coordinates, so
//! ∫_F λ^α dS = |F| α_i! α_j! α_k! 2! / (α_i + α_j + α_k + 2)! (see
//! [`crate::fem::barycentric`]).

use super::terms::unit;
use super::{NedelecTet, FACES};
use crate::fem::barycentric::{self, Exponents};
use crate::fem::tet_geometry::TetGeometry;
use antinode_mesh::tet_mesh::{cross as cross3, dot as dot3};

impl NedelecTet {
    /// Face matrices on local face `face` (area `area` m², unit normal `normal`):
    /// `mass[a*n+b]` = ∫_F (n×φa)·(n×φb) dS (tangential traces) and
    /// `curl[a*n+b]` = ∫_F (n×curl φa)·(n×curl φb) dS. Exact (barycentric monomials with
    /// the opposite vertex's coordinate zero on the face).
    pub fn face_matrices(
        &self,
        geo: &TetGeometry,
        face: usize,
        area: f64,
        normal: [f64; 3],
        mass: &mut [f64],
        curl: &mut [f64],
    ) {
        let n = self.len();
        let (i, j, k) = FACES[face];
        let tang = |v: [f64; 3]| cross3(normal, v);
        let gt: Vec<[f64; 3]> = geo.grad.iter().map(|&g| tang(g)).collect();
        let xt: Vec<[f64; 3]> = geo.cross.iter().map(|&c| tang(c)).collect();
        let face_int = |alpha: Exponents| -> f64 {
            let o = 6 - i - j - k; // the vertex opposite the face
            if alpha[o] > 0 {
                0.0
            } else {
                area * barycentric::tri_monomial_integral([alpha[i], alpha[j], alpha[k]])
            }
        };
        for a in 0..n {
            for b in a..n {
                let mut m = 0.0;
                for s in &self.functions[a].value {
                    for t in &self.functions[b].value {
                        m += s.c
                            * t.c
                            * dot3(gt[s.m], gt[t.m])
                            * face_int(barycentric::add(s.alpha, t.alpha));
                    }
                }
                let mut c = 0.0;
                for s in &self.functions[a].curl {
                    for t in &self.functions[b].curl {
                        c += s.c
                            * t.c
                            * dot3(xt[s.pair], xt[t.pair])
                            * face_int(barycentric::add(s.beta, t.beta));
                    }
                }
                mass[a * n + b] = m;
                mass[b * n + a] = m;
                curl[a * n + b] = c;
                curl[b * n + a] = c;
            }
        }
    }

    /// ∫_F (n×φa)·(n×u) dS on local face `face` for a field u given by its Lagrange
    /// interpolant of degree `degree` on the face: `u[n]` is the value at node
    /// [`lagrange_nodes`]`(degree)[n]` (barycentric multi-index over the face's vertices
    /// i, j, k of [`FACES`], divided by the degree). Exact for that interpolant, so a
    /// field in the element's trace space of order ≤ `degree` is loaded exactly.
    #[allow(clippy::too_many_arguments)]
    pub fn face_load_lagrange(
        &self,
        geo: &TetGeometry,
        face: usize,
        area: f64,
        normal: [f64; 3],
        degree: u8,
        u: &[[f64; 3]],
        out: &mut [f64],
    ) {
        let (i, j, k) = FACES[face];
        let o = 6 - i - j - k;
        let tang = |v: [f64; 3]| cross3(normal, v);
        let face_int = |alpha: Exponents| -> f64 {
            if alpha[o] > 0 {
                0.0
            } else {
                area * barycentric::tri_monomial_integral([alpha[i], alpha[j], alpha[k]])
            }
        };
        let nodes = lagrange_nodes(degree);
        assert_eq!(u.len(), nodes.len(), "one value per Lagrange node");
        // Shape functions as monomial sums in the tetrahedron's coordinates.
        let shapes: Vec<Vec<(f64, Exponents)>> = nodes
            .iter()
            .map(|&nd| {
                lagrange_shape(nd, degree)
                    .into_iter()
                    .map(|(c, e)| {
                        let mut a = [0u8; 4];
                        a[i] = e[0];
                        a[j] = e[1];
                        a[k] = e[2];
                        (c, a)
                    })
                    .collect()
            })
            .collect();
        for (a, f) in self.functions.iter().enumerate() {
            let mut s = 0.0;
            for t in &f.value {
                let g = tang(geo.grad[t.m]);
                for (un, shape) in u.iter().zip(&shapes) {
                    let d = dot3(g, tang(*un));
                    if d == 0.0 {
                        continue;
                    }
                    for &(c, mono) in shape {
                        s += t.c * d * c * face_int(barycentric::add(t.alpha, mono));
                    }
                }
            }
            out[a] = s;
        }
    }

    /// ∫_T φa · u dV for a field linear in the barycentric coordinates,
    /// u = Σ_i λi u_i (values `u` at the four vertices).
    pub fn load_linear(&self, geo: &TetGeometry, u: [[f64; 3]; 4], out: &mut [f64]) {
        for (a, f) in self.functions.iter().enumerate() {
            let mut s = 0.0;
            for t in &f.value {
                for (i, ui) in u.iter().enumerate() {
                    let g = geo.grad[t.m];
                    let dot = g[0] * ui[0] + g[1] * ui[1] + g[2] * ui[2];
                    s += t.c
                        * dot
                        * barycentric::tet_monomial_integral(barycentric::add(t.alpha, unit(i)));
                }
            }
            out[a] = s * geo.volume;
        }
    }
}

/// Nodes of the degree-`degree` Lagrange interpolant on a triangle as barycentric
/// multi-indices (a, b, c), a + b + c = degree; node position (a, b, c)/degree.
pub fn lagrange_nodes(degree: u8) -> Vec<[u8; 3]> {
    let mut out = Vec::new();
    for a in (0..=degree).rev() {
        for b in (0..=degree - a).rev() {
            out.push([a, b, degree - a - b]);
        }
    }
    out
}

/// The Lagrange shape function of `node` on the degree-`degree` triangle as a sum of
/// monomials c·λ^e in the three barycentric coordinates:
/// N = Π_v Π_{m<node_v} (degree·λv − m)/(m + 1), which is 1 at its node and 0 at the
/// others (Zienkiewicz & Taylor, The Finite Element Method, vol. 1, triangle family in
/// area coordinates; from memory).
fn lagrange_shape(node: [u8; 3], degree: u8) -> Vec<(f64, [u8; 3])> {
    let d = f64::from(degree);
    // Univariate factor of each coordinate: coefficients of λ^0..λ^{node_v}.
    let factor = |n: u8| -> Vec<f64> {
        let mut p = vec![1.0];
        for m in 0..n {
            let (m, den) = (f64::from(m), f64::from(m) + 1.0);
            let mut q = vec![0.0; p.len() + 1];
            for (e, &c) in p.iter().enumerate() {
                q[e + 1] += c * d / den;
                q[e] -= c * m / den;
            }
            p = q;
        }
        p
    };
    let (f0, f1, f2) = (factor(node[0]), factor(node[1]), factor(node[2]));
    let mut out = Vec::new();
    for (a, &c0) in f0.iter().enumerate() {
        for (b, &c1) in f1.iter().enumerate() {
            for (c, &c2) in f2.iter().enumerate() {
                let coef = c0 * c1 * c2;
                if coef != 0.0 {
                    out.push((coef, [a as u8, b as u8, c as u8]));
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lagrange_shapes_are_nodal_and_sum_to_one() {
        for degree in 1..=4u8 {
            let nodes = lagrange_nodes(degree);
            // (d + 1)(d + 2)/2 nodes on the triangle.
            assert_eq!(nodes.len(), usize::from((degree + 1) * (degree + 2) / 2));
            for (n, &nd) in nodes.iter().enumerate() {
                let shape = lagrange_shape(nd, degree);
                for (m, &pt) in nodes.iter().enumerate() {
                    let l = pt.map(|v| f64::from(v) / f64::from(degree));
                    let v: f64 = shape
                        .iter()
                        .map(|(c, e)| c * (0..3).map(|q| l[q].powi(e[q].into())).product::<f64>())
                        .sum();
                    let want = if n == m { 1.0 } else { 0.0 };
                    assert!(
                        (v - want).abs() < 1e-12,
                        "degree {degree} node {n} at {m}: {v}"
                    );
                }
            }
        }
    }
}
