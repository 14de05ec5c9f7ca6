//! Box loads turned about the vertical axis (`angle_deg`): reading, containment and
//! overlap checks with the turned footprint, and meshes whose load volume is exact.
//!
//! Geometries are invented test scenarios; "analytic" means the expected value follows
//! from elementary geometry (a turned box keeps its volume a·b·c).

mod common;

use antinode_mesh::geometry::{CavityShape, LoadShape};
use antinode_mesh::mesher::mesh_geometry;
use antinode_mesh::Geometry;
use common::{check_invariants, dielectric, geometry, MM};

const BOX: &str = r#"title = "invented test scenario"
[cavity]
shape = "box"
size = [300.0, 300.0, 200.0]
walls = "pec"
"#;

fn parse(text: &str) -> Result<Geometry, String> {
    Geometry::from_toml_str(text, None).map_err(|e| e.to_string())
}

fn box_load(extra: &str, min: &str, max: &str) -> String {
    format!(
        "{BOX}[[load]]\nname = \"dish\"\nshape = \"box\"\nmin = {min}\nmax = {max}\n\
         material = {{ permittivity = 4.0 }}\n{extra}"
    )
}

#[test]
fn angle_is_read_and_defaults_to_zero() {
    let g = parse(&box_load("", "[100.0, 100.0, 0.0]", "[200.0, 150.0, 20.0]")).expect("parse");
    let Some(LoadShape::Box { angle_deg, .. }) = g.loads[0].shape else {
        panic!("not a box")
    };
    assert_eq!(angle_deg, 0.0);
    let g = parse(&box_load(
        "angle_deg = 30.0\n",
        "[100.0, 100.0, 0.0]",
        "[200.0, 150.0, 20.0]",
    ))
    .expect("parse");
    let Some(LoadShape::Box { angle_deg, .. }) = g.loads[0].shape else {
        panic!("not a box")
    };
    assert_eq!(angle_deg, 30.0);
}

#[test]
fn angle_on_a_cylinder_and_non_finite_angles_are_refused() {
    let text = format!(
        "{BOX}[[load]]\nname = \"jar\"\nshape = \"cylinder\"\ncenter = [150.0, 150.0]\n\
         radius = 30.0\nbottom = 0.0\nheight = 40.0\nangle_deg = 10.0\nmaterial = \"water\"\n"
    );
    let e = parse(&text).expect_err("angle on a cylinder");
    assert!(e.contains("angle_deg") && e.contains("jar"), "{e}");
    let e = parse(&box_load(
        "angle_deg = nan\n",
        "[100.0, 100.0, 0.0]",
        "[200.0, 150.0, 20.0]",
    ))
    .expect_err("nan angle");
    assert!(e.contains("angle_deg"), "{e}");
}

#[test]
fn containment_uses_the_turned_footprint() {
    // Analytic: a 380 × 40 mm bar centred in a 300 × 300 mm cavity, turned by θ, reaches
    // 190·cos θ + 20·sin θ from its centre along x: 148.5 mm at 45° (inside the 150 mm
    // half-width), 174.5 mm at 30° (outside); unturned its min/max leave the cavity.
    let long = |angle: f64| {
        box_load(
            &format!("angle_deg = {angle:?}\n"),
            "[-40.0, 130.0, 0.0]",
            "[340.0, 170.0, 20.0]",
        )
    };
    parse(&long(45.0)).expect("380 mm bar at 45° fits");
    let e = parse(&long(30.0)).expect_err("380 mm bar at 30° pokes out");
    assert!(e.contains("dish") && e.contains("footprint"), "{e}");
    // Unturned, min/max themselves leave the cavity.
    assert!(parse(&long(0.0)).is_err());
}

