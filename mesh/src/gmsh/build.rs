//! From the raw tables to a [`TetMesh`]: regions from volume groups, the boundary
//! rebuilt from the tetrahedra (faces used once, [`crate::faces`]), port tags from the
//! file's surface triangles, and the checks that every load and port got elements.

use super::groups::{Builder, Target};
use super::ImportError;
use crate::faces::{sorted3, FaceTable};
use crate::geometry::bounds::MAX_LENGTH_MM;
use crate::tet_mesh::{dot, sub, BoundaryTag, RegionInfo, TetMesh};
use std::collections::HashMap;

/// Region of each element block (volume blocks) and surface target (surface blocks).
struct BlockTargets {
    region: Vec<Option<u32>>,
    surface: Vec<Option<Target>>,
}

/// Nodes kept (those used by tetrahedra) and the renumbering.
struct Compacted {
    nodes: Vec<[f64; 3]>,
    tets: Vec<[u32; 4]>,
    /// Old (file order) index → new index, `u32::MAX` when dropped.
    new_index: Vec<u32>,
    /// New index → old index.
    old_of_new: Vec<u32>,
}

impl Builder<'_> {
    pub(super) fn build(&self) -> Result<TetMesh, ImportError> {
        let raw = self.raw;
        if !(self.import.unit_mm.is_finite() && self.import.unit_mm > 0.0) {
            return Err(self.mesh_err(format!(
                "the length unit must be a positive number of mm, got {}",
                self.import.unit_mm
            )));
        }
        if raw.tets.is_empty() {
            return Err(self.mesh_err(
                "the file holds no 4-node tetrahedra (element type 4): export the volume \
                 mesh, not only the surface"
                    .into(),
            ));
        }
        let blocks = self.block_targets()?;
        let Compacted {
            nodes,
            tets,
            new_index,
            old_of_new,
        } = self.compact_nodes();
        let tet_region: Vec<u32> = raw
            .tet_info
            .iter()
            .map(|i| blocks.region[i.block as usize].unwrap_or(0))
            .collect();
        let mut mesh = TetMesh {
            nodes,
            tets,
            tet_region,
            boundary: Vec::new(),
            boundary_tag: Vec::new(),
            regions: std::iter::once("air")
                .chain(self.load_names.iter().map(String::as_str))
                .map(|n| RegionInfo {
                    name: n.to_string(),
                })
                .collect(),
        };
        self.check_extent(&mesh, &old_of_new)?;
        self.check_volumes(&mesh)?;
        let faces = FaceTable::new(&mesh.tets);
        if let Some(f) = faces.first_overshared() {
            let uses = faces.face(f);
            let lines: Vec<String> = uses
                .iter()
                .map(|u| raw.tet_info[u.tet as usize].line.to_string())
                .collect();
            let tags = uses[0]
                .key
                .map(|n| raw.node_tags[old_of_new[n as usize] as usize]);
            return Err(self.mesh_err(format!(
                "the face with nodes {} {} {} is shared by {} tetrahedra (lines {}); \
                 a valid volume mesh shares each face between at most two",
                tags[0],
                tags[1],
                tags[2],
                uses.len(),
                lines.join(", ")
            )));
        }
        let mut boundary_pos: HashMap<usize, usize> = HashMap::new();
        for (f, tri) in faces.boundary(&mesh.tets, &mesh.nodes) {
            boundary_pos.insert(f, mesh.boundary.len());
            mesh.boundary.push(tri);
            mesh.boundary_tag.push(BoundaryTag::Wall);
        }
        self.check_conformity(&mesh, &faces, &old_of_new)?;
        let port_faces = self.tag_ports(&mut mesh, &faces, &boundary_pos, &new_index, &blocks)?;
        self.check_counts(&mesh, &port_faces)?;
        Ok(mesh)
    }

    /// Region of each volume block, boundary target of each surface block.
    fn block_targets(&self) -> Result<BlockTargets, ImportError> {
        let raw = self.raw;
        let targets = self.group_targets()?;
        let any_volume_group = targets.keys().any(|&(d, _)| d == 3);
        let mut region_of: Vec<Option<u32>> = vec![None; raw.blocks.len()];
        let mut surface_of: Vec<Option<Target>> = vec![None; raw.blocks.len()];
        let mut block_has_tets = vec![false; raw.blocks.len()];
        for info in &raw.tet_info {
            block_has_tets[info.block as usize] = true;
        }
        for (b, &(dim, entity, line)) in raw.blocks.iter().enumerate() {
            let phys = raw
                .entity_physicals
                .get(&(dim, entity))
                .map(Vec::as_slice)
                .unwrap_or(&[]);
            if block_has_tets[b] {
                if phys.is_empty() {
                    if any_volume_group {
                        return Err(self.line_err(
                            line,
                            format!(
                                "the tetrahedra of volume entity {entity} belong to no \
                                 physical group; put every volume in a physical group \
                                 mapped to \"air\" or a load"
                            ),
                        ));
                    }
                    region_of[b] = Some(0);
                    continue;
                }
                let mut region = None;
                for &p in phys {
                    let name = self.group_name(3, p);
                    match targets.get(&(3, p)).copied().flatten() {
                        Some(Target::Region(r)) => {
                            if let Some(prev) = region.filter(|&prev| prev != r) {
                                return Err(self.line_err(
                                    line,
                                    format!(
                                        "volume entity {entity} is in groups mapped to two \
                                         regions ({} and {}); each volume must map to one",
                                        self.region_name(prev),
                                        self.region_name(r)
                                    ),
                                ));
                            }
                            region = Some(r);
                        }
                        _ => {
                            let at = raw.physical_names.get(&(3, p)).map_or(line, |&(_, l)| l);
                            return Err(self.line_err(
                                at,
                                format!(
                                    "volume group \"{name}\" (physical tag {p}) is not mapped \
                                     to a region: name it \"air\" or a load, or map it in \
                                     [mesh.groups] to \"air\" or a load ({})",
                                    if self.load_names.is_empty() {
                                        "the geometry has none".to_string()
                                    } else {
                                        self.load_names.join(", ")
                                    }
                                ),
                            ));
                        }
                    }
                }
                region_of[b] = region;
            } else if dim == 2 {
                let mut surface: Option<Target> = None;
                for &p in phys {
                    if let Some(t) = targets.get(&(2, p)).copied().flatten() {
                        if let Some(prev) = surface.filter(|&prev| prev != t) {
                            return Err(self.line_err(
                                line,
                                format!(
                                    "surface entity {entity} is in groups mapped to both {} \
                                     and {}",
                                    self.target_name(prev),
                                    self.target_name(t)
                                ),
                            ));
                        }
                        surface = Some(t);
                    }
                }
                surface_of[b] = surface;
            }
        }
        Ok(BlockTargets {
            region: region_of,
            surface: surface_of,
        })
    }

    /// Keeps only nodes used by tetrahedra, in file order, scaled to metres.
    fn compact_nodes(&self) -> Compacted {
        let raw = self.raw;
        let scale = self.import.unit_mm * 1e-3;
        let mut new_index = vec![u32::MAX; raw.nodes.len()];
        for t in &raw.tets {
            for &old in t {
                new_index[old as usize] = 0;
            }
        }
        let mut nodes = Vec::new();
        let mut old_of_new = Vec::new();
        for (old, slot) in new_index.iter_mut().enumerate() {
            if *slot == 0 {
                // At most as many new nodes as old ones, and old indices fit in u32.
                *slot = nodes.len() as u32;
                nodes.push(raw.nodes[old].map(|c| c * scale));
                old_of_new.push(old as u32);
            }
        }
        let tets: Vec<[u32; 4]> = raw
            .tets
            .iter()
            .map(|t| t.map(|old| new_index[old as usize]))
            .collect();
        Compacted {
            nodes,
            tets,
            new_index,
            old_of_new,
        }
    }

    /// Every coordinate within what a cavity solver can mean ([`MAX_LENGTH_MM`]).
    fn check_extent(&self, mesh: &TetMesh, old_of_new: &[u32]) -> Result<(), ImportError> {
        let limit = MAX_LENGTH_MM * 1e-3;
        for (n, p) in mesh.nodes.iter().enumerate() {
            if let Some(x) = p.iter().find(|x| x.abs() > limit) {
                let old = old_of_new[n] as usize;
                return Err(self.line_err(
                    self.raw.node_lines[old] as usize,
                    format!(
                        "node {} lies {:e} mm from the origin (unit_mm = {}), beyond the {} m \
                         a cavity solver can mean; check the coordinates and unit_mm",
                        self.raw.node_tags[old],
                        x.abs() * 1e3,
                        self.import.unit_mm,
                        limit
                    ),
                ));
            }
        }
        Ok(())
    }

    /// Degenerate tetrahedra make the element matrices singular.
    fn check_volumes(&self, mesh: &TetMesh) -> Result<(), ImportError> {
        let raw = self.raw;
        for (t, info) in raw.tet_info.iter().enumerate() {
            let p = mesh.tets[t].map(|i| mesh.nodes[i as usize]);
            let mut longest: f64 = 0.0;
            for a in 0..4 {
                for b in a + 1..4 {
                    let e = sub(p[b], p[a]);
                    longest = longest.max(dot(e, e).sqrt());
                }
            }
            // Node order is free (the solver uses |volume|); an inverted element shows
            // as a fold against its neighbours (`conformity.rs`).
            let six_v = mesh.signed_volume(t).abs() * 6.0;
            if six_v <= 1e-12 * longest.powi(3) {
                return Err(self.line_err(
                    info.line as usize,
                    format!(
                        "tetrahedron {} has zero volume (its four nodes are coplanar or repeated)",
                        info.tag
                    ),
                ));
            }
        }
        Ok(())
    }

    /// Checks the file's triangles against the faces of the tetrahedra and tags the
    /// boundary triangles of port groups; returns the face count of each port.
    fn tag_ports(
        &self,
        mesh: &mut TetMesh,
        faces: &FaceTable,
        boundary_pos: &HashMap<usize, usize>,
        new_index: &[u32],
        blocks: &BlockTargets,
    ) -> Result<Vec<usize>, ImportError> {
        let raw = self.raw;
        let mut port_set_by: HashMap<usize, (usize, u64)> = HashMap::new();
        let mut port_faces = vec![0usize; self.port_names.len()];
        for (tri, info) in raw.tris.iter().zip(&raw.tri_info) {
            let line = info.line as usize;
            let mut key = [0u32; 3];
            let mut on_tets = true;
            for (slot, &old) in key.iter_mut().zip(tri) {
                match new_index[old as usize] {
                    u32::MAX => on_tets = false,
                    n => *slot = n,
                }
            }
            let found = if on_tets {
                faces.find(sorted3(key))
            } else {
                None
            };
            let Some(face) = found else {
                return Err(self.line_err(
                    line,
                    format!(
                        "triangle {} is not a face of any tetrahedron: the surface mesh \
                         does not match the volume mesh",
                        info.tag
                    ),
                ));
            };
            let target = blocks.surface[info.block as usize];
            match (boundary_pos.get(&face), target) {
                (None, Some(t)) => {
                    return Err(self.line_err(
                        line,
                        format!(
                            "triangle {} of the {} group lies inside the mesh (between two \
                             tetrahedra); walls and ports must lie on the outer boundary",
                            info.tag,
                            self.target_name(t)
                        ),
                    ))
                }
                (Some(&pos), Some(Target::Port(p))) => {
                    if let Some(&(prev_line, prev_tag)) = port_set_by.get(&pos) {
                        if mesh.boundary_tag[pos] != BoundaryTag::Port(p) {
                            return Err(self.line_err(
                                line,
                                format!(
                                    "triangle {} puts a face in port \"{}\", but triangle \
                                     {prev_tag} (line {prev_line}) already put it in {}",
                                    info.tag,
                                    self.port_names[p],
                                    self.target_name(match mesh.boundary_tag[pos] {
                                        BoundaryTag::Port(q) => Target::Port(q),
                                        BoundaryTag::Wall => Target::Wall,
                                    })
                                ),
                            ));
                        }
                    } else {
                        port_set_by.insert(pos, (line, info.tag));
                        mesh.boundary_tag[pos] = BoundaryTag::Port(p);
                        port_faces[p] += 1;
                    }
                }
                _ => {}
            }
        }
        Ok(port_faces)
    }

    /// Every load and every port must receive at least one element.
    fn check_counts(&self, mesh: &TetMesh, port_faces: &[usize]) -> Result<(), ImportError> {
        let region_tets = {
            let mut c = vec![0usize; mesh.regions.len()];
            for &r in &mesh.tet_region {
                c[r as usize] += 1;
            }
            c
        };
        for (i, name) in self.load_names.iter().enumerate() {
            if region_tets[i + 1] == 0 {
                return Err(self.mesh_err(format!(
                    "load \"{name}\" has no tetrahedra: give its volume a physical group \
                     named \"{name}\" or map one to it in [mesh.groups]"
                )));
            }
        }
        for (i, name) in self.port_names.iter().enumerate() {
            if port_faces[i] == 0 {
                return Err(self.mesh_err(format!(
                    "port \"{name}\" has no boundary triangles: give its aperture a \
                     physical surface group named \"{name}\" or map one to it in [mesh.groups]"
                )));
            }
        }
        Ok(())
    }
}
