//! Warnings a first-time user needs (issue: a box given in metres meshed to 6 tetrahedra
//! and reported an 834 GHz mode with no word said).

mod common;
use common::scratch;

use std::process::Command;

/// The 300 × 300 × 200 mm box written in metres: its lowest mode is 706.6 GHz (Pozar
/// 4th ed. eq. 6.40 for a 0.3 mm box), far above 2.45 GHz. The run still completes
/// (exit 0) but says so on stderr, with the mm hint, and lists the warning in
/// modes.json.
#[test]
fn box_in_metres_warns_with_the_unit_hint() {
    let dir = scratch("warn", "metres");
    let geom = dir.join("metres.toml");
    std::fs::write(
        &geom,
        "title = \"box given in metres by mistake\"\n[cavity]\nshape = \"box\"\n\
         size = [0.3, 0.3, 0.2]\nwalls = \"pec\"\n[solve]\ncount = 1\n",
    )
    .expect("geometry file");
    let out = dir.join("out");
    let o = Command::new(env!("CARGO_BIN_EXE_antinode"))
        .args([
            "modes",
            geom.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
            "--no-fields",
        ])
        .output()
        .expect("the antinode binary runs");
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{stderr}");
    assert!(stderr.contains("warning:"), "{stderr}");
    assert!(stderr.contains("multiply them by 1000"), "{stderr}");
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("modes.json")).expect("modes.json"))
            .expect("JSON");
    let kinds: Vec<&str> = doc["warnings"]
        .as_array()
        .expect("warnings array")
        .iter()
        .filter_map(|w| w["kind"].as_str())
        .collect();
    assert!(kinds.contains(&"cavity_too_small"), "{kinds:?}");
    assert!(kinds.contains(&"modes_outside_band"), "{kinds:?}");
    // `mesh` gives the same cavity warning without solving.
    let o = Command::new(env!("CARGO_BIN_EXE_antinode"))
        .args(["mesh", geom.to_str().unwrap(), "-o", out.to_str().unwrap()])
        .output()
        .expect("the antinode binary runs");
    assert!(o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains("multiply them by 1000"));
    let _ = std::fs::remove_dir_all(&dir);
}
