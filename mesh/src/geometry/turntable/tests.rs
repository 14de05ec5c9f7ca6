//! Reading `[turntable]` and turning loads; the geometry here is an invented test scenario.
//! Expected placements are plane rotation by hand (x' = c + R(θ)(x − c)).

use super::*;
use crate::error::GeometryError;

const BASE: &str = r#"
[cavity]
shape = "box"
size = [300.0, 300.0, 200.0]
walls = "pec"

[[load]]
name = "dish"
shape = "box"
min = [180.0, 130.0, 0.0]
max = [220.0, 170.0, 30.0]
material = "ptfe"

[[load]]
name = "cup"
shape = "cylinder"
center = [150.0, 150.0]
radius = 20.0
bottom = 0.0
height = 40.0
material = "ptfe"
"#;

fn with(table: &str) -> Result<Geometry, GeometryError> {
    Geometry::from_toml_str(&format!("{BASE}\n{table}"), None)
}

#[test]
fn steps_give_equal_angles_and_every_load_by_default() {
    let g = with("[turntable]\ncenter = [150.0, 150.0]\nsteps = 4\n").unwrap();
    let t = g.turntable.unwrap();
    assert_eq!(t.angles_deg, vec![0.0, 90.0, 180.0, 270.0]);
    assert_eq!(t.loads, vec!["dish".to_string(), "cup".to_string()]);
    assert_eq!(t.grid_mm, DEFAULT_GRID_MM);
}

#[test]
fn box_turns_about_the_plate_and_its_own_axis() {
    let g = with("[turntable]\ncenter = [150.0, 150.0]\nangles_deg = [90.0]\n").unwrap();
    let turned = g.at_plate_angle(90.0);
    assert!(turned.turntable.is_none());
    // Footprint centre (200, 150) → (150, 200) by a quarter turn about (150, 150).
    let Some(LoadShape::Box {
        min,
        max,
        angle_deg,
    }) = turned.load("dish").unwrap().shape
    else {
        panic!("box expected")
    };
    let tol = 1e-12 * 300.0;
    for (a, b) in min.iter().zip([130.0, 180.0, 0.0]) {
        assert!((a - b).abs() < tol, "{min:?}");
    }
    for (a, b) in max.iter().zip([170.0, 220.0, 30.0]) {
        assert!((a - b).abs() < tol, "{max:?}");
    }
    assert_eq!(angle_deg, 90.0);
    // The centred cylinder stays where it is.
    let Some(LoadShape::Cylinder { center, .. }) = turned.load("cup").unwrap().shape else {
        panic!("cylinder expected")
    };
    assert_eq!(center, [150.0, 150.0]);
}

#[test]
fn document_at_angle_reads_back_as_the_turned_geometry() {
    let text = format!("{BASE}\n[turntable]\ncenter = [120.0, 150.0]\nsteps = 3\n");
    let doc: Table = text.parse().unwrap();
    let g = Geometry::from_toml_str(&text, None).unwrap();
    for &a in &g.turntable.as_ref().unwrap().angles_deg {
        let t = toml::to_string(&document_at_angle(&doc, &g, a)).unwrap();
        let back = Geometry::from_toml_str(&t, None).unwrap();
        let want = g.at_plate_angle(a);
        assert!(back.turntable.is_none());
        for (l, w) in back.loads.iter().zip(&want.loads) {
            assert_eq!(l.shape, w.shape, "angle {a}");
        }
    }
}

#[test]
fn unknown_load_and_bad_steps_are_located() {
    let e = with("[turntable]\ncenter = [150.0, 150.0]\nloads = [\"soup\"]\nsteps = 2\n")
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("[turntable]") && e.contains("\"soup\"") && e.contains("\"dish\""),
        "{e}"
    );
    // The `loads` line: two below the table header, which follows BASE and a blank line.
    let line = BASE.matches('\n').count() + 4;
    assert!(e.contains(&format!("line {line}")), "{e}");
    let e = with("[turntable]\ncenter = [150.0, 150.0]\nsteps = 0\n")
        .unwrap_err()
        .to_string();
    assert!(e.contains("steps = 0"), "{e}");
    let e = with("[turntable]\ncenter = [150.0, 150.0]\n")
        .unwrap_err()
        .to_string();
    assert!(e.contains("either steps"), "{e}");
    let e = with("[turntable]\ncenter = [150.0, 150.0]\nsteps = 2\nangles_deg = [0.0]\n")
        .unwrap_err()
        .to_string();
    assert!(e.contains("either steps"), "{e}");
}

