//! The geometry description an engineer writes (TOML; lengths in mm, frequencies in
//! GHz, z vertical) and its validated in-memory form.
//!
//! The in-memory types keep the file's units (mm, GHz); the mesher converts to metres.
//!
//! # File format
//!
//! ```toml
//! title = "..."
//! [cavity]
//! shape = "box"                  # "box": size = [x, y, z], corner at the origin
//! size = [300.0, 300.0, 200.0]   # "cylinder": radius = R, height = H, axis on z, centre at x = y = 0
//! walls = "copper"               # metal from the built-in list, { conductivity = 3.5e7 } (S/m), or "pec"
//! [[load]]                       # zero or more
//! name = "bowl"
//! shape = "cylinder"             # vertical axis: center = [x, y], radius, bottom (z of base), height
//! center = [150.0, 150.0]
//! radius = 60.0
//! bottom = 10.0
//! height = 40.0
//! material = "water"             # built-in name, or { permittivity = 4.0, loss_tangent = 0.01 },
//!                                # or { permittivity = 78.0, loss_factor = 10.0 } (eps''), optional permeability
//! # shape = "box" uses min = [x, y, z] and max = [x, y, z]
//! [[port]]                       # zero or more feed apertures (used by the solver later)
//! wall = "+x"                    # box: "-x" "+x" "-y" "+y" "-z" "+z"; cylinder: "top", "bottom", "side" (+ angle_deg)
//! center = [150.0, 100.0]        # position on that wall, in the wall's two in-plane coordinates (mm)
//! width = 86.36                  # broad side (mm)
//! height = 43.18                 # narrow side (mm)
//! [mesh]
//! order = 2                      # element order the solver will use (1 or 2)
//! per_wavelength = 6.0           # elements per local wavelength at the target frequency
//! max_size = 20.0                # mm, upper bound on element size anywhere
//! [solve]
//! target = 2.45                  # GHz
//! band = [2.40, 2.50]            # GHz, optional
//! count = 20                     # modes to find near the target (optional if band is given)
//! ```
//!
//! Extensions implemented here:
//! - load `material` may also be `{ permittivity, conductivity }` (S/m); every material
//!   table may carry `permeability` (default 1);
//! - load `temperature` (°C, 0–100, default 20) sets the temperature of `material = "water"`;
//! - port `name` (default "port1", "port2", … by position), `angle_deg` for `wall = "side"`
//!   (azimuth of the arc coordinate's origin, default 0), `rotated = true` to put the broad
//!   side along the wall's second in-plane axis (see [`PortWall`]);
//! - `[mesh]` `import = "file.msh"` (Gmsh MSH 4.1, relative to the geometry file),
//!   `unit_mm` (mm per file unit, default 1) and a `[mesh.groups]` table mapping physical
//!   group names to "air", "wall", a load name or a port name; loads need no shape then;
//! - defaults: `[mesh]` order 2, per_wavelength 6, max_size 20 mm; `[solve]` target
//!   2.45 GHz, count 20 when no band is given.
//!
//! Every key is checked: unknown keys, out-of-range values, loads outside the cavity or
//! overlapping each other (touching is allowed), ports that do not fit on their wall and
//! duplicate names are rejected with a [`GeometryError`] naming file, line, entry and value.

use crate::error::{GeometryError, Item, Location};
use crate::material::{self, Dielectric, Material, MaterialKind, MaterialValues};
use serde::Deserialize;
use std::collections::BTreeMap;
use std::ops::Range;
use std::path::{Path, PathBuf};
use toml::Spanned;

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

/// Default element order.
pub const DEFAULT_ORDER: u8 = 2;
/// Default elements per local wavelength.
pub const DEFAULT_PER_WAVELENGTH: f64 = 6.0;
/// Default upper bound on element size, mm.
pub const DEFAULT_MAX_SIZE_MM: f64 = 20.0;
/// Default target frequency, GHz.
pub const DEFAULT_TARGET_GHZ: f64 = 2.45;
/// Default number of modes when no band is given.
pub const DEFAULT_COUNT: usize = 20;

impl CavityShape {
    /// Largest extent of the cavity (mm); sets the scale of geometric tolerances.
    pub fn scale(&self) -> f64 {
        match *self {
            CavityShape::Box { size } => size[0].max(size[1]).max(size[2]),
            CavityShape::Cylinder { radius, height } => (2.0 * radius).max(height),
        }
    }

    /// Cavity volume, mm³.
    pub fn volume(&self) -> f64 {
        match *self {
            CavityShape::Box { size } => size[0] * size[1] * size[2],
            CavityShape::Cylinder { radius, height } => {
                std::f64::consts::PI * radius * radius * height
            }
        }
    }
}

impl LoadShape {
    /// Load volume, mm³.
    pub fn volume(&self) -> f64 {
        match *self {
            LoadShape::Cylinder { radius, height, .. } => {
                std::f64::consts::PI * radius * radius * height
            }
            LoadShape::Box { min, max } => (0..3).map(|i| max[i] - min[i]).product(),
        }
    }

    /// Vertical extent [bottom, top], mm.
    pub fn z_range(&self) -> [f64; 2] {
        match *self {
            LoadShape::Cylinder { bottom, height, .. } => [bottom, bottom + height],
            LoadShape::Box { min, max } => [min[2], max[2]],
        }
    }
}

impl PortWall {
    /// The wall's name as written in the file ("+x", "top", "side", …).
    pub fn label(&self) -> &'static str {
        match *self {
            PortWall::BoxWall { axis, positive } => match (axis, positive) {
                (0, false) => "-x",
                (0, true) => "+x",
                (1, false) => "-y",
                (1, true) => "+y",
                (_, false) => "-z",
                (_, true) => "+z",
            },
            PortWall::Top => "top",
            PortWall::Bottom => "bottom",
            PortWall::Side { .. } => "side",
        }
    }

    /// For a box wall, the global axes (0/1/2 = x/y/z) of the two in-plane coordinates.
    pub fn box_in_plane_axes(axis: usize) -> [usize; 2] {
        match axis {
            0 => [1, 2],
            1 => [0, 2],
            _ => [0, 1],
        }
    }
}

