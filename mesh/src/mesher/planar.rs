//! The 2-D mesh of the cross-section: a constrained Delaunay triangulation (spade) of the
//! outline graph plus graded interior points, improved by Delaunay refinement.
//!
//! Interior points come from triangular lattices of the local spacing (see
//! `interior_points`), so their density follows the graded size field; Delaunay
//! refinement (Ruppert/Chew, as implemented by spade) then removes the few skinny
//! triangles left where lattices of different spacing meet or where outlines pass close
//! to each other. This gives triangles with angles
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

/// Spacing of interior points relative to the target size h. A triangulation of points
/// a apart, extruded in layers LAYER_FACTOR·h thick, has tets whose six edges average
/// about 1.16 a (equilateral base, square sides: four edges a, two diagonals √2 a), so
/// 0.9 puts the mean edge within a few per cent of h (measured by the tests).
pub(crate) const SPACING_FACTOR: f64 = 0.9;

/// Interior points inside the cavity, away from the outline vertices, about
/// `SPACING_FACTOR·h_xy` apart.
///
/// Points are taken from triangular (hexagonal) lattices sharing one origin: each cell of
/// a quadtree fine enough for the size field to be nearly constant across it contributes
/// the lattice points of spacing a = SPACING_FACTOR·h_xy(centre) that fall in it. Where
/// the size is uniform neighbouring cells use the same lattice, giving equilateral
/// triangles of exactly the requested size (a quadtree's leaf centres can only give
/// spacings of side/2^k, up to twice too fine, and right-angled triangles). Where the size
/// is graded the lattices of neighbouring cells differ; candidates are accepted finest
/// first and rejected when closer than 0.75 a to an accepted point, so the seams hold no
/// crowded points, and Delaunay refinement repairs the few skinny triangles left there.
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
    let spacing = |p: P2| SPACING_FACTOR * field.h_xy(p);
    // Candidates (spacing, point) from the lattice points of each quadtree cell.
    let mut cand: Vec<(f64, P2)> = Vec::new();
    let mut stack = vec![(lo, side)];
    while let Some((corner, s)) = stack.pop() {
        let c = [corner[0] + 0.5 * s, corner[1] + 0.5 * s];
        if convex_depth(&outline.cavity, c) < -0.71 * s {
            continue; // wholly outside the cavity
        }
        let a = spacing(c);
        // h is GRADING-Lipschitz: across the cell it varies by at most GRADING·0.71·s.
        // Split until that is small against a, or the cell holds about one point.
        if s > a && GRADING * 0.71 * s > 0.05 * a {
            let hs = 0.5 * s;
            for (ox, oy) in [(0.0, 0.0), (hs, 0.0), (0.0, hs), (hs, hs)] {
                stack.push(([corner[0] + ox, corner[1] + oy], hs));
            }
            continue;
        }
        // Lattice rows y = lo + j·dy, every other row shifted by a/2.
        let dy = a * 3f64.sqrt() / 2.0;
        let j0 = ((corner[1] - lo[1]) / dy).ceil() as i64;
        let j1 = ((corner[1] + s - lo[1]) / dy).ceil() as i64; // half-open cell
        for j in j0..j1 {
            let y = lo[1] + j as f64 * dy;
            let shift = if j.rem_euclid(2) == 1 { 0.5 * a } else { 0.0 };
            let i0 = ((corner[0] - lo[0] - shift) / a).ceil() as i64;
            let i1 = ((corner[0] + s - lo[0] - shift) / a).ceil() as i64;
            for i in i0..i1 {
                let p = [lo[0] + shift + i as f64 * a, y];
                if convex_depth(&outline.cavity, p) > 0.5 * a {
                    cand.push((a, p));
                }
            }
        }
        if cand.len() > 4 * limit {
            return Err(MesherError::TooLarge {
                what: "cross-section points (for the tetrahedron limit)",
                limit,
            });
        }
    }
    // Finest first, so coarse lattices give way to fine ones at the seams.
    cand.sort_by(|x, y| x.0.total_cmp(&y.0));
    let cell = SPACING_FACTOR * field.h_min();
    let key = |p: P2| ((p[0] / cell).floor() as i64, (p[1] / cell).floor() as i64);
    let mut grid: HashMap<(i64, i64), Vec<P2>> = HashMap::new();
    for &p in &outline.points {
        grid.entry(key(p)).or_default().push(p);
    }
    let near = |grid: &HashMap<(i64, i64), Vec<P2>>, c: P2, r: f64| {
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
    for (a, p) in cand {
        // Outline vertices lie up to h apart along the outline: keep interior points
        // 0.75 a away from them (and from each other), so no triangle there is flat.
        if near(&grid, p, 0.75 * a) {
            continue;
        }
        grid.entry(key(p)).or_default().push(p);
        out.push(p);
        if out.len() > limit {
            return Err(MesherError::TooLarge {
                what: "cross-section points (for the tetrahedron limit)",
                limit,
            });
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
