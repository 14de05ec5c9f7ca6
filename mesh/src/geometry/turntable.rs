//! A turning plate (`[turntable]`): some loads ride on a plate that turns about a vertical
//! axis through `center = [x, y]` (mm).
//!
//! ```toml
//! [turntable]
//! center = [150.0, 130.0]     # the plate's axis (mm)
//! loads = ["dish"]            # loads riding on it (default: every load)
//! steps = 8                   # N angles 0, 360/N, … (degrees), or:
//! # angles_deg = [0.0, 90.0]  # explicit angles
//! grid_mm = 5.0               # spacing of the load-frame sample grid (default 5 mm)
//! ```
//!
//! At plate angle θ (counter-clockwise seen from above) a riding load is turned rigidly
//! about the plate axis: every point p of it goes to c + R(θ)(p − c), R(θ) the rotation
//! by θ about z. A box load's footprint centre moves so and its own `angle_deg` grows by
//! θ; a cylinder's centre moves so (its axis is vertical, so its shape is unchanged).
//! The file's placement is θ = 0. Every angle is validated as the file itself is (loads
//! inside the cavity, not overlapping any other load) before anything runs, and every
//! riding load must stay clear of every port's aperture at every angle (submodule `aperture`).

use super::context::{fmt_list, Ctx, Res};
use super::raw::RawTurntable;
use super::validate::{overlap, tolerance};
use super::*;
use crate::error::{GeometryError, Item};
use toml::{Spanned, Table, Value};

mod aperture;

/// Default spacing of the load-frame sample grid (mm): a few cells per wavelength in water
/// at 2.45 GHz (λ ≈ 13.8 mm; our choice, no source).
pub const DEFAULT_GRID_MM: f64 = 5.0;

/// Most angles one turntable may have (a guard against a mistyped step count; our own
/// limit, no source).
pub const MAX_ANGLES: usize = 3600;

/// A validated turntable.
#[derive(Clone, Debug, PartialEq)]
pub struct Turntable {
    /// The plate's axis (mm).
    pub center: [f64; 2],
    /// Names of the riding loads, in file order of the loads.
    pub loads: Vec<String>,
    /// The plate angles (degrees).
    pub angles_deg: Vec<f64>,
    /// Spacing of the load-frame sample grid (mm).
    pub grid_mm: f64,
}

/// `p` turned by `angle_deg` about the vertical axis through `center`.
pub fn rotate_about(p: [f64; 2], center: [f64; 2], angle_deg: f64) -> [f64; 2] {
    if angle_deg == 0.0 {
        return p;
    }
    let (s, c) = angle_deg.to_radians().sin_cos();
    let d = [p[0] - center[0], p[1] - center[1]];
    [
        center[0] + c * d[0] - s * d[1],
        center[1] + s * d[0] + c * d[1],
    ]
}

/// A load shape carried by the plate to `angle_deg` (see the module docs).
pub fn rotate_shape(shape: &LoadShape, center: [f64; 2], angle_deg: f64) -> LoadShape {
    match *shape {
        LoadShape::Cylinder {
            center: c,
            radius,
            bottom,
            height,
        } => LoadShape::Cylinder {
            center: rotate_about(c, center, angle_deg),
            radius,
            bottom,
            height,
        },
        LoadShape::Box {
            min,
            max,
            angle_deg: a,
        } => {
            let mid = [0.5 * (min[0] + max[0]), 0.5 * (min[1] + max[1])];
            let half = [0.5 * (max[0] - min[0]), 0.5 * (max[1] - min[1])];
            let m = rotate_about(mid, center, angle_deg);
            LoadShape::Box {
                min: [m[0] - half[0], m[1] - half[1], min[2]],
                max: [m[0] + half[0], m[1] + half[1], max[2]],
                angle_deg: a + angle_deg,
            }
        }
    }
}

impl Turntable {
    /// The angles of `steps` equal steps over one turn: 0, 360/N, …
    pub fn equal_steps(steps: usize) -> Vec<f64> {
        (0..steps)
            .map(|i| 360.0 * i as f64 / steps as f64)
            .collect()
    }

    /// Whether the load named `name` rides on the plate.
    pub fn carries(&self, name: &str) -> bool {
        self.loads.iter().any(|l| l == name)
    }
}

