//! Physical groups of the file onto the geometry's regions, walls and ports.

use super::parse::RawMsh;
use super::ImportError;
use crate::geometry::names::escaped;
use crate::geometry::MeshImport;
use std::collections::{BTreeSet, HashMap};
use std::path::Path;

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub(super) enum Target {
    Region(u32),
    Wall,
    Port(usize),
}

pub(super) struct Builder<'a> {
    pub(super) path: &'a Path,
    pub(super) raw: &'a RawMsh,
    pub(super) import: &'a MeshImport,
    pub(super) load_names: &'a [String],
    pub(super) port_names: &'a [String],
}

impl Builder<'_> {
    pub(super) fn mesh_err(&self, message: String) -> ImportError {
        ImportError::Mesh {
            path: self.path.to_path_buf(),
            message: escaped(&message),
        }
    }

    pub(super) fn line_err(&self, line: usize, message: String) -> ImportError {
        ImportError::Syntax {
            path: self.path.to_path_buf(),
            line: line.max(1),
            message: escaped(&message),
        }
    }

    pub(super) fn group_name(&self, dim: u8, tag: i64) -> String {
        match self.raw.physical_names.get(&(dim, tag)) {
            Some((name, _)) => name.clone(),
            None => tag.to_string(),
        }
    }

    pub(super) fn choices(&self) -> String {
        let quote = |v: &[String]| {
            if v.is_empty() {
                "none".to_string()
            } else {
                v.iter()
                    .map(|s| format!("\"{s}\""))
                    .collect::<Vec<_>>()
                    .join(", ")
            }
        };
        format!(
            "\"air\", \"wall\", a load ({}) or a port ({})",
            quote(self.load_names),
            quote(self.port_names)
        )
    }

    pub(super) fn resolve_target(&self, target: &str) -> Option<Target> {
        if target == "air" {
            return Some(Target::Region(0));
        }
        if target == "wall" {
            return Some(Target::Wall);
        }
        if let Some(i) = self.load_names.iter().position(|n| n == target) {
            return u32::try_from(i + 1).ok().map(Target::Region);
        }
        self.port_names
            .iter()
            .position(|n| n == target)
            .map(Target::Port)
    }

    /// Every physical group (dim 2 or 3) present in the file, from names and entities.
    pub(super) fn groups_in_file(&self) -> BTreeSet<(u8, i64)> {
        let mut set: BTreeSet<(u8, i64)> = self
            .raw
            .physical_names
            .keys()
            .copied()
            .filter(|&(d, _)| d >= 2)
            .collect();
        for (&(d, _), phys) in &self.raw.entity_physicals {
            if d >= 2 {
                set.extend(phys.iter().map(|&p| (d, p)));
            }
        }
        set
    }

    /// Target of each physical group of dimension 2 or 3 (`None`: not mapped).
    pub(super) fn group_targets(&self) -> Result<HashMap<(u8, i64), Option<Target>>, ImportError> {
        let in_file = self.groups_in_file();
        let names: BTreeSet<(u8, String)> = in_file
            .iter()
            .map(|&(d, t)| (d, self.group_name(d, t)))
            .collect();
        let mut explicit: HashMap<&str, Target> = HashMap::new();
        for (group, target) in &self.import.groups {
            let t = self.resolve_target(target).ok_or_else(|| {
                self.mesh_err(format!(
                    "[mesh.groups] maps group \"{group}\" to \"{target}\", which is none of {}",
                    self.choices()
                ))
            })?;
            if !names.iter().any(|(_, n)| n == group) {
                let available: Vec<String> = names
                    .iter()
                    .map(|(d, n)| {
                        format!("\"{n}\" ({})", if *d == 3 { "volume" } else { "surface" })
                    })
                    .collect();
                return Err(self.mesh_err(format!(
                    "[mesh.groups] names group \"{group}\", but the file has no volume or \
                     surface physical group of that name (it has: {})",
                    if available.is_empty() {
                        "none".to_string()
                    } else {
                        available.join(", ")
                    }
                )));
            }
            explicit.insert(group.as_str(), t);
        }
        let fits = |dim: u8, t: Target| match t {
            Target::Region(_) => dim == 3,
            Target::Wall | Target::Port(_) => dim == 2,
        };
        let mut out = HashMap::new();
        for &(dim, tag) in &in_file {
            let name = self.group_name(dim, tag);
            let target = match explicit.get(name.as_str()) {
                Some(&t) if fits(dim, t) => Some(t),
                Some(&t) => {
                    let other = if dim == 3 { 2 } else { 3 };
                    // The same name may label a surface and a volume; the mapping then
                    // applies to whichever it fits.
                    if names.contains(&(other, name.clone())) {
                        None
                    } else {
                        let (kind, allowed) = if dim == 3 {
                            ("a volume", "\"air\" or a load")
                        } else {
                            ("a surface", "\"wall\" or a port")
                        };
                        let shown = match t {
                            Target::Region(0) => "air".to_string(),
                            Target::Region(r) => {
                                format!("load \"{}\"", self.load_names[r as usize - 1])
                            }
                            Target::Wall => "wall".to_string(),
                            Target::Port(p) => format!("port \"{}\"", self.port_names[p]),
                        };
                        return Err(self.mesh_err(format!(
                            "[mesh.groups] maps \"{name}\", {kind} group, to {shown}; \
                             {kind} group can only map to {allowed}"
                        )));
                    }
                }
                None => self.resolve_target(&name).filter(|&t| fits(dim, t)),
            };
            out.insert((dim, tag), target);
        }
        Ok(out)
    }

    pub(super) fn region_name(&self, r: u32) -> String {
        match r {
            0 => "\"air\"".to_string(),
            r => format!("load \"{}\"", self.load_names[r as usize - 1]),
        }
    }

    pub(super) fn target_name(&self, t: Target) -> String {
        match t {
            Target::Region(r) => self.region_name(r),
            Target::Wall => "\"wall\"".to_string(),
            Target::Port(p) => format!("port \"{}\"", self.port_names[p]),
        }
    }
}
