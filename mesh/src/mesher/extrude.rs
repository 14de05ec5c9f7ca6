//! Extrusion of the 2-D cross-section mesh into z-layers of prisms, each split into three
//! tetrahedra, with region ids and boundary tags.
//!
//! Each prism is split by the rule of Dompierre, Labbé, Vallet and Camarero ("How to
//! subdivide pyramids, prisms and hexahedra into tetrahedra", 8th International Meshing
//! Roundtable, 1999): every quadrilateral face is cut along the diagonal from its vertex
//! with the smallest global index, which neighbouring prisms see alike, so the mesh is
//! conforming without any search.

use super::outline::{point_in_polygon, Outline, P2};
use super::planar::Planar;
use super::sizing::{cavity_height, graded_params_nearest, SizeField};
use super::MesherError;
use crate::geometry::{CavityShape, Geometry, PortWall};
use crate::tet_mesh::{BoundaryTag, RegionInfo, TetMesh};
use rayon::prelude::*;

/// Largest number of tetrahedra before meshing is refused.
pub const MAX_TETS: usize = 40_000_000;

/// Layer thickness relative to the target size h: as the 2-D point spacing
/// ([`super::planar::SPACING_FACTOR`]), so prisms have square sides and their tets a mean
/// edge close to h.
pub(super) const LAYER_FACTOR: f64 = super::planar::SPACING_FACTOR;

/// mm → m.
const MM: f64 = 1e-3;

/// Heights of the layer interfaces (mm): breakpoints at floor, ceiling, every load bottom
/// and top and the z-edges of side-wall ports; each interval divided by the graded
/// thickness field, so interfaces and port edges lie on layer planes.
pub(crate) fn layer_heights(geom: &Geometry, field: &SizeField) -> Vec<f64> {
    let h = cavity_height(&geom.cavity.shape);
    let mut br = vec![0.0, h];
    for l in &field.loads {
        br.extend(l.z_range());
    }
    for port in &geom.ports {
        let side = matches!(
            port.wall,
            PortWall::Side { .. } | PortWall::BoxWall { axis: 0 | 1, .. }
        );
        if side {
            let across = if port.rotated {
                port.width
            } else {
                port.height
            };
            br.push(port.center[1] - 0.5 * across);
            br.push(port.center[1] + 0.5 * across);
        }
    }
    br.retain(|z| (0.0..=h).contains(z));
    br.sort_by(f64::total_cmp);
    let tol = 1e-9 * h;
    br.dedup_by(|a, b| (*a - *b).abs() <= tol);
    let mut z = vec![0.0];
    for w in br.windows(2) {
        let (a, b) = (w[0], w[1]);
        let ts = graded_params_nearest(b - a, field.h_min(), |t| {
            LAYER_FACTOR * field.h_z(a + t * (b - a))
        });
        z.extend(ts[1..].iter().map(|t| a + t * (b - a)));
        // Exact breakpoint, not a + 1·(b − a) rounded.
        if let Some(last) = z.last_mut() {
            *last = b;
        }
    }
    z
}

/// In-plane rectangle of a port: ([lo1, hi1], [lo2, hi2]).
fn port_rect(geom: &Geometry, i: usize) -> [[f64; 2]; 2] {
    let p = &geom.ports[i];
    let (a, b) = if p.rotated {
        (p.height, p.width)
    } else {
        (p.width, p.height)
    };
    [
        [p.center[0] - 0.5 * a, p.center[0] + 0.5 * a],
        [p.center[1] - 0.5 * b, p.center[1] + 0.5 * b],
    ]
}

fn inside(r: [[f64; 2]; 2], u: f64, v: f64) -> bool {
    u > r[0][0] && u < r[0][1] && v > r[1][0] && v < r[1][1]
}

