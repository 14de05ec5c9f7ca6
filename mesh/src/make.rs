//! One entry point from a geometry to its mesh: the built-in mesher, or an imported
//! Gmsh file when `[mesh] import` is set.

use crate::geometry::Geometry;
use crate::gmsh::{check_fit, import_msh, ImportError};
use crate::mesher::{mesh_geometry, MesherError};
use crate::tet_mesh::TetMesh;

/// Why no mesh could be made.
#[derive(Debug, thiserror::Error)]
pub enum MakeMeshError {
    #[error(transparent)]
    Mesher(#[from] MesherError),
    #[error(transparent)]
    Import(#[from] ImportError),
}

/// Mesh `geom` with the built-in mesher, or import the mesh it names and check that it
/// fills `[cavity]` ([`check_fit`]).
pub fn make_mesh(geom: &Geometry) -> Result<TetMesh, MakeMeshError> {
    match &geom.mesh.import {
        None => Ok(mesh_geometry(geom)?),
        Some(import) => {
            let loads: Vec<String> = geom.loads.iter().map(|l| l.name.clone()).collect();
            let ports: Vec<String> = geom.ports.iter().map(|p| p.name.clone()).collect();
            let mesh = import_msh(&import.file, import, &loads, &ports)?;
            check_fit(&mesh, &geom.cavity.shape, &import.file)?;
            Ok(mesh)
        }
    }
}
