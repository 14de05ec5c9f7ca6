//! Cavity mesher: a geometry (box or cylinder cavity, box and vertical-cylinder loads,
//! wall ports) to a conforming, tagged tetrahedral mesh.
//!
//! Design: every shape the geometry file can describe is a vertical prism (a footprint
//! times a z-range), so the mesh is a 2-D constrained Delaunay mesh of the cross-section
//! (`planar`) extruded in z-layers (`extrude`). All load footprints and port outlines
//! are edges of the 2-D mesh (`outline`) and all load tops/bottoms and port z-edges are
//! layer planes, so material interfaces and port rectangles are unions of element faces
//! by construction, with no 3-D geometric predicates to go wrong. Sizes follow the local
//! wavelength and are graded smoothly away from fine loads (`sizing`).
//!
//! The price: the cross-section is as fine everywhere above and below a load as in the
//! load, and layers as thin across the whole cavity as in the finest load at that
//! height, giving flat or tall prisms in the air there. Grading limits that to a shell
//! around each load: 1.5× per element across the section ([`GRADING`]), and 2× per layer
//! along z ([`GRADING_Z`]), where a jump changes prism aspect but no triangle's
//! angles. [`crate::quality`] reports the resulting angles.
//!
//! Not done (why): coarser cross-sections in z-slabs away from a fine load would remove
//! most of the remaining air tets above and below it, but two different triangulations
//! only meet conformingly through a transition layer of tetrahedra (the fine one a
//! refinement of the coarse one, each coarse column coned to an interior point, the
//! split side faces triangulated alike from both columns, wall vertices shared so cylinder
//! walls stay exact). That needs its own conformity tests and is left for later.

mod estimate;
mod extrude;
mod graded;
mod outline;
mod planar;
mod sizing;

pub use estimate::{estimate, MeshEstimate, ESTIMATE_MARGIN};
pub use extrude::MAX_TETS;
pub use graded::OVERSHOOT;
pub use planar::MAX_2D_POINTS;
pub use sizing::{
    element_sizes, RegionSize, C0_MM_PER_S, GRADING, GRADING_Z, MIN_CIRCLE_SIDES,
    MIN_CIRCLE_SIDES_GRADED,
};

use crate::geometry::{Geometry, MeshMethod};
use crate::refine::{curved_surfaces, surface_faces, CurvedSurface};
use crate::tet_mesh::TetMesh;

/// Why the built-in mesher could not mesh a geometry.
#[derive(Debug, thiserror::Error)]
pub enum MesherError {
    /// A load without a shape (only imported meshes may have those).
    #[error("load '{load}' has no shape (box or cylinder); the built-in mesher needs one for every load")]
    MissingLoadShape { load: String },
    /// A mesh setting the mesher cannot use.
    #[error("mesh setting: {0}")]
    Settings(String),
    /// A load or port does not lie inside the cavity's cross-section.
    #[error("{what} does not lie inside the cavity's cross-section")]
    Outside { what: String },
    /// The mesh would be larger than the mesher allows.
    #[error(
        "the mesh would exceed {limit} {what}; raise mesh.max_size or lower mesh.per_wavelength"
    )]
    TooLarge { what: &'static str, limit: usize },
    /// The element-count estimate made before meshing exceeds the mesher's limit.
    #[error(
        "the mesh would have about {tets:.2e} tetrahedra ({triangles:.2e} cross-section \
         triangles x {layers:.3e} layers; element size {h_air_mm:.3} mm in the air, \
         {h_min_mm:.3} mm smallest), more than the limit of {limit}; check the cavity size \
         (mm), or raise mesh.max_size (--max-size), lower mesh.per_wavelength \
         (--per-wavelength) or solve.target (--target)"
    )]
    EstimateTooLarge {
        tets: f64,
        triangles: f64,
        layers: f64,
        h_air_mm: f64,
        h_min_mm: f64,
        limit: usize,
    },
    /// The 2-D triangulation failed (a numerical failure inside the triangulator).
    #[error("triangulating the cavity cross-section failed: {0}")]
    Triangulation(String),
}

/// Meshes a geometry with the built-in mesher (`geom.mesh.import` is not consulted).
///
/// Returns tetrahedra in metres, each tagged with its region (0 = air, i + 1 = load i),
/// and boundary triangles tagged `Wall` or `Port(i)`.
pub fn mesh_geometry(geom: &Geometry) -> Result<TetMesh, MesherError> {
    mesh_geometry_curved(geom).map(|c| c.mesh)
}

/// A mesh with the curved surfaces it follows.
#[derive(Clone, Debug)]
pub struct CurvedMesh {
    pub mesh: TetMesh,
    /// The geometry's cylinder sides, exactly (metres).
    pub surfaces: Vec<CurvedSurface>,
    /// Faces lying on those surfaces (boundary faces and region interfaces) as
    /// (ascending vertex numbers, index into `surfaces`), in key order.
    pub surface_faces: Vec<([u32; 3], u32)>,
    /// Vertices left on their chord because projecting them made a tet flat (graded
    /// method only; 0 for the extruded one, which places no vertex off the outline).
    pub projections_undone: usize,
}

/// [`mesh_geometry`] with the curved surfaces and the faces on them.
pub fn mesh_geometry_curved(geom: &Geometry) -> Result<CurvedMesh, MesherError> {
    let sizes = element_sizes(geom)?;
    match geom.mesh.method {
        MeshMethod::Extruded => {
            // Refuse before allocating anything that grows with the geometry's size.
            estimate(geom, &sizes)?;
            let mesh = extruded(geom, &sizing::SizeField::new(geom, &sizes)?)?;
            let surfaces = curved_surfaces(geom);
            let surface_faces = surface_faces(&mesh, &surfaces);
            Ok(CurvedMesh {
                mesh,
                surfaces,
                surface_faces,
                projections_undone: 0,
            })
        }
        MeshMethod::Graded => graded::graded(geom, &sizes),
    }
}

/// The extruded mesh of a geometry for the given size fields.
fn extruded(geom: &Geometry, field: &sizing::SizeField) -> Result<TetMesh, MesherError> {
    let outline = outline::Outline::build(geom, field)?;
    let z = extrude::layer_heights(geom, field);
    // A cross-section with N points has about 2N triangles, giving 6N tets per layer:
    // stop placing points as soon as the tet limit is sure to be exceeded.
    let point_limit = (MAX_TETS / (6 * (z.len() - 1).max(1))).min(MAX_2D_POINTS);
    let planar = planar::Planar::build(&outline, field, point_limit)?;
    extrude::extrude(geom, field, &outline, &planar, &z)
}
