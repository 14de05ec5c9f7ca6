//! MSH 4.1 ASCII export.

use super::ExportError;
use crate::tet_mesh::{BoundaryTag, TetMesh};
use std::collections::BTreeMap;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::Path;

/// Writes `mesh` as an MSH 4.1 ASCII file, coordinates in metres.
///
/// Volume physical group `r + 1` is region `r`, named after it ("air" or the load).
/// Surface physical group 1 is "wall"; group `i + 2` is port `i`, named
/// `port_names[i]` when given, else `port<i>`. Only groups that have elements are
/// written. Importing the result with `unit_mm = 1000`, the same load and port names
/// and no `[mesh.groups]` gives back the same nodes, tetrahedra, regions and tags.
pub fn write_msh(path: &Path, mesh: &TetMesh, port_names: &[String]) -> Result<(), ExportError> {
    let io_err = |source| ExportError {
        path: path.to_path_buf(),
        source,
    };
    let file = File::create(path).map_err(io_err)?;
    let mut w = BufWriter::new(file);
    write_msh_body(&mut w, mesh, port_names)
        .and_then(|()| w.flush())
        .map_err(io_err)
}

fn msh_name(s: &str) -> String {
    // The format has no escape for a quote inside a name.
    s.replace('"', "'")
}

fn bbox(points: impl Iterator<Item = [f64; 3]>) -> [f64; 6] {
    let mut b = [
        f64::INFINITY,
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for p in points {
        for a in 0..3 {
            b[a] = b[a].min(p[a]);
            b[a + 3] = b[a + 3].max(p[a]);
        }
    }
    if b[0] > b[3] {
        b = [0.0; 6];
    }
    b
}

fn write_msh_body<W: Write>(
    w: &mut W,
    mesh: &TetMesh,
    port_names: &[String],
) -> std::io::Result<()> {
    // Volume groups: regions with tetrahedra, tag r + 1.
    let mut by_region: BTreeMap<u32, Vec<usize>> = BTreeMap::new();
    for (t, &r) in mesh.tet_region.iter().enumerate() {
        by_region.entry(r).or_default().push(t);
    }
    // Surface groups: wall = tag 1, port i = tag i + 2.
    let mut by_surface: BTreeMap<usize, Vec<usize>> = BTreeMap::new();
    for (f, &tag) in mesh.boundary_tag.iter().enumerate() {
        let key = match tag {
            BoundaryTag::Wall => 1,
            BoundaryTag::Port(i) => i + 2,
        };
        by_surface.entry(key).or_default().push(f);
    }
    let region_name = |r: u32| {
        mesh.regions
            .get(r as usize)
            .map_or_else(|| format!("region{r}"), |i| msh_name(&i.name))
    };
    let surface_name = |s: usize| match s {
        1 => "wall".to_string(),
        s => port_names
            .get(s - 2)
            .map_or_else(|| format!("port{}", s - 2), |n| msh_name(n)),
    };

    writeln!(w, "$MeshFormat\n4.1 0 8\n$EndMeshFormat")?;
    writeln!(w, "$PhysicalNames\n{}", by_region.len() + by_surface.len())?;
    for &s in by_surface.keys() {
        writeln!(w, "2 {s} \"{}\"", surface_name(s))?;
    }
    for &r in by_region.keys() {
        writeln!(w, "3 {} \"{}\"", r as u64 + 1, region_name(r))?;
    }
    writeln!(w, "$EndPhysicalNames")?;

    writeln!(w, "$Entities\n0 0 {} {}", by_surface.len(), by_region.len())?;
    let node = |i: u32| mesh.nodes[i as usize];
    for (&s, faces) in &by_surface {
        let b = bbox(faces.iter().flat_map(|&f| mesh.boundary[f].map(node)));
        writeln!(
            w,
            "{s} {} {} {} {} {} {} 1 {s} 0",
            b[0], b[1], b[2], b[3], b[4], b[5]
        )?;
    }
    for (&r, tets) in &by_region {
        let b = bbox(tets.iter().flat_map(|&t| mesh.tets[t].map(node)));
        let tag = r as u64 + 1;
        writeln!(
            w,
            "{tag} {} {} {} {} {} {} 1 {tag} 0",
            b[0], b[1], b[2], b[3], b[4], b[5]
        )?;
    }
    writeln!(w, "$EndEntities")?;

    let n = mesh.nodes.len();
    let home = by_region.keys().next().map_or(1, |&r| r as u64 + 1);
    writeln!(w, "$Nodes\n1 {n} {} {n}\n3 {home} 0 {n}", n.min(1))?;
    for i in 1..=n {
        writeln!(w, "{i}")?;
    }
    for p in &mesh.nodes {
        writeln!(w, "{} {} {}", p[0], p[1], p[2])?;
    }
    writeln!(w, "$EndNodes")?;

    let total = mesh.tets.len() + mesh.boundary.len();
    writeln!(
        w,
        "$Elements\n{} {total} {} {total}",
        by_region.len() + by_surface.len(),
        total.min(1)
    )?;
    let mut tag = 0usize;
    for (&r, tets) in &by_region {
        writeln!(w, "3 {} 4 {}", r as u64 + 1, tets.len())?;
        for &t in tets {
            tag += 1;
            let [a, b, c, d] = mesh.tets[t].map(|v| v as u64 + 1);
            writeln!(w, "{tag} {a} {b} {c} {d}")?;
        }
    }
    for (&s, faces) in &by_surface {
        writeln!(w, "2 {s} 2 {}", faces.len())?;
        for &f in faces {
            tag += 1;
            let [a, b, c] = mesh.boundary[f].map(|v| v as u64 + 1);
            writeln!(w, "{tag} {a} {b} {c}")?;
        }
    }
    writeln!(w, "$EndElements")
}
