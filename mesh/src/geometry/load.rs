//! Reading a load entry: name, shape and material.

use super::context::{fmt_list, number, quoted_list, Ctx, Res};
use super::raw::*;
use super::*;
use crate::error::{GeometryError, Item};
use crate::material::{self, Dielectric, Material, MaterialKind, MaterialValues, Thermal};
use std::ops::Range;
use toml::Spanned;

impl Ctx<'_> {
    pub(super) fn load(&self, rl: &Spanned<RawLoad>, importing: bool) -> Res<Load> {
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
        if let Err(allowed) = super::names::check_name(&name) {
            return Err(self.invalid(
                l.name.span(),
                &Item::TopLevel,
                "load name",
                format!("\"{}\"", super::names::escaped(&name)),
                allowed,
            ));
        }
        let item = Item::Load(name.clone());
        if importing {
            let keys = [
                ("shape", l.shape.as_ref().map(|v| v.span())),
                ("center", l.center.as_ref().map(|v| v.span())),
                ("radius", l.radius.as_ref().map(|v| v.span())),
                ("bottom", l.bottom.as_ref().map(|v| v.span())),
                ("height", l.height.as_ref().map(|v| v.span())),
                ("min", l.min.as_ref().map(|v| v.span())),
                ("max", l.max.as_ref().map(|v| v.span())),
                ("angle_deg", l.angle_deg.as_ref().map(|v| v.span())),
            ];
            if let Some((key, Some(span))) = keys.into_iter().find(|(_, s)| s.is_some()) {
                return Err(self.invalid(
                    span.clone(),
                    &item,
                    key,
                    self.text.get(span).unwrap_or(".."),
                    "conflicts with [mesh] import: the imported mesh gives every load its \
                     shape (its physical group), so a shape here would be ignored; remove \
                     shape and its keys, or remove the import",
                ));
            }
        }
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

    pub(super) fn load_shape<'a>(
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
                if let Some(v) = &l.angle_deg {
                    return Err(self.invalid(
                        v.span(),
                        item,
                        "angle_deg",
                        v.get_ref(),
                        "is for shape = \"box\" (a vertical cylinder turned about its axis is unchanged); remove it",
                    ));
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
                let angle_deg = match &l.angle_deg {
                    Some(a) => self.finite(a, item, "angle_deg")?,
                    None => 0.0,
                };
                Ok(LoadShape::Box {
                    min,
                    max,
                    angle_deg,
                })
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

    pub(super) fn load_material(&self, l: &RawLoad, item: &Item) -> Res<Material> {
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
                        name: super::names::escaped(name),
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
            (Some(t), Dielectric::WaterDebye { .. }) => self
                .model_temperature(
                    t,
                    item,
                    material::WATER_TEMPERATURE_RANGE_C,
                    ("the water model covers", " (liquid water)"),
                )
                .map(Material::water),
            (Some(t), Dielectric::IceMaetzler { .. }) => self
                .model_temperature(
                    t,
                    item,
                    material::ICE_TEMPERATURE_RANGE_C,
                    ("the ice model is used over", ""),
                )
                .map(Material::ice),
            (Some(t), _) => Err(self.invalid(
                t.span(),
                item,
                "temperature",
                t.get_ref(),
                "applies only to material = \"water\" or \"ice\"; other materials have fixed values",
            )),
        }
    }

    /// A load's `temperature` for a temperature-dependent model, checked against the
    /// model's range `[lo, hi]` (°C); the message reads "{prefix} lo..hi °C{suffix}".
    fn model_temperature(
        &self,
        t: &Spanned<f64>,
        item: &Item,
        [lo, hi]: [f64; 2],
        (prefix, suffix): (&str, &str),
    ) -> Res<f64> {
        let tc = *t.get_ref();
        if tc.is_finite() && (lo..=hi).contains(&tc) {
            Ok(tc)
        } else {
            Err(self.invalid(
                t.span(),
                item,
                "temperature",
                tc,
                format!("{prefix} {lo}..{hi} °C{suffix}"),
            ))
        }
    }

    pub(super) fn custom_material(
        &self,
        t: &toml::Table,
        span: Range<usize>,
        item: &Item,
    ) -> Res<Material> {
        const KEYS: [&str; 7] = [
            "permittivity",
            "loss_tangent",
            "loss_factor",
            "conductivity",
            "permeability",
            "density",
            "specific_heat",
        ];
        let allowed_keys = "permittivity (required), one of loss_tangent / loss_factor (eps'') / \
                            conductivity (S/m), optional permeability, and optional density \
                            (kg/m³) with specific_heat (J/(kg K))";
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
        let thermal = match (get("density")?, get("specific_heat")?) {
            (None, None) => None,
            (Some(rho), Some(cp)) if rho > 0.0 && cp > 0.0 => Some(Thermal {
                density: rho,
                specific_heat: cp,
                source: "given in the geometry file".to_string(),
            }),
            (Some(rho), Some(cp)) => {
                let (key, v) = if rho <= 0.0 {
                    ("density", rho)
                } else {
                    ("specific_heat", cp)
                };
                return Err(self.invalid(span, item, &format!("material.{key}"), v, "must be > 0"));
            }
            (rho, _) => {
                let (key, missing) = if rho.is_some() {
                    ("density", "specific_heat")
                } else {
                    ("specific_heat", "density")
                };
                return Err(self.invalid(
                    span,
                    item,
                    &format!("material.{key}"),
                    t.get(key).map_or(String::new(), |v| v.to_string()),
                    format!("give {missing} too: the temperature rise needs both"),
                ));
            }
        };
        Ok(Material {
            name: "custom".to_string(),
            dielectric: Dielectric::Constant {
                eps_real: eps,
                eps_imag,
                conductivity,
            },
            permeability,
            thermal,
        })
    }
}
