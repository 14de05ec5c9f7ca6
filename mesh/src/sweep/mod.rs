//! Parameter sweeps: a sweep file names a base geometry and parameters (dotted keys into
//! the geometry file with value lists); [`SweepFile::variants`] expands them into one
//! geometry document per combination and validates each with the geometry parser.
//!
//! Expansion: with `combine = "grid"` variant k of a sweep over parameters with
//! n_1 … n_P values takes value i_p of parameter p where k = Σ i_p Π_{q>p} n_q (the last
//! parameter varies fastest); with `"zip"` variant k takes the k-th value of every
//! parameter. A variant whose geometry is rejected keeps the geometry error beside its
//! parameter values; the others are unaffected.
//!
//! A base geometry with a `[turntable]` adds one more, fastest-varying axis: the plate
//! angles. Variant k is parameter combination ⌊k/A⌋ at angle k mod A (A angles); its
//! geometry is the combination's geometry (validated at every angle, see
//! [`crate::geometry::turntable`]) with the riding loads turned to that angle and the
//! `[turntable]` table removed, so each variant is a plain geometry.

pub mod error;
pub mod file;
pub mod key_path;

pub use error::SweepError;
pub use file::{Combine, Parameter, RunKind, SweepFile};

use crate::error::GeometryError;
use crate::geometry::turntable::document_at_angle;
use crate::geometry::{LoadShape, Turntable};
use crate::Geometry;
use std::path::{Path, PathBuf};
use toml::Value;

/// One expanded variant.
#[derive(Debug)]
pub struct Variant {
    /// 0-based position in the expansion.
    pub index: usize,
    /// The value of each parameter (parameter order).
    pub values: Vec<Value>,
    /// The variant's geometry file text (the base with the values written in).
    pub text: String,
    /// The validated geometry, or why it is rejected.
    pub geometry: Result<Geometry, GeometryError>,
    /// With a turntable: where this variant sits on the plate (None when rejected).
    pub plate: Option<PlateVariant>,
}

/// The column of the plate angle in the sweep's tables.
pub const PLATE_ANGLE_KEY: &str = "turntable.angle_deg";

/// A variant of a turntable sweep: one plate angle of one parameter combination.
#[derive(Clone, Debug)]
pub struct PlateVariant {
    /// The plate angle (degrees).
    pub angle_deg: f64,
    /// Position of the angle in the turntable's list.
    pub angle_index: usize,
    /// The parameter combination (0-based; the variants of one combination differ in the
    /// angle only).
    pub group: usize,
    /// The combination's turntable.
    pub turntable: Turntable,
    /// The riding loads at plate angle 0 (name, shape), in file order: the load frame.
    pub loads: Vec<(String, LoadShape)>,
}

impl SweepFile {
    /// The number of variants.
    pub fn variant_count(&self) -> usize {
        self.combination_count() * self.angle_count()
    }

    /// The number of parameter combinations (1 for a turntable without parameters).
    pub fn combination_count(&self) -> usize {
        match self.combine {
            _ if self.parameters.is_empty() => 1,
            Combine::Grid => self.parameters.iter().map(|p| p.values.len()).product(),
            Combine::Zip => self.parameters[0].values.len(),
        }
    }

    /// The number of plate angles (1 without a turntable).
    pub fn angle_count(&self) -> usize {
        self.plate_angles.as_ref().map_or(1, Vec::len)
    }

    /// The table columns of the variant values: the parameter keys, then
    /// [`PLATE_ANGLE_KEY`] with a turntable.
    pub fn column_keys(&self) -> Vec<String> {
        let mut keys: Vec<String> = self.parameters.iter().map(|p| p.key.clone()).collect();
        if self.plate_angles.is_some() {
            keys.push(PLATE_ANGLE_KEY.to_string());
        }
        keys
    }

    /// The value indices of variant `k` (see the module docs): one per parameter, then
    /// the angle's with a turntable.
    pub fn value_indices(&self, k: usize) -> Vec<usize> {
        let a = self.angle_count();
        let mut idx = self.combination_indices(k / a);
        if self.plate_angles.is_some() {
            idx.push(k % a);
        }
        idx
    }

