//! `antinode mesh`: geometry file → tetrahedral mesh, VTK files and a summary.

use crate::output::folder;
use crate::progress::Spinner;
use crate::units;
use antinode_mesh::{mesher, quality, vtk, Geometry, TetMesh};
use antinode_solver::fem::dofmap::DofMap;
use antinode_solver::fem::topology::Topology;
use antinode_solver::NedelecOrder;
use anyhow::{Context, Result};
use clap::Args;
use std::path::PathBuf;
use std::time::Instant;

#[derive(Args)]
pub struct MeshArgs {
    /// Geometry file (TOML; lengths in mm, frequencies in GHz; see the README).
    pub geometry: PathBuf,
    /// Output folder [default: out/<geometry file name without .toml>].
    #[arg(short = 'o', long = "out", value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub mesh: super::MeshOptions,
}

/// Mesh size figures: counts of entities and free unknowns per element order.
pub struct MeshCounts {
    pub nodes: usize,
    pub tets: usize,
    pub edges: usize,
    pub faces: usize,
    /// Free unknowns (wall and port unknowns eliminated, as the solver does now).
    pub unknowns_order1: usize,
    pub unknowns_order2: usize,
    pub unknowns_order3: usize,
}

/// Counts edges, faces and free unknowns of the three orders (walls and ports as metal,
/// matching the solver until port losses are implemented).
pub fn count(mesh: &TetMesh) -> MeshCounts {
    let topo = Topology::new(mesh);
    let n1 = DofMap::new(&topo, mesh.nodes.len(), NedelecOrder::One, |_| true).n_dofs;
    let n2 = DofMap::new(&topo, mesh.nodes.len(), NedelecOrder::Two, |_| true).n_dofs;
    let n3 = DofMap::new(&topo, mesh.nodes.len(), NedelecOrder::Three, |_| true).n_dofs;
    MeshCounts {
        nodes: mesh.nodes.len(),
        tets: mesh.tets.len(),
        edges: topo.edges.len(),
        faces: topo.faces.len(),
        unknowns_order1: n1,
        unknowns_order2: n2,
        unknowns_order3: n3,
    }
}

/// The solver's warnings about the cavity and the mesh (no solve needed).
fn mesh_warning_docs(geom: &Geometry, mesh: &TetMesh) -> Vec<crate::output::review::WarningDoc> {
    use antinode_solver::post::warnings::{cavity_warning, mesh_warnings};
    let target_hz = antinode_solver::problem::ghz_to_hz(geom.solve.target);
    let mats = antinode_solver::problem::region_materials(geom, target_hz);
    cavity_warning(geom)
        .into_iter()
        .chain(mesh_warnings(
            mesh,
            &mats,
            target_hz,
            // An order the solver lacks gets order 1's floor (the solve then refuses it).
            antinode_solver::NedelecOrder::from_int(geom.mesh.order)
                .unwrap_or(antinode_solver::NedelecOrder::One),
        ))
        .map(|w| crate::output::review::warning_doc(&w))
        .collect()
}

/// Meshes `geom` with a spinner; returns the mesh and the seconds taken.
pub fn make(geom: &Geometry) -> Result<(TetMesh, f64)> {
    let spinner = Spinner::start("meshing");
    let t0 = Instant::now();
    let mesh = antinode_mesh::make_mesh(geom);
    spinner.finish();
    let mesh = mesh.context("meshing failed")?;
    Ok((mesh, t0.elapsed().as_secs_f64()))
}

/// [`make`] with the curved surfaces (cylinder sides) and the faces on them, for curved
/// elements; an imported mesh has none.
pub fn make_curved(geom: &Geometry) -> Result<(antinode_mesh::mesher::CurvedMesh, f64)> {
    let spinner = Spinner::start("meshing");
    let t0 = Instant::now();
    let mesh = antinode_mesh::make_mesh_curved(geom);
    spinner.finish();
    let mesh = mesh.context("meshing failed")?;
    Ok((mesh, t0.elapsed().as_secs_f64()))
}

