//! Nédélec edge elements of the first kind on tetrahedra, orders 1, 2 and 3.
//!
//! The local functions (6, 20 and 45; hierarchical, each tied to an edge, a face or the
//! interior) are listed and justified in [`basis`]. Every function is stored as a sum of
//! terms c·λ^α ∇λm and its curl as a sum of terms c·λ^β (∇λl × ∇λm) (module `terms`), so
//! element matrices are exact integrals of barycentric monomials (see
//! [`crate::fem::barycentric`]) contracted with the element's geometric factors
//! ∇λp·∇λq and (∇λl×∇λm)·(∇λr×∇λs); face matrices and loads are in module `face`.
//! The eigenvalue error on smooth modes is O(h^{2p}) for order p.
//!
//! Orientation: callers order each tetrahedron's vertices by ascending global index, so a
//! local edge (i < j) or face (i < j < k) carries the same orientation in every element
//! that shares it, and tangential continuity needs no sign bookkeeping.

pub mod basis;
mod face;
mod terms;

pub use face::lagrange_nodes;

use crate::fem::barycentric;
use crate::fem::tet_geometry::TetGeometry;
use basis::BasisFunction;

/// Local edges as vertex pairs (i < j).
pub const EDGES: [(usize, usize); 6] = [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)];
/// Local faces as vertex triples (i < j < k); face f is opposite vertex 3 − f.
pub const FACES: [(usize, usize, usize); 4] = [(0, 1, 2), (0, 1, 3), (0, 2, 3), (1, 2, 3)];

/// Most local functions of any order (order 3), for fixed-size scratch arrays.
pub const MAX_LOCAL: usize = 45;

/// Polynomial order of the Nédélec (first kind) element.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum NedelecOrder {
    /// Lowest order: 6 edge functions.
    One,
    /// Second order: 2 per edge and 2 per face, 20 in all.
    Two,
    /// Third order: 3 per edge, 6 per face and 3 interior, 45 in all.
    Three,
}

impl NedelecOrder {
    /// From the integer 1, 2 or 3.
    pub fn from_int(p: u8) -> Option<Self> {
        match p {
            1 => Some(Self::One),
            2 => Some(Self::Two),
            3 => Some(Self::Three),
            _ => None,
        }
    }
    /// The integer order.
    pub fn as_int(self) -> u8 {
        match self {
            Self::One => 1,
            Self::Two => 2,
            Self::Three => 3,
        }
    }
    /// Functions per edge (p).
    pub fn per_edge(self) -> usize {
        self.as_int() as usize
    }
    /// Functions per face (p(p − 1)).
    pub fn per_face(self) -> usize {
        let p = self.as_int() as usize;
        p * (p - 1)
    }
    /// Interior functions per tetrahedron (p(p − 1)(p − 2)/2).
    pub fn per_interior(self) -> usize {
        let p = self.as_int() as usize;
        p * (p - 1) * (p - 2) / 2
    }
    /// Functions per tetrahedron (p(p + 2)(p + 3)/2).
    pub fn per_tet(self) -> usize {
        6 * self.per_edge() + 4 * self.per_face() + self.per_interior()
    }
}

/// Which mesh entity a local basis function belongs to (kinds as in the table of
/// [`basis`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Entity {
    /// Local edge `edge` (index into [`EDGES`]), function `kind` on that edge
    /// (0 = Whitney w_ij, 1 = ∇(λiλj), 2 = ∇(λiλj(λj − λi))).
    Edge { edge: usize, kind: usize },
    /// Local face `face` (index into [`FACES`]), function `kind` (0 = λk w_ij,
    /// 1 = λj w_ik, 2 = ∇(λiλjλk), 3 = λk² w_ij, 4 = λj² w_ik, 5 = λjλk w_ij).
    Face { face: usize, kind: usize },
    /// Interior function `kind` of the tetrahedron (order 3: λ2λ3 w01, λ1λ3 w02,
    /// λ1λ2 w03).
    Interior { kind: usize },
}

impl Entity {
    /// Whether the function is the gradient of a scalar bubble (curl-free by
    /// construction).
    pub fn is_gradient(self) -> bool {
        matches!(
            self,
            Entity::Edge { kind: 1 | 2, .. } | Entity::Face { kind: 2, .. }
        )
    }
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
        let functions = basis::functions(order);
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
}
