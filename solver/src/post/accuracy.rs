//! How accurate a run's frequencies are likely to be, from the element order and the
//! mesh size per local wavelength, by the measured convergence of the empty-box
//! benchmark (`tests/benches/box_modes.rs`: the 300 × 300 × 200 mm PEC box, the 20
//! modes nearest 2.45 GHz, worst relative error against the analytic TE/TM_mnp list of
//! Pozar, Microwave Engineering, 4th ed., §6.3).
//!
//! The size measure is the mean edge length h̄ of a region's tetrahedra (all six edges of
//! every tetrahedron), so that structured and extruded meshes compare on one scale; a
//! run's figure is the smallest λ_local/h̄ over its regions, λ_local = c/(f√(ε′μr)) at
//! the target. The estimate interpolates log(error) against log(λ/h̄) between the
//! benchmark rows and extends the end segments' slopes up to a factor 2 beyond them
//! (held constant further out). It is an estimate
//! for well-shaped meshes and smooth fields: sharp metal edges, thin loads and
//! strongly varying fields in a load can be worse; it says nothing of the geometry's
//! own error (curved walls approximated by facets).

use crate::fem::assembly::RegionMaterial;
use crate::fem::NedelecOrder;
use antinode_mesh::tet_mesh::{dot, sub};
use antinode_mesh::TetMesh;
use std::f64::consts::LN_2;

/// One benchmark measurement: element order, structured grid (cells along x, y, z of
/// the 300 × 300 × 200 mm box) and the worst relative frequency error.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BenchmarkRow {
    pub order: u8,
    pub grid: [usize; 3],
    pub worst_error: f64,
}

/// The benchmark's box, m.
pub const BENCHMARK_BOX_M: [f64; 3] = [0.3, 0.3, 0.2];
/// The benchmark's target, Hz.
pub const BENCHMARK_TARGET_HZ: f64 = 2.45e9;

/// Measured by `cargo bench -p antinode-tests --bench box_modes` on the 2-core
/// development machine, 2026-12-03 (the order-2 24 × 24 × 16 and 27 × 27 × 18 rows from
/// the 2026-12-02 run, README Performance). The errors are deterministic: the same to
/// the printed digits on both days.
pub const BENCHMARK: [BenchmarkRow; 14] = [
    row(1, [12, 12, 8], 5.38e-3),
    row(1, [24, 24, 16], 2.05e-3),
    row(1, [36, 36, 24], 8.93e-4),
    row(1, [51, 51, 34], 4.41e-4),
    row(2, [6, 6, 4], 6.13e-3),
    row(2, [9, 9, 6], 1.48e-3),
    row(2, [12, 12, 8], 5.03e-4),
    row(2, [15, 15, 10], 2.13e-4),
    row(2, [18, 18, 12], 1.04e-4),
    row(2, [18, 18, 13], 9.58e-5),
    row(2, [19, 19, 13], 7.77e-5),
    row(2, [21, 21, 14], 5.70e-5),
    row(2, [24, 24, 16], 3.4e-5),
    row(2, [27, 27, 18], 2.1e-5),
];

const fn row(order: u8, grid: [usize; 3], worst_error: f64) -> BenchmarkRow {
    BenchmarkRow {
        order,
        grid,
        worst_error,
    }
}

/// Mean edge length of the benchmark's five-tetrahedra split of a brick a × b × c: the
/// central tetrahedron has six face diagonals (two of each face), each of the four corner
/// tetrahedra three cell edges and three face diagonals (one of each face), so the 30
/// edges sum to 4(a + b + c) + 6(d_ab + d_bc + d_ca).
pub fn five_tet_mean_edge(a: f64, b: f64, c: f64) -> f64 {
    let d = (a * a + b * b).sqrt() + (b * b + c * c).sqrt() + (c * c + a * a).sqrt();
    (4.0 * (a + b + c) + 6.0 * d) / 30.0
}

impl BenchmarkRow {
    /// λ/h̄ of this row at the benchmark's target.
    pub fn per_wavelength(&self) -> f64 {
        let [a, b, c] = std::array::from_fn(|i| BENCHMARK_BOX_M[i] / self.grid[i] as f64);
        crate::constants::C0 / BENCHMARK_TARGET_HZ / five_tet_mean_edge(a, b, c)
    }
}