/// Tag of a boundary triangle from its centroid (mm). Port outlines are mesh edges, so a
/// triangle is wholly inside or outside a port and its centroid decides.
fn tag_of(geom: &Geometry, c: [f64; 3], top_or_bottom: Option<bool>) -> BoundaryTag {
    for i in 0..geom.ports.len() {
        let r = port_rect(geom, i);
        let hit = match (geom.ports[i].wall, top_or_bottom, geom.cavity.shape) {
            (PortWall::BoxWall { axis: 2, positive }, Some(top), _) => {
                positive == top && inside(r, c[0], c[1])
            }
            (PortWall::Top, Some(true), _) | (PortWall::Bottom, Some(false), _) => {
                inside(r, c[0], c[1])
            }
            (PortWall::BoxWall { axis, positive }, None, CavityShape::Box { size }) if axis < 2 => {
                let wall = if positive { size[axis] } else { 0.0 };
                let on = (c[axis] - wall).abs() <= 1e-9 * size[axis].max(1.0);
                let u = if axis == 0 { c[1] } else { c[0] };
                on && inside(r, u, c[2])
            }
            (PortWall::Side { angle_deg }, None, CavityShape::Cylinder { radius, .. }) => {
                let d = c[1].atan2(c[0]) - angle_deg.to_radians();
                let d = (d + std::f64::consts::PI).rem_euclid(2.0 * std::f64::consts::PI)
                    - std::f64::consts::PI;
                inside(r, radius * d, c[2])
            }
            _ => false,
        };
        if hit {
            return BoundaryTag::Port(i);
        }
    }
    BoundaryTag::Wall
}

fn centroid2(p: &[P2], t: [u32; 3]) -> P2 {
    let [a, b, c] = t.map(|i| p[i as usize]);
    [(a[0] + b[0] + c[0]) / 3.0, (a[1] + b[1] + c[1]) / 3.0]
}

/// Builds the tetrahedral mesh (metres) from the cross-section and layer heights.
pub(crate) fn extrude(
    geom: &Geometry,
    field: &SizeField,
    outline: &Outline,
    planar: &Planar,
    z: &[f64],
) -> Result<TetMesh, MesherError> {
    let n2 = planar.points.len();
    let ntri = planar.tris.len();
    let nl = z.len() - 1;
    if ntri == 0 || nl == 0 {
        return Err(MesherError::Settings(format!(
            "the cross-section gave {ntri} triangles and the height {nl} layers; the cavity \
             is too small or too flat for the element size"
        )));
    }
    let n_tets = 3usize.saturating_mul(ntri).saturating_mul(nl);
    if n_tets > MAX_TETS {
        return Err(MesherError::TooLarge {
            what: "tetrahedra",
            limit: MAX_TETS,
        });
    }
    let n_nodes = n2 * (nl + 1);
    if n_nodes >= u32::MAX as usize {
        return Err(MesherError::TooLarge {
            what: "nodes",
            limit: u32::MAX as usize,
        });
    }

    let mut nodes = Vec::with_capacity(n_nodes);
    for &zk in z {
        nodes.extend(
            planar
                .points
                .iter()
                .map(|p| [p[0] * MM, p[1] * MM, zk * MM]),
        );
    }

    // Region: the load whose footprint holds the triangle's centroid and whose z-range
    // holds the layer's mid-height (outlines and z-breakpoints are mesh entities, so
    // every prism lies wholly inside or outside each load).
    let tri_loads: Vec<Vec<u32>> = planar
        .tris
        .par_iter()
        .map(|&t| {
            let c = centroid2(&planar.points, t);
            (0..outline.footprints.len() as u32)
                .filter(|&i| point_in_polygon(&outline.footprints[i as usize], c))
                .collect()
        })
        .collect();
    let layer_loads: Vec<Vec<bool>> = (0..nl)
        .map(|k| {
            let zm = 0.5 * (z[k] + z[k + 1]);
            field
                .loads
                .iter()
                .map(|l| {
                    let [b, t] = l.z_range();
                    zm > b && zm < t
                })
                .collect()
        })
        .collect();

    let mut tets = vec![[0u32; 4]; n_tets];
    let mut tet_region = vec![0u32; n_tets];
    tets.par_chunks_mut(3 * ntri)
        .zip(tet_region.par_chunks_mut(3 * ntri))
        .enumerate()
        .for_each(|(k, (tk, rk))| {
            let lo = (k * n2) as u32;
            let hi = ((k + 1) * n2) as u32;
            for (t, tri) in planar.tris.iter().enumerate() {
                // Rotate so the smallest index comes first (keeps counter-clockwise order).
                let m = (0..3).min_by_key(|&j| tri[j]).unwrap_or(0);
                let v = [tri[m], tri[(m + 1) % 3], tri[(m + 2) % 3]];
                let p = [
                    lo + v[0],
                    lo + v[1],
                    lo + v[2],
                    hi + v[0],
                    hi + v[1],
                    hi + v[2],
                ];
                // The bottom copy of a vertex always has the smaller index, so the
                // Dompierre test min(p1, p5) < min(p2, p4) reduces to v1 < v2.
                let split = if v[1] < v[2] {
                    [[0, 1, 2, 5], [0, 1, 5, 4], [0, 4, 5, 3]]
                } else {
                    [[0, 1, 2, 4], [0, 4, 2, 5], [0, 4, 5, 3]]
                };
                let region = tri_loads[t]
                    .iter()
                    .find(|&&i| layer_loads[k][i as usize])
                    .map_or(0, |&i| i + 1);
                for (j, s) in split.iter().enumerate() {
                    tk[3 * t + j] = s.map(|q| p[q]);
                    rk[3 * t + j] = region;
                }
            }
        });
    // Make every tet right-handed (positive signed volume) for the solver's convenience.
    tets.par_iter_mut().for_each(|t| {
        let [a, b, c, d] = t.map(|i| nodes[i as usize]);
        let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
        let v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        let w = [d[0] - a[0], d[1] - a[1], d[2] - a[2]];
        let det = u[0] * (v[1] * w[2] - v[2] * w[1]) - u[1] * (v[0] * w[2] - v[2] * w[0])
            + u[2] * (v[0] * w[1] - v[1] * w[0]);
        if det < 0.0 {
            t.swap(2, 3);
        }
    });

    let (boundary, boundary_tag) = boundary_faces(geom, planar, z);

    let mut regions = vec![RegionInfo {
        name: "air".to_string(),
    }];
    regions.extend(geom.loads.iter().map(|l| RegionInfo {
        name: l.name.clone(),
    }));
    Ok(TetMesh {
        nodes,
        tets,
        tet_region,
        boundary,
        boundary_tag,
        regions,
    })
}

