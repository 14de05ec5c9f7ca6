//! The library pipeline a script calls: geometry file in, modes out.
//!
//! `cargo run --release -p antinode-solver --example modes_from_geometry --
//! geometries/fed_box.toml [ORDER]` reads the geometry, meshes it, turns it into solver
//! inputs (SI units, port frames, materials at the target), solves for the modes near
//! the target and prints frequency, loaded Q and the feed's reflection of each, then the
//! band figures. The stages can also be called one by one (see `antinode_solver::modes`:
//! space, assembly with ports, factorised shifted operator, iteration, checks, losses).

use antinode_mesh::{make_mesh, Geometry};
use antinode_solver::post::band::{band_figures, SearchFacts, ISM_BAND_HZ};
use antinode_solver::post::warnings::review_run;
use antinode_solver::problem::{weyl_cavity, Problem};
use antinode_solver::{solve_modes, NedelecOrder};
use std::error::Error;

fn main() -> Result<(), Box<dyn Error>> {
    let path = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "geometries/fed_box.toml".into());
    let geom = Geometry::from_file(&path)?;
    let mesh = make_mesh(&geom)?;
    let mut problem = Problem::from_geometry(&geom)?;
    if let Some(order) = std::env::args().nth(2) {
        let order: u8 = order.parse()?;
        problem.settings.order = NedelecOrder::from_int(order).ok_or("order must be 1, 2 or 3")?;
    }
    let settings = &problem.settings;
    println!(
        "{}: {} tetrahedra, order {}, target {:.4} GHz",
        geom.title,
        mesh.tets.len(),
        settings.order.as_int(),
        settings.target_hz / 1e9
    );

    let set = solve_modes(&mesh, &problem.materials, settings, &mut |_| {})?;
    println!("{} unknowns, {} modes", set.stats.n_dofs, set.modes.len());
    for m in &set.modes {
        let reflection: Vec<String> = m.q.reflection.iter().map(|g| format!("{g:.3}")).collect();
        println!(
            "  f = {:.6} GHz  Q_L = {:10.1}  |Γ| = [{}]",
            m.frequency_hz / 1e9,
            m.q.q_loaded,
            reflection.join(", ")
        );
    }

    // Band figures over the ISM band (or the file's band).
    let band = settings.band_hz.unwrap_or(ISM_BAND_HZ);
    let freq_q: Vec<(f64, f64)> = set
        .modes
        .iter()
        .map(|m| (m.frequency_hz, m.q.q_loaded))
        .collect();
    let vols = mesh.region_volumes();
    let review = review_run(&geom, &mesh, &problem.materials, settings, &set.modes, band);
    let figures = band_figures(
        &freq_q,
        band,
        SearchFacts {
            target_hz: settings.target_hz,
            search_radius: set.stats.search_radius,
            lossless: !set.stats.complex,
            group_tolerance: review.group_tolerance,
        },
        weyl_cavity(&geom, &vols, &problem.materials),
    );
    for w in &review.warnings {
        println!("warning: {w}");
    }
    println!(
        "band {:.3}–{:.3} GHz: {} modes found, Weyl estimate {:.1}, modal overlap {:?}",
        band[0] / 1e9,
        band[1] / 1e9,
        figures.in_band.len(),
        figures.weyl.modes,
        figures.modal_overlap
    );

    // Fields of the first mode for 1 J of stored energy (E at vertices, H and heating at
    // cells), as a VTK writer would take them.
    if let Some(m) = set.modes.first() {
        let fields = m.fields(&set.space, &problem.materials);
        let hottest = fields.cell_heating.iter().copied().fold(0.0, f64::max);
        println!("mode 1: largest heating density {hottest:.3e} W/m³ per joule stored");
    }
    Ok(())
}
