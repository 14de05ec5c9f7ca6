//! Conforming longest-edge bisection of a tetrahedral mesh (Rivara).
//!
//! Algorithm: M.-C. Rivara, "Algorithms for refining triangular grids suitable for
//! adaptive and multigrid techniques", Int. J. Numer. Meth. Eng. 20 (1984) 745, and
//! "Mesh refinement processes based on the generalized bisection of simplices", SIAM J.
//! Numer. Anal. 21 (1984) 604, in its 3-D form: a tetrahedron is always cut through the
//! midpoint of its longest edge and the two vertices opposite that edge. A refinement
//! step bisects the longest edge of every marked tetrahedron; then, as long as some
//! tetrahedron has an edge carrying a midpoint (a hanging node), that tetrahedron is
//! bisected at *its own* longest edge, which may create a further midpoint and pass the
//! hanging node on. The process stops because every cut halves a longest edge, and it
//! ends with a conforming mesh (no hanging nodes). Ties between equally long edges are
//! broken by the edge's vertex numbers, the same in every tetrahedron, so two
//! neighbours always agree on how a shared face is cut; lengths are computed from the
//! lower-numbered vertex for the same reason (bitwise-equal in every tet).
//!
//! Bookkeeping: region ids pass to both children; every tracked face (boundary triangles
//! with their [`BoundaryTag`], and any faces the caller marks, e.g. those on a curved
//! surface) is split with the tetrahedron that cuts it, so boundary lists stay exact
//! without any geometric search. A new vertex's position may be moved by a caller's
//! hook (projection onto a curved surface); the topology never depends on it.
//!
//! Children keep the parent's orientation: replacing vertex a (or b) of a tetrahedron by
//! a point of the segment ab leaves the sign of its volume unchanged.

use crate::tet_mesh::{dot, sub, BoundaryTag, RegionInfo, TetMesh};
use std::collections::HashMap;

/// The six edges of a tetrahedron as local vertex pairs.
const EDGES: [(usize, usize); 6] = [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)];

/// Edge key: vertex numbers ascending.
pub(crate) fn edge_key(a: u32, b: u32) -> [u32; 2] {
    if a < b {
        [a, b]
    } else {
        [b, a]
    }
}

/// Face key: vertex numbers ascending.
pub(crate) fn face_key(mut f: [u32; 3]) -> [u32; 3] {
    f.sort_unstable();
    f
}

/// What a new vertex is: the midpoint of which edge (vertex numbers of the parent edge).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Parent {
    pub edge: [u32; 2],
}

/// A tetrahedral mesh under bisection, with its tracked faces.
#[derive(Clone, Debug)]
pub struct Bisection {
    pub nodes: Vec<[f64; 3]>,
    pub tets: Vec<[u32; 4]>,
    pub tet_region: Vec<u32>,
    /// Boundary triangles (ascending keys) and their tags.
    pub boundary: HashMap<[u32; 3], BoundaryTag>,
    /// Further faces the caller tracks (ascending keys) with a caller's mark (e.g. which
    /// curved surface a face lies on); set with [`Bisection::mark_face`].
    pub marked: HashMap<[u32; 3], u32>,
    /// The edges of marked faces with their face's mark (edges already cut stay listed;
    /// they are no longer edges of the mesh and never looked up again).
    pub marked_edges: HashMap<[u32; 2], u32>,
    /// For every vertex made by bisection (index − `first_new`), its parent edge.
    pub parents: Vec<Parent>,
    /// Number of vertices of the starting mesh.
    pub first_new: usize,
    /// Tetrahedra using each vertex.
    node_tets: Vec<Vec<u32>>,
    /// Midpoints made in the current step, by parent edge.
    midpoints: HashMap<[u32; 2], u32>,
}

/// Where a new vertex goes: given the parent edge and its chord midpoint, the hook may
/// return another position (or the midpoint unchanged).
pub type Placement<'a> = dyn FnMut(&Bisection, [u32; 2], [f64; 3]) -> [f64; 3] + 'a;

