//! Tests of the graded 3-D mesher (`[mesh] method = "graded"`): the extruded mesh at the
//! air's size refined by longest-edge bisection to the graded size field
//! h(x) = min(h_air, min_i(h_i + GRADING·d(x, load_i))).
//!
//! Geometries are invented test scenarios; "analytic" means the expected value follows
//! from elementary geometry. Mesh invariants are `common::check_invariants`.

mod common;

use antinode_mesh::geometry::{CavityShape, Geometry, LoadShape, MeshMethod, Port, PortWall};
use antinode_mesh::mesher::{element_sizes, mesh_geometry, GRADING};
use antinode_mesh::quality::quality_report;
use antinode_mesh::tet_mesh::{dot, sub};
use antinode_mesh::{BoundaryTag, TetMesh};
use common::{check_invariants, dielectric, geometry, geometry_with_ports, MM};
use std::time::Instant;

/// A 240 × 200 × 160 mm box with a ceramic-like block (ε′ = 9) turned by `angle` degrees
/// and a feed on the +x wall (invented).
fn block_geometry(angle: f64, method: MeshMethod) -> Geometry {
    let mut g = geometry_with_ports(
        CavityShape::Box {
            size: [240.0, 200.0, 160.0],
        },
        vec![(
            "block",
            LoadShape::Box {
                min: [80.0, 70.0, 20.0],
                max: [140.0, 110.0, 50.0],
                angle_deg: angle,
            },
            dielectric("ceramic-like", 9.0),
        )],
        vec![Port {
            name: "feed".into(),
            wall: PortWall::BoxWall {
                axis: 0,
                positive: true,
            },
            center: [100.0, 80.0],
            width: 86.36,
            height: 43.18,
            rotated: false,
            power: None,
            phase_deg: 0.0,
        }],
    );
    g.mesh.per_wavelength = 5.0;
    g.mesh.max_size = 24.0;
    g.mesh.method = method;
    g
}

/// 3-D distance (mm) from `p` to a load shape, written out here independently of the
/// mesher: horizontal distance to the (turned) footprint combined with the vertical gap.
fn load_distance(shape: LoadShape, p: [f64; 3]) -> f64 {
    let (dxy, [b, t]) = match shape {
        LoadShape::Cylinder {
            center,
            radius,
            bottom,
            height,
        } => (
            ((p[0] - center[0]).hypot(p[1] - center[1]) - radius).max(0.0),
            [bottom, bottom + height],
        ),
        LoadShape::Box {
            min,
            max,
            angle_deg,
        } => {
            let (s, c) = angle_deg.to_radians().sin_cos();
            let m = [0.5 * (min[0] + max[0]), 0.5 * (min[1] + max[1])];
            let (x, y) = (p[0] - m[0], p[1] - m[1]);
            let u = (c * x + s * y).abs() - 0.5 * (max[0] - min[0]);
            let v = (-s * x + c * y).abs() - 0.5 * (max[1] - min[1]);
            (u.max(0.0).hypot(v.max(0.0)), [min[2], max[2]])
        }
    };
    dxy.hypot((b - p[2]).max(p[2] - t).max(0.0))
}

/// (mean edge, size field at the tet's centroid, distance of the centroid to the nearest
/// load), all mm.
fn tet_sizes(g: &Geometry, mesh: &TetMesh, t: usize) -> (f64, f64, f64) {
    let sizes = element_sizes(g).expect("sizes");
    let p = mesh.tets[t].map(|v| mesh.nodes[v as usize].map(|x| x / MM));
    let c: [f64; 3] = std::array::from_fn(|k| 0.25 * p.iter().map(|q| q[k]).sum::<f64>());
    let len = |a: [f64; 3], b: [f64; 3]| dot(sub(a, b), sub(a, b)).sqrt();
    let mut mean = 0.0;
    for i in 0..4 {
        for j in i + 1..4 {
            mean += len(p[i], p[j]) / 6.0;
        }
    }
    let mut h = sizes[0].size_mm;
    let mut near = f64::INFINITY;
    for (i, l) in g.loads.iter().enumerate() {
        let shape = l.shape.expect("shape");
        near = near.min(load_distance(shape, c));
        h = h.min(sizes[i + 1].size_mm + GRADING * load_distance(shape, c));
    }
    (mean, h, near)
}

