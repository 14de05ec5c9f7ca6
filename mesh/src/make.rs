//! One entry point from a geometry to its mesh: the built-in mesher, or an imported
//! Gmsh file when `[mesh] import` is set.

use crate::geometry::Geometry;
use crate::gmsh::{check_fit, import_msh, ImportError};
use crate::mesher::{mesh_geometry, mesh_geometry_curved, CurvedMesh, MesherError};
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

/// [`make_mesh`] with the curved surfaces the built-in mesher follows and the faces on
/// them; an imported mesh carries none (its faces are taken as they are: straight).
pub fn make_mesh_curved(geom: &Geometry) -> Result<CurvedMesh, MakeMeshError> {
    match &geom.mesh.import {
        None => Ok(mesh_geometry_curved(geom)?),
        Some(_) => Ok(CurvedMesh {
            mesh: make_mesh(geom)?,
            surfaces: Vec::new(),
            surface_faces: Vec::new(),
            projections_undone: 0,
        }),
    }
}
