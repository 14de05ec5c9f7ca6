//! A riding load against the feed apertures: at every plate angle each load on the plate
//! must stay clear of every port's aperture.
//!
//! A load lies inside the cavity (checked first), so it can reach an aperture only where
//! it touches the aperture's wall. Its contact with a wall is the set of its points within
//! the geometric tolerance `tol` of the wall, taken in the wall's in-plane coordinates
//! (those of [`PortWall`]):
//! - a box or cylinder cavity's flat walls at z = 0 or z = H: the load's footprint, when
//!   its bottom or top lies on that wall;
//! - a box's side walls (x or y = 0 or size): the footprint's extent along the wall
//!   within `tol` of it (a turned box touches with a corner, an unturned one with a face,
//!   a cylinder along a vertical line), times the load's z range;
//! - a cylinder cavity's side: the azimuths of the footprint's points within `tol` of the
//!   radius (a box's corners, a cylinder load's farthest point; every azimuth for a
//!   cylinder load filling the cavity), times the load's z range. The aperture spans
//!   φ = angle_deg + u/R ± (extent along the arc)/(2R) and its z extent, as in
//!   [`crate::geometry::ports`].
//!
//! The load meets the aperture when this contact set reaches more than `tol` inside the
//! aperture's rectangle; a load touching only the aperture's rim is clear, as loads may
//! touch one another and ports may touch. The rule is our own (no source): a riding load
//! that reaches into a feed aperture at some angle is a placement the plate cannot have
//! (the load would block the guide's mouth and the port's reference plane would sit on
//! the load).

use super::super::validate::separating_overlap;
use super::super::{CavityShape, LoadShape, Port, PortWall};

/// Whether the closed interval [s0, s1] reaches more than `tol` inside [a0, a1].
fn reaches(s: [f64; 2], a: [f64; 2], tol: f64) -> bool {
    s[0].max(a[0] + tol) < s[1].min(a[1] - tol)
}

/// The aperture's rectangle in its wall's in-plane coordinates: ([u0, u1], [v0, v1]).
fn rectangle(port: &Port) -> ([f64; 2], [f64; 2]) {
    let [du, dv] = port.in_plane_extent();
    let [cu, cv] = port.center;
    (
        [cu - du / 2.0, cu + du / 2.0],
        [cv - dv / 2.0, cv + dv / 2.0],
    )
}

/// The convex polygon `poly` cut to the half-plane where coordinate `axis` is ≤ `bound`
/// (`keep_below`) or ≥ it (Sutherland–Hodgman against one edge).
fn clip(poly: &[[f64; 2]], axis: usize, bound: f64, keep_below: bool) -> Vec<[f64; 2]> {
    let inside = |p: &[f64; 2]| {
        if keep_below {
            p[axis] <= bound
        } else {
            p[axis] >= bound
        }
    };
    let mut out = Vec::new();
    for k in 0..poly.len() {
        let (p, q) = (poly[k], poly[(k + 1) % poly.len()]);
        if inside(&p) {
            out.push(p);
        }
        if inside(&p) != inside(&q) {
            let t = (bound - p[axis]) / (q[axis] - p[axis]);
            out.push([p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])]);
        }
    }
    out
}

/// The extent along horizontal axis `1 − axis` of the footprint's points within `tol` of
/// the side wall `axis` at `wall` (`positive`: the wall at the far side). None without
/// contact.
fn side_contact(
    shape: &LoadShape,
    axis: usize,
    wall: f64,
    positive: bool,
    tol: f64,
) -> Option<[f64; 2]> {
    let other = 1 - axis;
    match (*shape, shape.box_footprint()) {
        (_, Some(f)) => {
            let bound = if positive { wall - tol } else { wall + tol };
            let part = clip(&f.corners(), axis, bound, !positive);
            if part.is_empty() {
                return None;
            }
            let lo = part.iter().map(|p| p[other]).fold(f64::INFINITY, f64::min);
            let hi = part
                .iter()
                .map(|p| p[other])
                .fold(f64::NEG_INFINITY, f64::max);
            Some([lo, hi])
        }
        (LoadShape::Cylinder { center, radius, .. }, None) => {
            // Distance from the axis to the wall; the widest chord in the contact slab
            // lies at max(d − tol, 0) from the axis.
            let d = (wall - center[axis]).abs();
            if d - radius > tol {
                return None;
            }
            let e = (d - tol).max(0.0);
            let h = (radius * radius - e * e).max(0.0).sqrt();
            Some([center[other] - h, center[other] + h])
        }
        _ => None,
    }
}

