//! Tests of the built-in cavity mesher and the quality figures.
//!
//! Geometries here are invented test scenarios. Each check names its source; "analytic"
//! means the expected value follows from elementary geometry.

mod common;

use common::{dielectric, geometry_with_ports as geometry, MM};

use antinode_mesh::geometry::{CavityShape, Geometry, LoadShape, Port, PortWall};
use antinode_mesh::material::Material;
use antinode_mesh::mesher::{element_sizes, mesh_geometry, MesherError, GRADING};
use antinode_mesh::quality::{dihedral_angles, quality_report, radius_ratio};
use antinode_mesh::{BoundaryTag, TetMesh};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::collections::HashMap;
use std::f64::consts::PI;
use std::time::Instant;

/// Water-like dielectric, ε′ = 78 (the value design.md §1 uses for water at 2.45 GHz).
fn water() -> Material {
    dielectric("water-like", 78.0)
}

fn cyl(center: [f64; 2], radius: f64, bottom: f64, height: f64) -> LoadShape {
    LoadShape::Cylinder {
        center,
        radius,
        bottom,
        height,
    }
}

fn port(wall: PortWall, center: [f64; 2], width: f64, height: f64, rotated: bool) -> Port {
    Port {
        name: "feed".into(),
        wall,
        center,
        width,
        height,
        rotated,
        power: None,
        phase_deg: 0.0,
    }
}

fn cavity_volume_mm3(shape: CavityShape) -> f64 {
    match shape {
        CavityShape::Box { size } => size[0] * size[1] * size[2],
        CavityShape::Cylinder { radius, height } => PI * radius * radius * height,
    }
}

/// Region the geometry assigns to a point (mm), ignoring points within `margin` of a
/// load surface; None when ambiguous.
fn analytic_region(geom: &Geometry, p: [f64; 3], margin: f64) -> Option<u32> {
    let mut region = 0;
    for (i, l) in geom.loads.iter().enumerate() {
        let (d_in, z) = match l.shape? {
            LoadShape::Box { min, max, .. } => {
                let d = (0..3)
                    .map(|k| (p[k] - min[k]).min(max[k] - p[k]))
                    .fold(f64::INFINITY, f64::min);
                (d, None)
            }
            LoadShape::Cylinder {
                center,
                radius,
                bottom,
                height,
            } => {
                let r = (p[0] - center[0]).hypot(p[1] - center[1]);
                (radius - r, Some((bottom, bottom + height)))
            }
        };
        let d_in = match z {
            Some((b, t)) => d_in.min(p[2] - b).min(t - p[2]),
            None => d_in,
        };
        if d_in.abs() < margin {
            return None;
        }
        if d_in > 0.0 {
            region = i as u32 + 1;
        }
    }
    Some(region)
}

fn sorted3(mut f: [u32; 3]) -> [u32; 3] {
    f.sort_unstable();
    f
}

struct Stats {
    region_volumes: Vec<f64>,
    port_areas: HashMap<usize, f64>,
}

