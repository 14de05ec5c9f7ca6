//! Geometric factors of a straight-sided tetrahedron, from which every element matrix
//! follows: with J = [x1 − x0, x2 − x0, x3 − x0], the gradients of the barycentric
//! coordinates are the rows of J⁻¹ (∇λ1..∇λ3; ∇λ0 = −Σ), |T| = |det J|/6, and the
//! contractions ∇λp·∇λq and (∇λl×∇λm)·(∇λr×∇λs) that the reference integrals of
//! [`crate::fem::element`] are multiplied with.

use crate::fem::element::{EDGES, FACES};
use antinode_mesh::tet_mesh::{cross as cross3, dot as dot3};

/// Geometric factors of one tetrahedron.
#[derive(Clone, Copy, Debug)]
pub struct TetGeometry {
    /// |T|, m³.
    pub volume: f64,
    /// ∇λ0..∇λ3.
    pub grad: [[f64; 3]; 4],
    /// ∇λl × ∇λm for the pairs in [`EDGES`].
    pub cross: [[f64; 3]; 6],
    /// ∇λp · ∇λq.
    pub gram: [[f64; 4]; 4],
    /// (∇λl×∇λm) · (∇λr×∇λs) over pairs.
    pub cross_gram: [[f64; 6]; 6],
}

impl TetGeometry {
    /// Factors for the tetrahedron with vertices `x` (any orientation, non-degenerate).
    pub fn new(x: [[f64; 3]; 4]) -> Self {
        let d = |a: [f64; 3], b: [f64; 3]| [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
        let e1 = d(x[1], x[0]);
        let e2 = d(x[2], x[0]);
        let e3 = d(x[3], x[0]);
        let det = dot3(e1, cross3(e2, e3));
        // Rows of J⁻¹ (J has columns e1, e2, e3) are ∇λ1..∇λ3.
        let g1 = scale(cross3(e2, e3), 1.0 / det);
        let g2 = scale(cross3(e3, e1), 1.0 / det);
        let g3 = scale(cross3(e1, e2), 1.0 / det);
        let g0 = [
            -(g1[0] + g2[0] + g3[0]),
            -(g1[1] + g2[1] + g3[1]),
            -(g1[2] + g2[2] + g3[2]),
        ];
        let grad = [g0, g1, g2, g3];
        let mut cross = [[0.0; 3]; 6];
        for (u, &(l, m)) in EDGES.iter().enumerate() {
            cross[u] = cross3(grad[l], grad[m]);
        }
        let mut gram = [[0.0; 4]; 4];
        for p in 0..4 {
            for q in 0..4 {
                gram[p][q] = dot3(grad[p], grad[q]);
            }
        }
        let mut cross_gram = [[0.0; 6]; 6];
        for u in 0..6 {
            for v in 0..6 {
                cross_gram[u][v] = dot3(cross[u], cross[v]);
            }
        }
        Self {
            volume: det.abs() / 6.0,
            grad,
            cross,
            gram,
            cross_gram,
        }
    }

    /// Barycentric coordinates of point `p` given vertex 0 at `x0`.
    pub fn barycentric(&self, x0: [f64; 3], p: [f64; 3]) -> [f64; 4] {
        let r = [p[0] - x0[0], p[1] - x0[1], p[2] - x0[2]];
        let l1 = dot3(self.grad[1], r);
        let l2 = dot3(self.grad[2], r);
        let l3 = dot3(self.grad[3], r);
        [1.0 - l1 - l2 - l3, l1, l2, l3]
    }
}

/// Unit normal (orientation of the local vertex order) and area of local face `face` of
/// the tetrahedron with vertices `x`.
pub fn face_normal_area(x: &[[f64; 3]; 4], face: usize) -> ([f64; 3], f64) {
    let (i, j, k) = FACES[face];
    let e1 = [x[j][0] - x[i][0], x[j][1] - x[i][1], x[j][2] - x[i][2]];
    let e2 = [x[k][0] - x[i][0], x[k][1] - x[i][1], x[k][2] - x[i][2]];
    let n = cross3(e1, e2);
    let len = dot3(n, n).sqrt();
    ([n[0] / len, n[1] / len, n[2] / len], 0.5 * len)
}

fn scale(a: [f64; 3], s: f64) -> [f64; 3] {
    [a[0] * s, a[1] * s, a[2] * s]
}
