//! Extreme sizes and targets: refused by the file reader (with the line) or by the
//! element-count estimate before meshing, never by an allocation failure or a hang.
//!
//! Geometries are invented test scenarios. Timings are printed, not asserted.

mod common;

use antinode_mesh::geometry::{CavityShape, Geometry, LoadShape};
use antinode_mesh::material::Material;
use antinode_mesh::mesher::{element_sizes, estimate, mesh_geometry, MesherError, ESTIMATE_MARGIN};
use std::time::Instant;

fn box_file(size: &str, target: &str) -> String {
    format!(
        "title = \"invented test scenario\"\n[cavity]\nshape = \"box\"\nsize = {size}\n\
         walls = \"copper\"\n[solve]\ntarget = {target}\ncount = 4\n"
    )
}

/// Every extreme case of the bad-input trial is refused by the reader, naming the line
/// and the key, before anything is meshed.
#[test]
fn extreme_sizes_and_targets_are_refused_by_the_reader() {
    let cases = [
        (box_file("[1e12, 1e12, 80]", "2.45"), "size"),
        (box_file("[1e30, 100, 80]", "2.45"), "size"),
        (box_file("[1e10, 1e10, 80]", "2.45"), "size"),
        (box_file("[1e8, 1e8, 80]", "2.45"), "size"),
        (box_file("[1e6, 1e6, 80]", "2.45"), "size"),
        (box_file("[1e-30, 100, 80]", "2.45"), "size"),
        (box_file("[300, 300, 200]", "1e6"), "target"),
        (
            "title = \"t\"\n[cavity]\nshape = \"cylinder\"\nradius = 1e30\nheight = 100\nwalls = \"pec\"\n"
                .to_string(),
            "radius",
        ),
        (
            box_file("[300, 300, 200]", "2.45").replace("count = 4", "count = 100000000"),
            "count",
        ),
    ];
    for (text, key) in cases {
        let t0 = Instant::now();
        let e = Geometry::from_toml_str(&text, None).expect_err(&text);
        let msg = e.to_string();
        println!("{:.1e} s: {msg}", t0.elapsed().as_secs_f64());
        assert!(msg.contains(key) && msg.contains("line"), "{msg}");
    }
}

/// A geometry the reader accepts whose mesh would be far too large (the largest allowed
/// box, and a 100 GHz target in an oven-size box: ~1e9 tets) is refused by the estimate
/// before meshing, with the numbers and the options to change.
#[test]
fn too_large_meshes_are_refused_before_meshing() {
    for (size, target) in [("[1e5, 1e5, 80]", "2.45"), ("[300, 300, 200]", "100")] {
        let g = Geometry::from_toml_str(&box_file(size, target), None).unwrap();
        let t0 = Instant::now();
        let e = mesh_geometry(&g).expect_err(size);
        println!("{:.1e} s: {e}", t0.elapsed().as_secs_f64());
        assert!(matches!(e, MesherError::EstimateTooLarge { .. }), "{e}");
        assert!(e.to_string().contains("--max-size"), "{e}");
    }
}

/// The shared test geometry with this target and these loads.
fn code_geometry(
    shape: CavityShape,
    target: f64,
    loads: Vec<(&str, LoadShape, Material)>,
) -> Geometry {
    let mut g = common::geometry(shape, loads);
    g.solve.target = target;
    g.solve.count = Some(4);
    g
}

/// Geometries built in code skip the reader: the mesher checks the same bounds (the
/// `1e-30` side once panicked with "chunk_size must not be zero").
#[test]
fn mesher_checks_bounds_of_geometries_built_in_code() {
    for (shape, target) in [
        (
            CavityShape::Box {
                size: [1e-30, 100.0, 80.0],
            },
            2.45,
        ),
        (
            CavityShape::Box {
                size: [1e12, 1e12, 80.0],
            },
            2.45,
        ),
        (
            CavityShape::Cylinder {
                radius: 1e30,
                height: 100.0,
            },
            2.45,
        ),
        (
            CavityShape::Box {
                size: [300.0, 300.0, 200.0],
            },
            1e6,
        ),
    ] {
        let g = code_geometry(shape, target, vec![]);
        let t0 = Instant::now();
        let e = mesh_geometry(&g).expect_err("refused");
        println!("{:.1e} s: {e}", t0.elapsed().as_secs_f64());
        assert!(matches!(e, MesherError::Settings(_)), "{e}");
    }
}

/// The estimate is within the margin the mesher refuses by of the mesher's own count, on
/// an empty box, a cylinder and a box with a water-like load (observed 0.87–1.09).
#[test]
fn estimate_bounds_the_mesh_from_below() {
    let load = (
        "bowl",
        LoadShape::Cylinder {
            center: [150.0, 150.0],
            radius: 40.0,
            bottom: 10.0,
            height: 30.0,
        },
        common::dielectric("water-like", 78.0),
    );
    for g in [
        code_geometry(
            CavityShape::Box {
                size: [300.0, 300.0, 200.0],
            },
            2.45,
            vec![],
        ),
        code_geometry(
            CavityShape::Cylinder {
                radius: 120.0,
                height: 150.0,
            },
            2.45,
            vec![],
        ),
        code_geometry(
            CavityShape::Box {
                size: [300.0, 300.0, 200.0],
            },
            2.45,
            vec![load],
        ),
    ] {
        let est = estimate(&g, &element_sizes(&g).unwrap()).unwrap();
        let actual = mesh_geometry(&g).unwrap().tets.len() as f64;
        println!("estimate {:.0} tets, mesher {actual}", est.tets);
        let ratio = actual / est.tets;
        println!("mesher / estimate = {ratio:.3}");
        assert!(
            (1.0 / ESTIMATE_MARGIN..=ESTIMATE_MARGIN).contains(&ratio),
            "{est:?} vs {actual}"
        );
    }
}
