//! Smoke tests of the `antinode` binary as a user runs it.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn antinode(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_antinode"))
        .args(args)
        .output()
        .expect("the antinode binary runs")
}

/// A fresh, empty scratch folder for one test (removed by the test when it passes).
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("antinode-cli-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}

fn example(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../geometries")
        .join(name)
        .display()
        .to_string()
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

#[test]
fn mesh_writes_volume_and_boundary_files() {
    let dir = scratch("mesh");
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
    assert!(out.join("mesh.vtu").is_file());
    assert!(out.join("boundary.vtu").is_file());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn bad_input_fails_with_a_message_and_writes_nothing() {
    let dir = scratch("bad");
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
/// from memory) = 2.913459 GHz for a = 100 mm, d = 60 mm. Observed at this mesh (8
/// elements per wavelength, 5171 unknowns): 2.908618 GHz, −0.17 %; allowed 0.5 %.
#[test]
fn modes_of_a_small_box_match_te101() {
    let dir = scratch("modes");
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
    assert!(stdout.contains("frequency (GHz)"), "{stdout}");
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
    let o = antinode(&["materials", "--temperature", "150"]);
    assert!(!o.status.success());
}
