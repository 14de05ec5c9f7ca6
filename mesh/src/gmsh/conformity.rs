//! Conformity of an imported mesh: the checks that a cracked, folded or non-conforming
//! file does not pass as a valid cavity (its cracks would act as metal sheets).
//!
//! 1. No two nodes at the same point: within 1e-9 of the mesh's largest extent (the
//!    geometry's tolerance, common practice, no source; meshes a solver can factor have
//!    edges far longer). Two nodes at one point mean tetrahedra on either side do not
//!    share nodes: a crack. Found with a hash grid of that cell size (each node compared
//!    with the nodes of the 27 cells around it).
//! 2. Every face is shared by at most two tetrahedra (checked in `build.rs`), and the two
//!    tetrahedra of an interior face lie on opposite sides of it; on the same side the
//!    mesh folds over itself. This is what an inverted element (a node moved across its
//!    opposite face) shows as; the node order within a tetrahedron is free, since the
//!    solver uses |volume|.

use super::groups::Builder;
use super::ImportError;
use crate::faces::FaceTable;
use crate::tet_mesh::{cross, dot, sub, TetMesh};
use std::collections::HashMap;

/// Relative tolerance for coincident nodes (see the module docs).
const COINCIDENT_RELATIVE: f64 = 1e-9;

impl Builder<'_> {
    /// Checks 1 and 2 of the module docs; `old_of_new` maps mesh nodes to file order.
    pub(super) fn check_conformity(
        &self,
        mesh: &TetMesh,
        faces: &FaceTable,
        old_of_new: &[u32],
    ) -> Result<(), ImportError> {
        self.check_coincident_nodes(mesh, old_of_new)?;
        self.check_folds(mesh, faces)
    }

    fn check_coincident_nodes(
        &self,
        mesh: &TetMesh,
        old_of_new: &[u32],
    ) -> Result<(), ImportError> {
        let (lo, hi) = bounding_box(&mesh.nodes);
        let extent = (0..3).map(|i| hi[i] - lo[i]).fold(0.0, f64::max);
        let tol = COINCIDENT_RELATIVE * extent;
        if !(tol > 0.0 && tol.is_finite()) {
            return Ok(()); // a flat or empty mesh is refused by the volume check
        }
        let cell = |p: [f64; 3]| -> [i64; 3] {
            // Cells of side tol; |p - lo| / tol <= 1e9, well inside i64.
            std::array::from_fn(|i| ((p[i] - lo[i]) / tol).floor() as i64)
        };
        let mut grid: HashMap<[i64; 3], Vec<u32>> = HashMap::with_capacity(mesh.nodes.len());
        for (n, &p) in mesh.nodes.iter().enumerate() {
            let c = cell(p);
            for d in 0..27i64 {
                let key = [c[0] + d % 3 - 1, c[1] + (d / 3) % 3 - 1, c[2] + d / 9 - 1];
                let Some(others) = grid.get(&key) else {
                    continue;
                };
                for &m in others {
                    let q = mesh.nodes[m as usize];
                    let e = sub(p, q);
                    if dot(e, e).sqrt() <= tol {
                        return Err(self.coincident_err(m as usize, n, p, tol, old_of_new));
                    }
                }
            }
            grid.entry(c).or_default().push(n as u32);
        }
        Ok(())
    }

    fn coincident_err(
        &self,
        a: usize,
        b: usize,
        p: [f64; 3],
        tol: f64,
        old_of_new: &[u32],
    ) -> ImportError {
        let raw = self.raw;
        let (oa, ob) = (old_of_new[a] as usize, old_of_new[b] as usize);
        let unit = self.import.unit_mm * 1e-3;
        let at = p.map(|x| x / unit);
        self.line_err(
            raw.node_lines[ob] as usize,
            format!(
                "nodes {} (line {}) and {} lie at the same point ({}, {}, {}) within {:.3e} \
                 file units: a conforming mesh has one node per point, so the tetrahedra \
                 on either side are not joined there (a crack, which would act as a metal \
                 sheet); merge the duplicate nodes (in Gmsh: Coherence Mesh)",
                raw.node_tags[oa],
                raw.node_lines[oa],
                raw.node_tags[ob],
                at[0],
                at[1],
                at[2],
                tol / unit
            ),
        )
    }

    fn check_folds(&self, mesh: &TetMesh, faces: &FaceTable) -> Result<(), ImportError> {
        for f in 0..faces.len() {
            let uses = faces.face(f);
            if uses.len() != 2 {
                continue;
            }
            let [a, b, c] = uses[0].key.map(|n| mesh.nodes[n as usize]);
            let normal = cross(sub(b, a), sub(c, a));
            let side = |u: &crate::faces::FaceUse| {
                let opp = mesh.tets[u.tet as usize][u.local as usize];
                dot(normal, sub(mesh.nodes[opp as usize], a))
            };
            if side(&uses[0]) * side(&uses[1]) > 0.0 {
                let info = [uses[0], uses[1]].map(|u| self.raw.tet_info[u.tet as usize]);
                return Err(self.line_err(
                    info[1].line as usize,
                    format!(
                        "tetrahedra {} (line {}) and {} share a face but lie on the same side \
                         of it: the mesh folds over itself there (overlapping elements)",
                        info[0].tag, info[0].line, info[1].tag
                    ),
                ));
            }
        }
        Ok(())
    }
}

/// Smallest and largest coordinates of `nodes`.
pub(super) fn bounding_box(nodes: &[[f64; 3]]) -> ([f64; 3], [f64; 3]) {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in nodes {
        for i in 0..3 {
            lo[i] = lo[i].min(p[i]);
            hi[i] = hi[i].max(p[i]);
        }
    }
    (lo, hi)
}
