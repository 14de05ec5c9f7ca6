//! Reading a geometry file: TOML text → raw form → validated [`Geometry`], the cavity,
//! its walls and the ports.

use super::bounds::{self, MAX_LENGTH_MM, MIN_LENGTH_MM};
use super::context::{fmt_list, number, quoted_list, Ctx, Res};
use super::ports::{below_cutoff, ports_overlap};
use super::raw::*;
use super::validate::{overlap, tolerance};
use super::*;
use crate::error::{GeometryError, Item};
use crate::input::{read_text_limited, InputError, MAX_GEOMETRY_BYTES};
use crate::material::{self, MaterialKind, MaterialValues};
use std::path::Path;
use toml::Spanned;

/// The allowed range of a cavity length (mm).
const LENGTHS: [f64; 2] = [MIN_LENGTH_MM, MAX_LENGTH_MM];

impl Geometry {
    /// Reads and validates a geometry file (at most [`MAX_GEOMETRY_BYTES`], UTF-8 text).
    /// Relative paths inside it (mesh import) are
    /// resolved against the file's directory.
    pub fn from_file(path: impl AsRef<Path>) -> Result<Geometry, GeometryError> {
        let path = path.as_ref();
        let text = read_text_limited(path, MAX_GEOMETRY_BYTES).map_err(|e| match e {
            InputError::Io(source) => GeometryError::Io {
                path: path.to_path_buf(),
                source,
            },
            other => GeometryError::Input {
                path: path.to_path_buf(),
                source: other,
            },
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
}

impl Ctx<'_> {
    pub(super) fn build(&self, raw: RawFile) -> Res<Geometry> {
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
            for (k, other) in ports.iter().enumerate() {
                let tol = tolerance(&cavity.shape);
                if let Some(detail) = ports_overlap(&port, other, &cavity.shape, tol) {
                    return Err(GeometryError::PortsOverlap {
                        at: self.at(rp.span()),
                        port: port.name,
                        other: other.name.clone(),
                        other_line: Some(port_lines[k]),
                        detail,
                    });
                }
            }
            if let Some(reason) = below_cutoff(&port, &solve) {
                return Err(self.invalid(
                    rp.get_ref().width.span(),
                    &Item::Port(port.name),
                    "width",
                    port.width,
                    reason,
                ));
            }
            ports.push(port);
            port_lines.push(self.line_of(rp.span().start));
        }

        for (port, rp) in ports.iter().zip(&raw.port) {
            if let Some(k) = loads.iter().position(|l| l.name == port.name) {
                return Err(GeometryError::DuplicateName {
                    at: self.at(rp.span()),
                    kind: "load and port",
                    name: port.name.clone(),
                    first_line: Some(load_lines[k]),
                });
            }
        }
        if let Some(title) = &raw.title {
            if let Err(allowed) = super::names::check_title(title.get_ref()) {
                return Err(self.invalid(
                    title.span(),
                    &Item::TopLevel,
                    "title",
                    format!("\"{}\"", super::names::escaped(title.get_ref())),
                    allowed,
                ));
            }
        }
        let mut mesh = self.mesh(raw.mesh.as_ref(), &loads, &ports)?;
        mesh.apply_defaults(solve.target);
        let turntable = raw
            .turntable
            .as_ref()
            .map(|t| self.turntable(t, &cavity.shape, &loads, &load_lines, &ports, &port_lines))
            .transpose()?;
        Ok(Geometry {
            title: raw.title.map(Spanned::into_inner).unwrap_or_default(),
            cavity,
            loads,
            ports,
            mesh,
            solve,
            turntable,
            source: self.file.clone(),
        })
    }

    pub(super) fn cavity(&self, rc: &Spanned<RawCavity>) -> Res<Cavity> {
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
                if let Some(allowed) = s
                    .iter()
                    .find_map(|&x| bounds::out_of_range(x, MIN_LENGTH_MM, MAX_LENGTH_MM, "mm"))
                {
                    return Err(self.invalid(
                        size.span(),
                        &item,
                        "size",
                        fmt_list(&s),
                        format!("every side {allowed}"),
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
                    radius: self.bounded(r, &item, "radius", LENGTHS, "mm")?,
                    height: self.bounded(h, &item, "height", LENGTHS, "mm")?,
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

    pub(super) fn walls(&self, w: &Spanned<toml::Value>) -> Res<WallMetal> {
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
                        name: super::names::escaped(name),
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

    /// The port's name as given (trimmed, checked) or "port<N>" by position.
    fn port_name(&self, rp: &Spanned<RawPort>, index: usize) -> Res<String> {
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
        if let Err(allowed) = super::names::check_name(&name) {
            let span = p.name.as_ref().map_or(rp.span(), |n| n.span());
            return Err(self.invalid(
                span,
                &Item::Port(format!("port{}", index + 1)),
                "name",
                format!("\"{}\"", super::names::escaped(&name)),
                allowed,
            ));
        }
        Ok(name)
    }

    pub(super) fn port(
        &self,
        rp: &Spanned<RawPort>,
        index: usize,
        cavity: &CavityShape,
    ) -> Res<Port> {
        let p = rp.get_ref();
        let name = self.port_name(rp, index)?;
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
        let power = match &p.power {
            Some(v) if !(v.get_ref().is_finite() && *v.get_ref() >= 0.0) => {
                return Err(self.invalid(
                    v.span(),
                    &item,
                    "power",
                    v.get_ref(),
                    "must be a finite forward power ≥ 0 (W)",
                ))
            }
            Some(v) => Some(*v.get_ref()),
            None => None,
        };
        let phase_deg = match &p.phase_deg {
            Some(v) => self.finite(v, &item, "phase_deg")?,
            None => 0.0,
        };
        let port = Port {
            name,
            wall,
            center,
            width,
            height,
            rotated: p.rotated,
            power,
            phase_deg,
        };
        self.port_fits(&port, cavity, rp.span())?;
        Ok(port)
    }
}