/// Expected worst relative frequency error at element order `order` with `per_wavelength`
/// = λ/h̄ (module docs); None for an order the benchmark does not cover.
pub fn expected_error(order: NedelecOrder, per_wavelength: f64) -> Option<f64> {
    let pts: Vec<(f64, f64)> = BENCHMARK
        .iter()
        .filter(|r| r.order == order.as_int())
        .map(|r| (r.per_wavelength().ln(), r.worst_error.ln()))
        .collect();
    if pts.len() < 2 || per_wavelength.is_nan() || per_wavelength <= 0.0 {
        return None;
    }
    // Extend the end segments at most a factor 2 beyond the measured range; outside it
    // the estimate is held at its value there (a measured rate says nothing far away).
    let x = per_wavelength
        .ln()
        .clamp(pts[0].0 - LN_2, pts[pts.len() - 1].0 + LN_2);
    // The segment holding x, or the end segment nearest it.
    let i = pts
        .windows(2)
        .position(|w| x <= w[1].0)
        .unwrap_or(pts.len() - 2);
    let ((x0, y0), (x1, y1)) = (pts[i], pts[i + 1]);
    let y = y0 + (y1 - y0) * (x - x0) / (x1 - x0);
    // A relative error above 1 means the run resolves nothing; cap it there.
    Some(y.exp().min(1.0))
}

/// Mean edge length of the tetrahedra of each region (region order; NaN for an empty
/// region).
pub fn region_mean_edges(mesh: &TetMesh) -> Vec<f64> {
    let n = mesh
        .regions
        .len()
        .max(1 + mesh.tet_region.iter().copied().max().unwrap_or(0) as usize);
    let mut sum = vec![0.0; n];
    let mut count = vec![0usize; n];
    for (t, tet) in mesh.tets.iter().enumerate() {
        let p = tet.map(|v| mesh.nodes[v as usize]);
        let r = mesh.tet_region[t] as usize;
        for (a, b) in [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)] {
            let e = sub(p[a], p[b]);
            sum[r] += dot(e, e).sqrt();
        }
        count[r] += 6;
    }
    sum.iter()
        .zip(&count)
        .map(|(s, &c)| if c > 0 { s / c as f64 } else { f64::NAN })
        .collect()
}

/// λ_local/h̄ of every region at `freq_hz` (NaN for an empty region).
pub fn region_per_wavelength(
    mesh: &TetMesh,
    materials: &[RegionMaterial],
    freq_hz: f64,
) -> Vec<f64> {
    let lambda0 = crate::constants::C0 / freq_hz;
    region_mean_edges(mesh)
        .iter()
        .enumerate()
        .map(|(r, h)| {
            let n = materials
                .get(r)
                .map_or(1.0, |m| (m.eps_real * m.mu_r).max(1.0).sqrt());
            lambda0 / n / h
        })
        .collect()
}

/// A run's accuracy estimate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AccuracyEstimate {
    /// Smallest λ_local/h̄ over the regions.
    pub per_wavelength: f64,
    /// Which region it is (0 = air, i = load i).
    pub region: usize,
    /// Expected worst relative frequency error ([`expected_error`]).
    pub relative_error: Option<f64>,
}

/// The accuracy estimate of a run on `mesh` with `materials` at `freq_hz`.
pub fn estimate(
    mesh: &TetMesh,
    materials: &[RegionMaterial],
    order: NedelecOrder,
    freq_hz: f64,
) -> AccuracyEstimate {
    let (region, per_wavelength) = region_per_wavelength(mesh, materials, freq_hz)
        .into_iter()
        .enumerate()
        .filter(|(_, n)| n.is_finite())
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .unwrap_or((0, f64::NAN));
    AccuracyEstimate {
        per_wavelength,
        region,
        relative_error: expected_error(order, per_wavelength),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use antinode_mesh::structured::{grid_mesh, GridLines};
    use antinode_mesh::RegionInfo;

    /// The closed-form mean edge of the five-tetrahedra split against the mesh the
    /// benchmark builds (round-off tolerance).
    #[test]
    fn five_tet_mean_edge_matches_the_structured_mesh() {
        let grid = [4, 3, 2];
        let mesh = grid_mesh(
            &GridLines::uniform([0.0; 3], BENCHMARK_BOX_M, grid),
            vec![RegionInfo { name: "air".into() }],
            |_| Some(0),
        );
        let h = region_mean_edges(&mesh)[0];
        let [a, b, c] = std::array::from_fn(|i| BENCHMARK_BOX_M[i] / grid[i] as f64);
        let expect = five_tet_mean_edge(a, b, c);
        assert!((h - expect).abs() <= 1e-12 * expect, "{h} vs {expect}");
    }

    /// The estimate passes through every benchmark row (it interpolates them) and
    /// falls as the mesh is refined.
    #[test]
    fn estimate_reproduces_the_benchmark_and_falls_with_refinement() {
        for r in BENCHMARK {
            let order = NedelecOrder::from_int(r.order).unwrap();
            let e = expected_error(order, r.per_wavelength()).unwrap();
            assert!(
                (e - r.worst_error).abs() <= 1e-9 * r.worst_error,
                "{r:?}: {e}"
            );
        }
        for order in [NedelecOrder::One, NedelecOrder::Two] {
            let errs: Vec<f64> = [2.0, 4.0, 8.0, 16.0, 32.0]
                .iter()
                .map(|&n| expected_error(order, n).unwrap())
                .collect();
            assert!(errs.windows(2).all(|w| w[1] < w[0]), "{order:?}: {errs:?}");
        }
    }
}
