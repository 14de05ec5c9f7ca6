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

    /// ∫_F (n×φa)·(n×u) dS on local face `face` for a field u given by quadratic
    /// (6-node Lagrange) interpolation on the face: values at the face's vertices
    /// (i, j, k of [`FACES`]) then at the midpoints of edges ij, ik, jk.
    pub fn face_load_quadratic(
        &self,
        geo: &TetGeometry,
        face: usize,
        area: f64,
        normal: [f64; 3],
        u: [[f64; 3]; 6],
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
        // Quadratic Lagrange shape functions as (coefficient, monomial) sums:
        // N_v = 2λv² − λv, N_vw = 4λvλw.
        let shape = |node: usize| -> Vec<(f64, Exponents)> {
            let e = |a: usize, b: usize| barycentric::add(unit(a), unit(b));
            match node {
                0 => vec![(2.0, e(i, i)), (-1.0, unit(i))],
                1 => vec![(2.0, e(j, j)), (-1.0, unit(j))],
                2 => vec![(2.0, e(k, k)), (-1.0, unit(k))],
                3 => vec![(4.0, e(i, j))],
                4 => vec![(4.0, e(i, k))],
                _ => vec![(4.0, e(j, k))],
            }
        };
        for (a, f) in self.functions.iter().enumerate() {
            let mut s = 0.0;
            for t in &f.value {
                let g = tang(geo.grad[t.m]);
                for (node, un) in u.iter().enumerate() {
                    let d = dot3(g, tang(*un));
                    if d == 0.0 {
                        continue;
                    }
                    for (c, mono) in shape(node) {
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
