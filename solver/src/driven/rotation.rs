//! Heating averaged over a turntable's rotation, in the frame of the load.
//!
//! A load riding on a plate turned to angle θ about the vertical axis through c occupies
//! {c + R(θ)(p − c) : p in the load at θ = 0}, R(θ) the rotation by θ about z
//! ([`antinode_mesh::geometry::turntable`]). A point p fixed in the load (its frame at
//! θ = 0) is at x_θ(p) = c + R(θ)(p − c) at angle θ, so its heating density there is
//! q_θ(x_θ(p)). Averaged over the A angles of the plate:
//!
//!   q̄(p) = (1/A) Σ_θ q_θ(x_θ(p)),
//!
//! the density a material point receives on average over one turn when the plate turns
//! slowly against the field's settling time (the field follows the load, quasi-statically)
//! and the angles sample the turn evenly. The load frame is sampled on a regular grid
//! ([`load_grid`]): the centres of equal cells of the box load (in its own, turned axes)
//! or of the cells of a square grid over a cylinder's cross-section whose centres lie
//! within R − h/2 of the axis (h the cell side), so no sample sits in the faceted rim the
//! mesher makes of the circle. Each sample is the density of the field at the point,
//! q(x) = (ωε0ε″/2)|E(x)|² with E from the element functions of the tetrahedron holding
//! it ([`super::response::point_heating`]), not that tetrahedron's average: the cell
//! average differs from the point value by O(h) (the gradient times the distance to the
//! cell's centroid), the point value from the exact field by the element's O(h^p)
//! (tested against the analytic TE101 field in `tests/tests/point_heating.rs`).
//!
//! Uniformity of a sampled pattern: the grid cells have equal volumes, so the COV of
//! [`super::uniformity`] with equal weights, σ/μ over the samples. The COV of q̄ beside
//! the COV of each q_θ on the same grid shows what the plate evens out: q̄ is a mean of
//! the q_θ, so its σ is at most the mean of their σ (the triangle inequality for the
//! standard deviation), with equality when every angle heats the load's points alike.

use super::uniformity::{uniformity, Uniformity};
use antinode_mesh::geometry::turntable::rotate_about;
use antinode_mesh::geometry::{BoxFootprint, LoadShape};

/// Fewest grid cells along a side (our choice, no source: a pattern needs a few cells per
/// side to have a spread at all).
pub const MIN_CELLS_PER_SIDE: usize = 4;

/// A regular grid fixed in a load's frame, at plate angle 0 (mm).
#[derive(Clone, Debug, PartialEq)]
pub struct LoadGrid {
    /// Cell centres (the sample points).
    pub points: Vec<[f64; 3]>,
    /// The eight corners of each cell in VTK hexahedron order (bottom face
    /// counter-clockwise, then the top face).
    pub cells: Vec<[[f64; 3]; 8]>,
    /// Cell sides in the load's own axes (mm).
    pub spacing: [f64; 3],
}

/// Cell counts, sides and first corner of the in-plane grid in the load's own axes, which
/// cell centres to keep, and the map from those axes to global x-y.
type InPlane = (
    usize,
    usize,
    f64,
    f64,
    f64,
    f64,
    Box<dyn Fn([f64; 2]) -> bool>,
    Box<dyn Fn([f64; 2]) -> [f64; 2]>,
);

/// Cells along a length at about `h` mm each.
fn cells_along(length: f64, h: f64) -> usize {
    ((length / h).ceil() as usize).max(MIN_CELLS_PER_SIDE)
}

/// The grid of a load shape with cells of about `h` mm (see the module docs).
pub fn load_grid(shape: &LoadShape, h: f64) -> LoadGrid {
    let [z0, z1] = shape.z_range();
    let nz = cells_along(z1 - z0, h);
    let dz = (z1 - z0) / nz as f64;
    // In-plane: local (u, v) cells and the map from local to global x-y.
    let (nu, nv, du, dv, u0, v0, keep, to_global): InPlane = match *shape {
        LoadShape::Box { .. } => {
            let f: BoxFootprint = shape.box_footprint().expect("box load");
            let (nu, nv) = (
                cells_along(2.0 * f.half[0], h),
                cells_along(2.0 * f.half[1], h),
            );
            (
                nu,
                nv,
                2.0 * f.half[0] / nu as f64,
                2.0 * f.half[1] / nv as f64,
                -f.half[0],
                -f.half[1],
                Box::new(|_| true),
                Box::new(move |q| f.to_global(q)),
            )
        }
        LoadShape::Cylinder { center, radius, .. } => {
            let n = cells_along(2.0 * radius, h);
            let d = 2.0 * radius / n as f64;
            (
                n,
                n,
                d,
                d,
                -radius,
                -radius,
                Box::new(move |q: [f64; 2]| q[0].hypot(q[1]) <= radius - 0.5 * d),
                Box::new(move |q| [center[0] + q[0], center[1] + q[1]]),
            )
        }
    };
    let mut points = Vec::new();
    let mut cells = Vec::new();
    for i in 0..nu {
        for j in 0..nv {
            let (ua, ub) = (u0 + i as f64 * du, u0 + (i + 1) as f64 * du);
            let (va, vb) = (v0 + j as f64 * dv, v0 + (j + 1) as f64 * dv);
            let mid = [0.5 * (ua + ub), 0.5 * (va + vb)];
            if !keep(mid) {
                continue;
            }
            let quad = [[ua, va], [ub, va], [ub, vb], [ua, vb]].map(&to_global);
            let c = to_global(mid);
            for k in 0..nz {
                let (za, zb) = (z0 + k as f64 * dz, z0 + (k + 1) as f64 * dz);
                points.push([c[0], c[1], 0.5 * (za + zb)]);
                let mut hex = [[0.0; 3]; 8];
                for (m, q) in quad.iter().enumerate() {
                    hex[m] = [q[0], q[1], za];
                    hex[m + 4] = [q[0], q[1], zb];
                }
                cells.push(hex);
            }
        }
    }
    LoadGrid {
        points,
        cells,
        spacing: [du, dv, dz],
    }
}

