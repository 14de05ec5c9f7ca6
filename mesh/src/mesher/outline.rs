//! The cross-section's constraint graph: cavity outline, load footprints, port outlines
//! on the top and bottom walls and the ends of side-wall ports, cut into pieces that
//! neither cross nor overlap, each subdivided by the size field.
//!
//! Overlapping footprints (a bowl standing on a larger plate) and loads touching the
//! walls make outlines cross or run along each other; splitting them here, once, at
//! shared points means every piece is triangulated from identical vertices whichever
//! outline it came from.

use super::sizing::{graded_params, SizeField};
use super::MesherError;
use crate::geometry::{CavityShape, Geometry, LoadShape, PortWall};
use std::collections::HashMap;
use std::f64::consts::PI;

pub(crate) type P2 = [f64; 2];

/// The cross-section constraint graph.
#[derive(Clone, Debug)]
pub(crate) struct Outline {
    /// Cavity outline, counter-clockwise, convex.
    pub cavity: Vec<P2>,
    /// Footprint polygon of each load (the shape the mesh gives it).
    pub footprints: Vec<Vec<P2>>,
    /// Constraint vertices.
    pub points: Vec<P2>,
    /// Constraint edges (indices into `points`), short enough for the size field.
    pub edges: Vec<[usize; 2]>,
}

/// Side-wall port ends as angles (cylinder) or points on the box outline.
fn side_port_points(geom: &Geometry) -> (Vec<f64>, Vec<P2>) {
    let mut angles = Vec::new();
    let mut points = Vec::new();
    for port in &geom.ports {
        let along = if port.rotated {
            port.height
        } else {
            port.width
        };
        let lo = port.center[0] - 0.5 * along;
        let hi = port.center[0] + 0.5 * along;
        match (port.wall, geom.cavity.shape) {
            (PortWall::Side { angle_deg }, CavityShape::Cylinder { radius, .. }) => {
                let a0 = angle_deg.to_radians();
                angles.push(a0 + lo / radius);
                angles.push(a0 + hi / radius);
            }
            (PortWall::BoxWall { axis, positive }, CavityShape::Box { size }) if axis < 2 => {
                // x-walls carry (y, z), y-walls (x, z): the first in-plane coordinate runs
                // along the outline side.
                let fixed = if positive { size[axis] } else { 0.0 };
                for s in [lo, hi] {
                    points.push(if axis == 0 { [fixed, s] } else { [s, fixed] });
                }
            }
            _ => {}
        }
    }
    (angles, points)
}

/// Rectangles of ports on horizontal walls (box ±z, cylinder top/bottom), in (x, y).
pub(crate) fn horizontal_port_rect(geom: &Geometry, i: usize) -> Option<(bool, [P2; 2])> {
    let port = &geom.ports[i];
    let top = match port.wall {
        PortWall::BoxWall { axis: 2, positive } => positive,
        PortWall::Top => true,
        PortWall::Bottom => false,
        _ => return None,
    };
    let (w, h) = if port.rotated {
        (port.height, port.width)
    } else {
        (port.width, port.height)
    };
    let c = port.center;
    Some((
        top,
        [
            [c[0] - 0.5 * w, c[1] - 0.5 * h],
            [c[0] + 0.5 * w, c[1] + 0.5 * h],
        ],
    ))
}

fn rect(lo: P2, hi: P2) -> Vec<P2> {
    vec![lo, [hi[0], lo[1]], hi, [lo[0], hi[1]]]
}

/// Angles (radians, increasing, within [a0, a0 + 2π)) dividing a circle of radius `r`
/// about `c` so that no arc is longer than the size field there.
fn circle_angles(c: P2, r: f64, field: &SizeField, a0: f64) -> Vec<f64> {
    let len = 2.0 * PI * r;
    let at = |t: f64| {
        let a = a0 + 2.0 * PI * t;
        [c[0] + r * a.cos(), c[1] + r * a.sin()]
    };
    let mut t = graded_params(len, field.h_min(), |t| field.h_xy(at(t)));
    let sides = field.min_circle_sides;
    if t.len() - 1 < sides {
        t = (0..=sides).map(|k| k as f64 / sides as f64).collect();
    }
    t.pop();
    t.into_iter().map(|t| a0 + 2.0 * PI * t).collect()
}

