//! One run owns its output folder; the memory plan before meshing; plan-only and option
//! checks. Each test runs the binary as a user does.

mod common;
use common::{antinode, example, scratch, text};

use std::collections::BTreeMap;
use std::io::{BufRead, BufReader};
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Small invented test cavity: empty 100 × 80 × 60 mm PEC box, order 1, coarse.
fn small_box(dir: &Path) -> String {
    let geom = dir.join("small_box.toml");
    std::fs::write(
        &geom,
        "title = \"invented test: small empty box\"\n[cavity]\nshape = \"box\"\n\
         size = [100.0, 80.0, 60.0]\nwalls = \"pec\"\n[mesh]\norder = 1\n\
         per_wavelength = 6.0\nmax_size = 20.0\n[solve]\ntarget = 3.0\n",
    )
    .unwrap();
    geom.display().to_string()
}

/// Every file of a folder with its bytes.
fn snapshot(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| {
            let e = e.unwrap();
            (
                e.file_name().to_string_lossy().into_owned(),
                std::fs::read(e.path()).unwrap(),
            )
        })
        .collect()
}

/// Entries of `parent` other than the named ones (left-over staging folders).
fn leftovers(parent: &Path, keep: &[&str]) -> Vec<String> {
    std::fs::read_dir(parent)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| !keep.contains(&n.as_str()))
        .collect()
}

