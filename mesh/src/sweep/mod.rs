//! Parameter sweeps: a sweep file names a base geometry and parameters (dotted keys into
//! the geometry file with value lists); [`SweepFile::variants`] expands them into one
//! geometry document per combination and validates each with the geometry parser.
//!
//! Expansion: with `combine = "grid"` variant k of a sweep over parameters with
//! n_1 … n_P values takes value i_p of parameter p where k = Σ i_p Π_{q>p} n_q (the last
//! parameter varies fastest); with `"zip"` variant k takes the k-th value of every
//! parameter. A variant whose geometry is rejected keeps the geometry error beside its
//! parameter values; the others are unaffected.

pub mod error;
pub mod file;
pub mod key_path;

pub use error::SweepError;
pub use file::{Combine, Parameter, RunKind, SweepFile};

use crate::error::GeometryError;
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
}

impl SweepFile {
    /// The number of variants.
    pub fn variant_count(&self) -> usize {
        match self.combine {
            Combine::Grid => self.parameters.iter().map(|p| p.values.len()).product(),
            Combine::Zip => self.parameters[0].values.len(),
        }
    }

    /// The parameter value indices of variant `k` (see the module docs).
    pub fn value_indices(&self, k: usize) -> Vec<usize> {
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
        let values: Vec<Value> = self
            .value_indices(k)
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
        let text = toml::to_string(&doc).unwrap_or_default();
        let geometry = Geometry::from_toml_str(&text, Some(file));
        Variant {
            index: k,
            values,
            text,
            geometry,
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
