//! Structured tetrahedral meshes of boxes and unions of grid cells.
//!
//! Each hexahedral grid cell is split into five tetrahedra: the four corners whose global
//! grid-index sum (i + j + k) is even span a central tetrahedron, and each of the other
//! four corners cuts off a corner tetrahedron with its three neighbours along the cell
//! edges. Every face diagonal therefore joins two even grid points, whichever cell it is
//! seen from, so the mesh is conforming on any rectilinear grid; neighbouring cells are
//! mirror images of each other. Against the six-tetrahedron split along a main diagonal
//! (Kuhn's subdivision, mirrored per cell) this measured, for the 300 × 300 × 200 mm box
//! benchmark at equal cell size: 17 % fewer unknowns at order 2 and a worst
//! eigenfrequency error 1.5× smaller at order 2 (1.04e-4 against 1.55e-4 at 18 × 18 × 12
//! cells) and 3.4× smaller at order 1 (24 × 24 × 16 cells); the central tetrahedron of a
//! cube cell is regular and the corner ones are right-angled, so no element has the
//! long body diagonal of the six-way split. Such meshes have a known, uniform size h,
//! which is what convergence-rate studies need.

use crate::tet_mesh::{BoundaryTag, RegionInfo, TetMesh};
use std::collections::HashMap;

/// Tensor-product grid lines (metres), strictly increasing in each direction.
#[derive(Clone, Debug)]
pub struct GridLines {
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    pub z: Vec<f64>,
}

impl GridLines {
    /// `n[d]` equal cells over `[lo[d], hi[d]]`.
    pub fn uniform(lo: [f64; 3], hi: [f64; 3], n: [usize; 3]) -> Self {
        let line = |d: usize| {
            (0..=n[d])
                .map(|i| lo[d] + (hi[d] - lo[d]) * i as f64 / n[d] as f64)
                .collect()
        };
        Self {
            x: line(0),
            y: line(1),
            z: line(2),
        }
    }
}

/// Mesh the grid cells for which `region_of(cell centre)` returns `Some(region id)`;
/// cells returning `None` are left out (holes, re-entrant corners). All boundary faces
/// are tagged `Wall`. `regions` names the region ids.
pub fn grid_mesh(
    grid: &GridLines,
    regions: Vec<RegionInfo>,
    region_of: impl Fn([f64; 3]) -> Option<u32>,
) -> TetMesh {
    let (nx, ny, nz) = (grid.x.len(), grid.y.len(), grid.z.len());
    assert!(
        nx >= 2 && ny >= 2 && nz >= 2,
        "a grid needs two lines per direction"
    );
    let mut node_index: HashMap<(usize, usize, usize), u32> = HashMap::new();
    let mut nodes = Vec::new();
    let mut tets = Vec::new();
    let mut tet_region = Vec::new();
    for k in 0..nz - 1 {
        for j in 0..ny - 1 {
            for i in 0..nx - 1 {
                let c = [
                    0.5 * (grid.x[i] + grid.x[i + 1]),
                    0.5 * (grid.y[j] + grid.y[j + 1]),
                    0.5 * (grid.z[k] + grid.z[k + 1]),
                ];
                let Some(r) = region_of(c) else { continue };
                let mut id = |off: [usize; 3]| -> u32 {
                    let p = (i + off[0], j + off[1], k + off[2]);
                    *node_index.entry(p).or_insert_with(|| {
                        nodes.push([grid.x[p.0], grid.y[p.1], grid.z[p.2]]);
                        (nodes.len() - 1) as u32
                    })
                };
                // Corners by parity of their global index sum: the even ones span the
                // central tetrahedron, each odd one cuts off a corner tetrahedron with
                // its three (even) neighbours along the cell edges.
                let corners = (0..8usize).map(|m| [m & 1, (m >> 1) & 1, (m >> 2) & 1]);
                let even = |o: &[usize; 3]| (i + j + k + o[0] + o[1] + o[2]).is_multiple_of(2);
                let central: Vec<[usize; 3]> = corners.clone().filter(even).collect();
                tets.push([
                    id(central[0]),
                    id(central[1]),
                    id(central[2]),
                    id(central[3]),
                ]);
                tet_region.push(r);
                for o in corners.filter(|o| !even(o)) {
                    let flip = |d: usize| {
                        let mut n = o;
                        n[d] = 1 - n[d];
                        n
                    };
                    tets.push([id(o), id(flip(0)), id(flip(1)), id(flip(2))]);
                    tet_region.push(r);
                }
            }
        }
    }
    let mut mesh = TetMesh {
        nodes,
        tets,
        tet_region,
        boundary: Vec::new(),
        boundary_tag: Vec::new(),
        regions,
    };
    let boundary = boundary_faces(&mesh);
    mesh.boundary_tag = vec![BoundaryTag::Wall; boundary.len()];
    mesh.boundary = boundary;
    mesh
}