#[test]
fn graded_block_is_conforming_exact_and_meets_the_size_field() {
    for angle in [0.0, 30.0] {
        let g = block_geometry(angle, MeshMethod::Graded);
        let t0 = Instant::now();
        let mesh = mesh_geometry(&g).expect("graded mesh");
        let dt = t0.elapsed();
        let vols = check_invariants(&g, &mesh);
        // Analytic: a turned box keeps its volume 60·40·30 mm³; bisection only splits
        // tets, so the sum is exact up to rounding (1e-12 relative per sum).
        let block = 60.0 * 40.0 * 30.0 * MM.powi(3);
        let n = mesh.tets.len() as f64;
        assert!(
            (vols[1] - block).abs() <= 1e-12 * block * n.sqrt(),
            "angle {angle}: block volume {:e} vs {block:e}",
            vols[1]
        );
        // Analytic: the port rectangle is 86.36 × 43.18 mm², a union of boundary faces.
        let port: f64 = (0..mesh.boundary.len())
            .filter(|&f| mesh.boundary_tag[f] == BoundaryTag::Port(0))
            .map(|f| mesh.boundary_area(f))
            .sum();
        let expect = 86.36 * 43.18 * MM * MM;
        assert!(
            (port - expect).abs() <= 1e-12 * expect * n.sqrt(),
            "port area {port:e}"
        );
        // The size field: every tet's mean edge within 2^(1/3) of the field at its
        // centroid, where that is below the air size (the mesher's stated rule: one
        // bisection step of overshoot, mesh/src/mesher/graded.rs).
        let sizes = element_sizes(&g).expect("sizes");
        let h_air = sizes[0].size_mm;
        let mut worst: f64 = 0.0;
        for t in 0..mesh.tets.len() {
            let (mean, h, _) = tet_sizes(&g, &mesh, t);
            if h < h_air {
                worst = worst.max(mean / h);
            }
        }
        let q = quality_report(&mesh);
        let extruded = mesh_geometry(&block_geometry(angle, MeshMethod::Extruded)).expect("mesh");
        let count = |m: &TetMesh, r: u32| m.tet_region.iter().filter(|&&x| x == r).count();
        println!(
            "angle {angle}: graded {} tets ({} block, {} air) in {dt:.2?} vs extruded {} \
             ({} block, {} air); worst mean edge / h = {worst:.3}; dihedral {:.1}°..{:.1}°, \
             {} poor, min radius ratio {:.3}",
            mesh.tets.len(),
            count(&mesh, 1),
            count(&mesh, 0),
            extruded.tets.len(),
            count(&extruded, 1),
            count(&extruded, 0),
            q.min_dihedral_deg,
            q.max_dihedral_deg,
            q.poor_count,
            q.min_radius_ratio
        );
        assert!(
            worst <= 2f64.powf(1.0 / 3.0) * (1.0 + 1e-12),
            "a tet is larger than the size field allows: {worst}"
        );
        assert!(q.min_dihedral_deg > 0.0 && q.max_dihedral_deg < 180.0);
    }
}

