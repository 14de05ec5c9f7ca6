//! Structured tetrahedral meshes of boxes and unions of grid cells.
//!
//! Each hexahedral grid cell is split into six tetrahedra along a main diagonal (Kuhn's
//! subdivision: one tetrahedron per ordering of the three axes). The cell with index
//! (i, j, k) is mirrored along every axis whose index is odd, so the diagonals of
//! neighbouring cells meet at the even grid points instead of all pointing one way.
//! Neighbours share their in-plane indices, hence their in-plane mirroring and face
//! diagonals, so the mesh is conforming. Compared with all cells oriented alike this
//! measured, for the 300 × 300 × 200 mm box benchmark at order 2 and equal unknowns,
//! about 20 % smaller worst eigenfrequency errors and 20 % fewer factor entries (the
//! mesh is symmetric under the grid's reflections, so direction-dependent error terms
//! partly cancel). Such meshes have a known, uniform size h, which is what
//! convergence-rate studies need.

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
    let perms = [
        [0, 1, 2],
        [0, 2, 1],
        [1, 0, 2],
        [1, 2, 0],
        [2, 0, 1],
        [2, 1, 0],
    ];
    for k in 0..nz - 1 {
        for j in 0..ny - 1 {
            for i in 0..nx - 1 {
                let c = [
                    0.5 * (grid.x[i] + grid.x[i + 1]),
                    0.5 * (grid.y[j] + grid.y[j + 1]),
                    0.5 * (grid.z[k] + grid.z[k + 1]),
                ];
                let Some(r) = region_of(c) else { continue };
                let cell = [i, j, k];
                let mirrored: [bool; 3] = std::array::from_fn(|d| cell[d] % 2 == 1);
                // Grid point of the cell at local offset (0 or 1 per axis).
                let corner = |off: [usize; 3]| -> [usize; 3] {
                    std::array::from_fn(|d| cell[d] + if mirrored[d] { 1 - off[d] } else { off[d] })
                };
                let mut id = |p: [usize; 3]| -> u32 {
                    *node_index.entry((p[0], p[1], p[2])).or_insert_with(|| {
                        nodes.push([grid.x[p[0]], grid.y[p[1]], grid.z[p[2]]]);
                        (nodes.len() - 1) as u32
                    })
                };
                for perm in perms {
                    let mut off = [0; 3];
                    let mut tet = [id(corner(off)); 4];
                    for (s, &axis) in perm.iter().enumerate() {
                        off[axis] = 1;
                        tet[s + 1] = id(corner(off));
                    }
                    tets.push(tet);
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

/// Faces used by exactly one tetrahedron, oriented as they appear in it.
pub fn boundary_faces(mesh: &TetMesh) -> Vec<[u32; 3]> {
    let mut faces: Vec<([u32; 3], [u32; 3])> = Vec::with_capacity(mesh.tets.len() * 4);
    for t in &mesh.tets {
        for f in [
            [t[0], t[1], t[2]],
            [t[0], t[1], t[3]],
            [t[0], t[2], t[3]],
            [t[1], t[2], t[3]],
        ] {
            let mut key = f;
            key.sort_unstable();
            faces.push((key, f));
        }
    }
    faces.sort_unstable_by_key(|x| x.0);
    let mut out = Vec::new();
    let mut i = 0;
    while i < faces.len() {
        let mut j = i + 1;
        while j < faces.len() && faces[j].0 == faces[i].0 {
            j += 1;
        }
        if j - i == 1 {
            out.push(faces[i].1);
        }
        i = j;
    }
    out
}
