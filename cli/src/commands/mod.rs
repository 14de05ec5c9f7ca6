//! The `antinode` commands.

pub mod drive;
pub mod fit;
pub mod materials;
pub mod mesh;
pub mod modes;
pub mod plan;
pub mod sweep;

use antinode_mesh::Geometry;
use anyhow::{bail, Result};
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

/// A command-line number that must be finite and positive.
pub fn positive(name: &str, v: f64) -> Result<f64> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        bail!("{name} {v} must be a positive number")
    }
}

/// Mesh settings from the command line, shared by the solving commands.
#[derive(clap::Args)]
pub struct MeshOptions {
    /// Nédélec element order: 1 (fast, error ~h²), 2 (accurate, error ~h⁴) or 3 (error ~h⁶).
    #[arg(long, value_name = "1|2|3")]
    pub order: Option<u8>,
    /// Elements per local wavelength (overrides [mesh] per_wavelength).
    #[arg(long, value_name = "X")]
    pub per_wavelength: Option<f64>,
    /// Largest element edge anywhere, mm (overrides [mesh] max_size).
    #[arg(long, value_name = "MM")]
    pub max_size: Option<f64>,
}

impl MeshOptions {
    /// Apply the given options to the geometry's `[mesh]` table (before meshing, after
    /// any `--target`): sizes neither given in the file nor here take the defaults of the
    /// resulting order at the resulting target.
    pub fn apply(&self, geom: &mut Geometry) -> Result<()> {
        if let Some(o) = self.order {
            geom.mesh.order = o;
        }
        if let Some(p) = self.per_wavelength {
            geom.mesh.per_wavelength = positive("--per-wavelength", p)?;
            geom.mesh.per_wavelength_given = true;
        }
        if let Some(m) = self.max_size {
            geom.mesh.max_size = positive("--max-size", m)?;
            geom.mesh.max_size_given = true;
        }
        geom.mesh.apply_defaults(geom.solve.target);
        Ok(())
    }
}
