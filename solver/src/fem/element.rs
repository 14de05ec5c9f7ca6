//! Nédélec edge elements of the first kind on tetrahedra, orders 1 and 2.
//!
//! Basis functions are written in barycentric form. With λ0..λ3 the barycentric
//! coordinates and the Whitney function of edge (i, j)
//!
//!   w_ij = λi ∇λj − λj ∇λi,
//!
//! the spaces are (hierarchical basis, Webb, IEEE Trans. Antennas Propag. 47 (1999) 1244,
//! reference from memory):
//!
//! * order 1 (6 functions): w_ij on the six edges;
//! * order 2 (20 functions): w_ij and ∇(λiλj) on each edge, and λk w_ij, λj w_ik on each
//!   face (i < j < k). The third face function λi w_jk is their negative sum, so two per
//!   face span the face space. Together these span the full first-kind space of degree 2
//!   (dimension 20), whose eigenvalue error is O(h⁴) on smooth modes.
//!
//! Every function is stored as a sum of terms c·λ^α ∇λm, and its curl as a sum of terms
//! c·λ^β (∇λl × ∇λm). Element matrices are then exact integrals of barycentric monomials
//! (see [`crate::fem::barycentric`]) contracted with the element's geometric factors
//! ∇λp·∇λq and (∇λl×∇λm)·(∇λr×∇λs).
//!
//! Orientation: callers order each tetrahedron's vertices by ascending global index, so a
//! local edge (i < j) or face (i < j < k) carries the same orientation in every element
//! that shares it, and tangential continuity needs no sign bookkeeping.

use crate::fem::barycentric::{self, Exponents};
use crate::fem::tet_geometry::TetGeometry;
use antinode_mesh::tet_mesh::{cross as cross3, dot as dot3};

/// Local edges as vertex pairs (i < j).
pub const EDGES: [(usize, usize); 6] = [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)];
/// Local faces as vertex triples (i < j < k); face f is opposite vertex 3 − f.
pub const FACES: [(usize, usize, usize); 4] = [(0, 1, 2), (0, 1, 3), (0, 2, 3), (1, 2, 3)];

/// Polynomial order of the Nédélec (first kind) element.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum NedelecOrder {
    /// Lowest order: 6 edge functions.
    One,
    /// Second order: 2 per edge and 2 per face, 20 in all.
    Two,
}

impl NedelecOrder {
    /// From the integer 1 or 2.
    pub fn from_int(p: u8) -> Option<Self> {
        match p {
            1 => Some(Self::One),
            2 => Some(Self::Two),
            _ => None,
        }
    }
    /// The integer order.
    pub fn as_int(self) -> u8 {
        match self {
            Self::One => 1,
            Self::Two => 2,
        }
    }
    /// Functions per edge.
    pub fn per_edge(self) -> usize {
        match self {
            Self::One => 1,
            Self::Two => 2,
        }
    }
    /// Functions per face.
    pub fn per_face(self) -> usize {
        match self {
            Self::One => 0,
            Self::Two => 2,
        }
    }
    /// Functions per tetrahedron.
    pub fn per_tet(self) -> usize {
        6 * self.per_edge() + 4 * self.per_face()
    }
}

/// Which mesh entity a local basis function belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Entity {
    /// Local edge `edge` (index into [`EDGES`]), function `kind` on that edge
    /// (0 = Whitney w_ij, 1 = gradient ∇(λiλj)).
    Edge { edge: usize, kind: usize },
    /// Local face `face` (index into [`FACES`]), function `kind` (0 = λk w_ij, 1 = λj w_ik).
    Face { face: usize, kind: usize },
}

/// c · λ^α ∇λm
#[derive(Clone, Copy, Debug)]
struct ValueTerm {
    c: f64,
    alpha: Exponents,
    m: usize,
}

/// c · λ^β (∇λ_{PAIR.0} × ∇λ_{PAIR.1}), pair index into [`EDGES`].
#[derive(Clone, Copy, Debug)]
struct CurlTerm {
    c: f64,
    beta: Exponents,
    pair: usize,
}

/// One local basis function with its curl.
#[derive(Clone, Debug)]
struct BasisFunction {
    entity: Entity,
    value: Vec<ValueTerm>,
    curl: Vec<CurlTerm>,
}

fn unit(i: usize) -> Exponents {
    let mut e = [0u8; 4];
    e[i] = 1;
    e
}

/// λ^α w_ij as value terms.
fn scaled_whitney(alpha: Exponents, i: usize, j: usize) -> Vec<ValueTerm> {
    vec![
        ValueTerm {
            c: 1.0,
            alpha: barycentric::add(alpha, unit(i)),
            m: j,
        },
        ValueTerm {
            c: -1.0,
            alpha: barycentric::add(alpha, unit(j)),
            m: i,
        },
    ]
}

fn pair_index(l: usize, m: usize) -> (usize, f64) {
    let (a, b, s) = if l < m { (l, m, 1.0) } else { (m, l, -1.0) };
    let idx = EDGES
        .iter()
        .position(|&e| e == (a, b))
        .expect("valid vertex pair");
    (idx, s)
}

/// curl(c λ^α ∇λm) = Σ_l c α_l λ^{α − e_l} ∇λl × ∇λm.
fn curl_of(value: &[ValueTerm]) -> Vec<CurlTerm> {
    let mut out = Vec::new();
    for t in value {
        for l in 0..4 {
            if t.alpha[l] == 0 || l == t.m {
                continue;
            }
            let mut beta = t.alpha;
            beta[l] -= 1;
            let (pair, s) = pair_index(l, t.m);
            out.push(CurlTerm {
                c: s * t.c * t.alpha[l] as f64,
                beta,
                pair,
            });
        }
    }
    out
}

