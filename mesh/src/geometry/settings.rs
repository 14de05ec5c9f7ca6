//! Reading the `[mesh]` and `[solve]` tables.

use super::bounds::*;
use super::context::{fmt_list, quoted_list, Ctx, Res};
use super::raw::*;
use super::*;
use crate::error::{GeometryError, Item};
use std::collections::BTreeMap;
use std::ops::Range;
use std::path::{Path, PathBuf};
use toml::Spanned;

/// The allowed range of a frequency (GHz).
const FREQUENCIES: [f64; 2] = [MIN_FREQUENCY_GHZ, MAX_FREQUENCY_GHZ];

impl Ctx<'_> {
    pub(super) fn mesh(
        &self,
        rm: Option<&Spanned<RawMesh>>,
        loads: &[Load],
        ports: &[Port],
    ) -> Res<MeshSettings> {
        let item = Item::Mesh;
        let Some(rm) = rm else {
            return Ok(MeshSettings {
                order: DEFAULT_ORDER,
                // Filled in by `apply_defaults` once the target is known.
                per_wavelength: default_per_wavelength(DEFAULT_ORDER),
                max_size: f64::NAN,
                per_wavelength_given: false,
                max_size_given: false,
                import: None,
                method: MeshMethod::default(),
            });
        };
        let m = rm.get_ref();
        let order = match &m.order {
            None => DEFAULT_ORDER,
            Some(o) => match *o.get_ref() {
                1 => 1,
                2 => 2,
                3 => 3,
                x => {
                    return Err(self.invalid(
                        o.span(),
                        &item,
                        "order",
                        x,
                        "element order must be 1, 2 or 3",
                    ))
                }
            },
        };
        let per_wavelength = match &m.per_wavelength {
            None => default_per_wavelength(order),
            Some(v) => self.bounded(
                v,
                &item,
                "per_wavelength",
                [1.0, MAX_PER_WAVELENGTH],
                "elements per wavelength",
            )?,
        };
        let max_size = match &m.max_size {
            None => f64::NAN,
            Some(v) => self.bounded(v, &item, "max_size", [MIN_LENGTH_MM, MAX_LENGTH_MM], "mm")?,
        };
        let method = match &m.method {
            None => MeshMethod::default(),
            Some(v) => match v.get_ref().trim() {
                "extruded" => MeshMethod::Extruded,
                "graded" => MeshMethod::Graded,
                x => {
                    return Err(self.invalid(
                        v.span(),
                        &item,
                        "method",
                        format!("\"{x}\""),
                        "\"extruded\" or \"graded\"",
                    ))
                }
            },
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
                for (key, v) in [
                    ("per_wavelength", &m.per_wavelength),
                    ("max_size", &m.max_size),
                ] {
                    if let Some(v) = v {
                        return Err(self.invalid(
                            v.span(),
                            &item,
                            key,
                            v.get_ref(),
                            "conflicts with import: the imported mesh fixes the element \
                             sizes, so this would be ignored; remove it, or remove the import",
                        ));
                    }
                }
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
            per_wavelength_given: m.per_wavelength.is_some(),
            max_size_given: m.max_size.is_some(),
            import,
            method,
        })
    }

    pub(super) fn groups(
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
                        group: super::names::escaped(group),
                        target: super::names::escaped(t),
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

    pub(super) fn solve(&self, rs: Option<&Spanned<RawSolve>>) -> Res<SolveSettings> {
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
            Some(t) => self.bounded(t, &item, "target", FREQUENCIES, "GHz")?,
        };
        let band = match &s.band {
            None => None,
            Some(b) => {
                let [lo, hi]: [f64; 2] = self.array(b, &item, "band", "[lo, hi] in GHz")?;
                if let Some(allowed) = [lo, hi]
                    .iter()
                    .find_map(|&f| out_of_range(f, MIN_FREQUENCY_GHZ, MAX_FREQUENCY_GHZ, "GHz"))
                {
                    return Err(self.invalid(
                        b.span(),
                        &item,
                        "band",
                        fmt_list(&[lo, hi]),
                        format!("both ends {allowed}"),
                    ));
                }
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
                if n > MAX_COUNT as i64 {
                    return Err(self.invalid(
                        c.span(),
                        &item,
                        "count",
                        n,
                        format!(
                            "must be at most {MAX_COUNT} modes (what a cavity solver can mean)"
                        ),
                    ));
                }
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
