//! Curved surfaces followed by refinement: the side surfaces of vertical circular
//! cylinders (a cylinder cavity's wall, cylindrical loads and their rims).
//!
//! The starting mesh's cylinder sides are polygons whose vertices lie on the true
//! circle. When bisection cuts an edge of a face lying on such a side, the new vertex is
//! moved from the chord's midpoint radially onto the cylinder (same height), so the
//! faces follow the true surface ever closer as they are refined and a cylinder's
//! volume converges to πR²H: a chord of length s leaves a segment of area ≈ s³/(12R)
//! (analytic), so the deficit falls like s². A rim edge (side meets flat top) lies on
//! a side face too and is projected onto the rim circle, which the radial move at fixed
//! height does exactly.
//!
//! Projection may invert a thin tetrahedron on the concave side of a surface (the air
//! around a load). After refinement, [`undo_flat_projections`] moves the projected
//! vertices of every tetrahedron that is inverted, or flatter than [`FLAT`] and flatter
//! than without its projections, back onto their chord and repeats until none is left;
//! with every projection undone the mesh is the plain bisection of a valid mesh, which
//! is valid, so the loop ends.
//!
//! [`CurvedSurface`] describes each surface exactly (axis, radius, height range) so a
//! solver can later use curved (isoparametric) elements on the faces listed with it.

use super::bisect::{face_key, Bisection};
use crate::faces::FaceTable;
use crate::geometry::{CavityShape, Geometry, LoadShape};
use crate::tet_mesh::{cross, dot, sub, TetMesh};
use rayon::prelude::*;
use std::collections::HashMap;

/// A tetrahedron counts as flat when its volume is below this fraction of the cube of
/// its mean edge (a regular tetrahedron has 1/(6√2) ≈ 0.118; this is 1 % of that):
/// common practice, no source.
pub const FLAT: f64 = 1.18e-3;

/// Whose surface a curved surface is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SurfaceOwner {
    /// The wall of a cylinder cavity.
    Cavity,
    /// The side of load `i` (index into the geometry's load list).
    Load(usize),
}

/// The side of a vertical circular cylinder (metres).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CurvedSurface {
    /// Axis position (x, y); the axis is vertical.
    pub center: [f64; 2],
    pub radius: f64,
    /// Height range [bottom, top].
    pub z: [f64; 2],
    pub owner: SurfaceOwner,
}

impl CurvedSurface {
    /// `p` moved radially onto the surface at its height (unchanged on the axis).
    pub fn project(&self, p: [f64; 3]) -> [f64; 3] {
        let (dx, dy) = (p[0] - self.center[0], p[1] - self.center[1]);
        let r = dx.hypot(dy);
        if r == 0.0 {
            return p;
        }
        let s = self.radius / r;
        [self.center[0] + s * dx, self.center[1] + s * dy, p[2]]
    }

    /// Distance of `p` from the surface's circle at its height, and whether its height
    /// lies in the range (to `tol`).
    fn holds(&self, p: [f64; 3], tol: f64) -> bool {
        let r = (p[0] - self.center[0]).hypot(p[1] - self.center[1]);
        (r - self.radius).abs() <= tol && p[2] >= self.z[0] - tol && p[2] <= self.z[1] + tol
    }

    /// Whether triangle `p` lies on the side: vertices on it and a normal closer to
    /// horizontal than to vertical (a triangle of the flat top or bottom whose three
    /// vertices sit on the rim has a vertical normal).
    fn holds_face(&self, p: [[f64; 3]; 3], tol: f64) -> bool {
        let n = cross(sub(p[1], p[0]), sub(p[2], p[0]));
        p.iter().all(|&q| self.holds(q, tol)) && n[2].abs() < 0.5 * dot(n, n).sqrt()
    }
}

/// The curved surfaces of a geometry (metres): a cylinder cavity's wall, then every
/// cylindrical load's side in load order.
pub fn curved_surfaces(geom: &Geometry) -> Vec<CurvedSurface> {
    const MM: f64 = 1e-3;
    let mut out = Vec::new();
    if let CavityShape::Cylinder { radius, height } = geom.cavity.shape {
        out.push(CurvedSurface {
            center: [0.0, 0.0],
            radius: radius * MM,
            z: [0.0, height * MM],
            owner: SurfaceOwner::Cavity,
        });
    }
    for (i, load) in geom.loads.iter().enumerate() {
        if let Some(LoadShape::Cylinder {
            center,
            radius,
            bottom,
            height,
        }) = load.shape
        {
            out.push(CurvedSurface {
                center: center.map(|x| x * MM),
                radius: radius * MM,
                z: [bottom * MM, (bottom + height) * MM],
                owner: SurfaceOwner::Load(i),
            });
        }
    }
    out
}

