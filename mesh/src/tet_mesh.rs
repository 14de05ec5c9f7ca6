//! The tetrahedral mesh handed from the mesher (or an importer) to the solver.
//!
//! Coordinates are in metres. Every tetrahedron carries a region id (0 = the cavity's
//! air, `i + 1` = load `i` of the geometry), every boundary triangle a [`BoundaryTag`].
//! Material interfaces lie on element faces, so a region id is constant per element.

/// What a boundary triangle belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum BoundaryTag {
    /// Metal wall of the cavity.
    Wall,
    /// Aperture of feed port `i` (index into the geometry's port list).
    Port(usize),
}

/// A named region of the mesh (the air, or one load).
#[derive(Clone, Debug, PartialEq)]
pub struct RegionInfo {
    /// "air" or the load's name.
    pub name: String,
}

/// A conforming tetrahedral mesh with region and boundary tags (SI units: metres).
#[derive(Clone, Debug, Default)]
pub struct TetMesh {
    /// Vertex coordinates, metres.
    pub nodes: Vec<[f64; 3]>,
    /// Tetrahedra as four vertex indices (any orientation).
    pub tets: Vec<[u32; 4]>,
    /// Region id of each tetrahedron: 0 = air, i + 1 = load i.
    pub tet_region: Vec<u32>,
    /// Boundary triangles (the faces used by exactly one tetrahedron).
    pub boundary: Vec<[u32; 3]>,
    /// Tag of each boundary triangle.
    pub boundary_tag: Vec<BoundaryTag>,
    /// Region descriptions, indexed by region id.
    pub regions: Vec<RegionInfo>,
}

impl TetMesh {
    /// Signed volume of tetrahedron `t` (m³); positive for right-handed vertex order.
    pub fn signed_volume(&self, t: usize) -> f64 {
        let [a, b, c, d] = self.tets[t].map(|i| self.nodes[i as usize]);
        let u = sub(b, a);
        let v = sub(c, a);
        let w = sub(d, a);
        dot(u, cross(v, w)) / 6.0
    }

    /// Total volume of each region (m³), indexed by region id.
    pub fn region_volumes(&self) -> Vec<f64> {
        let mut vols = vec![0.0; self.regions.len()];
        for t in 0..self.tets.len() {
            vols[self.tet_region[t] as usize] += self.signed_volume(t).abs();
        }
        vols
    }

    /// Area of boundary triangle `f` (m²).
    pub fn boundary_area(&self, f: usize) -> f64 {
        let [a, b, c] = self.boundary[f].map(|i| self.nodes[i as usize]);
        let n = cross(sub(b, a), sub(c, a));
        0.5 * dot(n, n).sqrt()
    }
}

/// a − b.
#[inline]
pub fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// a · b.
#[inline]
pub fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// a × b.
#[inline]
pub fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}