/// Faces used by exactly one tetrahedron, oriented outward (see [`crate::faces`]).
pub fn boundary_faces(mesh: &TetMesh) -> Vec<[u32; 3]> {
    crate::faces::boundary_faces(&mesh.tets, &mesh.nodes)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A non-uniform 3 × 4 × 2 grid with one cell left out, so the checks also see an
    /// inner boundary.
    fn holed_mesh() -> (GridLines, TetMesh) {
        let grid = GridLines {
            x: vec![0.0, 0.1, 0.25, 0.3],
            y: vec![0.0, 0.05, 0.1, 0.2, 0.4],
            z: vec![-0.1, 0.0, 0.3],
        };
        // The cell (1, 2, 1): x in (0.1, 0.25), y in (0.1, 0.2), z in (0, 0.3).
        let in_hole =
            |c: [f64; 3]| c[0] > 0.1 && c[0] < 0.25 && c[1] > 0.1 && c[1] < 0.2 && c[2] > 0.0;
        let mesh = grid_mesh(&grid, vec![RegionInfo { name: "air".into() }], |c| {
            (!in_hole(c)).then_some(0)
        });
        (grid, mesh)
    }

    #[test]
    fn five_tetrahedra_fill_each_cell_exactly() {
        let (grid, mesh) = holed_mesh();
        let cells = 3 * 4 * 2 - 1;
        assert_eq!(mesh.tets.len(), 5 * cells);
        // Central tetrahedron: 1/3 of the cell volume, corner ones 1/6 each (the cell
        // minus four corners of 1/6: 1 − 4/6 = 1/3).
        for (c, five) in mesh.tets.chunks(5).enumerate() {
            let v: Vec<f64> = (0..5)
                .map(|t| mesh.signed_volume(5 * c + t).abs())
                .collect();
            let cell = 3.0 * v[0];
            assert!(cell > 0.0, "degenerate central tetrahedron {:?}", five[0]);
            for &vt in &v[1..] {
                assert!((6.0 * vt - cell).abs() <= 1e-12 * cell, "{v:?}");
            }
        }
        let total: f64 = (0..mesh.tets.len())
            .map(|t| mesh.signed_volume(t).abs())
            .sum();
        let volume = |l: &[f64]| l[l.len() - 1] - l[0];
        let hole_volume = 0.15 * 0.1 * 0.3;
        let exact = volume(&grid.x) * volume(&grid.y) * volume(&grid.z) - hole_volume;
        assert!((total - exact).abs() <= 1e-12 * exact, "{total} vs {exact}");
    }

    #[test]
    fn conforming_with_closed_boundary() {
        let (_, mesh) = holed_mesh();
        // Each face is used by one or two tetrahedra; a non-conforming split would leave
        // extra one-sided faces inside, so the boundary must be exactly two triangles
        // per exposed cell face: outer surface 2·(3·4 + 3·2 + 4·2) quads; the hole lies
        // in the top layer, so it removes one top quad and exposes its other five faces.
        let mut faces: HashMap<[u32; 3], usize> = HashMap::new();
        for t in &mesh.tets {
            for f in [[0, 1, 2], [0, 1, 3], [0, 2, 3], [1, 2, 3]] {
                let mut key = f.map(|i| t[i]);
                key.sort_unstable();
                *faces.entry(key).or_default() += 1;
            }
        }
        assert!(faces.values().all(|&n| n <= 2));
        let quads = 2 * (3 * 4 + 3 * 2 + 4 * 2) - 1 + 5;
        assert_eq!(mesh.boundary.len(), 2 * quads);
        assert_eq!(faces.values().filter(|&&n| n == 1).count(), 2 * quads);
    }
}