/// Whether the footprint reaches more than `tol` inside the axis-aligned rectangle
/// `[x0, x1] × [y0, y1]` of a flat wall.
fn footprint_reaches(shape: &LoadShape, x: [f64; 2], y: [f64; 2], tol: f64) -> bool {
    match (*shape, shape.box_footprint()) {
        (_, Some(f)) => {
            let rect = [[x[0], y[0]], [x[1], y[0]], [x[1], y[1]], [x[0], y[1]]];
            separating_overlap(&f.corners(), &rect) > tol
        }
        (LoadShape::Cylinder { center, radius, .. }, None) => {
            // The circle against the rectangle shrunk by `tol` on every side.
            let (x, y) = ([x[0] + tol, x[1] - tol], [y[0] + tol, y[1] - tol]);
            if x[0] >= x[1] || y[0] >= y[1] {
                return false;
            }
            let dx = (x[0] - center[0]).max(center[0] - x[1]).max(0.0);
            let dy = (y[0] - center[1]).max(center[1] - y[1]).max(0.0);
            dx.hypot(dy) < radius
        }
        _ => false,
    }
}

fn span(a: [f64; 2]) -> String {
    format!("{:.3} .. {:.3}", a[0], a[1])
}

/// `Some(description)` when `shape` reaches into the aperture of `port` (see the module
/// docs); `tol` is the geometric tolerance (mm).
pub(in crate::geometry) fn meets_aperture(
    shape: &LoadShape,
    port: &Port,
    cavity: &CavityShape,
    tol: f64,
) -> Option<String> {
    let (u, v) = rectangle(port);
    let z = shape.z_range();
    let height = match *cavity {
        CavityShape::Box { size } => size[2],
        CavityShape::Cylinder { height, .. } => height,
    };
    let on_floor = z[0] <= tol;
    let on_roof = z[1] >= height - tol;
    let flat = |on: bool, name: &str| {
        (on && footprint_reaches(shape, u, v, tol)).then(|| {
            format!(
                "its {name} face lies on the wall and its footprint reaches into the \
                 aperture (x = {}, y = {} mm)",
                span(u),
                span(v)
            )
        })
    };
    match (*cavity, port.wall) {
        (CavityShape::Box { .. }, PortWall::BoxWall { axis: 2, positive }) => {
            if positive {
                flat(on_roof, "top")
            } else {
                flat(on_floor, "bottom")
            }
        }
        (CavityShape::Cylinder { .. }, PortWall::Top) => flat(on_roof, "top"),
        (CavityShape::Cylinder { .. }, PortWall::Bottom) => flat(on_floor, "bottom"),
        (CavityShape::Box { size }, PortWall::BoxWall { axis, positive }) => {
            let wall = if positive { size[axis] } else { 0.0 };
            let along = side_contact(shape, axis, wall, positive, tol)?;
            let names = ["x", "y", "z"];
            (reaches(along, u, tol) && reaches(z, v, tol)).then(|| {
                format!(
                    "it touches the wall {} = {wall} mm over {} = {} mm, z = {} mm, inside the \
                     aperture ({} = {}, z = {} mm)",
                    names[axis],
                    names[1 - axis],
                    span(along),
                    span(z),
                    names[1 - axis],
                    span(u),
                    span(v)
                )
            })
        }
        (CavityShape::Cylinder { radius, .. }, PortWall::Side { angle_deg }) => {
            if !reaches(z, v, tol) {
                return None;
            }
            let centre = angle_deg + ((u[0] + u[1]) / (2.0 * radius)).to_degrees();
            let half = ((u[1] - u[0]) / (2.0 * radius)).to_degrees();
            let tol_deg = (tol / radius).to_degrees();
            let gap = |phi: f64| {
                let g = (phi - centre).rem_euclid(360.0);
                g.min(360.0 - g)
            };
            let contacts: Vec<f64> = match (*shape, shape.box_footprint()) {
                (_, Some(f)) => f
                    .corners()
                    .iter()
                    .filter(|c| c[0].hypot(c[1]) >= radius - tol)
                    .map(|c| c[1].atan2(c[0]).to_degrees())
                    .collect(),
                (
                    LoadShape::Cylinder {
                        center, radius: r, ..
                    },
                    None,
                ) => {
                    let d = center[0].hypot(center[1]);
                    if d + r < radius - tol {
                        Vec::new()
                    } else if d <= tol {
                        // Fills the cavity: touches the side at every azimuth.
                        vec![centre]
                    } else {
                        vec![center[1].atan2(center[0]).to_degrees()]
                    }
                }
                _ => Vec::new(),
            };
            contacts
                .into_iter()
                .find(|&phi| gap(phi) < half - tol_deg)
                .map(|phi| {
                    format!(
                        "it touches the side wall at azimuth {:.3}°, z = {} mm, inside the \
                         aperture (azimuth {:.3}° ± {half:.3}°, z = {} mm)",
                        phi.rem_euclid(360.0),
                        span(z),
                        centre.rem_euclid(360.0),
                        span(v)
                    )
                })
        }
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    //! Contacts worked out by hand for an invented 300 × 300 × 200 mm box and a cylinder
    //! cavity of radius 150 mm, height 200 mm.
    use super::*;

    const TOL: f64 = 3e-7;

    fn port(wall: PortWall, center: [f64; 2]) -> Port {
        Port {
            name: "feed".into(),
            wall,
            center,
            width: 80.0,
            height: 40.0,
            rotated: false,
            power: None,
            phase_deg: 0.0,
        }
    }

    fn block(min: [f64; 3], max: [f64; 3], angle_deg: f64) -> LoadShape {
        LoadShape::Box {
            min,
            max,
            angle_deg,
        }
    }

    const BOX: CavityShape = CavityShape::Box {
        size: [300.0, 300.0, 200.0],
    };

    #[test]
    fn floor_aperture_under_a_load_on_the_floor() {
        // Aperture x = 110 .. 190, y = 130 .. 170 on the floor.
        let p = port(
            PortWall::BoxWall {
                axis: 2,
                positive: false,
            },
            [150.0, 150.0],
        );
        let on = block([180.0, 100.0, 0.0], [220.0, 140.0, 30.0], 0.0);
        assert!(meets_aperture(&on, &p, &BOX, TOL).is_some());
        // Lifted 1 mm: clear.
        let lifted = block([180.0, 100.0, 1.0], [220.0, 140.0, 30.0], 0.0);
        assert!(meets_aperture(&lifted, &p, &BOX, TOL).is_none());
        // Sharing only the aperture's edge x = 190: clear.
        let edge = block([190.0, 100.0, 0.0], [230.0, 140.0, 30.0], 0.0);
        assert!(meets_aperture(&edge, &p, &BOX, TOL).is_none());
        // A cylinder of radius 20 centred 25 mm beyond the edge x = 190 reaches no
        // further than 5 mm short of it; at 15 mm it reaches 5 mm in.
        let cyl = |cx: f64| LoadShape::Cylinder {
            center: [cx, 150.0],
            radius: 20.0,
            bottom: 0.0,
            height: 30.0,
        };
        assert!(meets_aperture(&cyl(215.0), &p, &BOX, TOL).is_none());
        assert!(meets_aperture(&cyl(205.0), &p, &BOX, TOL).is_some());
    }

    #[test]
    fn side_aperture_and_a_turned_box_corner() {
        // Aperture on x = 300: y = 110 .. 190, z = 80 .. 120.
        let p = port(
            PortWall::BoxWall {
                axis: 0,
                positive: true,
            },
            [150.0, 100.0],
        );
        // A 40 × 40 box turned 45° with its centre 20√2 mm from the wall: its corner
        // touches the wall at y = 150, inside the aperture, if its z range reaches z 80 .. 120.
        let c = 300.0 - 20.0 * 2f64.sqrt();
        let turned = |z0: f64, z1: f64| block([c - 20.0, 130.0, z0], [c + 20.0, 170.0, z1], 45.0);
        assert!(meets_aperture(&turned(90.0, 110.0), &p, &BOX, 1e-6).is_some());
        // Below the aperture (z up to 80, the aperture's edge): clear.
        assert!(meets_aperture(&turned(0.0, 80.0), &p, &BOX, 1e-6).is_none());
        // Moved 1 mm off the wall: clear.
        let off = block([c - 21.0, 130.0, 90.0], [c + 19.0, 170.0, 110.0], 45.0);
        assert!(meets_aperture(&off, &p, &BOX, 1e-6).is_none());
        // The low wall x = 0 does not see a load at the far wall.
        let q = port(
            PortWall::BoxWall {
                axis: 0,
                positive: false,
            },
            [150.0, 100.0],
        );
        assert!(meets_aperture(&turned(90.0, 110.0), &q, &BOX, 1e-6).is_none());
    }

    #[test]
    fn cylinder_cavity_side_aperture() {
        let cav = CavityShape::Cylinder {
            radius: 150.0,
            height: 200.0,
        };
        // Aperture at azimuth 90° (u = 0), ± 40/150 rad = ± 15.28°, z = 80 .. 120.
        let p = port(PortWall::Side { angle_deg: 90.0 }, [0.0, 100.0]);
        let cup = |az_deg: f64| {
            let (s, c) = az_deg.to_radians().sin_cos();
            LoadShape::Cylinder {
                center: [110.0 * c, 110.0 * s],
                radius: 40.0,
                bottom: 70.0,
                height: 40.0,
            }
        };
        assert!(meets_aperture(&cup(100.0), &p, &cav, TOL).is_some());
        assert!(meets_aperture(&cup(110.0), &p, &cav, TOL).is_none());
        assert!(meets_aperture(&cup(-90.0), &p, &cav, TOL).is_none());
    }
}
