//! The electric field of a mode sampled at probe points, so that modes computed on
//! different meshes can be compared (mode tracking, [`super::tracking`]).
//!
//! Probe points are given as fractions of the cavity's bounding box, so that in a sweep
//! of the cavity's size they sit at the same relative position in every variant (for
//! an empty box the analytic fields scale with the box: Pozar, Microwave Engineering,
//! 4th ed., §6.3, eqs. 6.40–6.43 depend on x/a, y/b, z/d only). The fractions are the
//! first points of the Halton sequence in bases 2, 3, 5 (a low-discrepancy set: no
//! alignment with the nodal planes of the cavity's standing waves, as a regular grid
//! would have). A point is located by its barycentric coordinates λ_i = V_i / V, V_i the
//! volume of the tetrahedron with vertex i replaced by the point; E there is
//! Σ x_a φ_a (the element functions, [`super::field::at_point`]). Points outside the
//! mesh (a cylinder's bounding-box corners) are recorded as absent.

use crate::fem::element::NedelecTet;
use crate::fem::Space;
use crate::post::field::at_point;
use antinode_mesh::tet_mesh::{cross, dot, sub};
use faer::c64;
use rayon::prelude::*;

/// Default number of probe points (our choice, no source: several per half-wave of the
/// modes near 2.45 GHz in a domestic-oven-sized cavity, ~8 per axis).
pub const PROBE_COUNT: usize = 512;

/// E at the probe points: `None` where a point is outside the mesh.
pub type ProbeField = Vec<Option<[c64; 3]>>;

/// The i-th element (i ≥ 1) of the van der Corput sequence in `base`.
fn radical_inverse(mut i: usize, base: usize) -> f64 {
    let mut f = 1.0;
    let mut r = 0.0;
    while i > 0 {
        f /= base as f64;
        r += f * (i % base) as f64;
        i /= base;
    }
    r
}

/// `n` probe positions as fractions of the bounding box (Halton, bases 2, 3, 5, from
/// index 1).
pub fn probe_fractions(n: usize) -> Vec<[f64; 3]> {
    (1..=n)
        .map(|i| [2, 3, 5].map(|b| radical_inverse(i, b)))
        .collect()
}

/// Probe points in a box `[lo, hi]` (metres) from fractions.
pub fn probe_points(fractions: &[[f64; 3]], lo: [f64; 3], hi: [f64; 3]) -> Vec<[f64; 3]> {
    fractions
        .iter()
        .map(|f| std::array::from_fn(|k| lo[k] + f[k] * (hi[k] - lo[k])))
        .collect()
}

/// The bounding box of a space's mesh (metres).
pub fn bounding_box(space: &Space<'_>) -> ([f64; 3], [f64; 3]) {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in &space.mesh.nodes {
        for k in 0..3 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    (lo, hi)
}

/// Barycentric coordinates of `p` in the tetrahedron `v`.
fn barycentric(v: &[[f64; 3]; 4], p: [f64; 3]) -> [f64; 4] {
    let vol = |a: [f64; 3], b: [f64; 3], c: [f64; 3], d: [f64; 3]| {
        dot(sub(b, a), cross(sub(c, a), sub(d, a)))
    };
    let total = vol(v[0], v[1], v[2], v[3]);
    let mut l = [
        vol(p, v[1], v[2], v[3]),
        vol(v[0], p, v[2], v[3]),
        vol(v[0], v[1], p, v[3]),
        vol(v[0], v[1], v[2], p),
    ];
    for x in &mut l {
        *x /= total;
    }
    l
}

/// The tetrahedron holding each point and the point's barycentric coordinates there
/// (the tetrahedron with the largest smallest coordinate, so points on shared faces go
/// to one of their neighbours; `None` when no coordinate set is ≥ −1e-9, i.e. outside).
pub fn locate(space: &Space<'_>, points: &[[f64; 3]]) -> Vec<Option<(usize, [f64; 4])>> {
    let boxes: Vec<([f64; 3], [f64; 3])> = (0..space.n_tets())
        .map(|t| {
            let v = space.tet_vertices(t);
            let lo = std::array::from_fn(|k| v.iter().map(|p| p[k]).fold(f64::INFINITY, f64::min));
            let hi =
                std::array::from_fn(|k| v.iter().map(|p| p[k]).fold(f64::NEG_INFINITY, f64::max));
            (lo, hi)
        })
        .collect();
    points
        .par_iter()
        .map(|&p| {
            let mut best: Option<(usize, [f64; 4], f64)> = None;
            for (t, (lo, hi)) in boxes.iter().enumerate() {
                let slack = 1e-9 * (hi[0] - lo[0]).abs().max(1e-12);
                if (0..3).any(|k| p[k] < lo[k] - slack || p[k] > hi[k] + slack) {
                    continue;
                }
                let l = barycentric(&space.tet_vertices(t), p);
                let worst = l.iter().copied().fold(f64::INFINITY, f64::min);
                if best.is_none_or(|b| worst > b.2) {
                    best = Some((t, l, worst));
                }
            }
            best.filter(|b| b.2 >= -1e-9).map(|(t, l, _)| (t, l))
        })
        .collect()
}

/// E of one field (real and imaginary coefficient vectors; an empty imaginary part for a
/// real field) at located points.
pub fn sample(
    space: &Space<'_>,
    coeffs_re: &[f64],
    coeffs_im: &[f64],
    located: &[Option<(usize, [f64; 4])>],
) -> ProbeField {
    let element = NedelecTet::new(space.order());
    located
        .iter()
        .map(|loc| {
            loc.map(|(t, l)| {
                let (er, _) = at_point(space, &element, coeffs_re, t, l);
                let ei = if coeffs_im.is_empty() {
                    [0.0; 3]
                } else {
                    at_point(space, &element, coeffs_im, t, l).0
                };
                std::array::from_fn(|k| c64::new(er[k], ei[k]))
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Van der Corput in base 2: 1/2, 1/4, 3/4, 1/8 (the definition, by hand).
    #[test]
    fn halton_points_follow_the_radical_inverse() {
        let f = probe_fractions(4);
        let x: Vec<f64> = f.iter().map(|p| p[0]).collect();
        assert_eq!(x, vec![0.5, 0.25, 0.75, 0.125]);
        assert_eq!(f[0][1], 1.0 / 3.0);
        assert_eq!(f[1][2], 2.0 / 5.0);
    }

    #[test]
    fn barycentric_coordinates_of_the_centroid_and_a_vertex() {
        let v = [
            [0.0, 0.0, 0.0],
            [1.0, 0.0, 0.0],
            [0.0, 1.0, 0.0],
            [0.0, 0.0, 1.0],
        ];
        let l = barycentric(&v, [0.25; 3]);
        assert!(l.iter().all(|x| (x - 0.25).abs() < 1e-15), "{l:?}");
        let l = barycentric(&v, [1.0, 0.0, 0.0]);
        assert!((l[1] - 1.0).abs() < 1e-15 && l[0].abs() < 1e-15);
    }
}
