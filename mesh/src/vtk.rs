//! VTK XML writers: UnstructuredGrid pieces (`.vtu`) and collections (`.pvd`).
//!
//! Encoding of every `.vtu` written here: `byte_order="LittleEndian"`,
//! `header_type="UInt64"`, each `DataArray` with `format="binary"` inline, uncompressed.
//! The element text is the base64 encoding of one UInt64 byte count followed by the raw
//! little-endian values, as the VTK XML file-format description specifies. Binary keeps
//! files about a third the size of ASCII and is exact (no decimal rounding).
//!
//! Value types: points and real arrays are Float64; connectivity and offsets are Int32
//! when every value fits, Int64 otherwise; cell types are UInt8.
//!
//! Files are first written next to the target under a temporary name and then renamed,
//! so a failed or rejected write never leaves a half-written file at `path`.

use crate::tet_mesh::{BoundaryTag, TetMesh};
use base64::engine::general_purpose::{GeneralPurpose, STANDARD};
use base64::write::EncoderWriter;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

/// Error from the VTK writers; carries the file that was being written.
#[derive(Debug, thiserror::Error)]
pub enum VtkError {
    /// The operating system refused a create, write or rename.
    #[error("cannot write {}: {source}", path.display())]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    /// The data handed to the writer is inconsistent (nothing was written).
    #[error("cannot write {}: {message}", path.display())]
    Invalid { path: PathBuf, message: String },
}

/// The cells of one piece, all of one kind.
///
/// Vertex indices refer to the piece's `points`.
#[derive(Clone, Copy, Debug)]
pub enum CellBlock<'a> {
    /// 3-node triangles (VTK_TRIANGLE = 5).
    Triangles(&'a [[u32; 3]]),
    /// 4-node tetrahedra (VTK_TETRA = 10).
    Tets(&'a [[u32; 4]]),
    /// 10-node tetrahedra (VTK_QUADRATIC_TETRA = 24): the four corners, then the
    /// mid-edge nodes of edges (0,1), (1,2), (0,2), (0,3), (1,3), (2,3), in that order.
    QuadraticTets(&'a [[u32; 10]]),
    /// 8-node hexahedra (VTK_HEXAHEDRON = 12): the bottom face counter-clockwise seen
    /// from above, then the top face in the same order.
    Hexahedra(&'a [[u32; 8]]),
}

impl CellBlock<'_> {
    /// Number of cells.
    pub fn len(&self) -> usize {
        match self {
            CellBlock::Triangles(c) => c.len(),
            CellBlock::Tets(c) => c.len(),
            CellBlock::QuadraticTets(c) => c.len(),
            CellBlock::Hexahedra(c) => c.len(),
        }
    }

    /// True when there are no cells.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Nodes per cell.
    pub fn arity(&self) -> usize {
        match self {
            CellBlock::Triangles(_) => 3,
            CellBlock::Tets(_) => 4,
            CellBlock::QuadraticTets(_) => 10,
            CellBlock::Hexahedra(_) => 8,
        }
    }

    /// The VTK cell type code.
    pub fn vtk_type(&self) -> u8 {
        match self {
            CellBlock::Triangles(_) => 5,
            CellBlock::Tets(_) => 10,
            CellBlock::QuadraticTets(_) => 24,
            CellBlock::Hexahedra(_) => 12,
        }
    }

    /// Connectivity as one flat slice (`len() * arity()` entries).
    pub fn connectivity(&self) -> &[u32] {
        match self {
            CellBlock::Triangles(c) => c.as_flattened(),
            CellBlock::Tets(c) => c.as_flattened(),
            CellBlock::QuadraticTets(c) => c.as_flattened(),
            CellBlock::Hexahedra(c) => c.as_flattened(),
        }
    }
}

/// A named array attached to points or cells (one entry per point or per cell).
///
/// VTK has no complex type: write real and imaginary parts as two arrays.
#[derive(Clone, Copy, Debug)]
pub enum DataArray<'a> {
    /// One Float64 per entry.
    Scalars { name: &'a str, values: &'a [f64] },
    /// Three Float64 per entry.
    Vectors {
        name: &'a str,
        values: &'a [[f64; 3]],
    },
    /// One Int32 per entry.
    Ints { name: &'a str, values: &'a [i32] },
    /// One UInt32 per entry.
    UInts { name: &'a str, values: &'a [u32] },
}

impl<'a> DataArray<'a> {
    /// The array's name.
    pub fn name(&self) -> &'a str {
        match *self {
            DataArray::Scalars { name, .. }
            | DataArray::Vectors { name, .. }
            | DataArray::Ints { name, .. }
            | DataArray::UInts { name, .. } => name,
        }
    }

    /// Number of entries (tuples).
    pub fn len(&self) -> usize {
        match self {
            DataArray::Scalars { values, .. } => values.len(),
            DataArray::Vectors { values, .. } => values.len(),
            DataArray::Ints { values, .. } => values.len(),
            DataArray::UInts { values, .. } => values.len(),
        }
    }

    /// True when the array has no entries.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// One UnstructuredGrid piece: points, one block of cells, and data arrays.
#[derive(Clone, Debug)]
pub struct VtuPiece<'a> {
    /// Point coordinates (the caller's unit; the mesh helpers write metres).
    pub points: &'a [[f64; 3]],
    /// The cells.
    pub cells: CellBlock<'a>,
    /// Arrays with one entry per point.
    pub point_data: Vec<DataArray<'a>>,
    /// Arrays with one entry per cell.
    pub cell_data: Vec<DataArray<'a>>,
}