/// Mesh invariants (analytic: properties any conforming tetrahedral mesh of the cavity
/// must have). `h_min_mm` scales the zero-volume threshold.
fn check_invariants(geom: &Geometry, mesh: &TetMesh, h_min_mm: f64) -> Stats {
    assert_eq!(mesh.tets.len(), mesh.tet_region.len());
    assert_eq!(mesh.boundary.len(), mesh.boundary_tag.len());
    assert_eq!(mesh.regions.len(), geom.loads.len() + 1);
    assert_eq!(mesh.regions[0].name, "air");
    // No inverted or flat tets: volume above 1e-6·h³ (a tet that small relative to the
    // local size is degenerate for any practical purpose).
    let v_min = 1e-6 * (h_min_mm * MM).powi(3);
    for t in 0..mesh.tets.len() {
        let v = mesh.signed_volume(t);
        assert!(
            v > v_min,
            "tet {t} has volume {v:e} m³ (threshold {v_min:e}) at {:?} mm",
            mesh.tets[t].map(|i| mesh.nodes[i as usize].map(|x| x / MM))
        );
    }
    // Every face is used by one or two tets; the faces used once are exactly the boundary.
    let mut faces: HashMap<[u32; 3], u32> = HashMap::with_capacity(mesh.tets.len() * 3);
    for t in &mesh.tets {
        for skip in 0..4 {
            let f: Vec<u32> = (0..4).filter(|&j| j != skip).map(|j| t[j]).collect();
            *faces.entry(sorted3([f[0], f[1], f[2]])).or_default() += 1;
        }
    }
    assert!(
        faces.values().all(|&c| c <= 2),
        "a face is shared by more than two tets"
    );
    let mut once: Vec<[u32; 3]> = faces
        .iter()
        .filter(|(_, &c)| c == 1)
        .map(|(f, _)| *f)
        .collect();
    let mut bnd: Vec<[u32; 3]> = mesh.boundary.iter().map(|&f| sorted3(f)).collect();
    once.sort_unstable();
    bnd.sort_unstable();
    assert_eq!(once.len(), bnd.len(), "boundary triangle count");
    assert!(
        once == bnd,
        "boundary triangles differ from the faces used once"
    );
    // Boundary faces lie on the walls (all three vertices on one wall).
    let on_wall = |f: &[u32; 3]| -> bool {
        let p = f.map(|i| mesh.nodes[i as usize].map(|x| x / MM));
        match geom.cavity.shape {
            CavityShape::Box { size } => (0..3).any(|k| {
                let tol = 1e-9 * size[k];
                p.iter().all(|q| q[k].abs() <= tol)
                    || p.iter().all(|q| (q[k] - size[k]).abs() <= tol)
            }),
            CavityShape::Cylinder { radius, height } => {
                let tz = 1e-9 * height;
                p.iter().all(|q| q[2].abs() <= tz)
                    || p.iter().all(|q| (q[2] - height).abs() <= tz)
                    || p.iter()
                        .all(|q| (q[0].hypot(q[1]) - radius).abs() <= 1e-9 * radius)
            }
        }
    };
    for f in &mesh.boundary {
        assert!(on_wall(f), "boundary triangle {f:?} is not on a wall");
    }
    let mut port_areas = HashMap::new();
    for (f, tag) in mesh.boundary_tag.iter().enumerate() {
        if let BoundaryTag::Port(i) = tag {
            *port_areas.entry(*i).or_insert(0.0) += mesh.boundary_area(f);
        }
    }
    // Whole volume: analytic for a box; for a cylinder the inscribed polygon is smaller.
    let region_volumes = mesh.region_volumes();
    let total: f64 = region_volumes.iter().sum();
    let exact = cavity_volume_mm3(geom.cavity.shape) * MM.powi(3);
    // Round-off: each tet volume carries a few ulps; the sum of n of them ≤ n·16·ε·V.
    let tol = mesh.tets.len() as f64 * 16.0 * f64::EPSILON * exact;
    match geom.cavity.shape {
        CavityShape::Box { .. } => assert!(
            (total - exact).abs() <= tol,
            "box volume {total} vs {exact}"
        ),
        CavityShape::Cylinder { .. } => assert!(total <= exact + tol),
    }
    Stats {
        region_volumes,
        port_areas,
    }
}

/// Locates random points in the mesh (brute force with a bounding-box filter) and checks
/// each tet's region against the analytic region (analytic; points within `margin` mm of
/// a load surface are skipped, as a polygon approximates each circle).
fn check_regions(
    geom: &Geometry,
    mesh: &TetMesh,
    rng: &mut ChaCha8Rng,
    samples: usize,
    margin: f64,
) {
    let (lo, hi) = match geom.cavity.shape {
        CavityShape::Box { size } => ([0.0, 0.0, 0.0], size),
        CavityShape::Cylinder { radius, height } => {
            ([-radius, -radius, 0.0], [radius, radius, height])
        }
    };
    let mut checked = 0;
    let mut located = 0;
    for _ in 0..samples {
        let p: [f64; 3] = std::array::from_fn(|k| rng.gen_range(lo[k]..hi[k]));
        let Some(want) = analytic_region(geom, p, margin) else {
            continue;
        };
        if let CavityShape::Cylinder { radius, .. } = geom.cavity.shape {
            if p[0].hypot(p[1]) > radius - margin {
                continue;
            }
        }
        checked += 1;
        let q = p.map(|x| x * MM);
        let mut found = None;
        for (t, tet) in mesh.tets.iter().enumerate() {
            let v = tet.map(|i| mesh.nodes[i as usize]);
            if (0..3).any(|k| {
                q[k] < v.iter().map(|a| a[k]).fold(f64::INFINITY, f64::min)
                    || q[k] > v.iter().map(|a| a[k]).fold(f64::NEG_INFINITY, f64::max)
            }) {
                continue;
            }
            if barycentric_inside(v, q) {
                found = Some(t);
                break;
            }
        }
        let t = found.unwrap_or_else(|| panic!("point {p:?} mm not in any tet"));
        located += 1;
        assert_eq!(mesh.tet_region[t], want, "region at {p:?} mm");
    }
    assert!(
        checked > samples / 4,
        "too few sample points checked ({checked})"
    );
    assert_eq!(located, checked);
}

