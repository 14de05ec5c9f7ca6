//! Turntable sweeps as a user runs them (invented test scenarios, coarse order-1 meshes).
//!
//! (a) A cylinder centred on the plate's axis: the geometry is the same at every angle, so
//! the mesh and the solve are the same, and |S11| and the absorbed fraction must agree to
//! solver repeatability (1e-9 relative: our own bound on run-to-run rounding of a
//! deterministic solve, no source). With angles 0° and 180° and a cavity and feed
//! symmetric under a half turn about that axis, the field is symmetric under the half
//! turn up to the mesh, so the averaged COV equals each angle's up to the mesh's
//! asymmetry, measured as the angle spread m = rms(q_θ − q̄)/mean(q̄) on the load-frame
//! grid (turntable.json); the triangle inequality for the standard deviation bounds
//! |COV_avg − COV_θ| by m when the angles' means agree (they do: both angles sample the
//! same world points). The printed m is the measured mesh noise. Said plainly: that last
//! check is an internal-consistency one (it fails only if the COV, the average or the
//! spread is computed wrongly), and on this coarse mesh m is 0.21 (measured
//! 2026-12-04 with the heating sampled at the grid points; 0.23 with the former
//! cell-average sampling), so it does not show the equality of the issue to a useful
//! precision;
//! the checks that carry weight are the 1e-9 equalities and (b).
//! (b) An off-centre box: the averaged COV is below the mean of the fixed-angle COVs (the
//! triangle inequality gives ≤; the test asks for a strict drop of at least 10 %, our own
//! threshold, no source, for a load that moves through a standing-wave pattern).

mod common;
use common::{antinode, text};
use serde_json::Value;
use std::path::Path;

const BOX: &str = r#"
title = "Invented test scenario: square box fed on its top wall"
[cavity]
shape = "box"
size = [240.0, 240.0, 180.0]
walls = "pec"
[[port]]
name = "feed"
wall = "+z"
center = [120.0, 120.0]
width = 86.36
height = 43.18
[mesh]
order = 1
per_wavelength = 5.0
max_size = 30.0
[solve]
target = 2.45
"#;

fn run(name: &str, load_and_plate: &str, drive: &str) -> (Value, String) {
    let dir = common::scratch("turntable", name);
    std::fs::write(dir.join("g.toml"), format!("{BOX}{load_and_plate}")).unwrap();
    let s = dir.join("s.toml");
    std::fs::write(
        &s,
        format!("geometry = \"g.toml\"\nrun = [\"drive\"]\n[options]\ndrive = [{drive}]\n"),
    )
    .unwrap();
    let out = dir.join("out");
    let o = antinode(&["sweep", s.to_str().unwrap(), "-o", out.to_str().unwrap()]);
    assert!(
        o.status.success(),
        "stdout {} stderr {}",
        text(&o.stdout),
        text(&o.stderr)
    );
    let doc: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("turntable.json")).unwrap())
            .unwrap();
    // One averaged-heating VTU per --at frequency, named in turntable.json.
    let mean_at = doc["groups"][0]["mean_at"].as_array().unwrap();
    for (k, m) in mean_at.iter().enumerate() {
        let name = format!("turntable_g001_f{:02}.vtu", k + 1);
        assert_eq!(m["vtu"].as_str(), Some(name.as_str()));
        assert!(Path::new(&out.join(&name)).exists(), "{name}");
    }
    let csv = std::fs::read_to_string(out.join("turntable.csv")).unwrap();
    assert!(csv.starts_with("group,row,angle_deg,frequency_ghz,s11_abs,absorbed_fraction"));
    let svg = std::fs::read_to_string(out.join("sweep.svg")).unwrap();
    let _ = std::fs::remove_dir_all(&dir);
    (doc, svg)
}

/// The number after `label` in a `<title>` of `sweep.svg`.
fn svg_value(svg: &str, label: &str) -> f64 {
    let at = svg
        .find(&format!("<title>{label} "))
        .unwrap_or_else(|| panic!("no {label} in svg"));
    let rest = &svg[at + label.len() + 8..];
    rest[..rest.find('<').unwrap()].trim().parse().unwrap()
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or(f64::NAN)
}