/// The faces of `mesh` lying on a curved surface (boundary faces, and interfaces between
/// two regions), as (ascending vertex numbers, index into `surfaces`), in key order.
/// "Lying on" means vertices on the surface to 1e-9 of its radius (outline vertices are
/// placed on the circle to rounding) and a face normal nearer horizontal than vertical.
pub fn surface_faces(mesh: &TetMesh, surfaces: &[CurvedSurface]) -> Vec<([u32; 3], u32)> {
    if surfaces.is_empty() {
        return Vec::new();
    }
    let table = FaceTable::new(&mesh.tets);
    (0..table.len())
        .into_par_iter()
        .filter_map(|f| {
            let uses = table.face(f);
            let key = uses[0].key;
            let on_interface = match uses {
                [_] => true,
                [a, b] => mesh.tet_region[a.tet as usize] != mesh.tet_region[b.tet as usize],
                _ => false,
            };
            if !on_interface {
                return None;
            }
            let p = key.map(|v| mesh.nodes[v as usize]);
            surfaces
                .iter()
                .position(|s| s.holds_face(p, 1e-9 * s.radius))
                .map(|s| (key, s as u32))
        })
        .collect()
}

/// Signed volume and mean edge of the tetrahedron with vertices `p`.
fn volume_and_mean_edge(p: [[f64; 3]; 4]) -> (f64, f64) {
    let vol = dot(sub(p[1], p[0]), cross(sub(p[2], p[0]), sub(p[3], p[0]))) / 6.0;
    let mut mean = 0.0;
    for i in 0..4 {
        for j in i + 1..4 {
            let d = sub(p[i], p[j]);
            mean += dot(d, d).sqrt() / 6.0;
        }
    }
    (vol, mean)
}

/// Whether a projection spoils tetrahedron `t`: it is inverted, or flat (see [`FLAT`])
/// and flatter than with its projected vertices back on their chords. A tet that is flat
/// without any projection (a sliver inherited from the starting mesh) is not blamed on
/// the surface, so its vertices stay on it.
fn spoiled_by_projection(b: &Bisection, projected: &HashMap<u32, u32>, t: usize) -> bool {
    let tet = b.tets[t];
    if !tet.iter().any(|v| projected.contains_key(v)) {
        return false;
    }
    let p = tet.map(|v| b.nodes[v as usize]);
    let (vol, mean) = volume_and_mean_edge(p);
    if vol <= 0.0 {
        return true;
    }
    if vol > FLAT * mean.powi(3) {
        return false;
    }
    let chord = tet.map(|v| match projected.get(&v) {
        Some(_) => {
            let [a, c] = b.parents[v as usize - b.first_new]
                .edge
                .map(|i| b.nodes[i as usize]);
            std::array::from_fn(|k| 0.5 * (a[k] + c[k]))
        }
        None => b.nodes[v as usize],
    });
    vol < volume_and_mean_edge(chord).0
}

/// Undoes projections until no tetrahedron is flat: every projected vertex (`projected`:
/// vertex → surface) of a flat tetrahedron goes back to its chord midpoint, and all new
/// vertices are re-placed in creation order (parents first) so later midpoints follow.
/// Returns the number of projections undone.
pub fn undo_flat_projections(
    b: &mut Bisection,
    surfaces: &[CurvedSurface],
    projected: &mut HashMap<u32, u32>,
) -> usize {
    let mut undone = 0;
    loop {
        let flat: Vec<usize> = (0..b.tets.len())
            .into_par_iter()
            .filter(|&t| spoiled_by_projection(b, projected, t))
            .collect();
        let before = undone;
        for t in flat {
            for v in b.tets[t] {
                if projected.remove(&v).is_some() {
                    undone += 1;
                }
            }
        }
        if undone == before {
            return undone;
        }
        for k in 0..b.parents.len() {
            let v = b.first_new + k;
            let [p, q] = b.parents[k].edge.map(|i| b.nodes[i as usize]);
            let mid = std::array::from_fn(|c| 0.5 * (p[c] + q[c]));
            b.nodes[v] = match projected.get(&(v as u32)) {
                Some(&s) => surfaces[s as usize].project(mid),
                None => mid,
            };
        }
    }
}

/// The tracked curved-surface faces of `b` as (ascending vertex numbers, surface), in
/// key order.
pub fn tracked_faces(b: &Bisection) -> Vec<([u32; 3], u32)> {
    let mut out: Vec<([u32; 3], u32)> = b.marked.iter().map(|(&k, &s)| (face_key(k), s)).collect();
    out.sort_unstable();
    out
}