impl Outline {
    pub fn build(geom: &Geometry, field: &SizeField) -> Result<Self, MesherError> {
        let (wall_angles, side_points) = side_port_points(geom);
        let mut footprints = Vec::new();
        for sl in &field.loads {
            footprints.push(match sl.shape {
                LoadShape::Box { .. } => sl
                    .shape
                    .box_footprint()
                    .map_or_else(Vec::new, |f| f.corners().to_vec()),
                LoadShape::Cylinder { center, radius, .. } => {
                    circle_angles(center, radius, field, 0.0)
                        .into_iter()
                        .map(|a| [center[0] + radius * a.cos(), center[1] + radius * a.sin()])
                        .collect()
                }
            });
        }
        let mut port_polys = Vec::new();
        for i in 0..geom.ports.len() {
            if let Some((_, [lo, hi])) = horizontal_port_rect(geom, i) {
                port_polys.push(rect(lo, hi));
            }
        }
        let cavity = match geom.cavity.shape {
            CavityShape::Box { size } => rect([0.0, 0.0], [size[0], size[1]]),
            CavityShape::Cylinder { radius, .. } => {
                cylinder_wall(radius, field, &mut footprints, &mut port_polys, wall_angles)
            }
        };
        let clamp = |p: P2| clamp_into_convex(&cavity, p);
        let mut polys: Vec<Vec<P2>> = vec![cavity.clone()];
        for (i, poly) in footprints.iter_mut().enumerate() {
            for p in poly.iter_mut() {
                *p = clamp(*p);
            }
            poly.dedup();
            if polygon_area(poly) <= 0.0 {
                return Err(MesherError::Outside {
                    what: format!("load '{}'", geom.loads[i].name),
                });
            }
            polys.push(poly.clone());
        }
        for poly in port_polys {
            polys.push(poly.into_iter().map(clamp).collect());
        }

        // Raw segments and points.
        let scale = polys[0]
            .iter()
            .fold(0.0f64, |m, p| m.max(p[0].abs()).max(p[1].abs()));
        let tol = 1e-9 * scale.max(1.0);
        let mut pts = PointSet::new(tol);
        let mut segs: Vec<[usize; 2]> = Vec::new();
        for poly in &polys {
            let ids: Vec<usize> = poly.iter().map(|&p| pts.insert(p)).collect();
            for k in 0..ids.len() {
                let (a, b) = (ids[k], ids[(k + 1) % ids.len()]);
                if a != b {
                    segs.push([a, b]);
                }
            }
        }
        for p in side_points {
            pts.insert(p);
        }
        // Crossings.
        let n_seg = segs.len();
        for i in 0..n_seg {
            for j in i + 1..n_seg {
                let [a, b] = segs[i].map(|k| pts.p[k]);
                let [c, d] = segs[j].map(|k| pts.p[k]);
                if let Some(x) = crossing(a, b, c, d, tol) {
                    pts.insert(x);
                }
            }
        }
        // Split every segment at every point lying on it; dedupe the pieces.
        let mut pieces: Vec<[usize; 2]> = Vec::new();
        for &[a, b] in &segs {
            let (pa, pb) = (pts.p[a], pts.p[b]);
            let d = [pb[0] - pa[0], pb[1] - pa[1]];
            let l2 = d[0] * d[0] + d[1] * d[1];
            let mut on: Vec<(f64, usize)> = vec![(0.0, a), (1.0, b)];
            for (k, q) in pts.p.iter().enumerate() {
                if k == a || k == b {
                    continue;
                }
                let t = ((q[0] - pa[0]) * d[0] + (q[1] - pa[1]) * d[1]) / l2;
                if t <= 0.0 || t >= 1.0 {
                    continue;
                }
                let off = ((q[0] - pa[0]) * d[1] - (q[1] - pa[1]) * d[0]).abs() / l2.sqrt();
                if off <= tol {
                    on.push((t, k));
                }
            }
            on.sort_by(|x, y| x.0.total_cmp(&y.0));
            for w in on.windows(2) {
                let (u, v) = (w[0].1.min(w[1].1), w[0].1.max(w[1].1));
                if u != v {
                    pieces.push([u, v]);
                }
            }
        }
        pieces.sort_unstable();
        pieces.dedup();

        // Subdivide each piece from its lower-numbered end, so a piece shared by two
        // outlines gets the same vertices.
        let circle = match geom.cavity.shape {
            CavityShape::Cylinder { radius, .. } => Some(radius),
            CavityShape::Box { .. } => None,
        };
        let mut points = pts.p.clone();
        let mut edges = Vec::new();
        for &[u, v] in &pieces {
            let (pu, pv) = (points[u], points[v]);
            let len = ((pv[0] - pu[0]).powi(2) + (pv[1] - pu[1]).powi(2)).sqrt();
            let at = |t: f64| [pu[0] + t * (pv[0] - pu[0]), pu[1] + t * (pv[1] - pu[1])];
            let on_wall = |p: P2| circle.is_some_and(|r| (p[0].hypot(p[1]) - r).abs() <= tol);
            let ts = if on_wall(pu) && on_wall(pv) {
                vec![0.0, 1.0] // a wall chord, already no longer than the local size
            } else {
                graded_params(len, field.h_min(), |t| field.h_xy(at(t)))
            };
            let mut prev = u;
            for &t in &ts[1..ts.len() - 1] {
                points.push(at(t));
                let id = points.len() - 1;
                edges.push([prev, id]);
                prev = id;
            }
            edges.push([prev, v]);
        }
        Ok(Self {
            cavity,
            footprints,
            points,
            edges,
        })
    }
}