#[test]
fn air_far_from_a_fine_load_stays_coarse() {
    // A water-like block (ε′ = 78, h = 2.8 mm at 5 per wavelength) in a 400 mm box:
    // beyond (h_air − h)/GRADING + 2·h_air of the block (the grading shell plus two coarse
    // elements) the size field is h_air, so tets there must be as coarse as in the
    // extruded mesh at the air size (mean edge ≈ 1.05 h_air, mesh/tests/mesher.rs); a
    // mean edge below 0.8 h_air there would mean refinement spread beyond the shell.
    let mut g = geometry(
        CavityShape::Box {
            size: [400.0, 400.0, 300.0],
        },
        vec![(
            "water",
            LoadShape::Box {
                min: [120.0, 130.0, 10.0],
                max: [180.0, 170.0, 40.0],
                angle_deg: 0.0,
            },
            dielectric("water-like", 78.0),
        )],
    );
    g.mesh.method = MeshMethod::Graded;
    let sizes = element_sizes(&g).expect("sizes");
    let (h_air, h) = (sizes[0].size_mm, sizes[1].size_mm);
    let t0 = Instant::now();
    let mesh = mesh_geometry(&g).expect("graded mesh");
    let dt = t0.elapsed();
    check_invariants(&g, &mesh);
    let shell = (h_air - h) / GRADING + 2.0 * h_air;
    let (mut n_far, mut e_far) = (0usize, 0.0);
    for t in 0..mesh.tets.len() {
        let (mean, _, near) = tet_sizes(&g, &mesh, t);
        if near > shell {
            n_far += 1;
            e_far += mean;
        }
    }
    let e_far = e_far / n_far.max(1) as f64;
    let mut ext = g.clone();
    ext.mesh.method = MeshMethod::Extruded;
    let extruded = mesh_geometry(&ext).expect("extruded mesh");
    let water = mesh.tet_region.iter().filter(|&&r| r == 1).count();
    let water_ext = extruded.tet_region.iter().filter(|&&r| r == 1).count();
    let mean_in = |m: &TetMesh| {
        let w: Vec<usize> = (0..m.tets.len())
            .filter(|&t| m.tet_region[t] == 1)
            .collect();
        w.iter().map(|&t| tet_sizes(&g, m, t).0).sum::<f64>() / w.len() as f64
    };
    println!(
        "water tets: graded {water} (mean edge {:.2} mm), extruded {water_ext} (mean edge {:.2} mm), h {h:.2} mm",
        mean_in(&mesh),
        mean_in(&extruded)
    );
    println!(
        "water block: graded {} tets ({water} water) in {dt:.2?}, extruded {}; \
         {n_far} tets beyond {shell:.0} mm, mean edge {e_far:.2} mm (h_air {h_air:.2} mm)",
        mesh.tets.len(),
        extruded.tets.len()
    );
    assert!(
        n_far > 0 && e_far >= 0.8 * h_air,
        "far air mean edge {e_far}"
    );
    // The point of grading in 3-D: the air above, below and beside the load is not
    // refined through the whole column and layer as the extruded mesh's is.
    let air = |m: &TetMesh| m.tet_region.iter().filter(|&&r| r == 0).count();
    println!(
        "air tets: graded {}, extruded {}",
        air(&mesh),
        air(&extruded)
    );
    assert!(air(&mesh) < air(&extruded));
    // The mean edge in the water: the mesher's claim of about h (module doc); ±15 % is
    // issue 2's band for the extruded mesher's sizes.
    assert!((mean_in(&mesh) / h - 1.0).abs() <= 0.15);
}

#[test]
fn graded_mesh_is_deterministic() {
    let g = block_geometry(30.0, MeshMethod::Graded);
    let a = mesh_geometry(&g).expect("mesh");
    let b = mesh_geometry(&g).expect("mesh");
    assert_eq!(a.nodes, b.nodes);
    assert_eq!(a.tets, b.tets);
    assert_eq!(a.boundary, b.boundary);
    assert_eq!(a.boundary_tag, b.boundary_tag);
}

#[test]
fn method_is_read_and_checked() {
    let text = |m: &str| {
        format!(
            "title = \"invented test scenario\"\n[cavity]\nshape = \"box\"\n\
             size = [300.0, 300.0, 200.0]\nwalls = \"pec\"\n[mesh]\n{m}"
        )
    };
    let read = |m: &str| Geometry::from_toml_str(&text(m), None).map_err(|e| e.to_string());
    assert_eq!(read("").expect("parse").mesh.method, MeshMethod::Extruded);
    assert_eq!(
        read("method = \"graded\"\n").expect("parse").mesh.method,
        MeshMethod::Graded
    );
    assert_eq!(
        read("method = \"extruded\"\n").expect("parse").mesh.method,
        MeshMethod::Extruded
    );
    let e = read("method = \"fine\"\n").expect_err("unknown method");
    assert!(e.contains("method") && e.contains("graded"), "{e}");
}