fn barycentric_inside(v: [[f64; 3]; 4], q: [f64; 3]) -> bool {
    let vol = |a: [f64; 3], b: [f64; 3], c: [f64; 3], d: [f64; 3]| {
        let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
        let w = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        let x = [d[0] - a[0], d[1] - a[1], d[2] - a[2]];
        u[0] * (w[1] * x[2] - w[2] * x[1]) - u[1] * (w[0] * x[2] - w[2] * x[0])
            + u[2] * (w[0] * x[1] - w[1] * x[0])
    };
    let total = vol(v[0], v[1], v[2], v[3]);
    let l = [
        vol(q, v[1], v[2], v[3]),
        vol(v[0], q, v[2], v[3]),
        vol(v[0], v[1], q, v[3]),
        vol(v[0], v[1], v[2], q),
    ];
    l.iter().all(|x| x / total >= -1e-12)
}

/// Mean edge length (mm) of the tets of each region; with `far = (geom, d)`, only tets
/// whose centroid is farther than `d` mm from every load.
fn mean_edge_per_region(mesh: &TetMesh, far: Option<(&Geometry, f64)>) -> Vec<f64> {
    let mut sum = vec![0.0; mesh.regions.len()];
    let mut n = vec![0usize; mesh.regions.len()];
    for (t, tet) in mesh.tets.iter().enumerate() {
        let r = mesh.tet_region[t] as usize;
        if let Some((g, d)) = far {
            let c: [f64; 3] = std::array::from_fn(|k| {
                tet.iter().map(|&i| mesh.nodes[i as usize][k]).sum::<f64>() / 4.0 / MM
            });
            if g.loads.iter().any(|l| load_distance(l.shape, c) <= d) {
                continue;
            }
        }
        for a in 0..4 {
            for b in a + 1..4 {
                let (p, q) = (mesh.nodes[tet[a] as usize], mesh.nodes[tet[b] as usize]);
                sum[r] += ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2))
                    .sqrt()
                    / MM;
                n[r] += 1;
            }
        }
    }
    sum.iter()
        .zip(&n)
        .map(|(s, &k)| s / k.max(1) as f64)
        .collect()
}

/// Number of tets of `region` whose centroid (mm) satisfies `keep`, and their mean edge
/// length (mm).
fn mean_edge_where(mesh: &TetMesh, region: u32, keep: impl Fn([f64; 3]) -> bool) -> (usize, f64) {
    let (mut sum, mut n) = (0.0, 0usize);
    for (t, tet) in mesh.tets.iter().enumerate() {
        if mesh.tet_region[t] != region {
            continue;
        }
        let c: [f64; 3] = std::array::from_fn(|k| {
            tet.iter().map(|&i| mesh.nodes[i as usize][k]).sum::<f64>() / 4.0 / MM
        });
        if !keep(c) {
            continue;
        }
        n += 1;
        for a in 0..4 {
            for b in a + 1..4 {
                let (p, q) = (mesh.nodes[tet[a] as usize], mesh.nodes[tet[b] as usize]);
                sum += ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2))
                    .sqrt()
                    / MM;
            }
        }
    }
    (n, sum / (6 * n.max(1)) as f64)
}

/// Distances (mm) from a point to a load's footprint in x-y and to its z-range (0 inside).
fn load_distance_xy_z(shape: Option<LoadShape>, p: [f64; 3]) -> [f64; 2] {
    match shape {
        Some(LoadShape::Box { min, max, .. }) => {
            let d: Vec<f64> = (0..3)
                .map(|k| (min[k] - p[k]).max(p[k] - max[k]).max(0.0))
                .collect();
            [d[0].hypot(d[1]), d[2]]
        }
        Some(LoadShape::Cylinder {
            center,
            radius,
            bottom,
            height,
        }) => [
            ((p[0] - center[0]).hypot(p[1] - center[1]) - radius).max(0.0),
            (bottom - p[2]).max(p[2] - bottom - height).max(0.0),
        ],
        None => [f64::INFINITY; 2],
    }
}