/// Boundary: floor and ceiling copies of the triangles, and the side quads split along the
/// same diagonals as the prisms; all oriented with outward normals, each with its tag.
fn boundary_faces(
    geom: &Geometry,
    planar: &Planar,
    z: &[f64],
) -> (Vec<[u32; 3]>, Vec<BoundaryTag>) {
    let n2 = planar.points.len();
    let nl = z.len() - 1;
    let mut boundary = Vec::new();
    let mut boundary_tag = Vec::new();
    let top = (nl * n2) as u32;
    let h_total = *z.last().unwrap_or(&0.0);
    for &t in &planar.tris {
        let c = centroid2(&planar.points, t);
        boundary.push([t[0], t[2], t[1]]);
        boundary_tag.push(tag_of(geom, [c[0], c[1], 0.0], Some(false)));
        boundary.push(t.map(|i| i + top));
        boundary_tag.push(tag_of(geom, [c[0], c[1], h_total], Some(true)));
    }
    for &[a, b] in &planar.boundary_edges {
        let (pa, pb) = (planar.points[a as usize], planar.points[b as usize]);
        for k in 0..nl {
            let (lo, hi) = ((k * n2) as u32, ((k + 1) * n2) as u32);
            let (a0, b0, a1, b1) = (lo + a, lo + b, hi + a, hi + b);
            let tris = if a < b {
                [[a0, b0, b1], [a0, b1, a1]]
            } else {
                [[a0, b0, a1], [b0, b1, a1]]
            };
            let c = [
                0.5 * (pa[0] + pb[0]),
                0.5 * (pa[1] + pb[1]),
                0.5 * (z[k] + z[k + 1]),
            ];
            let tag = tag_of(geom, c, None);
            for t in tris {
                boundary.push(t);
                boundary_tag.push(tag);
            }
        }
    }
    (boundary, boundary_tag)
}