/// The cylinder cavity's wall polygon: vertices on the circle at the local size, with port
/// ends and load vertices near the wall (snapped onto it here) as wall vertices.
fn cylinder_wall(
    radius: f64,
    field: &SizeField,
    footprints: &mut [Vec<P2>],
    port_polys: &mut [Vec<P2>],
    mut wall_angles: Vec<f64>,
) -> Vec<P2> {
    // Footprint vertices near the wall (a load touching it) are snapped onto
    // the circle and made wall vertices too, so the two outlines share the
    // chord there instead of forming slivers between nearly equal chords.
    for poly in footprints.iter_mut().chain(port_polys.iter_mut()) {
        for p in poly.iter_mut() {
            let r = p[0].hypot(p[1]);
            if r > radius - 0.25 * field.h_xy(*p) {
                let a = p[1].atan2(p[0]);
                *p = [radius * a.cos(), radius * a.sin()];
                wall_angles.push(a);
            }
        }
    }
    let mut angles = circle_angles([0.0, 0.0], radius, field, 0.0);
    // Port ends and snapped vertices must be wall vertices; drop regular
    // vertices too close to them so no sliver edge appears.
    for &a in &wall_angles {
        let a = a.rem_euclid(2.0 * PI);
        let tol = 0.3 * field.h_xy([radius * a.cos(), radius * a.sin()]) / radius;
        angles.retain(|&b| {
            let d = (b - a).rem_euclid(2.0 * PI);
            d.min(2.0 * PI - d) > tol
        });
    }
    angles.extend(wall_angles.iter().map(|a| a.rem_euclid(2.0 * PI)));
    angles.sort_by(f64::total_cmp);
    angles.dedup_by(|a, b| (*a - *b).abs() < 1e-12);
    // Removing vertices may leave arcs longer than the local size: fill them
    // with evenly spaced wall vertices (never split chords, whose midpoints
    // would lie inside the circle).
    let mut filled = Vec::with_capacity(angles.len());
    for k in 0..angles.len() {
        let a = angles[k];
        let b = if k + 1 < angles.len() {
            angles[k + 1]
        } else {
            angles[0] + 2.0 * PI
        };
        let mid = 0.5 * (a + b);
        let h = field.h_xy([radius * mid.cos(), radius * mid.sin()]);
        let h = h.min(field.h_xy([radius * a.cos(), radius * a.sin()]));
        let n = ((b - a) * radius / h - 1e-9).ceil().max(1.0) as usize;
        filled.extend((0..n).map(|j| a + (b - a) * j as f64 / n as f64));
    }
    filled
        .iter()
        .map(|a| [radius * a.cos(), radius * a.sin()])
        .collect()
}

/// Signed area (positive for counter-clockwise).
pub(crate) fn polygon_area(p: &[P2]) -> f64 {
    let n = p.len();
    (0..n)
        .map(|i| {
            let (a, b) = (p[i], p[(i + 1) % n]);
            a[0] * b[1] - a[1] * b[0]
        })
        .sum::<f64>()
        * 0.5
}

