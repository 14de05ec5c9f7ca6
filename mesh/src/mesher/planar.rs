//! The 2-D mesh of the cross-section: a constrained Delaunay triangulation (spade) of the
//! outline graph plus graded interior points, improved by Delaunay refinement.
//!
//! Interior points come from a quadtree whose leaves are no larger than the local size,
//! so their density follows the graded size field; Delaunay refinement (Ruppert/Chew, as
//! implemented by spade) then removes the few skinny triangles left where quadtree levels
//! meet or where outlines pass close to each other. This gives triangles with angles
//! ≥ 25° almost everywhere, which the extrusion turns into well-shaped prisms.

use super::outline::{convex_depth, Outline, P2};
use super::sizing::{SizeField, GRADING};
use super::MesherError;
use spade::handles::FixedVertexHandle;
use spade::{
    AngleLimit, ConstrainedDelaunayTriangulation, Point2, RefinementParameters, Triangulation,
};
use std::collections::HashMap;

/// Smallest triangle angle Delaunay refinement aims for (degrees). Ruppert's algorithm is
/// guaranteed to terminate up to about 20.7°; 25° works in practice with a vertex budget.
const ANGLE_LIMIT_DEG: f64 = 25.0;

/// Largest number of 2-D interior points before meshing is refused.
pub const MAX_2D_POINTS: usize = 4_000_000;

/// A triangulated cross-section.
#[derive(Clone, Debug)]
pub(crate) struct Planar {
    pub points: Vec<P2>,
    /// Counter-clockwise triangles.
    pub tris: Vec<[u32; 3]>,
    /// Outline edges with the domain on their left.
    pub boundary_edges: Vec<[u32; 2]>,
}

type Cdt = ConstrainedDelaunayTriangulation<Point2<f64>>;

fn terr(e: impl std::fmt::Debug) -> MesherError {
    MesherError::Triangulation(format!("{e:?}"))
}

/// Quadtree leaf centres inside the cavity, away from the outline vertices.
fn interior_points(
    outline: &Outline,
    field: &SizeField,
    limit: usize,
) -> Result<Vec<P2>, MesherError> {
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in &outline.cavity {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    let side = (hi[0] - lo[0]).max(hi[1] - lo[1]);
    // Grid of outline vertices for the proximity test.
    let cell = field.h_min();
    let key = |p: P2| ((p[0] / cell).floor() as i64, (p[1] / cell).floor() as i64);
    let mut grid: HashMap<(i64, i64), Vec<P2>> = HashMap::new();
    for &p in &outline.points {
        grid.entry(key(p)).or_default().push(p);
    }
    let near_outline = |c: P2, r: f64| {
        let (kx, ky) = key(c);
        let n = (r / cell).ceil() as i64;
        for dx in -n..=n {
            for dy in -n..=n {
                if let Some(v) = grid.get(&(kx + dx, ky + dy)) {
                    if v.iter().any(|p| (p[0] - c[0]).hypot(p[1] - c[1]) < r) {
                        return true;
                    }
                }
            }
        }
        false
    };
    let mut out = Vec::new();
    let mut stack = vec![(lo, side)];
    while let Some((corner, s)) = stack.pop() {
        let c = [corner[0] + 0.5 * s, corner[1] + 0.5 * s];
        if convex_depth(&outline.cavity, c) < -0.71 * s {
            continue; // wholly outside the cavity
        }
        let h = field.h_xy(c);
        // h is GRADING-Lipschitz, so this bounds h from below over the whole cell.
        if s > h - GRADING * 0.71 * s {
            let hs = 0.5 * s;
            for (ox, oy) in [(0.0, 0.0), (hs, 0.0), (0.0, hs), (hs, hs)] {
                stack.push(([corner[0] + ox, corner[1] + oy], hs));
            }
            continue;
        }
        if convex_depth(&outline.cavity, c) > 0.5 * h && !near_outline(c, 0.55 * h) {
            out.push(c);
            if out.len() > limit {
                return Err(MesherError::TooLarge {
                    what: "cross-section points (for the tetrahedron limit)",
                    limit,
                });
            }
        }
    }
    Ok(out)
}

impl Planar {
    pub fn build(outline: &Outline, field: &SizeField, limit: usize) -> Result<Self, MesherError> {
        let mut cdt = Cdt::new();
        let mut handle: Vec<FixedVertexHandle> = Vec::with_capacity(outline.points.len());
        for p in &outline.points {
            handle.push(cdt.insert(Point2::new(p[0], p[1])).map_err(terr)?);
        }
        for &[a, b] in &outline.edges {
            if handle[a] != handle[b] {
                cdt.add_constraint_and_split(handle[a], handle[b], |p| p);
            }
        }
        for p in interior_points(outline, field, limit)? {
            cdt.insert(Point2::new(p[0], p[1])).map_err(terr)?;
        }
        let n0 = cdt.num_vertices();
        let result = cdt.refine(
            RefinementParameters::<f64>::new()
                .with_angle_limit(AngleLimit::from_deg(ANGLE_LIMIT_DEG))
                .exclude_outer_faces(false)
                // Outline pieces are already no longer than the local size. Splitting them
                // would put midpoints off a curved wall, and a midpoint rounded to the
                // inside of the hull leaves a flat triangle behind.
                .keep_constraint_edges()
                .with_max_additional_vertices(n0 + 1000),
        );
        let _ = result.refinement_complete; // an incomplete refinement still gives a valid mesh

        let points: Vec<P2> = cdt
            .vertices()
            .map(|v| [v.position().x, v.position().y])
            .collect();
        let mut tris = Vec::with_capacity(cdt.num_inner_faces());
        for f in cdt.inner_faces() {
            let v = f.vertices().map(|v| v.fix().index() as u32);
            tris.push(v);
        }
        let mut boundary_edges = Vec::new();
        for e in cdt.directed_edges() {
            if e.face().is_outer() {
                let r = e.rev();
                boundary_edges.push([r.from().fix().index() as u32, r.to().fix().index() as u32]);
            }
        }
        let orient = |t: &[u32; 3], points: &[P2]| {
            let [a, b, c] = t.map(|i| points[i as usize]);
            (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
        };
        for t in &mut tris {
            if orient(t, &points) < 0.0 {
                t.swap(1, 2);
            }
        }
        for t in &tris {
            if orient(t, &points) <= 0.0 {
                let p = points[t[0] as usize];
                return Err(MesherError::Triangulation(format!(
                    "degenerate triangle at ({:.3}, {:.3}) mm",
                    p[0], p[1]
                )));
            }
        }
        Ok(Self {
            points,
            tris,
            boundary_edges,
        })
    }
}
