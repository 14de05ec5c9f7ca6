//! Evaluation of a discrete field E = Σ x_a φ_a and its curl on the mesh.
//!
//! The tangential part of E is continuous between elements, the normal part is not, so
//! values at a vertex are averaged over the incident tetrahedra weighted by volume (for
//! display). Cell values are taken at each tetrahedron's centroid. A complex field is
//! evaluated by calling these functions on its real and imaginary parts (linearity).

use crate::dofmap::{DofMap, FIXED};
use crate::element::{NedelecTet, TetGeometry};
use crate::topology::Topology;
use antinode_mesh::TetMesh;
use rayon::prelude::*;

/// E and curl E at barycentric point `l` of tetrahedron `t`.
pub fn at_point(
    mesh: &TetMesh,
    topo: &Topology,
    dofs: &DofMap,
    element: &NedelecTet,
    coeffs: &[f64],
    t: usize,
    l: [f64; 4],
) -> ([f64; 3], [f64; 3]) {
    let x = topo.tets[t].map(|v| mesh.nodes[v as usize]);
    let geo = TetGeometry::new(x);
    let n = element.len();
    let mut phi = [[0.0; 3]; 20];
    let mut curl = [[0.0; 3]; 20];
    element.eval(&geo, l, &mut phi[..n]);
    element.eval_curl(&geo, l, &mut curl[..n]);
    let mut e = [0.0; 3];
    let mut c = [0.0; 3];
    for (a, &d) in dofs.of_tet(t).iter().enumerate() {
        if d == FIXED {
            continue;
        }
        let xa = coeffs[d as usize];
        for k in 0..3 {
            e[k] += xa * phi[a][k];
            c[k] += xa * curl[a][k];
        }
    }
    (e, c)
}

/// E and curl E at every tetrahedron's centroid.
pub fn cell_values(
    mesh: &TetMesh,
    topo: &Topology,
    dofs: &DofMap,
    coeffs: &[f64],
) -> Vec<([f64; 3], [f64; 3])> {
    let element = NedelecTet::new(dofs.order);
    (0..topo.n_tets())
        .into_par_iter()
        .map(|t| at_point(mesh, topo, dofs, &element, coeffs, t, [0.25; 4]))
        .collect()
}

/// E and curl E at every mesh vertex: volume-weighted average of the incident
/// tetrahedra's values at that vertex.
pub fn node_values(
    mesh: &TetMesh,
    topo: &Topology,
    dofs: &DofMap,
    coeffs: &[f64],
) -> Vec<([f64; 3], [f64; 3])> {
    let element = NedelecTet::new(dofs.order);
    let per_tet: Vec<[([f64; 3], [f64; 3]); 4]> = (0..topo.n_tets())
        .into_par_iter()
        .map(|t| {
            let mut out = [([0.0; 3], [0.0; 3]); 4];
            for (i, o) in out.iter_mut().enumerate() {
                let mut l = [0.0; 4];
                l[i] = 1.0;
                *o = at_point(mesh, topo, dofs, &element, coeffs, t, l);
            }
            out
        })
        .collect();
    let mut sum = vec![([0.0; 3], [0.0; 3]); mesh.nodes.len()];
    let mut weight = vec![0.0; mesh.nodes.len()];
    for (t, vals) in per_tet.iter().enumerate() {
        let w = TetGeometry::new(topo.tets[t].map(|v| mesh.nodes[v as usize])).volume;
        for (i, &v) in topo.tets[t].iter().enumerate() {
            let s = &mut sum[v as usize];
            for k in 0..3 {
                s.0[k] += w * vals[i].0[k];
                s.1[k] += w * vals[i].1[k];
            }
            weight[v as usize] += w;
        }
    }
    for (s, w) in sum.iter_mut().zip(&weight) {
        if *w > 0.0 {
            for k in 0..3 {
                s.0[k] /= w;
                s.1[k] /= w;
            }
        }
    }
    sum
}