/// The grid's points at plate angle `angle_deg` about `center` (mm).
pub fn points_at_angle(grid: &LoadGrid, center: [f64; 2], angle_deg: f64) -> Vec<[f64; 3]> {
    grid.points
        .iter()
        .map(|p| {
            let [x, y] = rotate_about([p[0], p[1]], center, angle_deg);
            [x, y, p[2]]
        })
        .collect()
}

/// Uniformity of equally weighted samples (the cells of one grid).
pub fn sample_uniformity(samples: &[f64]) -> Option<Uniformity> {
    let cells: Vec<(f64, f64)> = samples.iter().map(|&q| (q, 1.0)).collect();
    uniformity(&cells)
}

/// The pattern averaged over the angles, q̄(p) (see the module docs); `per_angle[a][i]`
/// is sample i at angle a. None without angles or with unequal lengths.
pub fn rotation_average(per_angle: &[Vec<f64>]) -> Option<Vec<f64>> {
    let n = per_angle.first()?.len();
    if per_angle.iter().any(|s| s.len() != n) {
        return None;
    }
    let a = per_angle.len() as f64;
    Some(
        (0..n)
            .map(|i| per_angle.iter().map(|s| s[i]).sum::<f64>() / a)
            .collect(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn box_grid_fills_the_turned_box_with_equal_cells() {
        // A 40 × 20 × 10 mm box turned by 30°: 8 × 4 × 4 cells of 5 × 5 × 2.5 mm (the
        // height has the minimum of 4 cells); the cells fill its volume exactly.
        let shape = LoadShape::Box {
            min: [80.0, 90.0, 0.0],
            max: [120.0, 110.0, 10.0],
            angle_deg: 30.0,
        };
        let g = load_grid(&shape, 5.0);
        assert_eq!(g.points.len(), 8 * 4 * 4);
        assert_eq!(g.spacing, [5.0, 5.0, 2.5]);
        let vol = g.points.len() as f64 * g.spacing.iter().product::<f64>();
        assert!((vol - shape.volume()).abs() < 1e-9 * shape.volume());
        // The centroid of the samples is the box's centre (the grid is symmetric).
        let c: [f64; 3] = std::array::from_fn(|k| {
            g.points.iter().map(|p| p[k]).sum::<f64>() / g.points.len() as f64
        });
        for (a, b) in c.iter().zip([100.0, 100.0, 5.0]) {
            assert!((a - b).abs() < 1e-9, "{c:?}");
        }
        // Every sample lies inside the turned footprint.
        let f = shape.box_footprint().unwrap();
        assert!(g.points.iter().all(|p| f.distance([p[0], p[1]]) == 0.0));
    }

    #[test]
    fn cylinder_grid_keeps_centres_clear_of_the_rim() {
        let shape = LoadShape::Cylinder {
            center: [150.0, 150.0],
            radius: 20.0,
            bottom: 0.0,
            height: 20.0,
        };
        let g = load_grid(&shape, 5.0);
        let d = g.spacing[0];
        assert!(g
            .points
            .iter()
            .all(|p| (p[0] - 150.0).hypot(p[1] - 150.0) <= 20.0 - 0.5 * d));
        // A quarter turn about the cylinder's own axis maps the grid onto itself.
        let turned = points_at_angle(&g, [150.0, 150.0], 90.0);
        for p in &turned {
            assert!(g
                .points
                .iter()
                .any(|q| (0..3).all(|k| (p[k] - q[k]).abs() < 1e-9)));
        }
    }

    #[test]
    fn average_and_cov() {
        // Two patterns that are each other's mirror average to a flat one (COV 0).
        let a = vec![1.0, 3.0, 1.0, 3.0];
        let b = vec![3.0, 1.0, 3.0, 1.0];
        let m = rotation_average(&[a.clone(), b]).unwrap();
        assert_eq!(m, vec![2.0; 4]);
        assert_eq!(sample_uniformity(&m).unwrap().cov, 0.0);
        // σ/μ of {1, 3, 1, 3}: μ = 2, σ = 1 (population form, as in uniformity.rs).
        assert_eq!(sample_uniformity(&a).unwrap().cov, 0.5);
        assert!(rotation_average(&[]).is_none());
    }
}
