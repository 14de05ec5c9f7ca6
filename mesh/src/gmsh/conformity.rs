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
//! 3. No boundary node lies on a boundary triangle it is not a corner of (within the
//!    tolerance of 1.): where one side of a face is split differently from the other (a
//!    hanging node) or two surfaces touch, the faces on both sides are left unshared and
//!    become boundary, one lying on the other. A hash grid with cells of twice the mean
//!    boundary edge holds the triangles.

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
        self.check_folds(mesh, faces)?;
        self.check_hanging_nodes(mesh, old_of_new)
    }

    /// Check 3: no boundary node lies on a boundary triangle it is not a corner of.
    fn check_hanging_nodes(&self, mesh: &TetMesh, old_of_new: &[u32]) -> Result<(), ImportError> {
        let (lo, hi) = bounding_box(&mesh.nodes);
        let extent = (0..3).map(|i| hi[i] - lo[i]).fold(0.0, f64::max);
        let tol = COINCIDENT_RELATIVE * extent;
        let p = |n: u32| mesh.nodes[n as usize];
        let edges: f64 = mesh
            .boundary
            .iter()
            .map(|t| {
                (0..3)
                    .map(|k| norm(sub(p(t[k]), p(t[(k + 1) % 3]))))
                    .sum::<f64>()
            })
            .sum();
        let h = 2.0 * edges / (3 * mesh.boundary.len()).max(1) as f64;
        if !(h > 0.0 && h.is_finite() && tol > 0.0) {
            return Ok(());
        }
        let cell =
            |x: [f64; 3]| -> [i64; 3] { std::array::from_fn(|i| ((x[i] - lo[i]) / h) as i64) };
        let mut grid: HashMap<[i64; 3], Vec<u32>> = HashMap::new();
        for (f, t) in mesh.boundary.iter().enumerate() {
            let (a, b) = bounding_box(&t.map(p));
            let (ca, cb) = (cell(a.map(|x| x - tol)), cell(b.map(|x| x + tol)));
            for i in ca[0]..=cb[0] {
                for j in ca[1]..=cb[1] {
                    for k in ca[2]..=cb[2] {
                        grid.entry([i, j, k]).or_default().push(f as u32);
                    }
                }
            }
        }
        let mut on_boundary = vec![false; mesh.nodes.len()];
        mesh.boundary
            .iter()
            .flatten()
            .for_each(|&n| on_boundary[n as usize] = true);
        for (n, _) in on_boundary.iter().enumerate().filter(|(_, &b)| b) {
            let v = mesh.nodes[n];
            for &f in grid.get(&cell(v)).map(Vec::as_slice).unwrap_or(&[]) {
                let t = mesh.boundary[f as usize];
                if !t.contains(&(n as u32)) && on_triangle(v, t.map(p), tol) {
                    let tags = |m: u32| self.raw.node_tags[old_of_new[m as usize] as usize];
                    let old = old_of_new[n] as usize;
                    return Err(self.line_err(
                        self.raw.node_lines[old] as usize,
                        format!(
                            "node {} lies on the boundary triangle of nodes {} {} {} without \
                             being one of its corners: the mesh is not conforming there (a \
                             hanging node, or a crack); mesh the volumes together so that \
                             neighbouring tetrahedra share whole faces",
                            self.raw.node_tags[old],
                            tags(t[0]),
                            tags(t[1]),
                            tags(t[2])
                        ),
                    ));
                }
            }
        }
        Ok(())
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

fn norm(a: [f64; 3]) -> f64 {
    dot(a, a).sqrt()
}

/// Whether `v` lies on triangle `t` (its plane within `tol`, inside or on its edges).
fn on_triangle(v: [f64; 3], t: [[f64; 3]; 3], tol: f64) -> bool {
    let n = cross(sub(t[1], t[0]), sub(t[2], t[0]));
    let area2 = norm(n);
    if area2 == 0.0 || dot(n, sub(v, t[0])).abs() > tol * area2 {
        return false;
    }
    // Each edge's sub-triangle with v has the orientation of n, or v is off the triangle
    // (by more than tol times that edge's length).
    (0..3).all(|k| {
        let (a, b) = (t[k], t[(k + 1) % 3]);
        dot(cross(sub(b, a), sub(v, a)), n) >= -tol * norm(sub(b, a)) * area2
    })
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