impl Geometry {
    /// This geometry with the plate turned to `angle_deg`: the riding loads moved and the
    /// turntable removed (a plain geometry for one angle). Unchanged without a turntable.
    pub fn at_plate_angle(&self, angle_deg: f64) -> Geometry {
        let mut g = self.clone();
        if let Some(t) = g.turntable.take() {
            for l in &mut g.loads {
                if let (true, Some(s)) = (t.carries(&l.name), &l.shape) {
                    l.shape = Some(rotate_shape(s, t.center, angle_deg));
                }
            }
        }
        g
    }
}

/// The geometry document with the plate turned to `angle_deg`: the riding loads' keys
/// rewritten (a box's `min`, `max` and `angle_deg`, a cylinder's `center`) from the
/// validated `geometry`, and `[turntable]` removed. The result reads back as
/// `geometry.at_plate_angle(angle_deg)`.
pub fn document_at_angle(doc: &Table, geometry: &Geometry, angle_deg: f64) -> Table {
    let mut out = doc.clone();
    out.remove("turntable");
    let turned = geometry.at_plate_angle(angle_deg);
    let Some(Value::Array(loads)) = out.get_mut("load") else {
        return out;
    };
    let floats = |v: &[f64]| Value::Array(v.iter().map(|&x| Value::Float(x)).collect());
    for entry in loads.iter_mut() {
        let Some(t) = entry.as_table_mut() else {
            continue;
        };
        let Some(name) = t.get("name").and_then(Value::as_str).map(str::trim) else {
            continue;
        };
        let carried = geometry
            .turntable
            .as_ref()
            .is_some_and(|tt| tt.carries(name));
        let Some(shape) = turned.load(name).and_then(|l| l.shape) else {
            continue;
        };
        if !carried {
            continue;
        }
        match shape {
            LoadShape::Cylinder { center, .. } => {
                t.insert("center".into(), floats(&center));
            }
            LoadShape::Box {
                min,
                max,
                angle_deg,
            } => {
                t.insert("min".into(), floats(&min));
                t.insert("max".into(), floats(&max));
                t.insert("angle_deg".into(), Value::Float(angle_deg));
            }
        }
    }
    out
}

