//! The faces of a tetrahedral mesh, found once by sorting: each distinct triangle with the
//! tetrahedra that use it. A conforming mesh uses every interior face twice and every
//! boundary face once; a face used three or more times means the mesh is broken.

use rayon::prelude::*;

/// One use of a face by a tetrahedron.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub struct FaceUse {
    /// The face's vertices, ascending.
    pub key: [u32; 3],
    /// The tetrahedron using it.
    pub tet: u32,
    /// Which vertex of that tetrahedron lies opposite the face (0..4).
    pub local: u8,
}

/// All faces of a mesh, grouped: the uses of distinct face `f` are
/// `uses[starts[f]..starts[f + 1]]`, faces in ascending key order.
#[derive(Clone, Debug, Default)]
pub struct FaceTable {
    pub uses: Vec<FaceUse>,
    pub starts: Vec<usize>,
}

/// Face `k` of a tetrahedron: the three vertices other than vertex `k`, in the order
/// they appear in it.
pub fn face_of(tet: &[u32; 4], k: usize) -> [u32; 3] {
    match k {
        0 => [tet[1], tet[2], tet[3]],
        1 => [tet[0], tet[2], tet[3]],
        2 => [tet[0], tet[1], tet[3]],
        _ => [tet[0], tet[1], tet[2]],
    }
}

/// Sorted copy of a triangle's vertices.
pub fn sorted3(mut f: [u32; 3]) -> [u32; 3] {
    f.sort_unstable();
    f
}

impl FaceTable {
    /// Every face of `tets` with its uses.
    pub fn new(tets: &[[u32; 4]]) -> Self {
        let mut uses: Vec<FaceUse> = tets
            .par_iter()
            .enumerate()
            .flat_map_iter(|(t, tet)| {
                (0..4u8).map(move |k| FaceUse {
                    key: sorted3(face_of(tet, k as usize)),
                    tet: t as u32,
                    local: k,
                })
            })
            .collect();
        uses.par_sort_unstable();
        let mut starts = Vec::with_capacity(uses.len() / 2 + 2);
        for (i, u) in uses.iter().enumerate() {
            if i == 0 || uses[i - 1].key != u.key {
                starts.push(i);
            }
        }
        starts.push(uses.len());
        Self { uses, starts }
    }

    /// Number of distinct faces.
    pub fn len(&self) -> usize {
        self.starts.len().saturating_sub(1)
    }

    /// Whether the mesh has no faces.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The uses of distinct face `f`.
    pub fn face(&self, f: usize) -> &[FaceUse] {
        &self.uses[self.starts[f]..self.starts[f + 1]]
    }

    /// The distinct face with these (ascending) vertices, if any.
    pub fn find(&self, key: [u32; 3]) -> Option<usize> {
        let n = self.len();
        let (mut lo, mut hi) = (0usize, n);
        while lo < hi {
            let mid = (lo + hi) / 2;
            match self.uses[self.starts[mid]].key.cmp(&key) {
                std::cmp::Ordering::Less => lo = mid + 1,
                std::cmp::Ordering::Greater => hi = mid,
                std::cmp::Ordering::Equal => return Some(mid),
            }
        }
        None
    }

    /// The first face used by more than two tetrahedra, if any.
    pub fn first_overshared(&self) -> Option<usize> {
        (0..self.len()).find(|&f| self.face(f).len() > 2)
    }

    /// Faces used exactly once, as (distinct face index, triangle oriented with its
    /// normal pointing away from the tetrahedron), in ascending key order.
    pub fn boundary(&self, tets: &[[u32; 4]], nodes: &[[f64; 3]]) -> Vec<(usize, [u32; 3])> {
        (0..self.len())
            .filter(|&f| self.face(f).len() == 1)
            .map(|f| {
                let u = self.face(f)[0];
                let tet = tets[u.tet as usize];
                (
                    f,
                    outward(
                        face_of(&tet, u.local as usize),
                        tet[u.local as usize],
                        nodes,
                    ),
                )
            })
            .collect()
    }
}

/// `tri` ordered so that its normal (right-hand rule) points away from vertex `opp`.
pub fn outward(mut tri: [u32; 3], opp: u32, nodes: &[[f64; 3]]) -> [u32; 3] {
    let [a, b, c] = tri.map(|n| nodes[n as usize]);
    let o = nodes[opp as usize];
    let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
    let v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
    let w = [o[0] - a[0], o[1] - a[1], o[2] - a[2]];
    let n = [
        u[1] * v[2] - u[2] * v[1],
        u[2] * v[0] - u[0] * v[2],
        u[0] * v[1] - u[1] * v[0],
    ];
    if n[0] * w[0] + n[1] * w[1] + n[2] * w[2] > 0.0 {
        tri.swap(1, 2);
    }
    tri
}

/// The boundary triangles of a mesh (faces used by exactly one tetrahedron), oriented
/// outward, in ascending order of their sorted vertices.
pub fn boundary_faces(tets: &[[u32; 4]], nodes: &[[f64; 3]]) -> Vec<[u32; 3]> {
    FaceTable::new(tets)
        .boundary(tets, nodes)
        .into_iter()
        .map(|(_, t)| t)
        .collect()
}