pub fn run(args: &MeshArgs) -> Result<()> {
    let t0 = Instant::now();
    let mut geom = super::load_geometry(&args.geometry)?;
    args.mesh.apply(&mut geom)?;
    let sizes = mesher::element_sizes(&geom).context("mesh settings")?;
    let out = folder::prepare(&super::output_dir(args.out.as_deref(), &args.geometry))?;
    let (mesh, mesh_s) = make(&geom)?;
    let counts = count(&mesh);
    let q = quality::quality_report(&mesh);

    let dir = out.dir();
    let quality_values = quality::tet_quality(&mesh);
    let mesh_path = dir.join("mesh.vtu");
    vtk::write_mesh_vtu(
        &mesh_path,
        &mesh,
        &[vtk::DataArray::Scalars {
            name: "quality",
            values: &quality_values,
        }],
    )?;
    let boundary_path = dir.join("boundary.vtu");
    vtk::write_boundary_vtu(&boundary_path, &mesh)?;
    let out_target = out.target().to_path_buf();
    out.commit("mesh", &args.geometry)?;

    println!("{}", geom.title);
    println!(
        "mesh: {} nodes, {} tetrahedra, {} edges, {} faces, {} boundary triangles",
        counts.nodes,
        counts.tets,
        counts.edges,
        counts.faces,
        mesh.boundary.len()
    );
    println!(
        "free unknowns (walls and ports metal): order 1: {} (edges not on the metal), order 2: {}, \
         order 3: {}",
        counts.unknowns_order1, counts.unknowns_order2, counts.unknowns_order3
    );
    println!(
        "element size target: {} per local wavelength at {} GHz, at most {} mm",
        geom.mesh.per_wavelength, geom.solve.target, geom.mesh.max_size
    );
    let vols = mesh.region_volumes();
    let mut region_tets = vec![0usize; mesh.regions.len()];
    for &r in &mesh.tet_region {
        if let Some(n) = region_tets.get_mut(r as usize) {
            *n += 1;
        }
    }
    println!(
        "  {:<20} {:>10} {:>14} {:>14} {:>8} {:>12} {:>11}",
        "region", "tetrahedra", "meshed volume", "nominal", "eps'", "wavelength", "size"
    );
    for (id, info) in mesh.regions.iter().enumerate() {
        let nominal = if id == 0 {
            let loads: f64 = geom
                .loads
                .iter()
                .filter_map(|l| l.shape.map(|s| s.volume()))
                .sum();
            Some(geom.cavity.shape.volume() - loads)
        } else {
            geom.loads
                .get(id - 1)
                .and_then(|l| l.shape.map(|s| s.volume()))
        };
        let nominal = nominal
            .map(|mm3| units::volume(mm3 * 1e-9))
            .unwrap_or_else(|| "-".into());
        let (eps, wl, size) = match sizes.get(id) {
            Some(s) => (
                format!("{:.2}", s.eps_real),
                format!("{:.1} mm", s.wavelength_mm),
                format!("{:.2} mm", s.size_mm),
            ),
            None => ("-".into(), "-".into(), "-".into()),
        };
        println!(
            "  {:<20} {:>10} {:>14} {:>14} {:>8} {:>12} {:>11}",
            info.name,
            region_tets[id],
            units::volume(vols.get(id).copied().unwrap_or(0.0)),
            nominal,
            eps,
            wl,
            size
        );
    }
    println!(
        "quality: dihedral angles {:.1}° to {:.1}°, radius ratio min {:.3} mean {:.3}, \
         {} poor ({})",
        q.min_dihedral_deg,
        q.max_dihedral_deg,
        q.min_radius_ratio,
        q.mean_radius_ratio,
        q.poor_count,
        q.poor_threshold
    );
    println!("wrote {}/mesh.vtu and boundary.vtu", out_target.display());
    crate::output::review::print_warnings(&mesh_warning_docs(&geom, &mesh));
    if !geom.mesh.per_wavelength_given && geom.mesh.import.is_none() {
        println!(
            "note: no per_wavelength given: meshed at the order's default {}; `modes` and \
             `drive` relax it when their solve would not fit the memory (`modes --plan` \
             shows the size they will use)",
            geom.mesh.per_wavelength
        );
    }
    println!(
        "time: meshing {:.2} s, total {:.2} s",
        mesh_s,
        t0.elapsed().as_secs_f64()
    );
    Ok(())
}
