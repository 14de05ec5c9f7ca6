//! Reading a sweep file: base geometry, commands to run, parameters.
//!
//! ```toml
//! title = "..."                       # optional
//! geometry = "empty_box.toml"         # base geometry, relative to this file
//! run = ["modes", "drive"]            # one or both, in this order per variant
//! combine = "grid"                    # "grid" (default: every combination) or "zip"
//! [options]                           # optional command-line options per command
//! modes = ["--order", "1", "--no-fields"]
//! drive = ["--at", "2.45"]
//! [[parameter]]
//! key = "cavity.size.2"               # dotted path into the geometry (see key_path)
//! range = { from = 180.0, to = 220.0, steps = 5 }   # or: values = [180.0, 200.0]
//! ```
//!
//! When the base geometry has a `[turntable]`, every parameter combination runs at each of
//! its angles (a column `turntable.angle_deg`, varying fastest), and `[[parameter]]` may be
//! left out: the sweep is then over the plate angles alone.

use super::error::SweepError;
use super::key_path;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use toml::{Spanned, Table, Value};

/// Most variants one sweep may expand to (a guard against a mistyped step count; our own
/// limit, no source).
pub const MAX_VARIANTS: usize = 10_000;

/// A command run per variant.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum RunKind {
    Modes,
    Drive,
}

impl RunKind {
    pub fn name(self) -> &'static str {
        match self {
            RunKind::Modes => "modes",
            RunKind::Drive => "drive",
        }
    }
}

/// How the parameters' value lists combine into variants.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Combine {
    /// Every combination; the last parameter varies fastest.
    Grid,
    /// The i-th value of every parameter together (equal list lengths).
    Zip,
}

/// One swept key and its values (TOML values, as they are written into the geometry).
#[derive(Clone, Debug, PartialEq)]
pub struct Parameter {
    pub key: String,
    pub values: Vec<Value>,
    /// Line of the `[[parameter]]` entry in the sweep file.
    pub line: usize,
}

