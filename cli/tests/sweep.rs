//! `antinode sweep` as a user runs it: tables, rejected variants, the geometry each
//! variant ran, and resuming after a killed run.

mod common;
use common::{antinode, text};

use std::os::unix::process::CommandExt;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

const BASE: &str = r#"
title = "Invented test scenario: small empty PEC box"
[cavity]
shape = "box"
size = [200.0, 170.0, 120.0]
walls = "pec"
[mesh]
order = 1
per_wavelength = 8.0
max_size = 20.0
[solve]
target = 1.3
count = 4
"#;

/// A scratch folder holding the base geometry.
fn scratch_with_base(name: &str) -> PathBuf {
    let dir = common::scratch("sweep", name);
    std::fs::write(dir.join("base.toml"), BASE).unwrap();
    dir
}

fn sweep_file(dir: &Path, heights: &str) -> PathBuf {
    let p = dir.join("sweep.toml");
    std::fs::write(
        &p,
        format!(
            "geometry = \"base.toml\"\nrun = [\"modes\"]\n[options]\nmodes = [\"--no-fields\"]\n\
             [[parameter]]\nkey = \"cavity.size.2\"\nvalues = {heights}\n"
        ),
    )
    .unwrap();
    p
}

#[test]
fn sweep_writes_tables_and_runs_the_valid_variants() {
    let dir = scratch_with_base("tables");
    let s = sweep_file(&dir, "[110.0, 120.0, -5.0, 130.0]");
    let out = dir.join("out");
    let o = antinode(&[
        "sweep",
        s.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--jobs",
        "2",
    ]);
    let stdout = text(&o.stdout);
    assert!(
        o.status.success(),
        "stdout {stdout} stderr {}",
        text(&o.stderr)
    );
    // The rejected variant is named with its value and the geometry error.
    assert!(
        stdout.contains("variant 3: cavity.size.2 = -5.0"),
        "{stdout}"
    );
    assert!(stdout.contains("3 of 4 variants done"), "{stdout}");
    let csv = std::fs::read_to_string(out.join("sweep.csv")).unwrap();
    let mut lines = csv.lines();
    let head = lines.next().unwrap();
    assert!(
        head.starts_with("kind,variant,cavity.size.2,track,track_overlap,mode,frequency_ghz"),
        "{head}"
    );
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), 3 * 4, "{csv}");
    assert!(rows.iter().all(|r| r[0] == "mode" && r[1] != "3"));
    // Variant 4 follows a rejected one: its tracks start anew (no overlap given).
    assert!(rows.iter().filter(|r| r[1] == "4").all(|r| r[4].is_empty()));
    assert!(
        rows.iter()
            .filter(|r| r[1] == "2")
            .any(|r| !r[4].is_empty()),
        "{csv}"
    );
    let geom = std::fs::read_to_string(out.join("variants/v002/geometry.toml")).unwrap();
    assert!(geom.contains("120.0"), "{geom}");
    assert!(out.join("variants/v002/modes/modes.json").is_file());
    assert!(!out.join("variants/v003").exists());
    let json = std::fs::read_to_string(out.join("sweep.json")).unwrap();
    assert!(json.contains("\"rejected\""), "{json}");
    assert!(std::fs::read_to_string(out.join("sweep.svg"))
        .unwrap()
        .contains("<polyline"));
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn resume_after_a_killed_run_gives_the_same_tables() {
    let dir = scratch_with_base("resume");
    let s = sweep_file(&dir, "[100.0, 105.0, 110.0, 115.0, 120.0, 125.0]");
    let s = s.to_str().unwrap();
    let whole = dir.join("whole");
    let o = antinode(&["sweep", s, "-o", whole.to_str().unwrap(), "--jobs", "1"]);
    assert!(o.status.success(), "{}", text(&o.stderr));

    // Kill a second run and its variant process (one process group) while its second
    // variant is half-written.
    let cut = dir.join("cut");
    let mut child = Command::new(env!("CARGO_BIN_EXE_antinode"))
        .args(["sweep", s, "-o", cut.to_str().unwrap(), "--jobs", "1"])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .process_group(0)
        .spawn()
        .unwrap();
    let t0 = Instant::now();
    let partial = cut.join("variants/v002.partial");
    while !(cut.join("variants/v001/done.json").exists() && partial.exists())
        && t0.elapsed() < Duration::from_secs(120)
    {
        std::thread::sleep(Duration::from_millis(2));
    }
    let killed = Command::new("kill")
        .args(["-s", "KILL", "--", &format!("-{}", child.id())])
        .status()
        .unwrap();
    assert!(killed.success());
    child.wait().unwrap();
    assert!(
        partial.exists(),
        "the run was killed too late to test resuming"
    );
    assert!(!cut.join("variants/v002").exists());
    let complete_before = std::fs::read_dir(cut.join("variants"))
        .unwrap()
        .filter(|e| e.as_ref().unwrap().path().join("done.json").exists())
        .count();
    assert!(
        complete_before < 6,
        "the run was killed too late to test resuming"
    );
    assert!(!cut.join("sweep.csv").exists(), "a killed run wrote tables");

    let o = antinode(&[
        "sweep",
        s,
        "-o",
        cut.to_str().unwrap(),
        "--jobs",
        "1",
        "--resume",
    ]);
    let stdout = text(&o.stdout);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(
        stdout.contains(&format!("resume: {complete_before} variants complete")),
        "{stdout}"
    );
    let a = std::fs::read_to_string(whole.join("sweep.csv")).unwrap();
    let b = std::fs::read_to_string(cut.join("sweep.csv")).unwrap();
    assert_eq!(a, b);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// The memory figure of `modes --plan` ("estimated peak memory X (").
fn modes_plan(geometry: &Path, options: &[&str], out: &Path) -> String {
    let mut args = vec![
        "modes",
        geometry.to_str().unwrap(),
        "--plan",
        "-o",
        out.to_str().unwrap(),
    ];
    args.extend_from_slice(options);
    let o = antinode(&args);
    let t = text(&o.stdout);
    let at = t
        .find("estimated peak memory ")
        .expect("modes --plan prints its plan")
        + 22;
    t[at..at + t[at..].find(" (").unwrap()].to_string()
}

#[test]
fn memory_plan_applies_target_and_count() {
    // The sweep plans each variant with its commands' options: with --target 2.6 and
    // --count 40 (a finer mesh and a larger basis than the file's 1.3 GHz and 4 modes)
    // its largest plan is the one `modes --plan` gives with the same options.
    let dir = scratch_with_base("plan");
    let s = dir.join("sweep.toml");
    std::fs::write(
        &s,
        "geometry = \"base.toml\"\nrun = [\"modes\"]\n[options]\nmodes = [\"--no-fields\", \
         \"--target\", \"2.6\", \"--count\", \"40\"]\n[[parameter]]\nkey = \"cavity.size.2\"\n\
         values = [120.0]\n",
    )
    .unwrap();
    let base = dir.join("base.toml");
    let with = modes_plan(
        &base,
        &["--target", "2.6", "--count", "40"],
        &dir.join("p1"),
    );
    let without = modes_plan(&base, &[], &dir.join("p2"));
    assert_ne!(with, without, "the options change the plan");
    let out = dir.join("out");
    let o = antinode(&["sweep", s.to_str().unwrap(), "-o", out.to_str().unwrap()]);
    let stdout = text(&o.stdout);
    assert!(o.status.success(), "{stdout} {}", text(&o.stderr));
    assert!(
        stdout.contains(&format!("largest plan {with},")),
        "expected {with}: {stdout}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn tracks_continue_across_the_rows_of_a_two_parameter_grid() {
    // Widths 200 and 204 mm × heights 120 and 123 mm: the first variant of the second
    // row (width 204, height 120) continues the tracks of the first row's first variant
    // (width 200, height 120), one parameter one value apart; before, it started new
    // tracks. The small steps (2 %) move no mode of this box past another among the
    // four found (analytic TE/TM_mnp frequencies, Pozar 4th ed. §6.3).
    let dir = scratch_with_base("grid");
    let s = dir.join("sweep.toml");
    std::fs::write(
        &s,
        "geometry = \"base.toml\"\nrun = [\"modes\"]\n[options]\nmodes = [\"--no-fields\"]\n\
         [[parameter]]\nkey = \"cavity.size.0\"\nvalues = [200.0, 204.0]\n\
         [[parameter]]\nkey = \"cavity.size.2\"\nvalues = [120.0, 123.0]\n",
    )
    .unwrap();
    let out = dir.join("out");
    let o = antinode(&["sweep", s.to_str().unwrap(), "-o", out.to_str().unwrap()]);
    assert!(
        o.status.success(),
        "{} {}",
        text(&o.stdout),
        text(&o.stderr)
    );
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    let rows = doc["modes"].as_array().unwrap();
    let of = |v: u64| -> Vec<(u64, Option<f64>)> {
        rows.iter()
            .filter(|r| r["variant"].as_u64() == Some(v))
            .map(|r| (r["track"].as_u64().unwrap(), r["track_overlap"].as_f64()))
            .collect()
    };
    let first: Vec<u64> = of(1).iter().map(|t| t.0).collect();
    let third = of(3);
    assert!(!third.is_empty());
    for (t, overlap) in &third {
        assert!(
            first.contains(t),
            "track {t} of variant 3 not in variant 1: {first:?}"
        );
        assert!(overlap.is_some_and(|o| o >= 0.5), "{overlap:?}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}