#[test]
fn a_smaller_rerun_leaves_no_stale_mode_files() {
    let dir = scratch("out", "stale");
    let geom = small_box(&dir);
    let out = dir.join("out");
    let o_str = out.to_str().unwrap();
    let m = antinode(&["mesh", &geom, "-o", o_str]);
    assert!(m.status.success(), "{}", text(&m.stderr));
    let first = antinode(&["modes", &geom, "--count", "6", "-o", o_str]);
    assert!(first.status.success(), "{}", text(&first.stderr));
    let n_first = std::fs::read_dir(&out)
        .unwrap()
        .filter(|e| {
            let n = e.as_ref().unwrap().file_name();
            n.to_string_lossy().starts_with("mode_")
        })
        .count();
    assert!(n_first >= 6, "{n_first} mode files");
    let second = antinode(&["modes", &geom, "--count", "2", "-o", o_str]);
    assert!(second.status.success(), "{}", text(&second.stderr));
    let json: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("modes.json")).unwrap()).unwrap();
    let n_modes = json["modes"].as_array().unwrap().len();
    let files = snapshot(&out);
    let mode_files = files.keys().filter(|n| n.starts_with("mode_")).count();
    assert_eq!(
        mode_files,
        n_modes,
        "mode files vs modes.json: {:?}",
        files.keys()
    );
    assert!(n_modes < n_first, "the second run found {n_modes} modes");
    let pvd = text(&files["modes.pvd"]);
    assert_eq!(pvd.matches("<DataSet").count(), n_modes, "{pvd}");
    // The mesh files of the same geometry, written by `mesh`, are kept.
    assert!(files.contains_key("mesh.vtu") && files.contains_key("boundary.vtu"));
    assert!(leftovers(&dir, &["out", "small_box.toml"]).is_empty());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_folder_with_foreign_files_or_a_file_is_refused_before_meshing() {
    let dir = scratch("out", "foreign");
    let geom = small_box(&dir);
    let out = dir.join("notes");
    std::fs::create_dir_all(&out).unwrap();
    std::fs::write(out.join("notes.txt"), "mine").unwrap();
    let blocker = dir.join("a_file");
    std::fs::write(&blocker, "not a folder").unwrap();
    let under_file = blocker.join("sub");
    for target in [&out, &blocker, &under_file] {
        let t0 = Instant::now();
        let o = antinode(&[
            "modes",
            &example("empty_box.toml"),
            "-o",
            target.to_str().unwrap(),
        ]);
        let s = t0.elapsed().as_secs_f64();
        println!("{}: refused in {s:.3} s", target.display());
        assert!(!o.status.success(), "{} accepted", target.display());
        // The plan line is printed after meshing: nothing of the run happened.
        assert!(text(&o.stdout).is_empty(), "{}", text(&o.stdout));
        assert!(
            text(&o.stderr).contains("output folder"),
            "{}",
            text(&o.stderr)
        );
    }
    assert_eq!(std::fs::read(out.join("notes.txt")).unwrap(), b"mine");
    assert!(leftovers(&dir, &["notes", "a_file", "small_box.toml"]).is_empty());
    let _ = geom;
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn sigint_during_the_solve_leaves_the_previous_folder_byte_identical() {
    let dir = scratch("out", "sigint");
    let geom = small_box(&dir);
    let out = dir.join("out");
    let o_str = out.to_str().unwrap();
    let first = antinode(&["modes", &geom, "--count", "4", "-o", o_str]);
    assert!(first.status.success(), "{}", text(&first.stderr));
    let before = snapshot(&out);
    // The empty box at order 2 solves for several seconds after its plan line.
    let mut child = Command::new(env!("CARGO_BIN_EXE_antinode"))
        .args(["modes", &example("empty_box.toml"), "-o", o_str])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let stdout = child.stdout.take().unwrap();
    let mut lines = BufReader::new(stdout).lines();
    let plan = lines.next().unwrap().unwrap();
    assert!(plan.starts_with("plan:"), "{plan}");
    std::thread::sleep(Duration::from_millis(300));
    let staging = leftovers(&dir, &["out", "small_box.toml"]);
    assert_eq!(
        staging.len(),
        1,
        "one staging folder while solving: {staging:?}"
    );
    // SAFETY: plain kill(2) on our own child's pid.
    let r = unsafe { libc::kill(child.id() as i32, libc::SIGINT) };
    assert_eq!(r, 0);
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(128 + libc::SIGINT), "{status:?}");
    assert_eq!(snapshot(&out), before, "the previous results changed");
    assert!(leftovers(&dir, &["out", "small_box.toml"]).is_empty());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn memory_plan_refuses_before_meshing() {
    // Empty 300 × 300 × 200 mm box at order 2 with 1.7 mm elements: the mesher's
    // estimate is ~2.6e7 tetrahedra, ~1.6e8 unknowns: far beyond any machine this runs on.
    let dir = scratch("out", "memory");
    let out = dir.join("out");
    let t0 = Instant::now();
    let o = antinode(&[
        "modes",
        &example("empty_box.toml"),
        "--max-size",
        "1.7",
        "-o",
        out.to_str().unwrap(),
    ]);
    println!("refused in {:.3} s", t0.elapsed().as_secs_f64());
    let err = text(&o.stderr);
    assert!(!o.status.success());
    assert!(err.contains("before it starts meshing"), "{err}");
    assert!(
        err.contains("--order 1"),
        "order 2 is told about order 1: {err}"
    );
    assert!(!out.exists());
    let o = antinode(&[
        "modes",
        &example("empty_box.toml"),
        "--max-size",
        "1.7",
        "--order",
        "1",
        "-o",
        out.to_str().unwrap(),
    ]);
    let err = text(&o.stderr);
    assert!(err.contains("before it starts meshing"), "{err}");
    assert!(
        !err.contains("--order 1"),
        "order 1 is told to use order 1: {err}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn count_above_the_problem_size_has_its_own_message() {
    let dir = scratch("out", "count");
    let geom = small_box(&dir);
    let out = dir.join("out");
    let o = antinode(&[
        "modes",
        &geom,
        "--max-size",
        "60",
        "--per-wavelength",
        "1",
        "--count",
        "5000",
        "-o",
        out.to_str().unwrap(),
    ]);
    let err = text(&o.stderr);
    assert!(!o.status.success());
    // Refused from the mesher's estimate before meshing, or from the exact count after.
    assert!(err.contains("more modes than this problem"), "{err}");
    assert!(!err.contains("--order 1"), "{err}");
    assert!(!out.exists());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn plan_only_meshes_counts_and_writes_nothing() {
    let dir = scratch("out", "plan");
    let out = dir.join("out");
    let o = antinode(&[
        "modes",
        &example("fed_box.toml"),
        "--order",
        "1",
        "--plan",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let s = text(&o.stdout);
    assert!(s.contains("plan only"), "{s}");
    assert!(s.contains("time: ~"), "{s}");
    assert!(s.contains("TE10 constraint"), "{s}");
    assert!(!out.exists());
    assert!(leftovers(&dir, &[]).is_empty());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn mesh_takes_the_mesh_options() {
    let dir = scratch("out", "meshopts");
    let geom = small_box(&dir);
    let out = dir.join("out");
    let o = antinode(&[
        "mesh",
        &geom,
        "--per-wavelength",
        "4",
        "--max-size",
        "15",
        "--order",
        "2",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let s = text(&o.stdout);
    assert!(s.contains("4 per local wavelength"), "{s}");
    assert!(s.contains("at most 15 mm"), "{s}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_negative_frequency_gets_a_clear_message() {
    let o = antinode(&["materials", "-f", "-1"]);
    assert!(!o.status.success());
    let err = text(&o.stderr);
    assert!(err.contains("must be a positive number"), "{err}");
    // The same plain message wherever a frequency is taken, not the parser's "unexpected
    // argument" (the geometry file is never read: the check comes first).
    let geom = concat!(env!("CARGO_MANIFEST_DIR"), "/../geometries/fed_box.toml");
    for args in [
        vec!["modes", geom, "--target", "-1"],
        vec!["modes", geom, "--band", "-1", "3"],
        vec!["drive", geom, "--at", "-1"],
        vec!["drive", geom, "--band", "2.4", "2.5", "--step", "-5"],
    ] {
        let o = antinode(&args);
        assert!(!o.status.success(), "{args:?}");
        let err = text(&o.stderr);
        assert!(err.contains("must be a positive number"), "{args:?}: {err}");
    }
}

/// Values at 0.915 GHz: raw beef from its 915 MHz table row (To et al. 1974 in Table 4
/// of J. Food Sci. Technol. 48 (2011) 387: 56, 21), potato marked as a 2.45 GHz constant
/// outside its source's range.
#[test]
fn materials_at_915_mhz_say_where_each_value_comes_from() {
    let o = antinode(&["materials", "-f", "0.915"]);
    assert!(o.status.success());
    let s = text(&o.stdout);
    let block = |name: &str| {
        let start = s
            .find(&format!("\n{name} "))
            .unwrap_or_else(|| panic!("{name}: {s}"));
        s[start + 1..]
            .lines()
            .take(3)
            .collect::<Vec<_>>()
            .join("\n")
    };
    let beef = block("raw beef");
    assert!(
        beef.contains("56.000") && beef.contains("21.0000"),
        "{beef}"
    );
    assert!(!beef.contains("outside the source's range"), "{beef}");
    let potato = block("potato");
    assert!(potato.contains("57.000"), "{potato}");
    assert!(potato.contains("outside the source's range"), "{potato}");
    // Soda-lime glass follows the ITU-R P.2040-3 glass power law inside its 0.1-100 GHz:
    // at 0.915 GHz ε′ 6.31 and ε″ = 0.0036 · 0.915^1.3394 / (2π · 0.915e9 · ε0) =
    // 0.06279, printed 0.0628 (worked by hand), not flagged.
    let glass = block("soda lime glass");
    assert!(
        glass.contains("6.310") && glass.contains("0.0628"),
        "{glass}"
    );
    assert!(!glass.contains("outside the source's range"), "{glass}");
    // Borosilicate glass is a 1 MHz constant: flagged at 0.915 GHz.
    let boro = block("borosilicate glass");
    assert!(boro.contains("outside the source's range"), "{boro}");
    // Air's density keeps its four decimals (dry air at 20 °C, 1.2041 kg/m³).
    let air = s
        .lines()
        .filter(|l| l.starts_with("air "))
        .nth(1)
        .unwrap_or_else(|| panic!("{s}"));
    assert!(air.contains("1.2041"), "{air}");
}

/// A box with no `[mesh]` sizes: the automatic size keeps the order's default when the
/// memory allows it and relaxes it (recorded in modes.json) when `--memory` is small;
/// given sizes are never relaxed, the run is refused instead. The budgets are our own
/// arithmetic on this box's plans (order 3: about 330 MB at 3 per wavelength, 35k
/// unknowns; under 40 MB at the floor of 1.5, 4k unknowns).
#[test]
fn automatic_size_relaxes_to_fit_the_memory_and_says_so() {
    let dir = scratch("out", "autosize");
    let geom = dir.join("auto_box.toml");
    std::fs::write(
        &geom,
        "title = \"invented test: empty box, sizes left to the tool\"\n[cavity]\n\
         shape = \"box\"\nsize = [300.0, 300.0, 200.0]\nwalls = \"pec\"\n[solve]\n\
         target = 2.45\ncount = 4\n",
    )
    .unwrap();
    let geom = geom.display().to_string();
    let plenty = antinode(&["modes", &geom, "--plan", "--memory", "20"]);
    assert!(plenty.status.success(), "{}", text(&plenty.stderr));
    let s = text(&plenty.stdout);
    assert!(
        s.contains("the order's default, 3.00 elements per wavelength"),
        "{s}"
    );

    let out = dir.join("out");
    let small = antinode(&[
        "modes",
        &geom,
        "--memory",
        "0.15",
        "--no-fields",
        "--format",
        "json",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(small.status.success(), "{}", text(&small.stderr));
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("modes.json")).unwrap()).unwrap();
    let size = &doc["solve"]["mesh_size"];
    assert_eq!(size["sizing"], "automatic", "{size}");
    let used = size["per_wavelength"].as_f64().unwrap();
    assert!((1.5..3.0).contains(&used), "{size}");
    assert_eq!(size["default_per_wavelength"].as_f64(), Some(3.0));
    let planned = doc["solve"]["plan"]["memory_estimate_bytes"]
        .as_f64()
        .unwrap();
    assert!(planned <= 0.7 * 0.15e9, "planned {planned} B");
    // The last try that fitted is the one used.
    let tried = size["tried"].as_array().unwrap();
    assert!(tried.len() >= 2, "{size}");
    assert!(tried
        .iter()
        .any(|t| t["per_wavelength"].as_f64() == Some(used) && t["counted"] == true));

    // A given size is not relaxed: refused, naming --memory as the limit.
    let given = antinode(&[
        "modes",
        &geom,
        "--plan",
        "--memory",
        "0.15",
        "--per-wavelength",
        "3",
    ]);
    assert!(!given.status.success());
    let e = text(&given.stderr);
    assert!(e.contains("--memory"), "{e}");
    std::fs::remove_dir_all(&dir).unwrap();
}