/// The reference Nédélec element of a given order with precomputed integral tables.
#[derive(Clone, Debug)]
pub struct NedelecTet {
    order: NedelecOrder,
    functions: Vec<BasisFunction>,
    /// mass[a*n+b][p][q]: ∫ φa·φb dV / |T| = Σ mass[..][p][q] ∇λp·∇λq
    mass: Vec<[[f64; 4]; 4]>,
    /// curl[a*n+b][u][v]: ∫ curl φa·curl φb dV / |T| = Σ curl[..][u][v] X_u·X_v,
    /// X_u = ∇λl × ∇λm for pair u = (l, m).
    curl: Vec<[[f64; 6]; 6]>,
}

impl NedelecTet {
    /// Build the element of the given order.
    pub fn new(order: NedelecOrder) -> Self {
        let zero = [0u8; 4];
        let mut functions = Vec::new();
        for (e, &(i, j)) in EDGES.iter().enumerate() {
            let value = scaled_whitney(zero, i, j);
            functions.push(BasisFunction {
                entity: Entity::Edge { edge: e, kind: 0 },
                curl: curl_of(&value),
                value,
            });
        }
        if order == NedelecOrder::Two {
            for (e, &(i, j)) in EDGES.iter().enumerate() {
                // ∇(λiλj) = λi∇λj + λj∇λi: curl-free by construction.
                let value = vec![
                    ValueTerm {
                        c: 1.0,
                        alpha: unit(i),
                        m: j,
                    },
                    ValueTerm {
                        c: 1.0,
                        alpha: unit(j),
                        m: i,
                    },
                ];
                functions.push(BasisFunction {
                    entity: Entity::Edge { edge: e, kind: 1 },
                    curl: curl_of(&value),
                    value,
                });
            }
            for (f, &(i, j, k)) in FACES.iter().enumerate() {
                for (kind, value) in [scaled_whitney(unit(k), i, j), scaled_whitney(unit(j), i, k)]
                    .into_iter()
                    .enumerate()
                {
                    functions.push(BasisFunction {
                        entity: Entity::Face { face: f, kind },
                        curl: curl_of(&value),
                        value,
                    });
                }
            }
        }
        let n = functions.len();
        let mut mass = vec![[[0.0; 4]; 4]; n * n];
        let mut curl = vec![[[0.0; 6]; 6]; n * n];
        for a in 0..n {
            for b in 0..n {
                let m = &mut mass[a * n + b];
                for s in &functions[a].value {
                    for t in &functions[b].value {
                        m[s.m][t.m] += s.c
                            * t.c
                            * barycentric::tet_monomial_integral(barycentric::add(
                                s.alpha, t.alpha,
                            ));
                    }
                }
                let c = &mut curl[a * n + b];
                for s in &functions[a].curl {
                    for t in &functions[b].curl {
                        c[s.pair][t.pair] += s.c
                            * t.c
                            * barycentric::tet_monomial_integral(barycentric::add(s.beta, t.beta));
                    }
                }
            }
        }
        Self {
            order,
            functions,
            mass,
            curl,
        }
    }

    /// Element order.
    pub fn order(&self) -> NedelecOrder {
        self.order
    }

    /// Number of local basis functions.
    pub fn len(&self) -> usize {
        self.functions.len()
    }

    /// Always false: an element has at least six functions.
    pub fn is_empty(&self) -> bool {
        self.functions.is_empty()
    }

    /// Entity of local function `a`.
    pub fn entity(&self, a: usize) -> Entity {
        self.functions[a].entity
    }

    /// Element matrices on `geo`: (∫ curl φa·curl φb, ∫ φa·φb), row-major n×n.
    pub fn matrices(&self, geo: &TetGeometry, curl_out: &mut [f64], mass_out: &mut [f64]) {
        let n = self.len();
        assert!(curl_out.len() >= n * n && mass_out.len() >= n * n);
        let g = &geo.gram;
        let x = &geo.cross_gram;
        for a in 0..n {
            for b in a..n {
                let mt = &self.mass[a * n + b];
                let mut m = 0.0;
                for p in 0..4 {
                    for q in 0..4 {
                        m += mt[p][q] * g[p][q];
                    }
                }
                let ct = &self.curl[a * n + b];
                let mut c = 0.0;
                for u in 0..6 {
                    for v in 0..6 {
                        c += ct[u][v] * x[u][v];
                    }
                }
                mass_out[a * n + b] = m * geo.volume;
                mass_out[b * n + a] = m * geo.volume;
                curl_out[a * n + b] = c * geo.volume;
                curl_out[b * n + a] = c * geo.volume;
            }
        }
    }

    /// Values of all basis functions at barycentric point `l`.
    pub fn eval(&self, geo: &TetGeometry, l: [f64; 4], out: &mut [[f64; 3]]) {
        for (a, f) in self.functions.iter().enumerate() {
            let mut v = [0.0; 3];
            for t in &f.value {
                let s = t.c * barycentric::eval(t.alpha, l);
                for (vd, gd) in v.iter_mut().zip(geo.grad[t.m]) {
                    *vd += s * gd;
                }
            }
            out[a] = v;
        }
    }

    /// Curls of all basis functions at barycentric point `l`.
    pub fn eval_curl(&self, geo: &TetGeometry, l: [f64; 4], out: &mut [[f64; 3]]) {
        for (a, f) in self.functions.iter().enumerate() {
            let mut v = [0.0; 3];
            for t in &f.curl {
                let s = t.c * barycentric::eval(t.beta, l);
                for (vd, cd) in v.iter_mut().zip(geo.cross[t.pair]) {
                    *vd += s * cd;
                }
            }
            out[a] = v;
        }
    }

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
