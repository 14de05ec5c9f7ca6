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
//! Nodes not used by any tetrahedron are dropped; coordinates are scaled by
//! `unit_mm * 1e-3` into metres.
//!
//! Export ([`write_msh`]) writes coordinates in metres (import it with `unit_mm = 1000`),
//! one volume group per region named after it, and surface groups "wall" and one per
//! port.

use crate::geometry::MeshImport;
use crate::tet_mesh::{cross, dot, sub, BoundaryTag, RegionInfo, TetMesh};
use std::collections::{BTreeMap, BTreeSet, HashMap};
use std::fs::File;
use std::io::{BufWriter, Write};
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
    let text = std::fs::read_to_string(path).map_err(|source| ImportError::Io {
        path: path.to_path_buf(),
        source,
    })?;
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

// ---------------------------------------------------------------------------------------
// Tokens

#[derive(Clone, Copy, Debug)]
struct Token<'a> {
    text: &'a str,
    line: usize,
    quoted: bool,
}

/// Whitespace-separated tokens with their line numbers; a double-quoted string (as in
/// `$PhysicalNames`) is one token.
struct Lexer<'a> {
    lines: std::iter::Enumerate<std::str::Lines<'a>>,
    rest: &'a str,
    line: usize,
}

impl<'a> Lexer<'a> {
    fn new(text: &'a str) -> Self {
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        Lexer {
            lines: text.lines().enumerate(),
            rest: "",
            line: 0,
        }
    }

    fn next_token(&mut self) -> Option<Token<'a>> {
        loop {
            let trimmed = self.rest.trim_start();
            if trimmed.is_empty() {
                let (i, l) = self.lines.next()?;
                self.line = i + 1;
                self.rest = l;
                continue;
            }
            if let Some(after) = trimmed.strip_prefix('"') {
                // An unclosed quote runs to the end of the line.
                let end = after.find('"').unwrap_or(after.len());
                self.rest = after.get(end + 1..).unwrap_or("");
                return Some(Token {
                    text: &after[..end],
                    line: self.line,
                    quoted: true,
                });
            }
            let end = trimmed.find(char::is_whitespace).unwrap_or(trimmed.len());
            self.rest = &trimmed[end..];
            return Some(Token {
                text: &trimmed[..end],
                line: self.line,
                quoted: false,
            });
        }
    }

    fn skip_rest_of_line(&mut self) {
        self.rest = "";
    }
}

// ---------------------------------------------------------------------------------------
// Raw file contents

#[derive(Default)]
struct RawMsh {
    /// (dim, physical tag) → (name, line of its `$PhysicalNames` entry).
    physical_names: HashMap<(u8, i64), (String, usize)>,
    /// (dim, entity tag) → physical tags, from `$Entities`.
    entity_physicals: HashMap<(u8, i64), Vec<i64>>,
    has_entities: bool,
    nodes: Vec<[f64; 3]>,
    node_tags: Vec<u64>,
    node_index: HashMap<u64, u32>,
    /// Element blocks as (dim, entity tag, line of the block header).
    blocks: Vec<(u8, i64, usize)>,
    tets: Vec<[u32; 4]>,
    tet_info: Vec<ElemInfo>,
    tris: Vec<[u32; 3]>,
    tri_info: Vec<ElemInfo>,
}

#[derive(Clone, Copy)]
struct ElemInfo {
    block: u32,
    line: u32,
    tag: u64,
}

/// (number of nodes, dimension, description) of the Gmsh element types in the
/// format's documentation.
fn element_type_info(ty: i64) -> Option<(usize, u8, &'static str)> {
    Some(match ty {
        1 => (2, 1, "2-node line"),
        2 => (3, 2, "3-node triangle"),
        3 => (4, 2, "4-node quadrangle"),
        4 => (4, 3, "4-node tetrahedron"),
        5 => (8, 3, "8-node hexahedron"),
        6 => (6, 3, "6-node prism"),
        7 => (5, 3, "5-node pyramid"),
        8 => (3, 1, "3-node line"),
        9 => (6, 2, "6-node second-order triangle"),
        10 => (9, 2, "9-node second-order quadrangle"),
        11 => (10, 3, "10-node second-order tetrahedron"),
        12 => (27, 3, "27-node second-order hexahedron"),
        13 => (18, 3, "18-node second-order prism"),
        14 => (14, 3, "14-node second-order pyramid"),
        15 => (1, 0, "1-node point"),
        16 => (8, 2, "8-node second-order quadrangle"),
        17 => (20, 3, "20-node second-order hexahedron"),
        18 => (15, 3, "15-node second-order prism"),
        19 => (13, 3, "13-node second-order pyramid"),
        20 => (9, 2, "9-node third-order triangle"),
        21 => (10, 2, "10-node third-order triangle"),
        22 => (12, 2, "12-node fourth-order triangle"),
        23 => (15, 2, "15-node fourth-order triangle"),
        24 => (15, 2, "15-node fifth-order triangle"),
        25 => (21, 2, "21-node fifth-order triangle"),
        26 => (4, 1, "4-node third-order line"),
        27 => (5, 1, "5-node fourth-order line"),
        28 => (6, 1, "6-node fifth-order line"),
        29 => (20, 3, "20-node third-order tetrahedron"),
        30 => (35, 3, "35-node fourth-order tetrahedron"),
        31 => (56, 3, "56-node fifth-order tetrahedron"),
        _ => return None,
    })
}

