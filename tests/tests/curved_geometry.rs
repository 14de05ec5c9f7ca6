//! Geometry and exactness of the curved tetrahedra (`antinode_solver::fem::curved`).

use antinode_mesh::mesher::{mesh_geometry_curved, CurvedMesh};
use antinode_mesh::Geometry;
use antinode_solver::fem::assembly::assemble;
use antinode_solver::fem::curved::{CurvedBoundary, CurvedGeometry, CurvedTet};
use antinode_solver::fem::element::NedelecTet;
use antinode_solver::fem::tet_geometry::TetGeometry;
use antinode_solver::fem::topology::Topology;
use antinode_solver::{NedelecOrder, RegionMaterial, Space};
use antinode_tests::{box_mesh, observed_order};
use std::f64::consts::PI;

fn pillbox(size_mm: f64) -> CurvedMesh {
    let toml = format!(
        r#"
title = "pillbox volume"
[cavity]
shape = "cylinder"
radius = 100
height = 120
walls = "pec"
[mesh]
order = 2
per_wavelength = 1.0
max_size = {size_mm}
[solve]
target = 2.45
"#
    );
    mesh_geometry_curved(&Geometry::from_toml_str(&toml, None).expect("geometry")).expect("mesh")
}

/// The mapped pillbox volume against πa²d (analytic): the inscribed polygon misses by
/// O(h²); the quadratic map by O(h⁴) and the cubic one (Lobatto edges, zero-mean face
/// centres) by O(h⁶) — the orders the eigenvalue rates need (see the module docs of
/// `curved`). Asserted: observed order ≥ 2q − 1 on the last pair (one order of slack for
/// non-nested meshes: common practice, no source).
#[test]
fn pillbox_volume_converges_by_degree() {
    let exact = PI * 0.1 * 0.1 * 0.12;
    let mut rows: Vec<(f64, [f64; 3])> = Vec::new();
    for size in [42.0, 30.0, 21.0] {
        let cm = pillbox(size);
        let topo = Topology::new(&cm.mesh);
        let b = CurvedBoundary::from_mesh(&cm);
        let straight: f64 = cm.mesh.region_volumes().iter().sum();
        let mut err = [((straight - exact) / exact).abs(), 0.0, 0.0];
        for q in 2..=3u8 {
            let g = CurvedGeometry::with_degree(&cm.mesh, &topo, NedelecOrder::Three, &b, q)
                .expect("map");
            let v: f64 = (0..topo.n_tets())
                .map(|t| {
                    let geo = TetGeometry::new(topo.tets[t].map(|v| cm.mesh.nodes[v as usize]));
                    g.tet(t).map_or(geo.volume, |c| g.volume(c, &geo))
                })
                .sum();
            err[q as usize - 1] = ((v - exact) / exact).abs();
        }
        let h = (straight / cm.mesh.tets.len() as f64).cbrt();
        println!(
            "size {size} mm (h {:.1} mm): |rel volume error| polygon {:.2e}, q2 {:.2e}, q3 {:.2e}",
            h * 1e3,
            err[0],
            err[1],
            err[2]
        );
        rows.push((h, err));
    }
    let (h1, e1) = rows[1];
    let (h2, e2) = rows[2];
    let rates: Vec<f64> = (0..3)
        .map(|i| observed_order(e1[i], h1, e2[i], h2))
        .collect();
    println!(
        "observed orders: polygon {:.2}, q2 {:.2}, q3 {:.2}",
        rates[0], rates[1], rates[2]
    );
    assert!(rates[1] >= 3.0, "q = 2 volume order {:.2} < 3", rates[1]);
    assert!(rates[2] >= 5.0, "q = 3 volume order {:.2} < 5", rates[2]);
}