/// Euclidean distance (mm) from a point to a load (0 inside).
fn load_distance(shape: Option<LoadShape>, p: [f64; 3]) -> f64 {
    match shape {
        Some(LoadShape::Box { min, max, .. }) => {
            let d: Vec<f64> = (0..3)
                .map(|k| (min[k] - p[k]).max(p[k] - max[k]).max(0.0))
                .collect();
            (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt()
        }
        Some(LoadShape::Cylinder {
            center,
            radius,
            bottom,
            height,
        }) => {
            let dr = ((p[0] - center[0]).hypot(p[1] - center[1]) - radius).max(0.0);
            let dz = (bottom - p[2]).max(p[2] - bottom - height).max(0.0);
            dr.hypot(dz)
        }
        None => f64::INFINITY,
    }
}

/// Volume deficit bound of a cylinder meshed as an inscribed polygon with sides ≤ h
/// (analytic: the missing area lies in a ring of width equal to the sagitta
/// r − √(r² − h²/4), so it is at most 2πr·sagitta).
fn inscribed_deficit_bound(r: f64, h: f64, height: f64) -> f64 {
    let s = r - (r * r - 0.25 * h * h).max(0.0).sqrt();
    2.0 * PI * r * s * height
}

#[test]
fn empty_box_is_conforming_and_exact() {
    let g = geometry(
        CavityShape::Box {
            size: [300.0, 280.0, 200.0],
        },
        vec![],
        vec![],
    );
    let mesh = mesh_geometry(&g).expect("mesh");
    let st = check_invariants(&g, &mesh, 20.0);
    assert_eq!(st.region_volumes.len(), 1);
}

/// Regular-tetrahedron volume factor: a regular tetrahedron of edge h has volume
/// h³/(6√2) ≈ h³/8.49 (exact formula); a mesh whose edges average h has roughly
/// V/(h³/(6√2)) tets (common practice, no source).
fn regular_tet_count(volume_mm3: f64, h: f64) -> f64 {
    volume_mm3 / (h.powi(3) / (6.0 * 2f64.sqrt()))
}

#[test]
fn empty_box_elements_have_the_requested_size() {
    // Issue 2 asks for the mean edge within ~15 % of the target h. The ideal mesh this
    // mesher aims at (equilateral triangles of side 0.9 h in layers 0.9 h thick, each
    // prism cut into three tets) has mean edge 1.16 × 0.9 h = 1.05 h and
    // 6.93 V/(0.9 h)³ = 1.12 × V/(h³/8.49) tets (analytic); rows along the walls and the
    // rounding of the layer count move both a little, hence the bands ±15 % and 0.8–1.4.
    for (size, h) in [([300.0, 300.0, 200.0], 20.0), ([250.0, 180.0, 130.0], 12.0)] {
        let mut g = geometry(CavityShape::Box { size }, vec![], vec![]);
        g.mesh.per_wavelength = 1.0; // λ0 = 122 mm: max_size decides
        g.mesh.max_size = h;
        let mesh = mesh_geometry(&g).expect("mesh");
        check_invariants(&g, &mesh, h);
        let e = mean_edge_per_region(&mesh, None)[0];
        let expect = regular_tet_count(size.iter().product(), h);
        let ratio = mesh.tets.len() as f64 / expect;
        println!(
            "box {size:?}, h = {h} mm: {} tets ({ratio:.2} × V/(h³/8.49)), mean edge {e:.2} mm",
            mesh.tets.len()
        );
        assert!(
            (e / h - 1.0).abs() <= 0.15,
            "mean edge {e} mm vs h = {h} mm"
        );
        assert!((0.8..=1.4).contains(&ratio), "tet count ratio {ratio}");
    }
}

#[test]
fn load_elements_have_the_requested_size() {
    // A dielectric block large against its own size: its tets' mean edge within ±15 % of
    // its target (issue 2's band), as in the empty box.
    let mut g = geometry(
        CavityShape::Box {
            size: [300.0, 280.0, 200.0],
        },
        vec![(
            "block",
            LoadShape::Box {
                min: [80.0, 70.0, 40.0],
                max: [200.0, 190.0, 120.0],
                angle_deg: 0.0,
            },
            dielectric("ceramic-like", 9.0),
        )],
        vec![],
    );
    g.mesh.per_wavelength = 5.0;
    let sizes = element_sizes(&g).expect("sizes");
    let mesh = mesh_geometry(&g).expect("mesh");
    check_invariants(&g, &mesh, sizes[1].size_mm);
    let e = mean_edge_per_region(&mesh, None);
    println!(
        "block: mean edges {e:?} mm, targets {:?}",
        sizes.iter().map(|s| s.size_mm).collect::<Vec<_>>()
    );
    assert!(
        (e[1] / sizes[1].size_mm - 1.0).abs() <= 0.15,
        "block mean edge {} vs {}",
        e[1],
        sizes[1].size_mm
    );
}

#[test]
fn box_with_bowl_on_plate_and_box_on_floor() {
    // Bowl standing on a glass plate (shared face at z = 16), plate overlapping a box load
    // on the floor in footprint (outlines cross), box touching the −x, −y walls and floor.
    let mut g = geometry(
        CavityShape::Box {
            size: [300.0, 300.0, 200.0],
        },
        vec![
            (
                "plate",
                cyl([150.0, 150.0], 140.0, 10.0, 6.0),
                dielectric("glass-like", 6.0),
            ),
            ("bowl", cyl([150.0, 150.0], 60.0, 16.0, 40.0), water()),
            (
                "block",
                LoadShape::Box {
                    min: [0.0, 0.0, 0.0],
                    max: [60.0, 50.0, 8.0],
                    angle_deg: 0.0,
                },
                dielectric("ptfe-like", 2.1),
            ),
        ],
        vec![],
    );
    g.mesh.per_wavelength = 5.0;
    g.mesh.max_size = 20.0;
    let sizes = element_sizes(&g).expect("sizes");
    let t0 = Instant::now();
    let mesh = mesh_geometry(&g).expect("mesh");
    let dt = t0.elapsed();
    let q = quality_report(&mesh);
    println!(
        "box+bowl+plate: {} nodes, {} tets in {:.2?}; dihedral {:.1}°..{:.1}°, {} poor ({}), mean radius ratio {:.3}",
        mesh.nodes.len(), mesh.tets.len(), dt, q.min_dihedral_deg, q.max_dihedral_deg, q.poor_count, q.poor_threshold, q.mean_radius_ratio
    );
    let h_min = sizes
        .iter()
        .map(|s| s.size_mm)
        .fold(f64::INFINITY, f64::min);
    let st = check_invariants(&g, &mesh, h_min);
    // Box load volume: analytic, to round-off.
    let vb = 60.0 * 50.0 * 8.0 * MM.powi(3);
    assert!(
        (st.region_volumes[3] - vb).abs() <= 1e-12 * vb * mesh.tets.len() as f64,
        "block volume"
    );
    // Cylinder loads: inscribed polygons with sides ≤ the load's size (analytic bound).
    for (i, (r, ht)) in [(140.0, 6.0), (60.0, 40.0)].into_iter().enumerate() {
        let exact = PI * r * r * ht * MM.powi(3);
        let bound = inscribed_deficit_bound(r, sizes[i + 1].size_mm, ht) * MM.powi(3);
        let v = st.region_volumes[i + 1];
        assert!(
            v <= exact * (1.0 + 1e-12) && v >= exact - bound,
            "load {i}: {v} vs {exact} (bound {bound})"
        );
    }
    // Each region's mean edge follows its own target size (issue 2: water ~9× finer than
    // air). Water: every tet inside it. Air: only where the size rule asks for h_air, i.e.
    // tets whose footprint is farther than (h_air − h_min)/GRADING from every load
    // footprint and whose height is that far from every load's z-range (analytic from the
    // size rule: both the cross-section and the layer sizes are h_air there).
    let e = mean_edge_per_region(&mesh, None);
    let shell = (sizes[0].size_mm - h_min) / GRADING;
    let far = mean_edge_where(&mesh, 0, |c| {
        g.loads.iter().all(|l| {
            let d = load_distance_xy_z(l.shape, c);
            d[0] > shell && d[1] > shell
        })
    });
    println!("mean edge per region (mm): {e:?}; air beyond the {shell:.0} mm shell in x-y and z: {far:?}; target sizes {:?}", sizes.iter().map(|s| s.size_mm).collect::<Vec<_>>());
    let (far_n, far_edge) = far;
    assert!(far_n > 100, "too few far air tets ({far_n})");
    for (what, got, want) in [
        ("far air", far_edge, sizes[0].size_mm),
        ("water", e[2], sizes[2].size_mm),
    ] {
        // ±15 %: the band issue 2 sets for the mesher; the ideal extruded lattice gives
        // about 1.05 h (see planar::SPACING_FACTOR).
        assert!(
            (got / want - 1.0).abs() <= 0.15,
            "{what}: mean edge {got:.2} mm vs target {want:.2} mm"
        );
    }
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    check_regions(&g, &mesh, &mut rng, 150, h_min);
}

#[test]
fn cylinder_cavity_volume_converges_as_h_squared() {
    // Analytic: a polygon inscribed in a circle with N sides misses area ∝ 1/N² ∝ h².
    let (r, ht) = (150.0, 180.0);
    let exact = PI * r * r * ht * MM.powi(3);
    let mut errs = Vec::new();
    for h in [40.0, 20.0, 10.0] {
        let mut g = geometry(
            CavityShape::Cylinder {
                radius: r,
                height: ht,
            },
            vec![],
            vec![],
        );
        g.mesh.per_wavelength = 1.0; // λ0 = 122 mm: max_size decides
        g.mesh.max_size = h;
        let mesh = mesh_geometry(&g).expect("mesh");
        let st = check_invariants(&g, &mesh, h);
        let err = exact - st.region_volumes[0];
        assert!(
            err > 0.0 && err <= inscribed_deficit_bound(r, h, ht) * MM.powi(3),
            "h = {h}: error {err:e}"
        );
        println!(
            "cylinder h = {h} mm: {} tets, relative volume error {:.3e}",
            mesh.tets.len(),
            err / exact
        );
        errs.push((h, err));
    }
    for w in errs.windows(2) {
        let order = (w[0].1 / w[1].1).ln() / (w[0].0 / w[1].0).ln();
        println!("observed order {order:.2}");
        // Theory gives 2; the side count is rounded up to an integer, so allow 1.5.
        assert!(order > 1.5, "observed order {order}");
    }
}

#[test]
fn box_ports_are_exact_unions_of_boundary_triangles() {
    let g = geometry(
        CavityShape::Box {
            size: [320.0, 300.0, 210.0],
        },
        vec![("bowl", cyl([160.0, 150.0], 50.0, 0.0, 30.0), water())],
        vec![
            // WR-340 broad and narrow sides (EIA standard dimensions, design.md §5).
            port(
                PortWall::BoxWall {
                    axis: 0,
                    positive: true,
                },
                [150.0, 120.0],
                86.36,
                43.18,
                false,
            ),
            port(
                PortWall::BoxWall {
                    axis: 1,
                    positive: false,
                },
                [100.0, 90.0],
                86.36,
                43.18,
                true,
            ),
            port(
                PortWall::BoxWall {
                    axis: 2,
                    positive: true,
                },
                [200.0, 180.0],
                86.36,
                43.18,
                false,
            ),
            port(
                PortWall::BoxWall {
                    axis: 2,
                    positive: false,
                },
                [60.0, 60.0],
                86.36,
                43.18,
                true,
            ),
        ],
    );
    let mesh = mesh_geometry(&g).expect("mesh");
    let sizes = element_sizes(&g).expect("sizes");
    let st = check_invariants(&g, &mesh, sizes[1].size_mm);
    let exact = 86.36 * 43.18 * MM * MM;
    for i in 0..4 {
        let a = st.port_areas.get(&i).copied().unwrap_or(0.0);
        // Analytic area width × height; round-off of a sum of triangle areas.
        assert!(
            (a - exact).abs() <= 1e-10 * exact,
            "port {i}: {a} vs {exact}"
        );
    }
}

#[test]
fn cylinder_cavity_ports_and_loads_touching_the_wall() {
    let (r, ht) = (170.0, 200.0);
    let mut g = geometry(
        CavityShape::Cylinder {
            radius: r,
            height: ht,
        },
        vec![
            ("jar", cyl([110.0, 0.0], 60.0, 0.0, 50.0), water()),
            (
                "brick",
                LoadShape::Box {
                    min: [-100.0, -60.0, 20.0],
                    max: [-20.0, 40.0, 70.0],
                    angle_deg: 0.0,
                },
                dielectric("ceramic-like", 5.0),
            ),
        ],
        vec![
            port(PortWall::Top, [0.0, 80.0], 86.36, 43.18, false),
            port(
                PortWall::Side { angle_deg: 90.0 },
                [0.0, 120.0],
                86.36,
                43.18,
                false,
            ),
        ],
    );
    g.mesh.max_size = 25.0;
    let sizes = element_sizes(&g).expect("sizes");
    let mesh = mesh_geometry(&g).expect("mesh");
    let st = check_invariants(&g, &mesh, sizes[1].size_mm);
    let exact = 86.36 * 43.18 * MM * MM;
    // Flat top: analytic area.
    assert!(
        (st.port_areas[&0] - exact).abs() <= 1e-10 * exact,
        "top port area"
    );
    // Curved side: facets are chords of arcs ≤ h long, so the area lies between
    // exact·(1 − (h/R)²/24) (analytic: chord/arc = sin(x)/x ≥ 1 − x²/6, x = arc/2R) and exact.
    let a = st.port_areas[&1];
    let h = sizes[0].size_mm;
    assert!(
        a <= exact * (1.0 + 1e-12) && a >= exact * (1.0 - (h / r).powi(2) / 24.0),
        "side port area {a} vs {exact}"
    );
    // Box load inside the circle: analytic volume.
    let vb = 80.0 * 100.0 * 50.0 * MM.powi(3);
    assert!((st.region_volumes[2] - vb).abs() <= 1e-12 * vb * mesh.tets.len() as f64);
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    check_regions(&g, &mesh, &mut rng, 100, sizes[0].size_mm);
}

/// Random non-overlapping loads (seeded) in a box cavity: boxes and cylinders, some on the
/// floor or against walls, footprints free to overlap at different heights.
fn random_geometry(rng: &mut ChaCha8Rng, size: [f64; 3]) -> Geometry {
    let mut shapes: Vec<LoadShape> = Vec::new();
    let n = rng.gen_range(1..=3);
    let mut tries = 0;
    while shapes.len() < n && tries < 200 {
        tries += 1;
        let bottom = if rng.gen_bool(0.3) {
            0.0
        } else {
            rng.gen_range(0.0..120.0)
        };
        let height = rng.gen_range(5.0..60.0);
        let s = if rng.gen_bool(0.5) {
            let r = rng.gen_range(15.0..70.0);
            let cx = if rng.gen_bool(0.2) {
                r
            } else {
                rng.gen_range(r..size[0] - r)
            };
            LoadShape::Cylinder {
                center: [cx, rng.gen_range(r..size[1] - r)],
                radius: r,
                bottom,
                height,
            }
        } else {
            let w = [rng.gen_range(20.0..120.0), rng.gen_range(20.0..120.0)];
            let x0 = if rng.gen_bool(0.2) {
                0.0
            } else {
                rng.gen_range(0.0..size[0] - w[0])
            };
            let y0 = rng.gen_range(0.0..size[1] - w[1]);
            LoadShape::Box {
                min: [x0, y0, bottom],
                max: [x0 + w[0], y0 + w[1], bottom + height],
                angle_deg: 0.0,
            }
        };
        let bb = |s: &LoadShape| match *s {
            LoadShape::Box { min, max, .. } => (min, max),
            LoadShape::Cylinder {
                center,
                radius,
                bottom,
                height,
            } => (
                [center[0] - radius, center[1] - radius, bottom],
                [center[0] + radius, center[1] + radius, bottom + height],
            ),
        };
        // Keep loads apart by their bounding boxes (the geometry validator forbids overlap).
        let (a0, a1) = bb(&s);
        if shapes.iter().all(|o| {
            let (b0, b1) = bb(o);
            (0..3).any(|k| a1[k] <= b0[k] || b1[k] <= a0[k])
        }) {
            shapes.push(s);
        }
    }
    let loads = shapes
        .into_iter()
        .enumerate()
        .map(|(i, s)| {
            let eps = [78.0, 4.0, 20.0][i % 3];
            (["a", "b", "c"][i], s, dielectric("random", eps))
        })
        .collect();
    let mut g = geometry(CavityShape::Box { size }, loads, vec![]);
    g.mesh.per_wavelength = 3.0;
    g.mesh.max_size = 30.0;
    g
}

#[test]
fn random_load_placements_seeded() {
    let mut rng = ChaCha8Rng::seed_from_u64(2024);
    for case in 0..5 {
        let g = random_geometry(&mut rng, [300.0, 280.0, 200.0]);
        let sizes = element_sizes(&g).expect("sizes");
        let h_min = sizes
            .iter()
            .map(|s| s.size_mm)
            .fold(f64::INFINITY, f64::min);
        let mesh = mesh_geometry(&g).unwrap_or_else(|e| panic!("case {case}: {e}"));
        let st = check_invariants(&g, &mesh, h_min);
        for (i, l) in g.loads.iter().enumerate() {
            if let Some(LoadShape::Box { min, max, .. }) = l.shape {
                let v = (0..3).map(|k| max[k] - min[k]).product::<f64>() * MM.powi(3);
                assert!(
                    (st.region_volumes[i + 1] - v).abs() <= 1e-12 * v * mesh.tets.len() as f64,
                    "case {case} load {i}"
                );
            }
        }
        check_regions(&g, &mesh, &mut rng, 60, h_min);
        println!(
            "random case {case}: {} loads, {} tets",
            g.loads.len(),
            mesh.tets.len()
        );
    }
}

#[test]
#[ignore = "heavy: 40 more seeded random placements, with quality figures"]
fn heavy_random_load_placements_many() {
    let mut rng = ChaCha8Rng::seed_from_u64(99);
    for case in 0..40 {
        let size = [
            rng.gen_range(200.0..400.0),
            rng.gen_range(200.0..400.0),
            rng.gen_range(150.0..300.0),
        ];
        let g = random_geometry(&mut rng, size);
        let sizes = element_sizes(&g).expect("sizes");
        let h_min = sizes
            .iter()
            .map(|s| s.size_mm)
            .fold(f64::INFINITY, f64::min);
        let mesh = mesh_geometry(&g).unwrap_or_else(|e| panic!("case {case}: {e}"));
        check_invariants(&g, &mesh, h_min);
        let q = quality_report(&mesh);
        println!(
            "case {case}: {} loads, {} tets, dihedral {:.1}°..{:.1}°, {} poor",
            g.loads.len(),
            mesh.tets.len(),
            q.min_dihedral_deg,
            q.max_dihedral_deg,
            q.poor_count
        );
    }
}

#[test]
fn too_fine_mesh_is_refused_with_an_error() {
    let mut g = geometry(
        CavityShape::Box {
            size: [300.0, 300.0, 200.0],
        },
        vec![],
        vec![],
    );
    g.mesh.max_size = 0.2;
    match mesh_geometry(&g) {
        Err(MesherError::TooLarge { .. } | MesherError::EstimateTooLarge { .. }) => {}
        other => panic!("expected TooLarge, got {:?}", other.map(|m| m.tets.len())),
    }
}

#[test]
fn element_sizes_follow_the_local_wavelength() {
    // Analytic: λ0 = c/f = 122.36 mm at 2.45 GHz; in ε′ = 78: λ0/√78.
    let mut g = geometry(
        CavityShape::Box {
            size: [300.0, 300.0, 200.0],
        },
        vec![("bowl", cyl([150.0, 150.0], 50.0, 0.0, 30.0), water())],
        vec![],
    );
    g.mesh.max_size = 1000.0;
    let s = element_sizes(&g).expect("sizes");
    let l0 = 299_792_458.0e3 / 2.45e9;
    assert!((s[0].size_mm - l0 / 5.0).abs() < 1e-12 * l0);
    assert!((s[1].size_mm - l0 / 78f64.sqrt() / 5.0).abs() < 1e-12 * l0);
    g.mesh.max_size = 20.0;
    assert_eq!(element_sizes(&g).expect("sizes")[0].size_mm, 20.0);
}

#[test]
fn quality_of_known_tetrahedra() {
    // Analytic: the regular tetrahedron has all dihedral angles acos(1/3) and radius ratio 1.
    let s = 1.0 / 2f64.sqrt();
    let reg = [
        [1.0, 0.0, -s],
        [-1.0, 0.0, -s],
        [0.0, 1.0, s],
        [0.0, -1.0, s],
    ];
    for a in dihedral_angles(reg) {
        assert!((a - (1.0f64 / 3.0).acos().to_degrees()).abs() < 1e-10);
    }
    assert!((radius_ratio(reg) - 1.0).abs() < 1e-12);
    // Analytic: the corner tet of a unit cube has three 90° angles at the corner edges
    // and three of acos(1/√3) = 54.7356° at the slanted face.
    let corner = [
        [0.0, 0.0, 0.0],
        [1.0, 0.0, 0.0],
        [0.0, 1.0, 0.0],
        [0.0, 0.0, 1.0],
    ];
    let mut a = dihedral_angles(corner);
    a.sort_by(f64::total_cmp);
    let slanted = (1.0 / 3f64.sqrt()).acos().to_degrees();
    for (x, y) in a.iter().zip([slanted, slanted, slanted, 90.0, 90.0, 90.0]) {
        assert!((x - y).abs() < 1e-10, "{a:?}");
    }
    // A flat tetrahedron is degenerate: ratio 0.
    let flat = [
        [0.0, 0.0, 0.0],
        [1.0, 0.0, 0.0],
        [0.0, 1.0, 0.0],
        [1.0, 1.0, 0.0],
    ];
    assert_eq!(radius_ratio(flat), 0.0);
}

#[test]
#[ignore = "heavy: prints size, time and quality of a box with a water bowl"]
fn heavy_box_with_water_bowl_figures() {
    let g = geometry(
        CavityShape::Box {
            size: [300.0, 300.0, 200.0],
        },
        vec![("bowl", cyl([150.0, 150.0], 60.0, 10.0, 40.0), water())],
        vec![],
    );
    let t0 = Instant::now();
    let mesh = mesh_geometry(&g).expect("mesh");
    let dt = t0.elapsed();
    let q = quality_report(&mesh);
    println!(
        "box 300x300x200 + water bowl r60 h40, per_wavelength 5: {} nodes, {} tets in {:.2?}; dihedral {:.1}°..{:.1}°, {} poor ({}), radius ratio min {:.3} mean {:.3}",
        mesh.nodes.len(), mesh.tets.len(), dt, q.min_dihedral_deg, q.max_dihedral_deg, q.poor_count, q.poor_threshold, q.min_radius_ratio, q.mean_radius_ratio
    );
    let sizes = element_sizes(&g).expect("sizes");
    check_invariants(&g, &mesh, sizes[1].size_mm);
}

/// Mean edge length (mm) per region, tets per region and quality of each example geometry
/// in `geometries/`, for before/after comparisons of mesher changes (prints only).
#[test]
#[ignore = "heavy: meshes every example geometry and prints its figures"]
fn heavy_example_geometry_figures() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../geometries");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .expect("geometries folder")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    files.sort();
    for f in files {
        let g = Geometry::from_file(&f).expect("geometry");
        let t0 = Instant::now();
        let mesh = mesh_geometry(&g).expect("mesh");
        let dt = t0.elapsed();
        let q = quality_report(&mesh);
        let sizes = element_sizes(&g).expect("sizes");
        let mut per_region = vec![0usize; mesh.regions.len()];
        for &r in &mesh.tet_region {
            per_region[r as usize] += 1;
        }
        println!(
            "{}: {} nodes, {} tets {:?} in {:.2?}; dihedral {:.1}°..{:.1}°, {} poor; radius ratio min {:.3} mean {:.3}\n  mean edge per region (mm) {:.2?}, target {:.2?}",
            f.file_name().map(|s| s.to_string_lossy().into_owned()).unwrap_or_default(),
            mesh.nodes.len(), mesh.tets.len(), per_region, dt, q.min_dihedral_deg, q.max_dihedral_deg, q.poor_count,
            q.min_radius_ratio, q.mean_radius_ratio,
            mean_edge_per_region(&mesh, None),
            sizes.iter().map(|s| s.size_mm).collect::<Vec<_>>()
        );
    }
}
