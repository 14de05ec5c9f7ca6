//! The raw (as written) form of a geometry file, read by serde. Every value that can be
//! wrong keeps its span for the message.

use serde::Deserialize;
use std::collections::BTreeMap;
use toml::Spanned;

// Raw (as written) form. Every value that can be wrong keeps its span for the message.

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawFile {
    pub(super) title: Option<Spanned<String>>,
    pub(super) cavity: Spanned<RawCavity>,
    #[serde(default)]
    pub(super) load: Vec<Spanned<RawLoad>>,
    #[serde(default)]
    pub(super) port: Vec<Spanned<RawPort>>,
    pub(super) mesh: Option<Spanned<RawMesh>>,
    pub(super) solve: Option<Spanned<RawSolve>>,
    pub(super) turntable: Option<Spanned<RawTurntable>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawTurntable {
    pub(super) center: Spanned<Vec<f64>>,
    pub(super) loads: Option<Spanned<Vec<Spanned<String>>>>,
    pub(super) steps: Option<Spanned<i64>>,
    pub(super) angles_deg: Option<Spanned<Vec<f64>>>,
    pub(super) grid_mm: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawCavity {
    pub(super) shape: Spanned<String>,
    pub(super) size: Option<Spanned<Vec<f64>>>,
    pub(super) radius: Option<Spanned<f64>>,
    pub(super) height: Option<Spanned<f64>>,
    pub(super) walls: Spanned<toml::Value>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawLoad {
    pub(super) name: Spanned<String>,
    pub(super) shape: Option<Spanned<String>>,
    pub(super) center: Option<Spanned<Vec<f64>>>,
    pub(super) radius: Option<Spanned<f64>>,
    pub(super) bottom: Option<Spanned<f64>>,
    pub(super) height: Option<Spanned<f64>>,
    pub(super) min: Option<Spanned<Vec<f64>>>,
    pub(super) max: Option<Spanned<Vec<f64>>>,
    pub(super) angle_deg: Option<Spanned<f64>>,
    pub(super) material: Spanned<toml::Value>,
    pub(super) temperature: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawPort {
    pub(super) name: Option<Spanned<String>>,
    pub(super) wall: Spanned<String>,
    pub(super) angle_deg: Option<Spanned<f64>>,
    pub(super) center: Spanned<Vec<f64>>,
    pub(super) width: Spanned<f64>,
    pub(super) height: Spanned<f64>,
    #[serde(default)]
    pub(super) rotated: bool,
    pub(super) power: Option<Spanned<f64>>,
    pub(super) phase_deg: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawMesh {
    pub(super) order: Option<Spanned<i64>>,
    pub(super) per_wavelength: Option<Spanned<f64>>,
    pub(super) max_size: Option<Spanned<f64>>,
    pub(super) import: Option<Spanned<String>>,
    pub(super) method: Option<Spanned<String>>,
    pub(super) unit_mm: Option<Spanned<f64>>,
    pub(super) groups: Option<Spanned<BTreeMap<String, Spanned<String>>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawSolve {
    pub(super) target: Option<Spanned<f64>>,
    pub(super) band: Option<Spanned<Vec<f64>>>,
    pub(super) count: Option<Spanned<i64>>,
}

/// Lenient second reading used only to say which load/port a TOML error sits in.
#[derive(Deserialize)]
pub(super) struct LooseFile {
    #[serde(default)]
    pub(super) load: Vec<Spanned<LooseNamed>>,
    #[serde(default)]
    pub(super) port: Vec<Spanned<LooseNamed>>,
}

#[derive(Deserialize)]
pub(super) struct LooseNamed {
    pub(super) name: Option<toml::Value>,
}

// ---------------------------------------------------------------------------------------
