//! Tests of the graded mesher on curved surfaces: vertices of refined cylinder sides on
//! the true surface, volumes converging to πR²H, the curved-surface description, and
//! seeded random load placements (cylinders, turned boxes).
//!
//! Geometries are invented test scenarios; "analytic" means the expected value follows
//! from elementary geometry. Mesh invariants are `common::check_invariants`.

mod common;

use antinode_mesh::geometry::{CavityShape, Geometry, LoadShape, MeshMethod};
use antinode_mesh::mesher::mesh_geometry_curved;
use antinode_mesh::quality::quality_report;
use antinode_mesh::refine::SurfaceOwner;
use antinode_mesh::tet_mesh::{dot, sub};
use common::{check_invariants, dielectric, geometry, MM};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::collections::HashSet;
use std::f64::consts::PI;

fn cyl(center: [f64; 2], radius: f64, bottom: f64, height: f64) -> LoadShape {
    LoadShape::Cylinder {
        center,
        radius,
        bottom,
        height,
    }
}

/// A 200 × 200 × 120 mm box with an ε′ = 9 cylinder r = 40 mm, h = 30 mm (invented).
fn rod_in_box(per_wavelength: f64) -> Geometry {
    let mut g = geometry(
        CavityShape::Box {
            size: [200.0, 200.0, 120.0],
        },
        vec![(
            "rod",
            cyl([100.0, 100.0], 40.0, 20.0, 30.0),
            dielectric("ceramic-like", 9.0),
        )],
    );
    g.mesh.per_wavelength = per_wavelength;
    g.mesh.max_size = 30.0;
    g.mesh.method = MeshMethod::Graded;
    g
}

#[test]
fn cylinder_volume_converges_at_second_order() {
    // A side triangle with vertices on the cylinder and edges ≤ s lies within s²/(2R) of
    // it (its points are inside the circular segment of a chord ≤ 2s, whose sagitta is
    // (2s)²/(8R), analytic), and the polyhedron lies inside the convex cylinder, so
    // 0 ≤ πR²H − V ≤ 2πRH · s²/(2R) = πH s²: second order in the surface edge length s.
    let (r, height) = (40.0 * MM, 30.0 * MM);
    let exact = PI * r * r * height;
    let mut rows = Vec::new();
    for pw in [3.0, 6.0, 12.0] {
        let g = rod_in_box(pw);
        let c = mesh_geometry_curved(&g).expect("graded mesh");
        let vols = check_invariants(&g, &c.mesh);
        let s = c
            .surface_faces
            .iter()
            .filter(|(_, k)| c.surfaces[*k as usize].owner == SurfaceOwner::Load(0))
            .flat_map(|(f, _)| [(f[0], f[1]), (f[0], f[2]), (f[1], f[2])])
            .map(|(a, b)| {
                let d = sub(c.mesh.nodes[a as usize], c.mesh.nodes[b as usize]);
                dot(d, d).sqrt()
            })
            .fold(0.0, f64::max);
        let err = exact - vols[1];
        let q = quality_report(&c.mesh);
        println!(
            "per_wavelength {pw}: {} tets, rod volume error {:.3e} (relative {:.2e}), \
             longest side edge {:.2} mm, bound {:.3e}; {} projections undone; dihedral \
             {:.1}°..{:.1}°, {} poor",
            c.mesh.tets.len(),
            err,
            err / exact,
            s / MM,
            PI * height * s * s,
            c.projections_undone,
            q.min_dihedral_deg,
            q.max_dihedral_deg,
            q.poor_count
        );
        assert!(
            err >= -1e-12 * exact,
            "volume above the cylinder's: {err:e}"
        );
        assert!(err <= PI * height * s * s, "deficit {err:e} above πHs²");
        rows.push((pw, err));
    }
    for w in rows.windows(2) {
        let rate = (w[0].1 / w[1].1).ln() / (w[1].0 / w[0].0).ln();
        println!(
            "per_wavelength {} → {}: observed rate {rate:.2} (analytic 2)",
            w[0].0, w[1].0
        );
        assert!(w[1].1 < w[0].1, "error did not fall");
    }
}