#[test]
fn overlap_uses_the_turned_footprints() {
    // Analytic: bar A (100 × 20 mm) centred at (150, 150); bar B alike, centred at
    // (150, 150 + d). Parallel, they are disjoint for d ≥ 20; B turned by 90° spans
    // y ± 50 about its centre and meets A for d < 60 (touches at 60).
    let two = |d: f64, angle: f64| {
        let y = 150.0 + d;
        format!(
            "{BOX}[[load]]\nname = \"a\"\nshape = \"box\"\nmin = [100.0, 140.0, 0.0]\n\
             max = [200.0, 160.0, 20.0]\nmaterial = {{ permittivity = 4.0 }}\n\
             [[load]]\nname = \"b\"\nshape = \"box\"\nmin = [100.0, {}, 0.0]\n\
             max = [200.0, {}, 20.0]\nangle_deg = {angle:?}\nmaterial = {{ permittivity = 4.0 }}\n",
            y - 10.0,
            y + 10.0
        )
    };
    parse(&two(30.0, 0.0)).expect("parallel bars 30 mm apart are disjoint");
    let e = parse(&two(30.0, 90.0)).expect_err("crossed bars overlap");
    assert!(e.contains("intersect"), "{e}");
    parse(&two(60.0, 90.0)).expect("crossed bar touching at d = 60 is allowed");
    // Box and cylinder: a jar of radius 30 centred 45 mm beside the centre of a bar
    // 20 mm wide: clear of it unturned (45 − 10 = 35 > 30), inside it turned by 90°.
    let jar = |angle: f64| {
        format!(
            "{}[[load]]\nname = \"jar\"\nshape = \"cylinder\"\ncenter = [150.0, 195.0]\n\
             radius = 30.0\nbottom = 0.0\nheight = 40.0\nmaterial = \"water\"\n",
            box_load(
                &format!("angle_deg = {angle:?}\n"),
                "[100.0, 140.0, 0.0]",
                "[200.0, 160.0, 20.0]"
            )
        )
    };
    parse(&jar(0.0)).expect("jar beside the bar");
    let e = parse(&jar(90.0)).expect_err("jar in the turned bar");
    assert!(e.contains("circle") && e.contains("jar"), "{e}");
}

fn turned_box(angle_deg: f64) -> LoadShape {
    LoadShape::Box {
        min: [110.0, 120.0, 0.0],
        max: [190.0, 165.0, 37.0],
        angle_deg,
    }
}

#[test]
fn turned_box_meshes_keep_their_volume_exactly() {
    // Analytic: the footprint is a polygon made of mesh edges and its top and bottom are
    // layer planes, so the load's tets fill it exactly: a·b·c to rounding (1e-12 relative,
    // the sum over ~1e4 tets of values exact to ~1e-16 each).
    let v = 80.0 * 45.0 * 37.0 * MM.powi(3);
    for angle in [0.0, 17.0, 45.0, 90.0, 123.4, -61.0] {
        for cavity in [
            CavityShape::Box {
                size: [300.0, 290.0, 200.0],
            },
            CavityShape::Cylinder {
                radius: 160.0,
                height: 200.0,
            },
        ] {
            let shift = |s: LoadShape| match (s, cavity) {
                (
                    LoadShape::Box {
                        min,
                        max,
                        angle_deg,
                    },
                    CavityShape::Cylinder { .. },
                ) => LoadShape::Box {
                    min: [min[0] - 150.0, min[1] - 150.0, min[2]],
                    max: [max[0] - 150.0, max[1] - 150.0, max[2]],
                    angle_deg,
                },
                (s, _) => s,
            };
            let g = geometry(
                cavity,
                vec![(
                    "dish",
                    shift(turned_box(angle)),
                    dielectric("ceramic-like", 6.0),
                )],
            );
            let mesh = mesh_geometry(&g).expect("mesh");
            let vols = check_invariants(&g, &mesh);
            let rel = (vols[1] - v).abs() / v;
            println!(
                "angle {angle}°, {cavity:?}: {} tets, volume error {rel:.2e}",
                mesh.tets.len()
            );
            assert!(rel <= 1e-12, "angle {angle}: relative volume error {rel:e}");
        }
    }
}
