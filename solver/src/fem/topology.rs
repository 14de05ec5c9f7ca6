//! Edges and faces of a tetrahedral mesh with global orientation.
//!
//! Each tetrahedron's vertices are reordered by ascending global index, so that local
//! edge (i < j) and face (i < j < k) orientations agree with the global ones (see
//! [`crate::fem::element`]). Edges and faces are numbered by sorting their vertex tuples.

use antinode_mesh::{BoundaryTag, TetMesh};
use rayon::prelude::*;

/// Mesh connectivity needed by edge elements.
#[derive(Clone, Debug)]
pub struct Topology {
    /// Tetrahedra with vertices in ascending global order.
    pub tets: Vec<[u32; 4]>,
    /// Global edge index of each local edge (order of [`crate::fem::element::EDGES`]).
    pub tet_edges: Vec<[u32; 6]>,
    /// Global face index of each local face (order of [`crate::fem::element::FACES`]).
    pub tet_faces: Vec<[u32; 4]>,
    /// Edges as sorted vertex pairs.
    pub edges: Vec<[u32; 2]>,
    /// Faces as sorted vertex triples.
    pub faces: Vec<[u32; 3]>,
    /// Boundary tag of each face (None for interior faces).
    pub face_tag: Vec<Option<BoundaryTag>>,
    /// Index into `TetMesh::boundary` of each boundary face.
    pub face_boundary: Vec<Option<u32>>,
}

fn sort4(mut t: [u32; 4]) -> [u32; 4] {
    t.sort_unstable();
    t
}

fn sort3(mut t: [u32; 3]) -> [u32; 3] {
    t.sort_unstable();
    t
}

impl Topology {
    /// Build edges and faces of `mesh`. Boundary faces are matched to the mesh's tagged
    /// boundary triangles; a triangle that is not a face of any tetrahedron is an error of
    /// the mesh producer (caller contract), reported by panic.
    pub fn new(mesh: &TetMesh) -> Self {
        let tets: Vec<[u32; 4]> = mesh.tets.par_iter().map(|&t| sort4(t)).collect();
        // Edges: (v0, v1, tet*6 + local) sorted.
        let mut e: Vec<(u32, u32, u32)> = Vec::with_capacity(tets.len() * 6);
        for (ti, t) in tets.iter().enumerate() {
            for (l, &(i, j)) in crate::fem::element::EDGES.iter().enumerate() {
                e.push((t[i], t[j], (ti * 6 + l) as u32));
            }
        }
        e.par_sort_unstable();
        let mut edges = Vec::new();
        let mut tet_edges = vec![[0u32; 6]; tets.len()];
        for (k, &(a, b, slot)) in e.iter().enumerate() {
            if k == 0 || (e[k - 1].0, e[k - 1].1) != (a, b) {
                edges.push([a, b]);
            }
            let s = slot as usize;
            tet_edges[s / 6][s % 6] = (edges.len() - 1) as u32;
        }
        drop(e);
        let mut f: Vec<([u32; 3], u32)> = Vec::with_capacity(tets.len() * 4);
        for (ti, t) in tets.iter().enumerate() {
            for (l, &(i, j, k)) in crate::fem::element::FACES.iter().enumerate() {
                f.push(([t[i], t[j], t[k]], (ti * 4 + l) as u32));
            }
        }
        f.par_sort_unstable();
        let mut faces = Vec::new();
        let mut tet_faces = vec![[0u32; 4]; tets.len()];
        for (k, &(v, slot)) in f.iter().enumerate() {
            if k == 0 || f[k - 1].0 != v {
                faces.push(v);
            }
            let s = slot as usize;
            tet_faces[s / 4][s % 4] = (faces.len() - 1) as u32;
        }
        drop(f);
        let mut face_tag = vec![None; faces.len()];
        let mut face_boundary = vec![None; faces.len()];
        for (bi, (&tri, &tag)) in mesh.boundary.iter().zip(&mesh.boundary_tag).enumerate() {
            let key = sort3(tri);
            let idx = faces.binary_search(&key).unwrap_or_else(|_| {
                panic!("boundary triangle {bi} {tri:?} is not a face of any tetrahedron")
            });
            face_tag[idx] = Some(tag);
            face_boundary[idx] = Some(bi as u32);
        }
        Self {
            tets,
            tet_edges,
            tet_faces,
            edges,
            faces,
            face_tag,
            face_boundary,
        }
    }

    /// Number of tetrahedra.
    pub fn n_tets(&self) -> usize {
        self.tets.len()
    }
}