    /// The parameter value indices of combination `k`.
    fn combination_indices(&self, k: usize) -> Vec<usize> {
        match self.combine {
            Combine::Zip => vec![k; self.parameters.len()],
            Combine::Grid => {
                let mut rest = k;
                let mut idx = vec![0; self.parameters.len()];
                for (p, param) in self.parameters.iter().enumerate().rev() {
                    idx[p] = rest % param.values.len();
                    rest /= param.values.len();
                }
                idx
            }
        }
    }

    /// Expands and validates every variant; `file_of(k)` is where variant k's geometry
    /// will be written (named in its error messages).
    pub fn variants(&self, file_of: impl Fn(usize) -> PathBuf) -> Vec<Variant> {
        (0..self.variant_count())
            .map(|k| self.variant(k, &file_of(k)))
            .collect()
    }

    /// Variant `k` alone.
    pub fn variant(&self, k: usize, file: &Path) -> Variant {
        let indices = self.value_indices(k);
        let mut values: Vec<Value> = indices
            .iter()
            .zip(&self.parameters)
            .map(|(&i, p)| p.values[i].clone())
            .collect();
        let mut doc = self.base.clone();
        anchor_import(&mut doc, &self.geometry);
        for (p, v) in self.parameters.iter().zip(&values) {
            // Keys were checked against the base when the sweep file was read, and a value
            // never changes the path to another key.
            key_path::set(&mut doc, &p.key, v.clone())
                .expect("parameter keys are checked against the base geometry");
        }
        let Some(angles) = &self.plate_angles else {
            let text = toml::to_string(&doc).unwrap_or_default();
            let geometry = Geometry::from_toml_str(&text, Some(file));
            return Variant {
                index: k,
                values,
                text,
                geometry,
                plate: None,
            };
        };
        let angle_index = k % angles.len();
        let angle_deg = angles[angle_index];
        values.push(Value::Float(angle_deg));
        let whole = toml::to_string(&doc).unwrap_or_default();
        // The combination is validated with its turntable (every angle), then written
        // out at this angle.
        let g = match Geometry::from_toml_str(&whole, Some(file)) {
            Ok(g) => g,
            Err(e) => {
                return Variant {
                    index: k,
                    values,
                    text: whole,
                    geometry: Err(e),
                    plate: None,
                }
            }
        };
        let text = toml::to_string(&document_at_angle(&doc, &g, angle_deg)).unwrap_or_default();
        let geometry = Geometry::from_toml_str(&text, Some(file));
        let plate = match (&g.turntable, &geometry) {
            (Some(t), Ok(_)) => Some(PlateVariant {
                angle_deg,
                angle_index,
                group: k / angles.len(),
                turntable: t.clone(),
                loads: g
                    .loads
                    .iter()
                    .filter(|l| t.carries(&l.name))
                    .filter_map(|l| l.shape.map(|s| (l.name.clone(), s)))
                    .collect(),
            }),
            _ => None,
        };
        Variant {
            index: k,
            values,
            text,
            geometry,
            plate,
        }
    }
}

/// A relative `[mesh] import` path is relative to the base geometry; the variant's file
/// lives elsewhere, so the path is made absolute.
fn anchor_import(doc: &mut toml::Table, base: &Path) {
    let Some(Value::Table(mesh)) = doc.get_mut("mesh") else {
        return;
    };
    if let Some(Value::String(p)) = mesh.get_mut("import") {
        let path = Path::new(p.as_str());
        if path.is_relative() {
            let dir = base.parent().unwrap_or(Path::new(""));
            let joined = dir.join(path);
            let abs = std::fs::canonicalize(&joined).unwrap_or(joined);
            *p = abs.display().to_string();
        }
    }
}

/// A parameter value as plain text for tables and messages (`[160, 120]`, `210`).
pub fn value_text(v: &Value) -> String {
    match v {
        Value::String(s) => s.clone(),
        Value::Array(a) => format!(
            "[{}]",
            a.iter().map(value_text).collect::<Vec<_>>().join(", ")
        ),
        other => other.to_string(),
    }
}

/// A parameter value as one number for plots: the number itself, else `None`.
pub fn value_number(v: &Value) -> Option<f64> {
    match v {
        Value::Float(f) => Some(*f),
        Value::Integer(i) => Some(*i as f64),
        _ => None,
    }
}

#[cfg(test)]
mod tests;
