//! Helpers shared by the binary's integration tests: run `antinode` as a user does, a
//! fresh scratch folder per test, the path of a bundled example.

#![allow(dead_code)] // each test file uses a different subset

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Runs the binary with `args` and waits for it.
pub fn antinode(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_antinode"))
        .args(args)
        .output()
        .expect("the antinode binary runs")
}

/// A fresh, empty scratch folder for one test (`group` keeps the test files apart;
/// removed by the test when it passes).
pub fn scratch(group: &str, name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("antinode-{group}-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}

/// Path of a bundled example geometry.
pub fn example(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../geometries")
        .join(name)
        .display()
        .to_string()
}

/// Process output as text.
pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}