/// Writes `piece` to `path` as a VTK XML UnstructuredGrid file (see the module docs for
/// the encoding).
///
/// Rejects, before creating any file: connectivity that refers to a missing point,
/// arrays whose length differs from the point or cell count, empty or repeated array
/// names.
pub fn write_vtu(path: &Path, piece: &VtuPiece) -> Result<(), VtkError> {
    validate_piece(path, piece)?;
    write_atomically(path, |w| write_vtu_body(w, piece))
}

/// Writes a `.pvd` collection listing `entries` as (timestep, file) pairs.
///
/// The timestep is whatever orders the files in a viewer (a mode index or a frequency);
/// file names are written as given, normally relative to the `.pvd`'s own folder.
pub fn write_pvd<S: AsRef<str>>(path: &Path, entries: &[(f64, S)]) -> Result<(), VtkError> {
    for (step, file) in entries {
        if !step.is_finite() {
            return Err(invalid(
                path,
                format!("timestep {step} for '{}' is not finite", file.as_ref()),
            ));
        }
        if file.as_ref().is_empty() {
            return Err(invalid(path, "an entry has an empty file name".into()));
        }
    }
    write_atomically(path, |w| {
        writeln!(w, "<?xml version=\"1.0\"?>")?;
        writeln!(
            w,
            "<VTKFile type=\"Collection\" version=\"0.1\" byte_order=\"LittleEndian\">"
        )?;
        writeln!(w, "  <Collection>")?;
        for (step, file) in entries {
            writeln!(
                w,
                "    <DataSet timestep=\"{}\" group=\"\" part=\"0\" file=\"{}\"/>",
                step,
                xml_escape(file.as_ref())
            )?;
        }
        writeln!(w, "  </Collection>")?;
        writeln!(w, "</VTKFile>")
    })
}

/// The integer written for a boundary tag in `boundary.vtu`'s "tag" array:
/// 0 = metal wall, `i + 1` = feed port `i`.
pub fn boundary_tag_code(tag: BoundaryTag) -> i32 {
    match tag {
        BoundaryTag::Wall => 0,
        BoundaryTag::Port(i) => i32::try_from(i).map_or(i32::MAX, |i| i.saturating_add(1)),
    }
}

/// Writes the mesh's tetrahedra (coordinates in metres) with cell data "region"
/// (UInt32: 0 = air, `i + 1` = load `i`) followed by `extra_cell_data` (for example a
/// "quality" array), each with one entry per tetrahedron.
pub fn write_mesh_vtu(
    path: &Path,
    mesh: &TetMesh,
    extra_cell_data: &[DataArray],
) -> Result<(), VtkError> {
    let mut cell_data = vec![DataArray::UInts {
        name: "region",
        values: &mesh.tet_region,
    }];
    cell_data.extend_from_slice(extra_cell_data);
    write_vtu(
        path,
        &VtuPiece {
            points: &mesh.nodes,
            cells: CellBlock::Tets(&mesh.tets),
            point_data: Vec::new(),
            cell_data,
        },
    )
}