impl Port {
    /// Extents of the aperture along the wall's first and second in-plane axes (mm).
    pub fn in_plane_extent(&self) -> [f64; 2] {
        if self.rotated {
            [self.height, self.width]
        } else {
            [self.width, self.height]
        }
    }
}

impl Geometry {
    /// Reads and validates a geometry file. Relative paths inside it (mesh import) are
    /// resolved against the file's directory.
    pub fn from_file(path: impl AsRef<Path>) -> Result<Geometry, GeometryError> {
        let path = path.as_ref();
        let text = std::fs::read_to_string(path).map_err(|source| GeometryError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        Geometry::from_toml_str(&text, Some(path))
    }

    /// Parses and validates geometry text (format in the module docs). `source` names the
    /// file in error messages and anchors relative paths; `None` for text from elsewhere.
    pub fn from_toml_str(text: &str, source: Option<&Path>) -> Result<Geometry, GeometryError> {
        let cx = Ctx {
            text,
            file: source.map(Path::to_path_buf),
        };
        let raw: RawFile = match toml::from_str(text) {
            Ok(r) => r,
            Err(e) => return Err(cx.toml_error(&e)),
        };
        cx.build(raw)
    }

    /// The load with this name, if any.
    pub fn load(&self, name: &str) -> Option<&Load> {
        self.loads.iter().find(|l| l.name == name)
    }

    /// The port with this name, if any.
    pub fn port(&self, name: &str) -> Option<&Port> {
        self.ports.iter().find(|p| p.name == name)
    }
}

// ---------------------------------------------------------------------------------------
// Raw (as written) form. Every value that can be wrong keeps its span for the message.

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    title: Option<String>,
    cavity: Spanned<RawCavity>,
    #[serde(default)]
    load: Vec<Spanned<RawLoad>>,
    #[serde(default)]
    port: Vec<Spanned<RawPort>>,
    mesh: Option<Spanned<RawMesh>>,
    solve: Option<Spanned<RawSolve>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCavity {
    shape: Spanned<String>,
    size: Option<Spanned<Vec<f64>>>,
    radius: Option<Spanned<f64>>,
    height: Option<Spanned<f64>>,
    walls: Spanned<toml::Value>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLoad {
    name: Spanned<String>,
    shape: Option<Spanned<String>>,
    center: Option<Spanned<Vec<f64>>>,
    radius: Option<Spanned<f64>>,
    bottom: Option<Spanned<f64>>,
    height: Option<Spanned<f64>>,
    min: Option<Spanned<Vec<f64>>>,
    max: Option<Spanned<Vec<f64>>>,
    material: Spanned<toml::Value>,
    temperature: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPort {
    name: Option<Spanned<String>>,
    wall: Spanned<String>,
    angle_deg: Option<Spanned<f64>>,
    center: Spanned<Vec<f64>>,
    width: Spanned<f64>,
    height: Spanned<f64>,
    #[serde(default)]
    rotated: bool,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMesh {
    order: Option<Spanned<i64>>,
    per_wavelength: Option<Spanned<f64>>,
    max_size: Option<Spanned<f64>>,
    import: Option<Spanned<String>>,
    unit_mm: Option<Spanned<f64>>,
    groups: Option<Spanned<BTreeMap<String, Spanned<String>>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSolve {
    target: Option<Spanned<f64>>,
    band: Option<Spanned<Vec<f64>>>,
    count: Option<Spanned<i64>>,
}

/// Lenient second reading used only to say which load/port a TOML error sits in.
#[derive(Deserialize)]
struct LooseFile {
    #[serde(default)]
    load: Vec<Spanned<LooseNamed>>,
    #[serde(default)]
    port: Vec<Spanned<LooseNamed>>,
}

#[derive(Deserialize)]
struct LooseNamed {
    name: Option<toml::Value>,
}

// ---------------------------------------------------------------------------------------

struct Ctx<'a> {
    text: &'a str,
    file: Option<PathBuf>,
}

type Res<T> = Result<T, GeometryError>;

fn fmt_list(v: &[f64]) -> String {
    let parts: Vec<String> = v.iter().map(|x| format!("{x}")).collect();
    format!("[{}]", parts.join(", "))
}

fn quoted_list(names: &[&str]) -> String {
    names
        .iter()
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

impl Ctx<'_> {
    fn line_of(&self, offset: usize) -> usize {
        let end = offset.min(self.text.len());
        self.text.as_bytes()[..end]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1
    }

    fn at(&self, span: Range<usize>) -> Box<Location> {
        Box::new(Location {
            file: self.file.clone(),
            line: Some(self.line_of(span.start)),
        })
    }

    fn toml_error(&self, e: &toml::de::Error) -> GeometryError {
        let span = e.span();
        let item = span.as_ref().and_then(|s| self.item_containing(s.start));
        GeometryError::Toml {
            at: Box::new(Location {
                file: self.file.clone(),
                line: span.map(|s| self.line_of(s.start)),
            }),
            item,
            message: with_hint(e.message().trim()),
        }
    }

    /// Which `[[load]]`/`[[port]]` entry contains byte `offset`, by a lenient re-read.
    fn item_containing(&self, offset: usize) -> Option<Item> {
        let loose: LooseFile = toml::from_str(self.text).ok()?;
        let name_of = |n: &LooseNamed| match &n.name {
            Some(toml::Value::String(s)) => Some(s.clone()),
            _ => None,
        };
        for l in &loose.load {
            if l.span().contains(&offset) {
                return name_of(l.get_ref()).map(Item::Load);
            }
        }
        for (i, p) in loose.port.iter().enumerate() {
            if p.span().contains(&offset) {
                let name = name_of(p.get_ref()).unwrap_or_else(|| format!("port{}", i + 1));
                return Some(Item::Port(name));
            }
        }
        None
    }

    fn invalid(
        &self,
        span: Range<usize>,
        item: &Item,
        key: &str,
        value: impl ToString,
        allowed: impl ToString,
    ) -> GeometryError {
        GeometryError::InvalidValue {
            at: self.at(span),
            item: item.clone(),
            key: key.to_string(),
            value: value.to_string(),
            allowed: allowed.to_string(),
        }
    }

    fn missing(&self, span: Range<usize>, item: &Item, key: &str, hint: &str) -> GeometryError {
        GeometryError::MissingKey {
            at: self.at(span),
            item: item.clone(),
            key: key.to_string(),
            hint: hint.to_string(),
        }
    }

    /// A length (mm) or similar quantity that must be finite and > 0.
    fn positive(&self, v: &Spanned<f64>, item: &Item, key: &str, unit: &str) -> Res<f64> {
        let x = *v.get_ref();
        if x.is_finite() && x > 0.0 {
            Ok(x)
        } else {
            Err(self.invalid(
                v.span(),
                item,
                key,
                x,
                format!("must be a positive finite number{unit}"),
            ))
        }
    }

    fn finite(&self, v: &Spanned<f64>, item: &Item, key: &str) -> Res<f64> {
        let x = *v.get_ref();
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self.invalid(v.span(), item, key, x, "must be a finite number"))
        }
    }

    fn array<const N: usize>(
        &self,
        v: &Spanned<Vec<f64>>,
        item: &Item,
        key: &str,
        what: &str,
    ) -> Res<[f64; N]> {
        let a = v.get_ref();
        if a.len() != N || a.iter().any(|x| !x.is_finite()) {
            return Err(self.invalid(
                v.span(),
                item,
                key,
                fmt_list(a),
                format!("must be {N} finite numbers {what}"),
            ));
        }
        let mut out = [0.0; N];
        out.copy_from_slice(a);
        Ok(out)
    }

    fn build(&self, raw: RawFile) -> Res<Geometry> {
        let cavity = self.cavity(&raw.cavity)?;
        let solve = self.solve(raw.solve.as_ref())?;
        let importing = raw
            .mesh
            .as_ref()
            .is_some_and(|m| m.get_ref().import.is_some());

        let mut loads: Vec<Load> = Vec::with_capacity(raw.load.len());
        let mut load_lines: Vec<usize> = Vec::with_capacity(raw.load.len());
        for rl in &raw.load {
            let load = self.load(rl, importing)?;
            let line = self.line_of(rl.span().start);
            if let Some(k) = loads.iter().position(|l| l.name == load.name) {
                return Err(GeometryError::DuplicateName {
                    at: self.at(rl.get_ref().name.span()),
                    kind: "load",
                    name: load.name,
                    first_line: Some(load_lines[k]),
                });
            }
            if let Some(shape) = &load.shape {
                self.load_inside(&cavity.shape, shape, &load.name, rl.span())?;
                for (k, other) in loads.iter().enumerate() {
                    if let Some(os) = &other.shape {
                        if let Some(detail) = overlap(shape, os, tolerance(&cavity.shape)) {
                            return Err(GeometryError::LoadsOverlap {
                                at: self.at(rl.span()),
                                load: load.name.clone(),
                                other: other.name.clone(),
                                other_line: Some(load_lines[k]),
                                detail,
                            });
                        }
                    }
                }
            }
            loads.push(load);
            load_lines.push(line);
        }

        let mut ports: Vec<Port> = Vec::with_capacity(raw.port.len());
        let mut port_lines: Vec<usize> = Vec::with_capacity(raw.port.len());
        for (i, rp) in raw.port.iter().enumerate() {
            let port = self.port(rp, i, &cavity.shape)?;
            if let Some(k) = ports.iter().position(|p| p.name == port.name) {
                return Err(GeometryError::DuplicateName {
                    at: self.at(rp.span()),
                    kind: "port",
                    name: port.name,
                    first_line: Some(port_lines[k]),
                });
            }
            ports.push(port);
            port_lines.push(self.line_of(rp.span().start));
        }

        let mesh = self.mesh(raw.mesh.as_ref(), &loads, &ports)?;
        Ok(Geometry {
            title: raw.title.unwrap_or_default(),
            cavity,
            loads,
            ports,
            mesh,
            solve,
            source: self.file.clone(),
        })
    }

    fn cavity(&self, rc: &Spanned<RawCavity>) -> Res<Cavity> {
        let item = Item::Cavity;
        let c = rc.get_ref();
        let shape = match c.shape.get_ref().as_str() {
            "box" => {
                let size = c.size.as_ref().ok_or_else(|| {
                    self.missing(
                        rc.span(),
                        &item,
                        "size",
                        "a box cavity needs size = [x, y, z] in mm",
                    )
                })?;
                for (key, v) in [("radius", &c.radius), ("height", &c.height)] {
                    if let Some(v) = v {
                        return Err(self.invalid(
                            v.span(),
                            &item,
                            key,
                            v.get_ref(),
                            "is for shape = \"cylinder\"; a box cavity takes size = [x, y, z]",
                        ));
                    }
                }
                let s: [f64; 3] = self.array(size, &item, "size", "(x, y, z in mm)")?;
                if s.iter().any(|&x| x <= 0.0) {
                    return Err(self.invalid(
                        size.span(),
                        &item,
                        "size",
                        fmt_list(&s),
                        "every side must be a positive length in mm",
                    ));
                }
                CavityShape::Box { size: s }
            }
            "cylinder" => {
                if let Some(v) = &c.size {
                    return Err(self.invalid(
                        v.span(),
                        &item,
                        "size",
                        fmt_list(v.get_ref()),
                        "is for shape = \"box\"; a cylinder cavity takes radius and height",
                    ));
                }
                let r = c.radius.as_ref().ok_or_else(|| {
                    self.missing(
                        rc.span(),
                        &item,
                        "radius",
                        "a cylinder cavity needs radius (mm)",
                    )
                })?;
                let h = c.height.as_ref().ok_or_else(|| {
                    self.missing(
                        rc.span(),
                        &item,
                        "height",
                        "a cylinder cavity needs height (mm)",
                    )
                })?;
                CavityShape::Cylinder {
                    radius: self.positive(r, &item, "radius", " (mm)")?,
                    height: self.positive(h, &item, "height", " (mm)")?,
                }
            }
            other => {
                return Err(self.invalid(
                    c.shape.span(),
                    &item,
                    "shape",
                    format!("\"{other}\""),
                    "use \"box\" or \"cylinder\"",
                ))
            }
        };
        let walls = self.walls(&c.walls)?;
        Ok(Cavity { shape, walls })
    }

    fn walls(&self, w: &Spanned<toml::Value>) -> Res<WallMetal> {
        let item = Item::Cavity;
        let metals = material::builtin_names(MaterialKind::Metal);
        match w.get_ref() {
            toml::Value::String(name) => {
                if name.trim().eq_ignore_ascii_case("pec") {
                    return Ok(WallMetal::Pec);
                }
                match material::builtin(name) {
                    Some(entry) => match entry.values {
                        MaterialValues::Metal { conductivity } => Ok(WallMetal::Metal {
                            name: entry.name.to_string(),
                            conductivity,
                        }),
                        MaterialValues::Dielectric(_) => Err(self.invalid(
                            w.span(),
                            &item,
                            "walls",
                            format!("\"{name}\""),
                            format!(
                                "\"{}\" is a dielectric; walls take a metal: {}, \"pec\" or \
                                 {{ conductivity = .. }}",
                                entry.name,
                                quoted_list(&metals)
                            ),
                        )),
                    },
                    None => Err(GeometryError::UnknownMetal {
                        at: self.at(w.span()),
                        name: name.clone(),
                        known: quoted_list(&metals),
                    }),
                }
            }
            toml::Value::Table(t) => {
                let allowed =
                    "walls table takes only conductivity (S/m), e.g. { conductivity = 3.5e7 }";
                if let Some(k) = t.keys().find(|k| k.as_str() != "conductivity") {
                    return Err(self.invalid(
                        w.span(),
                        &item,
                        "walls",
                        format!("{{ {k} = .. }}"),
                        allowed,
                    ));
                }
                let v = t
                    .get("conductivity")
                    .ok_or_else(|| self.missing(w.span(), &item, "walls.conductivity", allowed))?;
                let sigma = number(v).ok_or_else(|| {
                    self.invalid(
                        w.span(),
                        &item,
                        "walls.conductivity",
                        v,
                        "must be a number (S/m)",
                    )
                })?;
                if !(sigma.is_finite() && sigma > 0.0) {
                    return Err(self.invalid(
                        w.span(),
                        &item,
                        "walls.conductivity",
                        sigma,
                        "must be a positive finite conductivity in S/m (use \"pec\" for a lossless wall)",
                    ));
                }
                Ok(WallMetal::Metal {
                    name: "custom".to_string(),
                    conductivity: sigma,
                })
            }
            other => Err(self.invalid(
                w.span(),
                &item,
                "walls",
                other,
                format!(
                    "use a metal name ({}), \"pec\", or {{ conductivity = .. }}",
                    quoted_list(&metals)
                ),
            )),
        }
    }

    fn load(&self, rl: &Spanned<RawLoad>, importing: bool) -> Res<Load> {
        let l = rl.get_ref();
        let name = l.name.get_ref().trim().to_string();
        if name.is_empty() {
            return Err(self.invalid(
                l.name.span(),
                &Item::TopLevel,
                "load name",
                "\"\"",
                "every load needs a non-empty name",
            ));
        }
        let item = Item::Load(name.clone());
        let shape = match &l.shape {
            None if importing => None,
            None => return Err(self.missing(
                rl.span(),
                &item,
                "shape",
                "use shape = \"cylinder\" (center, radius, bottom, height) or \"box\" (min, max); \
                     only loads of an imported mesh may omit it",
            )),
            Some(s) => Some(self.load_shape(l, s, &item, rl.span())?),
        };
        let material = self.load_material(l, &item)?;
        Ok(Load {
            name,
            shape,
            material,
        })
    }

    fn load_shape<'a>(
        &self,
        l: &'a RawLoad,
        s: &Spanned<String>,
        item: &Item,
        span: Range<usize>,
    ) -> Res<LoadShape> {
        let need_f = |v: Option<&'a Spanned<f64>>, key: &str, hint: &str| {
            v.ok_or_else(|| self.missing(span.clone(), item, key, hint))
        };
        let need_v = |v: Option<&'a Spanned<Vec<f64>>>, key: &str, hint: &str| {
            v.ok_or_else(|| self.missing(span.clone(), item, key, hint))
        };
        match s.get_ref().as_str() {
            "cylinder" => {
                for (key, v) in [("min", &l.min), ("max", &l.max)] {
                    if let Some(v) = v {
                        return Err(self.invalid(
                            v.span(),
                            item,
                            key,
                            fmt_list(v.get_ref()),
                            "is for shape = \"box\"; a cylinder load takes center, radius, bottom, height",
                        ));
                    }
                }
                let hint = "a cylinder load needs center = [x, y], radius, bottom and height (mm)";
                let c = need_v(l.center.as_ref(), "center", hint)?;
                let center: [f64; 2] = self.array(c, item, "center", "(x, y of the axis in mm)")?;
                let radius = self.positive(
                    need_f(l.radius.as_ref(), "radius", hint)?,
                    item,
                    "radius",
                    " (mm)",
                )?;
                let bottom =
                    self.finite(need_f(l.bottom.as_ref(), "bottom", hint)?, item, "bottom")?;
                let height = self.positive(
                    need_f(l.height.as_ref(), "height", hint)?,
                    item,
                    "height",
                    " (mm)",
                )?;
                Ok(LoadShape::Cylinder {
                    center,
                    radius,
                    bottom,
                    height,
                })
            }
            "box" => {
                for (key, v) in [
                    ("radius", &l.radius),
                    ("bottom", &l.bottom),
                    ("height", &l.height),
                ] {
                    if let Some(v) = v {
                        return Err(self.invalid(
                            v.span(),
                            item,
                            key,
                            v.get_ref(),
                            "is for shape = \"cylinder\"; a box load takes min = [x, y, z] and max = [x, y, z]",
                        ));
                    }
                }
                if let Some(v) = &l.center {
                    return Err(self.invalid(
                        v.span(),
                        item,
                        "center",
                        fmt_list(v.get_ref()),
                        "is for shape = \"cylinder\"; a box load takes min and max",
                    ));
                }
                let hint = "a box load needs min = [x, y, z] and max = [x, y, z] (mm)";
                let rmin = need_v(l.min.as_ref(), "min", hint)?;
                let rmax = need_v(l.max.as_ref(), "max", hint)?;
                let min: [f64; 3] = self.array(rmin, item, "min", "(x, y, z in mm)")?;
                let max: [f64; 3] = self.array(rmax, item, "max", "(x, y, z in mm)")?;
                if (0..3).any(|i| max[i] <= min[i]) {
                    return Err(self.invalid(
                        rmax.span(),
                        item,
                        "max",
                        fmt_list(&max),
                        format!(
                            "must exceed min = {} in every coordinate (the box needs positive size)",
                            fmt_list(&min)
                        ),
                    ));
                }
                Ok(LoadShape::Box { min, max })
            }
            other => Err(self.invalid(
                s.span(),
                item,
                "shape",
                format!("\"{other}\""),
                "use \"cylinder\" (vertical axis) or \"box\"",
            )),
        }
    }

    fn load_material(&self, l: &RawLoad, item: &Item) -> Res<Material> {
        let m = &l.material;
        let load_name = match item {
            Item::Load(n) => n.clone(),
            _ => String::new(),
        };
        let dielectrics = material::builtin_names(MaterialKind::Dielectric);
        let material = match m.get_ref() {
            toml::Value::String(name) => match material::builtin(name) {
                Some(entry) => match entry.values {
                    MaterialValues::Dielectric(mat) => mat,
                    MaterialValues::Metal { .. } => {
                        return Err(self.invalid(
                            m.span(),
                            item,
                            "material",
                            format!("\"{name}\""),
                            format!(
                                "\"{}\" is a metal; loads are dielectrics: {}",
                                entry.name,
                                quoted_list(&dielectrics)
                            ),
                        ))
                    }
                },
                None => {
                    return Err(GeometryError::UnknownMaterial {
                        at: self.at(m.span()),
                        load: load_name,
                        name: name.clone(),
                        known: quoted_list(&dielectrics),
                    })
                }
            },
            toml::Value::Table(t) => self.custom_material(t, m.span(), item)?,
            other => {
                return Err(self.invalid(
                    m.span(),
                    item,
                    "material",
                    other,
                    format!(
                        "use a built-in name ({}) or a table {{ permittivity = .., loss_tangent = .. }}",
                        quoted_list(&dielectrics)
                    ),
                ))
            }
        };
        match (&l.temperature, &material.dielectric) {
            (None, _) => Ok(material),
            (Some(t), Dielectric::WaterDebye { .. }) => {
                let tc = *t.get_ref();
                let [lo, hi] = material::WATER_TEMPERATURE_RANGE_C;
                if !(tc.is_finite() && (lo..=hi).contains(&tc)) {
                    return Err(self.invalid(
                        t.span(),
                        item,
                        "temperature",
                        tc,
                        format!("the water model covers {lo}..{hi} °C (liquid water)"),
                    ));
                }
                Ok(Material::water(tc))
            }
            (Some(t), _) => Err(self.invalid(
                t.span(),
                item,
                "temperature",
                t.get_ref(),
                "applies only to material = \"water\"; other materials have fixed values",
            )),
        }
    }

    fn custom_material(&self, t: &toml::Table, span: Range<usize>, item: &Item) -> Res<Material> {
        const KEYS: [&str; 5] = [
            "permittivity",
            "loss_tangent",
            "loss_factor",
            "conductivity",
            "permeability",
        ];
        let allowed_keys = "permittivity (required), one of loss_tangent / loss_factor (eps'') / \
                            conductivity (S/m), and optional permeability";
        if let Some(k) = t.keys().find(|k| !KEYS.contains(&k.as_str())) {
            return Err(self.invalid(
                span,
                item,
                "material",
                format!("{{ {k} = .. }}"),
                format!("unknown key `{k}`; a material table takes {allowed_keys}"),
            ));
        }
        let get = |key: &str| -> Res<Option<f64>> {
            match t.get(key) {
                None => Ok(None),
                Some(v) => match number(v) {
                    Some(x) if x.is_finite() => Ok(Some(x)),
                    _ => Err(self.invalid(
                        span.clone(),
                        item,
                        &format!("material.{key}"),
                        v,
                        "must be a finite number",
                    )),
                },
            }
        };
        let eps = get("permittivity")?.ok_or_else(|| {
            self.missing(span.clone(), item, "material.permittivity", allowed_keys)
        })?;
        if eps < 1.0 {
            return Err(self.invalid(
                span,
                item,
                "material.permittivity",
                eps,
                "relative permittivity must be >= 1 (1 = vacuum)",
            ));
        }
        let losses: Vec<(&str, f64)> = ["loss_tangent", "loss_factor", "conductivity"]
            .into_iter()
            .filter_map(|k| get(k).map(|v| v.map(|x| (k, x))).transpose())
            .collect::<Res<_>>()?;
        if losses.len() > 1 {
            return Err(self.invalid(
                span,
                item,
                &format!("material.{}", losses[1].0),
                losses[1].1,
                format!(
                    "give only one of loss_tangent, loss_factor, conductivity (also found {})",
                    losses[0].0
                ),
            ));
        }
        let (mut eps_imag, mut conductivity) = (0.0, 0.0);
        if let Some(&(key, x)) = losses.first() {
            if x < 0.0 {
                return Err(self.invalid(
                    span,
                    item,
                    &format!("material.{key}"),
                    x,
                    "losses must be >= 0 (a passive material does not amplify)",
                ));
            }
            match key {
                "loss_tangent" => eps_imag = eps * x,
                "loss_factor" => eps_imag = x,
                _ => conductivity = x,
            }
        }
        let permeability = get("permeability")?.unwrap_or(1.0);
        if permeability <= 0.0 {
            return Err(self.invalid(
                span,
                item,
                "material.permeability",
                permeability,
                "relative permeability must be > 0 (1 for non-magnetic materials)",
            ));
        }
        Ok(Material {
            name: "custom".to_string(),
            dielectric: Dielectric::Constant {
                eps_real: eps,
                eps_imag,
                conductivity,
            },
            permeability,
        })
    }

    fn load_inside(
        &self,
        cavity: &CavityShape,
        shape: &LoadShape,
        name: &str,
        span: Range<usize>,
    ) -> Res<()> {
        let tol = tolerance(cavity);
        let fail = |detail: String| {
            Err(GeometryError::LoadOutsideCavity {
                at: self.at(span.clone()),
                load: name.to_string(),
                detail,
            })
        };
        let h = match *cavity {
            CavityShape::Box { size } => size[2],
            CavityShape::Cylinder { height, .. } => height,
        };
        let [z0, z1] = shape.z_range();
        if z0 < -tol || z1 > h + tol {
            return fail(format!(
                "it spans z = {z0} .. {z1} mm but the cavity spans z = 0 .. {h} mm"
            ));
        }
        match (*cavity, *shape) {
            (CavityShape::Box { size }, LoadShape::Box { min, max }) => {
                for i in 0..2 {
                    if min[i] < -tol || max[i] > size[i] + tol {
                        let ax = ["x", "y"][i];
                        return fail(format!(
                            "it spans {ax} = {} .. {} mm but the cavity spans {ax} = 0 .. {} mm",
                            min[i], max[i], size[i]
                        ));
                    }
                }
            }
            (CavityShape::Box { size }, LoadShape::Cylinder { center, radius, .. }) => {
                for i in 0..2 {
                    let (a, b) = (center[i] - radius, center[i] + radius);
                    if a < -tol || b > size[i] + tol {
                        let ax = ["x", "y"][i];
                        return fail(format!(
                            "its footprint spans {ax} = {a} .. {b} mm (center {}, radius {radius}) \
                             but the cavity spans {ax} = 0 .. {} mm",
                            fmt_list(&center),
                            size[i]
                        ));
                    }
                }
            }
            (CavityShape::Cylinder { radius: rc, .. }, LoadShape::Box { min, max }) => {
                // The footprint is convex, so its corners are its farthest points from the axis.
                for (x, y) in [
                    (min[0], min[1]),
                    (min[0], max[1]),
                    (max[0], min[1]),
                    (max[0], max[1]),
                ] {
                    let r = x.hypot(y);
                    if r > rc + tol {
                        return fail(format!(
                            "its corner (x, y) = ({x}, {y}) mm is {r:.3} mm from the axis but the \
                             cavity radius is {rc} mm (the cavity axis is at x = y = 0)"
                        ));
                    }
                }
            }
            (
                CavityShape::Cylinder { radius: rc, .. },
                LoadShape::Cylinder { center, radius, .. },
            ) => {
                let reach = center[0].hypot(center[1]) + radius;
                if reach > rc + tol {
                    return fail(format!(
                        "its footprint (center {}, radius {radius}) reaches {reach:.3} mm from the \
                         axis but the cavity radius is {rc} mm (the cavity axis is at x = y = 0)",
                        fmt_list(&center)
                    ));
                }
            }
        }
        Ok(())
    }

    fn port(&self, rp: &Spanned<RawPort>, index: usize, cavity: &CavityShape) -> Res<Port> {
        let p = rp.get_ref();
        let name = match &p.name {
            Some(n) if n.get_ref().trim().is_empty() => {
                return Err(self.invalid(
                    n.span(),
                    &Item::Port(format!("port{}", index + 1)),
                    "name",
                    "\"\"",
                    "give a non-empty name or leave the key out",
                ))
            }
            Some(n) => n.get_ref().trim().to_string(),
            None => format!("port{}", index + 1),
        };
        let item = Item::Port(name.clone());
        let wall_name = p.wall.get_ref().trim();
        let (shape_name, allowed) = match cavity {
            CavityShape::Box { .. } => ("box", "\"-x\", \"+x\", \"-y\", \"+y\", \"-z\", \"+z\""),
            CavityShape::Cylinder { .. } => ("cylinder", "\"top\", \"bottom\", \"side\""),
        };
        let wrong_wall = || GeometryError::PortWrongWall {
            at: self.at(p.wall.span()),
            port: name.clone(),
            wall: wall_name.to_string(),
            shape: shape_name.to_string(),
            allowed: allowed.to_string(),
        };
        let wall = match (cavity, wall_name) {
            (CavityShape::Box { .. }, w) => match w {
                "-x" => PortWall::BoxWall {
                    axis: 0,
                    positive: false,
                },
                "+x" => PortWall::BoxWall {
                    axis: 0,
                    positive: true,
                },
                "-y" => PortWall::BoxWall {
                    axis: 1,
                    positive: false,
                },
                "+y" => PortWall::BoxWall {
                    axis: 1,
                    positive: true,
                },
                "-z" => PortWall::BoxWall {
                    axis: 2,
                    positive: false,
                },
                "+z" => PortWall::BoxWall {
                    axis: 2,
                    positive: true,
                },
                _ => return Err(wrong_wall()),
            },
            (CavityShape::Cylinder { .. }, "top") => PortWall::Top,
            (CavityShape::Cylinder { .. }, "bottom") => PortWall::Bottom,
            (CavityShape::Cylinder { .. }, "side") => {
                let angle = match &p.angle_deg {
                    Some(a) => self.finite(a, &item, "angle_deg")?,
                    None => 0.0,
                };
                PortWall::Side { angle_deg: angle }
            }
            _ => return Err(wrong_wall()),
        };
        if let (Some(a), false) = (&p.angle_deg, matches!(wall, PortWall::Side { .. })) {
            return Err(self.invalid(
                a.span(),
                &item,
                "angle_deg",
                a.get_ref(),
                "applies only to wall = \"side\" of a cylinder cavity",
            ));
        }
        let center: [f64; 2] = self.array(
            &p.center,
            &item,
            "center",
            "(the wall's two in-plane coordinates in mm)",
        )?;
        let width = self.positive(&p.width, &item, "width", " (mm)")?;
        let height = self.positive(&p.height, &item, "height", " (mm)")?;
        if height > width {
            return Err(self.invalid(
                p.height.span(),
                &item,
                "height",
                height,
                format!(
                    "the narrow side must not exceed width = {width} (the broad side); swap them \
                     and set rotated = true to turn the aperture"
                ),
            ));
        }
        let port = Port {
            name,
            wall,
            center,
            width,
            height,
            rotated: p.rotated,
        };
        self.port_fits(&port, cavity, rp.span())?;
        Ok(port)
    }

    fn port_fits(&self, port: &Port, cavity: &CavityShape, span: Range<usize>) -> Res<()> {
        let tol = tolerance(cavity);
        let [du, dv] = port.in_plane_extent();
        let [cu, cv] = port.center;
        let (u0, u1, v0, v1) = (cu - du / 2.0, cu + du / 2.0, cv - dv / 2.0, cv + dv / 2.0);
        let fail = |detail: String| {
            Err(GeometryError::PortDoesNotFit {
                at: self.at(span.clone()),
                port: port.name.clone(),
                wall: port.wall.label().to_string(),
                detail,
            })
        };
        match (*cavity, port.wall) {
            (CavityShape::Box { size }, PortWall::BoxWall { axis, .. }) => {
                let names = ["x", "y", "z"];
                let [a, b] = PortWall::box_in_plane_axes(axis);
                let (ua, va) = (names[a], names[b]);
                if u0 < -tol || u1 > size[a] + tol || v0 < -tol || v1 > size[b] + tol {
                    return fail(format!(
                        "the aperture spans {ua} = {u0} .. {u1}, {va} = {v0} .. {v1} mm (center {}, \
                         {du} x {dv} mm) but the wall spans {ua} = 0 .. {}, {va} = 0 .. {} mm",
                        fmt_list(&port.center),
                        size[a],
                        size[b]
                    ));
                }
            }
            (CavityShape::Cylinder { radius, .. }, PortWall::Top | PortWall::Bottom) => {
                for (x, y) in [(u0, v0), (u0, v1), (u1, v0), (u1, v1)] {
                    let r = x.hypot(y);
                    if r > radius + tol {
                        return fail(format!(
                            "corner (x, y) = ({x}, {y}) mm of the aperture is {r:.3} mm from the \
                             axis but the wall radius is {radius} mm"
                        ));
                    }
                }
            }
            (CavityShape::Cylinder { radius, height }, PortWall::Side { .. }) => {
                // A flat aperture on a curved wall: it must span less than half the
                // circumference so it stays a single patch the mesher can place.
                let half_circ = std::f64::consts::PI * radius;
                if du >= half_circ {
                    return fail(format!(
                        "its extent along the arc is {du} mm, which must be below half the \
                         circumference (pi R = {half_circ:.3} mm)"
                    ));
                }
                if v0 < -tol || v1 > height + tol {
                    return fail(format!(
                        "it spans z = {v0} .. {v1} mm (center {}) but the wall spans z = 0 .. \
                         {height} mm",
                        fmt_list(&port.center)
                    ));
                }
            }
            // `port()` only builds walls that match the cavity shape.
            _ => {
                return fail("the wall does not belong to this cavity shape".to_string());
            }
        }
        Ok(())
    }

    fn mesh(
        &self,
        rm: Option<&Spanned<RawMesh>>,
        loads: &[Load],
        ports: &[Port],
    ) -> Res<MeshSettings> {
        let item = Item::Mesh;
        let Some(rm) = rm else {
            return Ok(MeshSettings {
                order: DEFAULT_ORDER,
                per_wavelength: DEFAULT_PER_WAVELENGTH,
                max_size: DEFAULT_MAX_SIZE_MM,
                import: None,
            });
        };
        let m = rm.get_ref();
        let order = match &m.order {
            None => DEFAULT_ORDER,
            Some(o) => match *o.get_ref() {
                1 => 1,
                2 => 2,
                x => {
                    return Err(self.invalid(
                        o.span(),
                        &item,
                        "order",
                        x,
                        "element order must be 1 or 2",
                    ))
                }
            },
        };
        let per_wavelength = match &m.per_wavelength {
            None => DEFAULT_PER_WAVELENGTH,
            Some(v) => self.positive(v, &item, "per_wavelength", " (elements per wavelength)")?,
        };
        let max_size = match &m.max_size {
            None => DEFAULT_MAX_SIZE_MM,
            Some(v) => self.positive(v, &item, "max_size", " (mm)")?,
        };
        let import = match &m.import {
            None => {
                if let Some(u) = &m.unit_mm {
                    return Err(self.invalid(
                        u.span(),
                        &item,
                        "unit_mm",
                        u.get_ref(),
                        "applies only with import = \"file.msh\"",
                    ));
                }
                if let Some(g) = &m.groups {
                    return Err(self.invalid(
                        g.span(),
                        &item,
                        "groups",
                        "{..}",
                        "[mesh.groups] applies only with import = \"file.msh\"",
                    ));
                }
                None
            }
            Some(f) => {
                let file_str = f.get_ref().trim();
                if file_str.is_empty() {
                    return Err(self.invalid(
                        f.span(),
                        &item,
                        "import",
                        "\"\"",
                        "give the path of a Gmsh MSH 4.1 file",
                    ));
                }
                let mut file = PathBuf::from(file_str);
                if file.is_relative() {
                    if let Some(dir) = self.file.as_deref().and_then(Path::parent) {
                        file = dir.join(file);
                    }
                }
                let unit_mm = match &m.unit_mm {
                    None => 1.0,
                    Some(u) => self.positive(
                        u,
                        &item,
                        "unit_mm",
                        " (mm per file unit: 1 for mm, 1000 for m)",
                    )?,
                };
                let groups = self.groups(m.groups.as_ref(), loads, ports, rm.span())?;
                Some(MeshImport {
                    file,
                    unit_mm,
                    groups,
                })
            }
        };
        Ok(MeshSettings {
            order,
            per_wavelength,
            max_size,
            import,
        })
    }

    fn groups(
        &self,
        g: Option<&Spanned<BTreeMap<String, Spanned<String>>>>,
        loads: &[Load],
        ports: &[Port],
        mesh_span: Range<usize>,
    ) -> Res<Vec<(String, String)>> {
        let mut targets: Vec<&str> = vec!["air", "wall"];
        targets.extend(loads.iter().map(|l| l.name.as_str()));
        targets.extend(ports.iter().map(|p| p.name.as_str()));
        let allowed = quoted_list(&targets);
        let mut out = Vec::new();
        if let Some(g) = g {
            for (group, target) in g.get_ref() {
                let t = target.get_ref().trim();
                if !targets.contains(&t) {
                    return Err(GeometryError::UnknownGroupTarget {
                        at: self.at(target.span()),
                        group: group.clone(),
                        target: t.to_string(),
                        allowed,
                    });
                }
                out.push((group.clone(), t.to_string()));
            }
        }
        // Every load and port must own at least one group, else it has no elements/faces.
        for name in loads
            .iter()
            .map(|l| ("load", &l.name))
            .chain(ports.iter().map(|p| ("port", &p.name)))
        {
            if !out.iter().any(|(_, t)| t == name.1) {
                let span = g.map_or(mesh_span.clone(), |g| g.span());
                let item = if name.0 == "load" {
                    Item::Load(name.1.clone())
                } else {
                    Item::Port(name.1.clone())
                };
                return Err(self.missing(
                    span,
                    &item,
                    "mesh.groups",
                    &format!(
                        "with an imported mesh every {} needs a physical group: add \
                         \"<group name>\" = \"{}\" to [mesh.groups]",
                        name.0, name.1
                    ),
                ));
            }
        }
        Ok(out)
    }

    fn solve(&self, rs: Option<&Spanned<RawSolve>>) -> Res<SolveSettings> {
        let item = Item::Solve;
        let Some(rs) = rs else {
            return Ok(SolveSettings {
                target: DEFAULT_TARGET_GHZ,
                band: None,
                count: Some(DEFAULT_COUNT),
            });
        };
        let s = rs.get_ref();
        let target = match &s.target {
            None => DEFAULT_TARGET_GHZ,
            Some(t) => self.positive(t, &item, "target", " (GHz)")?,
        };
        let band = match &s.band {
            None => None,
            Some(b) => {
                let [lo, hi]: [f64; 2] = self.array(b, &item, "band", "[lo, hi] in GHz")?;
                if lo <= 0.0 || lo >= hi {
                    return Err(self.invalid(
                        b.span(),
                        &item,
                        "band",
                        fmt_list(&[lo, hi]),
                        "needs 0 < lo < hi (GHz)",
                    ));
                }
                Some([lo, hi])
            }
        };
        let count = match &s.count {
            None if band.is_none() => Some(DEFAULT_COUNT),
            None => None,
            Some(c) => {
                let n = *c.get_ref();
                if n < 1 {
                    return Err(self.invalid(
                        c.span(),
                        &item,
                        "count",
                        n,
                        "must be at least 1 mode",
                    ));
                }
                Some(usize::try_from(n).map_err(|_| {
                    self.invalid(c.span(), &item, "count", n, "is too large for this machine")
                })?)
            }
        };
        Ok(SolveSettings {
            target,
            band,
            count,
        })
    }
}