#[test]
fn surfaces_and_their_faces_are_described_exactly() {
    // A cylinder cavity (r 150, h 120 mm) with a cylindrical load near the wall: the wall
    // is refined near the load, and every vertex of a refined wall face must lie on the
    // circle (check_invariants) unless its projection was undone.
    let mut g = geometry(
        CavityShape::Cylinder {
            radius: 150.0,
            height: 120.0,
        },
        vec![(
            "jar",
            cyl([85.0, 0.0], 50.0, 0.0, 40.0),
            dielectric("ceramic-like", 9.0),
        )],
    );
    g.mesh.method = MeshMethod::Graded;
    g.mesh.max_size = 30.0;
    let c = mesh_geometry_curved(&g).expect("graded mesh");
    assert_eq!(c.surfaces.len(), 2);
    assert_eq!(c.surfaces[0].owner, SurfaceOwner::Cavity);
    assert_eq!(c.surfaces[1].owner, SurfaceOwner::Load(0));
    assert!((c.surfaces[1].radius - 50.0 * MM).abs() < 1e-15);
    assert_eq!(c.surfaces[1].z, [0.0, 40.0 * MM]);
    if c.projections_undone == 0 {
        check_invariants(&g, &c.mesh);
    }
    // Every listed face: a boundary face (cavity wall) or an interface (jar side), with
    // its vertices on its surface (analytic radius) to rounding.
    let boundary: HashSet<[u32; 3]> = c
        .mesh
        .boundary
        .iter()
        .map(|f| {
            let mut k = *f;
            k.sort_unstable();
            k
        })
        .collect();
    let mut area = [0.0; 2];
    for (f, s) in &c.surface_faces {
        let surf = c.surfaces[*s as usize];
        assert_eq!(boundary.contains(f), surf.owner == SurfaceOwner::Cavity);
        for &v in f {
            let p = c.mesh.nodes[v as usize];
            let r = (p[0] - surf.center[0]).hypot(p[1] - surf.center[1]);
            assert!((r - surf.radius).abs() <= 1e-9 * surf.radius || c.projections_undone > 0);
        }
        let [a, b, d] = f.map(|v| c.mesh.nodes[v as usize]);
        let n = antinode_mesh::tet_mesh::cross(sub(b, a), sub(d, a));
        area[*s as usize] += 0.5 * dot(n, n).sqrt();
    }
    // Analytic side areas 2πRH; inscribed triangles fall short by O(s²/R²).
    for (k, (rr, hh)) in [(150.0, 120.0), (50.0, 40.0)].into_iter().enumerate() {
        let exact = 2.0 * PI * rr * hh * MM * MM;
        println!(
            "surface {k}: area {:.6e} vs 2πRH {exact:.6e} (relative {:.2e}); {} projections undone",
            area[k],
            (exact - area[k]) / exact,
            c.projections_undone
        );
        assert!(area[k] <= exact * (1.0 + 1e-12) && area[k] > 0.98 * exact);
    }
    assert_eq!(
        c.projections_undone, 0,
        "some wall or jar vertex left off its surface"
    );
}

/// Seeded random loads in a box: cylinders and turned boxes, apart by bounding circles.
fn random_geometry(rng: &mut ChaCha8Rng) -> Geometry {
    let size = [300.0, 280.0, 200.0];
    // shape, bounding circle (x, y, r), z-range
    let mut loads: Vec<(LoadShape, [f64; 3], [f64; 2])> = Vec::new();
    let mut tries = 0;
    while loads.len() < 3 && tries < 200 {
        tries += 1;
        let bottom = if rng.gen_bool(0.3) {
            0.0
        } else {
            rng.gen_range(0.0..120.0)
        };
        let height = rng.gen_range(5.0..60.0);
        let (shape, circle) = if rng.gen_bool(0.5) {
            let r = rng.gen_range(15.0..60.0);
            let c = [rng.gen_range(r..size[0] - r), rng.gen_range(r..size[1] - r)];
            (cyl(c, r, bottom, height), [c[0], c[1], r])
        } else {
            let w: [f64; 2] = [rng.gen_range(20.0..80.0), rng.gen_range(20.0..80.0)];
            let r = 0.5 * w[0].hypot(w[1]);
            let c = [rng.gen_range(r..size[0] - r), rng.gen_range(r..size[1] - r)];
            let shape = LoadShape::Box {
                min: [c[0] - 0.5 * w[0], c[1] - 0.5 * w[1], bottom],
                max: [c[0] + 0.5 * w[0], c[1] + 0.5 * w[1], bottom + height],
                angle_deg: rng.gen_range(0.0..90.0),
            };
            (shape, [c[0], c[1], r])
        };
        let z = [bottom, bottom + height];
        // Apart by bounding circles or by height (the validator forbids overlap).
        let apart = loads.iter().all(|(_, o, oz)| {
            (circle[0] - o[0]).hypot(circle[1] - o[1]) > circle[2] + o[2] + 1.0
                || z[0] >= oz[1]
                || z[1] <= oz[0]
        });
        if apart {
            loads.push((shape, circle, z));
        }
    }
    let named = loads
        .into_iter()
        .enumerate()
        .map(|(i, (s, _, _))| {
            let eps = [78.0, 4.0, 20.0][i % 3];
            (["a", "b", "c"][i], s, dielectric("random", eps))
        })
        .collect();
    let mut g = geometry(CavityShape::Box { size }, named);
    g.mesh.per_wavelength = 3.0;
    g.mesh.max_size = 30.0;
    g.mesh.method = MeshMethod::Graded;
    g
}