/// Writes the mesh's boundary triangles (coordinates in metres) with cell data "tag"
/// (Int32, see [`boundary_tag_code`]: 0 = metal wall, `i + 1` = feed port `i`).
///
/// All mesh nodes are written (unused interior nodes included) so point ids match the
/// volume file.
pub fn write_boundary_vtu(path: &Path, mesh: &TetMesh) -> Result<(), VtkError> {
    let tags: Vec<i32> = mesh
        .boundary_tag
        .iter()
        .map(|&t| boundary_tag_code(t))
        .collect();
    write_vtu(
        path,
        &VtuPiece {
            points: &mesh.nodes,
            cells: CellBlock::Triangles(&mesh.boundary),
            point_data: Vec::new(),
            cell_data: vec![DataArray::Ints {
                name: "tag",
                values: &tags,
            }],
        },
    )
}

fn invalid(path: &Path, message: String) -> VtkError {
    VtkError::Invalid {
        path: path.to_path_buf(),
        message,
    }
}

fn validate_piece(path: &Path, piece: &VtuPiece) -> Result<(), VtkError> {
    let n_points = piece.points.len();
    if let Some((i, &v)) = piece
        .cells
        .connectivity()
        .iter()
        .enumerate()
        .find(|(_, &v)| v as usize >= n_points)
    {
        return Err(invalid(
            path,
            format!(
                "cell {} refers to point {v}, but there are only {n_points} points",
                i / piece.cells.arity()
            ),
        ));
    }
    for (kind, arrays, expected) in [
        ("point", &piece.point_data, n_points),
        ("cell", &piece.cell_data, piece.cells.len()),
    ] {
        for (k, a) in arrays.iter().enumerate() {
            if a.name().is_empty() {
                return Err(invalid(path, format!("{kind} data array {k} has no name")));
            }
            if arrays[..k].iter().any(|b| b.name() == a.name()) {
                return Err(invalid(
                    path,
                    format!("{kind} data array name '{}' is used twice", a.name()),
                ));
            }
            if a.len() != expected {
                return Err(invalid(
                    path,
                    format!(
                        "{kind} data array '{}' has {} entries, expected {expected} (one per {kind})",
                        a.name(),
                        a.len()
                    ),
                ));
            }
        }
    }
    Ok(())
}

