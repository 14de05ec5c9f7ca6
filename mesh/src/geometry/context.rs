//! The parsing context: byte spans to file lines, and the typed errors that name file,
//! line, entry and value.

use super::names::escaped;
use super::raw::{LooseFile, LooseNamed};
use crate::error::{GeometryError, Item, Location};
use std::ops::Range;
use std::path::PathBuf;
use toml::Spanned;

pub(super) struct Ctx<'a> {
    pub(super) text: &'a str,
    pub(super) file: Option<PathBuf>,
}

pub(super) type Res<T> = Result<T, GeometryError>;

pub(super) fn fmt_list(v: &[f64]) -> String {
    let parts: Vec<String> = v.iter().map(|x| format!("{x}")).collect();
    format!("[{}]", parts.join(", "))
}

pub(super) fn quoted_list(names: &[&str]) -> String {
    names
        .iter()
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

impl Ctx<'_> {
    pub(super) fn line_of(&self, offset: usize) -> usize {
        let end = offset.min(self.text.len());
        self.text.as_bytes()[..end]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1
    }

    pub(super) fn at(&self, span: Range<usize>) -> Box<Location> {
        Box::new(Location {
            file: self.file.clone(),
            line: Some(self.line_of(span.start)),
        })
    }

    pub(super) fn toml_error(&self, e: &toml::de::Error) -> GeometryError {
        let span = e.span();
        let item = span.as_ref().and_then(|s| self.item_containing(s.start));
        GeometryError::Toml {
            at: Box::new(Location {
                file: self.file.clone(),
                line: span.map(|s| self.line_of(s.start)),
            }),
            item,
            message: escaped(&with_hint(e.message().trim())),
        }
    }

    /// Which `[[load]]`/`[[port]]` entry contains byte `offset`, by a lenient re-read.
    pub(super) fn item_containing(&self, offset: usize) -> Option<Item> {
        let loose: LooseFile = toml::from_str(self.text).ok()?;
        let name_of = |n: &LooseNamed| match &n.name {
            Some(toml::Value::String(s)) => Some(escaped(s)),
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

    pub(super) fn invalid(
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
            value: escaped(&value.to_string()),
            allowed: allowed.to_string(),
        }
    }

    pub(super) fn missing(
        &self,
        span: Range<usize>,
        item: &Item,
        key: &str,
        hint: &str,
    ) -> GeometryError {
        GeometryError::MissingKey {
            at: self.at(span),
            item: item.clone(),
            key: key.to_string(),
            hint: hint.to_string(),
        }
    }

    /// A length (mm) or similar quantity that must be finite and > 0.
    pub(super) fn positive(
        &self,
        v: &Spanned<f64>,
        item: &Item,
        key: &str,
        unit: &str,
    ) -> Res<f64> {
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

    /// A positive quantity that must also lie in `[lo, hi]` (see [`super::bounds`]).
    pub(super) fn bounded(
        &self,
        v: &Spanned<f64>,
        item: &Item,
        key: &str,
        [lo, hi]: [f64; 2],
        unit: &str,
    ) -> Res<f64> {
        let x = self.positive(v, item, key, &format!(" ({unit})"))?;
        match super::bounds::out_of_range(x, lo, hi, unit) {
            None => Ok(x),
            Some(allowed) => Err(self.invalid(v.span(), item, key, x, allowed)),
        }
    }

    pub(super) fn finite(&self, v: &Spanned<f64>, item: &Item, key: &str) -> Res<f64> {
        let x = *v.get_ref();
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self.invalid(v.span(), item, key, x, "must be a finite number"))
        }
    }

    pub(super) fn array<const N: usize>(
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
pub(super) fn number(v: &toml::Value) -> Option<f64> {
    match v {
        toml::Value::Float(x) => Some(*x),
        toml::Value::Integer(i) => Some(*i as f64),
        _ => None,
    }
}