impl Bisection {
    /// Starts from a conforming mesh; its boundary triangles and tags are tracked.
    pub fn new(mesh: &TetMesh) -> Self {
        let mut node_tets = vec![Vec::new(); mesh.nodes.len()];
        for (t, tet) in mesh.tets.iter().enumerate() {
            for &v in tet {
                node_tets[v as usize].push(t as u32);
            }
        }
        let boundary = mesh
            .boundary
            .iter()
            .zip(&mesh.boundary_tag)
            .map(|(&f, &tag)| (face_key(f), tag))
            .collect();
        Self {
            nodes: mesh.nodes.clone(),
            tets: mesh.tets.clone(),
            tet_region: mesh.tet_region.clone(),
            boundary,
            marked: HashMap::new(),
            marked_edges: HashMap::new(),
            parents: Vec::new(),
            first_new: mesh.nodes.len(),
            node_tets,
            midpoints: HashMap::new(),
        }
    }

    /// Tracks face `f` (any vertex order) and its edges with `mark`.
    pub fn mark_face(&mut self, f: [u32; 3], mark: u32) {
        let key = face_key(f);
        self.marked.insert(key, mark);
        for (i, j) in [(0, 1), (0, 2), (1, 2)] {
            self.marked_edges.insert(edge_key(key[i], key[j]), mark);
        }
    }

    /// Squared length of the edge between vertices `a` and `b`, computed from the
    /// lower-numbered one so every tetrahedron gets the same bits.
    pub fn edge_len2(&self, a: u32, b: u32) -> f64 {
        let [lo, hi] = edge_key(a, b);
        let d = sub(self.nodes[hi as usize], self.nodes[lo as usize]);
        dot(d, d)
    }

    /// The longest edge of tetrahedron `t` (ties broken by the vertex numbers), as local
    /// vertex positions.
    pub fn longest_edge(&self, t: usize) -> (usize, usize) {
        let tet = self.tets[t];
        let rank =
            |&(i, j): &(usize, usize)| (self.edge_len2(tet[i], tet[j]), edge_key(tet[i], tet[j]));
        let mut best = EDGES[0];
        let mut best_rank = rank(&best);
        for e in &EDGES[1..] {
            let r = rank(e);
            if r.0 > best_rank.0 || (r.0 == best_rank.0 && r.1 > best_rank.1) {
                best = *e;
                best_rank = r;
            }
        }
        best
    }

    /// Tetrahedra containing both vertices `a` and `b`.
    fn tets_on_edge(&self, a: u32, b: u32) -> Vec<u32> {
        let (short, other) = if self.node_tets[a as usize].len() <= self.node_tets[b as usize].len()
        {
            (a, b)
        } else {
            (b, a)
        };
        self.node_tets[short as usize]
            .iter()
            .copied()
            .filter(|&t| self.tets[t as usize].contains(&other))
            .collect()
    }

    /// The midpoint vertex of edge (a, b), made (and placed by `place`) if new; a new one
    /// queues every tetrahedron on the edge.
    fn midpoint(&mut self, a: u32, b: u32, place: &mut Placement, queue: &mut Vec<u32>) -> u32 {
        let key = edge_key(a, b);
        if let Some(&m) = self.midpoints.get(&key) {
            return m;
        }
        let (pa, pb) = (self.nodes[key[0] as usize], self.nodes[key[1] as usize]);
        let mid = std::array::from_fn(|k| 0.5 * (pa[k] + pb[k]));
        let pos = place(self, key, mid);
        let m = self.nodes.len() as u32;
        self.nodes.push(pos);
        self.node_tets.push(Vec::new());
        self.parents.push(Parent { edge: key });
        self.midpoints.insert(key, m);
        queue.extend(self.tets_on_edge(a, b));
        m
    }

    /// Whether tetrahedron `t` has an edge carrying a midpoint of this step.
    fn is_hanging(&self, t: usize) -> bool {
        let tet = self.tets[t];
        EDGES
            .iter()
            .any(|&(i, j)| self.midpoints.contains_key(&edge_key(tet[i], tet[j])))
    }

    /// Splits a tracked face (a, b, x) at midpoint m of ab into (a, m, x) and (m, b, x).
    fn split_faces(&mut self, a: u32, b: u32, x: u32, m: u32) {
        let key = face_key([a, b, x]);
        if let Some(tag) = self.boundary.remove(&key) {
            self.boundary.insert(face_key([a, m, x]), tag);
            self.boundary.insert(face_key([m, b, x]), tag);
        }
        if let Some(mark) = self.marked.remove(&key) {
            self.mark_face([a, m, x], mark);
            self.mark_face([m, b, x], mark);
        }
    }

