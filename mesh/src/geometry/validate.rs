//! Geometric validation: loads inside the cavity, loads not overlapping one another
//! (touching allowed), ports fitting on their walls.

use super::context::{fmt_list, Ctx, Res};
use super::*;
use crate::error::GeometryError;
use std::ops::Range;

impl Ctx<'_> {
    pub(super) fn load_inside(
        &self,
        cavity: &CavityShape,
        shape: &LoadShape,
        name: &str,
        span: Range<usize>,
    ) -> Res<()> {
        let tol = tolerance(cavity);
        let fail = |detail: String| {
            Err(GeometryError::LoadOutsideCavity {
                at: self.at(span.clone()),
                load: name.to_string(),
                detail,
            })
        };
        let h = match *cavity {
            CavityShape::Box { size } => size[2],
            CavityShape::Cylinder { height, .. } => height,
        };
        let [z0, z1] = shape.z_range();
        if z0 < -tol || z1 > h + tol {
            return fail(format!(
                "it spans z = {z0} .. {z1} mm but the cavity spans z = 0 .. {h} mm"
            ));
        }
        match (*cavity, *shape) {
            (CavityShape::Box { size }, LoadShape::Box { .. }) => {
                // The footprint is convex: it lies inside the rectangle when its corners do.
                let corners = shape
                    .box_footprint()
                    .map(|f| f.corners())
                    .unwrap_or_default();
                for i in 0..2 {
                    let lo = corners.iter().map(|c| c[i]).fold(f64::INFINITY, f64::min);
                    let hi = corners
                        .iter()
                        .map(|c| c[i])
                        .fold(f64::NEG_INFINITY, f64::max);
                    if lo < -tol || hi > size[i] + tol {
                        let ax = ["x", "y"][i];
                        return fail(format!(
                            "its footprint spans {ax} = {lo} .. {hi} mm but the cavity spans \
                             {ax} = 0 .. {} mm",
                            size[i]
                        ));
                    }
                }
            }
            (CavityShape::Box { size }, LoadShape::Cylinder { center, radius, .. }) => {
                for i in 0..2 {
                    let (a, b) = (center[i] - radius, center[i] + radius);
                    if a < -tol || b > size[i] + tol {
                        let ax = ["x", "y"][i];
                        return fail(format!(
                            "its footprint spans {ax} = {a} .. {b} mm (center {}, radius {radius}) \
                             but the cavity spans {ax} = 0 .. {} mm",
                            fmt_list(&center),
                            size[i]
                        ));
                    }
                }
            }
            (CavityShape::Cylinder { radius: rc, .. }, LoadShape::Box { .. }) => {
                // The footprint is convex, so its corners are its farthest points from the axis.
                let corners = shape
                    .box_footprint()
                    .map(|f| f.corners())
                    .unwrap_or_default();
                for [x, y] in corners {
                    let r = x.hypot(y);
                    if r > rc + tol {
                        return fail(format!(
                            "its corner (x, y) = ({x:.3}, {y:.3}) mm is {r:.3} mm from the axis but \
                             the cavity radius is {rc} mm (the cavity axis is at x = y = 0)"
                        ));
                    }
                }
            }
            (
                CavityShape::Cylinder { radius: rc, .. },
                LoadShape::Cylinder { center, radius, .. },
            ) => {
                let reach = center[0].hypot(center[1]) + radius;
                if reach > rc + tol {
                    return fail(format!(
                        "its footprint (center {}, radius {radius}) reaches {reach:.3} mm from the \
                         axis but the cavity radius is {rc} mm (the cavity axis is at x = y = 0)",
                        fmt_list(&center)
                    ));
                }
            }
        }
        Ok(())
    }

    pub(super) fn port_fits(
        &self,
        port: &Port,
        cavity: &CavityShape,
        span: Range<usize>,
    ) -> Res<()> {
        let tol = tolerance(cavity);
        let [du, dv] = port.in_plane_extent();
        let [cu, cv] = port.center;
        let (u0, u1, v0, v1) = (cu - du / 2.0, cu + du / 2.0, cv - dv / 2.0, cv + dv / 2.0);
        let fail = |detail: String| {
            Err(GeometryError::PortDoesNotFit {
                at: self.at(span.clone()),
                port: port.name.clone(),
                wall: port.wall.label().to_string(),
                detail,
            })
        };
        match (*cavity, port.wall) {
            (CavityShape::Box { size }, PortWall::BoxWall { axis, .. }) => {
                let names = ["x", "y", "z"];
                let [a, b] = PortWall::box_in_plane_axes(axis);
                let (ua, va) = (names[a], names[b]);
                if u0 < -tol || u1 > size[a] + tol || v0 < -tol || v1 > size[b] + tol {
                    return fail(format!(
                        "the aperture spans {ua} = {u0} .. {u1}, {va} = {v0} .. {v1} mm (center {}, \
                         {du} x {dv} mm) but the wall spans {ua} = 0 .. {}, {va} = 0 .. {} mm",
                        fmt_list(&port.center),
                        size[a],
                        size[b]
                    ));
                }
            }
            (CavityShape::Cylinder { radius, .. }, PortWall::Top | PortWall::Bottom) => {
                for (x, y) in [(u0, v0), (u0, v1), (u1, v0), (u1, v1)] {
                    let r = x.hypot(y);
                    if r > radius + tol {
                        return fail(format!(
                            "corner (x, y) = ({x}, {y}) mm of the aperture is {r:.3} mm from the \
                             axis but the wall radius is {radius} mm"
                        ));
                    }
                }
            }
            (CavityShape::Cylinder { radius, height }, PortWall::Side { .. }) => {
                // A flat aperture on a curved wall: it must span less than half the
                // circumference so it stays a single patch the mesher can place.
                let half_circ = std::f64::consts::PI * radius;
                if du >= half_circ {
                    return fail(format!(
                        "its extent along the arc is {du} mm, which must be below half the \
                         circumference (pi R = {half_circ:.3} mm)"
                    ));
                }
                if v0 < -tol || v1 > height + tol {
                    return fail(format!(
                        "it spans z = {v0} .. {v1} mm (center {}) but the wall spans z = 0 .. \
                         {height} mm",
                        fmt_list(&port.center)
                    ));
                }
            }
            // `port()` only builds walls that match the cavity shape.
            _ => {
                return fail("the wall does not belong to this cavity shape".to_string());
            }
        }
        Ok(())
    }
}