// ---------------------------------------------------------------------------------------
// Parser

struct Parser<'a> {
    lex: Lexer<'a>,
    path: &'a Path,
    raw: RawMsh,
}

impl<'a> Parser<'a> {
    fn new(text: &'a str, path: &'a Path) -> Self {
        Parser {
            lex: Lexer::new(text),
            path,
            raw: RawMsh::default(),
        }
    }

    fn err(&self, line: usize, message: impl Into<String>) -> ImportError {
        ImportError::Syntax {
            path: self.path.to_path_buf(),
            line: line.max(1),
            message: message.into(),
        }
    }

    fn token(&mut self, what: &str) -> Result<Token<'a>, ImportError> {
        match self.lex.next_token() {
            Some(t) => Ok(t),
            None => Err(self.err(
                self.lex.line,
                format!("the file ends while {what} is expected"),
            )),
        }
    }

    fn parse_num<T: std::str::FromStr>(
        &mut self,
        what: &str,
        kind: &str,
    ) -> Result<(T, usize), ImportError> {
        let t = self.token(what)?;
        match t.text.parse::<T>() {
            Ok(v) if !t.quoted => Ok((v, t.line)),
            _ => Err(self.err(
                t.line,
                format!("expected {what} ({kind}), found '{}'", t.text),
            )),
        }
    }

    fn count(&mut self, what: &str) -> Result<usize, ImportError> {
        Ok(self.parse_num::<usize>(what, "a whole number ≥ 0")?.0)
    }

    fn int(&mut self, what: &str) -> Result<i64, ImportError> {
        Ok(self.parse_num::<i64>(what, "a whole number")?.0)
    }

    fn tag(&mut self, what: &str) -> Result<(u64, usize), ImportError> {
        self.parse_num::<u64>(what, "a whole number ≥ 0")
    }

    fn dim(&mut self, what: &str) -> Result<u8, ImportError> {
        let (d, line) = self.parse_num::<u8>(what, "0, 1, 2 or 3")?;
        if d > 3 {
            return Err(self.err(line, format!("{what} must be 0, 1, 2 or 3, found {d}")));
        }
        Ok(d)
    }

    fn real(&mut self, what: &str) -> Result<f64, ImportError> {
        let (v, line) = self.parse_num::<f64>(what, "a number")?;
        if !v.is_finite() {
            return Err(self.err(line, format!("{what} must be a finite number, found {v}")));
        }
        Ok(v)
    }

    fn expect_end(&mut self, section: &str) -> Result<(), ImportError> {
        let end = format!("$End{section}");
        let t = self.token(&end)?;
        if t.text != end || t.quoted {
            return Err(self.err(
                t.line,
                format!(
                    "expected {end}, found '{}' (the ${section} section holds more or fewer \
                     entries than its header says)",
                    t.text
                ),
            ));
        }
        Ok(())
    }

    fn parse_file(mut self) -> Result<RawMsh, ImportError> {
        let first = match self.lex.next_token() {
            Some(t) => t,
            None => return Err(self.err(1, "the file is empty (expected $MeshFormat)")),
        };
        if first.text != "$MeshFormat" {
            return Err(self.err(
                first.line,
                format!(
                    "not a Gmsh MSH file: expected $MeshFormat at the start, found '{}'",
                    first.text
                ),
            ));
        }
        self.mesh_format()?;

        let mut seen: BTreeMap<String, usize> = BTreeMap::new();
        while let Some(t) = self.lex.next_token() {
            let name = match t.text.strip_prefix('$') {
                Some(n) if !t.quoted && !n.is_empty() => n,
                _ => {
                    return Err(self.err(
                        t.line,
                        format!(
                            "expected a section header such as $Nodes, found '{}'",
                            t.text
                        ),
                    ))
                }
            };
            if let Some(first_line) = seen.insert(name.to_string(), t.line) {
                if matches!(name, "PhysicalNames" | "Entities" | "Nodes" | "Elements") {
                    return Err(self.err(
                        t.line,
                        format!("a second ${name} section (the first starts at line {first_line})"),
                    ));
                }
            }
            match name {
                "PhysicalNames" => self.physical_names()?,
                "Entities" => self.entities()?,
                "Nodes" => self.nodes()?,
                "Elements" => {
                    if !seen.contains_key("Nodes") {
                        return Err(self.err(t.line, "$Elements comes before $Nodes"));
                    }
                    self.elements()?
                }
                "MeshFormat" => {
                    return Err(self.err(t.line, "a second $MeshFormat section"));
                }
                _ if name.starts_with("End") => {
                    return Err(self.err(
                        t.line,
                        format!("${name} closes a section that was never opened"),
                    ))
                }
                _ => self.skip_section(name, t.line)?,
            }
        }
        for needed in ["Nodes", "Elements"] {
            if !seen.contains_key(needed) {
                return Err(ImportError::Mesh {
                    path: self.path.to_path_buf(),
                    message: format!("the file has no ${needed} section"),
                });
            }
        }
        Ok(self.raw)
    }

    fn mesh_format(&mut self) -> Result<(), ImportError> {
        let v = self.token("the format version")?;
        if v.text != "4.1" {
            return Err(self.err(
                v.line,
                format!(
                    "MSH version '{}' is not supported; only version 4.1 is (in Gmsh: \
                     Mesh.MshFileVersion = 4.1)",
                    v.text
                ),
            ));
        }
        let ft = self.token("the file type")?;
        match ft.text {
            "0" => {}
            "1" => {
                return Err(self.err(
                    ft.line,
                    "binary MSH files are not supported; save the mesh as ASCII \
                     (in Gmsh: Mesh.Binary = 0)",
                ))
            }
            other => {
                return Err(self.err(
                    ft.line,
                    format!("expected the file type 0 (ASCII), found '{other}'"),
                ))
            }
        }
        self.count("the data size")?;
        self.expect_end("MeshFormat")
    }

    fn skip_section(&mut self, name: &str, start: usize) -> Result<(), ImportError> {
        let end = format!("$End{name}");
        while let Some(t) = self.lex.next_token() {
            if t.text == end && !t.quoted {
                return Ok(());
            }
        }
        Err(self.err(start, format!("section ${name} is never closed by {end}")))
    }

    fn physical_names(&mut self) -> Result<(), ImportError> {
        let n = self.count("the number of physical names")?;
        for _ in 0..n {
            let dim = self.dim("the physical group dimension")?;
            let tag = self.int("the physical tag")?;
            let name = self.token("the physical group name")?;
            if !name.quoted {
                return Err(self.err(
                    name.line,
                    format!(
                        "expected the physical group name in double quotes, found '{}'",
                        name.text
                    ),
                ));
            }
            self.raw
                .physical_names
                .insert((dim, tag), (name.text.to_string(), name.line));
        }
        self.expect_end("PhysicalNames")
    }

    fn entities(&mut self) -> Result<(), ImportError> {
        self.raw.has_entities = true;
        let mut counts = [0usize; 4];
        for (d, c) in counts.iter_mut().enumerate() {
            *c = self.count(&format!("the number of {}-D entities", d))?;
        }
        for (dim, &n) in counts.iter().enumerate() {
            for _ in 0..n {
                let tag = self.int("an entity tag")?;
                // Points give one position, the others a bounding box.
                let n_coords = if dim == 0 { 3 } else { 6 };
                for _ in 0..n_coords {
                    self.real("an entity coordinate")?;
                }
                let n_phys = self.count("the number of physical tags")?;
                let mut phys = Vec::with_capacity(n_phys.min(64));
                for _ in 0..n_phys {
                    phys.push(self.int("a physical tag")?);
                }
                if dim > 0 {
                    let n_bound = self.count("the number of bounding entities")?;
                    for _ in 0..n_bound {
                        self.int("a bounding entity tag")?;
                    }
                }
                self.raw.entity_physicals.insert((dim as u8, tag), phys);
            }
        }
        self.expect_end("Entities")
    }

    fn nodes(&mut self) -> Result<(), ImportError> {
        let n_blocks = self.count("the number of node blocks")?;
        let (n_nodes, header_line) =
            self.parse_num::<usize>("the number of nodes", "a whole number ≥ 0")?;
        self.tag("the smallest node tag")?;
        self.tag("the largest node tag")?;
        // Counts come from the file: cap the reservation so a bad header cannot
        // allocate unbounded memory.
        let reserve = n_nodes.min(1 << 22);
        self.raw.nodes.reserve(reserve);
        self.raw.node_tags.reserve(reserve);
        for _ in 0..n_blocks {
            let dim = self.dim("the entity dimension of a node block")?;
            self.int("the entity tag of a node block")?;
            let (parametric, pline) =
                self.parse_num::<u8>("the parametric flag (0 or 1)", "0 or 1")?;
            if parametric > 1 {
                return Err(self.err(
                    pline,
                    format!("the parametric flag must be 0 or 1, found {parametric}"),
                ));
            }
            let n = self.count("the number of nodes in the block")?;
            let first = self.raw.node_tags.len();
            for _ in 0..n {
                let (tag, line) = self.tag("a node tag")?;
                let index = u32::try_from(self.raw.node_tags.len())
                    .map_err(|_| self.err(line, "more than 4294967295 nodes"))?;
                if self.raw.node_index.insert(tag, index).is_some() {
                    return Err(self.err(line, format!("node tag {tag} is defined twice")));
                }
                self.raw.node_tags.push(tag);
            }
            let extra = if parametric == 1 { dim as usize } else { 0 };
            for _ in first..first + n {
                let x = self.real("a node x coordinate")?;
                let y = self.real("a node y coordinate")?;
                let z = self.real("a node z coordinate")?;
                for _ in 0..extra {
                    self.real("a node parametric coordinate")?;
                }
                self.raw.nodes.push([x, y, z]);
            }
        }
        if self.raw.nodes.len() != n_nodes {
            return Err(self.err(
                header_line,
                format!(
                    "the $Nodes header declares {n_nodes} nodes but its blocks hold {}",
                    self.raw.nodes.len()
                ),
            ));
        }
        self.expect_end("Nodes")
    }

    fn node(&self, tag: u64, line: usize, elem: u64) -> Result<u32, ImportError> {
        self.raw.node_index.get(&tag).copied().ok_or_else(|| {
            self.err(
                line,
                format!("element {elem} uses node {tag}, which $Nodes does not define"),
            )
        })
    }

    fn elements(&mut self) -> Result<(), ImportError> {
        let n_blocks = self.count("the number of element blocks")?;
        let (n_elems, header_line) =
            self.parse_num::<usize>("the number of elements", "a whole number ≥ 0")?;
        self.tag("the smallest element tag")?;
        self.tag("the largest element tag")?;
        let mut total = 0usize;
        for _ in 0..n_blocks {
            let (dim, bline) =
                self.parse_num::<u8>("the entity dimension of an element block", "0, 1, 2 or 3")?;
            let entity = self.int("the entity tag of an element block")?;
            let (ty, tline) = self.parse_num::<i64>("the element type", "a whole number")?;
            let n = self.count("the number of elements in the block")?;
            total = total.saturating_add(n);
            let block = u32::try_from(self.raw.blocks.len())
                .map_err(|_| self.err(bline, "too many element blocks"))?;
            self.raw.blocks.push((dim, entity, bline));
            let info = element_type_info(ty);
            match info {
                Some((4, 3, _)) if ty == 4 => {
                    for _ in 0..n {
                        let (tag, line) = self.tag("an element tag")?;
                        let mut v = [0u32; 4];
                        for slot in &mut v {
                            let (nt, nline) = self.tag("a node tag")?;
                            *slot = self.node(nt, nline, tag)?;
                        }
                        self.raw.tets.push(v);
                        self.raw.tet_info.push(elem_info(block, line, tag));
                    }
                }
                Some((3, 2, _)) if ty == 2 => {
                    for _ in 0..n {
                        let (tag, line) = self.tag("an element tag")?;
                        let mut v = [0u32; 3];
                        for slot in &mut v {
                            let (nt, nline) = self.tag("a node tag")?;
                            *slot = self.node(nt, nline, tag)?;
                        }
                        self.raw.tris.push(v);
                        self.raw.tri_info.push(elem_info(block, line, tag));
                    }
                }
                Some((nodes, edim, _)) if edim <= 1 => {
                    for _ in 0..n {
                        self.tag("an element tag")?;
                        for _ in 0..nodes {
                            self.tag("a node tag")?;
                        }
                    }
                }
                Some((_, 3, name)) if matches!(ty, 11 | 29 | 30 | 31) => {
                    return Err(self.err(
                        tline,
                        format!(
                            "element type {ty} ({name}) is not supported: only linear \
                             4-node tetrahedra (type 4) are; mesh with element order 1 \
                             (the solver adds its own higher-order unknowns)"
                        ),
                    ))
                }
                Some((_, 3, name)) => {
                    return Err(self.err(
                        tline,
                        format!(
                            "element type {ty} ({name}) is not supported: volumes must be \
                             meshed with 4-node tetrahedra (type 4)"
                        ),
                    ))
                }
                Some((_, _, name)) => {
                    return Err(self.err(
                        tline,
                        format!(
                            "element type {ty} ({name}) is not supported: surfaces must be \
                             meshed with 3-node triangles (type 2)"
                        ),
                    ))
                }
                None if dim <= 1 => {
                    // Unknown point or line types: one element per line in files Gmsh
                    // writes, and none of them matter here.
                    for _ in 0..n {
                        self.tag("an element tag")?;
                        self.lex.skip_rest_of_line();
                    }
                }
                None => {
                    return Err(self.err(
                        tline,
                        format!(
                            "unknown element type {ty}: only 4-node tetrahedra (type 4) and \
                             3-node triangles (type 2) are read"
                        ),
                    ))
                }
            }
        }
        if total != n_elems {
            return Err(self.err(
                header_line,
                format!(
                    "the $Elements header declares {n_elems} elements but its blocks hold {total}"
                ),
            ));
        }
        self.expect_end("Elements")
    }
}

