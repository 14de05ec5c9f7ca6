//! Element quality: dihedral angles and normalised radius ratio of tetrahedra, and a
//! summary over a mesh.
//!
//! Edge-element eigenvalue accuracy degrades with dihedral angles near 0° or 180°
//! (interpolation error grows with the largest angle), so the report lists both extremes
//! and counts tetrahedra with a small minimum angle.

use crate::tet_mesh::{cross, dot, sub, TetMesh};
use rayon::prelude::*;

/// A tetrahedron counts as poor when its smallest dihedral angle is below this (degrees).
pub const POOR_MIN_DIHEDRAL_DEG: f64 = 10.0;

/// Quality summary of a mesh.
#[derive(Clone, Debug, PartialEq)]
pub struct QualityReport {
    /// Number of tetrahedra.
    pub tets: usize,
    /// Smallest dihedral angle over all tetrahedra (degrees).
    pub min_dihedral_deg: f64,
    /// Largest dihedral angle over all tetrahedra (degrees).
    pub max_dihedral_deg: f64,
    /// Smallest normalised radius ratio (1 = regular, 0 = degenerate).
    pub min_radius_ratio: f64,
    /// Mean normalised radius ratio.
    pub mean_radius_ratio: f64,
    /// Number of poor tetrahedra (see `poor_threshold`).
    pub poor_count: usize,
    /// What "poor" means, for printing.
    pub poor_threshold: String,
}

fn norm(a: [f64; 3]) -> f64 {
    dot(a, a).sqrt()
}

/// The six interior dihedral angles (degrees) of a tetrahedron, at edges
/// 01, 02, 03, 12, 13, 23. A degenerate tetrahedron gives 0° and 180°.
pub fn dihedral_angles(p: [[f64; 3]; 4]) -> [f64; 6] {
    // Outward normal of the face opposite each vertex.
    let n: [[f64; 3]; 4] = std::array::from_fn(|i| {
        let f: Vec<usize> = (0..4).filter(|&j| j != i).collect();
        let mut v = cross(sub(p[f[1]], p[f[0]]), sub(p[f[2]], p[f[0]]));
        if dot(v, sub(p[i], p[f[0]])) > 0.0 {
            v = [-v[0], -v[1], -v[2]];
        }
        let l = norm(v);
        if l > 0.0 {
            [v[0] / l, v[1] / l, v[2] / l]
        } else {
            v
        }
    });
    // The edge ij is shared by the faces opposite the other two vertices k, l; the
    // interior angle there is π minus the angle between their outward normals.
    let pairs = [(2, 3), (1, 3), (1, 2), (0, 3), (0, 2), (0, 1)];
    pairs.map(|(k, l)| {
        let c = dot(n[k], n[l]).clamp(-1.0, 1.0);
        180.0 - c.acos().to_degrees()
    })
}

/// Normalised radius ratio 3·r_in/R_circ: 1 for a regular tetrahedron, 0 for a flat one.
pub fn radius_ratio(p: [[f64; 3]; 4]) -> f64 {
    let vol = dot(sub(p[1], p[0]), cross(sub(p[2], p[0]), sub(p[3], p[0]))).abs() / 6.0;
    let area = |a: usize, b: usize, c: usize| 0.5 * norm(cross(sub(p[b], p[a]), sub(p[c], p[a])));
    let s = area(1, 2, 3) + area(0, 2, 3) + area(0, 1, 3) + area(0, 1, 2);
    let e = |a: usize, b: usize| norm(sub(p[a], p[b]));
    // Circumradius from the products of opposite edge lengths.
    let (x, y, z) = (e(0, 1) * e(2, 3), e(0, 2) * e(1, 3), e(0, 3) * e(1, 2));
    let prod = (x + y + z) * (x + y - z) * (x - y + z) * (-x + y + z);
    if vol <= 0.0 || s <= 0.0 || prod <= 0.0 {
        return 0.0;
    }
    let r_in = 3.0 * vol / s;
    let r_circ = prod.sqrt() / (24.0 * vol);
    (3.0 * r_in / r_circ).clamp(0.0, 1.0)
}

fn tet_points(mesh: &TetMesh, t: usize) -> [[f64; 3]; 4] {
    mesh.tets[t].map(|i| mesh.nodes[i as usize])
}

/// Per-tet quality figure (normalised radius ratio), e.g. for VTU cell data.
pub fn tet_quality(mesh: &TetMesh) -> Vec<f64> {
    (0..mesh.tets.len())
        .into_par_iter()
        .map(|t| radius_ratio(tet_points(mesh, t)))
        .collect()
}

/// Per-tet (min, max) dihedral angle in degrees.
pub fn tet_dihedral_extremes(mesh: &TetMesh) -> Vec<(f64, f64)> {
    (0..mesh.tets.len())
        .into_par_iter()
        .map(|t| {
            let a = dihedral_angles(tet_points(mesh, t));
            (
                a.iter().copied().fold(f64::INFINITY, f64::min),
                a.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            )
        })
        .collect()
}

/// Quality summary of a mesh (an empty mesh reports NaN extremes and zero counts).
pub fn quality_report(mesh: &TetMesh) -> QualityReport {
    let ext = tet_dihedral_extremes(mesh);
    let rr = tet_quality(mesh);
    let n = mesh.tets.len();
    let (mut lo, mut hi) = (f64::NAN, f64::NAN);
    if n > 0 {
        lo = ext.iter().map(|e| e.0).fold(f64::INFINITY, f64::min);
        hi = ext.iter().map(|e| e.1).fold(f64::NEG_INFINITY, f64::max);
    }
    QualityReport {
        tets: n,
        min_dihedral_deg: lo,
        max_dihedral_deg: hi,
        min_radius_ratio: if n > 0 {
            rr.iter().copied().fold(f64::INFINITY, f64::min)
        } else {
            f64::NAN
        },
        mean_radius_ratio: if n > 0 {
            rr.iter().sum::<f64>() / n as f64
        } else {
            f64::NAN
        },
        poor_count: ext.iter().filter(|e| e.0 < POOR_MIN_DIHEDRAL_DEG).count(),
        poor_threshold: format!("smallest dihedral angle below {POOR_MIN_DIHEDRAL_DEG}°"),
    }
}