impl Ctx<'_> {
    /// Reads `[turntable]` and checks every angle's placement.
    pub(super) fn turntable(
        &self,
        rt: &Spanned<RawTurntable>,
        cavity: &CavityShape,
        loads: &[Load],
        load_lines: &[usize],
        ports: &[Port],
        port_lines: &[usize],
    ) -> Res<Turntable> {
        let item = Item::Turntable;
        let t = rt.get_ref();
        let center: [f64; 2] =
            self.array(&t.center, &item, "center", "(x, y of the axis in mm)")?;
        let names: Vec<String> = match &t.loads {
            None => loads.iter().map(|l| l.name.clone()).collect(),
            Some(list) => {
                let mut names: Vec<String> = Vec::new();
                for n in list.get_ref() {
                    let name = n.get_ref().trim();
                    let known: Vec<&str> = loads.iter().map(|l| l.name.as_str()).collect();
                    if !known.contains(&name) {
                        return Err(self.invalid(
                            n.span(),
                            &item,
                            "loads",
                            format!("\"{}\"", super::names::escaped(name)),
                            if known.is_empty() {
                                "the file has no [[load]] to put on the plate".to_string()
                            } else {
                                format!(
                                    "name loads of this file: {}",
                                    super::context::quoted_list(&known)
                                )
                            },
                        ));
                    }
                    if names.iter().any(|m| m == name) {
                        return Err(self.invalid(
                            n.span(),
                            &item,
                            "loads",
                            format!("\"{name}\""),
                            "each load once",
                        ));
                    }
                    names.push(name.to_string());
                }
                if names.is_empty() {
                    return Err(self.invalid(
                        list.span(),
                        &item,
                        "loads",
                        "[]",
                        "name at least one load, or leave the key out for every load",
                    ));
                }
                // File order, so tables and files list loads as the geometry does.
                loads
                    .iter()
                    .filter(|l| names.contains(&l.name))
                    .map(|l| l.name.clone())
                    .collect()
            }
        };
        if names.is_empty() {
            return Err(self.invalid(
                rt.span(),
                &item,
                "loads",
                "(every load)",
                "the file has no [[load]] to put on the plate",
            ));
        }
        if let Some(l) = loads
            .iter()
            .find(|l| names.contains(&l.name) && l.shape.is_none())
        {
            return Err(self.invalid(
                rt.span(),
                &item,
                "loads",
                format!("\"{}\"", l.name),
                "a load of an imported mesh has no shape to turn; the plate needs \
                 loads given by shape",
            ));
        }
        let angles = match (&t.steps, &t.angles_deg) {
            (Some(s), None) => {
                let n = *s.get_ref();
                if n < 1 || n as u64 > MAX_ANGLES as u64 {
                    return Err(self.invalid(
                        s.span(),
                        &item,
                        "steps",
                        n,
                        format!("must be a whole number of angles from 1 to {MAX_ANGLES}"),
                    ));
                }
                Turntable::equal_steps(n as usize)
            }
            (None, Some(a)) => {
                let v = a.get_ref();
                if v.is_empty() || v.len() > MAX_ANGLES || v.iter().any(|x| !x.is_finite()) {
                    return Err(self.invalid(
                        a.span(),
                        &item,
                        "angles_deg",
                        fmt_list(v),
                        format!("must be 1 to {MAX_ANGLES} finite angles in degrees"),
                    ));
                }
                v.clone()
            }
            _ => {
                return Err(self.invalid(
                    rt.span(),
                    &item,
                    "steps",
                    "(steps and angles_deg)",
                    "give either steps = N (N equal angles over a turn) or angles_deg = [...]",
                ))
            }
        };
        let grid_mm = match &t.grid_mm {
            Some(g) => self.positive(g, &item, "grid_mm", " (mm)")?,
            None => DEFAULT_GRID_MM,
        };
        let tt = Turntable {
            center,
            loads: names,
            angles_deg: angles,
            grid_mm,
        };
        for &a in &tt.angles_deg {
            self.placement_at(rt, &tt, a, cavity, (loads, load_lines), (ports, port_lines))?;
        }
        Ok(tt)
    }

    /// The loads at plate angle `angle`: inside the cavity, apart from one another, and
    /// the riding ones clear of the port apertures.
    fn placement_at(
        &self,
        rt: &Spanned<RawTurntable>,
        tt: &Turntable,
        angle: f64,
        cavity: &CavityShape,
        (loads, load_lines): (&[Load], &[usize]),
        (ports, port_lines): (&[Port], &[usize]),
    ) -> Res<()> {
        let turned: Vec<Option<LoadShape>> = loads
            .iter()
            .map(|l| match (&l.shape, tt.carries(&l.name)) {
                (Some(s), true) => Some(rotate_shape(s, tt.center, angle)),
                (s, _) => *s,
            })
            .collect();
        let at_angle = |e: GeometryError| GeometryError::AtPlateAngle {
            at: self.at(rt.span()),
            angle_deg: angle,
            source: Box::new(e),
        };
        for (i, l) in loads.iter().enumerate() {
            if !tt.carries(&l.name) {
                continue;
            }
            let Some(s) = &turned[i] else { continue };
            self.load_inside(cavity, s, &l.name, rt.span())
                .map_err(at_angle)?;
            for (p, port) in ports.iter().enumerate() {
                if let Some(detail) = aperture::meets_aperture(s, port, cavity, tolerance(cavity)) {
                    return Err(at_angle(GeometryError::LoadAtPort {
                        at: self.at(rt.span()),
                        load: l.name.clone(),
                        port: port.name.clone(),
                        port_line: port_lines.get(p).copied(),
                        detail,
                    }));
                }
            }
            for (k, other) in loads.iter().enumerate() {
                if k == i || (tt.carries(&other.name) && k < i) {
                    continue;
                }
                if let Some(os) = &turned[k] {
                    if let Some(detail) = overlap(s, os, tolerance(cavity)) {
                        return Err(at_angle(GeometryError::LoadsOverlap {
                            at: self.at(rt.span()),
                            load: l.name.clone(),
                            other: other.name.clone(),
                            other_line: Some(load_lines[k]),
                            detail,
                        }));
                    }
                }
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests;