/// Even-odd point-in-polygon test.
pub(crate) fn point_in_polygon(poly: &[P2], q: P2) -> bool {
    let n = poly.len();
    let mut inside = false;
    for i in 0..n {
        let (a, b) = (poly[i], poly[(i + 1) % n]);
        if (a[1] > q[1]) != (b[1] > q[1]) {
            let x = a[0] + (q[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0]);
            if q[0] < x {
                inside = !inside;
            }
        }
    }
    inside
}

/// Smallest signed distance from `q` to the edges' lines of a counter-clockwise convex
/// polygon: positive inside.
pub(crate) fn convex_depth(poly: &[P2], q: P2) -> f64 {
    let n = poly.len();
    (0..n)
        .map(|i| {
            let (a, b) = (poly[i], poly[(i + 1) % n]);
            let d = [b[0] - a[0], b[1] - a[1]];
            let l = (d[0] * d[0] + d[1] * d[1]).sqrt();
            ((q[0] - a[0]) * (-d[1]) + (q[1] - a[1]) * d[0]) / l
        })
        .fold(f64::INFINITY, f64::min)
}

/// Moves a point lying outside a convex polygon (a load touching a cylinder wall, whose
/// circle bulges past the wall's polygon) onto the polygon, towards its centroid.
fn clamp_into_convex(poly: &[P2], q: P2) -> P2 {
    if convex_depth(poly, q) >= 0.0 {
        return q;
    }
    let n = poly.len() as f64;
    let c = poly
        .iter()
        .fold([0.0, 0.0], |s, p| [s[0] + p[0] / n, s[1] + p[1] / n]);
    // Bisection on the segment c → q for the boundary crossing.
    let (mut lo, mut hi) = (0.0f64, 1.0f64);
    for _ in 0..60 {
        let m = 0.5 * (lo + hi);
        let p = [c[0] + m * (q[0] - c[0]), c[1] + m * (q[1] - c[1])];
        if convex_depth(poly, p) >= 0.0 {
            lo = m;
        } else {
            hi = m;
        }
    }
    [c[0] + lo * (q[0] - c[0]), c[1] + lo * (q[1] - c[1])]
}

/// Proper crossing point of segments ab and cd (interiors cross, not parallel).
fn crossing(a: P2, b: P2, c: P2, d: P2, tol: f64) -> Option<P2> {
    let r = [b[0] - a[0], b[1] - a[1]];
    let s = [d[0] - c[0], d[1] - c[1]];
    let den = r[0] * s[1] - r[1] * s[0];
    let lr = (r[0] * r[0] + r[1] * r[1]).sqrt();
    let ls = (s[0] * s[0] + s[1] * s[1]).sqrt();
    if den.abs() <= 1e-12 * lr * ls {
        return None;
    }
    let qp = [c[0] - a[0], c[1] - a[1]];
    let t = (qp[0] * s[1] - qp[1] * s[0]) / den;
    let u = (qp[0] * r[1] - qp[1] * r[0]) / den;
    let (et, eu) = (tol / lr, tol / ls);
    if t > et && t < 1.0 - et && u > eu && u < 1.0 - eu {
        Some([a[0] + t * r[0], a[1] + t * r[1]])
    } else {
        None
    }
}

/// Points merged when closer than a tolerance (grid hash, 3×3 neighbourhood).
struct PointSet {
    p: Vec<P2>,
    grid: HashMap<(i64, i64), Vec<usize>>,
    tol: f64,
}

impl PointSet {
    fn new(tol: f64) -> Self {
        Self {
            p: Vec::new(),
            grid: HashMap::new(),
            tol,
        }
    }

    fn key(&self, q: P2) -> (i64, i64) {
        let c = 4.0 * self.tol;
        ((q[0] / c).floor() as i64, (q[1] / c).floor() as i64)
    }

    fn insert(&mut self, q: P2) -> usize {
        let (kx, ky) = self.key(q);
        for dx in -1..=1 {
            for dy in -1..=1 {
                if let Some(list) = self.grid.get(&(kx + dx, ky + dy)) {
                    for &i in list {
                        let p = self.p[i];
                        if (p[0] - q[0]).hypot(p[1] - q[1]) <= self.tol {
                            return i;
                        }
                    }
                }
            }
        }
        self.p.push(q);
        let id = self.p.len() - 1;
        self.grid.entry((kx, ky)).or_default().push(id);
        id
    }
}