/// Adds what to write to the TOML reader's "missing field" messages.
fn with_hint(message: &str) -> String {
    let Some(rest) = message.strip_prefix("missing field `") else {
        return message.to_string();
    };
    let field = rest.trim_end_matches('`');
    let hint = match field {
        "cavity" => "add a [cavity] table with shape, size (box) or radius and height (cylinder), and walls",
        "shape" => "use shape = \"box\" or \"cylinder\"",
        "walls" => "use walls = a metal name (\"copper\", \"aluminium\", \"stainless steel 304\"), \"pec\", or { conductivity = .. } in S/m",
        "name" => "every [[load]] needs name = \"...\"",
        "material" => "use material = a built-in name such as \"water\", or { permittivity = .., loss_tangent = .. }",
        "wall" => "a port needs wall = \"-x\" .. \"+z\" (box) or \"top\", \"bottom\", \"side\" (cylinder)",
        "center" => "a port needs center = [u, v], its position in the wall's two in-plane coordinates (mm)",
        "width" => "a port needs width = broad side in mm (WR-340: 86.36)",
        "height" => "a port needs height = narrow side in mm (WR-340: 43.18)",
        _ => return message.to_string(),
    };
    format!("{message}; {hint}")
}

/// A TOML number as f64 (integers are accepted for convenience).
fn number(v: &toml::Value) -> Option<f64> {
    match v {
        toml::Value::Float(x) => Some(*x),
        toml::Value::Integer(i) => Some(*i as f64),
        _ => None,
    }
}

