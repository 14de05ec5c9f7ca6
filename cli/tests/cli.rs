//! Smoke tests of the `antinode` binary as a user runs it.

mod common;
use common::{antinode, example, scratch, text};

use std::path::Path;

#[test]
fn mesh_writes_volume_and_boundary_files() {
    let dir = scratch("cli", "mesh");
    let out = dir.join("out");
    let o = antinode(&[
        "mesh",
        &example("empty_box.toml"),
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "stderr: {}", text(&o.stderr));
    let stdout = text(&o.stdout);
    assert!(stdout.contains("tetrahedra"), "{stdout}");
    assert!(stdout.contains("order 2:"), "{stdout}");
    // The region table's tetrahedra column adds up to the mesh's count (one region here).
    let total: usize = stdout
        .split("mesh: ")
        .nth(1)
        .and_then(|r| r.split(" tetrahedra").next())
        .and_then(|r| r.rsplit(", ").next())
        .and_then(|n| n.trim().parse().ok())
        .expect("tetrahedra count on the mesh line");
    let air: usize = stdout
        .lines()
        .find(|l| l.trim_start().starts_with("air "))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|n| n.parse().ok())
        .expect("air row with a tetrahedra count");
    assert_eq!(air, total, "{stdout}");
    assert!(out.join("mesh.vtu").is_file());
    assert!(out.join("boundary.vtu").is_file());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn bad_input_fails_with_a_message_and_writes_nothing() {
    let dir = scratch("cli", "bad");
    let geom = dir.join("bad.toml");
    std::fs::write(
        &geom,
        "title = \"invented test\"\n[cavity]\nshape = \"box\"\nsize = [100.0, -80.0, 60.0]\nwalls = \"pec\"\n",
    )
    .unwrap();
    for cmd in ["mesh", "modes"] {
        let out = dir.join(format!("out-{cmd}"));
        let o = antinode(&[cmd, geom.to_str().unwrap(), "-o", out.to_str().unwrap()]);
        assert!(!o.status.success(), "{cmd} accepted a negative size");
        let err = text(&o.stderr);
        assert!(err.contains("bad.toml"), "{cmd}: {err}");
        assert!(err.contains("line 4"), "{cmd}: {err}");
        assert!(err.contains("-80"), "{cmd}: {err}");
        assert_eq!(err.lines().count(), 1, "{cmd}: one message expected: {err}");
        assert!(!out.exists(), "{cmd} wrote {}", out.display());
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Empty 100 × 80 × 60 mm PEC box, order 1: the mode nearest the target is TE101 with
/// f_101 = (c/2)·√((1/a)² + (1/d)²) (Pozar, Microwave Engineering 4th ed., eq. 6.42,
/// from memory) = 2.913459 GHz for a = 100 mm, d = 60 mm. Observed (8 elements per
/// wavelength; 5171 unknowns: 2.908618 GHz, −0.17 %; after the mesher's lattice change,
/// 1843 unknowns: 2.911763 GHz, −0.06 %); allowed 0.5 %.
#[test]
fn modes_of_a_small_box_match_te101() {
    let dir = scratch("cli", "modes");
    let geom = dir.join("box.toml");
    std::fs::write(
        &geom,
        r#"title = "Test geometry (invented): empty 100 x 80 x 60 mm PEC box"
[cavity]
shape = "box"
size = [100.0, 80.0, 60.0]
walls = "pec"
[mesh]
order = 1
per_wavelength = 8.0
[solve]
target = 2.9135
count = 1
"#,
    )
    .unwrap();
    let out = dir.join("out");
    let o = antinode(&["modes", geom.to_str().unwrap(), "-o", out.to_str().unwrap()]);
    assert!(o.status.success(), "stderr: {}", text(&o.stderr));
    let stdout = text(&o.stdout);
    assert!(stdout.contains("f (GHz)"), "{stdout}");
    assert!(stdout.contains("Weyl"), "{stdout}");

    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("modes.json")).unwrap()).unwrap();
    let f = doc["modes"][0]["frequency_ghz"]
        .as_f64()
        .expect("a frequency");
    let c = 299_792_458.0_f64;
    let (a, d) = (0.100_f64, 0.060_f64);
    let f101 = c / 2.0 * ((1.0 / a).powi(2) + (1.0 / d).powi(2)).sqrt() * 1e-9;
    let rel = (f - f101) / f101;
    println!("TE101: computed {f:.6} GHz, analytic {f101:.6} GHz, error {rel:+.3e}");
    assert!(rel.abs() < 5e-3, "TE101 {f} GHz vs {f101} GHz");
    assert_eq!(doc["order"].as_u64(), Some(1));
    assert!(doc["unknowns"].as_u64().unwrap() > 0);
    assert!(doc["band_summary"]["weyl_estimate"]["modes"].is_number());
    assert!(out.join("modes.csv").is_file());
    assert!(out.join("mode_001.vtu").is_file());
    assert!(out.join("modes.pvd").is_file());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn materials_lists_water_and_copper() {
    let o = antinode(&["materials", "--frequency", "2.45"]);
    assert!(o.status.success());
    let stdout = text(&o.stdout);
    assert!(
        stdout.contains("water") && stdout.contains("copper"),
        "{stdout}"
    );
    // A small loss factor keeps its digits: ice ε″ 2.895e-4 (Mätzler's 1998 model at
    // −10 °C, the point worked by hand in `mesh/src/ice.rs`), not "0.0003".
    let ice = stdout
        .lines()
        .find(|l| l.starts_with("ice "))
        .unwrap_or_else(|| panic!("{stdout}"));
    assert!(ice.contains("2.895e-4"), "{ice}");
    let o = antinode(&["materials", "--temperature", "150"]);
    assert!(!o.status.success());
}

/// Runs `antinode modes` on a geometry text and returns the modes.json document.
fn modes_json(dir: &Path, geometry: &str) -> serde_json::Value {
    let geom = dir.join("geometry.toml");
    std::fs::write(&geom, geometry).unwrap();
    let out = dir.join("out");
    let o = antinode(&["modes", geom.to_str().unwrap(), "-o", out.to_str().unwrap()]);
    assert!(o.status.success(), "stderr: {}", text(&o.stderr));
    let stdout = text(&o.stdout);
    assert!(stdout.contains("Q and power"), "{stdout}");
    assert!(out.join("spectrum.svg").is_file());
    assert!(out.join("modes.csv").is_file());
    serde_json::from_str(&std::fs::read_to_string(out.join("modes.json")).unwrap()).unwrap()
}

fn finite_positive(v: &serde_json::Value, what: &str) -> f64 {
    let x = v
        .as_f64()
        .unwrap_or_else(|| panic!("{what} is not a number: {v}"));
    assert!(x.is_finite() && x > 0.0, "{what} = {x}");
    x
}

/// Invented test case: 100 × 80 × 60 mm copper box, a lossy block (ε′ = 4, tan δ = 0.01)
/// in a corner and a 70 × 30 mm TE10 aperture on +x (cutoff 2.14 GHz, below the modes).
/// Every Q part is finite and positive, the per-port and per-load fields are present,
/// and the field files hold the complex field and the heating density.
#[test]
fn fed_lossy_box_reports_q_and_power() {
    let dir = scratch("cli", "fed");
    let doc = modes_json(
        &dir,
        r#"title = "Test geometry (invented): fed copper box with a lossy block"
[cavity]
shape = "box"
size = [100.0, 80.0, 60.0]
walls = "copper"
[[load]]
name = "block"
shape = "box"
min = [10.0, 10.0, 0.0]
max = [40.0, 40.0, 20.0]
material = { permittivity = 4.0, loss_tangent = 0.01 }
[[port]]
name = "feed"
wall = "+x"
center = [40.0, 30.0]
width = 70.0
height = 30.0
[mesh]
order = 1
per_wavelength = 6.0
[solve]
target = 2.6
count = 2
"#,
    );
    assert_eq!(doc["ports"][0].as_str(), Some("feed"));
    assert_eq!(doc["regions"][1]["name"].as_str(), Some("block"));
    let modes = doc["modes"].as_array().expect("modes");
    assert!(!modes.is_empty());
    for m in modes {
        for key in [
            "q_eigen",
            "q_loaded",
            "q_dielectric",
            "q_walls",
            "frequency_imag_ghz",
        ] {
            finite_positive(&m[key], key);
        }
        finite_positive(&m["q_ext"][0], "q_ext[0]");
        finite_positive(&m["coupling"][0], "coupling[0]");
        let g = m["reflection"][0].as_f64().expect("reflection");
        assert!((0.0..=1.0).contains(&g), "|Γ| = {g}");
        let p = m["load_power_fraction"][0].as_f64().expect("load power");
        assert!((0.0..=1.0).contains(&p), "load power fraction {p}");
        let e = m["load_energy_fraction"]["block"]
            .as_f64()
            .expect("energy fraction of the block");
        assert!(e > 0.0 && e < 1.0, "energy fraction {e}");
        // Q_L is below each of its parts.
        let ql = m["q_loaded"].as_f64().unwrap();
        assert!(ql <= m["q_dielectric"].as_f64().unwrap() * (1.0 + 1e-12));
        assert!(ql <= m["q_ext"][0].as_f64().unwrap() * (1.0 + 1e-12));
        println!(
            "f = {:.6} GHz: Q_L {:.1}, Q_d {:.1}, Q_c {:.0}, Q_ext {:.1}, κ {:.3}, |Γ| {:.3}, check {:?}",
            m["frequency_ghz"], ql, m["q_dielectric"], m["q_walls"], m["q_ext"][0],
            m["coupling"][0], g, m["q_check_relative"]
        );
    }
    let out = dir.join("out");
    let vtu = std::fs::read_to_string(out.join("mode_001.vtu")).unwrap();
    for array in [
        "E_real",
        "E_imag",
        "E_magnitude",
        "H_real",
        "H_imag",
        "heating_W_per_m3_per_J",
    ] {
        assert!(
            vtu.contains(&format!("Name=\"{array}\"")),
            "{array} missing"
        );
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A PEC box completely filled with a dielectric of ε′ = 2, tan δ = 0.01: every mode has
/// Q_d = 1/tan δ = 100 (Pozar, Microwave Engineering 4th ed., eq. 6.46 neighbourhood,
/// from memory), both from the loss integrals and from the complex eigenvalue
/// (Re f/(2 Im f) = 1/tan δ up to O(tan² δ)). Allowed: 1 %.
#[test]
fn filled_lossy_box_has_q_of_one_over_tan_delta() {
    let dir = scratch("cli", "filled");
    let doc = modes_json(
        &dir,
        r#"title = "Test geometry (invented): PEC box filled with a lossy dielectric"
[cavity]
shape = "box"
size = [100.0, 80.0, 60.0]
walls = "pec"
[[load]]
name = "fill"
shape = "box"
min = [0.0, 0.0, 0.0]
max = [100.0, 80.0, 60.0]
material = { permittivity = 2.0, loss_tangent = 0.01 }
[mesh]
order = 1
per_wavelength = 6.0
[solve]
target = 2.06
count = 1
"#,
    );
    let m = &doc["modes"][0];
    let qd = finite_positive(&m["q_dielectric"], "q_dielectric");
    let qe = finite_positive(&m["q_eigen"], "q_eigen");
    println!("filled box: Q_d {qd:.4}, Q from the eigenvalue {qe:.4}, expected 100");
    assert!((qd / 100.0 - 1.0).abs() < 0.01, "Q_d = {qd}");
    assert!((qe / 100.0 - 1.0).abs() < 0.01, "Q_eigen = {qe}");
    assert!(
        m["q_walls"].is_null(),
        "PEC walls: Q_c should be null (infinite)"
    );
    assert!(m["q_ext"].as_array().is_some_and(|a| a.is_empty()));
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A small fed copper box with a lossy block carrying thermal data (invented).
const FED_BLOCK: &str = r#"title = "Test geometry (invented): fed copper box with a lossy block"
[cavity]
shape = "box"
size = [100.0, 80.0, 60.0]
walls = "copper"
[[load]]
name = "block"
shape = "box"
min = [10.0, 10.0, 0.0]
max = [40.0, 40.0, 20.0]
material = { permittivity = 4.0, loss_tangent = 0.1, density = 1000, specific_heat = 4000 }
[[port]]
name = "feed"
wall = "+x"
center = [40.0, 30.0]
width = 70.0
height = 30.0
power = 500
[mesh]
order = 1
per_wavelength = 6.0
[solve]
target = 2.6
"#;

#[test]
fn drive_writes_the_response_files() {
    let dir = scratch("cli", "drive");
    let geom = dir.join("fed.toml");
    std::fs::write(&geom, FED_BLOCK).expect("geometry");
    let out = dir.join("out");
    let o = antinode(&[
        "drive",
        geom.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--band",
        "2.5",
        "2.7",
        "--points",
        "21",
        "--time",
        "10",
        "--spread",
        "20",
    ]);
    assert!(o.status.success(), "drive failed: {}", text(&o.stderr));
    let stdout = text(&o.stdout);
    assert!(stdout.contains("caution"), "no safety caution in: {stdout}");
    for f in [
        "response.json",
        "response.csv",
        "response.s1p",
        "response.svg",
        "heating_2.6000GHz.vtu",
        "heating.pvd",
    ] {
        assert!(out.join(f).is_file(), "missing {f}");
    }
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("response.json")).unwrap())
            .expect("json");
    assert_eq!(doc["ports"][0].as_str(), Some("feed"));
    assert_eq!(doc["frequencies_ghz"].as_array().map(|a| a.len()), Some(21));
    let fed = doc["drive_w"]["feed"].as_f64().unwrap();
    assert!((fed - 500.0).abs() < 1e-9, "drive {fed} W");
    // Energy balance of the discrete model at every frequency (round-off).
    for p in doc["power"].as_array().expect("power") {
        let sum = p["reflected"].as_f64().unwrap()
            + p["walls"].as_f64().unwrap()
            + p["loads"]["block"].as_f64().unwrap();
        assert!((sum - 1.0).abs() < 1e-9, "fractions sum to {sum}");
    }
    let at = &doc["at"][0];
    assert_eq!(at["frequency_ghz"].as_f64(), Some(2.6));
    let u = &at["uniformity"]["block"];
    for k in [
        "cov",
        "max_over_mean",
        "min_over_mean",
        "hot_fraction",
        "cold_fraction",
    ] {
        assert!(
            u[k].as_f64().is_some_and(|v| v >= 0.0),
            "uniformity {k}: {u}"
        );
    }
    // Calorimetric relation P = m c_p ΔT / t against the absorbed power (common
    // practice; exact in this no-conduction model).
    let absorbed = at["absorbed_w"]["block"].as_f64().unwrap();
    let dt = at["temperature_rise_k"]["block"].as_f64().unwrap();
    let mass = 1000.0 * 0.03 * 0.03 * 0.02;
    let cal = mass * 4000.0 * dt / 10.0;
    assert!(
        (cal - absorbed).abs() <= 1e-9 * absorbed,
        "{cal} W vs {absorbed} W"
    );
    assert!(at["spread"]["absorbed_w"]["block"].as_f64().is_some());
    // Touchstone: option line and one data line per frequency.
    let ts = std::fs::read_to_string(out.join("response.s1p")).unwrap();
    assert!(ts.contains("# GHZ S RI R 50"));
    let data = ts
        .lines()
        .filter(|l| !l.starts_with('!') && !l.starts_with('#'))
        .count();
    assert_eq!(data, 21);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn drive_needs_a_port() {
    let dir = scratch("cli", "drive-noport");
    let geom = dir.join("closed.toml");
    std::fs::write(
        &geom,
        "title = \"closed (invented)\"\n[cavity]\nshape = \"box\"\nsize = [100.0, 80.0, 60.0]\nwalls = \"copper\"\n",
    )
    .expect("geometry");
    let o = antinode(&[
        "drive",
        geom.to_str().unwrap(),
        "-o",
        dir.join("o").to_str().unwrap(),
    ]);
    assert!(!o.status.success());
    assert!(text(&o.stderr).contains("port"), "{}", text(&o.stderr));
    assert!(!dir.join("o").exists(), "nothing may be written");
    let _ = std::fs::remove_dir_all(&dir);
}
