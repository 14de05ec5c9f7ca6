//! The MSH 4.1 ASCII sections into raw tables (nodes, elements, groups), with
//! line-precise errors.

use super::lexer::{Lexer, Token};
use super::ImportError;
use crate::geometry::names::escaped;
use std::collections::{BTreeMap, HashMap};
use std::path::Path;

#[derive(Default)]
pub(super) struct RawMsh {
    /// (dim, physical tag) → (name, line of its `$PhysicalNames` entry).
    pub(super) physical_names: HashMap<(u8, i64), (String, usize)>,
    /// (dim, entity tag) → physical tags, from `$Entities`.
    pub(super) entity_physicals: HashMap<(u8, i64), Vec<i64>>,
    pub(super) has_entities: bool,
    pub(super) nodes: Vec<[f64; 3]>,
    pub(super) node_tags: Vec<u64>,
    /// Line of each node's coordinates.
    pub(super) node_lines: Vec<u32>,
    pub(super) node_index: HashMap<u64, u32>,
    /// Element blocks as (dim, entity tag, line of the block header).
    pub(super) blocks: Vec<(u8, i64, usize)>,
    pub(super) tets: Vec<[u32; 4]>,
    pub(super) tet_info: Vec<ElemInfo>,
    pub(super) tris: Vec<[u32; 3]>,
    pub(super) tri_info: Vec<ElemInfo>,
}

#[derive(Clone, Copy)]
pub(super) struct ElemInfo {
    pub(super) block: u32,
    pub(super) line: u32,
    pub(super) tag: u64,
}

/// (number of nodes, dimension, description) of the Gmsh element types in the
/// format's documentation.
pub(super) fn element_type_info(ty: i64) -> Option<(usize, u8, &'static str)> {
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

pub(super) struct Parser<'a> {
    pub(super) lex: Lexer<'a>,
    pub(super) path: &'a Path,
    pub(super) raw: RawMsh,
}

impl<'a> Parser<'a> {
    pub(super) fn new(text: &'a str, path: &'a Path) -> Self {
        Parser {
            lex: Lexer::new(text),
            path,
            raw: RawMsh::default(),
        }
    }

    pub(super) fn err(&self, line: usize, message: impl Into<String>) -> ImportError {
        ImportError::Syntax {
            path: self.path.to_path_buf(),
            line: line.max(1),
            message: escaped(&message.into()),
        }
    }

    pub(super) fn token(&mut self, what: &str) -> Result<Token<'a>, ImportError> {
        match self.lex.next_token() {
            Some(t) => Ok(t),
            None => Err(self.err(
                self.lex.line,
                format!("the file ends while {what} is expected (is it truncated?)"),
            )),
        }
    }

    pub(super) fn parse_num<T: std::str::FromStr>(
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

    pub(super) fn count(&mut self, what: &str) -> Result<usize, ImportError> {
        Ok(self.parse_num::<usize>(what, "a whole number ≥ 0")?.0)
    }

    pub(super) fn int(&mut self, what: &str) -> Result<i64, ImportError> {
        Ok(self.parse_num::<i64>(what, "a whole number")?.0)
    }

    pub(super) fn tag(&mut self, what: &str) -> Result<(u64, usize), ImportError> {
        self.parse_num::<u64>(what, "a whole number ≥ 0")
    }

    pub(super) fn dim(&mut self, what: &str) -> Result<u8, ImportError> {
        let (d, line) = self.parse_num::<u8>(what, "0, 1, 2 or 3")?;
        if d > 3 {
            return Err(self.err(line, format!("{what} must be 0, 1, 2 or 3, found {d}")));
        }
        Ok(d)
    }

    pub(super) fn real(&mut self, what: &str) -> Result<f64, ImportError> {
        let (v, line) = self.parse_num::<f64>(what, "a number")?;
        if !v.is_finite() {
            return Err(self.err(line, format!("{what} must be a finite number, found {v}")));
        }
        Ok(v)
    }

    pub(super) fn expect_end(&mut self, section: &str) -> Result<(), ImportError> {
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

    pub(super) fn parse_file(mut self) -> Result<RawMsh, ImportError> {
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
                return Err(self.err(
                    self.lex.line,
                    format!(
                        "the file has no ${needed} section (it ends at this line: is it \
                         truncated?)"
                    ),
                ));
            }
        }
        Ok(self.raw)
    }

    pub(super) fn mesh_format(&mut self) -> Result<(), ImportError> {
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

    pub(super) fn skip_section(&mut self, name: &str, start: usize) -> Result<(), ImportError> {
        let end = format!("$End{name}");
        while let Some(t) = self.lex.next_token() {
            if t.text == end && !t.quoted {
                return Ok(());
            }
        }
        Err(self.err(start, format!("section ${name} is never closed by {end}")))
    }

    pub(super) fn physical_names(&mut self) -> Result<(), ImportError> {
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

    pub(super) fn entities(&mut self) -> Result<(), ImportError> {
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

    pub(super) fn nodes(&mut self) -> Result<(), ImportError> {
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
                let (x, xline) = self.parse_num::<f64>("a node x coordinate", "a number")?;
                if !x.is_finite() {
                    return Err(self.err(
                        xline,
                        format!("a node x coordinate must be a finite number, found {x}"),
                    ));
                }
                self.raw
                    .node_lines
                    .push(u32::try_from(xline).unwrap_or(u32::MAX));
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

    pub(super) fn node(&self, tag: u64, line: usize, elem: u64) -> Result<u32, ImportError> {
        self.raw.node_index.get(&tag).copied().ok_or_else(|| {
            self.err(
                line,
                format!("element {elem} uses node {tag}, which $Nodes does not define"),
            )
        })
    }

    pub(super) fn elements(&mut self) -> Result<(), ImportError> {
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

pub(super) fn elem_info(block: u32, line: usize, tag: u64) -> ElemInfo {
    ElemInfo {
        block,
        line: u32::try_from(line).unwrap_or(u32::MAX),
        tag,
    }
}
