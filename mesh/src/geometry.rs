//! The geometry description an engineer writes (TOML; lengths in mm, frequencies in
//! GHz, z vertical) and its validated in-memory form.
//!
//! The in-memory types keep the file's units (mm, GHz); the mesher converts to metres.

use crate::material::Material;
use std::path::PathBuf;

/// A validated geometry file.
#[derive(Clone, Debug)]
pub struct Geometry {
    /// Free-text title.
    pub title: String,
    /// The metal enclosure.
    pub cavity: Cavity,
    /// Dielectric loads inside the cavity, in file order.
    pub loads: Vec<Load>,
    /// Feed apertures on the walls, in file order.
    pub ports: Vec<Port>,
    /// Meshing settings.
    pub mesh: MeshSettings,
    /// Eigen-solve settings.
    pub solve: SolveSettings,
    /// File the geometry was read from, if any (for messages and relative paths).
    pub source: Option<PathBuf>,
}

/// Shape of the cavity.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum CavityShape {
    /// Box with one corner at the origin, `size = [x, y, z]` in mm.
    Box { size: [f64; 3] },
    /// Cylinder with axis on z, centre at x = y = 0, base at z = 0 (mm).
    Cylinder { radius: f64, height: f64 },
}

/// Wall metal.
#[derive(Clone, Debug, PartialEq)]
pub enum WallMetal {
    /// Perfect electric conductor (no wall loss).
    Pec,
    /// A metal with finite conductivity (S/m).
    Metal { name: String, conductivity: f64 },
}

/// The cavity: shape and wall metal.
#[derive(Clone, Debug, PartialEq)]
pub struct Cavity {
    pub shape: CavityShape,
    pub walls: WallMetal,
}

/// Shape of a load (mm).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LoadShape {
    /// Vertical cylinder: axis through `center = [x, y]`, from `bottom` to `bottom + height`.
    Cylinder {
        center: [f64; 2],
        radius: f64,
        bottom: f64,
        height: f64,
    },
    /// Axis-aligned box from `min` to `max`.
    Box { min: [f64; 3], max: [f64; 3] },
}

/// A dielectric load.
#[derive(Clone, Debug)]
pub struct Load {
    pub name: String,
    /// `None` only when the mesh is imported (the imported mesh gives the shape).
    pub shape: Option<LoadShape>,
    pub material: Material,
}

/// Wall a port sits on.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum PortWall {
    /// Box wall: `axis` 0/1/2 = x/y/z, `positive` = the wall at the far side (size), else at 0.
    /// In-plane coordinates: x-walls (y, z), y-walls (x, z), z-walls (x, y).
    BoxWall { axis: usize, positive: bool },
    /// Cylinder top (z = H), in-plane coordinates (x, y).
    Top,
    /// Cylinder bottom (z = 0), in-plane coordinates (x, y).
    Bottom,
    /// Cylinder side wall; in-plane coordinates (arc length in mm counter-clockwise from
    /// azimuth `angle_deg`, z).
    Side { angle_deg: f64 },
}

/// A rectangular feed aperture (a matched waveguide attached to a wall).
#[derive(Clone, Debug, PartialEq)]
pub struct Port {
    pub name: String,
    pub wall: PortWall,
    /// Centre in the wall's two in-plane coordinates (mm).
    pub center: [f64; 2],
    /// Broad side (mm); along the first in-plane axis unless `rotated`.
    pub width: f64,
    /// Narrow side (mm).
    pub height: f64,
    /// Broad side along the second in-plane axis instead of the first.
    pub rotated: bool,
}

/// Meshing settings.
#[derive(Clone, Debug, PartialEq)]
pub struct MeshSettings {
    /// Element order the solver will use (1 or 2).
    pub order: u8,
    /// Elements per local wavelength at the target frequency.
    pub per_wavelength: f64,
    /// Upper bound on element size anywhere (mm).
    pub max_size: f64,
    /// Optional imported mesh (Gmsh MSH 4.1), resolved relative to the geometry file.
    pub import: Option<MeshImport>,
}

/// An imported mesh and how its physical groups map onto the geometry.
#[derive(Clone, Debug, PartialEq)]
pub struct MeshImport {
    pub file: PathBuf,
    /// Length unit of the file's coordinates, in mm (1.0 = mm, 1000.0 = m).
    pub unit_mm: f64,
    /// (physical group name, target) pairs; target is "air", a load name, "wall" or a port name.
    pub groups: Vec<(String, String)>,
}

/// Eigen-solve settings.
#[derive(Clone, Debug, PartialEq)]
pub struct SolveSettings {
    /// Target frequency, GHz.
    pub target: f64,
    /// Band of interest [lo, hi], GHz.
    pub band: Option<[f64; 2]>,
    /// Number of modes nearest the target.
    pub count: Option<usize>,
}