/// A single tetrahedron with one curved edge (i, j) under the quadratic map
/// F = y + 4λiλj d: det DF = 1 + ∇(4λiλj)·d (rank-one update), so its volume is
/// |T| (1 + (∇λi + ∇λj)·d) exactly (∫ λ dV = |T|/4). The quadrature volume must agree
/// to rounding (1e-13 relative: the integrand is linear, the rule exact for it).
#[test]
fn single_curved_tet_volume_closed_form() {
    let cm = pillbox(42.0);
    let topo = Topology::new(&cm.mesh);
    let g = CurvedGeometry::new(
        &cm.mesh,
        &topo,
        NedelecOrder::Two,
        &CurvedBoundary::from_mesh(&cm),
    )
    .expect("map");
    assert_eq!(g.degree(), 2);
    let x = [
        [0.0, 0.0, 0.0],
        [0.03, 0.0, 0.0],
        [0.01, 0.025, 0.0],
        [0.005, 0.01, 0.02],
    ];
    let geo = TetGeometry::new(x);
    for (i, j) in [(0usize, 1usize), (1, 3), (2, 3)] {
        let d = [0.002, -0.001, 0.0015];
        let mut alpha = [0u8; 4];
        alpha[i] = 1;
        alpha[j] = 1;
        let c = CurvedTet {
            nodes: vec![(alpha, d)],
        };
        let exact = geo.volume
            * (1.0
                + (0..3)
                    .map(|k| (geo.grad[i][k] + geo.grad[j][k]) * d[k])
                    .sum::<f64>());
        let v = g.volume(&c, &geo);
        assert!(
            ((v - exact) / exact).abs() < 1e-13,
            "edge ({i},{j}): {v} vs {exact}"
        );
    }
}

/// With the identity map (no displaced node) the quadrature element matrices equal the
/// exact ones of `NedelecTet::matrices` (the rule of n = p + q + 1 points per direction
/// is exact to degree 2p + 2q − 1 ≥ 2p, the straight integrands' degree), to 1e-12 of
/// the largest entry (rounding of ~300 terms).
#[test]
fn identity_map_reproduces_exact_matrices() {
    let cm = pillbox(42.0);
    let topo = Topology::new(&cm.mesh);
    for order in [NedelecOrder::One, NedelecOrder::Two, NedelecOrder::Three] {
        let g = CurvedGeometry::new(&cm.mesh, &topo, order, &CurvedBoundary::from_mesh(&cm))
            .expect("map");
        let element = NedelecTet::new(order);
        let n = element.len();
        let c = CurvedTet { nodes: Vec::new() };
        for t in (0..topo.n_tets()).step_by(97) {
            let geo = TetGeometry::new(topo.tets[t].map(|v| cm.mesh.nodes[v as usize]));
            let (mut k0, mut m0) = (vec![0.0; n * n], vec![0.0; n * n]);
            let (mut k1, mut m1) = (vec![0.0; n * n], vec![0.0; n * n]);
            element.matrices(&geo, &mut k0, &mut m0);
            g.matrices(&element, &geo, &c, &mut k1, &mut m1);
            for (a, b) in [(&k0, &k1), (&m0, &m1)] {
                let scale = a.iter().fold(0.0f64, |s, v| s.max(v.abs()));
                let diff = a
                    .iter()
                    .zip(b)
                    .fold(0.0f64, |s, (x, y)| s.max((x - y).abs()));
                assert!(
                    diff <= 1e-12 * scale,
                    "order {}: {diff:e} of {scale:e}",
                    order.as_int()
                );
            }
        }
    }
}

/// A mesh with no curved faces (box): the space with an empty curved boundary assembles
/// bit for bit the same matrices as the plain space (every tetrahedron takes the exact
/// path).
#[test]
fn no_curved_faces_is_bitwise_affine() {
    let mesh = box_mesh([0.2, 0.15, 0.1], [4, 3, 2]);
    let plain = Space::new(&mesh, NedelecOrder::Two, |_| true);
    let curved = Space::new(&mesh, NedelecOrder::Two, |_| true)
        .with_curved(&CurvedBoundary::default())
        .expect("empty boundary");
    assert!(curved.curved.is_none());
    let a = assemble(&plain, &[RegionMaterial::VACUUM]);
    let b = assemble(&curved, &[RegionMaterial::VACUUM]);
    assert_eq!(a.stiffness.data(), b.stiffness.data());
    assert_eq!(a.mass_real.data(), b.mass_real.data());
}
