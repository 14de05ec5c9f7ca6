//! Geometry-file errors.
//!
//! Every variant carries a [`Location`] (file and 1-based line, when known); the messages
//! name the load or port involved, the offending value, and what is allowed instead.

use std::fmt;
use std::path::{Path, PathBuf};

/// Where in the input a problem sits.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Location {
    /// The geometry file, when the text came from one.
    pub file: Option<PathBuf>,
    /// 1-based line number, when known.
    pub line: Option<usize>,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.file, self.line) {
            (Some(p), Some(l)) => write!(f, "{}, line {l}", p.display()),
            (Some(p), None) => write!(f, "{}", p.display()),
            (None, Some(l)) => write!(f, "geometry, line {l}"),
            (None, None) => f.write_str("geometry"),
        }
    }
}

/// The part of the geometry file a problem belongs to.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Item {
    /// Top-level keys (`title`, table names).
    TopLevel,
    Cavity,
    /// A `[[load]]` entry, by name.
    Load(String),
    /// A `[[port]]` entry, by name (given or defaulted).
    Port(String),
    Mesh,
    Solve,
    /// The `[turntable]` table.
    Turntable,
}

impl fmt::Display for Item {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Item::TopLevel => f.write_str("top level"),
            Item::Cavity => f.write_str("[cavity]"),
            Item::Load(n) => write!(f, "load \"{n}\""),
            Item::Port(n) => write!(f, "port \"{n}\""),
            Item::Mesh => f.write_str("[mesh]"),
            Item::Solve => f.write_str("[solve]"),
            Item::Turntable => f.write_str("[turntable]"),
        }
    }
}

/// Shown after a TOML-level error when the entry it sits in is known.
fn in_item(item: &Option<Item>) -> String {
    match item {
        Some(i) => format!(" (in {i})"),
        None => String::new(),
    }
}

/// A rejected geometry file.
///
/// The location is boxed to keep `Result<_, GeometryError>` small.
#[derive(Debug, thiserror::Error)]
pub enum GeometryError {
    /// The file could not be read.
    #[error("cannot read geometry file {}: {source}", path.display())]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },

    /// The file is too large, or not text (see [`crate::input`]).
    #[error("cannot read geometry file {}: {source}", path.display())]
    Input {
        path: PathBuf,
        #[source]
        source: crate::input::InputError,
    },

    /// TOML syntax error, unknown key, wrong value type or missing required key, as
    /// reported by the TOML reader.
    #[error("{at}{}: {message}", in_item(item))]
    Toml {
        at: Box<Location>,
        item: Option<Item>,
        message: String,
    },

    /// A key that must be present for this entry is missing.
    #[error("{at}: {item}: missing key `{key}`; {hint}")]
    MissingKey {
        at: Box<Location>,
        item: Item,
        key: String,
        hint: String,
    },

    /// A value outside its allowed range or set; `allowed` says what would be accepted.
    #[error("{at}: {item}: {key} = {value} is not allowed: {allowed}")]
    InvalidValue {
        at: Box<Location>,
        item: Item,
        key: String,
        value: String,
        allowed: String,
    },