/// A validated sweep file (variants are validated separately, see [`super::Variant`]).
#[derive(Clone, Debug)]
pub struct SweepFile {
    /// The sweep file.
    pub path: PathBuf,
    pub title: Option<String>,
    /// The base geometry file, resolved against the sweep file's folder.
    pub geometry: PathBuf,
    /// The base geometry as a TOML document (edited per variant).
    pub base: Table,
    pub run: Vec<RunKind>,
    /// Extra command-line options per command.
    pub options: BTreeMap<RunKind, Vec<String>>,
    pub combine: Combine,
    pub parameters: Vec<Parameter>,
    /// The plate angles (degrees) when the base geometry has a `[turntable]`: every
    /// parameter combination then runs at each angle (the angle varies fastest).
    pub plate_angles: Option<Vec<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSweep {
    title: Option<String>,
    geometry: Spanned<String>,
    run: Spanned<Vec<Spanned<String>>>,
    combine: Option<Spanned<String>>,
    #[serde(default)]
    options: BTreeMap<String, Spanned<Vec<String>>>,
    #[serde(default)]
    parameter: Vec<Spanned<RawParameter>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawParameter {
    key: Spanned<String>,
    values: Option<Vec<Value>>,
    range: Option<Spanned<RawRange>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRange {
    from: f64,
    to: f64,
    steps: usize,
}

struct Ctx<'a> {
    text: &'a str,
    file: &'a Path,
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

    fn invalid(
        &self,
        offset: usize,
        what: impl Into<String>,
        allowed: impl Into<String>,
    ) -> SweepError {
        SweepError::Invalid {
            file: self.file.to_path_buf(),
            line: self.line_of(offset),
            what: what.into(),
            allowed: allowed.into(),
        }
    }
}

impl SweepFile {
    /// Reads a sweep file and its base geometry's TOML; checks every parameter key
    /// against the base geometry.
    pub fn from_file(path: impl AsRef<Path>) -> Result<SweepFile, SweepError> {
        let path = path.as_ref();
        let text = std::fs::read_to_string(path).map_err(|source| SweepError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        SweepFile::from_toml_str(&text, path)
    }

    /// Parses sweep text; `path` names the file in messages and anchors the geometry path.
    pub fn from_toml_str(text: &str, path: &Path) -> Result<SweepFile, SweepError> {
        let cx = Ctx { text, file: path };
        let raw: RawSweep = toml::from_str(text).map_err(|e| SweepError::Toml {
            file: path.to_path_buf(),
            line: cx.line_of(e.span().map_or(0, |s| s.start)),
            message: e.message().to_string(),
        })?;
        let dir = path.parent().unwrap_or(Path::new(""));
        let geometry = dir.join(raw.geometry.get_ref());
        let base_text = std::fs::read_to_string(&geometry).map_err(|e| SweepError::Base {
            file: path.to_path_buf(),
            geometry: geometry.clone(),
            message: format!("cannot read it: {e}"),
        })?;
        let base: Table = base_text
            .parse()
            .map_err(|e: toml::de::Error| SweepError::Base {
                file: path.to_path_buf(),
                geometry: geometry.clone(),
                message: e.message().to_string(),
            })?;
        let run = run_kinds(&cx, &raw.run)?;
        let mut options = BTreeMap::new();
        for (name, list) in &raw.options {
            let kind = kind_of(name).ok_or_else(|| {
                cx.invalid(
                    list.span().start,
                    format!("[options] {name}"),
                    "options are given for \"modes\" or \"drive\"",
                )
            })?;
            if !run.contains(&kind) {
                return Err(cx.invalid(
                    list.span().start,
                    format!("[options] {name}"),
                    format!(
                        "\"{name}\" is not in run = [...]; add it there or remove these options"
                    ),
                ));
            }
            options.insert(kind, list.get_ref().clone());
        }
        let combine = match raw
            .combine
            .as_ref()
            .map(|c| (c.get_ref().as_str(), c.span()))
        {
            None | Some(("grid", _)) => Combine::Grid,
            Some(("zip", _)) => Combine::Zip,
            Some((other, span)) => {
                return Err(cx.invalid(
                    span.start,
                    format!("combine = \"{other}\""),
                    "use \"grid\" (every combination) or \"zip\" (i-th value with i-th value)",
                ))
            }
        };
        let plate_angles = plate_angles(path, &geometry, &base)?;
        let mut parameters = Vec::with_capacity(raw.parameter.len());
        for p in &raw.parameter {
            let param = parameter(&cx, &base, p)?;
            if plate_angles.is_some()
                && ["turntable.steps", "turntable.angles_deg"]
                    .iter()
                    .any(|k| param.key == *k || param.key.starts_with(&format!("{k}.")))
            {
                return Err(cx.invalid(
                    p.get_ref().key.span().start,
                    format!("parameter \"{}\"", param.key),
                    "the plate angles come from the base geometry's [turntable] and are the \
                     same for every variant; sweep other keys (turntable.center may be swept)",
                ));
            }
            parameters.push(param);
        }
        check_count(
            &cx,
            &raw.parameter,
            &parameters,
            combine,
            plate_angles.as_ref().map(Vec::len),
        )?;
        Ok(SweepFile {
            path: path.to_path_buf(),
            title: raw.title,
            geometry,
            base,
            run,
            options,
            combine,
            parameters,
            plate_angles,
        })
    }
}

/// The angles of the base geometry's `[turntable]` (its other keys are checked with each
/// variant's geometry).
fn plate_angles(
    file: &Path,
    geometry: &Path,
    base: &Table,
) -> Result<Option<Vec<f64>>, SweepError> {
    let Some(t) = base.get("turntable") else {
        return Ok(None);
    };
    let bad = |message: &str| SweepError::Base {
        file: file.to_path_buf(),
        geometry: geometry.to_path_buf(),
        message: format!("[turntable]: {message}"),
    };
    let number = |v: &Value| match v {
        Value::Float(x) => Some(*x),
        Value::Integer(i) => Some(*i as f64),
        _ => None,
    };
    match (t.get("steps"), t.get("angles_deg")) {
        (Some(Value::Integer(n)), None)
            if *n >= 1 && *n as u64 <= crate::geometry::turntable::MAX_ANGLES as u64 =>
        {
            Ok(Some(crate::geometry::Turntable::equal_steps(*n as usize)))
        }
        (None, Some(Value::Array(a))) if !a.is_empty() => a
            .iter()
            .map(|v| number(v).filter(|x| x.is_finite()))
            .collect::<Option<Vec<f64>>>()
            .map(Some)
            .ok_or_else(|| bad("angles_deg must be finite numbers (degrees)")),
        _ => Err(bad(
            "give either steps = N (1 or more equal angles over a turn) or angles_deg = [...]",
        )),
    }
}

fn kind_of(name: &str) -> Option<RunKind> {
    match name {
        "modes" => Some(RunKind::Modes),
        "drive" => Some(RunKind::Drive),
        _ => None,
    }
}

fn run_kinds(
    cx: &Ctx<'_>,
    run: &Spanned<Vec<Spanned<String>>>,
) -> Result<Vec<RunKind>, SweepError> {
    let mut kinds = Vec::new();
    for r in run.get_ref() {
        let kind = kind_of(r.get_ref()).ok_or_else(|| {
            cx.invalid(
                r.span().start,
                format!("run = \"{}\"", r.get_ref()),
                "the commands a sweep runs are \"modes\" and \"drive\"",
            )
        })?;
        if kinds.contains(&kind) {
            return Err(cx.invalid(
                r.span().start,
                format!("run = \"{}\"", r.get_ref()),
                "each command once",
            ));
        }
        kinds.push(kind);
    }
    if kinds.is_empty() {
        return Err(cx.invalid(
            run.span().start,
            "run = []",
            "name at least one command: [\"modes\"], [\"drive\"] or both",
        ));
    }
    Ok(kinds)
}

/// One parameter: its key checked against the base geometry, its value list expanded.
fn parameter(
    cx: &Ctx<'_>,
    base: &Table,
    p: &Spanned<RawParameter>,
) -> Result<Parameter, SweepError> {
    let rp = p.get_ref();
    let start = p.span().start;
    let key = rp.key.get_ref().clone();
    let existing = key_path::get(base, &key).map_err(|reason| SweepError::KeyPath {
        file: cx.file.to_path_buf(),
        line: cx.line_of(rp.key.span().start),
        key: key.clone(),
        reason,
    })?;
    let values = match (&rp.values, &rp.range) {
        (Some(v), None) => v.clone(),
        (None, Some(r)) => {
            let rr = r.get_ref();
            if !(rr.from.is_finite() && rr.to.is_finite()) || rr.steps == 0 {
                return Err(cx.invalid(
                    r.span().start,
                    format!("parameter \"{key}\": range"),
                    "from and to finite numbers, steps at least 1",
                ));
            }
            let integer = matches!(existing, Some(Value::Integer(_)));
            range_values(rr, integer)
        }
        _ => {
            return Err(cx.invalid(
                start,
                format!("parameter \"{key}\""),
                "give either values = [...] or range = { from, to, steps }",
            ))
        }
    };
    if values.is_empty() {
        return Err(cx.invalid(
            start,
            format!("parameter \"{key}\": values = []"),
            "at least one value",
        ));
    }
    Ok(Parameter {
        key,
        values,
        line: cx.line_of(start),
    })
}

/// `steps` evenly spaced values from `from` to `to` (both included); integers when the
/// key holds an integer and every value is whole.
fn range_values(r: &RawRange, integer: bool) -> Vec<Value> {
    let vals: Vec<f64> = (0..r.steps)
        .map(|i| {
            if r.steps == 1 {
                r.from
            } else {
                r.from + (r.to - r.from) * i as f64 / (r.steps - 1) as f64
            }
        })
        .collect();
    if integer && vals.iter().all(|v| v.fract() == 0.0) {
        vals.iter().map(|&v| Value::Integer(v as i64)).collect()
    } else {
        vals.into_iter().map(Value::Float).collect()
    }
}

fn check_count(
    cx: &Ctx<'_>,
    raw: &[Spanned<RawParameter>],
    params: &[Parameter],
    combine: Combine,
    angles: Option<usize>,
) -> Result<(), SweepError> {
    if params.is_empty() {
        // A turntable alone is a sweep over its angles (at most MAX_ANGLES).
        return match angles {
            Some(_) => Ok(()),
            None => Err(cx.invalid(
                0,
                "no [[parameter]]",
                "a sweep needs at least one [[parameter]] with key and values or range, \
                 or a base geometry with a [turntable]",
            )),
        };
    }
    let count = match combine {
        Combine::Grid => params
            .iter()
            .map(|p| p.values.len())
            .try_fold(1usize, |a, n| a.checked_mul(n)),
        Combine::Zip => {
            let n = params[0].values.len();
            if let Some((k, p)) = params.iter().enumerate().find(|(_, p)| p.values.len() != n) {
                return Err(cx.invalid(
                    raw[k].span().start,
                    format!("parameter \"{}\": {} values", p.key, p.values.len()),
                    format!("combine = \"zip\" needs equal lengths; the first parameter has {n}"),
                ));
            }
            Some(n)
        }
    }
    .and_then(|n| n.checked_mul(angles.unwrap_or(1)));
    match count {
        Some(n) if n <= MAX_VARIANTS => Ok(()),
        _ => Err(cx.invalid(
            raw[0].span().start,
            "the sweep's variant count",
            format!("at most {MAX_VARIANTS} variants"),
        )),
    }
}