/// Geometric tolerance for containment and overlap tests: 1e-9 of the cavity's largest
/// extent. Shapes are given in mm with a handful of digits, so a load that "touches" a
/// wall or another load (a bowl standing on a plate) may differ from exact contact by
/// rounding only; a relative tolerance that small accepts such contact and nothing else.
pub(super) fn tolerance(cavity: &CavityShape) -> f64 {
    1e-9 * cavity.scale()
}

/// Overlap length of [a0, a1] and [b0, b1] (negative or zero when disjoint or touching).
fn interval_overlap(a0: f64, a1: f64, b0: f64, b1: f64) -> f64 {
    a1.min(b1) - a0.max(b0)
}

/// `Some(description)` when two load shapes share volume beyond `tol`; touching is allowed.
pub(super) fn overlap(a: &LoadShape, b: &LoadShape, tol: f64) -> Option<String> {
    let [az0, az1] = a.z_range();
    let [bz0, bz1] = b.z_range();
    if interval_overlap(az0, az1, bz0, bz1) <= tol {
        return None;
    }
    let zdesc = format!("both occupy z = {} .. {} mm", az0.max(bz0), az1.min(bz1));
    match (a.box_footprint(), b.box_footprint()) {
        (Some(fa), Some(fb)) => {
            let ov = separating_overlap(&fa.corners(), &fb.corners());
            (ov > tol).then(|| format!("their footprints intersect and {zdesc}"))
        }
        (Some(f), None) | (None, Some(f)) => {
            let ((LoadShape::Cylinder { center, radius, .. }, _)
            | (_, LoadShape::Cylinder { center, radius, .. })) = (*a, *b)
            else {
                return None;
            };
            // Distance from the circle's centre to the nearest point of the rectangle.
            let d = f.distance(center);
            (d < radius - tol).then(|| {
                format!(
                    "the circle (radius {radius} mm) reaches {:.3} mm into the box footprint and {zdesc}",
                    radius - d
                )
            })
        }
        (None, None) => cylinder_overlap(a, b, tol, &zdesc),
    }
}

/// Overlap of two cylinder footprints (`Some(description)` when they share area).
fn cylinder_overlap(a: &LoadShape, b: &LoadShape, tol: f64, zdesc: &str) -> Option<String> {
    match (*a, *b) {
        (
            LoadShape::Cylinder {
                center: ca,
                radius: ra,
                ..
            },
            LoadShape::Cylinder {
                center: cb,
                radius: rb,
                ..
            },
        ) => {
            let d = (ca[0] - cb[0]).hypot(ca[1] - cb[1]);
            (d < ra + rb - tol).then(|| {
                format!(
                    "their axes are {d:.3} mm apart, less than the radii sum {} mm, and {zdesc}",
                    ra + rb
                )
            })
        }
        _ => None,
    }
}

/// Least overlap of two convex polygons' projections over the normals of all their edges
/// (the separating-axis theorem for convex sets: disjoint exactly when some edge normal
/// separates them): positive when the polygons share area, and then the depth of that overlap.
pub(super) fn separating_overlap(a: &[[f64; 2]], b: &[[f64; 2]]) -> f64 {
    let mut least = f64::INFINITY;
    for poly in [a, b] {
        for k in 0..poly.len() {
            let (p, q) = (poly[k], poly[(k + 1) % poly.len()]);
            let (nx, ny) = (q[1] - p[1], p[0] - q[0]);
            let l = nx.hypot(ny);
            let span = |s: &[[f64; 2]]| {
                s.iter()
                    .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), c| {
                        let t = (c[0] * nx + c[1] * ny) / l;
                        (lo.min(t), hi.max(t))
                    })
            };
            let ((a0, a1), (b0, b1)) = (span(a), span(b));
            least = least.min(interval_overlap(a0, a1, b0, b1));
        }
    }
    least
}