    /// Bisects tetrahedron `t` at its local edge (i, j) through vertex `m`: the child
    /// with vertex i replaced keeps number `t`, the other is appended.
    fn bisect(&mut self, t: usize, (i, j): (usize, usize), m: u32) {
        let tet = self.tets[t];
        let (a, b) = (tet[i], tet[j]);
        let mut c1 = tet;
        c1[i] = m;
        let mut c2 = tet;
        c2[j] = m;
        let t2 = self.tets.len() as u32;
        self.tets[t] = c1;
        self.tets.push(c2);
        self.tet_region.push(self.tet_region[t]);
        for k in (0..4).filter(|&k| k != i && k != j) {
            self.split_faces(a, b, tet[k], m);
            self.node_tets[tet[k] as usize].push(t2);
        }
        if let Some(s) = self.node_tets[a as usize]
            .iter_mut()
            .find(|s| **s == t as u32)
        {
            *s = t2;
        }
        self.node_tets[m as usize].extend([t as u32, t2]);
    }

    /// One refinement step: bisects every tetrahedron in `marked_tets` at its longest
    /// edge, then restores conformity by longest-edge bisection of every tetrahedron
    /// with a hanging node. `place` positions each new vertex. Returns the number of
    /// bisections, or `None` if the mesh would exceed `max_tets`.
    pub fn refine(
        &mut self,
        marked_tets: &[u32],
        max_tets: usize,
        place: &mut Placement,
    ) -> Option<usize> {
        let mut queue = Vec::new();
        for &t in marked_tets {
            let (i, j) = self.longest_edge(t as usize);
            let tet = self.tets[t as usize];
            self.midpoint(tet[i], tet[j], place, &mut queue);
        }
        let mut cuts = 0;
        while let Some(t) = queue.pop() {
            let t = t as usize;
            if !self.is_hanging(t) {
                continue;
            }
            if self.tets.len() >= max_tets {
                return None;
            }
            let (i, j) = self.longest_edge(t);
            let tet = self.tets[t];
            let m = self.midpoint(tet[i], tet[j], place, &mut queue);
            self.bisect(t, (i, j), m);
            cuts += 1;
            // Either child may still carry a hanging node of another edge.
            queue.push(t as u32);
            queue.push(self.tets.len() as u32 - 1);
        }
        self.midpoints.clear();
        Some(cuts)
    }

    /// The refined mesh (a copy): see [`Bisection::into_mesh`].
    pub fn to_mesh(&self, regions: Vec<RegionInfo>) -> TetMesh {
        self.clone().into_mesh(regions)
    }

    /// The refined mesh: boundary triangles oriented outward from their tetrahedron, in
    /// ascending key order. `regions` are passed through.
    pub fn into_mesh(self, regions: Vec<RegionInfo>) -> TetMesh {
        let mut keys: Vec<([u32; 3], BoundaryTag)> =
            self.boundary.iter().map(|(&k, &t)| (k, t)).collect();
        keys.sort_unstable_by_key(|e| e.0);
        let mut boundary = Vec::with_capacity(keys.len());
        let mut boundary_tag = Vec::with_capacity(keys.len());
        for (key, tag) in keys {
            // A tracked boundary face belongs to exactly one tetrahedron.
            let owner = self.node_tets[key[0] as usize]
                .iter()
                .map(|&t| self.tets[t as usize])
                .find(|tet| tet.contains(&key[1]) && tet.contains(&key[2]));
            let tri = match owner {
                Some(tet) => {
                    let opp = tet
                        .iter()
                        .copied()
                        .find(|v| !key.contains(v))
                        .unwrap_or(key[0]);
                    crate::faces::outward(key, opp, &self.nodes)
                }
                None => key,
            };
            boundary.push(tri);
            boundary_tag.push(tag);
        }
        TetMesh {
            nodes: self.nodes,
            tets: self.tets,
            tet_region: self.tet_region,
            boundary,
            boundary_tag,
            regions,
        }
    }
}