fn elem_info(block: u32, line: usize, tag: u64) -> ElemInfo {
    ElemInfo {
        block,
        line: u32::try_from(line).unwrap_or(u32::MAX),
        tag,
    }
}

// ---------------------------------------------------------------------------------------
// From raw contents to a TetMesh

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
enum Target {
    Region(u32),
    Wall,
    Port(usize),
}

struct Builder<'a> {
    path: &'a Path,
    raw: &'a RawMsh,
    import: &'a MeshImport,
    load_names: &'a [String],
    port_names: &'a [String],
}

impl Builder<'_> {
    fn mesh_err(&self, message: String) -> ImportError {
        ImportError::Mesh {
            path: self.path.to_path_buf(),
            message,
        }
    }

    fn line_err(&self, line: usize, message: String) -> ImportError {
        ImportError::Syntax {
            path: self.path.to_path_buf(),
            line: line.max(1),
            message,
        }
    }

    fn group_name(&self, dim: u8, tag: i64) -> String {
        match self.raw.physical_names.get(&(dim, tag)) {
            Some((name, _)) => name.clone(),
            None => tag.to_string(),
        }
    }

    fn choices(&self) -> String {
        let quote = |v: &[String]| {
            if v.is_empty() {
                "none".to_string()
            } else {
                v.iter()
                    .map(|s| format!("\"{s}\""))
                    .collect::<Vec<_>>()
                    .join(", ")
            }
        };
        format!(
            "\"air\", \"wall\", a load ({}) or a port ({})",
            quote(self.load_names),
            quote(self.port_names)
        )
    }

    fn resolve_target(&self, target: &str) -> Option<Target> {
        if target == "air" {
            return Some(Target::Region(0));
        }
        if target == "wall" {
            return Some(Target::Wall);
        }
        if let Some(i) = self.load_names.iter().position(|n| n == target) {
            return u32::try_from(i + 1).ok().map(Target::Region);
        }
        self.port_names
            .iter()
            .position(|n| n == target)
            .map(Target::Port)
    }

    /// Every physical group (dim 2 or 3) present in the file, from names and entities.
    fn groups_in_file(&self) -> BTreeSet<(u8, i64)> {
        let mut set: BTreeSet<(u8, i64)> = self
            .raw
            .physical_names
            .keys()
            .copied()
            .filter(|&(d, _)| d >= 2)
            .collect();
        for (&(d, _), phys) in &self.raw.entity_physicals {
            if d >= 2 {
                set.extend(phys.iter().map(|&p| (d, p)));
            }
        }
        set
    }

    /// Target of each physical group of dimension 2 or 3 (`None`: not mapped).
    fn group_targets(&self) -> Result<HashMap<(u8, i64), Option<Target>>, ImportError> {
        let in_file = self.groups_in_file();
        let names: BTreeSet<(u8, String)> = in_file
            .iter()
            .map(|&(d, t)| (d, self.group_name(d, t)))
            .collect();
        let mut explicit: HashMap<&str, Target> = HashMap::new();
        for (group, target) in &self.import.groups {
            let t = self.resolve_target(target).ok_or_else(|| {
                self.mesh_err(format!(
                    "[mesh.groups] maps group \"{group}\" to \"{target}\", which is none of {}",
                    self.choices()
                ))
            })?;
            if !names.iter().any(|(_, n)| n == group) {
                let available: Vec<String> = names
                    .iter()
                    .map(|(d, n)| {
                        format!("\"{n}\" ({})", if *d == 3 { "volume" } else { "surface" })
                    })
                    .collect();
                return Err(self.mesh_err(format!(
                    "[mesh.groups] names group \"{group}\", but the file has no volume or \
                     surface physical group of that name (it has: {})",
                    if available.is_empty() {
                        "none".to_string()
                    } else {
                        available.join(", ")
                    }
                )));
            }
            explicit.insert(group.as_str(), t);
        }
        let fits = |dim: u8, t: Target| match t {
            Target::Region(_) => dim == 3,
            Target::Wall | Target::Port(_) => dim == 2,
        };
        let mut out = HashMap::new();
        for &(dim, tag) in &in_file {
            let name = self.group_name(dim, tag);
            let target = match explicit.get(name.as_str()) {
                Some(&t) if fits(dim, t) => Some(t),
                Some(&t) => {
                    let other = if dim == 3 { 2 } else { 3 };
                    // The same name may label a surface and a volume; the mapping then
                    // applies to whichever it fits.
                    if names.contains(&(other, name.clone())) {
                        None
                    } else {
                        let (kind, allowed) = if dim == 3 {
                            ("a volume", "\"air\" or a load")
                        } else {
                            ("a surface", "\"wall\" or a port")
                        };
                        let shown = match t {
                            Target::Region(0) => "air".to_string(),
                            Target::Region(r) => {
                                format!("load \"{}\"", self.load_names[r as usize - 1])
                            }
                            Target::Wall => "wall".to_string(),
                            Target::Port(p) => format!("port \"{}\"", self.port_names[p]),
                        };
                        return Err(self.mesh_err(format!(
                            "[mesh.groups] maps \"{name}\", {kind} group, to {shown}; \
                             {kind} group can only map to {allowed}"
                        )));
                    }
                }
                None => self.resolve_target(&name).filter(|&t| fits(dim, t)),
            };
            out.insert((dim, tag), target);
        }
        Ok(out)
    }

    fn build(&self) -> Result<TetMesh, ImportError> {
        let raw = self.raw;
        if !(self.import.unit_mm.is_finite() && self.import.unit_mm > 0.0) {
            return Err(self.mesh_err(format!(
                "the length unit must be a positive number of mm, got {}",
                self.import.unit_mm
            )));
        }
        if raw.tets.is_empty() {
            return Err(self.mesh_err(
                "the file holds no 4-node tetrahedra (element type 4): export the volume \
                 mesh, not only the surface"
                    .into(),
            ));
        }
        let targets = self.group_targets()?;
        let any_volume_group = targets.keys().any(|&(d, _)| d == 3);

        // Region of each volume block, boundary target of each surface block.
        let mut block_region: Vec<Option<u32>> = vec![None; raw.blocks.len()];
        let mut block_surface: Vec<Option<Target>> = vec![None; raw.blocks.len()];
        let mut block_has_tets = vec![false; raw.blocks.len()];
        for info in &raw.tet_info {
            block_has_tets[info.block as usize] = true;
        }
        for (b, &(dim, entity, line)) in raw.blocks.iter().enumerate() {
            let phys = raw
                .entity_physicals
                .get(&(dim, entity))
                .map(Vec::as_slice)
                .unwrap_or(&[]);
            if block_has_tets[b] {
                if phys.is_empty() {
                    if any_volume_group {
                        return Err(self.line_err(
                            line,
                            format!(
                                "the tetrahedra of volume entity {entity} belong to no \
                                 physical group; put every volume in a physical group \
                                 mapped to \"air\" or a load"
                            ),
                        ));
                    }
                    block_region[b] = Some(0);
                    continue;
                }
                let mut region = None;
                for &p in phys {
                    let name = self.group_name(3, p);
                    match targets.get(&(3, p)).copied().flatten() {
                        Some(Target::Region(r)) => {
                            if let Some(prev) = region.filter(|&prev| prev != r) {
                                return Err(self.line_err(
                                    line,
                                    format!(
                                        "volume entity {entity} is in groups mapped to two \
                                         regions ({} and {}); each volume must map to one",
                                        self.region_name(prev),
                                        self.region_name(r)
                                    ),
                                ));
                            }
                            region = Some(r);
                        }
                        _ => {
                            let at = raw.physical_names.get(&(3, p)).map_or(line, |&(_, l)| l);
                            return Err(self.line_err(
                                at,
                                format!(
                                    "volume group \"{name}\" (physical tag {p}) is not mapped \
                                     to a region: name it \"air\" or a load, or map it in \
                                     [mesh.groups] to \"air\" or a load ({})",
                                    if self.load_names.is_empty() {
                                        "the geometry has none".to_string()
                                    } else {
                                        self.load_names.join(", ")
                                    }
                                ),
                            ));
                        }
                    }
                }
                block_region[b] = region;
            } else if dim == 2 {
                let mut surface: Option<Target> = None;
                for &p in phys {
                    if let Some(t) = targets.get(&(2, p)).copied().flatten() {
                        if let Some(prev) = surface.filter(|&prev| prev != t) {
                            return Err(self.line_err(
                                line,
                                format!(
                                    "surface entity {entity} is in groups mapped to both {} \
                                     and {}",
                                    self.target_name(prev),
                                    self.target_name(t)
                                ),
                            ));
                        }
                        surface = Some(t);
                    }
                }
                block_surface[b] = surface;
            }
        }

        // Keep only nodes used by tetrahedra, in file order, scaled to metres.
        let scale = self.import.unit_mm * 1e-3;
        let mut new_index = vec![u32::MAX; raw.nodes.len()];
        for t in &raw.tets {
            for &old in t {
                new_index[old as usize] = 0;
            }
        }
        let mut nodes = Vec::new();
        let mut old_of_new = Vec::new();
        for (old, slot) in new_index.iter_mut().enumerate() {
            if *slot == 0 {
                // At most as many new nodes as old ones, and old indices fit in u32.
                *slot = nodes.len() as u32;
                nodes.push(raw.nodes[old].map(|c| c * scale));
                old_of_new.push(old as u32);
            }
        }
        let tets: Vec<[u32; 4]> = raw
            .tets
            .iter()
            .map(|t| t.map(|old| new_index[old as usize]))
            .collect();
        let tet_region: Vec<u32> = raw
            .tet_info
            .iter()
            .map(|i| block_region[i.block as usize].unwrap_or(0))
            .collect();

        let mut mesh = TetMesh {
            nodes,
            tets,
            tet_region,
            boundary: Vec::new(),
            boundary_tag: Vec::new(),
            regions: std::iter::once("air")
                .chain(self.load_names.iter().map(String::as_str))
                .map(|n| RegionInfo {
                    name: n.to_string(),
                })
                .collect(),
        };

        // Degenerate tetrahedra make the element matrices singular.
        for (t, info) in raw.tet_info.iter().enumerate() {
            let p = mesh.tets[t].map(|i| mesh.nodes[i as usize]);
            let mut longest: f64 = 0.0;
            for a in 0..4 {
                for b in a + 1..4 {
                    let e = sub(p[b], p[a]);
                    longest = longest.max(dot(e, e).sqrt());
                }
            }
            let six_v = mesh.signed_volume(t).abs() * 6.0;
            if six_v <= 1e-12 * longest.powi(3) {
                return Err(self.line_err(
                    info.line as usize,
                    format!(
                        "tetrahedron {} has zero volume (its four nodes are coplanar or repeated)",
                        info.tag
                    ),
                ));
            }
        }

        // All faces, sorted so shared faces are adjacent.
        let mut faces: Vec<([u32; 3], u32, u8)> = Vec::with_capacity(mesh.tets.len() * 4);
        for (t, tet) in mesh.tets.iter().enumerate() {
            for k in 0..4u8 {
                let mut key = face_of(tet, k as usize);
                key.sort_unstable();
                faces.push((key, t as u32, k));
            }
        }
        faces.sort_unstable();
        // (face key, first index into `faces`, uses)
        let mut unique: Vec<([u32; 3], usize, usize)> = Vec::new();
        let mut i = 0;
        while i < faces.len() {
            let mut j = i + 1;
            while j < faces.len() && faces[j].0 == faces[i].0 {
                j += 1;
            }
            if j - i > 2 {
                let lines: Vec<String> = faces[i..j]
                    .iter()
                    .map(|f| raw.tet_info[f.1 as usize].line.to_string())
                    .collect();
                let tags = faces[i]
                    .0
                    .map(|n| raw.node_tags[old_of_new[n as usize] as usize]);
                return Err(self.mesh_err(format!(
                    "the face with nodes {} {} {} is shared by {} tetrahedra (lines {}); \
                     a valid volume mesh shares each face between at most two",
                    tags[0],
                    tags[1],
                    tags[2],
                    j - i,
                    lines.join(", ")
                )));
            }
            unique.push((faces[i].0, i, j - i));
            i = j;
        }

        let mut boundary_pos: HashMap<[u32; 3], usize> = HashMap::new();
        for &(key, first, uses) in &unique {
            if uses == 1 {
                let (_, t, k) = faces[first];
                let tet = mesh.tets[t as usize];
                let mut tri = face_of(&tet, k as usize);
                // Outward normal: away from the vertex opposite the face.
                let [a, b, c] = tri.map(|n| mesh.nodes[n as usize]);
                let opp = mesh.nodes[tet[k as usize] as usize];
                if dot(cross(sub(b, a), sub(c, a)), sub(opp, a)) > 0.0 {
                    tri.swap(1, 2);
                }
                boundary_pos.insert(key, mesh.boundary.len());
                mesh.boundary.push(tri);
                mesh.boundary_tag.push(BoundaryTag::Wall);
            }
        }

        // Check the file's triangles against the faces of the tetrahedra.
        let mut port_set_by: HashMap<usize, (usize, u64)> = HashMap::new();
        let mut port_faces = vec![0usize; self.port_names.len()];
        for (tri, info) in raw.tris.iter().zip(&raw.tri_info) {
            let line = info.line as usize;
            let mut key = [0u32; 3];
            let mut on_tets = true;
            for (slot, &old) in key.iter_mut().zip(tri) {
                match new_index[old as usize] {
                    u32::MAX => on_tets = false,
                    n => *slot = n,
                }
            }
            key.sort_unstable();
            let found = on_tets && unique.binary_search_by(|probe| probe.0.cmp(&key)).is_ok();
            if !found {
                return Err(self.line_err(
                    line,
                    format!(
                        "triangle {} is not a face of any tetrahedron: the surface mesh \
                         does not match the volume mesh",
                        info.tag
                    ),
                ));
            }
            let target = block_surface[info.block as usize];
            match (boundary_pos.get(&key), target) {
                (None, Some(t)) => {
                    return Err(self.line_err(
                        line,
                        format!(
                            "triangle {} of the {} group lies inside the mesh (between two \
                             tetrahedra); walls and ports must lie on the outer boundary",
                            info.tag,
                            self.target_name(t)
                        ),
                    ))
                }
                (Some(&pos), Some(Target::Port(p))) => {
                    if let Some(&(prev_line, prev_tag)) = port_set_by.get(&pos) {
                        if mesh.boundary_tag[pos] != BoundaryTag::Port(p) {
                            return Err(self.line_err(
                                line,
                                format!(
                                    "triangle {} puts a face in port \"{}\", but triangle \
                                     {prev_tag} (line {prev_line}) already put it in {}",
                                    info.tag,
                                    self.port_names[p],
                                    self.target_name(match mesh.boundary_tag[pos] {
                                        BoundaryTag::Port(q) => Target::Port(q),
                                        BoundaryTag::Wall => Target::Wall,
                                    })
                                ),
                            ));
                        }
                    } else {
                        port_set_by.insert(pos, (line, info.tag));
                        mesh.boundary_tag[pos] = BoundaryTag::Port(p);
                        port_faces[p] += 1;
                    }
                }
                _ => {}
            }
        }

        let region_tets = {
            let mut c = vec![0usize; mesh.regions.len()];
            for &r in &mesh.tet_region {
                c[r as usize] += 1;
            }
            c
        };
        for (i, name) in self.load_names.iter().enumerate() {
            if region_tets[i + 1] == 0 {
                return Err(self.mesh_err(format!(
                    "load \"{name}\" has no tetrahedra: give its volume a physical group \
                     named \"{name}\" or map one to it in [mesh.groups]"
                )));
            }
        }
        for (i, name) in self.port_names.iter().enumerate() {
            if port_faces[i] == 0 {
                return Err(self.mesh_err(format!(
                    "port \"{name}\" has no boundary triangles: give its aperture a \
                     physical surface group named \"{name}\" or map one to it in [mesh.groups]"
                )));
            }
        }
        Ok(mesh)
    }

    fn region_name(&self, r: u32) -> String {
        match r {
            0 => "\"air\"".to_string(),
            r => format!("load \"{}\"", self.load_names[r as usize - 1]),
        }
    }

    fn target_name(&self, t: Target) -> String {
        match t {
            Target::Region(r) => self.region_name(r),
            Target::Wall => "\"wall\"".to_string(),
            Target::Port(p) => format!("port \"{}\"", self.port_names[p]),
        }
    }
}