    /// A load names a material that is not in the built-in dielectric list.
    #[error(
        "{at}: load \"{load}\": unknown material \"{name}\"; built-in dielectrics: {known}; \
         or give a table: {{ permittivity = .., loss_tangent = .. }} (or loss_factor, or \
         conductivity in S/m)"
    )]
    UnknownMaterial {
        at: Box<Location>,
        load: String,
        name: String,
        known: String,
    },

    /// The cavity walls name a metal that is not in the built-in metal list.
    #[error(
        "{at}: [cavity]: unknown wall metal \"{name}\"; built-in metals: {known}; or \"pec\" \
         (lossless), or {{ conductivity = .. }} in S/m"
    )]
    UnknownMetal {
        at: Box<Location>,
        name: String,
        known: String,
    },

    /// A load reaches outside the cavity.
    #[error("{at}: load \"{load}\" reaches outside the cavity: {detail}; move or shrink it")]
    LoadOutsideCavity {
        at: Box<Location>,
        load: String,
        detail: String,
    },

    /// Two loads share volume (touching faces are allowed).
    #[error(
        "{at}: load \"{load}\" overlaps load \"{other}\" (line {}): {detail}; loads may touch \
         but not overlap", other_line.map_or("?".to_string(), |l| l.to_string())
    )]
    LoadsOverlap {
        at: Box<Location>,
        load: String,
        other: String,
        other_line: Option<usize>,
        detail: String,
    },

    /// A load riding on the turntable reaches into a port's aperture at some angle.
    #[error(
        "{at}: load \"{load}\" reaches into the aperture of port \"{port}\" (line {}): \
         {detail}; a load on the plate must stay clear of the feed apertures (it may touch \
         their rims)", port_line.map_or("?".to_string(), |l| l.to_string())
    )]
    LoadAtPort {
        at: Box<Location>,
        load: String,
        port: String,
        port_line: Option<usize>,
        detail: String,
    },

    /// Two port apertures share wall area (touching edges are allowed).
    #[error(
        "{at}: port \"{port}\" overlaps port \"{other}\" (line {}): {detail}; ports may touch \
         but not overlap", other_line.map_or("?".to_string(), |l| l.to_string())
    )]
    PortsOverlap {
        at: Box<Location>,
        port: String,
        other: String,
        other_line: Option<usize>,
        detail: String,
    },

    /// A port rectangle does not lie within its wall.
    #[error("{at}: port \"{port}\" does not fit on wall \"{wall}\": {detail}")]
    PortDoesNotFit {
        at: Box<Location>,
        port: String,
        wall: String,
        detail: String,
    },

    /// A port names a wall that the cavity's shape does not have.
    #[error(
        "{at}: port \"{port}\": wall = \"{wall}\" is not a wall of a {shape} cavity; allowed: \
         {allowed}"
    )]
    PortWrongWall {
        at: Box<Location>,
        port: String,
        wall: String,
        shape: String,
        allowed: String,
    },

    /// Two loads or two ports share a name.
    #[error(
        "{at}: {kind} name \"{name}\" is used twice (first on line {}); names must be unique",
        first_line.map_or("?".to_string(), |l| l.to_string())
    )]
    DuplicateName {
        at: Box<Location>,
        /// "load", "port" or "load and port".
        kind: &'static str,
        name: String,
        first_line: Option<usize>,
    },

    /// A placement the turning plate reaches is invalid (a load leaves the cavity or
    /// meets another load at this angle).
    #[error(
        "{at}: [turntable] at plate angle {angle_deg}°: {source}; move the plate's center or \
         the loads, or leave this angle out"
    )]
    AtPlateAngle {
        at: Box<Location>,
        angle_deg: f64,
        source: Box<GeometryError>,
    },

    /// A `[mesh.groups]` entry maps to something that is not "air", "wall", a load or a port.
    #[error(
        "{at}: [mesh.groups]: physical group \"{group}\" maps to \"{target}\"; allowed: \
         {allowed}"
    )]
    UnknownGroupTarget {
        at: Box<Location>,
        group: String,
        target: String,
        allowed: String,
    },
}

impl GeometryError {
    /// Where the problem is (file and line), if known; `None` for read errors.
    pub fn location(&self) -> Option<&Location> {
        use GeometryError::*;
        match self {
            Io { .. } | Input { .. } => None,
            Toml { at, .. }
            | MissingKey { at, .. }
            | InvalidValue { at, .. }
            | UnknownMaterial { at, .. }
            | UnknownMetal { at, .. }
            | LoadOutsideCavity { at, .. }
            | LoadsOverlap { at, .. }
            | LoadAtPort { at, .. }
            | PortsOverlap { at, .. }
            | PortDoesNotFit { at, .. }
            | PortWrongWall { at, .. }
            | DuplicateName { at, .. }
            | AtPlateAngle { at, .. }
            | UnknownGroupTarget { at, .. } => Some(at.as_ref()),
        }
    }

    /// 1-based line number of the problem, if known.
    pub fn line(&self) -> Option<usize> {
        self.location().and_then(|l| l.line)
    }

    /// The geometry file, if known.
    pub fn file(&self) -> Option<&Path> {
        match self {
            GeometryError::Io { path, .. } | GeometryError::Input { path, .. } => Some(path),
            _ => self.location().and_then(|l| l.file.as_deref()),
        }
    }
}