/// Geometric tolerance for containment and overlap tests: 1e-9 of the cavity's largest
/// extent. Shapes are given in mm with a handful of digits, so a load that "touches" a
/// wall or another load (a bowl standing on a plate) may differ from exact contact by
/// rounding only; a relative tolerance that small accepts such contact and nothing else.
fn tolerance(cavity: &CavityShape) -> f64 {
    1e-9 * cavity.scale()
}

/// Overlap length of [a0, a1] and [b0, b1] (negative or zero when disjoint or touching).
fn interval_overlap(a0: f64, a1: f64, b0: f64, b1: f64) -> f64 {
    a1.min(b1) - a0.max(b0)
}

/// `Some(description)` when two load shapes share volume beyond `tol`; touching is allowed.
fn overlap(a: &LoadShape, b: &LoadShape, tol: f64) -> Option<String> {
    let [az0, az1] = a.z_range();
    let [bz0, bz1] = b.z_range();
    if interval_overlap(az0, az1, bz0, bz1) <= tol {
        return None;
    }
    let zdesc = format!("both occupy z = {} .. {} mm", az0.max(bz0), az1.min(bz1));
    match (*a, *b) {
        (
            LoadShape::Box {
                min: amin,
                max: amax,
            },
            LoadShape::Box {
                min: bmin,
                max: bmax,
            },
        ) => {
            let ov = (0..2).all(|i| interval_overlap(amin[i], amax[i], bmin[i], bmax[i]) > tol);
            ov.then(|| format!("their footprints intersect and {zdesc}"))
        }
        (
            LoadShape::Cylinder {
                center: ca,
                radius: ra,
                ..
            },
            LoadShape::Cylinder {
                center: cb,
                radius: rb,
                ..
            },
        ) => {
            let d = (ca[0] - cb[0]).hypot(ca[1] - cb[1]);
            (d < ra + rb - tol).then(|| {
                format!(
                    "their axes are {d:.3} mm apart, less than the radii sum {} mm, and {zdesc}",
                    ra + rb
                )
            })
        }
        (LoadShape::Cylinder { center, radius, .. }, LoadShape::Box { min, max })
        | (LoadShape::Box { min, max }, LoadShape::Cylinder { center, radius, .. }) => {
            // Distance from the circle's centre to the nearest point of the rectangle.
            let dx = (min[0] - center[0]).max(0.0).max(center[0] - max[0]);
            let dy = (min[1] - center[1]).max(0.0).max(center[1] - max[1]);
            let d = dx.hypot(dy);
            (d < radius - tol).then(|| {
                format!(
                    "the circle (radius {radius} mm) reaches {:.3} mm into the box footprint and {zdesc}",
                    radius - d
                )
            })
        }
    }
}