/// Face `k` of a tetrahedron: the three vertices other than vertex `k`.
fn face_of(tet: &[u32; 4], k: usize) -> [u32; 3] {
    match k {
        0 => [tet[1], tet[2], tet[3]],
        1 => [tet[0], tet[2], tet[3]],
        2 => [tet[0], tet[1], tet[3]],
        _ => [tet[0], tet[1], tet[2]],
    }
}

// ---------------------------------------------------------------------------------------
// Export

/// Writes `mesh` as an MSH 4.1 ASCII file, coordinates in metres.
///
/// Volume physical group `r + 1` is region `r`, named after it ("air" or the load).
/// Surface physical group 1 is "wall"; group `i + 2` is port `i`, named
/// `port_names[i]` when given, else `port<i>`. Only groups that have elements are
/// written. Importing the result with `unit_mm = 1000`, the same load and port names
/// and no `[mesh.groups]` gives back the same nodes, tetrahedra, regions and tags.
pub fn write_msh(path: &Path, mesh: &TetMesh, port_names: &[String]) -> Result<(), ExportError> {
    let io_err = |source| ExportError {
        path: path.to_path_buf(),
        source,
    };
    let file = File::create(path).map_err(io_err)?;
    let mut w = BufWriter::new(file);
    write_msh_body(&mut w, mesh, port_names)
        .and_then(|()| w.flush())
        .map_err(io_err)
}

