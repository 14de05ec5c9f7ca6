//! The `antinode` commands.

pub mod drive;
pub mod materials;
pub mod mesh;
pub mod modes;

use antinode_mesh::Geometry;
use anyhow::{Context, Result};
use std::path::{Path, PathBuf};

/// Reads a geometry file; the library's message already names file, line and value.
pub fn load_geometry(path: &Path) -> Result<Geometry> {
    Geometry::from_file(path).map_err(anyhow::Error::new)
}

/// `DIR` from `-o`, or `out/<geometry file stem>`.
pub fn output_dir(given: Option<&Path>, geometry: &Path) -> PathBuf {
    match given {
        Some(d) => d.to_path_buf(),
        None => {
            let stem = geometry
                .file_stem()
                .map(|s| s.to_string_lossy().into_owned())
                .unwrap_or_else(|| "geometry".into());
            Path::new("out").join(stem)
        }
    }
}

/// Creates the output directory (only called once the results exist).
pub fn create_dir(dir: &Path) -> Result<()> {
    std::fs::create_dir_all(dir)
        .with_context(|| format!("cannot create output directory {}", dir.display()))
}
