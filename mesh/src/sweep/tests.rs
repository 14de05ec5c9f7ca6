//! Sweep-file reading and expansion on a small box geometry written to a temporary folder.

use super::*;

const BASE: &str = r#"
[cavity]
shape = "box"
size = [300.0, 260.0, 200.0]
walls = "pec"
[[load]]
name = "block"
shape = "box"
min = [120.0, 100.0, 0.0]
max = [180.0, 160.0, 40.0]
material = "ptfe"
[mesh]
order = 1
[solve]
target = 2.45
count = 4
"#;

fn folder(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("antinode-sweep-{name}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    std::fs::write(d.join("base.toml"), BASE).unwrap();
    d
}

fn read(name: &str, text: &str) -> Result<SweepFile, SweepError> {
    let d = folder(name);
    let p = d.join("sweep.toml");
    std::fs::write(&p, text).unwrap();
    SweepFile::from_file(&p)
}

#[test]
fn grid_expands_last_parameter_fastest_and_keeps_invalid_variants() {
    let s = read(
        "grid",
        r#"
geometry = "base.toml"
run = ["modes"]
[[parameter]]
key = "cavity.size.2"
range = { from = 180.0, to = 220.0, steps = 3 }
[[parameter]]
key = "load.block.max"
values = [[180.0, 160.0, 40.0], [180.0, 160.0, 400.0]]
"#,
    )
    .unwrap();
    assert_eq!(s.variant_count(), 6);
    assert_eq!(s.value_indices(3), vec![1, 1]);
    let v = s.variants(|k| PathBuf::from(format!("v{k}.toml")));
    assert_eq!(value_text(&v[2].values[0]), "200.0");
    // A 400 mm tall block does not fit a 200 mm cavity: rejected, the others valid.
    for var in &v {
        assert_eq!(
            var.geometry.is_err(),
            var.index % 2 == 1,
            "variant {}",
            var.index
        );
    }
    let g = v[4].geometry.as_ref().unwrap();
    assert_eq!(
        g.cavity.shape,
        crate::geometry::CavityShape::Box {
            size: [300.0, 260.0, 220.0]
        }
    );
    let e = v[1].geometry.as_ref().unwrap_err().to_string();
    assert!(e.contains("v1.toml") && e.contains("block"), "{e}");
}

#[test]
fn errors_name_the_line() {
    let e = read(
        "badkey",
        "geometry = \"base.toml\"\nrun = [\"modes\"]\n[[parameter]]\nkey = \"load.soup.center\"\nvalues = [1.0]\n",
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("line 4") && e.contains("block"), "{e}");
    let e = read(
        "zip",
        "geometry = \"base.toml\"\nrun = [\"modes\"]\ncombine = \"zip\"\n[[parameter]]\nkey = \"cavity.size.0\"\nvalues = [1.0, 2.0]\n[[parameter]]\nkey = \"cavity.size.1\"\nvalues = [1.0]\n",
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("line 7") && e.contains("equal lengths"), "{e}");
    let e = read("run", "geometry = \"base.toml\"\nrun = [\"mesh\"]\n")
        .unwrap_err()
        .to_string();
    assert!(e.contains("line 2") && e.contains("\"modes\""), "{e}");
    let e = read(
        "typo",
        "geometry = \"base.toml\"\nrun = [\"modes\"]\nparameters = 1\n",
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("line 3"), "{e}");
}

#[test]
fn integer_keys_get_integer_ranges() {
    let s = read(
        "int",
        "geometry = \"base.toml\"\nrun = [\"modes\"]\n[[parameter]]\nkey = \"solve.count\"\nrange = { from = 2, to = 6, steps = 3 }\n",
    )
    .unwrap();
    let v = s.variant(2, Path::new("v.toml"));
    assert_eq!(v.geometry.unwrap().solve.count, Some(6));
}

/// The base geometry with a turntable carrying the block about (150, 130).
fn plate_folder(name: &str) -> PathBuf {
    let d = folder(name);
    let text = format!("{BASE}[turntable]\ncenter = [150.0, 130.0]\nsteps = 4\n");
    std::fs::write(d.join("plate.toml"), text).unwrap();
    d
}

#[test]
fn turntable_alone_is_a_sweep_over_its_angles() {
    let d = plate_folder("plate-alone");
    let p = d.join("sweep.toml");
    std::fs::write(&p, "geometry = \"plate.toml\"\nrun = [\"drive\"]\n").unwrap();
    let s = SweepFile::from_file(&p).unwrap();
    assert_eq!(s.variant_count(), 4);
    assert_eq!(s.column_keys(), vec![PLATE_ANGLE_KEY.to_string()]);
    let vs = s.variants(|k| d.join(format!("v{k}.toml")));
    for (k, v) in vs.iter().enumerate() {
        let plate = v.plate.as_ref().unwrap();
        assert_eq!(plate.angle_deg, 90.0 * k as f64);
        assert_eq!(v.values, vec![Value::Float(90.0 * k as f64)]);
        let g = v.geometry.as_ref().unwrap();
        assert!(g.turntable.is_none(), "a variant is a plain geometry");
        let Some(crate::geometry::LoadShape::Box { angle_deg, .. }) = g.loads[0].shape else {
            panic!("box expected")
        };
        assert_eq!(angle_deg, 90.0 * k as f64);
    }
}

#[test]
fn parameters_times_angles_and_a_bad_combination_is_rejected_with_its_angle() {
    let d = plate_folder("plate-grid");
    let p = d.join("sweep.toml");
    // Centre (150, 130): the 60 mm block (half diagonal 42.4 mm) stays inside. Centre
    // (40, 130): at 90° the block's centre goes from (150, 130) to (40, 240) and its
    // footprint to y = 210 .. 270 mm, past the cavity's 260 mm.
    std::fs::write(
        &p,
        "geometry = \"plate.toml\"\nrun = [\"drive\"]\n[[parameter]]\nkey = \"turntable.center\"\nvalues = [[150.0, 130.0], [40.0, 130.0]]\n",
    )
    .unwrap();
    let s = SweepFile::from_file(&p).unwrap();
    assert_eq!(s.variant_count(), 8);
    assert_eq!(s.value_indices(5), vec![1, 1]);
    let vs = s.variants(|k| d.join(format!("v{k}.toml")));
    assert!(vs[..4].iter().all(|v| v.geometry.is_ok()));
    for v in &vs[4..] {
        let e = v.geometry.as_ref().unwrap_err().to_string();
        assert!(e.contains("plate angle 90°"), "{e}");
    }
    let bad = "geometry = \"plate.toml\"\nrun = [\"drive\"]\n[[parameter]]\nkey = \"turntable.steps\"\nvalues = [2, 3]\n";
    std::fs::write(&p, bad).unwrap();
    let e = SweepFile::from_file(&p).unwrap_err().to_string();
    assert!(e.contains("line 4") && e.contains("plate angles"), "{e}");
}
