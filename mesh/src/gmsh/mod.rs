//! Gmsh MSH 4.1 ASCII import and export.
//!
//! Import reads the sections `$MeshFormat`, `$PhysicalNames`, `$Entities`, `$Nodes` and
//! `$Elements` (others, such as `$Comments` or `$Periodic`, are skipped). It keeps
//! 4-node tetrahedra (element type 4) and 3-node triangles (type 2), ignores points and
//! lines, and rejects other volume or surface elements (higher-order tetrahedra,
//! hexahedra, quadrangles, ...): the solver builds its own higher-order unknowns on
//! straight-sided tetrahedra.
//!
//! Physical groups become regions and boundary tags:
//! - A group is known by its name from `$PhysicalNames`, or by its tag number written in
//!   decimal when it has no name.
//! - `MeshImport::groups` maps a group name to `"air"`, a load name, `"wall"` or a port
//!   name. A group not listed there maps to itself when its name is one of those
//!   (volume groups: `"air"` or a load; surface groups: `"wall"` or a port).
//! - Every tetrahedron must end up in air or a load; a volume group that maps to nothing
//!   is an error naming it. Exception: a file without any physical volume group is taken
//!   as all air.
//! - The boundary is rebuilt from the tetrahedra (faces used by exactly one of them),
//!   oriented with outward normals. Boundary triangles in a port group are tagged with
//!   that port, all others are metal wall. Every triangle in the file must be a face of
//!   the tetrahedra, and wall or port triangles must lie on the outer boundary.
//! - Every load and every port must receive at least one element.
//!
//! The file is read with a size limit ([`crate::input::MAX_MSH_BYTES`]); its first bytes
//! are checked before the rest is read, so a binary MSH file, another format or a device
//! such as `/dev/zero` is refused at once by name.
//!
//! Nodes not used by any tetrahedron are dropped; coordinates are scaled by
//! `unit_mm * 1e-3` into metres.
//!
//! Export ([`write_msh`]) writes coordinates in metres (import it with `unit_mm = 1000`),
//! one volume group per region named after it, and surface groups "wall" and one per
//! port.

mod build;
mod conformity;
mod fit;
mod groups;
mod header;
mod lexer;
mod parse;
mod write;

pub use fit::check_fit;
pub use write::write_msh;

use crate::geometry::MeshImport;
use crate::tet_mesh::TetMesh;
use groups::Builder;
use parse::Parser;
use std::path::{Path, PathBuf};

/// Why an MSH file could not be imported.
#[derive(Debug, thiserror::Error)]
pub enum ImportError {
    /// The file could not be read.
    #[error("cannot read mesh file {}: {source}", path.display())]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    /// A problem at a known line of the file.
    #[error("{}, line {line}: {message}", path.display())]
    Syntax {
        path: PathBuf,
        line: usize,
        message: String,
    },
    /// A problem with the mesh as a whole, or with its mapping onto the geometry.
    #[error("{}: {message}", path.display())]
    Mesh { path: PathBuf, message: String },
}

impl ImportError {
    /// 1-based line number of the problem, when it has one.
    pub fn line(&self) -> Option<usize> {
        match self {
            ImportError::Syntax { line, .. } => Some(*line),
            _ => None,
        }
    }
}

/// Why an MSH file could not be written.
#[derive(Debug, thiserror::Error)]
#[error("cannot write {}: {source}", path.display())]
pub struct ExportError {
    pub path: PathBuf,
    #[source]
    pub source: std::io::Error,
}

/// Reads the MSH 4.1 ASCII file at `path` and maps its physical groups onto the
/// geometry's regions and ports (see the module docs).
///
/// `load_names` and `port_names` are the geometry's loads and ports in file order:
/// region `i + 1` is load `i`, `BoundaryTag::Port(i)` is port `i`.
pub fn import_msh(
    path: &Path,
    import: &MeshImport,
    load_names: &[String],
    port_names: &[String],
) -> Result<TetMesh, ImportError> {
    let text = header::read_msh_text(path)?;
    read_msh(&text, path, import, load_names, port_names)
}

/// Like [`import_msh`], from text already in memory; messages name `import.file`.
pub fn read_msh_str(
    text: &str,
    import: &MeshImport,
    load_names: &[String],
    port_names: &[String],
) -> Result<TetMesh, ImportError> {
    read_msh(text, &import.file, import, load_names, port_names)
}

fn read_msh(
    text: &str,
    path: &Path,
    import: &MeshImport,
    load_names: &[String],
    port_names: &[String],
) -> Result<TetMesh, ImportError> {
    let raw = Parser::new(text, path).parse_file()?;
    Builder {
        path,
        raw: &raw,
        import,
        load_names,
        port_names,
    }
    .build()
}