#[test]
fn a_load_leaving_the_cavity_at_some_angle_names_the_angle() {
    // About (100, 150) the dish's centre (200, 150) goes to (100, 250) at 90° (inside) and
    // to (0, 150) at 180°, where its footprint spans x = −20 .. 20 mm.
    let e =
        with("[turntable]\ncenter = [100.0, 150.0]\nloads = [\"dish\"]\nsteps = 4\n").unwrap_err();
    let text = e.to_string();
    assert!(matches!(e, GeometryError::AtPlateAngle { angle_deg, .. } if angle_deg == 180.0));
    assert!(
        text.contains("angle 180°") && text.contains("outside the cavity"),
        "{text}"
    );
    // About (150, 150) with the cup fixed: the dish at 0° is 30 mm from the cup's axis and
    // stays so (its near side is on a circle of radius 30 > 20 mm); accepted. About
    // (200, 100) the dish's centre goes to (164.6, 135.4) at 45°, 20.7 mm from the cup's
    // axis, less than its half side plus the cup's radius.
    assert!(with("[turntable]\ncenter = [150.0, 150.0]\nloads = [\"dish\"]\nsteps = 8\n").is_ok());
    let e = with(
        "[turntable]\ncenter = [200.0, 100.0]\nloads = [\"dish\"]\nangles_deg = [0.0, 45.0]\n",
    )
    .unwrap_err();
    let text = e.to_string();
    assert!(
        text.contains("angle 45°") && text.contains("overlaps load \"cup\""),
        "{text}"
    );
}

#[test]
fn a_riding_load_over_a_floor_aperture_names_the_load_port_and_angle() {
    // A floor aperture x = 110 .. 190, y = 190 .. 230 mm. The dish (x = 180 .. 220,
    // y = 130 .. 170 on the floor) turned a quarter turn about (150, 150) covers
    // x = 130 .. 170, y = 180 .. 220, which reaches 30 mm into the aperture; at 0° and
    // 180° it is clear of it (plane rotation by hand).
    let port = "[[port]]\nname = \"feed\"\nwall = \"-z\"\ncenter = [150.0, 210.0]\nwidth = 80.0\nheight = 40.0\n";
    let e = with(&format!(
        "{port}[turntable]\ncenter = [150.0, 150.0]\nloads = [\"dish\"]\nsteps = 4\n"
    ))
    .unwrap_err();
    let text = e.to_string();
    assert!(
        matches!(&e, GeometryError::AtPlateAngle { angle_deg, source, .. }
            if *angle_deg == 90.0
            && matches!(source.as_ref(), GeometryError::LoadAtPort { load, port, .. }
                if load == "dish" && port == "feed")),
        "{text}"
    );
    assert!(
        text.contains("angle 90°")
            && text.contains("load \"dish\"")
            && text.contains("port \"feed\" (line "),
        "{text}"
    );
    assert!(with(&format!(
        "{port}[turntable]\ncenter = [150.0, 150.0]\nloads = [\"dish\"]\nangles_deg = [0.0, 180.0]\n"
    ))
    .is_ok());
    // The same aperture on the roof is clear at every angle (the dish is 30 mm high in a
    // 200 mm cavity).
    let roof = port.replace("\"-z\"", "\"+z\"");
    assert!(with(&format!(
        "{roof}[turntable]\ncenter = [150.0, 150.0]\nloads = [\"dish\"]\nsteps = 4\n"
    ))
    .is_ok());
}