#[test]
fn random_load_placements_seeded() {
    let mut rng = ChaCha8Rng::seed_from_u64(1010);
    for case in 0..6 {
        let g = random_geometry(&mut rng);
        let c = mesh_geometry_curved(&g).unwrap_or_else(|e| panic!("case {case}: {e}"));
        let vols = check_invariants(&g, &c.mesh);
        let n = c.mesh.tets.len() as f64;
        for (i, l) in g.loads.iter().enumerate() {
            match l.shape.expect("shape") {
                LoadShape::Box { min, max, .. } => {
                    // Analytic: a turned box keeps its volume.
                    let v = (0..3).map(|k| max[k] - min[k]).product::<f64>() * MM.powi(3);
                    assert!(
                        (vols[i + 1] - v).abs() <= 1e-12 * v * n.sqrt(),
                        "case {case} load {i}"
                    );
                }
                LoadShape::Cylinder { radius, height, .. } => {
                    // Inscribed: never above πR²H (see the convergence test).
                    let v = PI * radius * radius * height * MM.powi(3);
                    assert!(vols[i + 1] <= v * (1.0 + 1e-12), "case {case} load {i}");
                }
            }
        }
        let q = quality_report(&c.mesh);
        let mut e = g.clone();
        e.mesh.method = MeshMethod::Extruded;
        let qe = quality_report(&mesh_geometry_curved(&e).expect("extruded").mesh);
        println!(
            "random case {case}: {} loads, {} tets, {} projections undone, dihedral \
             {:.1}°..{:.1}°, {} poor (extruded: {} tets, {:.1}°..{:.1}°, {} poor)",
            g.loads.len(),
            c.mesh.tets.len(),
            c.projections_undone,
            q.min_dihedral_deg,
            q.max_dihedral_deg,
            q.poor_count,
            qe.tets,
            qe.min_dihedral_deg,
            qe.max_dihedral_deg,
            qe.poor_count
        );
    }
}

#[test]
#[ignore = "heavy: meshes the 1 L oven both ways (about a minute, ~3 GB); run with --ignored"]
fn heavy_oven_1l_figures() {
    // Figures only (printed, not asserted beyond the invariants): tets per region, time
    // and quality of geometries/oven_1l.toml with both methods.
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../geometries/oven_1l.toml");
    let g = Geometry::from_file(&path).expect("oven_1l.toml");
    for method in [MeshMethod::Graded, MeshMethod::Extruded] {
        let mut g = g.clone();
        g.mesh.method = method;
        let t0 = std::time::Instant::now();
        let c = mesh_geometry_curved(&g).expect("mesh");
        let dt = t0.elapsed();
        let vols = check_invariants(&g, &c.mesh);
        let q = quality_report(&c.mesh);
        let per: Vec<usize> = (0..c.mesh.regions.len() as u32)
            .map(|r| c.mesh.tet_region.iter().filter(|&&x| x == r).count())
            .collect();
        println!(
            "{method:?}: {} tets {per:?} (air, plate, water) in {dt:.2?}; water volume {:.6} L \
             (πr²h = {:.6} L); dihedral {:.1}°..{:.1}°, {} poor; {} projections undone",
            c.mesh.tets.len(),
            vols[2] * 1e3,
            PI * 70.0 * 70.0 * 65.0 * 1e-6,
            q.min_dihedral_deg,
            q.max_dihedral_deg,
            q.poor_count,
            c.projections_undone
        );
    }
}