#[test]
fn centred_cylinder_gives_the_same_results_at_every_angle() {
    let (doc, _) = run(
        "centred",
        r#"
[[load]]
name = "cup"
shape = "cylinder"
center = [120.0, 120.0]
radius = 40.0
bottom = 0.0
height = 30.0
material = { permittivity = 4.0, loss_tangent = 0.1 }
[turntable]
center = [120.0, 120.0]
angles_deg = [0.0, 180.0]
"#,
        "\"--points\", \"3\"",
    );
    let g = &doc["groups"][0];
    let a: Vec<&Value> = g["angles"].as_array().unwrap().iter().collect();
    assert_eq!(a.len(), 2);
    let (s0, s1) = (f(&a[0]["at"][0]["s11_abs"]), f(&a[1]["at"][0]["s11_abs"]));
    let (p0, p1) = (
        f(&a[0]["at"][0]["absorbed_fraction"]),
        f(&a[1]["at"][0]["absorbed_fraction"]),
    );
    assert!((s0 - s1).abs() <= 1e-9 * s0.max(1e-3), "{s0} {s1}");
    assert!((p0 - p1).abs() <= 1e-9 * p0, "{p0} {p1}");
    let c0 = f(&a[0]["at"][0]["heating"][0]["cov"]);
    let c1 = f(&a[1]["at"][0]["heating"][0]["cov"]);
    let avg = f(&g["mean_at"][0]["heating"][0]["cov"]);
    let m = f(&g["mean_at"][0]["heating"][0]["angle_spread"]);
    eprintln!("centred cylinder: COV at 0° {c0:.4}, at 180° {c1:.4}, averaged {avg:.4}, angle spread {m:.4}");
    // The half turn maps the grid onto itself, so both angles sample the same world
    // points: the per-angle COVs agree to rounding.
    assert!((c0 - c1).abs() <= 1e-9 * c0, "{c0} {c1}");
    for c in [c0, c1] {
        assert!(
            (avg - c).abs() <= m + 1e-9,
            "avg {avg} angle {c} spread {m}"
        );
    }
}

#[test]
fn off_centre_box_is_heated_more_evenly_on_average() {
    let (doc, svg) = run(
        "offcentre",
        r#"
[[load]]
name = "dish"
shape = "box"
min = [130.0, 95.0, 0.0]
max = [190.0, 145.0, 30.0]
material = { permittivity = 4.0, loss_tangent = 0.1 }
[turntable]
center = [120.0, 120.0]
steps = 4
"#,
        "\"--points\", \"3\", \"--at\", \"2.45\", \"2.42\"",
    );
    let g = &doc["groups"][0];
    assert_eq!(g["mean_at"].as_array().unwrap().len(), 2);
    assert_eq!(f(&g["mean_at"][1]["frequency_ghz"]), 2.42);
    // sweep.svg: absorbed fraction and |S11| against the plate angle with their means
    // (the values of turntable.json, as printed), and the averaged COV beside each
    // angle's.
    assert!(svg.contains("against the plate angle"));
    let m = &g["mean_at"][0];
    assert_eq!(
        svg_value(&svg, "mean absorbed fraction"),
        f(&m["absorbed_fraction"])
    );
    assert_eq!(svg_value(&svg, "mean |S11|"), f(&m["s11_abs"]));
    assert_eq!(
        svg_value(&svg, "dish rotation-averaged COV"),
        f(&m["heating"][0]["cov"])
    );
    assert_eq!(svg.matches("stroke-dasharray").count(), 3);
    let h = &g["mean_at"][0]["heating"][0];
    let (avg, fixed) = (f(&h["cov"]), f(&h["fixed_angle_cov_mean"]));
    eprintln!("off-centre box: averaged COV {avg:.4}, fixed-angle mean {fixed:.4}");
    assert!(
        avg < 0.9 * fixed,
        "averaged {avg}, fixed-angle mean {fixed}"
    );
}

#[test]
fn a_load_passing_over_a_port_aperture_is_refused_with_load_port_and_angle() {
    // The box fed through its floor, aperture x = 120 .. 206.36, y = 98.41 .. 141.59 mm;
    // the dish on the floor (x = 20 .. 80) turned a half turn about (120, 120) covers
    // x = 160 .. 220, y = 100 .. 140, inside the aperture (plane rotation by hand).
    let dir = common::scratch("turntable", "aperture");
    let geometry = BOX.replace(
        "wall = \"+z\"\ncenter = [120.0, 120.0]",
        "wall = \"-z\"\ncenter = [163.18, 120.0]",
    );
    assert_ne!(geometry, BOX);
    std::fs::write(
        dir.join("g.toml"),
        format!(
            "{geometry}{}",
            r#"
[[load]]
name = "dish"
shape = "box"
min = [20.0, 100.0, 0.0]
max = [80.0, 140.0, 30.0]
material = { permittivity = 4.0, loss_tangent = 0.1 }
[turntable]
center = [120.0, 120.0]
steps = 4
"#
        ),
    )
    .unwrap();
    let s = dir.join("s.toml");
    std::fs::write(&s, "geometry = \"g.toml\"\nrun = [\"drive\"]\n").unwrap();
    let out = dir.join("out");
    let o = antinode(&["sweep", s.to_str().unwrap(), "-o", out.to_str().unwrap()]);
    let stdout = text(&o.stdout);
    assert!(
        stdout.contains("4 variants, 4 rejected")
            && stdout.contains("plate angle 180°")
            && stdout.contains("load \"dish\" reaches into the aperture of port \"feed\""),
        "stdout {stdout} stderr {}",
        text(&o.stderr)
    );
    // Nothing ran.
    assert!(!out.join("variants/v001/done.json").exists());
    // `mesh` refuses the geometry itself with the same reason.
    let m = antinode(&[
        "mesh",
        dir.join("g.toml").to_str().unwrap(),
        "-o",
        out.join("mesh").to_str().unwrap(),
    ]);
    assert!(!m.status.success());
    assert!(
        text(&m.stderr).contains("port \"feed\""),
        "{}",
        text(&m.stderr)
    );
    let _ = std::fs::remove_dir_all(&dir);
}