fn msh_name(s: &str) -> String {
    // The format has no escape for a quote inside a name.
    s.replace('"', "'")
}

fn bbox(points: impl Iterator<Item = [f64; 3]>) -> [f64; 6] {
    let mut b = [
        f64::INFINITY,
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for p in points {
        for a in 0..3 {
            b[a] = b[a].min(p[a]);
            b[a + 3] = b[a + 3].max(p[a]);
        }
    }
    if b[0] > b[3] {
        b = [0.0; 6];
    }
    b
}

fn write_msh_body<W: Write>(
    w: &mut W,
    mesh: &TetMesh,
    port_names: &[String],
) -> std::io::Result<()> {
    // Volume groups: regions with tetrahedra, tag r + 1.
    let mut by_region: BTreeMap<u32, Vec<usize>> = BTreeMap::new();
    for (t, &r) in mesh.tet_region.iter().enumerate() {
        by_region.entry(r).or_default().push(t);
    }
    // Surface groups: wall = tag 1, port i = tag i + 2.
    let mut by_surface: BTreeMap<usize, Vec<usize>> = BTreeMap::new();
    for (f, &tag) in mesh.boundary_tag.iter().enumerate() {
        let key = match tag {
            BoundaryTag::Wall => 1,
            BoundaryTag::Port(i) => i + 2,
        };
        by_surface.entry(key).or_default().push(f);
    }
    let region_name = |r: u32| {
        mesh.regions
            .get(r as usize)
            .map_or_else(|| format!("region{r}"), |i| msh_name(&i.name))
    };
    let surface_name = |s: usize| match s {
        1 => "wall".to_string(),
        s => port_names
            .get(s - 2)
            .map_or_else(|| format!("port{}", s - 2), |n| msh_name(n)),
    };

    writeln!(w, "$MeshFormat\n4.1 0 8\n$EndMeshFormat")?;
    writeln!(w, "$PhysicalNames\n{}", by_region.len() + by_surface.len())?;
    for &s in by_surface.keys() {
        writeln!(w, "2 {s} \"{}\"", surface_name(s))?;
    }
    for &r in by_region.keys() {
        writeln!(w, "3 {} \"{}\"", r as u64 + 1, region_name(r))?;
    }
    writeln!(w, "$EndPhysicalNames")?;

    writeln!(w, "$Entities\n0 0 {} {}", by_surface.len(), by_region.len())?;
    let node = |i: u32| mesh.nodes[i as usize];
    for (&s, faces) in &by_surface {
        let b = bbox(faces.iter().flat_map(|&f| mesh.boundary[f].map(node)));
        writeln!(
            w,
            "{s} {} {} {} {} {} {} 1 {s} 0",
            b[0], b[1], b[2], b[3], b[4], b[5]
        )?;
    }
    for (&r, tets) in &by_region {
        let b = bbox(tets.iter().flat_map(|&t| mesh.tets[t].map(node)));
        let tag = r as u64 + 1;
        writeln!(
            w,
            "{tag} {} {} {} {} {} {} 1 {tag} 0",
            b[0], b[1], b[2], b[3], b[4], b[5]
        )?;
    }
    writeln!(w, "$EndEntities")?;

    let n = mesh.nodes.len();
    let home = by_region.keys().next().map_or(1, |&r| r as u64 + 1);
    writeln!(w, "$Nodes\n1 {n} {} {n}\n3 {home} 0 {n}", n.min(1))?;
    for i in 1..=n {
        writeln!(w, "{i}")?;
    }
    for p in &mesh.nodes {
        writeln!(w, "{} {} {}", p[0], p[1], p[2])?;
    }
    writeln!(w, "$EndNodes")?;

    let total = mesh.tets.len() + mesh.boundary.len();
    writeln!(
        w,
        "$Elements\n{} {total} {} {total}",
        by_region.len() + by_surface.len(),
        total.min(1)
    )?;
    let mut tag = 0usize;
    for (&r, tets) in &by_region {
        writeln!(w, "3 {} 4 {}", r as u64 + 1, tets.len())?;
        for &t in tets {
            tag += 1;
            let [a, b, c, d] = mesh.tets[t].map(|v| v as u64 + 1);
            writeln!(w, "{tag} {a} {b} {c} {d}")?;
        }
    }
    for (&s, faces) in &by_surface {
        writeln!(w, "2 {s} 2 {}", faces.len())?;
        for &f in faces {
            tag += 1;
            let [a, b, c] = mesh.boundary[f].map(|v| v as u64 + 1);
            writeln!(w, "{tag} {a} {b} {c}")?;
        }
    }
    writeln!(w, "$EndElements")
}