/// Writes through a temporary sibling file, renamed over `path` on success.
fn write_atomically(
    path: &Path,
    body: impl FnOnce(&mut BufWriter<File>) -> std::io::Result<()>,
) -> Result<(), VtkError> {
    let io_err = |source| VtkError::Io {
        path: path.to_path_buf(),
        source,
    };
    let mut tmp_name = path.file_name().unwrap_or_default().to_os_string();
    tmp_name.push(".partial");
    let tmp = path.with_file_name(tmp_name);
    let result = (|| {
        let mut w = BufWriter::new(File::create(&tmp)?);
        body(&mut w)?;
        w.into_inner().map_err(|e| e.into_error())?.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        // Best effort: the original error is the one worth reporting.
        let _ = std::fs::remove_file(&tmp);
    }
    result.map_err(io_err)
}

fn write_vtu_body<W: Write>(w: &mut W, piece: &VtuPiece) -> std::io::Result<()> {
    writeln!(w, "<?xml version=\"1.0\"?>")?;
    writeln!(
        w,
        "<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">"
    )?;
    writeln!(w, "  <UnstructuredGrid>")?;
    writeln!(
        w,
        "    <Piece NumberOfPoints=\"{}\" NumberOfCells=\"{}\">",
        piece.points.len(),
        piece.cells.len()
    )?;
    for (tag, arrays) in [
        ("PointData", &piece.point_data),
        ("CellData", &piece.cell_data),
    ] {
        if arrays.is_empty() {
            continue;
        }
        writeln!(w, "      <{tag}>")?;
        for a in arrays.iter() {
            write_data_array(w, a)?;
        }
        writeln!(w, "      </{tag}>")?;
    }

    writeln!(w, "      <Points>")?;
    write_binary_array(w, "Float64", None, 3, piece.points.len() * 24, |enc| {
        for p in piece.points {
            for c in p {
                enc.push(&c.to_le_bytes())?;
            }
        }
        Ok(())
    })?;
    writeln!(w, "      </Points>")?;

    writeln!(w, "      <Cells>")?;
    let conn = piece.cells.connectivity();
    let arity = piece.cells.arity();
    let n_cells = piece.cells.len();
    // Int32 halves the size of the largest integer arrays; Int64 only when needed.
    let wide = conn.len() > i32::MAX as usize || piece.points.len() > i32::MAX as usize;
    let (int_type, int_size) = if wide { ("Int64", 8) } else { ("Int32", 4) };
    write_binary_array(
        w,
        int_type,
        Some("connectivity"),
        1,
        conn.len() * int_size,
        |enc| {
            for &v in conn {
                if wide {
                    enc.push(&i64::from(v).to_le_bytes())?;
                } else {
                    enc.push(&(v as i32).to_le_bytes())?;
                }
            }
            Ok(())
        },
    )?;
    write_binary_array(w, int_type, Some("offsets"), 1, n_cells * int_size, |enc| {
        for c in 1..=n_cells {
            let off = c * arity;
            if wide {
                enc.push(&(off as i64).to_le_bytes())?;
            } else {
                enc.push(&(off as i32).to_le_bytes())?;
            }
        }
        Ok(())
    })?;
    let cell_type = piece.cells.vtk_type();
    write_binary_array(w, "UInt8", Some("types"), 1, n_cells, |enc| {
        for _ in 0..n_cells {
            enc.push(&[cell_type])?;
        }
        Ok(())
    })?;
    writeln!(w, "      </Cells>")?;
    writeln!(w, "    </Piece>")?;
    writeln!(w, "  </UnstructuredGrid>")?;
    writeln!(w, "</VTKFile>")
}

fn write_data_array<W: Write>(w: &mut W, a: &DataArray) -> std::io::Result<()> {
    match *a {
        DataArray::Scalars { name, values } => {
            write_binary_array(w, "Float64", Some(name), 1, values.len() * 8, |enc| {
                values.iter().try_for_each(|v| enc.push(&v.to_le_bytes()))
            })
        }
        DataArray::Vectors { name, values } => {
            write_binary_array(w, "Float64", Some(name), 3, values.len() * 24, |enc| {
                values
                    .iter()
                    .flatten()
                    .try_for_each(|v| enc.push(&v.to_le_bytes()))
            })
        }
        DataArray::Ints { name, values } => {
            write_binary_array(w, "Int32", Some(name), 1, values.len() * 4, |enc| {
                values.iter().try_for_each(|v| enc.push(&v.to_le_bytes()))
            })
        }
        DataArray::UInts { name, values } => {
            write_binary_array(w, "UInt32", Some(name), 1, values.len() * 4, |enc| {
                values.iter().try_for_each(|v| enc.push(&v.to_le_bytes()))
            })
        }
    }
}

/// One `<DataArray format="binary">`: base64 of (UInt64 byte count, raw bytes).
fn write_binary_array<W: Write>(
    w: &mut W,
    vtk_type: &str,
    name: Option<&str>,
    components: usize,
    n_bytes: usize,
    fill: impl FnOnce(&mut Base64Writer<&mut W>) -> std::io::Result<()>,
) -> std::io::Result<()> {
    write!(w, "        <DataArray type=\"{vtk_type}\"")?;
    if let Some(name) = name {
        write!(w, " Name=\"{}\"", xml_escape(name))?;
    }
    if components != 1 {
        write!(w, " NumberOfComponents=\"{components}\"")?;
    }
    write!(w, " format=\"binary\">\n          ")?;
    let mut enc = Base64Writer::new(&mut *w);
    enc.push(&(n_bytes as u64).to_le_bytes())?;
    fill(&mut enc)?;
    enc.finish()?;
    writeln!(w, "\n        </DataArray>")
}

/// Streaming base64 (RFC 4648 standard alphabet, `=` padding; the `base64` crate's
/// encoder), so large arrays are encoded without a second in-memory copy.
struct Base64Writer<W: Write> {
    enc: EncoderWriter<'static, GeneralPurpose, W>,
}

impl<W: Write> Base64Writer<W> {
    fn new(out: W) -> Self {
        Base64Writer {
            enc: EncoderWriter::new(out, &STANDARD),
        }
    }

    fn push(&mut self, bytes: &[u8]) -> std::io::Result<()> {
        self.enc.write_all(bytes)
    }

    /// Writes the last group with its padding.
    fn finish(mut self) -> std::io::Result<()> {
        self.enc.finish().map(|_| ())
    }
}

fn xml_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            _ => out.push(ch),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn encode(bytes: &[u8]) -> String {
        let mut out = Vec::new();
        let mut enc = Base64Writer::new(&mut out);
        enc.push(bytes).unwrap();
        enc.finish().unwrap();
        String::from_utf8(out).unwrap()
    }

    #[test]
    fn base64_matches_rfc4648_vectors() {
        // Test vectors from RFC 4648 §10.
        for (plain, coded) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(encode(plain.as_bytes()), coded);
        }
    }
}
