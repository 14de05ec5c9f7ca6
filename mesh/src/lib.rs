//! Geometry description, tetrahedral meshing and mesh I/O for resonant cavities.
//!
//! This crate knows nothing of Maxwell's equations: it turns a geometry file into a
//! conforming tetrahedral mesh whose elements carry region ids (air or which load) and
//! whose boundary triangles carry tags (metal wall or which feed port).

pub mod constants;
pub mod error;
pub mod faces;
pub mod geometry;
pub mod gmsh;
pub mod ice;
pub mod input;
pub mod make;
pub mod material;
pub mod mesher;
pub mod quality;
pub mod refine;
pub mod structured;
pub mod sweep;
pub mod tet_mesh;
pub mod vtk;
pub mod water;

pub use geometry::Geometry;
pub use make::{make_mesh, make_mesh_curved};
pub use material::Material;
pub use tet_mesh::{BoundaryTag, RegionInfo, TetMesh};
